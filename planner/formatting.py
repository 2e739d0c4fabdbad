"""The one number formatter: probabilities, units, periods and rates as analysts read them.

Templates use it through ``planner_format``; charts use it for their text
alternatives. CSV files never use it: they keep plain machine numbers.
"""

from __future__ import annotations

import functools
import math

import numpy as np

SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")
# Below this a probability is written as a power of ten (0.1 %).
PERCENT_FLOOR = 1e-3

PERIODS = {
    "day": ("day", "days"),
    "week": ("week", "weeks"),
    "shift": ("shift", "shifts"),
    "month": ("month", "months"),
}


def scientific(value: float, digits: int = 3) -> str:
    """6.63e-12 -> '6.63 × 10⁻¹²' (``digits`` significant digits, trailing zeros dropped)."""
    mantissa, exponent = f"{value:.{digits - 1}e}".split("e")
    return f"{float(mantissa):g} × 10{str(int(exponent)).translate(SUPERSCRIPT)}"


def probability(value, digits: int = 3) -> str:
    """0.0231 -> '2.31 %', 6.63e-12 -> '6.63 × 10⁻¹²', 0 -> '0 %', None -> '—' (``digits`` significant digits).

    With more digits, values near 1 keep more of them: 0.99991 is '> 99.9 %' with 3 and '99.991 %' with 5.
    """
    if value is None:
        return "—"
    value = float(value)
    if value == 0:
        return "0 %"
    if value >= 1:
        return "100 %"
    near_certain = 1 - 5 * 10.0 ** -(digits + 1)  # above it (and below 1) the value would round to "100 %"
    if value > near_certain:
        return f"> 99.{'9' * (digits - 2)} %"
    if float(f"{value:.{digits - 1}e}") >= PERCENT_FLOOR:
        return f"{100 * value:.{digits}g} %"
    return scientific(value, digits)


def probabilities(values, digits: int = 3) -> list[str]:
    """``probability`` of each value (the same strings), faster on long chart series.

    The classes (0, 100 %, near certain, percent, power of ten) are found for the whole array at
    once; each string is then one format. Only values within 1 % of the percent floor are rounded
    to ``digits`` significant digits first, as ``probability`` decides on the rounded value.
    """
    array = np.asarray(values, dtype=float).ravel()
    near_certain = 1 - 5 * 10.0 ** -(digits + 1)
    percent = array >= PERCENT_FLOOR * 1.01
    close = np.flatnonzero((array > PERCENT_FLOOR * 0.99) & ~percent)
    percent[close] = [float(f"{value:.{digits - 1}e}") >= PERCENT_FLOOR for value in array[close].tolist()]
    percent_text, mantissa_text = f"{{:.{digits}g}} %", f"{{:.{digits - 1}e}}"
    certain_text = f"> 99.{'9' * (digits - 2)} %"
    out = []
    for value, is_percent in zip(array.tolist(), percent.tolist(), strict=True):
        if value == 0:
            out.append("0 %")
        elif value >= 1:
            out.append("100 %")
        elif value > near_certain:
            out.append(certain_text)
        elif is_percent:
            out.append(percent_text.format(100 * value))
        else:
            mantissa, exponent = mantissa_text.format(value).split("e")
            out.append(f"{_short(mantissa)} × 10{_power(exponent)}")
    return out


def _short(mantissa: str) -> str:
    """'6.60' -> '6.6', '1.00' -> '1': what ``f"{float(mantissa):g}"`` writes for a mantissa in [1, 10)."""
    return mantissa.rstrip("0").rstrip(".") if "." in mantissa else mantissa


@functools.lru_cache(maxsize=1024)
def _power(exponent: str) -> str:
    """'-12' (as ``format`` writes it, '-05' included) -> '⁻¹²'."""
    return str(int(exponent)).translate(SUPERSCRIPT)


def number(value, digits: int = 3) -> str:
    """Plain count or amount: 1100.4 -> '1,100', 3.4567 -> '3.46', 2.5e-5 -> '2.5 × 10⁻⁵', 1e13 -> '1 × 10¹³'."""
    if value is None:
        return "—"
    value = float(value)
    if value == 0:
        return "0"
    size = abs(value)
    if size >= 1e9 or size < 1e-3:
        return scientific(value, digits)
    if size >= 10**digits:
        return f"{value:,.0f}"
    rounded = float(f"{value:.{digits}g}")
    if rounded == int(rounded):
        return f"{rounded:,.0f}"
    decimals = digits - 1 - math.floor(math.log10(abs(rounded)))
    return f"{rounded:.{decimals}f}".rstrip("0").rstrip(".")


def numbers(values, digits: int = 3) -> list[str]:
    """``number`` of each value."""
    return [number(value, digits) for value in np.asarray(values, dtype=float).ravel().tolist()]


def units(value, unit: str = "units") -> str:
    """'12 units', '3.46 units'; '—' for None."""
    return "—" if value is None else f"{number(value)} {unit}"


def period_name(period: str, count: float = 1) -> str:
    """'day' or 'days' for ``count``; an unknown period reads as 'period(s)'."""
    one, many = PERIODS.get(period, ("period", "periods"))
    return one if count == 1 else many


def periods(value, period: str = "day") -> str:
    """A number of periods in the scenario's period: '56 days (8 weeks)', '9.53 × 10¹² days'.

    ``inf`` (an event that may never come, or whose mean is unbounded) reads as
    'no finite average'; a value with ``at_least`` set (the engine's
    ``MeanTime`` lower bound) reads as 'more than ...'.
    """
    if value is None:
        return "—"
    if math.isinf(float(value)):
        return "no finite average"
    text = f"{number(value)} {period_name(period, float(value))}"
    if getattr(value, "at_least", False):
        return f"more than {text}"
    if period == "day" and float(value) == int(value) and value >= 14 and int(value) % 7 == 0:
        text += f" ({int(value) // 7} weeks)"
    return text


def rate(value, period: str = "day", unit: str = "units") -> str:
    """'3.4 units per day'; a negative mean change reads with a minus sign: '−0.12 units per day'."""
    if value is None:
        return "—"
    text = number(abs(value))
    sign = "−" if value < 0 and text != "0" else ""
    return f"{sign}{text} {unit} per {period_name(period)}"


def percent_input(value) -> str:
    """A stored fraction as the percentage an analyst types back: 0.05 -> '5', 1e-6 -> '0.0001'."""
    if value is None:
        return ""
    return f"{100 * float(value):.6g}"
