"""Words for pools of repairable units, whatever kind states them: time units, times and rates written out.

Numbers go through the one formatter (``planner.formatting``); only the unit names live here,
since a pool is counted in hours or days rather than in a stock plan's periods.
"""

from __future__ import annotations

import math

from planner.formatting import number, probability

TIME_UNITS = {"hour": ("hour", "hours"), "day": ("day", "days")}
# Hours in a year and days in a year, for "shortages a year".
PER_YEAR = {"hour": 8760.0, "day": 365.0}


def unit_name(unit: str, count: float = 1) -> str:
    one, many = TIME_UNITS.get(unit, ("time unit", "time units"))
    return one if count == 1 else many


def duration(value, unit: str) -> str:
    """'720 hours', '1.5 days', 'no finite average' for inf, '—' for None."""
    if value is None:
        return "—"
    if math.isinf(float(value)):
        return "no finite average"
    return f"{number(value)} {unit_name(unit, float(value))}"


def per(value, unit: str, what: str = "") -> str:
    """'0.02 per hour', '0.5 repairs per day'."""
    if value is None:
        return "—"
    return f"{number(value)}{' ' + what if what else ''} per {unit_name(unit)}"


def count(value: int, one: str, many: str | None = None) -> str:
    """'1 spare', '3 spares', '0 spares'."""
    return f"{number(value)} {one if value == 1 else (many or one + 's')}"


def share(value) -> str:
    """An availability close to 1 written with enough nines to tell it from its target: 0.99995 ->
    '99.995 %', 0.999999 -> '99.9999 %' (three digits of the share missing); below 99.9 % as any
    probability ('97.1 %')."""
    if value is None:
        return "—"
    value = float(value)
    if value < 0.999 or value >= 1:
        return probability(value)
    short = 100 * (1.0 - value)  # percent of the time short, at least 1e-14 here
    decimals = 2 - math.floor(math.log10(short))
    if decimals > 12:
        return "> 99.9999999999 %"
    return f"{100 * value:.{decimals}f}".rstrip("0").rstrip(".") + " %"


def meets_availability(availability: float, unavailability: float, target: float) -> bool:
    """Read on the accurate side: 1 - target is exact for a target of 1/2 or more (Sterbenz's lemma)."""
    return unavailability <= 1.0 - target if target >= 0.5 else availability >= target
