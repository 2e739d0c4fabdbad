"""Gambler's-ruin closed forms for nearest-neighbour walks between two absorbing levels.

A walk moves +1 with ``up``, -1 with ``down`` and stays otherwise; it starts at
``start`` (0 <= start <= target) and ends on reaching 0 (ruin, the stock-out) or
``target`` (the overflow). Feller, An Introduction to Probability Theory and Its
Applications, vol. 1, 3rd ed., ch. XIV, eqs. (2.4), (2.8) and (3.5), (3.6).
Staying in place does not change where the walk ends; it stretches every move
by a geometric number of periods with mean 1 / (up + down).

Both forms are evaluated without cancellation: log(q / p) through ``log1p`` of
the exact difference of the two floats, 1 - start/target as
(target - start)/target, and the expected duration as a product of positive
factors (see ``expected_duration``), so a near-fair walk (q - p = 1e-7) or a
start next to a far end (start = 10**17 - 1, target = 10**17) keeps full
relative accuracy. These serve as fast paths and cross-checks for
``BandedWalk`` with ``low = 1``, ``high = target - 1`` and both rules "stop".
"""

from __future__ import annotations

import math

from walkmath import checks

# Below this argument the two positive functions of ``expected_duration`` are
# summed from their Taylor series (alternating, first term dominant: no
# cancellation); above it the direct form loses at most two bits.
_SERIES_BELOW = 0.5
_SERIES_TERMS = 30


def ruin_probability(up: float, down: float, start: int, target: int) -> float:
    """P(the walk reaches 0 before ``target``); Feller vol. 1, XIV (2.4), in a form that cannot overflow."""
    up, down, start, target = _validate(up, down, start, target)
    if up == down:
        return (target - start) / target  # Feller vol. 1, XIV (2.5); the integer difference is exact
    if up == 0.0:
        return 1.0 if start < target else 0.0
    if down == 0.0:
        return 1.0 if start == 0 else 0.0
    log_ratio = _log_ratio(up, down)  # log(q / p), accurate when q and p are close
    if log_ratio > 0:  # q > p: q_z = (1 - r^(z - a)) / (1 - r^(-a)), r = q / p > 1
        return -math.expm1((start - target) * log_ratio) / -math.expm1(-target * log_ratio)
    # q < p: q_z = (r^z - r^a) / (1 - r^a) with r < 1, written to keep small values exact
    return math.exp(start * log_ratio) * -math.expm1((target - start) * log_ratio) / -math.expm1(target * log_ratio)


def expected_duration(up: float, down: float, start: int, target: int) -> float:
    """Mean number of periods until 0 or ``target`` is reached; Feller vol. 1, XIV (3.5)-(3.6).

    Feller's D_z = z / (q - p) - a / (q - p) (1 - r^z) / (1 - r^a), r = q / p,
    cancels badly near the fair case and when z is close to a. With
    w = a - z, lambda = log r > 0 (the walk reflected, if need be, so that it
    drifts towards 0) and x = z lambda, y = w lambda it equals exactly

        D_z = z w (lambda / (q - p)) (chi(x) e^-y + kappa(y)) / (1 - e^-(x + y)),

    chi(x) = (x - 1 + e^-x) / x and kappa(y) = (1 - (1 + y) e^-y) / y, every
    factor positive; the fair limit (lambda -> 0) is z w / (p + q), XIV (3.6).
    Relative accuracy about 1e-14.
    """
    up, down, start, target = _validate(up, down, start, target)
    if start in (0, target):
        return 0.0
    moving = up + down
    if moving == 0.0:
        return math.inf
    if up == 0.0:
        return start / down  # every move is down
    if down == 0.0:
        return (target - start) / up
    near, far = start, target - start  # distances to 0 and to the target
    if up > down:  # reflect: the walk drifts towards the target
        near, far, up, down = far, near, down, up
    gap = down - up  # exact when the two are within a factor 2 (Sterbenz)
    if gap == 0.0:
        return near * far / moving  # Feller vol. 1, XIV (3.6), per move, stretched by 1 / (up + down)
    log_ratio = _log_ratio(up, down)
    x, y = near * log_ratio, far * log_ratio
    shape = (_chi(x) * math.exp(-y) + _kappa(y)) / -math.expm1(-(x + y))
    return near * far * (log_ratio / gap) * shape


def _chi(x: float) -> float:
    """(x - 1 + e^-x) / x for x > 0, without cancellation."""
    if x < _SERIES_BELOW:  # sum_{k >= 2} (-1)^k x^(k - 1) / k!
        term, total = 0.5 * x, 0.0
        for k in range(2, _SERIES_TERMS):
            total += term
            term *= -x / (k + 1)
        return total
    return (x + math.expm1(-x)) / x


def _kappa(y: float) -> float:
    """(1 - (1 + y) e^-y) / y for y > 0, without cancellation."""
    if y < _SERIES_BELOW:  # sum_{k >= 2} (-1)^k (k - 1) y^(k - 1) / k!
        power, total = y / 2.0, 0.0  # power = (-1)^k y^(k - 1) / k!
        for k in range(2, _SERIES_TERMS):
            total += (k - 1) * power
            power *= -y / (k + 1)
        return total
    return (-math.expm1(-y) - y * math.exp(-y)) / y


def _log_ratio(up: float, down: float) -> float:
    """log(down / up) from the exact difference of the two floats (no cancellation near the fair case)."""
    if down >= up:
        ratio = (down - up) / up
        return math.log1p(ratio) if math.isfinite(ratio) else math.log(down) - math.log(up)
    ratio = (up - down) / down
    return -(math.log1p(ratio) if math.isfinite(ratio) else math.log(up) - math.log(down))


# Largest distance between the two ends: far beyond any buffer, and every level stays exact in a float.
TARGET_LIMIT = 10**18


def _validate(up, down, start, target):
    up = checks.probability("up", up)
    down = checks.probability("down", down)
    if up + down > 1.0 + checks.SUM_TOLERANCE:
        raise ValueError(f"up + down must be at most 1; got {up + down:.12g}")
    target = checks.whole("target", target, minimum=1, maximum=TARGET_LIMIT)
    start = checks.whole("start", start, minimum=0, maximum=target)
    return up, down, start, target
