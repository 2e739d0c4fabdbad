"""The JSON API (planner/api.py): the pages' permission rules for every endpoint and role, session and token
sign-in, CSRF on session writes, clear 4xx messages, the version check, the cost cap, the OpenAPI document."""

import json

import pytest
from django.test import Client
from django.urls import reverse

from planner import services
from planner.models import ApiToken, Scenario, ScenarioVersion
from planner.permissions import EDIT, OWN, RANK, VIEW
from tests.planner.test_permissions import ROLES

pytestmark = pytest.mark.django_db


def api_client(user=None, *, token=None, csrf=False) -> Client:
    if token is not None:
        return Client(HTTP_AUTHORIZATION=f"Bearer {token}")
    browser = Client(enforce_csrf_checks=csrf)
    if user is not None:
        browser.force_login(user)
    return browser


def send(browser, method, url, body=None):
    if body is None:
        return getattr(browser, method)(url)
    return getattr(browser, method)(url, data=json.dumps(body), content_type="application/json")


def update_body(scenario, **changes):
    body = {
        "version": scenario.version,
        "title": scenario.title,
        "notes": scenario.notes,
        "parameters": scenario.parameters,
        "stockout_target": scenario.stockout_target,
        "overflow_target": scenario.overflow_target,
    }
    return body | changes


# (method, path after the plan, body maker, what it needs)
ENDPOINTS = [
    ("get", "", None, VIEW),
    ("get", "/result", None, VIEW),
    ("get", "/history", None, VIEW),
    ("put", "", lambda s: update_body(s, title="Taken over"), EDIT),
    ("delete", "", None, OWN),
]


def test_every_plan_endpoint_is_in_the_matrix():
    from planner.api import api

    paths = {(method.lower(), path) for path, item in api.get_openapi_schema()["paths"].items() for method in item}
    per_plan = {(m, p) for m, p in paths if "{plan_id}" in p}
    assert per_plan == {(m, f"/api/plans/{{plan_id}}{suffix}") for m, suffix, _, _ in ENDPOINTS}


@pytest.mark.parametrize("who", ROLES)
@pytest.mark.parametrize(("method", "suffix", "body", "need"), ENDPOINTS, ids=[f"{m} {s}" for m, s, _, _ in ENDPOINTS])
def test_each_role_against_each_endpoint(scenario, cast, who, method, suffix, body, need):
    browser = api_client(cast[who])
    before = list(Scenario.objects.values_list("pk", "title", "version")), ScenarioVersion.objects.count()
    response = send(browser, method, f"/api/plans/{scenario.pk}{suffix}", body(scenario) if body else None)
    role = ROLES[who]
    if who == "anonymous":
        assert response.status_code == 401 and "Bearer" in response.json()["detail"]
    elif role is None:
        assert response.status_code == 404 and response.json()["detail"].startswith("No such plan")
    elif RANK[role] < RANK[need]:
        assert response.status_code == 403 and "does not allow" in response.json()["detail"]
    else:
        assert response.status_code in (200, 204), response.content
        return
    after = list(Scenario.objects.values_list("pk", "title", "version")), ScenarioVersion.objects.count()
    assert after == before


def test_the_list_holds_own_and_shared_plans_with_the_role(scenario, cast):
    body = send(api_client(cast["group viewer"]), "get", "/api/plans").json()
    assert [(p["title"], p["role"], p["owner"]) for p in body] == [("Rye loaf shelf", "viewer", "olwen")]
    assert send(api_client(cast["outsider"]), "get", "/api/plans").json() == []
    owner = send(api_client(scenario.owner), "get", "/api/plans").json()
    assert owner[0]["role"] == "owner" and owner[0]["version"] == 1


def test_a_token_acts_as_its_user_until_revoked(scenario, cast):
    api_token, token = services.api_token_create(user=cast["editor"], label="weekly report")
    assert ApiToken.objects.get().digest != token and len(token) == 43
    response = send(
        api_client(token=token), "put", f"/api/plans/{scenario.pk}", update_body(scenario, notes="By token")
    )
    assert response.status_code == 200 and response.json()["version"] == 2
    assert ScenarioVersion.objects.get(number=2).saved_by == cast["editor"]
    services.api_token_revoke(api_token=api_token)
    assert send(api_client(token=token), "get", "/api/plans").status_code == 401
    assert send(api_client(token="x" * 43), "get", "/api/plans").status_code == 401
    cast["editor"].is_active = False
    cast["editor"].save()
    fresh_token = services.api_token_create(user=cast["editor"])[1]
    assert send(api_client(token=fresh_token), "get", "/api/plans").status_code == 401


def test_session_writes_need_the_csrf_token_and_token_writes_do_not(scenario, small_params):
    body = {"title": "Seed tray", "parameters": small_params.to_json()}
    response = send(api_client(scenario.owner, csrf=True), "post", "/api/plans", body)
    assert response.status_code == 403 and not Scenario.objects.filter(title="Seed tray").exists()
    for method, suffix, make, _ in ENDPOINTS:
        if method in ("put", "delete"):
            refused = send(
                api_client(scenario.owner, csrf=True),
                method,
                f"/api/plans/{scenario.pk}{suffix}",
                make and make(scenario),
            )
            assert refused.status_code == 403
    token = services.api_token_create(user=scenario.owner)[1]
    assert send(api_client(token=token), "post", "/api/plans", body).status_code == 201


def test_create_and_read_back(owner, small_params):
    body = {"title": "Seed tray", "notes": "Top shelf", "parameters": small_params.to_json(), "stockout_target": 0.01}
    response = send(api_client(owner), "post", "/api/plans", body)
    assert response.status_code == 201
    created = response.json()
    assert created["version"] == 1 and created["role"] == "owner" and created["stockout_target"] == 0.01
    # the headline is the engine's stock-out risk over the horizon, as on the pages
    assert created["headline_risk"] == small_params.walk().outlook(small_params.horizon).stockout[-1]
    assert send(api_client(owner), "get", f"/api/plans/{created['id']}").json() == created


@pytest.mark.parametrize(
    ("body", "field", "message"),
    [
        ({"title": ""}, "title", "at least 1 character"),
        ({"title": "x" * 121}, "title", "at most 120 characters"),
        ({"stockout_target": 1.5}, "stockout_target", "less than 1"),
        ({"overflow_target": 0}, "overflow_target", "greater than 0"),
        ({"parameters": [1, 2]}, "parameters", "valid dictionary"),
        (
            {"parameters": {"start": 99, "horizon": 3, "high": 4, "step_method": "nearest", "up": 0.1, "down": 0.1}},
            "parameters",
            "start stock must be a whole number from 0 to 4",
        ),
        ({"kind": "silo_fill"}, "kind", "kind must be one of rate_table, reorder_plan, spares_pool, stock_plan"),
        ({"title": None}, "title", "valid string"),
        ({"notes": "Back\x00shelf"}, "notes", "must not contain NUL characters"),  # PostgreSQL cannot store them
    ],
)
def test_bad_plans_get_400_naming_the_field(owner, small_params, body, field, message):
    full = {"title": "Seed tray", "parameters": small_params.to_json()} | body
    response = send(api_client(owner), "post", "/api/plans", full)
    assert response.status_code == 400
    problem = response.json()
    assert message in problem["detail"] and any(message in m for m in problem["fields"][field])
    assert not Scenario.objects.exists()


def test_malformed_json_gets_400(owner):
    response = api_client(owner).post("/api/plans", data="{not json", content_type="application/json")
    assert response.status_code == 400 and "Cannot parse" in response.json()["detail"]


def test_a_stale_version_gets_409_and_nothing_is_saved(scenario, cast):
    editor = api_client(cast["editor"])
    first = send(editor, "put", f"/api/plans/{scenario.pk}", update_body(scenario, title="Rye, winter"))
    assert first.status_code == 200 and first.json()["version"] == 2
    stale = send(editor, "put", f"/api/plans/{scenario.pk}", update_body(scenario, notes="Mine"))
    assert stale.status_code == 409
    assert "it is now version 2" in stale.json()["detail"] and stale.json()["fields"] == {"version": ["now 2"]}
    fresh = Scenario.objects.get(pk=scenario.pk)
    assert (fresh.title, fresh.notes, fresh.version) == ("Rye, winter", "Back shelf.", 2)


def test_results_follow_the_whatif_query_and_the_cost_cap(scenario, settings):
    owner = api_client(scenario.owner)
    saved = send(owner, "get", f"/api/plans/{scenario.pk}/result").json()
    params = scenario.params
    assert saved["changes"] == [] and saved["curve"]["y"] == params.walk().outlook(params.horizon).stockout.tolist()
    figures = {f["label"]: f["value"] for f in saved["figures"]}
    assert figures["Stock-out risk over the horizon"] == scenario.headline_risk
    whatif = send(owner, "get", f"/api/plans/{scenario.pk}/result?start=2&horizon=20").json()
    assert (
        whatif["changes"] == ["start stock 4 → 2 units", "horizon 12 days → 20 days"]
        and len(whatif["curve"]["x"]) == 21
    )
    bad = send(owner, "get", f"/api/plans/{scenario.pk}/result?start=99")
    assert bad.status_code == 400 and "start stock must be a whole number from 0 to 8" in bad.json()["detail"]
    settings.PLANNER_COMPUTE_CAP = 1_000_000
    big = send(owner, "get", f"/api/plans/{scenario.pk}/result?horizon=50")
    assert big.status_code == 400 and "shorten the horizon (now 50 days)" in big.json()["detail"]


def test_kinds_schema_and_docs(owner):
    browser = api_client(owner)
    assert "stock_plan" in {kind["key"] for kind in send(browser, "get", "/api/kinds").json()}
    schema = Client().get("/api/openapi.json").json()
    assert schema["info"]["title"] == "Fluctuation Planner API"
    assert {"/api/plans", "/api/plans/{plan_id}", "/api/plans/{plan_id}/result"} <= set(schema["paths"])
    assert {"BearerToken", "SessionAuth"} <= set(schema["components"]["securitySchemes"])
    docs = Client().get("/api/docs").content.decode()
    assert "/static/ninja/swagger-ui-bundle.js" in docs and "cdn" not in docs.lower()


def test_the_token_page_shows_a_new_token_once(owner, outsider):
    browser = api_client(owner)
    response = browser.post(reverse("api_tokens"), {"label": "weekly report"})
    assert response.status_code == 201
    token = response.context["new_token"]
    assert token in response.content.decode() and token not in browser.get(reverse("api_tokens")).content.decode()
    api_token = ApiToken.objects.get()
    assert browser.post(reverse("api_token_revoke", args=[api_token.pk])).status_code == 302
    assert ApiToken.objects.get().revoked is not None
    assert api_client(outsider).post(reverse("api_token_revoke", args=[api_token.pk])).status_code == 404


def test_a_read_only_link_opens_nothing_in_the_api(scenario):
    token = services.link_create(scenario=scenario, label="board")[1]
    holder = api_client(token=token)  # a link's token is not an API token
    for method, suffix, body, _ in ENDPOINTS:
        response = send(holder, method, f"/api/plans/{scenario.pk}{suffix}", body(scenario) if body else None)
        assert response.status_code == 401
    assert send(holder, "get", "/api/plans").status_code == 401
    assert Scenario.objects.get(pk=scenario.pk).version == 1
