"""Every view that shows or changes one plan, for every role: owner, editor, viewer, group editor, group viewer,
outsider, anonymous. Outsiders get 404 and anonymous users are sent to sign in; a role below what the action
needs gets 403 and changes nothing. Then the sharing pages themselves and "shared with you"."""

import re

import pytest
from django.test import Client
from django.urls import reverse

from planner import services, urls
from planner.kinds import get_kind
from planner.models import Scenario, ScenarioLink, ScenarioShare, ScenarioVersion
from planner.permissions import EDIT, OWN, RANK, VIEW
from tests.planner.test_edit_conflicts import edit_values
from tests.planner.test_permissions import ROLES

pytestmark = pytest.mark.django_db

# What each view needs, by URL name: every URL that takes a plan must be listed (checked below).
NEEDS = {
    "scenario_results": VIEW,
    "scenario_outlook_json": VIEW,
    "scenario_cross_check_json": VIEW,
    "scenario_csv": VIEW,
    "scenario_variant_save": VIEW,  # saves a copy owned by whoever asks; the shared plan is unchanged
    "scenario_edit": EDIT,
    "scenario_delete": OWN,
    "scenario_sharing": OWN,
    "scenario_share_change": OWN,
    "scenario_link_create": OWN,
    "scenario_link_revoke": OWN,
    "scenario_history": VIEW,
    "scenario_version": VIEW,
    "scenario_version_restore": EDIT,
    "plan_work_status": VIEW,
    "plan_work_cancel": EDIT,
    "plan_work_restart": EDIT,
}
REQUESTS = [
    ("scenario_results", "get"),
    ("scenario_outlook_json", "get"),
    ("scenario_cross_check_json", "get"),
    ("scenario_variant_save", "post"),
    ("scenario_edit", "get"),
    ("scenario_edit", "post"),
    ("scenario_delete", "get"),
    ("scenario_delete", "post"),
    ("scenario_sharing", "get"),
    ("scenario_sharing", "post"),
    ("scenario_share_change", "post"),
    ("scenario_link_create", "post"),
    ("scenario_link_revoke", "post"),
    ("scenario_csv", "get"),
    ("scenario_history", "get"),
    ("scenario_version", "get"),
    ("scenario_version_restore", "post"),
    ("plan_work_status", "get"),
    ("plan_work_cancel", "post"),
    ("plan_work_restart", "post"),
]


def test_every_view_of_a_plan_is_in_the_matrix():
    names = {p.name for p in urls.urlpatterns if "<int:pk>" in str(p.pattern)}
    assert names == set(NEEDS) == {name for name, _ in REQUESTS}


def request_for(name, scenario, cast):
    """(url, data): data that would change the plan if the request were allowed."""
    kwargs = {"pk": scenario.pk}
    data = {}
    if name == "scenario_csv":
        kwargs["table"] = next(iter(get_kind(scenario.kind).tables))
    if name == "scenario_share_change":
        kwargs["share_id"] = ScenarioShare.objects.get(scenario=scenario, user=cast["viewer"]).pk
        data = {"role": "remove"}
    if name == "scenario_edit":
        data = edit_values(scenario, title="Taken over")
    if name == "scenario_sharing":
        data = {"person": "ivo", "role": "editor"}
    if name == "scenario_variant_save":
        data = {"title": "My own copy", "start": "2"}
    if name in ("scenario_version", "scenario_version_restore"):
        kwargs["number"] = 1
        data = {"version": str(scenario.version)}
    if name == "scenario_link_revoke":
        kwargs["link_id"] = services.link_create(scenario=scenario, label="board")[0].pk
    return reverse(name, kwargs=kwargs), data


def state(scenario):
    fresh = Scenario.objects.filter(pk=scenario.pk).values_list("title", "version").first()
    links = list(ScenarioLink.objects.values_list("pk", "revoked"))
    return fresh, ScenarioShare.objects.filter(scenario=scenario).count(), ScenarioVersion.objects.count(), links


@pytest.mark.parametrize("who", ROLES)
@pytest.mark.parametrize(("name", "method"), REQUESTS)
def test_each_role_against_each_view(scenario, cast, who, name, method):
    url, data = request_for(name, scenario, cast)
    browser = Client()
    if cast[who] is not None:
        browser.force_login(cast[who])
    before = state(scenario)
    response = getattr(browser, method)(url, data if method == "post" else {})
    role = ROLES[who]
    if who == "anonymous":
        assert response.status_code == 302 and response["Location"].startswith(reverse("login"))
    elif role is None:
        assert response.status_code == 404
    elif RANK[role] < RANK[NEEDS[name]]:
        assert response.status_code == 403
        assert b'data-error-page="403"' in response.content
    else:
        assert response.status_code in (200, 201, 302), response.content[:500]
        return
    assert state(scenario) == before  # refused: nothing changed
    assert not Scenario.objects.filter(title="My own copy").exists()


@pytest.mark.parametrize("who", ["editor", "group editor"])
def test_an_editor_saves_and_history_names_them(scenario, cast, who):
    browser = Client()
    browser.force_login(cast[who])
    response = browser.post(reverse("scenario_edit", args=[scenario.pk]), edit_values(scenario, notes="Checked."))
    assert response.status_code == 302
    assert ScenarioVersion.objects.get(scenario=scenario, number=2).saved_by == cast[who]


def page_of(user, url):
    browser = Client()
    browser.force_login(user)
    return browser.get(url).content.decode()


def test_buttons_follow_the_role(scenario, cast):
    url = scenario.get_absolute_url()
    actions = {
        who: page_of(cast[who], url).split('id="plan-actions"')[1].split("</div>")[0] for who in ROLES if ROLES[who]
    }
    assert "Edit" in actions["owner"] and "Share" in actions["owner"] and "Delete" in actions["owner"]
    for who in ("editor", "group editor"):
        assert "Edit" in actions[who] and "Share" not in actions[who] and "Delete" not in actions[who]
    for who in ("viewer", "group viewer"):
        assert "Edit" not in actions[who] and "Share" not in actions[who] and "Delete" not in actions[who]
    assert "Shared with you by olwen: you can view it." in page_of(cast["viewer"], url)
    assert 'id="shared-by"' not in page_of(cast["owner"], url)


def test_the_sharing_page_has_one_links_section_and_a_plain_title(scenario, cast):
    page = page_of(cast["owner"], reverse("scenario_sharing", args=[scenario.pk]))
    title = page.split("<title>")[1].split("</title>")[0]
    assert "Share Rye loaf shelf" in title and "<" not in title
    assert page.count('id="links"') == 1 and page.count('id="link-form"') == 1


def test_shared_with_you_on_the_home_page(scenario, cast):
    home = reverse("scenario_list")
    for who, can in [
        ("editor", "can edit"),
        ("viewer", "can view"),
        ("group editor", "can edit"),
        ("group viewer", "can view"),
    ]:
        page = page_of(cast[who], home)
        shared = page.split('id="shared-with-me"')[1]
        row = re.search(rf'<tr data-shared="{scenario.pk}">(.*?)</tr>', shared, flags=re.S).group(1)
        assert "Rye loaf shelf" in row and "olwen" in row and can in row
    assert "Rye loaf shelf" not in page_of(cast["outsider"], home)
    assert "Nobody has shared a plan with you yet" in page_of(cast["owner"], home)


def owner_browser(scenario):
    browser = Client()
    browser.force_login(scenario.owner)
    return browser


def test_the_owner_shares_with_a_person_and_a_group(scenario, cast, django_user_model):
    from django.contrib.auth.models import Group

    browser = owner_browser(scenario)
    url = reverse("scenario_sharing", args=[scenario.pk])
    response = browser.post(url, {"person": "ivo", "role": "viewer"}, follow=True)
    assert "is shared with ivo: can view" in response.content.decode()
    Group.objects.create(name="Night shift")
    browser.post(url, {"group": "Night shift", "role": "editor"})
    shares = {(str(s.user or s.group), s.role) for s in ScenarioShare.objects.filter(scenario=scenario)}
    assert {("ivo", "viewer"), ("Night shift", "editor")} <= shares
    page = browser.get(url).content.decode()
    assert "ivo" in page and "everyone in the group “Night shift”" in page


@pytest.mark.parametrize(
    ("data", "message"),
    [
        ({"person": "nobody-here", "role": "viewer"}, "No account has the user name “nobody-here”."),
        ({"group": "Moon base", "role": "viewer"}, "No group is called “Moon base”."),
        ({"person": "olwen", "role": "editor"}, "That is the plan&#x27;s owner"),
        ({"role": "viewer"}, "Give either a person&#x27;s user name or a group&#x27;s name."),
        ({"person": "ivo", "group": "Ovens", "role": "viewer"}, "Give either a person"),
        ({"person": "ivo", "role": "owner"}, "Select a valid choice"),
    ],
)
def test_bad_shares_are_refused_with_a_message(scenario, cast, data, message):
    before = ScenarioShare.objects.count()
    response = owner_browser(scenario).post(reverse("scenario_sharing", args=[scenario.pk]), data)
    assert response.status_code == 400 and message in response.content.decode()
    assert ScenarioShare.objects.count() == before


def test_the_owner_changes_and_removes_shares(scenario, cast):
    browser = owner_browser(scenario)
    share = ScenarioShare.objects.get(scenario=scenario, user=cast["viewer"])
    url = reverse("scenario_share_change", args=[scenario.pk, share.pk])
    browser.post(url, {"role": "editor"})
    assert ScenarioShare.objects.get(pk=share.pk).role == "editor"
    assert browser.get(reverse("scenario_edit", args=[scenario.pk])).status_code == 200
    assert browser.post(url, {"role": "owner"}).status_code == 302  # refused with a message
    assert ScenarioShare.objects.get(pk=share.pk).role == "editor"
    browser.post(url, {"role": "remove"})
    assert not ScenarioShare.objects.filter(pk=share.pk).exists()
    viewer = Client()
    viewer.force_login(cast["viewer"])
    assert viewer.get(scenario.get_absolute_url()).status_code == 404


def test_a_share_of_another_plan_cannot_be_changed_through_this_one(scenario, cast, small_params):
    other = services.scenario_create(owner=cast["outsider"], kind="stock_plan", title="Ivo's", params=small_params)
    foreign = services.share_set(scenario=other, user=cast["viewer"], role="viewer")
    url = reverse("scenario_share_change", args=[scenario.pk, foreign.pk])
    assert owner_browser(scenario).post(url, {"role": "remove"}).status_code == 404
    assert ScenarioShare.objects.filter(pk=foreign.pk).exists()


def test_a_viewer_saves_a_whatif_as_a_plan_of_their_own(scenario, cast):
    viewer = Client()
    viewer.force_login(cast["viewer"])
    response = viewer.post(reverse("scenario_variant_save", args=[scenario.pk]), {"title": "Cai's rye", "start": "6"})
    copy = Scenario.objects.get(title="Cai's rye")
    assert response.status_code == 302 and copy.owner == cast["viewer"] and copy.params.start == 6
    assert Scenario.objects.get(pk=scenario.pk).params.start == 4
