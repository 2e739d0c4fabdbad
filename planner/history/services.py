"""Writes for histories (keyword-only ``noun_verb`` functions), and plans made from a history's fit.

A plan from a fit goes through the scenario write service
(``planner.services.scenario_create``), so it is priced and its headline
stored like any plan; a plan too large to compute raises ComputeTooLarge and
nothing is written.
"""

from __future__ import annotations

from django.db import transaction

from planner import services
from planner.history.fit import FIT_REFUSED, RangeInputs, fit_history, fitted_laws
from planner.history.models import SERIES, SavedHistory
from planner.history_file import History
from planner.kinds import get_kind


def _series_fields(parsed: History) -> dict:
    arrays = {"level": parsed.levels} if parsed.shape == "levels" else {"in": parsed.arrivals, "out": parsed.demand}
    return {
        "period": parsed.period,
        "shape": parsed.shape,
        "first_date": parsed.dates[0],
        "rows": len(parsed.dates),
        "series": {column: arrays[column].tolist() for column in SERIES[parsed.shape]},
    }


def history_create(*, owner, title: str, parsed: History, notes: str = "", file_name: str = "") -> SavedHistory:
    """A new saved history of ``parsed`` (``planner.history_file.History``); ValidationError if a field does not fit."""
    history = SavedHistory(owner=owner, title=title, notes=notes, file_name=file_name[:255], **_series_fields(parsed))
    history.full_clean()
    history.save()
    return history


def history_update(*, history: SavedHistory, title: str, parsed: History, notes: str = "", file_name: str = ""):
    """Replace a saved history's name, notes and rows (the demo loader refreshes its history this way)."""
    values = {"title": title, "notes": notes, "file_name": file_name[:255]} | _series_fields(parsed)
    for name, value in values.items():
        setattr(history, name, value)
    history.full_clean()
    history.save(update_fields=[*values, "updated"])
    return history


def history_delete(*, history: SavedHistory) -> None:
    with transaction.atomic():
        history.delete()


def plan_params_from_fit(*, history: SavedHistory, kind, inputs: RangeInputs, weekday_pattern: bool = False):
    """(parameters, laws) of a ``kind`` plan from ``history``'s fit; None parameters when the kind is not
    made from fits; ValueError naming what does not fit."""
    try:
        fit = fit_history(history.parsed())
    except ValueError as refusal:
        raise ValueError(f"{FIT_REFUSED} {refusal}.") from None
    laws = fitted_laws(fit, source=history.title, weekday_pattern=weekday_pattern)
    params = kind.params_from_fit(laws, start=inputs.start, high=inputs.high, horizon=inputs.horizon)
    return params, laws


def scenario_create_from_fit(
    *, owner, history: SavedHistory, kind_key: str, inputs: RangeInputs, weekday_pattern: bool = False
):
    """A new plan of kind ``kind_key`` with ``history``'s fitted laws; ValueError (ComputeTooLarge included)
    naming what does not fit, and nothing written."""
    kind = get_kind(kind_key)
    params, laws = plan_params_from_fit(history=history, kind=kind, inputs=inputs, weekday_pattern=weekday_pattern)
    if params is None:
        raise ValueError(f"A {kind.label.lower()} cannot be made from a fitted history yet.")
    notes = (
        f"Made from the history “{laws.source}” ({laws.periods:,} {laws.period}s of changes, {laws.first_date} to "
        f"{laws.last_date}): {laws.summary}. {kind.fit_note(laws)}"
    ).strip()
    return services.scenario_create(
        owner=owner, kind=kind.key, title=f"{history.title[:100]}: plan from the fit", notes=notes, params=params
    )
