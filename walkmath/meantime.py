"""Mean periods to the first stock-out (or exit from the band), with relative accuracy for rare events.

E[T] for T = the first period with a stock-out (or, for an exit, an overflow).
The rule below ``low`` never matters here (the first stock-out is the same
event under backorder, lost and stop), nor the rule above ``high`` for an exit.
Every number below is a sum of non-negative terms; nothing is ever computed as
1 - (something close to 1), so a mean of 1e15 periods keeps about 13 digits.

* Nearest-neighbour laws (steps -1, 0, +1), one law: closed forms.
  - Exit through either end: the gambler's-ruin duration (``ruin.expected_duration``).
  - Stock-out with the top held (spill): first-step analysis gives the mean
    passage time from level k to k - 1 as m_k = (1 + up m_{k+1}) / down, so
    m_k = (1 / (down pi_k)) sum_{j >= k} pi_j with the product-form weights
    pi_j = (up / down)^j, and E_s[T] = m_0 + ... + m_s (Karlin and Taylor, A
    First Course in Stochastic Processes, 2nd ed., ch. 4, birth and death
    processes; Feller vol. 1, ch. XIV, sec. 3). The geometric sums are added by
    doubling in 40-digit decimals, each step a sum of positive terms (O(log
    levels) work).
  - No capacity: the same sum over an unbounded band, (s + 1) / (down - up).
* Any other law, or a cycle of laws: subtraction-free state reduction
  (Grassmann, Taksar and Heyman, Operations Research 33 (1985) 1107-1116) on the
  sub-stochastic band of ``operator.substochastic_band``: levels are removed
  from the top, each pivot's chance of leaving is a row sum of positive entries
  plus its chance of ending (never 1 - P(stay)), the fill-in stays inside the
  band, and the expected time and the chance of each way of ending ride along
  as positive sums. A cycle of p laws is first reduced to whole cycles:
  C = Q_1 ... Q_p, g = sum_{r < p} Q_1 ... Q_r 1 (expected periods within a
  cycle), then (I - C) x = g by the same elimination. Work about
  levels x bandwidth^2, priced by ``walkmath.cost.Work`` before any of it.
* No capacity, general laws, drift < 0: the band is cut at a top M where the
  walk is held. Coupling (the held walk never lies above the free one) makes
  the result a lower bound; the shortfall is at most
  P(reach M + 1 before the stock-out) x max E_x[T] over x <= M + largest up-step,
  with P <= max_phase(partial products) exp(-theta (M + 1 - start)) for any
  0 < theta <= theta*, the positive root of the cycle's generating function
  (Lundberg's supermartingale e^(theta X_n)), and E_x[T] bounded by Wald's
  identity (Wald, Ann. Math. Statist. 15 (1944) 283-296). M is chosen so the
  bound is below 1e-12 of the mean; when the cost cap stops the band short the
  result is a proven lower bound flagged ``at_least``.
* drift = 0 without capacity: the stock-out is certain but the mean is infinite
  (null recurrent walk): inf. drift > 0 without capacity, or an overflow that
  ends the path before a stock-out can: not certain: inf.
"""

from __future__ import annotations

import decimal
import math
import sys
from decimal import Decimal
from typing import TYPE_CHECKING

import numpy as np

from walkmath import ruin
from walkmath.cost import WORK_CAP, ComputeTooLarge, Work
from walkmath.elimination import BandSolution, band_work, fits_in_memory, solve_band

if TYPE_CHECKING:
    from walkmath.banded import BandedWalk

# Relative size of the cut-off tail accepted as exact for a walk without capacity.
TRUNCATION_TOLERANCE = 1e-12
_KNOB = "narrow the band (capacity) or coarsen the units"
_FREE_KNOB = "start nearer to low, give the walk a capacity, or coarsen the units"


class MeanTime(float):
    """A mean number of periods; ``at_least`` marks a proven lower bound ("more than N periods")."""

    at_least: bool

    def __new__(cls, value: float, at_least: bool = False):
        if math.isnan(value) or value < 0:
            raise ValueError(f"a mean time must be a number at least 0; got {value!r}")
        if math.isinf(value) and at_least:
            raise ValueError("an infinite mean time cannot be a lower bound")
        self = super().__new__(cls, value)
        self.at_least = bool(at_least)
        return self

    def __repr__(self) -> str:
        return f"MeanTime({float(self)!r}{', at_least=True' if self.at_least else ''})"

    def __reduce__(self):
        return (MeanTime, (float(self), self.at_least))


NOT_CERTAIN = MeanTime(math.inf)


def _finite_or_more(value: float) -> MeanTime:
    """A certain event whose mean overflowed a float is reported as more than the largest float."""
    if math.isfinite(value):
        return MeanTime(value)
    return MeanTime(sys.float_info.max, at_least=True)


def mean_periods_to_exit(walk: BandedWalk, *, overflow_ends: bool = True) -> MeanTime:
    """E[first period with a stock-out, or an overflow if ``overflow_ends``]; inf if not certain.

    Closed forms for one nearest-neighbour law, subtraction-free elimination
    otherwise (see the module notes); relative accuracy about 1e-12, or a
    proven lower bound flagged ``at_least`` when the cost cap stops a walk
    without capacity short.
    """
    if walk.high is None:
        return _without_capacity(walk)  # no overflow: the exit is the stock-out
    start, size = walk.start - walk.low, walk.high - walk.low + 1
    if _closed_form(walk):
        return _nearest_in_band(walk.laws[0], start, size, overflow_ends or walk.above == "stop", overflow_ends)
    if overflow_ends:
        return _answer(solve_band(walk.laws, size, "stop"), start, overflow_must_not_end=False)
    if walk.above == "spill":
        return _answer(solve_band(walk.laws, size, "spill"), start, overflow_must_not_end=False)
    if len(walk.laws) == 1 and walk.max_up > 0:
        return NOT_CERTAIN  # from any level, a run of up-steps overflows before any stock-out
    return _answer(solve_band(walk.laws, size, "stop", split_ends=True), start, overflow_must_not_end=True)


def work(walk: BandedWalk) -> Work:
    """Priced work of ``mean_periods_to_exit`` (the same for a stock-out): closed form or elimination."""
    if _closed_form(walk):
        return Work("mean_time", walk.start - walk.low + 1, 1, 0, knob=_KNOB)
    if walk.high is not None:
        return band_work(walk.laws, walk.high - walk.low + 1)
    drift = _drift(walk.laws)
    if drift >= 0:
        return Work("mean_time", 0, 1, 0, knob=_KNOB)  # answered without any solve
    try:
        size = _truncation(walk, drift)[0]
    except ComputeTooLarge:  # even the levels up to the start are over the cap: price them, the caller refuses
        size = walk.start - walk.low + 1
    return band_work(walk.laws, size, knob=_FREE_KNOB)


def _closed_form(walk: BandedWalk) -> bool:
    return len(walk.laws) == 1 and walk.laws[0].is_nearest


def _answer(solution: BandSolution, index: int, overflow_must_not_end: bool) -> MeanTime:
    if solution.stuck[index]:
        return NOT_CERTAIN  # some path never ends
    if overflow_must_not_end and solution.ended[index, 1] > 0:
        return NOT_CERTAIN  # an overflow can end the path before a stock-out
    return _finite_or_more(float(solution.times[index]))


# -- one nearest-neighbour law -------------------------------------------------


def _nearest_in_band(law, start: int, size: int, top_ends: bool, overflow_ends: bool) -> MeanTime:
    up, down = law.prob(1), law.prob(-1)
    if overflow_ends:  # exit through either end: gambler's ruin between low - 1 and high + 1
        if up + down == 0.0:
            return NOT_CERTAIN
        return _finite_or_more(ruin.expected_duration(up, down, start + 1, size + 1))
    if down == 0.0 or (top_ends and up > 0.0):
        return NOT_CERTAIN  # no down-step, or an overflow can end the path first
    return _finite_or_more(held_top_stockout(up, down, size, start))


def held_top_stockout(up: float, down: float, levels: int, start: int) -> float:
    """E[periods to fall below level 0] from ``start`` on levels 0..levels-1, up-steps held at the top.

    E = sum_{k <= s} m_k, m_k = (1 / down) sum_{i < levels - k} r^i, r = up / down, regrouped as
    [(s + 1) A(levels - s) + r^(levels - s) B(s)] / down with A(N) = sum_{j < N} r^j and
    B(N) = sum_{j < N} (N - j) r^j, each added up by doubling (positive terms only). The work
    runs in 40-digit decimals: rounding r to a float would cost N x 1e-16 relative on a tall
    near-fair band, and the decimal exponent range holds r^N for any band a cost cap admits.
    Returns inf when the mean exceeds the largest float.
    """
    with decimal.localcontext() as context:
        context.prec = 40
        context.Emax, context.Emin = decimal.MAX_EMAX, decimal.MIN_EMIN
        ratio = Decimal(up) / Decimal(down)
        try:
            tail, head = _geometric(ratio, levels - start), _geometric(ratio, start)
            value = ((start + 1) * tail.plain + tail.power * head.falling) / Decimal(down)
        except decimal.Overflow:
            return math.inf
    return float(value)  # inf beyond the largest float


class _Sums:
    """Sums over j < count of ratio^j: plain (weight 1) and falling (weight count - j); power = ratio^count."""

    __slots__ = ("count", "plain", "falling", "power")

    def __init__(self, count, plain, falling, power):
        self.count, self.plain, self.falling, self.power = count, plain, falling, power

    def then(self, other: _Sums) -> _Sums:
        """The sums of this run of terms followed by ``other`` (every update adds positive terms)."""
        return _Sums(
            self.count + other.count,
            self.plain + self.power * other.plain,
            other.count * self.plain + self.falling + self.power * other.falling,
            self.power * other.power,
        )


def _geometric(ratio: Decimal, count: int) -> _Sums:
    """``_Sums`` by binary doubling (about 2 log2(count) positive updates)."""
    zero, one = Decimal(0), Decimal(1)
    total = _Sums(0, zero, zero, one)
    block = _Sums(1, one, one, ratio)
    while count:
        if count & 1:
            total = total.then(block)
        count >>= 1
        if count:
            block = block.then(block)
    return total


# -- no capacity -----------------------------------------------------------------


def _drift(laws) -> float:
    return math.fsum(math.fsum(law.steps * law.probs) for law in laws) / len(laws)


def _without_capacity(walk: BandedWalk) -> MeanTime:
    drift = _drift(walk.laws)
    if drift >= 0:
        return NOT_CERTAIN  # drift 0: certain but null recurrent (infinite mean); drift > 0: not certain
    start = walk.start - walk.low
    if _closed_form(walk):
        law = walk.laws[0]
        # the difference of the two floats is exact when they are within a factor 2 (Sterbenz)
        return _finite_or_more((start + 1) / (law.prob(-1) - law.prob(1)))
    size, tail_bound = _truncation(walk, drift)
    solution = solve_band(walk.laws, size, "spill")
    answer = _answer(solution, start, overflow_must_not_end=False)
    if math.isinf(answer) or answer.at_least:
        return answer
    shortfall = tail_bound(size)
    return MeanTime(float(answer), at_least=not shortfall <= TRUNCATION_TOLERANCE * float(answer))


def _truncation(walk: BandedWalk, drift: float):
    """Band size (levels low..M) for a walk without capacity, and the bound on E_free - E_held for a size.

    The size is the one that meets ``TRUNCATION_TOLERANCE`` (half of it against a lower bound of the
    mean known in advance), or the largest the cost cap allows.
    """
    laws, start = walk.laws, walk.start - walk.low
    minimum = start + 1
    if walk.max_up == 0:
        return minimum, lambda size: 0.0  # the walk never rises above its start
    rises = np.cumsum([law.highest for law in laws])
    if rises[-1] <= 0:  # a whole cycle cannot rise: the walk never climbs more than its best partial cycle
        return minimum + int(max(rises.max(), 0)), lambda size: 0.0
    theta, partial = _lundberg(laws)
    if not theta > 0:  # no usable exponent (a drift lost in rounding): the tallest affordable band, flagged
        return _largest_affordable(laws, minimum, 2 * minimum + 10**12), lambda size: math.inf
    means = np.cumsum([law.mean - drift for law in laws])
    spread = float(max(means.max(), 0.0) - min(means.min(), 0.0))  # Wald's identity within a cycle
    rate = -drift
    offset = start - 1 + walk.max_up + walk.max_down + spread

    def tail_bound(size: int) -> float:
        distance = size - start  # M + 1 - start
        return partial * math.exp(-theta * distance) * (distance + offset) / rate

    known = max((start + 1) / walk.max_down, (start + 1 - spread) / rate, 1.0)
    goal = math.log(0.5 * TRUNCATION_TOLERANCE * known * rate / partial)
    distance = 1.0
    for _ in range(200):  # theta d - log(d + offset) >= -goal, by fixed-point iteration on d
        step = max((math.log(distance + offset) - goal) / theta, 1.0)
        if step <= distance * (1 + 1e-9):
            break
        distance = step
    needed = minimum + int(math.ceil(distance))
    while tail_bound(needed) > 0.5 * TRUNCATION_TOLERANCE * known:
        needed += max(1, needed // 100)
    return min(needed, _largest_affordable(laws, minimum, needed)), tail_bound


def _largest_affordable(laws, smallest: int, largest: int) -> int:
    """Largest band size in smallest..largest within the cost cap (``smallest`` is checked, and may raise)."""
    band_work(laws, smallest, knob=_FREE_KNOB).check()

    def affordable(size: int) -> bool:
        return band_work(laws, size).units <= WORK_CAP and fits_in_memory(laws, size)

    if affordable(largest):
        return largest
    while largest - smallest > 1:
        middle = (smallest + largest) // 2
        smallest, largest = (middle, largest) if affordable(middle) else (smallest, middle)
    return smallest


def _log_generating(law, theta: float) -> float:
    """log G(e^theta) = log sum_k P(step = k) e^(k theta), accurate near theta = 0 (expm1 and fsum)."""
    steps, probs = law.steps, law.probs
    exponents = steps * theta
    if np.abs(exponents).max() < 0.5:
        return math.log1p(math.fsum(probs * np.expm1(exponents)))
    keep = probs > 0
    logs = np.log(probs[keep]) + exponents[keep]
    peak = float(logs.max())
    return peak + math.log(math.fsum(np.exp(logs - peak)))


def _lundberg(laws) -> tuple[float, float]:
    """theta in (0, theta*] with prod_r G_r(e^theta) <= 1, and the largest partial product over the phases."""

    def partial_logs(theta: float) -> np.ndarray:
        return np.cumsum([_log_generating(law, theta) for law in laws])

    mean = math.fsum(law.mean for law in laws)
    spread = max(math.fsum(law.variance for law in laws), 1e-300)
    guess = max(2.0 * -mean / spread, 1e-300)  # the diffusion value of theta*
    high = guess
    for _ in range(2100):
        if partial_logs(high)[-1] > 0:
            break
        high *= 2.0
    low = min(guess, high / 2.0)
    for _ in range(2100):
        if partial_logs(low)[-1] < 0:
            break
        low /= 2.0
    for _ in range(200):  # bisection keeps a point with a non-positive cycle value
        middle = 0.5 * (low + high)
        if middle in (low, high):
            break
        if partial_logs(middle)[-1] <= 0:
            low = middle
        else:
            high = middle
    if partial_logs(low)[-1] > 0:
        return 0.0, math.inf  # the cycle's value is rounding noise this close to 0: no exponent to use
    largest = float(max(partial_logs(low).max(), 0.0))
    return low, math.exp(largest)
