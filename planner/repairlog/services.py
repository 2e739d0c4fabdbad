"""Writes for repair logs (keyword-only ``noun_verb`` functions), and a spares pool made from a log's fit.

The plan goes through the scenario write service (``planner.services.scenario_create``),
so it is priced and its headline stored like any plan; ValueError (ComputeTooLarge
included) and nothing written when it cannot be made.
"""

from __future__ import annotations

from django.db import transaction

from planner import services
from planner.kinds import get_kind
from planner.repairlog.fit import fit_log, fitted_rates
from planner.repairlog.models import SavedRepairLog
from planner.repairlog_file import RepairLog, canonical_csv


def repairlog_create(*, owner, title: str, log: RepairLog, notes: str = "", file_name: str = "") -> SavedRepairLog:
    """A new saved repair log of ``log`` (as read); ValidationError if a field does not fit."""
    saved = SavedRepairLog(owner=owner, title=title, notes=notes, file_name=file_name[:255], **_fields(log))
    saved.full_clean()
    saved.save()
    return saved


def repairlog_update(*, saved: SavedRepairLog, title: str, log: RepairLog, notes: str = "", file_name: str = ""):
    """Replace a saved log's rows and frame (the demo loader refreshes its log this way)."""
    values = {"title": title, "notes": notes, "file_name": file_name[:255]} | _fields(log)
    for name, value in values.items():
        setattr(saved, name, value)
    saved.full_clean()
    saved.save(update_fields=[*values, "updated"])
    return saved


def _fields(log: RepairLog) -> dict:
    return {
        "time_unit": log.time_unit,
        "record_start": log.record_start,
        "record_end": log.record_end,
        "units": log.units,
        "spares": log.spares,
        "failures": log.failures,
        "rows": canonical_csv(log),
    }


def repairlog_delete(*, saved: SavedRepairLog) -> None:
    with transaction.atomic():
        saved.delete()


def scenario_create_from_log(*, owner, saved: SavedRepairLog, kind_key: str, mission: int):
    """A new ``kind_key`` plan from ``saved``'s fit with ``mission``; ValueError naming what does not fit."""
    kind = get_kind(kind_key)
    log = saved.parsed()
    rates = fitted_rates(fit_log(log), log, source=saved.title)
    params = kind.params_from_fit(rates, start=0, high=None, horizon=mission)
    if params is None:
        raise ValueError(f"A {kind.label.lower()} cannot be made from a repair log.")
    notes = (
        f"Made from the repair log “{saved.title}” ({log.record_start} to {log.record_end}): {rates.summary}. "
        f"{kind.fit_note(rates)}"
    ).strip()
    return services.scenario_create(
        owner=owner, kind=kind.key, title=f"{saved.title[:100]}: pool from the record", notes=notes, params=params
    )
