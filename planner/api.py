"""The JSON API (django-ninja): plans and their computations, with the pages' permission rules.

Sign in with the browser session (unsafe methods then need the CSRF token, as forms do) or with a personal
token (``Authorization: Bearer <token>``, made on the "API tokens" page). Every plan is fetched through
``planner.permissions`` (no access: 404; a role below the action: 403), every write goes through
``planner.services`` (the same version check as the edit page: 409 on a stale version), and every
computation through the read service and its cost cap. Errors are ``{"detail": message, "fields": {...}}``
with 400 (bad input or a plan too large to work out), 401, 403, 404 or 409. The OpenAPI schema is at
``/api/openapi.json`` and its documentation page at ``/api/docs``.
"""

from __future__ import annotations

from datetime import datetime

from django.core.exceptions import PermissionDenied
from django.core.exceptions import ValidationError as ModelValidationError
from django.http import Http404
from ninja import Field, NinjaAPI, Schema, Status
from ninja.errors import AuthenticationError
from ninja.errors import ValidationError as RequestValidationError
from ninja.security import HttpBearer, django_auth
from pydantic import field_validator

from planner import permissions, reading, services
from planner.background import services as background
from planner.kinds import all_kinds, get_kind
from planner.models import ApiToken, Scenario, ScenarioLink
from planner.permissions import EDIT, OWN


class BearerToken(HttpBearer):
    def authenticate(self, request, token):
        found = ApiToken.objects.select_related("user").filter(digest=ScenarioLink.digest_of(token)).first()
        if found is None or found.revoked is not None or not found.user.is_active:
            return None
        request.user = found.user
        return found.user


api = NinjaAPI(
    title="Fluctuation Planner API",
    version="1",
    description=__doc__,
    auth=[BearerToken(), django_auth],
    urls_namespace="api",
)


class Problem(Schema):
    detail: str
    fields: dict[str, list[str]] = {}


def _problem(request, message: str, status: int, fields: dict | None = None):
    return api.create_response(request, {"detail": message, "fields": fields or {}}, status=status)


@api.exception_handler(RequestValidationError)
def _bad_request(request, exc):
    fields: dict[str, list[str]] = {}
    for error in exc.errors:
        # loc is ("body", "body", "title") or ("query", "start"): name the field the analyst sent
        where = ".".join(str(part) for part in error.get("loc", ()) if part not in ("body", "query", "path"))
        where = where or "request"
        fields.setdefault(where, []).append(error.get("msg", "not valid"))
    message = "; ".join(f"{name}: {' '.join(messages)}" for name, messages in fields.items())
    return _problem(request, message or "The request is not valid.", 400, fields)


@api.exception_handler(ModelValidationError)
def _invalid_values(request, exc):
    fields = exc.message_dict if hasattr(exc, "error_dict") else {"__all__": exc.messages}
    message = "; ".join(f"{name}: {' '.join(messages)}" for name, messages in fields.items())
    return _problem(request, message, 400, fields)


@api.exception_handler(ValueError)
def _cannot_compute(request, exc):
    return _problem(request, str(exc), 400, getattr(exc, "fields", {}))


@api.exception_handler(Http404)
def _not_found(request, exc):
    return _problem(request, "No such plan, or not one this account may see.", 404)


@api.exception_handler(PermissionDenied)
def _forbidden(request, exc):
    return _problem(request, "This account's access to the plan does not allow that.", 403)


@api.exception_handler(AuthenticationError)
def _unauthorised(request, exc):
    return _problem(request, "Sign in, or send a personal token as 'Authorization: Bearer <token>'.", 401)


@api.exception_handler(services.EditConflict)
def _conflict(request, exc):
    message = (
        f"The plan was saved by someone else after version {exc.based_on}; it is now version "
        f"{exc.current.version}. Nothing was saved: read it again, then send your change with that version."
    )
    return _problem(request, message, 409, {"version": [f"now {exc.current.version}"]})


def _no_nul(value: str) -> str:
    # Forms refuse NUL characters (Django's ProhibitNullCharactersValidator); PostgreSQL cannot store them.
    if "\x00" in value:
        raise ValueError("must not contain NUL characters")
    return value


class _PlanText(Schema):
    @field_validator("title", "notes", check_fields=False)
    @classmethod
    def _text(cls, value: str) -> str:
        return _no_nul(value)


class PlanIn(_PlanText):
    kind: str = Field("stock_plan", description="a kind key from GET /api/kinds")
    title: str = Field(..., min_length=1, max_length=120)
    notes: str = Field("", max_length=10_000)
    parameters: dict = Field(..., description="the kind's parameters (as in PlanOut.parameters)")
    stockout_target: float = Field(0.05, gt=0, lt=1, description="largest acceptable stock-out risk (a fraction)")
    overflow_target: float = Field(0.05, gt=0, lt=1, description="largest acceptable overflow risk (a fraction)")


class PlanUpdate(_PlanText):
    version: int = Field(..., ge=1, description="the version this change is based on (from PlanOut.version)")
    title: str = Field(..., min_length=1, max_length=120)
    notes: str = Field("", max_length=10_000)
    parameters: dict
    stockout_target: float = Field(..., gt=0, lt=1)
    overflow_target: float = Field(..., gt=0, lt=1)


class PlanOut(Schema):
    id: int
    kind: str
    title: str
    notes: str
    parameters: dict
    stockout_target: float
    overflow_target: float
    version: int
    owner: str
    role: str = Field(..., description="owner, editor or viewer")
    headline_risk: float | None = Field(None, description="stock-out risk over the horizon, stored at the save")
    headline_span: str
    updated: datetime


class KindOut(Schema):
    key: str
    label: str
    tables: dict[str, str]


class VersionOut(Schema):
    number: int
    saved_at: datetime
    saved_by: str | None
    title: str
    notes: str
    parameters: dict
    stockout_target: float
    overflow_target: float
    headline_risk: float | None
    restored_from: int | None


class Figure(Schema):
    label: str
    text: str
    value: float | None


class Curve(Schema):
    description: str
    period: str
    x: list[int]
    y: list[float]


class ResultOut(Schema):
    plan: int
    version: int
    changes: list[str] = Field(..., description="the what-if changes applied, in words (empty: the saved plan)")
    curve: Curve | None = Field(None, description="null for a kind the API does not summarise yet")
    figures: list[Figure]


class WorkingOut(Schema):
    plan: int
    version: int
    status: str = Field(..., description="queued, running, failed or cancelled (done answers 200)")
    percent: float = Field(..., description="share of the priced work done, 0 to 100")
    seconds_left: float | None = Field(None, description="at the pace so far; null until a part is done")
    message: str = Field("", description="why it stopped (failed or cancelled)")


def _plan_out(scenario: Scenario) -> dict:
    fields = ("id", "kind", "title", "notes", "parameters", "stockout_target", "overflow_target", "version")
    return {name: getattr(scenario, name) for name in fields} | {
        "owner": scenario.owner.username,
        "role": scenario.access.role,
        "headline_risk": scenario.headline_risk,
        "headline_span": scenario.headline_span,
        "updated": scenario.updated,
    }


def _params(kind, parameters: dict):
    try:
        return kind.params_from_json(parameters)
    except ValueError as exc:
        error = ValueError(f"parameters: {exc}")
        error.fields = {"parameters": [str(exc)]}
        raise error from exc


def _kind(key: str):
    keys = [kind.key for kind in all_kinds()]
    if key not in keys:
        error = ValueError(f"kind must be one of {', '.join(keys)}; got {key!r}")
        error.fields = {"kind": [str(error)]}
        raise error
    return get_kind(key)


@api.get("/kinds", response=list[KindOut], summary="The kinds of plan")
def kinds(request):
    return [{"key": kind.key, "label": kind.label, "tables": dict(kind.tables)} for kind in all_kinds()]


@api.get("/plans", response=list[PlanOut], summary="Plans this account owns or that are shared with it")
def plan_list(request):
    owned = list(Scenario.objects.filter(owner=request.user).select_related("owner"))
    for scenario in owned:
        scenario.access = permissions.Access("owner")
    return [_plan_out(s) for s in owned + permissions.shared_with(request.user)]


@api.post("/plans", response={201: PlanOut, 400: Problem}, summary="Save a new plan (its version 1)")
def plan_create(request, body: PlanIn):
    kind = _kind(body.kind)
    scenario = services.scenario_create(
        owner=request.user,
        kind=kind.key,
        title=body.title,
        notes=body.notes,
        params=_params(kind, body.parameters),
        stockout_target=body.stockout_target,
        overflow_target=body.overflow_target,
    )
    scenario.access = permissions.Access("owner")
    return Status(201, _plan_out(scenario))


@api.get("/plans/{plan_id}", response={200: PlanOut, 404: Problem}, summary="One plan")
def plan_detail(request, plan_id: int):
    return _plan_out(permissions.get_scenario_for(request.user, plan_id))


@api.put(
    "/plans/{plan_id}",
    response={200: PlanOut, 400: Problem, 403: Problem, 404: Problem, 409: Problem},
    summary="Change a plan (editors and the owner), based on the version read",
)
def plan_update(request, plan_id: int, body: PlanUpdate):
    scenario = permissions.get_scenario_for(request.user, plan_id, EDIT)
    services.scenario_update(
        scenario=scenario,
        title=body.title,
        notes=body.notes,
        params=_params(get_kind(scenario.kind), body.parameters),
        stockout_target=body.stockout_target,
        overflow_target=body.overflow_target,
        based_on=body.version,
        editor=request.user,
    )
    return _plan_out(scenario)


@api.delete("/plans/{plan_id}", response={204: None, 403: Problem, 404: Problem}, summary="Delete a plan (owner)")
def plan_delete(request, plan_id: int):
    services.scenario_delete(scenario=permissions.get_scenario_for(request.user, plan_id, OWN))
    return Status(204, None)


@api.get(
    "/plans/{plan_id}/result",
    response={200: ResultOut, 202: WorkingOut, 400: Problem, 404: Problem},
    summary="Work the plan out, optionally with what-if values in the query (the results page's fields)",
    description="A saved plan too large for one request is worked out by a background worker: 202 with its "
    "progress until it is done (ask again), then 200 as for any plan.",
)
def plan_result(request, plan_id: int):
    scenario = permissions.get_scenario_for(request.user, plan_id)
    kind = get_kind(scenario.kind)
    form = kind.changes_form(request.GET)
    if not form.is_valid():
        fields = {name: list(errors) for name, errors in form.errors.items()}
        error = ValueError("; ".join(f"{name}: {' '.join(errors)}" for name, errors in fields.items()))
        error.fields = fields
        raise error
    changes = form.changes()
    if changes:
        found = reading.scenario_reading(scenario=scenario, changes=changes)
    else:
        found, work = background.saved_reading(scenario=scenario)
        if found is None:
            progress = background.work_progress_view(work)
            fields = ("status", "percent", "seconds_left", "message")
            return Status(202, {"plan": scenario.pk, "version": scenario.version} | {k: progress[k] for k in fields})
    comparable = kind.comparable(found.result)
    curve = None
    figures = []
    if comparable is not None:
        curve = {"description": comparable.curve, "period": comparable.period, "x": comparable.x, "y": comparable.y}
        figures = [{"label": label, "text": text, "value": value} for label, text, value in comparable.figures]
    return {
        "plan": scenario.pk,
        "version": scenario.version,
        "changes": list(found.changes),
        "curve": curve,
        "figures": figures,
    }


@api.get("/plans/{plan_id}/history", response={200: list[VersionOut], 404: Problem}, summary="Every saved version")
def plan_history(request, plan_id: int):
    scenario = permissions.get_scenario_for(request.user, plan_id)
    return [
        {
            "number": v.number,
            "saved_at": v.saved_at,
            "saved_by": v.saved_by.username if v.saved_by else None,
            "title": v.title,
            "notes": v.notes,
            "parameters": v.parameters,
            "stockout_target": v.stockout_target,
            "overflow_target": v.overflow_target,
            "headline_risk": v.headline_risk,
            "restored_from": v.restored_from,
        }
        for v in scenario.versions.select_related("saved_by")
    ]
