"""Continuous-time level models: birth–death chains on levels 0..K.

* Steady state by the product form pi_k ∝ prod_{i<k} b_i / d_{i+1} (Kleinrock, Queueing
  Systems vol. 1, 1975, §3.1), summed in logs so no ratio of rates overflows.
* Transient law by uniformization (Jensen 1953): p(t) = sum_n Poisson(n; gamma t) p0 P^n with
  P = I + Q / gamma, applied as a tridiagonal vector update. Every term is non-negative, so each
  entry keeps its relative accuracy; the Poisson weights start at the mode and recur outwards
  (Fox and Glynn, "Computing Poisson probabilities", CACM 31(4), 1988), so nothing underflows.
* Mean first-passage times by the birth–death recursion (first-step analysis).
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
        probs, dropped, steps = _uniformized(self, start, np.array([t]))
        return TransientLaw(probs[0], float(dropped[0]), steps)

    def transient_curve(self, start: int, times: Sequence[float]) -> np.ndarray:
        """Rows of ``transient(start, t)`` for each t in ``times``, in one uniformization sweep.

        Cost: one sweep to the largest time; memory len(times) x (K + 1).
        """
        start = checks.whole("start", start, minimum=0, maximum=self.top)
        times = times_within("times", times, self.longest_time)
        return _uniformized(self, start, times)[0]

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


def _uniformized(chain: BirthDeath, start: int, times: np.ndarray) -> tuple[np.ndarray, np.ndarray, int]:
    """Transient laws at each of ``times`` (rows), dropped Poisson mass per time, steps taken.

    The vectors v_n = p0 P^n are made STEP_BLOCK at a time by a tridiagonal update and weighted
    into every time's result by one matrix product of non-negative terms.
    """
    size = chain.birth.size
    rate = chain.uniformization_rate
    result = np.zeros((times.size, size))
    if rate == 0:
        result[:, start] = 1.0
        return result, np.zeros(times.size), 0
    windows = [_poisson_window(rate * t) for t in times]
    steps = max(window.first + window.weights.size for window in windows)
    # P = I + Q / gamma; the stay probability is exactly non-negative because gamma is the maximum
    stay = (rate - (chain.birth + chain.death)) / rate
    up_from = chain.birth[:-1] / rate  # level k -> k + 1, for k = 0..K-1
    down_from = chain.death[1:] / rate  # level k -> k - 1, for k = 1..K
    block = np.empty((max(1, min(STEP_BLOCK, steps, BLOCK_ENTRIES // size)), size))
    scratch = np.empty(size)
    current = np.zeros(size)
    current[start] = 1.0
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
