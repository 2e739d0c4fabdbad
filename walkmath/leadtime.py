"""Lead-time demand, reorder point and safety stock.

Demand per period is a count law (a StepLaw on 0, 1, 2, ...), independent from
period to period. Over a fixed lead time of L periods the demand is the L-fold
power of its generating function, G(z)^L; over a random lead time, independent
of the demand, it is the compound (mixture of powers) sum_L P(L) G(z)^L
(DESIGN.md section 5). Both are built from sums of non-negative terms, so every
probability keeps its relative accuracy far into the tail.

Lead times are whole periods, at least 1 (DESIGN.md section 4: "StepLaw over
positive ints"). A lead time of 0 means an order arrives in the period it is
placed: there is no lead-time demand to cover, so it is refused with a
message rather than silently answered with a reorder point of 0.
"""

from __future__ import annotations

import numpy as np

from walkmath import checks
from walkmath.cost import Work
from walkmath.distribution import LevelDistribution, law_power
from walkmath.steplaw import StepLaw

# Largest number of demand levels (0..max) one lead-time law may span: 80 MB of floats.
SUPPORT_CAP = 10_000_000


def lead_time_demand(demand: StepLaw, lead_time: int | StepLaw) -> LevelDistribution:
    """Law of the total demand over the lead time, on demand levels 0, 1, ..., max.

    Fixed ``lead_time`` L: the L-fold power of the demand law (``law_power``:
    repeated squaring by direct convolution, or tilted FFT windows for very
    large supports; relative-accurate in the tails). Random ``lead_time`` (a
    StepLaw over 1, 2, ...): sum_L P(L) demand^{*L}, the powers built one
    convolution at a time from the shortest lead time; O((L_max * width)^2 / 2)
    multiply-adds for L_max the longest lead time and width the demand support.
    Exact up to rounding and the demand law's own truncated tail (about L_max
    times ``demand.truncated_mass``). Both are priced before they start and refused
    over ``walkmath.cost.WORK_CAP`` (``ComputeTooLarge``).
    """
    demand = _demand_law(demand)
    if isinstance(lead_time, StepLaw):
        probs = _compound(demand, _lead_time_law(lead_time))
    else:
        periods = checks.whole("lead_time", lead_time, minimum=1, maximum=checks.HORIZON_CAP)
        _check_support(demand, periods)
        lowest, power = law_power(demand, periods)
        probs = np.concatenate([np.zeros(lowest), power])
    return LevelDistribution(np.arange(probs.size), probs)


def reorder_point(demand: StepLaw, lead_time: int | StepLaw, service: float) -> int:
    """Smallest r with P(lead-time demand <= r) >= ``service`` (cycle service level, 0 < service < 1).

    Searched on the exact lead-time law: cumulative sums of non-negative terms
    from the lower end when service <= 1/2, and, above that, the survival sum
    P(D > r) <= 1 - service from the upper end, so service levels such as
    0.999999 are decided without cancellation (never scipy's ppf/isf).
    """
    service = checks.open_probability("service", service)
    return _smallest_covering(lead_time_demand(demand, lead_time).probs, service)


def safety_stock(demand: StepLaw, lead_time: int | StepLaw, service: float) -> float:
    """Reorder point minus the mean lead-time demand E[L] E[D] (Wald's identity), in demand units."""
    point = reorder_point(demand, lead_time, service)
    mean_periods = lead_time.mean if isinstance(lead_time, StepLaw) else float(lead_time)
    return point - mean_periods * demand.mean


def _smallest_covering(probs: np.ndarray, service: float) -> int:
    if service <= 0.5:
        covered = np.cumsum(probs)  # P(D <= r), small terms first
        hits = np.flatnonzero(covered >= service)
    else:
        at_least = np.cumsum(probs[::-1])[::-1]  # at_least[i] = P(D >= i), small terms first
        shortfall = np.append(at_least[1:], 0.0)  # P(D > r)
        hits = np.flatnonzero(shortfall <= 1.0 - service)  # 1 - service is exact for service >= 1/2
    return int(hits[0]) if hits.size else probs.size - 1


def _compound(demand: StepLaw, lead_time: StepLaw) -> np.ndarray:
    """sum_L P(L) demand^{*L} on levels 0..L_max * demand.highest, as non-negative additions."""
    _check_support(demand, lead_time.highest)
    compound_work(demand, lead_time).check()
    result = np.zeros(lead_time.highest * demand.highest + 1)
    lowest, power = law_power(demand, lead_time.lowest)
    for offset, weight in enumerate(lead_time.probs):
        if offset:
            power = np.convolve(power, demand.probs)
            lowest += demand.lowest
        if weight > 0:
            result[lowest : lowest + power.size] += weight * power
    return np.minimum(result, 1.0)  # a certain level may gather 1 + 1 ulp from rounded weights


def compound_work(demand: StepLaw, lead_time: StepLaw) -> Work:
    """Work of the mixture over a lead-time law: one ``np.convolve`` of the running power with the
    demand law per lead time beyond the shortest (the shortest power itself is priced by the caller)."""
    span, width = demand.probs.size - 1, demand.probs.size
    first, last = lead_time.lowest, lead_time.highest
    powers = (last - first) * (first * span + 1) + span * (last - first) * (last - first - 1) // 2
    return Work(
        "lead_time_demand (random lead time)",
        last * span + 1,
        last - first,
        width,
        copies=0,
        dense=powers * width,
        knob="shorten the longest lead time or coarsen the demand units",
    )


def _demand_law(demand) -> StepLaw:
    if not isinstance(demand, StepLaw):
        raise ValueError(f"demand must be a StepLaw of counts (0, 1, 2, ...); got {type(demand).__name__}")
    if demand.lowest < 0:
        raise ValueError(
            f"demand must be a count law with steps 0, 1, 2, ... (no negative demand); its lowest step is "
            f"{demand.lowest}"
        )
    return demand


def _lead_time_law(lead_time: StepLaw) -> StepLaw:
    if lead_time.lowest < 1:
        raise ValueError(
            f"lead_time must be at least 1 period; the lead-time law gives {lead_time.lowest} "
            f"probability {lead_time.probs[0]:.6g}"
        )
    if lead_time.highest > checks.HORIZON_CAP:
        raise ValueError(f"lead_time must be at most {checks.HORIZON_CAP} periods; got up to {lead_time.highest}")
    return lead_time


def _check_support(demand: StepLaw, periods: int) -> None:
    levels = periods * demand.highest + 1
    if levels > SUPPORT_CAP:
        raise ValueError(
            f"lead_time x largest demand per period must be below {SUPPORT_CAP:,} units; got {periods} "
            f"periods x {demand.highest} = {levels - 1:,}. Use coarser demand units or a shorter lead time."
        )
