"""Cross-checks shown beside the exact answers: never the answer themselves.

* the normal (diffusion) approximation everyday practice uses: the level law
  with a continuity correction, and the first-passage probability of Brownian
  motion with drift as an approximate stock-out curve;
* a seeded Monte Carlo run of the banded walk with Wilson score intervals.

Both are here so users can see how far the habitual shortcut drifts from the
exact figure in the tails, and that an independent simulation agrees with it
in the bulk.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special, stats

from walkmath import checks
from walkmath.checks import ABOVE_RULES, BELOW_RULES
from walkmath.cost import Work
from walkmath.distribution import EVALUATION_UNITS, LevelDistribution
from walkmath.steplaw import as_cycle

# Paths simulated together: a handful of arrays of this length live at once
# (about 3 MB), whatever the number of paths or the horizon.
CHUNK_PATHS = 1 << 16
# Largest paths x periods one Monte Carlo run accepts (about 15-30 s on one core).
SIMULATION_CAP = 1_000_000_000
# Largest number of levels one normal level law spans (80 MB of floats).
LEVELS_CAP = 10_000_000
# Work units (``walkmath.cost``) of one simulated path-period (a uniform, a search, a few
# comparisons: about 16 ns); each period of a chunk also pays ``PERIOD_OVERHEAD``.
PATH_PERIOD_UNITS = 100
# Periods of the normal stock-out curve evaluated at once, so its temporaries stay near 100 MB.
CURVE_CHUNK = 1 << 20


def normal_level_distribution(law, steps: int, start: int = 0) -> LevelDistribution:
    """Normal approximation of the free walk's level law, with continuity correction.

    P(level = m) ~ Phi((m + 1/2 - mu) / sigma) - Phi((m - 1/2 - mu) / sigma),
    mu = start + sum of the period means, sigma^2 = sum of the period variances
    (``law`` may be a cyclic list: period k uses law[(k - 1) % len]). Levels are
    the ones the exact walk can reach, so the arrays line up with
    ``level_distribution``. Each difference is taken on its own tail side and in
    logs (``log_ndtr``, scipy's norm.logcdf), so values down to 1e-300 keep
    their digits and none is negative.
    """
    laws = as_cycle(law)
    steps = checks.horizon(steps, "steps")
    start = checks.level("start", start)
    full_cycles, rest = divmod(steps, len(laws))
    uses = [full_cycles + (1 if index < rest else 0) for index in range(len(laws))]
    mean = start + math.fsum(count * item.mean for count, item in zip(uses, laws, strict=True))
    variance = math.fsum(count * item.variance for count, item in zip(uses, laws, strict=True))
    lowest = start + sum(count * item.lowest for count, item in zip(uses, laws, strict=True))
    highest = start + sum(count * item.highest for count, item in zip(uses, laws, strict=True))
    if highest - lowest + 1 > LEVELS_CAP:
        raise ValueError(
            f"steps x step range must span at most {LEVELS_CAP:,} levels; got {highest - lowest + 1:,}. "
            "Shorten the steps or coarsen the units."
        )
    _evaluations("normal_level_distribution", highest - lowest + 1, "shorten the steps or coarsen the units").check()
    levels = np.arange(lowest, highest + 1)
    return LevelDistribution(levels, _normal_bins(levels, mean, math.sqrt(variance)))


def brownian_first_passage(drift: float, variance: float, distance: float, t: float) -> float:
    """P(tau <= t): Brownian motion (``drift``, ``variance`` per period) hits a barrier ``distance`` below.

    Convention: X_s = x + drift * s + sqrt(variance) W_s with x - barrier =
    a = ``distance`` > 0 and tau = inf{s: X_s <= barrier}; a negative drift
    moves toward the barrier (falling stock). Then

        P(tau <= t) = Phi((-a - mu t) / (sigma sqrt t))
                      + e^{-2 mu a / sigma^2} Phi((-a + mu t) / (sigma sqrt t)),

    the passage-time law of Brownian motion with drift (Karatzas & Shreve,
    Brownian Motion and Stochastic Calculus, 2nd ed. 1991, section 3.5.C,
    passage-time density integrated over [0, t]; Borodin & Salminen, Handbook of
    Brownian Motion - Facts and Formulae, 2nd ed. 2002, Part II, ch. 2,
    Brownian motion with drift; section numbers from memory). For an upward
    barrier at distance a with drift mu toward it, pass drift = -mu. The
    exponential times Phi is never formed directly (see ``_first_passage``), so
    huge exponents neither overflow nor cancel; the result lies in [0, 1].
    """
    drift = checks.real("drift", drift)
    variance = checks.real("variance", variance, minimum=0.0)
    distance = checks.real("distance", distance, minimum=0.0, strict_minimum=True)
    t = checks.real("t", t, minimum=0.0)
    return float(_first_passage(drift, variance, distance, np.array([t]))[0])


def normal_stockout_curve(law, start: int, low: int, horizon: int) -> np.ndarray:
    """Diffusion approximation of stockout[n], n = 0..horizon, for a free walk falling below ``low``.

    Brownian first passage (``brownian_first_passage``) with the step law's
    mean and variance per period (for a cyclic list: their averages over the
    cycle) and the continuity-corrected distance a = start - low + 1/2, since
    the integer level first falls below ``low`` when it reaches low - 1.
    """
    laws = as_cycle(law)
    low = checks.level("low", low)
    start = checks.level("start", start)
    if start < low:
        raise ValueError(f"start must be at least low ({low}); got {start}")
    horizon = checks.horizon(horizon)
    _evaluations("normal_stockout_curve", horizon + 1, "shorten the horizon").check()
    drift = math.fsum(item.mean for item in laws) / len(laws)
    variance = math.fsum(item.variance for item in laws) / len(laws)
    curve = np.empty(horizon + 1)
    for first in range(0, horizon + 1, CURVE_CHUNK):
        times = np.arange(first, min(first + CURVE_CHUNK, horizon + 1), dtype=float)
        curve[first : first + times.size] = _first_passage(drift, variance, start - low + 0.5, times)
    # First passage by time t never falls as t grows; near its limit the closed form's rounding can
    # step back by an ulp, so the comparison curve is held monotone by a running maximum.
    return np.maximum.accumulate(curve)


def wilson_interval(successes, trials: int, confidence: float = 0.95):
    """Wilson score interval for a binomial proportion (E. B. Wilson 1927, JASA 22:209-212).

    centre = (p + z^2 / 2n) / (1 + z^2 / n), half-width = z sqrt(p (1 - p) / n + z^2 / 4n^2) / (1 + z^2 / n),
    with p = successes / n and z the two-sided normal quantile. ``successes`` may
    be an array; returns (lower, upper) as floats or arrays, clipped to [0, 1].
    """
    trials = checks.whole("trials", trials, minimum=1, maximum=2**53)  # counts exact as floats
    confidence = checks.open_probability("confidence", confidence)
    counts = np.asarray(successes)
    if counts.dtype.kind not in "iuf" or np.any(counts != np.floor(counts)):
        raise ValueError(f"successes must be whole numbers from 0 to trials ({trials})")
    if np.any(counts < 0) or np.any(counts > trials):
        raise ValueError(f"successes must be whole numbers from 0 to trials ({trials})")
    z = stats.norm.isf((1.0 - confidence) / 2.0)
    share = counts / trials
    shrink = 1.0 + z * z / trials
    centre = (share + z * z / (2 * trials)) / shrink
    half = z * np.sqrt(share * (1.0 - share) / trials + z * z / (4.0 * trials * trials)) / shrink
    lower, upper = np.clip(centre - half, 0.0, 1.0), np.clip(centre + half, 0.0, 1.0)
    if counts.ndim == 0:
        return float(lower), float(upper)
    return lower, upper


@dataclass(frozen=True, eq=False)
class MonteCarloOutlook:
    """Simulated stockout[n] and overflow[n] (n = 0..horizon) with Wilson intervals at ``confidence``."""

    stockout: np.ndarray
    overflow: np.ndarray
    stockout_lower: np.ndarray
    stockout_upper: np.ndarray
    overflow_lower: np.ndarray
    overflow_upper: np.ndarray
    paths: int
    seed: int
    confidence: float


def monte_carlo_outlook(
    law,
    start: int,
    low: int,
    high: int | None,
    below: str,
    above: str,
    horizon: int,
    paths: int = 100_000,
    seed: int = 0,
    confidence: float = 0.95,
) -> MonteCarloOutlook:
    """Seeded simulation of the banded walk (DESIGN.md section 3 rules, as ``BandedWalk``).

    All paths of a chunk of ``CHUNK_PATHS`` advance together, one period at a
    time; steps are drawn by inverse cdf on uniforms from numpy's default
    Generator seeded with ``seed``, so a run is reproducible. stockout[n] is the
    fraction of paths with at least one stock-out in periods 1..n (a stopped
    path has no later events), overflow[n] likewise. Memory stays a few MB
    whatever ``paths`` and ``horizon``; time is about 15-30 ns per path-period,
    priced (``monte_carlo_work``) and refused over ``walkmath.cost.WORK_CAP``
    (about 2e8 path-periods) before the run starts.
    """
    laws = as_cycle(law)
    low = checks.level("low", low)
    high = None if high is None else checks.level("high", high)
    if high is not None and high < low:
        raise ValueError(f"high (capacity) must be at least low ({low}); got {high}")
    start = checks.level("start", start)
    if start < low or (high is not None and start > high):
        upper = "" if high is None else f" and at most high ({high})"
        raise ValueError(f"start must be at least low ({low}){upper}; got {start}")
    below = checks.choice("below", below, BELOW_RULES)
    above = checks.choice("above", above, ABOVE_RULES)
    horizon = checks.horizon(horizon)
    paths = checks.whole("paths", paths, minimum=1, maximum=SIMULATION_CAP)
    if paths * max(horizon, 1) > SIMULATION_CAP:
        raise ValueError(f"paths x horizon must be at most {SIMULATION_CAP:,}; got {paths:,} x {horizon:,}")
    seed = checks.whole("seed", seed, minimum=0)
    confidence = checks.open_probability("confidence", confidence)
    monte_carlo_work(paths, horizon).check()

    rng = np.random.default_rng(seed)
    samplers = [(item.lowest, np.cumsum(item.probs)[:-1]) for item in laws]
    stockouts = np.zeros(horizon + 1, dtype=np.int64)
    overflows = np.zeros(horizon + 1, dtype=np.int64)
    for first in range(0, paths, CHUNK_PATHS):
        chunk = _Chunk(min(CHUNK_PATHS, paths - first), start, low, high, below, above)
        chunk.run(rng, samplers, horizon, stockouts, overflows)
    stockout_lower, stockout_upper = wilson_interval(stockouts, paths, confidence)
    overflow_lower, overflow_upper = wilson_interval(overflows, paths, confidence)
    return MonteCarloOutlook(
        stockout=stockouts / paths,
        overflow=overflows / paths,
        stockout_lower=stockout_lower,
        stockout_upper=stockout_upper,
        overflow_lower=overflow_lower,
        overflow_upper=overflow_upper,
        paths=paths,
        seed=seed,
        confidence=confidence,
    )


def _evaluations(method: str, count: int, knob: str) -> Work:
    """Work of ``count`` normal-tail evaluations (a few special functions each, as one scipy term)."""
    return Work(method, count, 1, 1, copies=0, dense=count * EVALUATION_UNITS, knob=knob)


def monte_carlo_work(paths: int, horizon: int) -> Work:
    """Priced work of ``monte_carlo_outlook``: chunks x periods x (paths in a chunk x ``PATH_PERIOD_UNITS``)."""
    return Work(
        "monte_carlo_outlook",
        min(paths, CHUNK_PATHS),
        horizon,
        PATH_PERIOD_UNITS,
        copies=-(-paths // CHUNK_PATHS),
        knob="simulate fewer paths or shorten the horizon",
    )


class _Chunk:
    """The state of a chunk of simulated paths: level, still running, events seen so far."""

    def __init__(self, size: int, start: int, low: int, high: int | None, below: str, above: str):
        self.level = np.full(size, start, dtype=np.int64)
        self.running = np.ones(size, dtype=bool)
        self.had_stockout = np.zeros(size, dtype=bool)
        self.had_overflow = np.zeros(size, dtype=bool)
        self.low, self.high, self.below = low, high, below
        self.above = above if high is not None else "spill"  # no capacity: nothing to stop at
        self.stops = self.below == "stop" or self.above == "stop"

    def run(self, rng, samplers, horizon: int, stockouts: np.ndarray, overflows: np.ndarray) -> None:
        size = self.level.size
        for period in range(1, horizon + 1):
            lowest, edges = samplers[(period - 1) % len(samplers)]
            self.level += lowest + np.searchsorted(edges, rng.random(size), side="right")
            self._settle()
            stockouts[period] += np.count_nonzero(self.had_stockout)
            overflows[period] += np.count_nonzero(self.had_overflow)
            if self.stops and not self.running.any():  # every path ended: the counts stay as they are
                stockouts[period + 1 :] += np.count_nonzero(self.had_stockout)
                overflows[period + 1 :] += np.count_nonzero(self.had_overflow)
                return

    def _settle(self) -> None:
        """Record this period's events and apply the band rules (one step cannot cross both bounds)."""
        short = self.level < self.low
        if self.stops:
            short &= self.running
        self.had_stockout |= short
        if self.high is not None:
            over = self.level > self.high
            if self.stops:
                over &= self.running
            self.had_overflow |= over
        if self.below == "lost":
            np.maximum(self.level, self.low, out=self.level)
        elif self.below == "stop":
            self.running &= ~short
        if self.high is not None:
            if self.above == "spill":
                np.minimum(self.level, self.high, out=self.level)
            else:
                self.running &= ~over


def _normal_bins(levels: np.ndarray, mean: float, spread: float) -> np.ndarray:
    """Phi((m + 1/2 - mean) / spread) - Phi((m - 1/2 - mean) / spread), each on its small-tail side."""
    if spread == 0.0:  # every step fixed: the level is certain (and mean is a whole number)
        return (levels == round(mean)).astype(float)
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):  # a tiny spread sends bounds to +-inf
        lower = (levels - 0.5 - mean) / spread
        upper = (levels + 0.5 - mean) / spread
        mirror = levels > mean  # above the mean use the survival side: Phi(-lower) - Phi(-upper)
        near = special.log_ndtr(np.where(mirror, -lower, upper))  # log of the larger of the two terms
        far = special.log_ndtr(np.where(mirror, -upper, lower))
        probs = np.exp(near) * -np.expm1(far - near)
    return np.clip(np.nan_to_num(probs, nan=0.0), 0.0, 1.0)  # nan only where both terms are 0


def _first_passage(drift: float, variance: float, distance: float, times: np.ndarray) -> np.ndarray:
    """P(tau <= t) for each t of ``times`` (see ``brownian_first_passage``); 0 at t = 0.

    With z = (a + mu t) / (sigma sqrt t) and y = (a - mu t) / (sigma sqrt t):
    direct term Phi(-z); reflected term e^{-2 mu a / sigma^2} Phi(-y). Since
    -2 mu a / sigma^2 - y^2 / 2 = -z^2 / 2, for y >= 0 the reflected term equals
    e^{-z^2 / 2} erfcx(y / sqrt 2) / 2, both factors at most 1; for y < 0 (drift
    away, mu t > a) its exponent is negative and it is taken in logs,
    exp(-2 mu a / sigma^2 + log_ndtr(-y)). Nothing overflows, nothing cancels.
    """
    result = np.zeros(times.shape)
    moving = times > 0
    t = times[moving]
    # Extreme inputs (variance near 1e-300, say) may overflow to inf on the way: those limits are
    # the intended ones, and a value left undefined (0/0) falls back to the noiseless answer.
    with np.errstate(over="ignore", under="ignore", divide="ignore", invalid="ignore"):
        certain = distance + drift * t <= 0.0  # the noiseless level has reached the barrier
        if variance == 0.0:
            result[moving] = certain
            return result
        scale = np.sqrt(variance * t)
        toward = (distance + drift * t) / scale
        away = (distance - drift * t) / scale
        direct = special.ndtr(-toward)
        bounded = away >= 0.0
        reflected = np.zeros_like(t)
        reflected[bounded] = 0.5 * np.exp(-0.5 * toward[bounded] ** 2) * special.erfcx(away[bounded] / math.sqrt(2))
        exponent = -2.0 * drift * distance / variance
        reflected[~bounded] = np.exp(exponent + special.log_ndtr(-away[~bounded]))
        passage = direct + reflected
    undefined = ~np.isfinite(passage)
    passage[undefined] = certain[undefined]
    result[moving] = passage
    return np.clip(result, 0.0, 1.0)
