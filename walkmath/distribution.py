"""Level law of a free walk (no band) after a number of periods.

Methods, by the shape of the step law (all by the generating function G(z)^n):

* two-point laws (nearest-neighbour with one of up/down/stay absent): the
  binomial closed form C(n, k) p^k (1-p)^(n-k) (Feller, vol. 1, ch. III),
  evaluated without factorials, so n = 10**6 neither overflows nor loses digits;
* other laws, small supports: G^n by repeated squaring with direct
  convolution, a sum of non-negative terms, so every entry keeps its relative
  accuracy down to the underflow limit;
* other laws, large supports: exponentially tilted FFT windows. A window at
  tilt theta computes (p_k theta^k / G(theta))^{*n} by FFT, keeps only the
  entries near the tilted mean, where the FFT's absolute error (about 1e-16 of
  the largest term) is far below the entry, and untilts in logs.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import optimize, stats

from walkmath import checks
from walkmath.cost import ComputeTooLarge, Work
from walkmath.steplaw import StepLaw, as_cycle

# Largest support (in levels) built by direct convolution before switching to
# tilted FFT windows: about 0.2 s for the last squaring on one core.
DIRECT_LIMIT = 20_001
# In a tilted window only entries within this many standard deviations of the
# tilted mean are read; there every genuine entry exceeds ``WINDOW_FLOOR`` of
# the window's largest, so the FFT error stays below 1e-10 relative.
WINDOW_SPREAD = 3.0
WINDOW_FLOOR = 1e-4

# Largest number of levels one free-walk level law may span: 80 MB of floats, enough for a
# two-point step law over the longest horizon.
SUPPORT_CAP = checks.HORIZON_CAP + 1
# Work units (``walkmath.cost``: about 5e9 a second on one core) of the pieces priced below,
# measured on this machine kind. One scipy special-function evaluation (a binomial pmf term,
# about 300 ns); one tilted window's fixed cost (root finding for its tilt, about 0.5 ms); its
# cost per jump of the law (compensated sums of the tilted law, about 4 microseconds); and one FFT
# power (forward, power, inverse) per n log2 n of its length. The evaluation price (300 ns) includes
# the array work around each term; it measured 190-360 ns on a shared two-core machine.
EVALUATION_UNITS = 1_500
WINDOW_UNITS = 2_500_000
WINDOW_JUMP_UNITS = 20_000
FFT_UNITS = 15
# Points of the tilt grid on which the number and size of tilted windows are estimated, fewer for
# wide laws so the estimate costs at most about ``PRICE_BUDGET`` element operations (a wide law is a
# smooth count law, whose tilted variance needs fewer points than a narrow law with gaps).
PRICE_GRID = 257
PRICE_BUDGET = 20_000_000


@dataclass(frozen=True, eq=False)
class LevelDistribution:
    """P(level = levels[i]) = probs[i] on consecutive integer levels."""

    levels: np.ndarray
    probs: np.ndarray

    def prob(self, level: int) -> float:
        index = checks.whole("level", level) - int(self.levels[0])
        return float(self.probs[index]) if 0 <= index < self.probs.size else 0.0

    @property
    def mean(self) -> float:
        # fsum of a list: the same correctly rounded sum as of the array, without numpy's per-item scalars
        return math.fsum((self.levels * self.probs).tolist())

    def cdf(self, level: int) -> float:
        """P(level <= ``level``) as a sum of non-negative terms."""
        index = checks.whole("level", level) - int(self.levels[0])
        return math.fsum(self.probs[: max(index + 1, 0)].tolist()) if index >= 0 else 0.0

    def sf(self, level: int) -> float:
        """P(level > ``level``) as a sum of non-negative terms (never 1 - cdf)."""
        index = checks.whole("level", level) - int(self.levels[0])
        return math.fsum(self.probs[max(index + 1, 0) :].tolist())

    def tails(self) -> tuple[np.ndarray, np.ndarray]:
        """P(level <= levels[i]) and P(level > levels[i]) for every level, each a cumulative sum of
        non-negative terms from its own end (never 1 - the other)."""
        below = np.minimum(np.cumsum(self.probs), 1.0)
        at_least = np.cumsum(self.probs[::-1])[::-1]
        return below, np.minimum(np.append(at_least[1:], 0.0), 1.0)


def level_distribution(law, steps: int, start: int = 0) -> LevelDistribution:
    """Law of ``start + S_steps`` for a free walk; ``law`` may be a cyclic list of StepLaws.

    Exact up to rounding: closed binomial form or non-negative convolutions, and
    tilted FFT windows for supports above ``DIRECT_LIMIT`` levels. ``steps`` 0 to
    ``checks.HORIZON_CAP``, ``start`` within +-``checks.LEVEL_LIMIT``; the work is
    priced first (``work``) and refused over ``walkmath.cost.WORK_CAP``, the
    output over ``SUPPORT_CAP`` levels.
    """
    laws = as_cycle(law)
    steps = checks.horizon(steps, "steps")
    start = checks.level("start", start)
    priced, cycle = _plan(laws, steps, "level_distribution")
    priced.check()
    full_cycles, rest = divmod(steps, len(laws))
    lowest, probs = _power(cycle, full_cycles)
    if rest:
        partial = _product(laws[:rest])
        lowest, probs = lowest + partial.lowest, np.convolve(probs, partial.probs)
    levels = np.arange(start + lowest, start + lowest + probs.size)
    return LevelDistribution(levels, probs)


def law_power(law: StepLaw, times: int) -> tuple[int, np.ndarray]:
    """Lowest value and probabilities of the sum of ``times`` independent copies of ``law`` (work priced first)."""
    law_power_work(law, times).check()
    return _power(law, times)


def law_power_work(law: StepLaw, times: int) -> Work:
    """Priced work of ``law_power(law, times)`` (what it checks before it runs)."""
    if not isinstance(law, StepLaw):
        raise ValueError(f"law must be a single StepLaw; got {type(law).__name__}")
    return _plan((law,), checks.horizon(times, "times"), "law_power")[0]


def work(law, steps: int) -> Work:
    """Priced work of ``level_distribution(law, steps)`` in ``walkmath.cost`` units, before any of it.

    Raises ``ComputeTooLarge`` when the law would span more than ``SUPPORT_CAP`` levels. A
    cyclic list is first multiplied out into its one-cycle law (priced and checked first).
    """
    return _plan(as_cycle(law), checks.horizon(steps, "steps"), "level_distribution")[0]


def _plan(laws: tuple[StepLaw, ...], steps: int, method: str) -> tuple[Work, StepLaw]:
    """The priced work of the level law after ``steps`` periods, and the one-cycle law it powers.

    The units are what the method does: convolution lengths multiplied for products and
    direct powers, ``EVALUATION_UNITS`` per level for the binomial form, and for tilted
    windows their estimated number and cost (``_tilted_units``).
    """
    full_cycles, rest = divmod(steps, len(laws))
    spans = [law.probs.size - 1 for law in laws]
    support = full_cycles * sum(spans) + sum(spans[:rest]) + 1
    knob = "use fewer periods (steps, or a shorter lead time) or coarser units for the step law"
    if support > SUPPORT_CAP:
        raise ComputeTooLarge(
            f"{method} would span {support:,} levels; the limit is {SUPPORT_CAP:,} (80 MB). To fit, {knob}."
        )
    widest = max(spans) + 1
    if len(laws) == 1:
        cycle, units = laws[0], 0
    else:
        units = _product_units(spans) + _product_units(spans[:rest])
        units += (full_cycles * sum(spans) + 1) * (sum(spans[:rest]) + 1)  # the partial cycle's convolution
        Work(f"{method} (one cycle)", support, len(laws), widest, copies=0, dense=units, knob=knob).check()
        cycle = _product(laws)
    units += _power_units(cycle, full_cycles)
    return Work(method, support, steps, widest, copies=0, dense=int(min(units, 2**62)), knob=knob), cycle


def _product_units(spans) -> int:
    """Multiply-adds of convolving laws of these spans one after another."""
    units, width = 0, 1
    for span in spans:
        units += width * (span + 1)
        width += span
    return units


def _power_units(law: StepLaw, times: int) -> float:
    """Units of ``_power(law, times)``, following the same choice of method."""
    if times == 0 or law.probs.size == 1:
        return 0
    if times == 1:
        return law.probs.size
    lattice = math.gcd(*np.flatnonzero(law.probs).tolist())
    if lattice > 1:
        coarse = law.probs[::lattice]
        return _power_units(StepLaw._trusted(0, coarse), times) + times * (law.probs.size - 1)
    if np.count_nonzero(law.probs) == 2:
        return (times + 1) * EVALUATION_UNITS
    if times * (law.probs.size - 1) + 1 <= DIRECT_LIMIT:
        return _direct_units(law.probs.size, times)
    return _tilted_units(law, times)


def _direct_units(width: int, times: int) -> int:
    """Multiply-adds of ``_direct_power``: each ``np.convolve`` costs the product of its lengths."""
    units, result, base = 0, 1, width
    while times:
        if times & 1:
            units += result * base
            result += base - 1
        times >>= 1
        if times:
            units += base * base
            base = 2 * base - 1
    return units


def _tilted_units(law: StepLaw, times: int) -> float:
    """Estimated units of ``_tilted_power``: its windows, each a tilt, moments and one FFT power.

    A window decides about 2 ``WINDOW_SPREAD`` standard deviations of the times-fold sum,
    sqrt(times v(m)) for the tilted step variance v at the offset mean m it is centred on, so
    the number of windows is about sqrt(times) / (2 WINDOW_SPREAD) times the integral of
    dm / sqrt(v(m)) over the support; as dm = v d(log theta), that is the integral of
    sqrt(v) d(log theta), summed here on ``PRICE_GRID`` tilts (each O(jumps), together far less
    than one window's own cost). Each window costs ``WINDOW_UNITS``, ``WINDOW_JUMP_UNITS`` per
    jump and ``FFT_UNITS`` n log2 n for its FFT length n. Doubled: the edges of the support,
    where windows advance by single positions, take about twice the integral's count.
    """
    width = law.probs.size
    edge = min(0.5, 1.0 / times)
    log_lo = _tilt_for_mean(law.probs, edge)
    log_hi = _tilt_for_mean(law.probs, width - 1 - edge)
    points = max(33, min(PRICE_GRID, PRICE_BUDGET // width))
    grid = np.linspace(log_lo, log_hi, points)
    offsets = np.arange(width, dtype=float)  # float: a mixed int-float dot product takes a slow loop
    support = law.probs > 0
    log_p = np.log(law.probs[support])
    offs = offsets[support]
    density = np.empty(points)  # per unit of log theta: windows x cost of one window
    for index, log_theta in enumerate(grid):
        exponents = log_p + offs * log_theta
        exponents -= exponents.max()
        exponents[exponents < -600.0] = -np.inf  # exact zeros: subnormal weights make the sums 100x slower
        weights = np.exp(exponents)
        weights /= weights.sum()
        mean = float(weights @ offs)
        variance = max(float(weights @ (offs - mean) ** 2), 0.0)
        spread = math.sqrt(times * variance)
        size = 1 << max(8, math.ceil(math.log2(64 * spread + 8 * width + 64)))
        per_window = WINDOW_UNITS + WINDOW_JUMP_UNITS * width + FFT_UNITS * size * math.log2(size)
        density[index] = math.sqrt(variance) * per_window
    windows_cost = math.sqrt(times) / (2 * WINDOW_SPREAD) * float(np.trapezoid(density, grid))
    return 2.0 * windows_cost + WINDOW_UNITS + WINDOW_JUMP_UNITS * width


def _product(laws) -> StepLaw:
    probs, lowest = np.ones(1), 0
    for law in laws:
        probs, lowest = np.convolve(probs, law.probs), lowest + law.lowest
    return StepLaw._trusted(lowest, probs)


def _power(law: StepLaw, times: int) -> tuple[int, np.ndarray]:
    lowest = times * law.lowest
    if times == 0 or law.probs.size == 1:
        return lowest, np.ones(1)
    if times == 1:
        return lowest, law.probs.copy()
    lattice = math.gcd(*np.flatnonzero(law.probs).tolist())
    if lattice > 1:  # e.g. steps -2, 0, 2: work on the coarse lattice, then spread out
        coarse = StepLaw._trusted(0, law.probs[::lattice])
        _, probs = _power(coarse, times)
        spread = np.zeros((probs.size - 1) * lattice + 1)
        spread[::lattice] = probs
        return lowest, spread
    if np.count_nonzero(law.probs) == 2:
        return lowest, _two_point_power(law, times)
    if times * (law.probs.size - 1) + 1 <= DIRECT_LIMIT:
        return lowest, _direct_power(law.probs, times)
    return lowest, _tilted_power(law, times)


def _two_point_power(law: StepLaw, times: int) -> np.ndarray:
    """Binomial closed form for support points 0 and 1 (after the lattice cut).

    scipy's binomial pmf evaluates C(n, k) p^k q^(n-k) without forming the
    factorials (Loader's saddle-point form via Boost), accurate to a few ulps at
    n = 10**6 where a plain log-gamma difference loses 1e-9.
    """
    high = law.probs[-1] / (law.probs[0] + law.probs[-1])
    return stats.binom.pmf(np.arange(times + 1), times, high)


def _direct_power(probs: np.ndarray, times: int) -> np.ndarray:
    result, base = np.ones(1), probs
    while times:
        if times & 1:
            result = np.convolve(result, base)
        times >>= 1
        if times:
            base = np.convolve(base, base)
    return result


def _tilted_power(law: StepLaw, times: int) -> np.ndarray:
    """Probabilities of positions 0..L-1 (from times * lowest) by tilted FFT windows, left to right."""
    width = law.probs.size
    length = times * (width - 1) + 1
    logs = np.full(length, -np.inf)
    covered = 0  # every position left of this one is decided
    while covered < length:
        centre = covered + 0.5
        for _ in range(3):  # centre the window so ``covered`` sits near its left edge
            log_theta = _tilt_for_mean(law.probs, min(centre, length - 1.5) / times)
            tilted, log_g = law.tilt_weights(log_theta)  # full width: an underflowed end stays a zero
            mean, spread = _offset_moments(tilted, times)
            centre = covered + max(WINDOW_SPREAD * spread - 1.0, 0.0) + 0.5
        size = 1 << max(8, math.ceil(math.log2(64 * spread + 8 * width + 64)))
        buffer = np.zeros(size)
        buffer[:width] = tilted
        window = np.fft.irfft(np.fft.rfft(buffer) ** times, size)
        hi = min(length - 1, math.floor(mean + WINDOW_SPREAD * spread))
        positions = np.arange(covered, max(hi, covered) + 1)
        values = window[positions % size]
        genuine = values >= WINDOW_FLOOR * window.max()
        # Within the read region a genuine entry is never below the floor: what is, is a structural zero.
        central = np.abs(positions - mean) <= WINDOW_SPREAD * spread
        decided = genuine | central
        undecided = np.flatnonzero(~decided)
        stop = undecided[0] if undecided.size else positions.size
        if stop == 0:  # no progress (cannot happen for spread >= 1/8): decide one position directly
            stop, genuine[0] = 1, values[0] > 0
        chosen = positions[:stop][genuine[:stop]]
        logs[chosen] = np.log(window[chosen % size]) + times * log_g - (chosen + times * law.lowest) * log_theta
        covered = int(positions[stop - 1]) + 1
    return np.exp(logs)


def _offset_moments(probs: np.ndarray, times: int) -> tuple[float, float]:
    """Mean and standard deviation of the ``times``-fold sum, in offsets from the lowest step."""
    offsets = np.arange(probs.size)
    mean = math.fsum(offsets * probs)
    variance = math.fsum((offsets - mean) ** 2 * probs)
    return times * mean, math.sqrt(times * variance)


def _tilt_for_mean(probs: np.ndarray, mean_offset: float) -> float:
    """log theta making the tilted step mean (measured from the lowest step) equal ``mean_offset``."""
    offsets = np.arange(probs.size, dtype=float)  # float: a mixed int-float dot product takes a slow loop
    support = probs > 0
    log_p = np.log(probs[support])
    offs = offsets[support]

    def excess(log_theta: float) -> float:
        weights = log_p + offs * log_theta
        weights = np.exp(weights - weights.max())
        return float(weights @ offs / weights.sum()) - mean_offset

    low, high = -1.0, 1.0
    while excess(low) > 0:
        low *= 2
    while excess(high) < 0:
        high *= 2
    return optimize.brentq(excess, low, high, xtol=1e-14, rtol=1e-14)
