"""Writes: every change to a scenario goes through one of these functions (keyword-only arguments).

Each save stores the plan's headline stock-out risk (computed through the read
service, with its cost check) so the scenario list never recomputes plans. A
plan too large for a page but within the background cap is saved without one
and queued for a background worker, which stores it (``planner.background``);
a plan too large for both raises ``walkmath.ComputeTooLarge`` and nothing is
written.

Every save raises the plan's ``version`` by one and records what it wrote as a
``ScenarioVersion`` (who, when, the fields a person edits) in the same
transaction. An edit names the version it started from (``based_on``); the
save is one conditional UPDATE (compare-and-set on the version), so of two
edits started from the same version exactly one is saved and the other raises
``EditConflict``, on SQLite and PostgreSQL alike, however they interleave.
"""

from __future__ import annotations

import secrets
from datetime import timedelta

from django.core.exceptions import ValidationError
from django.db import transaction
from django.db.models import F
from django.http import Http404
from django.utils import timezone

from planner.background import services as background
from planner.kinds import get_kind
from planner.models import ApiToken, Scenario, ScenarioLink, ScenarioShare, ScenarioVersion
from planner.reading import plan_headline

EDITED_FIELDS = ("title", "notes", "parameters", "stockout_target", "overflow_target")


class EditConflict(Exception):
    """Someone saved the plan after this edit began; nothing was written. ``current`` is the plan as saved now."""

    def __init__(self, *, current: Scenario, based_on: int):
        self.current, self.based_on = current, based_on
        super().__init__(f"the plan is at version {current.version}; this edit started from version {based_on}")


class PlanGone(Http404):
    """The plan was deleted before this write reached it; nothing was written. A view that does not say more
    (the edit page does) answers 404, as for any plan that is not there."""


def _set_headline(scenario: Scenario, params) -> None:
    risk, span = plan_headline(
        kind=get_kind(scenario.kind),
        params=params,
        stockout_target=scenario.stockout_target,
        overflow_target=scenario.overflow_target,
    )
    scenario.headline_risk, scenario.headline_span = risk, span[:60]


def _queue_if_large(scenario: Scenario) -> None:
    """A plan too large for a page (no headline yet) goes to a background worker as soon as it is saved."""
    if scenario.headline_risk is None:
        background.work_request(scenario=scenario)


def _record_version(scenario: Scenario, *, saved_by, restored_from: int | None = None) -> ScenarioVersion:
    return ScenarioVersion.objects.create(
        scenario=scenario,
        number=scenario.version,
        saved_by=saved_by,
        saved_at=scenario.updated,
        restored_from=restored_from,
        headline_risk=scenario.headline_risk,
        headline_span=scenario.headline_span,
        **{name: getattr(scenario, name) for name in EDITED_FIELDS},
    )


def scenario_create(
    *,
    owner,
    kind: str,
    title: str,
    params,
    notes: str = "",
    stockout_target: float = 0.05,
    overflow_target: float = 0.05,
) -> Scenario:
    """A new scenario of ``kind`` owned by ``owner`` (its version 1); ValidationError if a field does not fit."""
    scenario = Scenario(
        owner=owner,
        title=title,
        notes=notes,
        kind=kind,
        parameters=params.to_json(),
        stockout_target=stockout_target,
        overflow_target=overflow_target,
    )
    scenario.full_clean()
    _set_headline(scenario, params)
    with transaction.atomic():
        scenario.save()
        _record_version(scenario, saved_by=owner)
        _queue_if_large(scenario)
    return scenario


def scenario_update(
    *,
    scenario: Scenario,
    title: str,
    params,
    notes: str = "",
    stockout_target: float,
    overflow_target: float,
    based_on: int | None = None,
    editor=None,
    restored_from: int | None = None,
) -> Scenario:
    """Save an edit of ``scenario`` made by ``editor`` (default: the owner) from version ``based_on``.

    Raises EditConflict when the plan is no longer at version ``based_on``, PlanGone when it no longer
    exists, ValidationError or ValueError (ComputeTooLarge) when the values do not fit; nothing is written
    then. ``based_on=None`` saves over whatever version is current (scripts such as load_demo, never a
    person's form). ``scenario`` is left holding the new values.
    """
    scenario.title = title
    scenario.notes = notes
    scenario.parameters = params.to_json()
    scenario.stockout_target = stockout_target
    scenario.overflow_target = overflow_target
    scenario.full_clean()
    _set_headline(scenario, params)
    values = {name: getattr(scenario, name) for name in (*EDITED_FIELDS, "headline_risk", "headline_span")}
    with transaction.atomic():
        rows = Scenario.objects.filter(pk=scenario.pk)
        if based_on is not None:
            rows = rows.filter(version=based_on)
        now = timezone.now()
        if not rows.update(**values, version=F("version") + 1, updated=now):
            current = Scenario.objects.filter(pk=scenario.pk).first()
            if current is None:
                raise PlanGone(f"scenario {scenario.pk} no longer exists")
            raise EditConflict(current=current, based_on=based_on)
        scenario.version = Scenario.objects.values_list("version", flat=True).get(pk=scenario.pk)
        scenario.updated = now
        _record_version(scenario, saved_by=editor or scenario.owner, restored_from=restored_from)
        _queue_if_large(scenario)
    return scenario


def scenario_copy(*, scenario: Scenario, owner, title: str, params=None) -> Scenario:
    """A new scenario named ``title`` for ``owner`` from ``scenario``, optionally with other parameters (a what-if)."""
    return scenario_create(
        owner=owner,
        kind=scenario.kind,
        title=title,
        notes=scenario.notes,
        params=params if params is not None else scenario.params,
        stockout_target=scenario.stockout_target,
        overflow_target=scenario.overflow_target,
    )


def _lock(scenario: Scenario) -> None:
    """Hold the plan's row until the transaction ends (PlanGone if it is gone), so that a save, a share or a
    link made at the same moment either lands before a delete (which then deletes it too) or finds the plan
    gone, instead of pointing at a deleted plan. A no-op on SQLite, where writers take turns anyway."""
    if not Scenario.objects.select_for_update().filter(pk=scenario.pk).exists():
        raise PlanGone(f"scenario {scenario.pk} no longer exists")


def scenario_delete(*, scenario: Scenario) -> None:
    with transaction.atomic():
        _lock(scenario)
        scenario.delete()


def share_set(*, scenario: Scenario, role: str, user=None, group=None) -> ScenarioShare:
    """Share ``scenario`` with ``user`` or ``group`` as ``role`` (a ShareRole), or change the role of that share."""
    if user is not None and user.pk == scenario.owner_id:
        raise ValidationError("The owner already holds every right on the plan.")
    with transaction.atomic():
        _lock(scenario)  # checked while held: a plan deleted meanwhile is PlanGone, never a half-checked share
        found = ScenarioShare.objects.filter(scenario=scenario, user=user, group=group).first()
        share = found or ScenarioShare(scenario=scenario, user=user, group=group)
        share.role = role
        share.full_clean()
        share.save()
    return share


def share_remove(*, share: ScenarioShare) -> None:
    share.delete()


def link_create(*, scenario: Scenario, label: str = "", days: int | None = None) -> tuple[ScenarioLink, str]:
    """A new read-only link to ``scenario``, open for ``days`` (None: until revoked), and its token.

    The token (256 random bits, URL-safe) is returned once and never stored; only its digest is.
    """
    token = secrets.token_urlsafe(32)
    expires = timezone.now() + timedelta(days=days) if days else None
    link = ScenarioLink(scenario=scenario, digest=ScenarioLink.digest_of(token), label=label, expires=expires)
    with transaction.atomic():
        _lock(scenario)
        link.full_clean()
        link.save()
    return link, token


def link_revoke(*, link: ScenarioLink) -> None:
    """Close the link for good (nothing happens to a link already revoked, or gone with its plan)."""
    ScenarioLink.objects.filter(pk=link.pk, revoked__isnull=True).update(revoked=timezone.now())


def scenario_restore(*, scenario: Scenario, version: ScenarioVersion, editor, based_on: int) -> Scenario:
    """Save ``version``'s fields as the plan's next version (nothing is lost: the versions in between stay in
    the history). The same refusals as ``scenario_update``; ValueError if the old parameters no longer fit."""
    params = get_kind(scenario.kind).params_from_json(version.parameters)
    return scenario_update(
        scenario=scenario,
        title=version.title,
        notes=version.notes,
        params=params,
        stockout_target=version.stockout_target,
        overflow_target=version.overflow_target,
        based_on=based_on,
        editor=editor,
        restored_from=version.number,
    )


def api_token_create(*, user, label: str = "") -> tuple[ApiToken, str]:
    """A new API token for ``user`` and its text (256 random bits), returned once and never stored."""
    token = secrets.token_urlsafe(32)
    api_token = ApiToken(user=user, digest=ScenarioLink.digest_of(token), label=label)
    api_token.full_clean()
    api_token.save()
    return api_token, token


def api_token_revoke(*, api_token: ApiToken) -> None:
    ApiToken.objects.filter(pk=api_token.pk, revoked__isnull=True).update(revoked=timezone.now())
