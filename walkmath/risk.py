"""Risk for every start level, smallest buffers, and mean times to a stock-out.

* ``risk_by_start``: one backward sweep u_{n} = P u_{n-1} of the same banded
  operator the forward outlook uses, so the risk at the horizon comes out for
  every start level at once.
* ``smallest_start`` / ``smallest_capacity``: searches on those risks, which are
  monotone in the start level and in the capacity (coupling argument: a walk
  started higher stays higher, path by path).
* ``mean_periods_to_exit`` / ``mean_periods_to_stockout``: the linear system
  (I - Q) t = 1 on the band, Q the sub-stochastic one-period operator, solved
  as a band matrix (``scipy.linalg.solve_banded``); a cyclic law (period-
  dependent steps) uses a sparse system over (phase, level). A nearest-
  neighbour walk between two ends takes the gambler's-ruin closed form.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np
from scipy import linalg, sparse
from scipy.sparse import linalg as sparse_linalg

from walkmath import checks, longrun, ruin
from walkmath.cost import Work
from walkmath.operator import Rules, backward_step, end_values

if TYPE_CHECKING:
    from walkmath.banded import BandedWalk, StartRisk

# Levels added above the start, when there is no capacity, before a mean time to
# stock-out is accepted as converged (the mass that far up is negligible).
_MEAN_TIME_TOLERANCE = 1e-12


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


def _default_top(walk: BandedWalk, horizon: int) -> int:
    certain_safe = walk.low + horizon * walk.max_down
    mean = sum(law.mean for law in walk.laws) / len(walk.laws)
    spread = math.sqrt(max(sum(law.variance for law in walk.laws) / len(walk.laws), 1e-12) * horizon)
    plausible = walk.low + int(math.ceil(horizon * max(-mean, 0.0) + 40.0 * spread + 10))
    return max(walk.start, min(certain_safe, plausible))


def mean_time_work(walk: BandedWalk) -> Work:
    """Priced work of a mean-time solve (banded elimination over the band, or a grown band without capacity)."""
    jumps = max(law.probs.size for law in walk.laws)
    top = walk.high if walk.high is not None else walk.start + 2**22
    levels = (top - walk.low + 1) * len(walk.laws)
    return Work("mean_time", levels, 1, jumps * jumps, knob="narrow the band (capacity)")


def mean_periods_to_exit(walk: BandedWalk, *, overflow_ends: bool = True) -> float:
    """E[first period with a stock-out (or an overflow, if ``overflow_ends``)]; inf if not certain.

    Banded linear solve of (I - Q) t = 1 over the band. Without a capacity the
    band is cut at a top level where the walk is held (a lower bound) and the
    cut doubled until the answer moves by less than 1e-12 relative.
    """
    if walk.high is not None:
        if overflow_ends and len(walk.laws) == 1 and walk.laws[0].is_nearest:
            # fast path: gambler's ruin between low - 1 and high + 1 (Feller vol. 1, XIV (3.5)-(3.6))
            law = walk.laws[0]
            return ruin.expected_duration(
                law.prob(1), law.prob(-1), walk.start - walk.low + 1, walk.high - walk.low + 2
            )
        if overflow_ends:
            return _mean_time(walk, walk.high, ends_above=True)
        if walk.above == "stop" and walk.max_up > 0:
            return math.inf  # an overflow may end the path first: a stock-out is not certain
        return _mean_time(walk, walk.high, ends_above=False)
    drift = sum(law.mean for law in walk.laws) / len(walk.laws)
    if drift >= 0:
        return math.inf  # no capacity, no downward drift: no finite mean time to a stock-out
    top = walk.start + 64 * max(walk.max_up + walk.max_down, 1)
    previous = _mean_time(walk, top, ends_above=False)
    while top - walk.start < 2**22:
        top = walk.start + 2 * (top - walk.start)
        current = _mean_time(walk, top, ends_above=False)
        if abs(current - previous) <= _MEAN_TIME_TOLERANCE * current:
            return current
        previous = current
    return current


def _mean_time(walk: BandedWalk, top: int, ends_above: bool) -> float:
    """Mean time to leave low..top from the start; above ``top`` the path ends or is held at ``top``."""
    size = top - walk.low + 1
    jumps = max(law.probs.size for law in walk.laws)
    Work("mean_time", size * len(walk.laws), 1, jumps * jumps, knob="narrow the band (capacity)").check()
    if len(walk.laws) == 1:
        bands = _banded_system(walk.laws[0], size, ends_above)
        try:
            times = linalg.solve_banded((walk.max_down, walk.max_up), bands, np.ones(size))
        except (linalg.LinAlgError, ValueError):
            return math.inf
    else:
        system = _cyclic_system(walk.laws, size, ends_above).tocsc()
        with np.errstate(all="ignore"):
            times = sparse_linalg.spsolve(system, np.ones(system.shape[0]))
    value = float(times[walk.start - walk.low])
    if not math.isfinite(value) or value <= 0 or value > 1e15:
        return math.inf  # singular or nearly so: the walk can stay in the band forever
    return value


def _banded_system(law, size: int, ends_above: bool) -> np.ndarray:
    """(I - Q) in scipy's diagonal-ordered band form; row i, column i + step holds -P(step)."""
    upper, lower = max(law.highest, 0), max(-law.lowest, 0)
    bands = np.zeros((upper + lower + 1, size))
    bands[upper] = 1.0
    for offset, weight in enumerate(law.probs):
        step = law.lowest + offset
        if weight == 0.0:
            continue
        rows = np.arange(size)
        cols = rows + step
        inside = (cols >= 0) & (cols < size)
        bands[upper - step, cols[inside]] -= weight
        if not ends_above and step > 0:
            spilled = cols >= size  # spill: the step lands on the top level
            np.add.at(bands, (upper - (size - 1 - rows[spilled]), np.full(spilled.sum(), size - 1)), -weight)
    return bands


def _cyclic_system(laws, size: int, ends_above: bool) -> sparse.coo_matrix:
    """(I - Q) over states (phase, level); phase k moves with laws[k] to phase k + 1 (mod len)."""
    phases = len(laws)
    rows, cols, values = [np.arange(phases * size)], [np.arange(phases * size)], [np.ones(phases * size)]
    levels = np.arange(size)
    for phase, law in enumerate(laws):
        nxt = (phase + 1) % phases
        for offset, weight in enumerate(law.probs):
            step = law.lowest + offset
            target = levels + step
            if not ends_above:
                target = np.minimum(target, size - 1)
            keep = (target >= 0) & (target < size) & (weight > 0)
            rows.append(phase * size + levels[keep])
            cols.append(nxt * size + target[keep])
            values.append(np.full(keep.sum(), -weight))
    return sparse.coo_matrix(
        (np.concatenate(values), (np.concatenate(rows), np.concatenate(cols))), shape=(phases * size,) * 2
    )
