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
from walkmath.uniformization import (
    UNIFORMIZATION_CAP,
    PassageCurve,
    _point_law,
    _uniformized,
    absorption_curve,
    peak_relative_weights,
)

# Largest number of levels of a chain, and largest rate (so a level's total outflow stays finite).
LEVEL_CAP = 1_000_000
RATE_CAP = 1e300


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
        law[low : high + 1] = weights / math.fsum(weights.tolist())  # tolist: fsum reads floats 10x faster
        return law

    def steady_state_split(self, boundary: int) -> tuple[float, float]:
        """Long-run (P(level < boundary), P(level >= boundary)), switching sides at 1/2.

        The side whose sum of product-form terms is the smaller is reported as that sum (relative
        accuracy about 1e-13 at any size); the other side is 1 minus it, so the two add up to 1.
        """
        boundary = checks.whole("boundary", boundary, minimum=0, maximum=self.top + 1)
        law = self.steady_state()
        below, above = math.fsum(law[:boundary].tolist()), math.fsum(law[boundary:].tolist())
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
    try:
        return math.fsum(passages)
    except OverflowError:  # finite terms whose sum is past the float range
        return math.inf


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
