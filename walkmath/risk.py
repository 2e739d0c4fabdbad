"""Risk for every start level, smallest buffers, and mean times to a stock-out.

* ``risk_by_start``: one backward sweep u_{n} = P u_{n-1} of the same banded
  operator the forward outlook uses, so the risk at the horizon comes out for
  every start level at once.
* ``smallest_start`` / ``smallest_capacity``: searches on those risks, which are
  monotone in the start level and in the capacity (coupling argument: a walk
  started higher stays higher, path by path).
* ``mean_periods_to_exit`` / ``mean_periods_to_stockout``: delegated to
  ``walkmath.meantime`` (closed forms for nearest-neighbour laws, a
  subtraction-free elimination on the band otherwise).
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from walkmath import checks, longrun, meantime
from walkmath.cost import Work
from walkmath.operator import Rules, backward_step, end_values
from walkmath.steplaw import StepLaw

if TYPE_CHECKING:
    from walkmath.banded import BandedWalk, StartRisk
    from walkmath.meantime import MeanTime


def risk_by_start(walk: BandedWalk, horizon: int, top: int | None = None) -> StartRisk:
    """Stock-out and overflow risk at ``horizon`` for every start level low..top (one backward sweep).

    Each period is one ``np.correlate`` of the risk by level with the period's
    law (``walkmath.operator.backward_step``), the band's ends valued by the
    rules; every value is a sum of non-negative terms. Without a capacity,
    ``top`` defaults to the lowest level from which a stock-out within the
    horizon is impossible (low + horizon x largest down-step), or less when the
    risk there is already negligible.
    """
    from walkmath.banded import StartRisk

    horizon = checks.horizon(horizon)
    if top is None:
        top = walk.high if walk.high is not None else _default_top(walk, horizon)
    top = checks.whole("top", top, minimum=walk.low, maximum=walk.high)
    sweep = _sweep_work(walk, horizon, "risk_by_start", top)
    if _squaring_is_cheaper(walk, horizon, sweep):
        stockout, overflow = longrun.risk_by_start(walk, horizon)
        rows = np.arange(walk.low, top + 1) - walk.low
        return StartRisk(horizon, np.arange(walk.low, top + 1), stockout[rows], overflow[rows])
    sweep.check()
    if walk.below == "backorder" or walk.high is None:
        return _by_room(walk, horizon, top)
    grid_low, grid_high = _grid(walk, horizon, top)
    size, band_lo = grid_high - grid_low + 1, walk.low - grid_low
    rules, capacity = Rules(walk.below, walk.above), walk.high is not None
    stockout = np.zeros(size)
    stockout[:band_lo] = 1.0  # a backorder grid: levels under low have already stocked out
    overflow = np.zeros(size)
    for period in range(horizon, 0, -1):
        law = walk.law_for_period(period)
        ends = end_values(rules, stockout, "stockout", band_lo=band_lo, capacity=capacity)
        stockout = backward_step(stockout, law, *ends)
        stockout[:band_lo] = 1.0
        if capacity:  # for overflow, levels under low walk on
            overflow = backward_step(
                overflow, law, *end_values(rules, overflow, "overflow", band_lo=band_lo, capacity=capacity)
            )
    rows = np.arange(walk.low, top + 1) - grid_low
    # Each value is a weighted mean of values in [0, 1]; the cap meets only a last-ulp rounding.
    return StartRisk(
        horizon=horizon,
        starts=np.arange(walk.low, top + 1),
        stockout=np.minimum(stockout[rows], 1.0),
        overflow=np.minimum(overflow[rows], 1.0),
    )


def _by_room(walk: BandedWalk, horizon: int, top: int) -> StartRisk:
    """The sweep for a walk whose grid would reach far beyond its band (``walkmath.stacked``).

    A backordering walk's grid reaches horizon x largest fall below the floor, and a walk with no
    capacity horizon x largest rise above ``top``, only so that paths that wander there and come
    back are counted. The stock-out risk is 1 under the floor, so its sweep needs only the band
    (padded with 1 below); the overflow risk of a backordering walk depends only on the room above
    the start, and the stock-out risk with no capacity only on the level above the floor (the
    mirrored walk's overflow by room): each is one vector swept on a window that keeps only the
    rooms still needed and still reachable. The same sums of non-negative products, far fewer of them.
    """
    from walkmath.banded import StartRisk
    from walkmath.stacked import room_overflow, row_kind, stacked_risks

    width = top - walk.low + 1
    if walk.high is None:
        mirrored = [StepLaw._trusted(-law.highest, law.probs[::-1]) for law in walk.laws]
        stockout, overflow = room_overflow(mirrored, horizon, width), np.zeros(width)
    else:
        (stockout,) = stacked_risks(walk.laws, horizon, [(row_kind("stockout", walk.above), width)])
        overflow = room_overflow(walk.laws, horizon, width)[::-1]  # the start at level i has room width - 1 - i
    return StartRisk(horizon=horizon, starts=np.arange(walk.low, top + 1), stockout=stockout, overflow=overflow)


def work(walk: BandedWalk, horizon: int, method: str = "risk_by_start", top: int | None = None) -> Work:
    """Priced work of the risk for every start level: the backward sweep, or squaring where cheaper."""
    if top is None:
        top = walk.high if walk.high is not None else _default_top(walk, horizon)
    sweep = _sweep_work(walk, horizon, method, top)
    return longrun.work(walk, horizon) if _squaring_is_cheaper(walk, horizon, sweep) else sweep


def _sweep_work(walk: BandedWalk, horizon: int, method: str, top: int) -> Work:
    grid_low, grid_high = _grid(walk, horizon, top)
    jumps = max(law.probs.size for law in walk.laws)
    return Work(method, grid_high - grid_low + 1, horizon, jumps, copies=1 + (walk.high is not None))


def _squaring_is_cheaper(walk: BandedWalk, horizon: int, sweep: Work) -> bool:
    """Long horizons on a bounded band: operator squaring when it costs less than the sweep."""
    bounded = walk.high is not None and walk.below != "backorder" and walk.high - walk.low < longrun.DENSE_LEVELS
    return bounded and longrun.work(walk, horizon).units < sweep.units


def _grid(walk: BandedWalk, horizon: int, top: int) -> tuple[int, int]:
    """Levels a backward sweep carries so that every start low..top is exact at the horizon."""
    grid_low = walk.low - (horizon * walk.max_down if walk.below == "backorder" else 0)
    grid_high = walk.high if walk.high is not None else top + horizon * walk.max_up
    return grid_low, grid_high


def mean_time_work(walk: BandedWalk) -> Work:
    """Priced work of a mean-time solve (closed form, or elimination over the band; see walkmath.meantime)."""
    return meantime.work(walk)


def _default_top(walk: BandedWalk, horizon: int) -> int:
    certain_safe = walk.low + horizon * walk.max_down
    mean = sum(law.mean for law in walk.laws) / len(walk.laws)
    spread = math.sqrt(max(sum(law.variance for law in walk.laws) / len(walk.laws), 1e-12) * horizon)
    plausible = walk.low + int(math.ceil(horizon * max(-mean, 0.0) + 40.0 * spread + 10))
    return max(walk.start, min(certain_safe, plausible))


def mean_periods_to_exit(walk: BandedWalk, *, overflow_ends: bool = True) -> MeanTime:
    """E[first period with a stock-out (or an overflow, if ``overflow_ends``)]; inf if not certain.

    Relative accuracy about 1e-12 for any finite mean, or a proven lower bound
    flagged ``at_least``; the method is in ``walkmath.meantime``.
    """
    return meantime.mean_periods_to_exit(walk, overflow_ends=overflow_ends)
