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

import functools
import hashlib
import math
from dataclasses import dataclass
from types import SimpleNamespace
from typing import TYPE_CHECKING

import numpy as np
from scipy import optimize, stats

from walkmath import checks, longrun
from walkmath.cost import WORK_CAP, ComputeTooLarge, Work
from walkmath.operator import Rules

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


def risk_at_capacity(
    walk: BandedWalk, horizon: int, capacity: int, *, stockout: bool = True, overflow: bool = True
) -> tuple[float, float]:
    """(stock-out, overflow) risk at ``horizon`` with ``capacity``, each by the cheaper exact method.

    A risk not asked for comes back as nan-free 0.0 without being computed.
    """
    probe = _with_capacity(walk, capacity)
    sweep, squaring = probe.cost(horizon, "first_passage"), probe.cost(horizon, "outlook_at")
    if walk.below != "backorder" and squaring.units < sweep.units * (stockout + overflow):
        squaring.check()
        long = probe.outlook_at([horizon])
        return float(long.stockout[0]), float(long.overflow[0])
    risk_low = probe.first_passage(horizon, Rules("stop", walk.above))[0] if stockout else 0.0
    risk_high = probe.first_passage(horizon, Rules(walk.below, "stop"))[1] if overflow else 0.0
    return risk_low, risk_high


def smallest_capacity(
    walk: BandedWalk,
    horizon: int,
    overflow_target: float,
    stockout_target: float | None = None,
    *,
    cap: int = WORK_CAP,
    own_overflow: np.ndarray | None = None,
) -> int | None:
    """Smallest capacity (at least the start) whose overflow risk at ``horizon`` meets ``overflow_target``.

    With ``stockout_target`` the stock-out risk must be met too: under
    ``above="spill"`` it only falls as the capacity grows, so the answer is the
    smallest capacity meeting both; under ``above="stop"`` it only rises (fewer
    paths end at an overflow), so it is checked at the overflow answer and None
    returned if it fails there. None also when no capacity can meet the targets.

    The search starts from a guess read off one backward sweep at the walk's
    own capacity (overflow risk by start level, shifted: exact for a
    backordering walk, whose risk depends only on the room above the start),
    confirms it and its neighbour with exact probes, and gallops away from it
    only when it is off. The whole search stays under ``cap`` units of work
    (``ComputeTooLarge`` names the capacity reached when the next probe would
    pass it). ``own_overflow``: ``walk.risk_by_start(horizon).overflow`` if the caller
    has it already (the guess then reads it instead of sweeping again).
    """
    horizon = checks.horizon(horizon)
    overflow_target = checks.probability("overflow_target", overflow_target)
    if stockout_target is not None:
        stockout_target = checks.probability("stockout_target", stockout_target)
    search = capacity_search(walk, horizon, overflow_target, stockout_target, cap=cap, own_overflow=own_overflow)
    request = next(search)
    while True:
        capacity, stockout, overflow = request
        try:
            request = search.send(risk_at_capacity(walk, horizon, capacity, stockout=stockout, overflow=overflow))
        except StopIteration as done:
            return done.value


def capacity_search(
    walk: BandedWalk,
    horizon: int,
    overflow_target: float,
    stockout_target: float | None,
    *,
    cap: int = WORK_CAP,
    own_overflow: np.ndarray | None = None,
):
    """The search of ``smallest_capacity`` as a generator, for checked arguments.

    It yields ``(capacity, stockout, overflow)``: a probe at ``capacity`` and which of the two risks
    it needs from the walk's start; it is sent back ``(stockout risk, overflow risk)`` (a risk not
    needed may be anything) and returns the answer. The caller chooses how to compute each probe:
    ``smallest_capacity`` runs one exact sweep from the start per probe, ``walkmath.portfolio_engine``
    reads the probes of many items off shared backward sweeps. The
    work counted against ``cap`` is the same either way (the probes' priced work), so both stop at
    the same probe with the same message. ``own_overflow`` is the overflow risk by start at the
    walk's own capacity (low..high), if the caller has it; otherwise the guess computes it.
    """
    both = stockout_target is not None and walk.above == "spill"
    reach = walk.start + horizon * walk.max_up  # beyond it no overflow can happen within the horizon
    spent = 0

    def meets(capacity: int):
        nonlocal spent
        spent += _probe_work(walk, horizon, capacity).units * (1 + both)
        if spent > cap:
            raise ComputeTooLarge(
                f"the capacity search reached {capacity:,} without settling within the limit of {cap:.3g} "
                "units of work; shorten the horizon or coarsen the units"
            )
        stockout, overflow = yield capacity, both, True
        return overflow <= overflow_target and (not both or stockout <= stockout_target)

    guess = _guess(walk, horizon, overflow_target, reach, own_overflow)
    if (yield from meets(guess)):  # gallop down to a capacity that fails, then bisect
        lowest, highest, step = guess, guess, 1
        while lowest > walk.start:
            probe = max(guess - step, walk.start)
            if not (yield from meets(probe)):
                lowest = probe + 1
                break
            highest = lowest = probe
            step *= 2
    else:  # gallop up to a capacity that meets, then bisect
        if guess == reach:
            return None
        lowest, step = guess + 1, 1
        highest = min(guess + step, reach)
        while not (yield from meets(highest)):
            if highest == reach:
                return None
            lowest, step = highest + 1, 2 * step
            highest = min(guess + step, reach)
    while lowest < highest:
        middle = (lowest + highest) // 2
        if (yield from meets(middle)):
            highest = middle
        else:
            lowest = middle + 1
    stop_fails = stockout_target is not None and walk.above == "stop"
    if stop_fails:
        stockout, _ = yield lowest, True, False
        if stockout > stockout_target:
            return None
    return lowest


def _guess(
    walk: BandedWalk, horizon: int, overflow_target: float, reach: int, own_overflow: np.ndarray | None = None
) -> int:
    """A first capacity to probe: from the overflow risk by start at the walk's own capacity, shifted."""
    if walk.high is not None and walk.high > walk.low and walk.cost(horizon, "risk_by_start").units <= WORK_CAP:
        if own_overflow is None:
            own_overflow = walk.risk_by_start(horizon).overflow  # over starts low..high
        meeting = np.flatnonzero(own_overflow <= overflow_target)  # risk rises with the start
        if meeting.size:
            room = walk.high - (walk.low + int(meeting[-1]))  # room above the start that meets the target
            return int(min(walk.start + room, reach))
    # Room beyond the band: the normal approximation of the running maximum (reflection: P(max > x) ~ 2 P(S > x));
    # for a downward drift, the exponential tail of the maximum, P(max > x) ~ exp(-theta x) per excursion
    # (Cramer-Lundberg, common practice), with one excursion a period as the worst case.
    drift = sum(law.mean for law in walk.laws) / len(walk.laws)
    spread = math.sqrt(sum(law.variance for law in walk.laws) / len(walk.laws) * horizon)
    target = max(overflow_target, 1e-300)
    z = _normal_quantile_above(target / 2) if overflow_target < 1 else 0.0
    room = max(drift, 0.0) * horizon + max(z, 0.0) * spread
    if drift < 0 and walk.max_up > 0:
        coefficient = _adjustment_coefficient(walk.laws)
        if coefficient is not None:
            room = min(room, math.log(horizon / target) / coefficient)
    return int(min(walk.start + max(math.ceil(room), 1), reach))


@functools.lru_cache(maxsize=1024)
def _normal_quantile_above(tail: float) -> float:
    """z with P(Z > z) = ``tail`` (scipy's isf; cached: a portfolio asks for the same few targets)."""
    return float(stats.norm.isf(tail))


# theta by a digest of the cycle's laws (never the laws themselves, which may be large), at most this many.
_COEFFICIENTS: dict[bytes, float | None] = {}
_COEFFICIENTS_KEPT = 4096


def _adjustment_coefficient(laws) -> float | None:
    """theta > 0 with prod_k G_k(e^theta) = 1 for a cycle of laws drifting down (per period, averaged).

    None when the drift is down only by rounding (log G at a tiny theta is not below 0): no root
    to bracket, and the normal room stands. Kept by a digest of the laws: a portfolio asks for the
    same law's theta once per item.
    """
    digest = hashlib.blake2b(digest_size=16)
    for law in laws:
        digest.update(int(law.lowest).to_bytes(8, "little", signed=True))
        digest.update(int(law.probs.size).to_bytes(8, "little"))
        digest.update(np.ascontiguousarray(law.probs, dtype=float).tobytes())
    key = digest.digest()
    if key not in _COEFFICIENTS:
        if len(_COEFFICIENTS) >= _COEFFICIENTS_KEPT:
            _COEFFICIENTS.clear()
        _COEFFICIENTS[key] = _solve_adjustment_coefficient(laws)
    return _COEFFICIENTS[key]


def _solve_adjustment_coefficient(laws) -> float | None:
    """``_adjustment_coefficient`` itself: Brent's method on log prod_k G_k(e^theta)."""

    def log_g(theta: float) -> float:
        total = 0.0
        for law in laws:
            exponents = np.log(law.probs, where=law.probs > 0, out=np.full(law.probs.size, -np.inf)) + theta * law.steps
            peak = exponents.max()
            total += peak + math.log(np.exp(exponents - peak).sum())
        return total

    if log_g(1e-12) >= 0:
        return None
    high = 1.0
    while log_g(high) <= 0 and high < 1e6:
        high *= 2
    return optimize.brentq(log_g, 1e-12, high) / len(laws)


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


def _with_capacity(walk: BandedWalk, capacity: int) -> BandedWalk:
    from walkmath.banded import BandedWalk

    return BandedWalk(walk.laws, walk.start, walk.low, capacity, walk.below, walk.above)


def _probe_work(walk: BandedWalk, horizon: int, capacity: int) -> Work:
    """Priced work of one probe at ``capacity``: what ``BandedWalk.cost`` gives the walk with that capacity
    for "first_passage" (and "outlook_at", if cheaper and the floor does not backorder), computed from
    the walk's own numbers (a search prices dozens of probes; the capacity is at least the start)."""
    if abs(capacity) > checks.LEVEL_LIMIT:
        _with_capacity(walk, capacity)  # refused, naming the capacity
    lowest = walk.start - horizon * walk.max_down  # BandedWalk._grid with high = capacity
    if walk.below != "backorder":
        lowest = max(lowest, walk.low)
    levels = min(walk.start + horizon * walk.max_up, capacity) - lowest + 1
    jumps = max(law.probs.size for law in walk.laws)
    if walk.below == "backorder":
        return Work("first_passage", levels, horizon, jumps)
    sweep = Work("first_passage", levels, horizon, min(jumps, levels))
    squaring = longrun.work(SimpleNamespace(high=capacity, low=walk.low, start=walk.start, laws=walk.laws), horizon)
    return min(sweep, squaring, key=lambda work: work.units)
