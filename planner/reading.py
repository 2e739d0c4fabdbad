"""The read service: saved parameters + what-if changes -> one costed computation -> a result.

Every page, what-if update, CSV download and the headline stored at save go
through here, so the cost check happens once and in one place: each engine
call the page would make is priced with the engine's cost model
(``walk.cost``, level·period·jump work units) and the request is refused
before any of it runs when the required calls exceed
``settings.PLANNER_COMPUTE_CAP``. Optional figures (a sizing search, a mean
time) are left out, with a note, when the remaining budget cannot cover them.

A saved plan over that cap but within ``settings.PLANNER_BACKGROUND_CAP`` is
not refused: ``scenario_reading`` raises ``TooLargeForRequest`` and the
caller hands it to a background worker (``planner.background``), which
prices it again here (``background_job``) and runs it with the larger budget.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from django.conf import settings
from django.http import Http404

from planner.kinds import Kind, get_kind
from walkmath import ComputeTooLarge


@dataclass(frozen=True, eq=False)
class Reading:
    """A computed result and where it came from (the saved plan, or a what-if on it)."""

    kind: Kind
    params: Any
    result: Any
    changes: tuple[str, ...]  # the inputs that differ from the saved plan, in the analyst's words

    @property
    def is_whatif(self) -> bool:
        return bool(self.changes)


class TooLargeForRequest(ComputeTooLarge):
    """The saved plan is over the page's cap but within the background cap: a worker can work it out.

    Its message is the one any page that cannot wait shows (a what-if, a comparison, the cross-check).
    """


def saved_params(scenario) -> Any:
    return get_kind(scenario.kind).params_from_json(scenario.parameters)


def _allowed(job, cap: int | None = None) -> dict[str, int]:
    """The parts this request computes, each with its budget in work units; together within ``cap`` (default:
    the whole PLANNER_COMPUTE_CAP).

    ComputeTooLarge (the job's own message) if the required parts alone exceed the cap. Optional
    parts with a fixed price come next while they fit; parts that stop themselves share what is left.
    """
    cap = settings.PLANNER_COMPUTE_CAP if cap is None else cap
    parts = job.parts()
    spent = sum(part.units for part in parts if part.required)
    if spent > cap:
        raise ComputeTooLarge(job.refusal(spent, cap))
    allowed = {part.name: part.units for part in parts if part.required}
    for part in parts:
        if not part.required and not part.stops_itself and spent + part.units <= cap:
            spent += part.units
            allowed[part.name] = part.units
    searches = [part for part in parts if part.stops_itself]
    # Searches are priced by their bound and stop themselves at their budget; they share at most a
    # quarter of the cap, since a probe's price is only the engine's estimate.
    share = min(cap - spent, cap // 4)
    for part in searches:
        budget = min(part.units, share // len(searches))
        if budget > 0:
            allowed[part.name] = budget
    return allowed


def scenario_params(*, scenario, changes: Mapping | None = None) -> Any:
    """The saved parameters with ``changes`` (a kind's what-if values) applied; ValueError naming the input."""
    kind = get_kind(scenario.kind)
    saved = kind.params_from_json(scenario.parameters)
    return kind.apply_changes(saved, changes) if changes else saved


def law_preview(*, kind: Kind, form) -> dict:
    """The kind's live preview of a valid form, refused over the cap like any page."""
    cap = settings.PLANNER_COMPUTE_CAP
    units = sum(part.units for part in kind.preview_parts(form))
    if units > cap:
        raise ComputeTooLarge(
            f"This change law is too large to draw here (about {units / cap:.1f} times this server's limit); "
            "count in larger units or give a smaller mean."
        )
    return kind.preview(form)


def scenario_reading(*, scenario, changes: Mapping | None = None, share: int = 1) -> Reading:
    """The scenario's result, with ``changes`` (a kind's what-if values) applied when given.

    ``share``: how many plans this request computes (the comparison page); each gets that part of the cap.
    Raises ValueError (ComputeTooLarge included) whose message names the input
    to change; nothing is computed before the cost check passes. The saved plan itself (no changes,
    one plan) over the page's cap but within the background cap raises TooLargeForRequest.
    """
    return _read(scenario, changes, lambda kind: kind.prepare, share, may_wait=not changes and share == 1)


def scenario_cross_check(*, scenario, changes: Mapping | None = None) -> Reading:
    """The kind's cross-check (exact figures beside approximations), priced and refused as above.

    Http404 when the kind has no cross-check.
    """
    return _read(scenario, changes, lambda kind: kind.cross_check, 1, may_wait=False)


def _read(scenario, changes: Mapping | None, job_maker, share: int, *, may_wait: bool) -> Reading:
    kind = get_kind(scenario.kind)
    saved = kind.params_from_json(scenario.parameters)
    params = kind.apply_changes(saved, changes) if changes else saved
    job = job_maker(kind)(params, scenario.stockout_target, scenario.overflow_target)
    if job is None:
        raise Http404("This kind has no cross-check")
    cap = settings.PLANNER_COMPUTE_CAP // share
    try:
        allowed = _allowed(job, cap)
    except ComputeTooLarge as refusal:
        waiting = _background_or(refusal, job)
        if may_wait or not isinstance(waiting, TooLargeForRequest):
            raise waiting from None
        if changes:
            raise ComputeTooLarge(
                f"{refusal} Saved as a new plan, these values would be worked out in the background."
            ) from None
        raise
    result = job.run(allowed)
    described = tuple(kind.describe_changes(saved, params)) if params != saved else ()
    return Reading(kind=kind, params=params, result=result, changes=described)


def _background_or(refusal: ComputeTooLarge, job) -> ComputeTooLarge:
    """TooLargeForRequest when a background worker may work the plan out (its required parts within
    PLANNER_BACKGROUND_CAP); else the refusal, saying that a worker would refuse it too. Prices only."""
    cap = settings.PLANNER_BACKGROUND_CAP
    try:
        required = sum(part.units for part in job.parts() if part.required)
    except ComputeTooLarge as too_large:  # refused by the job itself (memory): a worker would refuse it too
        return too_large
    if required > cap:
        times = f"about {required / cap:.1f} times" if required < 1000 * cap else "over a thousand times"
        return ComputeTooLarge(f"{refusal} It is also beyond what a background worker takes ({times} its limit).")
    return TooLargeForRequest(
        f"{refusal} Saved as it is, the plan is worked out in the background instead: open its results page."
    )


def background_job(*, kind: Kind, params, stockout_target: float, overflow_target: float):
    """A background worker's job and its budget by part (priced with PLANNER_BACKGROUND_CAP).

    ComputeTooLarge when even that cap does not cover it (the plan changed, or the cap did, since it was queued).
    """
    job = kind.prepare(params, stockout_target, overflow_target)
    return job, _allowed(job, settings.PLANNER_BACKGROUND_CAP)


def plan_headline(*, kind: Kind, params, stockout_target: float, overflow_target: float) -> tuple[float | None, str]:
    """The headline stock-out risk of a plan about to be saved and its span (the page's cost check first).

    (None, "") for a plan a page cannot work out but a background worker can: the worker stores it.
    ComputeTooLarge when neither can.
    """
    job = kind.prepare(params, stockout_target, overflow_target)
    try:
        _allowed(job)
    except ComputeTooLarge as refusal:
        waiting = _background_or(refusal, job)
        if isinstance(waiting, TooLargeForRequest):
            return None, ""
        raise waiting from None
    return job.headline()
