"""Gambler's-ruin closed forms for nearest-neighbour walks between two absorbing levels.

A walk moves +1 with ``up``, -1 with ``down`` and stays otherwise; it starts at
``start`` (0 < start < target) and ends on reaching 0 (ruin, the stock-out) or
``target`` (the overflow). Feller, An Introduction to Probability Theory and Its
Applications, vol. 1, 3rd ed., ch. XIV, eqs. (2.4), (2.8) and (3.5), (3.6).
Staying in place does not change where the walk ends; it stretches every move
by a geometric number of periods with mean 1 / (up + down).

These serve as fast paths and cross-checks for ``BandedWalk`` with
``low = 1``, ``high = target - 1`` and both rules "stop".
"""

from __future__ import annotations

import math

from walkmath import checks


def ruin_probability(up: float, down: float, start: int, target: int) -> float:
    """P(the walk reaches 0 before ``target``); Feller vol. 1, XIV (2.4), in a form that cannot overflow."""
    up, down, start, target = _validate(up, down, start, target)
    if up == down:
        return 1.0 - start / target
    if up == 0.0:
        return 1.0
    if down == 0.0:
        return 0.0
    log_ratio = math.log(down) - math.log(up)  # log(q / p)
    if log_ratio > 0:  # q > p: q_z = (1 - r^(z - a)) / (1 - r^(-a)), r = q / p > 1
        return -math.expm1((start - target) * log_ratio) / -math.expm1(-target * log_ratio)
    # q < p: q_z = (r^z - r^a) / (1 - r^a) with r < 1, written to keep small values exact
    return math.exp(start * log_ratio) * -math.expm1((target - start) * log_ratio) / -math.expm1(target * log_ratio)


def expected_duration(up: float, down: float, start: int, target: int) -> float:
    """Mean number of periods until 0 or ``target`` is reached; Feller vol. 1, XIV (3.5)-(3.6)."""
    up, down, start, target = _validate(up, down, start, target)
    moving = up + down
    if moving == 0.0:
        return math.inf
    if up == down:
        return start * (target - start) / moving
    ruin = ruin_probability(up, down, start, target)
    # D_z = [z - a (1 - q_z)] / (q - p), in probabilities of a move (up, down scaled by 1 / moving)
    p, q = up / moving, down / moving
    return (start - target * (1.0 - ruin)) / (q - p) / moving


def _validate(up, down, start, target):
    up = checks.probability("up", up)
    down = checks.probability("down", down)
    if up + down > 1.0 + checks.SUM_TOLERANCE:
        raise ValueError(f"up + down must be at most 1; got {up + down:.12g}")
    target = checks.whole("target", target, minimum=1)
    start = checks.whole("start", start, minimum=0, maximum=target)
    return up, down, start, target
