"""Buffer sizing: the smallest start level and the smallest capacity meeting a target.

* ``smallest_start``: read off the backward sweep (risk for every start level
  at once); stock-out risk falls as the start rises (coupling: a walk started
  higher stays higher, path by path).
* ``smallest_capacity``: overflow risk falls as the capacity rises (before its
  first overflow a path does not feel the capacity, and a higher capacity is
  crossed later, path by path). The search gallops up from the start, so the
  cheap narrow bands come first and the widest band probed is less than twice
  the answer, then bisects; every probe is priced before it runs, and uses the
  forward sweep or operator squaring, whichever costs less.
* ``risk_by_capacity``: the curve of both risks against capacity, for charts.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from walkmath import checks
from walkmath.cost import WORK_CAP, ComputeTooLarge, Work

if TYPE_CHECKING:
    from walkmath.banded import BandedWalk


@dataclass(frozen=True, eq=False)
class CapacityRisk:
    """Risk at the horizon for each capacity: ``overflow[i]`` with capacity ``capacities[i]``."""

    horizon: int
    capacities: np.ndarray
    stockout: np.ndarray
    overflow: np.ndarray


def smallest_start(
    walk: BandedWalk, horizon: int, stockout_target: float, overflow_target: float | None = None
) -> int | None:
    """Smallest start level whose stock-out risk (and overflow risk, if given) at the horizon meets the targets."""
    return walk.risk_by_start(horizon).smallest_meeting(stockout_target, overflow_target)


def risk_at_capacity(walk: BandedWalk, horizon: int, capacity: int) -> tuple[float, float]:
    """(stock-out, overflow) risk at ``horizon`` with ``capacity``, by the cheaper exact method."""
    from walkmath.banded import BandedWalk

    probe = BandedWalk(walk.laws, walk.start, walk.low, capacity, walk.below, walk.above)
    sweep, squaring = probe.cost(horizon, "outlook"), probe.cost(horizon, "outlook_at")
    if walk.below != "backorder" and squaring.units < sweep.units:
        squaring.check()
        long = probe.outlook_at([horizon])
        return float(long.stockout[0]), float(long.overflow[0])
    out = probe.outlook(horizon)
    return float(out.stockout[-1]), float(out.overflow[-1])


def smallest_capacity(
    walk: BandedWalk,
    horizon: int,
    overflow_target: float,
    stockout_target: float | None = None,
    *,
    cap: int = WORK_CAP,
) -> int | None:
    """Smallest capacity (at least the start) whose overflow risk at ``horizon`` meets ``overflow_target``.

    With ``stockout_target`` the stock-out risk must be met too: under
    ``above="spill"`` it only falls as the capacity grows, so the answer is the
    smallest capacity meeting both; under ``above="stop"`` it only rises (fewer
    paths end at an overflow), so it is checked at the overflow answer and None
    returned if it fails there. None also when no capacity can meet the targets.
    The whole search's work is held under ``cap`` (``ComputeTooLarge`` names the
    capacity reached when the next probe would pass it).
    """
    horizon = checks.horizon(horizon)
    overflow_target = checks.probability("overflow_target", overflow_target)
    if stockout_target is not None:
        stockout_target = checks.probability("stockout_target", stockout_target)
    spent = 0

    def overflow_ok(capacity: int) -> bool:
        nonlocal spent
        spent += _probe_work(walk, horizon, capacity).units
        if spent > cap:
            raise ComputeTooLarge(
                f"the capacity search reached {capacity:,} without meeting the overflow target within the "
                f"limit of {cap:.3g} units of work; shorten the horizon or coarsen the units"
            )
        stockout, overflow = risk_at_capacity(walk, horizon, capacity)
        if stockout_target is not None and walk.above == "spill":
            return overflow <= overflow_target and stockout <= stockout_target
        return overflow <= overflow_target

    # Beyond ``reach`` no overflow can happen within the horizon.
    reach = walk.start + horizon * walk.max_up
    lowest, step = walk.start, max(walk.max_up, 1)
    highest = min(walk.start + step, reach)
    while not overflow_ok(highest):
        if highest == reach:
            return None
        lowest, step = highest + 1, 2 * step
        highest = min(walk.start + step, reach)
    while lowest < highest:
        middle = (lowest + highest) // 2
        if overflow_ok(middle):
            highest = middle
        else:
            lowest = middle + 1
    stop_fails = stockout_target is not None and walk.above == "stop"
    if stop_fails and risk_at_capacity(walk, horizon, lowest)[0] > stockout_target:
        return None
    return lowest


def risk_by_capacity(walk: BandedWalk, horizon: int, capacities) -> CapacityRisk:
    """Stock-out and overflow risk at ``horizon`` for each capacity (each at least the start)."""
    horizon = checks.horizon(horizon)
    wanted = np.array(
        [checks.whole("capacities", c, minimum=walk.start, maximum=10**9) for c in np.atleast_1d(capacities)],
        dtype=np.int64,
    )
    if wanted.size == 0:
        raise ValueError("capacities must hold at least one capacity")
    total = sum(_probe_work(walk, horizon, int(c)).units for c in wanted)
    Work("risk_by_capacity", int(wanted.max()) - walk.low + 1, horizon, 1, copies=0, dense=total).check()
    risks = np.array([risk_at_capacity(walk, horizon, int(c)) for c in wanted]).reshape(-1, 2)
    return CapacityRisk(horizon=horizon, capacities=wanted, stockout=risks[:, 0], overflow=risks[:, 1])


def capacity_work(walk: BandedWalk, horizon: int, cap: int = WORK_CAP) -> Work:
    """Bound of the capacity search's work: galloping to at most twice the answer, then bisection,
    and never more than ``cap``, where the search stops itself (``ComputeTooLarge``)."""
    reach = walk.start + horizon * walk.max_up
    probes = 2 * max(1, (reach - walk.start).bit_length())
    widest = _probe_work(walk, horizon, min(reach, walk.start + 10**9))
    units = min(probes * widest.units, cap)
    return Work("smallest_capacity", widest.levels, horizon, widest.jumps, copies=0, dense=units)


def _probe_work(walk: BandedWalk, horizon: int, capacity: int) -> Work:
    from walkmath.banded import BandedWalk

    probe = BandedWalk(walk.laws, walk.start, walk.low, capacity, walk.below, walk.above)
    sweep = probe.cost(horizon, "outlook")
    if walk.below == "backorder":
        return sweep
    return min(sweep, probe.cost(horizon, "outlook_at"), key=lambda work: work.units)
