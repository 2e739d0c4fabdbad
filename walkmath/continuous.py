"""Continuous-time level models: birth–death chains on levels 0..K.

* Steady state by the product form pi_k ∝ prod_{i<k} b_i / d_{i+1} (Kleinrock, Queueing
  Systems vol. 1, 1975, §3.1), summed in logs so no ratio of rates overflows.
* Transient law by uniformization (Jensen 1953): p(t) = sum_n Poisson(n; gamma t) p0 P^n with
  P = I + Q / gamma, applied as a tridiagonal vector update. Every term is non-negative, so each
  entry keeps its relative accuracy; the Poisson weights start at the mode and recur outwards
  (Fox and Glynn, "Computing Poisson probabilities", CACM 31(4), 1988), so nothing underflows.
* Mean first-passage times by the birth–death recursion (first-step analysis).
* A probability and its complement (reached / not reached by t; long-run below / at or above a
  level) each come from their own side as a sum or product of non-negative terms while that side
  is at most 1/2; the other side is its complement, which loses nothing once it is at least 1/2.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from walkmath import checks

# Poisson weights below this fraction of the weight at the mode are dropped. The dropped mass
# (reported, always far below the design's 1e-15) can add at most that much to any entry, so a
# transient probability p keeps relative accuracy 1e-8 down to p of about 1e-290.
WEIGHT_FLOOR = 1e-300
# Largest Poisson mean gamma * t accepted. The work is about gamma t + 40 sqrt(gamma t) vector
# updates of the K + 1 levels: around a minute at the cap for a small chain.
UNIFORMIZATION_CAP = 1e7
# Largest number of levels of a chain, and largest rate (so a level's total outflow stays finite).
LEVEL_CAP = 1_000_000
RATE_CAP = 1e300
# Uniformization steps held at once before they are weighted by a matrix product, and the most
# entries such a block may hold (32 MB).
STEP_BLOCK = 256
BLOCK_ENTRIES = 4_000_000


@dataclass(frozen=True, eq=False)
class TransientLaw:
    """P(level at time t = k) = probs[k] over levels 0..K, with the uniformization truncation."""

    probs: np.ndarray
    dropped_mass: float  # upper bound on the Poisson mass left out; the probs are renormalised
    steps: int  # uniformization steps taken (the work done)


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


@dataclass(frozen=True, eq=False)
class BirthDeath:
    """Continuous-time chain on levels 0..K: birth[k] is the rate k -> k+1, death[k] the rate k -> k-1.

    Both lists have one rate per level (K + 1 entries). ``birth[K]`` and ``death[0]`` are ignored
    (stored as 0): there is no level above K or below 0 to move to, so one constant list such as
    ``[rate] * (K + 1)`` serves for either.
    """

    birth: np.ndarray
    death: np.ndarray

    def __post_init__(self):
        birth = _rates("birth", self.birth)
        death = _rates("death", self.death)
        if birth.size != death.size:
            raise ValueError(
                f"birth and death must have the same length (one rate per level 0..K); "
                f"got {birth.size} and {death.size}"
            )
        birth[-1] = 0.0
        death[0] = 0.0
        for name, rates in (("birth", birth), ("death", death)):
            rates.setflags(write=False)
            object.__setattr__(self, name, rates)

    @property
    def top(self) -> int:
        """K, the highest level."""
        return self.birth.size - 1

    @property
    def levels(self) -> np.ndarray:
        return np.arange(self.birth.size)

    @property
    def uniformization_rate(self) -> float:
        """gamma = the largest total rate out of any level."""
        return float((self.birth + self.death).max())

    @property
    def longest_time(self) -> float:
        """Largest t that ``transient`` accepts (gamma t at most ``UNIFORMIZATION_CAP``)."""
        rate = self.uniformization_rate
        return UNIFORMIZATION_CAP / rate if rate > 0 else math.inf

    def steady_state(self) -> np.ndarray:
        """Long-run law over levels 0..K by the product form, in logs (no overflow at any rate ratio).

        A chain with zero rates is supported on its one closed class (levels it cannot leave), zero
        elsewhere; with several closed classes the long-run law depends on the start: ValueError.
        """
        low, high = self._closed_class()
        log_ratios = np.log(self.birth[low:high]) - np.log(self.death[low + 1 : high + 1])
        weights = peak_relative_weights(log_ratios)
        law = np.zeros(self.birth.size)
        law[low : high + 1] = weights / math.fsum(weights)
        return law

    def steady_state_split(self, boundary: int) -> tuple[float, float]:
        """Long-run (P(level < boundary), P(level >= boundary)), switching sides at 1/2.

        The side whose sum of product-form terms is the smaller is reported as that sum (relative
        accuracy about 1e-13 at any size); the other side is 1 minus it, so the two add up to 1.
        """
        boundary = checks.whole("boundary", boundary, minimum=0, maximum=self.top + 1)
        law = self.steady_state()
        below, above = math.fsum(law[:boundary]), math.fsum(law[boundary:])
        if below <= above:
            return below, 1.0 - below
        return 1.0 - above, above

    def transient(self, start: int, t: float) -> np.ndarray:
        """P(level at time t = k | level at time 0 = start) over levels 0..K, by uniformization.

        Every entry is a sum of non-negative terms (relative accuracy about 1e-13 per 1e3 steps).
        Cost: about gamma t + 40 sqrt(gamma t) + 150 tridiagonal updates of the K + 1 levels.
        """
        return self.transient_with_bound(start, t).probs

    def transient_with_bound(self, start: int, t: float) -> TransientLaw:
        """``transient`` with the bound on the Poisson mass dropped (at most about 1e-300)."""
        start = checks.whole("start", start, minimum=0, maximum=self.top)
        t = time_within("t", t, self.longest_time)
        probs, dropped, steps = _uniformized(self, _point_law(self.birth.size, start), np.array([t]))
        return TransientLaw(probs[0], float(dropped[0]), steps)

    def transient_curve(self, start: int, times: Sequence[float]) -> np.ndarray:
        """Rows of ``transient(start, t)`` for each t in ``times``, in one uniformization sweep.

        Cost: one sweep to the largest time; memory len(times) x (K + 1).
        """
        start = checks.whole("start", start, minimum=0, maximum=self.top)
        times = times_within("times", times, self.longest_time)
        return _uniformized(self, _point_law(self.birth.size, start), times)[0]

    def passage_curve(self, start: int, target: int, times: Sequence[float]) -> PassageCurve:
        """P(``target`` visited by t) and P(not yet) for each t in ``times``, from level ``start``.

        The chain stopped at the target (levels between start and target, the target absorbing),
        carried forward by uniformization from one time to the next: see ``absorption_curve`` for
        how both sides stay monotone and accurate. Cost: about gamma t_max plus 100 to 250 + 9
        sqrt(gamma dt) tridiagonal updates per time (dt the gap to the previous time).
        """
        start = checks.whole("start", start, minimum=0, maximum=self.top)
        target = checks.whole("target", target, minimum=0, maximum=self.top)
        if target >= start:
            birth, death, level = self.birth[: target + 1], self.death[: target + 1].copy(), start
        else:  # level k of the mirrored chain is level K - k here
            birth, death, level = self.death[target:][::-1], self.birth[target:][::-1].copy(), self.top - start
        death[-1] = 0.0  # the target absorbs
        stopped = BirthDeath(birth, death)
        return absorption_curve(stopped, level, times_within("times", times, stopped.longest_time))

    def mean_first_passage(self, start: int, target: int) -> float:
        """Expected time from ``start`` to the first visit of ``target``.

        Sum of m_k = E[time from k to k + 1] = 1/b_k + (d_k / b_k) m_{k-1} (first-step analysis),
        a sum of non-negative terms; downward passages use the mirrored chain. inf when the target
        may never be reached (a zero rate on the way) or the time exceeds the float range.
        """
        start = checks.whole("start", start, minimum=0, maximum=self.top)
        target = checks.whole("target", target, minimum=0, maximum=self.top)
        if target > start:
            return _upward_passage(self.birth, self.death, start, target)
        if target < start:
            top = self.top  # level k of the mirrored chain is level K - k here
            return _upward_passage(self.death[::-1], self.birth[::-1], top - start, top - target)
        return 0.0

    def _closed_class(self) -> tuple[int, int]:
        """Lowest and highest level of the single closed communicating class."""
        broken = (self.birth[:-1] == 0) | (self.death[1:] == 0)  # boundary k | k+1 cannot be crossed both ways
        cuts = np.flatnonzero(broken)
        bottoms = np.concatenate(([0], cuts + 1))
        tops = np.concatenate((cuts, [self.top]))
        # a class is closed when nothing leaves it: no birth out of its top, no death out of its bottom
        closed = [
            (int(low), int(high))
            for low, high in zip(bottoms, tops, strict=True)
            if self.birth[high] == 0 and self.death[low] == 0
        ]
        if len(closed) > 1:
            names = ", ".join(f"{low}..{high}" for low, high in closed)
            raise ValueError(
                f"birth and death rates split the chain into {len(closed)} closed classes (levels {names}); "
                "the long-run law depends on the start level. Make birth[k] > 0 for k < K and "
                "death[k] > 0 for k > 0, or use transient()"
            )
        return closed[0]

    def __repr__(self) -> str:
        return f"BirthDeath(levels 0..{self.top}, uniformization rate {self.uniformization_rate:.6g})"


# -- uniformization --------------------------------------------------------------------------------


@dataclass(frozen=True)
class _PoissonWindow:
    first: int  # weights[i] = P(N = first + i), normalised over the window
    weights: np.ndarray
    dropped: float  # upper bound on the Poisson mass outside the window


def _poisson_window(mean: float) -> _PoissonWindow:
    """Poisson(mean) weights from the mode outwards until they fall below ``WEIGHT_FLOOR`` of the mode's.

    Ratios w_{k+1}/w_k = mean/(k+1) and w_{k-1}/w_k = k/mean keep shrinking beyond either cut, so
    each dropped tail is at most a geometric series on its first term (Fox and Glynn 1988).
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
    total = math.fsum(weights)
    return _PoissonWindow(mode - lower.size, weights / total, (lower_tail + upper_tail) / total)


def _uniformized(chain: BirthDeath, initial: np.ndarray, times: np.ndarray) -> tuple[np.ndarray, np.ndarray, int]:
    """Laws at each of ``times`` (rows) from the law ``initial`` at time 0, dropped Poisson mass per
    time, steps taken.

    The vectors v_n = p0 P^n are made STEP_BLOCK at a time by a tridiagonal update and weighted
    into every time's result by one matrix product of non-negative terms.
    """
    size = chain.birth.size
    rate = chain.uniformization_rate
    result = np.zeros((times.size, size))
    if rate == 0:
        result[:] = initial
        return result, np.zeros(times.size), 0
    windows = [_poisson_window(rate * t) for t in times]
    steps = max(window.first + window.weights.size for window in windows)
    # P = I + Q / gamma; the stay probability is exactly non-negative because gamma is the maximum
    stay = (rate - (chain.birth + chain.death)) / rate
    up_from = chain.birth[:-1] / rate  # level k -> k + 1, for k = 0..K-1
    down_from = chain.death[1:] / rate  # level k -> k - 1, for k = 1..K
    block = np.empty((max(1, min(STEP_BLOCK, steps, BLOCK_ENTRIES // size)), size))
    scratch = np.empty(size)
    current = np.array(initial, dtype=float)
    for begin in range(0, steps, block.shape[0]):
        rows = min(block.shape[0], steps - begin)
        block[0] = current
        for row in range(1, rows):
            _step(block[row - 1], block[row], stay, up_from, down_from, scratch)
        weights = np.zeros((times.size, rows))
        for i, window in enumerate(windows):
            low = max(begin, window.first)
            high = min(begin + rows, window.first + window.weights.size)
            if low < high:
                weights[i, low - begin : high - begin] = window.weights[low - window.first : high - window.first]
        if weights.any():
            result += weights @ block[:rows]
        _step(block[rows - 1], current, stay, up_from, down_from, scratch)
    np.minimum(result, 1.0, out=result)  # a certain level may sum to 1 + 1 ulp
    return result, np.array([window.dropped for window in windows]), steps


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
    reached_side, not_reached_side, on_reached_side = 0.0, 1.0, True
    dropped, steps, previous = 0.0, 0, 0.0
    for index in order:
        gap = float(times[index]) - previous
        previous = float(times[index])
        if gap > 0 and not_reached_side > 0:
            moved, gone, taken = _uniformized(chain, law, np.array([gap]))
            law, absorbed = moved[0], float(moved[0, -1])
            law[-1] = 0.0
            kept = math.fsum(law)
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


def _upward_passage(birth: np.ndarray, death: np.ndarray, start: int, target: int) -> float:
    """E[time from start to target > start] = sum over start <= k < target of r_k / b_k.

    r_k = b_k m_k = 1 + r_{k-1} d_k / b_{k-1}: products and sums of non-negative terms only.
    """
    walls = np.flatnonzero(death[1 : start + 1] == 0)  # the chain never falls below such a level
    floor = int(walls[-1]) + 1 if walls.size else 0
    if np.any(birth[floor:target] == 0):
        return math.inf
    births, deaths = birth.tolist(), death.tolist()  # Python floats: an overflow gives inf quietly
    ratio, passages = 0.0, []
    for level in range(floor, target):
        ratio = 1.0 + (ratio * deaths[level] / births[level - 1] if level > floor and deaths[level] > 0 else 0.0)
        if level >= start:
            passages.append(ratio / births[level])
    return math.fsum(passages)


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


def _rates(name: str, values) -> np.ndarray:
    """Non-negative finite rates, one per level (a copy)."""
    try:
        rates = np.array(values, dtype=float)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a list of rates, each a finite number from 0 to {RATE_CAP:g}") from None
    if rates.ndim != 1 or not 1 <= rates.size <= LEVEL_CAP:
        raise ValueError(f"{name} must be a list of 1 to {LEVEL_CAP} rates (one per level 0..K)")
    bad = np.flatnonzero(~np.isfinite(rates) | (rates < 0) | (rates > RATE_CAP))
    if bad.size:
        index = int(bad[0])
        raise ValueError(f"{name}[{index}] must be a finite number from 0 to {RATE_CAP:g}; got {rates[index]!r}")
    return rates


def time_within(name: str, value, longest: float) -> float:
    return checks.real(name, value, minimum=0.0, maximum=None if math.isinf(longest) else longest)


def times_within(name: str, values, longest: float) -> np.ndarray:
    try:
        times = np.array(values, dtype=float)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a list of times, each a finite number at least 0") from None
    if times.ndim != 1 or times.size == 0:
        raise ValueError(f"{name} must be a non-empty list of times")
    bad = np.flatnonzero(~np.isfinite(times) | (times < 0) | (times > longest))
    if bad.size:
        index = int(bad[0])
        raise ValueError(f"{name}[{index}] must be a finite number from 0 to {longest:g}; got {times[index]!r}")
    return times
