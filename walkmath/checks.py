"""Entry-point validation shared by every public function.

Each check raises ``ValueError`` whose message names the parameter and the
allowed range, so a form, the API or an upload can show it to the user as is.
"""

from __future__ import annotations

import math
from numbers import Integral, Real

import numpy as np

# Largest number of periods any single computation accepts. Beyond this a
# caller should use the long-horizon path (``BandedWalk.outlook_at``).
HORIZON_CAP = 10_000_000

# Probability vectors may sum to 1 within this tolerance; they are renormalised.
SUM_TOLERANCE = 1e-9

# Largest size of a level (a start, low or high) the free-walk functions accept. With steps of at
# most 10**9 (``walkmath.steplaw.STEP_LIMIT``) over at most ``HORIZON_CAP`` periods, every level
# they compute stays below 1.1e16 in size, well inside int64 (9.2e18).
LEVEL_LIMIT = 10**12


def whole(name: str, value, *, minimum: int | None = None, maximum: int | None = None) -> int:
    """Return ``value`` as an ``int`` or raise naming ``name`` and the range."""
    if isinstance(value, bool) or not isinstance(value, (Integral, Real)):
        raise ValueError(f"{name} must be a whole number{_range(minimum, maximum)}; got {value!r}")
    if not isinstance(value, Integral) and (not math.isfinite(value) or value != int(value)):
        raise ValueError(f"{name} must be a whole number{_range(minimum, maximum)}; got {value!r}")
    value = int(value)
    if (minimum is not None and value < minimum) or (maximum is not None and value > maximum):
        raise ValueError(f"{name} must be a whole number{_range(minimum, maximum)}; got {value}")
    return value


def real(
    name: str,
    value,
    *,
    minimum: float | None = None,
    maximum: float | None = None,
    strict_minimum: bool = False,
) -> float:
    """Return ``value`` as a finite ``float`` or raise naming ``name`` and the range."""
    low = "above" if strict_minimum else "at least"
    if isinstance(value, bool) or not isinstance(value, Real) or not math.isfinite(_as_float(value)):
        raise ValueError(f"{name} must be a finite number{_span(minimum, maximum, low)}; got {value!r}")
    value = float(value)
    too_low = minimum is not None and (value <= minimum if strict_minimum else value < minimum)
    if too_low or (maximum is not None and value > maximum):
        raise ValueError(f"{name} must be a finite number{_span(minimum, maximum, low)}; got {value!r}")
    return value


def _as_float(value) -> float:
    """float(value), with numbers too large for a float (an int such as 10**400) as inf."""
    try:
        return float(value)
    except OverflowError:
        return math.inf


def probability(name: str, value) -> float:
    return real(name, value, minimum=0.0, maximum=1.0)


def open_probability(name: str, value) -> float:
    """A probability strictly between 0 and 1 (a service or confidence level)."""
    message = f"{name} must be a probability strictly between 0 and 1; got {value!r}"
    try:
        value = real(name, value)
    except ValueError:
        raise ValueError(message) from None
    if not 0.0 < value < 1.0:
        raise ValueError(message)
    return value


def probability_vector(name: str, values) -> np.ndarray:
    """Non-negative finite weights summing to 1 within ``SUM_TOLERANCE``; renormalised."""
    weights = float_array(name, values, "probabilities between 0 and 1")
    if weights.ndim != 1 or weights.size == 0:
        raise ValueError(f"{name} must be a non-empty list of probabilities")
    if not np.all(np.isfinite(weights)) or np.any(weights < 0) or np.any(weights > 1.0 + SUM_TOLERANCE):
        raise ValueError(f"{name} must hold probabilities between 0 and 1")
    total = math.fsum(weights)
    if abs(total - 1.0) > SUM_TOLERANCE:
        raise ValueError(f"{name} must sum to 1 (within {SUM_TOLERANCE:g}); they sum to {total:.12g}")
    return weights / total


def float_array(name: str, values, what: str = "finite numbers") -> np.ndarray:
    """``values`` as a float array, or ValueError naming ``name`` (not numbers, or too large for a float)."""
    try:
        return np.asarray(values, dtype=float)
    except (TypeError, ValueError, OverflowError):
        raise ValueError(f"{name} must be a list of {what}") from None


def level(name: str, value) -> int:
    """A level (start, low, high) of a free walk: a whole number within +-``LEVEL_LIMIT``."""
    return whole(name, value, minimum=-LEVEL_LIMIT, maximum=LEVEL_LIMIT)


def horizon(value, name: str = "horizon") -> int:
    return whole(name, value, minimum=0, maximum=HORIZON_CAP)


def choice(name: str, value, allowed: tuple[str, ...]) -> str:
    if value not in allowed:
        raise ValueError(f"{name} must be one of {', '.join(repr(a) for a in allowed)}; got {value!r}")
    return value


def _range(minimum, maximum) -> str:
    return _span(minimum, maximum, "at least")


def _span(minimum, maximum, low: str) -> str:
    if minimum is not None and maximum is not None:
        return f" from {minimum} to {maximum}"
    if minimum is not None:
        return f" {low} {minimum}"
    if maximum is not None:
        return f" at most {maximum}"
    return ""


# The rules at the ends of the band (design notes, section 3), declared once for
# the engine, the planner's parameters and its forms.
BELOW_RULES = ("backorder", "lost", "stop")
ABOVE_RULES = ("spill", "stop")
DEFAULT_BELOW = "backorder"
DEFAULT_ABOVE = "spill"
