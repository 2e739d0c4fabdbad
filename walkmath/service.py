"""Service measures of a reorder point on the exact lead-time demand, beside the normal rule.

D is the demand over the protection interval: the lead time L (fixed or a law
over whole periods) plus the review period R, built by ``lead_time_demand``
(powers of the demand generating function, or their mixture). On it:

* cycle service P(D <= r), and its complement P(D > r), each a sum of
  non-negative terms from its own end of the law;
* expected shortage B(r) = E[(D - r)+] = sum_{k >= r} P(D > k), the survival
  sum: P(D > k) is itself a tail sum from the top, so every term is
  non-negative and no step subtracts. The textbook alternative
  E[D] - r + E[(r - D)+] subtracts two numbers of size E[D] to get a small
  one and loses all digits once B(r) is below about 1e-16 E[D];
* fill rate of a continuous-review (r, Q) policy with backorders and unit
  demands (Hadley and Whitin, Analysis of Inventory Systems, 1963):
  1 - (B(r) - B(r + Q)) / Q. The difference B(r) - B(r + Q) is never formed:
  it equals sum_{k=r}^{r+Q-1} P(D > k), summed directly; the filled share is
  sum_{k=r}^{r+Q-1} P(D <= k) / Q from the other side;
* the normal rule everyday practice uses (common practice): safety stock
  z sigma_D with sigma_D = sigma sqrt(L + R) for a fixed lead time (the
  compound sqrt(E[L'] var + var[L'] mean^2) for a random one), z from the
  target; for a fill-rate target, z solves sigma_D G(z) = (1 - target) Q with
  the standard normal loss G(z) = phi(z) - z (1 - Phi(z)).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import optimize, special

from walkmath import checks
from walkmath.cost import Work
from walkmath.distribution import LevelDistribution
from walkmath.distribution import work as power_work
from walkmath.leadtime import SUPPORT_CAP, compound_work, lead_time_demand
from walkmath.steplaw import StepLaw

MEASURES = ("cycle", "fill")
# Largest order quantity Q, in demand units.
QUANTITY_CAP = 10_000_000
# Terms of Laplace's continued fraction for the normal loss above ``_CF_FROM``;
# 400 terms give full double precision from z = 2.5 on (checked against mpmath).
_CF_TERMS = 400
_CF_FROM = 2.5
_SQRT_2PI = math.sqrt(2.0 * math.pi)


# -- the standard normal loss --------------------------------------------------------------------


def normal_loss(z: float | np.ndarray) -> float | np.ndarray:
    """Standard normal loss G(z) = E[(Z - z)+] = phi(z) - z (1 - Phi(z)), relative accuracy about 1e-15.

    Below 0: G(z) = G(-z) - z (a sum of two non-negative terms). On [0, 2.5) the
    direct form loses under one digit. From 2.5 on, G(z) = phi(z) R(z) K(z), where
    R = 1/(z + K) is Mills' ratio and K = 1/(z + 2/(z + 3/(z + ...))) the tail of
    Laplace's continued fraction (Abramowitz and Stegun 26.2.14), all terms positive,
    so G keeps its digits down to the underflow limit (about z = 37).
    """
    try:
        values = np.asarray(z, dtype=float)
    except (TypeError, ValueError):
        values = np.array(np.nan)
    if not np.all(np.isfinite(values)):
        raise ValueError(f"z must be a finite number (or an array of them); got {z!r}")
    size = np.abs(values)
    phi = np.exp(-0.5 * size * size) / _SQRT_2PI
    direct = phi - size * special.ndtr(-size)
    far = np.maximum(size, _CF_FROM)
    tail = _continued_fraction_tail(float(far)) if far.ndim == 0 else _continued_fraction_tail(far)
    continued = phi * tail / (far + tail)
    upper = np.where(size < _CF_FROM, np.maximum(direct, 0.0), continued)
    result = np.where(values < 0, upper + size, upper)
    return float(result) if np.ndim(z) == 0 else result


def _continued_fraction_tail(far):
    """1 / (far + K) with K = 2/(far + 3/(far + ...)), ``_CF_TERMS`` terms from the deepest up.

    The same correctly rounded divisions and additions for a Python float (a scalar: the root
    search calls this dozens of times) as for an array, so both give the same bits.
    """
    tail = 0.0 if isinstance(far, float) else np.zeros_like(far)
    for term in range(_CF_TERMS, 1, -1):
        tail = term / (far + tail)
    return 1.0 / (far + tail)


def normal_loss_inverse(loss: float) -> float:
    """The z with G(z) = ``loss`` (G falls from +inf to 0), by bracketing on ``normal_loss``."""
    loss = checks.real("loss", loss, minimum=0.0, strict_minimum=True)
    if loss >= normal_loss(0.0):
        low, high = -loss - 1.0, 0.0  # G(z) >= -z, so G(-loss - 1) > loss
    else:
        low, high = 0.0, 1.0
        while normal_loss(high) > loss:
            high *= 2.0
            if high > 40.0:  # G(40) underflows: the loss is too small to matter
                return high
    return optimize.brentq(lambda z: math.log(normal_loss(z)) - math.log(loss), low, high, xtol=1e-13, rtol=1e-14)


# -- protection-interval demand -------------------------------------------------------------------


def protection_demand(demand: StepLaw, lead_time: int | StepLaw, review_period: int = 0) -> LevelDistribution:
    """Demand over lead time + review period (the protection interval), on levels 0, 1, ....

    A thin wrapper over ``lead_time_demand``: a fixed lead time L becomes L + R
    periods, a lead-time law is shifted by R; the work is priced first.
    """
    periods = _interval(lead_time, review_period)
    _interval_work(demand, periods).check()
    return lead_time_demand(demand, periods)


def _interval(lead_time: int | StepLaw, review_period: int) -> int | StepLaw:
    """The protection interval L + R in periods: a whole number, or a law over whole numbers."""
    review_period = checks.whole("review_period", review_period, minimum=0, maximum=checks.HORIZON_CAP)
    if isinstance(lead_time, StepLaw):
        if lead_time.lowest < 0:
            raise ValueError(f"lead_time must be at least 0 periods; the lead-time law reaches {lead_time.lowest}")
        periods = StepLaw(lead_time.lowest + review_period, lead_time.probs, lead_time.truncated_mass)
    else:
        lead = checks.whole("lead_time", lead_time, minimum=0, maximum=checks.HORIZON_CAP)
        periods = lead + review_period
    if (periods.lowest if isinstance(periods, StepLaw) else periods) < 1:
        raise ValueError(
            "lead_time + review_period must be at least 1 period (an order that arrives at once with continuous "
            "review has no demand to protect against)"
        )
    return periods


def _interval_work(demand: StepLaw, periods: int | StepLaw) -> Work:
    if isinstance(periods, StepLaw):
        return protection_work(demand, periods.highest, periods.probs.size)
    return protection_work(demand, periods)


def protection_work(demand: StepLaw, longest: int, lead_values: int | None = None) -> Work:
    """Work of the protection-interval law over its support (levels x jumps per pass).

    A fixed interval takes about log2(periods) squarings; a random one
    (``lead_values`` possible lengths) one convolution per length.
    """
    if not isinstance(demand, StepLaw):
        raise ValueError(f"demand must be a StepLaw of counts (0, 1, 2, ...); got {type(demand).__name__}")
    levels = max(longest, 1) * max(demand.highest, 0) + 1
    if levels > SUPPORT_CAP:
        raise ValueError(
            f"protection interval x largest demand per period must be below {SUPPORT_CAP:,} units; got "
            f"{longest} periods x {demand.highest}. Use coarser demand units or a shorter lead time."
        )
    return Work(
        "lead_time_demand",
        levels,
        lead_values if lead_values is not None else max(1, math.ceil(math.log2(max(longest, 2)))),
        demand.probs.size,
        knob="shorten the lead time or coarsen the demand units",
    )


def _tails(law: LevelDistribution) -> tuple[np.ndarray, np.ndarray]:
    """P(D <= k) and P(D > k) for k = 0..max, each a cumulative sum of non-negative terms from its own end."""
    return law.tails()


# -- expected shortage and fill rate ---------------------------------------------------------------


def expected_shortage(demand: StepLaw, lead_time: int | StepLaw, reorder_point: int, review_period: int = 0) -> float:
    """B(r) = E[(D - r)+] for D the protection-interval demand, as the survival sum sum_{k >= r} P(D > k).

    Every term is a tail sum of the exact lead-time law, so B(r) keeps relative
    accuracy 1e-12 far into the tail (no E[D] - r + ... cancellation). A
    negative r adds -r whole units of certain shortage.
    """
    point = checks.whole("reorder_point", reorder_point, minimum=-QUANTITY_CAP, maximum=QUANTITY_CAP)
    law = protection_demand(demand, lead_time, review_period)
    _, above = _tails(law)
    return _loss(above, point)


def _loss(above: np.ndarray, point: int) -> float:
    certain = max(-point, 0)  # P(D > k) = 1 for k < 0
    return float(certain + math.fsum(above[max(point, 0) :]))


def fill_rate(
    demand: StepLaw,
    lead_time: int | StepLaw,
    reorder_point: int,
    order_quantity: int,
    review_period: int = 0,
) -> float:
    """Fill rate of a continuous-review (r, Q) policy, backorders, unit demands (Hadley and Whitin, 1963).

    1 - (B(r) - B(r + Q)) / Q, computed from the filled side as
    sum_{k=r}^{r+Q-1} P(D <= k) / Q (non-negative terms; see ``unfilled_share``
    for the complement from its own side). Exact up to rounding for continuous
    review; with ``review_period`` > 0 the same formula on the protection-interval
    demand is the usual approximation for periodic review (common practice), not
    an exact periodic-review result (for that, see ``PeriodicReview``).
    """
    filled, _ = _fill_sides(demand, lead_time, reorder_point, order_quantity, review_period)
    return filled


def unfilled_share(
    demand: StepLaw,
    lead_time: int | StepLaw,
    reorder_point: int,
    order_quantity: int,
    review_period: int = 0,
) -> float:
    """1 - fill rate = sum_{k=r}^{r+Q-1} P(D > k) / Q, from its own side (relative accuracy kept when small)."""
    _, unfilled = _fill_sides(demand, lead_time, reorder_point, order_quantity, review_period)
    return unfilled


def _fill_sides(demand, lead_time, reorder_point, order_quantity, review_period) -> tuple[float, float]:
    point = checks.whole("reorder_point", reorder_point, minimum=-QUANTITY_CAP, maximum=QUANTITY_CAP)
    quantity = checks.whole("order_quantity", order_quantity, minimum=1, maximum=QUANTITY_CAP)
    law = protection_demand(demand, lead_time, review_period)
    below, above = _tails(law)
    ks = np.arange(point, point + quantity)
    inside = (ks >= 0) & (ks < below.size)
    filled = math.fsum(below[ks[inside]]) + np.count_nonzero(ks >= below.size)
    unfilled = math.fsum(above[ks[inside]]) + np.count_nonzero(ks < 0)
    return min(filled / quantity, 1.0), min(unfilled / quantity, 1.0)


# -- reorder point for a target, beside the normal rule ----------------------------------------------


def reorder_point_plan_work(
    demand: StepLaw,
    lead_time: int | StepLaw,
    measure: str = "cycle",
    order_quantity: int | None = None,
    review_period: int = 0,
) -> Work:
    """Priced work of ``reorder_point_plan`` with these arguments, before any of it runs.

    The protection-interval law (the power of the demand law, ``distribution.work``; for a
    lead-time law also the mixture, ``leadtime.compound_work``) and, for a fill-rate target, the window sums over
    the curve (levels x order quantity). Raises ValueError on arguments the plan
    itself would refuse.
    """
    measure = checks.choice("measure", measure, MEASURES)
    periods = _interval(lead_time, review_period)
    random = isinstance(periods, StepLaw)
    longest = periods.highest if random else periods
    # The interval check, the power of the demand law (the shortest interval's, for a law) and the mixture.
    work = _interval_work(demand, periods) + power_work(demand, periods.lowest if random else periods)
    if random:
        work = work + compound_work(demand, periods)
    if measure == "fill":
        quantity = _order_quantity(order_quantity)
        work = work + Work("fill_rate_curve", longest * demand.highest + quantity + 1, 1, quantity)
    return work


def _order_quantity(order_quantity) -> int:
    if order_quantity is None:
        raise ValueError(f"order_quantity must be a whole number from 1 to {QUANTITY_CAP} for a fill-rate target")
    return checks.whole("order_quantity", order_quantity, minimum=1, maximum=QUANTITY_CAP)


@dataclass(frozen=True, eq=False)
class ReorderPointPlan:
    """Smallest reorder point meeting a cycle-service or fill-rate target, and the normal rule beside it.

    ``points`` runs over candidate reorder points; ``service[i]`` is the exact
    service at ``points[i]`` (cycle service or fill rate), ``shortfall[i]`` its
    complement from its own side, ``normal_service[i]`` the service the normal
    model claims there. ``gap_units`` = normal point - exact point (positive:
    the normal rule over-protects); ``gap_service`` = exact service achieved at
    the normal point - the target (negative: the normal rule under-protects).
    ``expected_short[i]`` = B(points[i]) = E[(D - r)+], the expected units short
    per order cycle, as survival sums (non-negative terms); ``protection`` the
    protection-interval demand law the curves are read from.
    """

    measure: str
    target: float
    order_quantity: int | None
    mean_demand: float
    sigma_demand: float
    reorder_point: int
    safety_stock: float
    achieved: float
    shortfall_at_point: float
    normal_z: float
    normal_reorder_point: int
    normal_safety_stock: float
    normal_achieved: float
    gap_units: int
    gap_service: float
    points: np.ndarray
    service: np.ndarray
    shortfall: np.ndarray
    normal_service: np.ndarray
    expected_short: np.ndarray | None = None
    protection: LevelDistribution | None = None


def reorder_point_plan(
    demand: StepLaw,
    lead_time: int | StepLaw,
    target: float,
    measure: str = "cycle",
    order_quantity: int | None = None,
    review_period: int = 0,
) -> ReorderPointPlan:
    """Smallest r whose exact service meets ``target``, its safety stock, and the normal rule beside it.

    ``measure`` "cycle": P(D <= r) >= target; "fill": the (r, Q) fill rate
    >= target (needs ``order_quantity``). The whole service-against-r curve is
    built in one pass (cumulative sums, and one direct window-sum convolution
    for the fill rate), and the answer is read off it, deciding near 1 on the
    shortfall side so that targets such as 0.999999 are decided without
    cancellation. The normal rule rounds its reorder point up to a whole unit
    (common practice).
    """
    target = checks.open_probability("target", target)
    measure = checks.choice("measure", measure, MEASURES)
    quantity = _order_quantity(order_quantity) if measure == "fill" else None
    law = protection_demand(demand, lead_time, review_period)
    mean, sigma = _normal_moments(demand, lead_time, review_period)
    below, above = _tails(law)
    top = below.size - 1  # P(D <= top) = 1: every target is met by then
    if measure == "cycle":
        points = np.arange(0, top + 1)
        service, shortfall = below.copy(), above.copy()
        z = _normal_z(target, measure, quantity, sigma)
        normal_service = special.ndtr((points + 0.0 - mean) / sigma) if sigma > 0 else (points >= mean) * 1.0
    else:
        Work("fill_rate_curve", top + quantity + 1, 1, quantity).check()
        points = np.arange(-quantity, top + 1)
        window = np.ones(quantity)
        # Window sums over k = r..r+Q-1 by direct convolution (non-negative terms; numpy's convolve is not FFT).
        padded_below = np.concatenate([np.zeros(quantity), below, np.ones(quantity)])
        padded_above = np.concatenate([np.ones(quantity), above, np.zeros(quantity)])
        service = np.convolve(padded_below, window)[quantity - 1 :][: points.size] / quantity
        shortfall = np.convolve(padded_above, window)[quantity - 1 :][: points.size] / quantity
        # Each window is summed on its own; rounding may differ by an ulp between neighbours, so the
        # curves are made monotone as the quantities they approximate are.
        service = np.minimum(np.maximum.accumulate(service), 1.0)
        shortfall = np.minimum(np.minimum.accumulate(shortfall), 1.0)
        z = _normal_z(target, measure, quantity, sigma)
        normal_loss_values = sigma * normal_loss((points - mean) / sigma) if sigma > 0 else np.maximum(mean - points, 0)
        normal_service = np.clip(1.0 - normal_loss_values / quantity, 0.0, 1.0)
    loss = np.cumsum(above[::-1])[::-1]  # B(k) = sum_{j >= k} P(D > j), k = 0..top
    below_zero = np.maximum(-points, 0)  # B(r) = -r + B(0) for r < 0 (the shortage is certain)
    expected_short = np.where(points < 0, below_zero + loss[0], loss[np.maximum(points, 0)])
    index = _first_meeting(service, shortfall, target)
    point = int(points[index])
    normal_point = _normal_point(mean, sigma, z)
    # Beyond the curve's ends the service is exactly 0 (below) or 1 (above the largest demand).
    normal_index = normal_point - int(points[0])
    normal_achieved = 0.0 if normal_index < 0 else float(service[min(normal_index, service.size - 1)])
    return ReorderPointPlan(
        measure=measure,
        target=target,
        order_quantity=quantity,
        mean_demand=mean,
        sigma_demand=sigma,
        reorder_point=point,
        safety_stock=point - mean,
        achieved=float(service[index]),
        shortfall_at_point=float(shortfall[index]),
        normal_z=z,
        normal_reorder_point=normal_point,
        normal_safety_stock=z * sigma,
        normal_achieved=normal_achieved,
        gap_units=normal_point - point,
        gap_service=normal_achieved - target,
        points=points,
        service=service,
        shortfall=shortfall,
        normal_service=np.asarray(normal_service, dtype=float),
        expected_short=expected_short,
        protection=law,
    )


def normal_reorder_point(
    demand: StepLaw,
    lead_time: int | StepLaw,
    target: float,
    measure: str = "cycle",
    order_quantity: int | None = None,
    review_period: int = 0,
) -> int:
    """The normal rule's reorder point alone (common practice), from the demand's mean and variance only:
    the same whole unit ``reorder_point_plan`` reports as ``normal_reorder_point``, without building a law."""
    target = checks.open_probability("target", target)
    measure = checks.choice("measure", measure, MEASURES)
    quantity = _order_quantity(order_quantity) if measure == "fill" else None
    mean, sigma = _normal_moments(demand, lead_time, review_period)
    return _normal_point(mean, sigma, _normal_z(target, measure, quantity, sigma))


def _normal_z(target: float, measure: str, quantity: int | None, sigma: float) -> float:
    """z of the normal rule: the target's quantile (cycle), or the unit normal loss G(z) = (1 - target) Q / sigma."""
    if measure == "cycle":
        return float(special.ndtri(target))
    return normal_loss_inverse((1.0 - target) * quantity / sigma) if sigma > 0 else 0.0


def _normal_point(mean: float, sigma: float, z: float) -> int:
    return math.ceil(mean + z * sigma - 1e-9 * max(1.0, abs(mean)))  # a whole unit, rounded up


def _first_meeting(service: np.ndarray, shortfall: np.ndarray, target: float) -> int:
    """First index meeting ``target``: on the service side up to 1/2, on the shortfall side above."""
    # 1 - target is exact for target >= 1/2 (Sterbenz), so the shortfall side decides without cancellation.
    hits = np.flatnonzero(service >= target) if target <= 0.5 else np.flatnonzero(shortfall <= 1.0 - target)
    return int(hits[0]) if hits.size else service.size - 1


def _normal_moments(demand: StepLaw, lead_time, review_period: int) -> tuple[float, float]:
    """Mean and sigma of protection demand as the normal rule computes them (common practice).

    Fixed L: mean (L + R) mu, sigma sqrt(L + R) sigma_d. Random L: E[L'] mu and
    sqrt(E[L'] var_d + var[L'] mu^2) with L' = L + R (compound variance).
    """
    if isinstance(lead_time, StepLaw):
        periods, spread = lead_time.mean + review_period, lead_time.variance
    else:
        periods, spread = float(lead_time + review_period), 0.0
    mean = periods * demand.mean
    return mean, math.sqrt(periods * demand.variance + spread * demand.mean**2)
