"""The read service: saved parameters + what-if changes -> one costed computation -> a result.

Every page, what-if update, CSV download and the headline stored at save go
through here, so the cost check happens once and in one place: each engine
call the page would make is priced with the engine's cost model
(``walk.cost``, level·period·jump work units) and the request is refused
before any of it runs when the required calls exceed
``settings.PLANNER_COMPUTE_CAP``. Optional figures (a sizing search, a mean
time) are left out, with a note, when the remaining budget cannot cover them.
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
    to change; nothing is computed before the cost check passes.
    """
    return _read(scenario, changes, lambda kind: kind.prepare, share)


def scenario_cross_check(*, scenario, changes: Mapping | None = None) -> Reading:
    """The kind's cross-check (exact figures beside approximations), priced and refused as above.

    Http404 when the kind has no cross-check.
    """
    return _read(scenario, changes, lambda kind: kind.cross_check, 1)


def _read(scenario, changes: Mapping | None, job_maker, share: int) -> Reading:
    kind = get_kind(scenario.kind)
    saved = kind.params_from_json(scenario.parameters)
    params = kind.apply_changes(saved, changes) if changes else saved
    job = job_maker(kind)(params, scenario.stockout_target, scenario.overflow_target)
    if job is None:
        raise Http404("This kind has no cross-check")
    result = job.run(_allowed(job, settings.PLANNER_COMPUTE_CAP // share))
    described = tuple(kind.describe_changes(saved, params)) if params != saved else ()
    return Reading(kind=kind, params=params, result=result, changes=described)


def plan_headline(*, kind: Kind, params, stockout_target: float, overflow_target: float) -> tuple[float, str]:
    """The headline stock-out risk of a plan about to be saved and its span (the page's cost check first)."""
    job = kind.prepare(params, stockout_target, overflow_target)
    _allowed(job)
    return job.headline()
