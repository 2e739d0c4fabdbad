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

from walkmath import checks, meantime
from walkmath.cost import Work

if TYPE_CHECKING:
    from walkmath.banded import BandedWalk, StartRisk
    from walkmath.meantime import MeanTime


def risk_by_start(walk: BandedWalk, horizon: int, top: int | None = None) -> StartRisk:
    """Stock-out and overflow risk at ``horizon`` for every start level low..top (one backward sweep).

    Without a capacity, ``top`` defaults to the lowest level from which a
    stock-out within the horizon is impossible (low + horizon x largest
    down-step), or less when the risk there is already negligible.
    """
    from walkmath.banded import StartRisk

    horizon = checks.horizon(horizon)
    if top is None:
        top = walk.high if walk.high is not None else _default_top(walk, horizon)
    top = checks.whole("top", top, minimum=walk.low, maximum=walk.high)
    grid_low = walk.low - (horizon * walk.max_down if walk.below == "backorder" else 0)
    grid_high = walk.high if walk.high is not None else top + horizon * walk.max_up
    size = grid_high - grid_low + 1
    work(walk, horizon).check()
    band_lo = walk.low - grid_low
    stockout = np.zeros(size)
    stockout[:band_lo] = 1.0  # backorder grid: levels under low have already stocked out
    overflow = np.zeros(size)
    pad_low, pad_high = walk.max_down, walk.max_up
    padded = np.zeros((2, size + pad_low + pad_high))
    for period in range(horizon, 0, -1):
        law = walk.law_for_period(period)
        _pad(padded[0], stockout, pad_low, pad_high, below_value=1.0, above=_above_value(walk, stockout, 0.0))
        below_value = 0.0 if walk.below == "stop" else overflow[band_lo]  # lost: continue from low
        _pad(padded[1], overflow, pad_low, pad_high, below_value=below_value, above=1.0)
        fresh = np.zeros((2, size))
        for offset, weight in enumerate(law.probs):
            if weight:
                step = law.lowest + offset
                fresh += weight * padded[:, pad_low + step : pad_low + step + size]
        stockout, overflow = fresh
        stockout[:band_lo] = 1.0  # for overflow, levels under low walk on
    starts = np.arange(walk.low, top + 1)
    rows = starts - grid_low
    return StartRisk(horizon=horizon, starts=starts, stockout=stockout[rows], overflow=overflow[rows])


def work(walk: BandedWalk, horizon: int, method: str = "risk_by_start") -> Work:
    """Priced work of the backward sweep (stock-out and overflow risk for every start level)."""
    top = walk.high if walk.high is not None else _default_top(walk, horizon)
    grid_low = walk.low - (horizon * walk.max_down if walk.below == "backorder" else 0)
    grid_high = walk.high if walk.high is not None else top + horizon * walk.max_up
    jumps = max(law.probs.size for law in walk.laws)
    return Work(method, grid_high - grid_low + 1, horizon, jumps, copies=2)


def capacity_work(walk: BandedWalk, horizon: int) -> Work:
    """Priced work of the capacity search: bounded by its probes, each a forward outlook."""
    jumps = max(law.probs.size for law in walk.laws)
    reach = walk.start + horizon * walk.max_up
    levels = reach - walk.low + 1
    probes = 2 * max(1, math.ceil(math.log2(max(reach - walk.start, 2))))
    return Work("smallest_capacity", levels, horizon, jumps, copies=3 * probes)


def mean_time_work(walk: BandedWalk) -> Work:
    """Priced work of a mean-time solve (closed form, or elimination over the band; see walkmath.meantime)."""
    return meantime.work(walk)


def _default_top(walk: BandedWalk, horizon: int) -> int:
    certain_safe = walk.low + horizon * walk.max_down
    mean = sum(law.mean for law in walk.laws) / len(walk.laws)
    spread = math.sqrt(max(sum(law.variance for law in walk.laws) / len(walk.laws), 1e-12) * horizon)
    plausible = walk.low + int(math.ceil(horizon * max(-mean, 0.0) + 40.0 * spread + 10))
    return max(walk.start, min(certain_safe, plausible))


def _above_value(walk: BandedWalk, values: np.ndarray, stop_value: float):
    return stop_value if walk.above == "stop" or walk.high is None else values[-1]


def _pad(out: np.ndarray, values: np.ndarray, pad_low: int, pad_high: int, *, below_value, above) -> None:
    out[:pad_low] = below_value
    out[pad_low : pad_low + values.size] = values
    out[pad_low + values.size :] = above


def smallest_start(
    walk: BandedWalk, horizon: int, stockout_target: float, overflow_target: float | None = None
) -> int | None:
    """Smallest start level whose stock-out risk (and overflow risk, if given) at the horizon meets the targets."""
    return risk_by_start(walk, horizon).smallest_meeting(stockout_target, overflow_target)


def smallest_capacity(
    walk: BandedWalk, horizon: int, overflow_target: float, stockout_target: float | None = None
) -> int | None:
    """Smallest capacity (``high``, at least the start) meeting the overflow target at the horizon.

    Galloping then bisection on capacity, one forward outlook per probe (about
    2 log2(answer - start) outlooks, the cheap small bands first). With ``stockout_target`` the stock-out risk must
    be met too; under ``above="spill"`` it can only fall as capacity grows.
    """
    from walkmath.banded import BandedWalk

    horizon = checks.horizon(horizon)
    overflow_target = checks.probability("overflow_target", overflow_target)
    if stockout_target is not None:
        stockout_target = checks.probability("stockout_target", stockout_target)

    def meets(capacity: int) -> bool:
        probe = BandedWalk(walk.laws, walk.start, walk.low, capacity, walk.below, walk.above).outlook(horizon)
        ok = probe.overflow[-1] <= overflow_target
        return ok and (stockout_target is None or probe.stockout[-1] <= stockout_target)

    # No overflow is possible at ``reach``; if even that fails, nothing does. Otherwise gallop up from the
    # start (small bands are cheap), then bisect.
    reach = walk.start + horizon * walk.max_up
    if not meets(reach):
        return None
    lowest, step = walk.start, max(walk.max_up, 1)
    highest = min(walk.start + step, reach)
    while not meets(highest):
        lowest, step = highest + 1, 2 * step
        highest = min(walk.start + step, reach)
    while lowest < highest:
        middle = (lowest + highest) // 2
        if meets(middle):
            highest = middle
        else:
            lowest = middle + 1
    return lowest


def mean_periods_to_exit(walk: BandedWalk, *, overflow_ends: bool = True) -> MeanTime:
    """E[first period with a stock-out (or an overflow, if ``overflow_ends``)]; inf if not certain.

    Relative accuracy about 1e-12 for any finite mean, or a proven lower bound
    flagged ``at_least``; the method is in ``walkmath.meantime``.
    """
    return meantime.mean_periods_to_exit(walk, overflow_ends=overflow_ends)
