"""Uniformization for birth–death chains: transient laws and passage curves.

p(t) = sum_n Poisson(n; gamma t) p0 P^n with P = I + Q / gamma (Jensen 1953), applied as a
tridiagonal vector update. Every term is non-negative, so each entry keeps its relative
accuracy; the Poisson weights start at the mode and recur outwards (Fox and Glynn, "Computing
Poisson probabilities", CACM 31(4), 1988), so nothing underflows. Passage curves carry the law
given no passage yet from one time to the next, so they are monotone by construction.
"""

from __future__ import annotations

import functools
import math
import weakref
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from walkmath.cost import PERIOD_OVERHEAD

if TYPE_CHECKING:
    from walkmath.continuous import BirthDeath

# Poisson weights below this fraction of the weight at the mode are dropped. The dropped mass
# (reported, always far below the design's 1e-15) can add at most that much to any entry, so a
# transient probability p keeps relative accuracy 1e-8 down to p of about 1e-290.
WEIGHT_FLOOR = 1e-300
# Largest Poisson mean gamma * t accepted. The work is about gamma t + 40 sqrt(gamma t) vector
# updates of the K + 1 levels: around a minute at the cap for a small chain.
UNIFORMIZATION_CAP = 1e7
# Uniformization steps held at once before they are weighted by a matrix product, and the most
# entries such a block may hold (32 MB).
STEP_BLOCK = 256
BLOCK_ENTRIES = 4_000_000
# Chains of at most this many levels may take the step ladder (see ``_ladder``) when it is the cheaper way.
LADDER_LEVELS = 64
# Work units (walkmath.cost: about 0.2 ns each) of the sweeps' parts, measured on small chains: a
# tridiagonal step per level, one multiply-add in a small dense product, one numpy call on small arrays.
STEP_UNITS = 10
FLOP_UNITS = 5
CALL_UNITS = 10_000
# Poisson windows kept for reuse: the last WINDOWS_KEPT with a mean up to KEPT_MEAN (each at most
# about 8,000 floats, so at most about 8 MB in all); longer ones are worked out each time.
WINDOWS_KEPT = 128
KEPT_MEAN = 1e4


@dataclass(frozen=True, eq=False)
class PassageCurve:
    """P(target reached by t) and P(not reached by t) at each of ``times`` (in the caller's order).

    Over increasing times ``reached`` never falls and ``not_reached`` never rises, by construction
    (see ``absorption_curve``); each side keeps its relative accuracy while it is at most 1/2.
    """

    times: np.ndarray
    reached: np.ndarray
    not_reached: np.ndarray
    dropped_mass: float  # upper bound on the Poisson mass left out, summed over the intervals
    steps: int  # uniformization steps taken (the work done)


@dataclass(frozen=True)
class _PoissonWindow:
    first: int  # weights[i] = P(N = first + i), normalised over the window
    weights: np.ndarray
    dropped: float  # upper bound on the Poisson mass outside the window


def _poisson_window(mean: float) -> _PoissonWindow:
    return _kept_window(mean) if mean <= KEPT_MEAN else _window(mean)


@functools.lru_cache(maxsize=WINDOWS_KEPT)
def _kept_window(mean: float) -> _PoissonWindow:
    return _window(mean)


def _window(mean: float) -> _PoissonWindow:
    """Poisson(mean) weights from the mode outwards until they fall below ``WEIGHT_FLOOR`` of the mode's.

    Ratios w_{k+1}/w_k = mean/(k+1) and w_{k-1}/w_k = k/mean keep shrinking beyond either cut, so
    each dropped tail is at most a geometric series on its first term (Fox and Glynn 1988).
    Read-only, as windows are kept for reuse (a page asks for the same times on several curves).
    """
    if mean == 0:
        return _PoissonWindow(0, np.ones(1), 0.0)
    mode = math.floor(mean)
    reach = int(8 * math.sqrt(mean)) + 64
    while True:  # upper[j - 1] = w_{mode + j} / w_mode
        upper = np.cumprod(mean / (mode + np.arange(1, reach + 1)))
        if upper[-1] < WEIGHT_FLOOR:
            break
        reach *= 2
    cut = int(np.argmax(upper < WEIGHT_FLOOR))  # level mode + cut + 1 is the first dropped
    upper_tail = upper[cut] / (1.0 - mean / (mode + cut + 2))
    upper = upper[:cut]

    lower, lower_tail = np.empty(0), 0.0
    reach = min(int(8 * math.sqrt(mean)) + 64, mode)
    while reach > 0:  # lower[j - 1] = w_{mode - j} / w_mode
        lower = np.cumprod(np.arange(mode, mode - reach, -1) / mean)
        if reach == mode or lower[-1] < WEIGHT_FLOOR:
            break
        reach = min(2 * reach, mode)
    below = np.flatnonzero(lower < WEIGHT_FLOOR)
    if below.size:
        cut = int(below[0])  # level mode - cut - 1 is the first dropped
        lower_tail = lower[cut] / (1.0 - (mode - cut - 1) / mean)
        lower = lower[:cut]

    weights = np.concatenate((lower[::-1], [1.0], upper))
    # numpy's pairwise sum of these positive weights: relative error below 1e-15 for any window (an
    # exact sum cost milliseconds a window on long missions), the same factor for every weight
    total = float(weights.sum())
    weights /= total
    weights.setflags(write=False)
    return _PoissonWindow(mode - lower.size, weights, (lower_tail + upper_tail) / total)


def _uniformized(
    chain: BirthDeath, initial: np.ndarray, times: np.ndarray, ladder: np.ndarray | None = None
) -> tuple[np.ndarray, np.ndarray, int]:
    """Laws at each of ``times`` (rows) from the law ``initial`` at time 0, dropped Poisson mass per
    time, steps taken.

    The vectors v_n = p0 P^n are made STEP_BLOCK at a time (by tridiagonal updates, or from the
    step ladder when it is the cheaper way or is given) and weighted into every time's result by
    one matrix product of non-negative terms.
    """
    size = chain.birth.size
    rate = chain.uniformization_rate
    result = np.zeros((times.size, size))
    if rate == 0:
        result[:] = initial
        return result, np.zeros(times.size), 0
    windows = [_poisson_window(rate * t) for t in times]
    steps = max(window.first + window.weights.size for window in windows)
    if ladder is None and ladder_pays(size, [steps]):
        ladder = _ladder(chain)
    for begin, block in _powers(chain, initial, steps, ladder):
        rows = block.shape[0]
        weights = np.zeros((times.size, rows))
        for i, window in enumerate(windows):
            low = max(begin, window.first)
            high = min(begin + rows, window.first + window.weights.size)
            if low < high:
                weights[i, low - begin : high - begin] = window.weights[low - window.first : high - window.first]
        if weights.any():
            result += weights @ block
    np.minimum(result, 1.0, out=result)  # a certain level may sum to 1 + 1 ulp
    return result, np.array([window.dropped for window in windows]), steps


def _transitions(chain: BirthDeath) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The tridiagonal P = I + Q / gamma as its diagonal, up and down chances."""
    rate = chain.uniformization_rate
    # the stay probability is exactly non-negative because gamma is the maximum
    stay = (rate - (chain.birth + chain.death)) / rate
    up_from = chain.birth[:-1] / rate  # level k -> k + 1, for k = 0..K-1
    down_from = chain.death[1:] / rate  # level k -> k - 1, for k = 1..K
    return stay, up_from, down_from


def _powers(chain: BirthDeath, initial: np.ndarray, steps: int, ladder: np.ndarray | None = None):
    """(n, block) with block[i] = v_{n + i} = p0 P^(n + i), for n = 0, STEP_BLOCK, ... below ``steps``.

    With a ``ladder`` (``_ladder``) each block is one vector-matrix product from its first vector;
    otherwise it is made by tridiagonal updates. Each block is a view of one buffer, overwritten by
    the next: use it before asking for more.
    """
    size = chain.birth.size
    stay, up_from, down_from = _transitions(chain)
    scratch = np.empty(size)
    current = np.array(initial, dtype=float)
    if ladder is not None:
        height = ladder.shape[1] // size
        for begin in range(0, steps, height):
            rows = min(height, steps - begin)
            block = (current @ ladder[:, : rows * size]).reshape(rows, size)
            yield begin, block
            _step(block[rows - 1], current, stay, up_from, down_from, scratch)
        return
    block = np.empty((max(1, min(STEP_BLOCK, steps, BLOCK_ENTRIES // size)), size))
    for begin in range(0, steps, block.shape[0]):
        rows = min(block.shape[0], steps - begin)
        block[0] = current
        for row in range(1, rows):
            _step(block[row - 1], block[row], stay, up_from, down_from, scratch)
        yield begin, block[:rows]
        _step(block[rows - 1], current, stay, up_from, down_from, scratch)


# Step ladders by chain object, while the chain lives (a chain is frozen: its rates never change). Kept
# beside the chain rather than on it, so a pickled result holding a pool does not carry its ladders.
_LADDERS: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def _ladder(chain: BirthDeath) -> np.ndarray:
    """The chain's step ladder (``_build_ladder``), built once per chain object (read-only): a pool's
    figures sweep the same chain several times (mission curves, risk by units failed at the start)."""
    ladder = _LADDERS.get(chain)
    if ladder is None:
        ladder = _build_ladder(chain)
        ladder.setflags(write=False)
        _LADDERS[chain] = ladder
    return ladder


def _build_ladder(chain: BirthDeath) -> np.ndarray:
    """The step ladder of a small chain: ladder[i, r * n + j] = P^r[i, j] for r < STEP_BLOCK.

    Built by doubling, P^(k + r) = P^r P^k (eight batched products for 256 powers); every entry is
    a sum of products of non-negative numbers, so each keeps its relative accuracy (about
    8 n ulps) however small, as the step-by-step vectors do. P^r is stochastic, so each row is
    then divided by its sum: the doubling's rounding is shared by every row built from the same
    square, and a ladder reused for hundreds of blocks would otherwise compound it into a leak of
    mass (about 1e-12 over 1e5 steps); the division moves each entry by a few ulps only. A block of
    256 steps is then one vector-matrix product, for the whole sweep or several
    (``absorption_curve`` builds it once). Cost: STEP_BLOCK x n^3 multiply-adds once,
    STEP_BLOCK x n^2 per block.
    """
    size = chain.birth.size
    stay, up_from, down_from = _transitions(chain)
    step = np.diag(stay) + np.diag(up_from, 1) + np.diag(down_from, -1)
    powers = np.empty((STEP_BLOCK, size, size))
    powers[0] = np.eye(size)
    have, square = 1, step
    while have < STEP_BLOCK:
        take = min(have, STEP_BLOCK - have)
        np.matmul(powers[:take], square, out=powers[have : have + take])
        have += take
        if have < STEP_BLOCK:
            square = square @ square
    powers /= powers.sum(axis=2, keepdims=True)
    return np.ascontiguousarray(powers.transpose(1, 0, 2)).reshape(size, STEP_BLOCK * size)


def direct_units(size: int, steps: list[int]) -> int:
    """Work of sweeps of ``steps`` tridiagonal updates each (walkmath.cost units)."""
    return sum(steps) * (size * STEP_UNITS + PERIOD_OVERHEAD)


def ladder_units(size: int, steps: list[int]) -> int:
    """Work of the same sweeps from one step ladder: built once, then a product per block of 256."""
    build = 20 * CALL_UNITS + STEP_BLOCK * size**3 * FLOP_UNITS
    blocks = sum(-(-count // STEP_BLOCK) for count in steps)
    return build + blocks * (STEP_BLOCK * size**2 * FLOP_UNITS + PERIOD_OVERHEAD)


def ladder_pays(size: int, steps: list[int]) -> bool:
    """Whether the step ladder is the cheaper way for sweeps of ``steps`` steps on ``size`` levels."""
    return size <= LADDER_LEVELS and ladder_units(size, steps) < direct_units(size, steps)


def sweep_units(size: int, steps: list[int]) -> int:
    """Work of sweeps of ``steps`` steps each on ``size`` levels, the cheaper way (the way they run)."""
    return (
        min(direct_units(size, steps), ladder_units(size, steps))
        if size <= LADDER_LEVELS
        else direct_units(size, steps)
    )


def occupation(chain: BirthDeath, start: int, time: float, inside: np.ndarray) -> tuple[float, float, int]:
    """Expected time spent in the levels marked ``inside`` and outside them during [0, ``time``] from
    level ``start``, and the steps taken.

    Uniformization integrated term by term: the integral over [0, t] of p(s) is
    (1 / gamma) sum_n P(N > n) p0 P^n with N ~ Poisson(gamma t) (Reibman and Trivedi, "Transient
    analysis of cumulative measures of Markov model behavior", Stochastic Models 5(4), 1989). Each
    side is a sum of non-negative terms, so a small one keeps its relative accuracy; the two add up
    to ``time`` to rounding. Cost: as ``BirthDeath.transient`` at ``time``.
    """
    rate = chain.uniformization_rate
    initial = _point_law(chain.birth.size, start)
    if rate == 0 or time == 0:
        return (time, 0.0, 0) if inside[start] else (0.0, time, 0)
    window = _poisson_window(rate * time)
    end = window.first + window.weights.size
    # beyond[n] = P(N > n) for n = 0..end-1: 1 below the window, then the window's own tail sums
    beyond = np.ones(end)
    tail = np.cumsum(window.weights[::-1])[::-1]  # tail[i] = P(N >= first + i), non-negative sums
    beyond[window.first :] = np.append(tail[1:], 0.0)
    marks = np.asarray(inside, dtype=float)
    within, without = [], []
    ladder = _ladder(chain) if ladder_pays(chain.birth.size, [end]) else None
    for begin, block in _powers(chain, initial, end, ladder):
        weights = beyond[begin : begin + block.shape[0]]
        within.append(float(weights @ (block @ marks)))
        without.append(float(weights @ (block @ (1.0 - marks))))
    steps = end
    return math.fsum(within) / rate, math.fsum(without) / rate, steps


@functools.lru_cache(maxsize=1024)
def window_steps(mean: float) -> int:
    """Uniformization steps one sweep to Poisson mean ``mean`` (= gamma t) takes: the window's end."""
    window = _poisson_window(mean)
    return window.first + window.weights.size


def passage_steps(rate: float, times: np.ndarray) -> list[int]:
    """Steps of each sweep ``absorption_curve`` makes over ``times``: one per gap between sorted times."""
    gaps = np.diff(np.concatenate(([0.0], np.sort(np.asarray(times, dtype=float)))))
    return [window_steps(rate * float(gap)) for gap in gaps if gap > 0]


def absorption_curve(chain: BirthDeath, start: int, times: np.ndarray) -> PassageCurve:
    """P(top level K reached by t) and P(not reached) for each of ``times``; K must absorb.

    The times are taken in increasing order. Over each gap dt the law of the level given that K is
    not reached yet (the conditional law) is carried forward by uniformization; the mass it sends
    into K is the gap's absorbed share q, the mass it keeps the kept share f = kept / (kept +
    absorbed), both sums of non-negative terms, and f <= 1 exactly in floating point (a sum of
    non-negative floats is at least each term, and rounding is monotone). Then

    * reached side: R(t) = R(t - dt) + N(t - dt) q, non-negative increments from the law at the
      previous time, so R never falls;
    * not-reached side: N(t) = N(t - dt) f, a product of factors <= 1, so N never rises.

    Reported: (R, 1 - R) while R <= 1/2 and N >= 1/2; from the first time either passes 1/2,
    (1 - N, N) for good. The seam is handled explicitly, so both reported sides stay monotone
    across it with no tolerance:

    * N < 1/2 there: the reported 1 - N rounds to at least 1/2, so to at least every R reported
      before (each <= 1/2), and N is below every 1 - R reported before (each >= 1/2);
    * only R > 1/2 there (the two sides disagree by rounding): N restarts as 1 - R, exact by
      Sterbenz's lemma since R lies in (1/2, 1], so the pair reported is exactly (R, 1 - R).

    The bounds [0, 1] hold by construction too (R <= 1/2 while reported, 0 <= N <= 1); no reported
    value is clipped. Each small side keeps its relative accuracy, about (steps + times) x 1e-16,
    down to about 1e-290.
    """
    order = np.argsort(times, kind="stable")
    reached = np.zeros(times.size)
    not_reached = np.ones(times.size)
    if start == chain.top:
        reached[:], not_reached[:] = 1.0, 0.0
        return PassageCurve(times, reached, not_reached, 0.0, 0)
    law = _point_law(chain.birth.size, start)  # given not absorbed; law[K] stays 0
    sweeps = passage_steps(chain.uniformization_rate, times) if chain.uniformization_rate > 0 else []
    ladder = _ladder(chain) if sweeps and ladder_pays(chain.birth.size, sweeps) else None
    reached_side, not_reached_side, on_reached_side = 0.0, 1.0, True
    dropped, steps, previous = 0.0, 0, 0.0
    for index in order:
        gap = float(times[index]) - previous
        previous = float(times[index])
        if gap > 0 and not_reached_side > 0:
            moved, gone, taken = _uniformized(chain, law, np.array([gap]), ladder)
            law, absorbed = moved[0], float(moved[0, -1])
            law[-1] = 0.0
            kept = math.fsum(law.tolist())
            total = kept + absorbed
            reached_side += not_reached_side * (absorbed / total)
            not_reached_side *= kept / total
            if kept > 0:
                law /= kept
            dropped += float(gone[0])
            steps += taken
        if on_reached_side and not_reached_side < 0.5:
            on_reached_side = False
        elif on_reached_side and reached_side > 0.5:  # the seam, reached first by rounding
            not_reached_side, on_reached_side = 1.0 - reached_side, False
        if on_reached_side:
            reached[index], not_reached[index] = reached_side, 1.0 - reached_side
        else:
            reached[index], not_reached[index] = 1.0 - not_reached_side, not_reached_side
    return PassageCurve(times, reached, not_reached, dropped, steps)


def _point_law(size: int, level: int) -> np.ndarray:
    law = np.zeros(size)
    law[level] = 1.0
    return law


def _step(source, target, stay, up_from, down_from, scratch) -> None:
    """target = source P for the tridiagonal P, written in place (no temporaries)."""
    np.multiply(stay, source, out=target)
    np.multiply(up_from, source[:-1], out=scratch[1:])
    target[1:] += scratch[1:]
    np.multiply(down_from, source[1:], out=scratch[:-1])
    target[:-1] += scratch[:-1]


# -- passage times, Skellam ratios, helpers --------------------------------------------------------


def peak_relative_weights(increments: np.ndarray) -> np.ndarray:
    """w_i / w_peak from increments[i - 1] = log w_i - log w_{i-1}.

    The logs are summed outwards from the peak, so every weight that does not underflow has a log
    below about 745 in size, held to 1e-13 absolute; summed from the first level they could reach
    1e6 (a walk a million levels from its start) and keep only 1e-10.
    """
    peak = int(np.argmax(np.concatenate(([0.0], np.cumsum(increments)))))
    falling = -_compensated_cumsum(increments[:peak][::-1])[::-1]
    return np.exp(np.concatenate((falling, [0.0], _compensated_cumsum(increments[peak:]))))


def _compensated_cumsum(terms: np.ndarray) -> np.ndarray:
    """Running sums with each partial sum's rounding error added back (TwoSum, Knuth TAOCP vol. 2 4.2.2)."""
    sums = np.cumsum(terms)
    previous = np.concatenate(([0.0], sums[:-1]))
    virtual = sums - previous
    errors = (previous - (sums - virtual)) + (terms - virtual)
    return sums + np.cumsum(errors)
