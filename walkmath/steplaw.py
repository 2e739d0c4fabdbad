"""Step laws: the distribution of the net change of the level in one period.

A ``StepLaw`` is a finite integer probability law stored as a lowest step and a
dense probability array, ``probs[i] = P(step = lowest + i)``. Count laws with
infinite support (Poisson, negative binomial) are cut where the dropped upper
tail is below ``COUNT_TAIL``; the dropped mass is kept in ``truncated_mass``
and the rest renormalised.
"""

from __future__ import annotations

import functools
import itertools
import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field

import numpy as np
from scipy import stats

from walkmath import checks
from walkmath.cost import Work

# Upper tail dropped from infinite count laws. Far below the 1e-15 of mass the
# design allows, because a tail probability of a sum of many periods leans on
# individual large counts: with 1e-15 a Poisson(1) cut at 17 would move the
# 50-period probability of 150 units (about 2.4e-30) by 5e-8 relative.
COUNT_TAIL = 1e-24

# Largest number of jumps (support width, highest - lowest + 1) of one step law: 8 MB of floats.
# It keeps every count law accepted before the cap (count laws are evaluated on 0..cut): a
# Poisson law at its largest mean (1e6) reaches its 1e-24 tail at 1,010,216 counts, and the
# planner's widest negative binomial (mean 1e4, variance 1e8) at 552,597. A wider law could not be
# used anyway: one banded period over as many levels as the law has jumps already costs
# width**2 > 1e12 work units, fifty times ``walkmath.cost.WORK_CAP``.
MAX_JUMPS = 2**20 + 1
# Most observed values ``empirical`` reads one by one (a Python loop of about a second); larger
# samples come as {value: count}.
OBSERVATION_CAP = 1_000_000
# Largest size of a single step (lowest and highest), so levels stay far inside int64.
STEP_LIMIT = 10**9


@dataclass(frozen=True, eq=False)
class StepLaw:
    """P(step = lowest + i) = probs[i]; probs are non-negative and sum to 1.

    The constructor validates: ``lowest`` a whole number within +-``STEP_LIMIT``, ``probs`` at
    most ``MAX_JUMPS`` finite non-negative numbers summing to 1 within ``checks.SUM_TOLERANCE``
    (renormalised), ``truncated_mass`` a probability. Zero end entries are trimmed.
    """

    lowest: int
    probs: np.ndarray
    truncated_mass: float = 0.0
    label: str = field(default="", compare=False)

    def __post_init__(self):
        lowest = checks.whole("lowest", self.lowest, minimum=-STEP_LIMIT, maximum=STEP_LIMIT)
        try:
            size = len(self.probs)
        except TypeError:
            size = 0  # a scalar: refused below as not a list
        if size > MAX_JUMPS:
            raise ValueError(f"probs must hold at most {MAX_JUMPS:,} step probabilities (MAX_JUMPS); got {size:,}")
        probs = checks.probability_vector("probs", self.probs)
        truncated = checks.probability("truncated_mass", self.truncated_mass)
        if not isinstance(self.label, str):
            raise ValueError(f"label must be a string; got {type(self.label).__name__}")
        self._settle(lowest, probs, truncated, self.label)
        if self.highest > STEP_LIMIT:
            raise ValueError(
                f"lowest + len(probs) - 1 (the highest step) must be at most {STEP_LIMIT}; got {self.highest}"
            )

    @classmethod
    def _trusted(cls, lowest: int, probs: np.ndarray, truncated_mass: float = 0.0, label: str = "") -> StepLaw:
        """A law from an array the caller has already validated (a constructor, a convolution of laws)."""
        law = object.__new__(cls)
        law._settle(int(lowest), np.asarray(probs, dtype=float), float(truncated_mass), label)
        return law

    def _settle(self, lowest: int, probs: np.ndarray, truncated_mass: float, label: str) -> None:
        nonzero = np.flatnonzero(probs > 0)
        if nonzero.size == 0:
            raise ValueError("step law must have a non-empty support (some step with positive probability)")
        probs = probs[nonzero[0] : nonzero[-1] + 1].copy()
        probs.setflags(write=False)
        object.__setattr__(self, "lowest", lowest + int(nonzero[0]))
        object.__setattr__(self, "probs", probs)
        object.__setattr__(self, "truncated_mass", truncated_mass)
        object.__setattr__(self, "label", label)

    # -- constructors -------------------------------------------------------

    @classmethod
    def nearest(cls, up: float, down: float) -> StepLaw:
        """Nearest-neighbour step: +1 with ``up``, -1 with ``down``, 0 otherwise."""
        up = checks.probability("up", up)
        down = checks.probability("down", down)
        stay = 1.0 - up - down
        if stay < -checks.SUM_TOLERANCE:
            raise ValueError(f"up + down must be at most 1; got {up + down:.12g}")
        return cls._trusted(-1, np.array([down, max(stay, 0.0), up]), label=f"nearest(up={up:g}, down={down:g})")

    @classmethod
    def from_pmf(cls, pmf: Mapping[int, float] | Iterable[tuple[int, float]]) -> StepLaw:
        """Any finite integer law given as ``{step: probability}``; steps within +-``STEP_LIMIT``,
        spanning at most ``MAX_JUMPS`` steps."""
        items = list(itertools.islice(pmf.items() if isinstance(pmf, Mapping) else pmf, MAX_JUMPS + 1))
        if not items:
            raise ValueError("step probabilities must name at least one step")
        if len(items) > MAX_JUMPS:
            raise ValueError(f"step probabilities must name at most {MAX_JUMPS:,} steps (MAX_JUMPS)")
        steps = [checks.whole("step", step, minimum=-STEP_LIMIT, maximum=STEP_LIMIT) for step, _ in items]
        if len(set(steps)) != len(steps):
            raise ValueError("step probabilities must name each step once")
        weights = checks.probability_vector("step probabilities", [w for _, w in items])
        lowest = min(steps)
        _check_width("steps (highest step - lowest step + 1)", max(steps) - lowest + 1)
        probs = np.zeros(max(steps) - lowest + 1)
        probs[np.array(steps) - lowest] = weights
        return cls._trusted(lowest, probs, label="table")

    @classmethod
    def poisson(cls, mean: float) -> StepLaw:
        """Poisson counts 0, 1, 2, ... with the given mean (0 to 1e6), cut at ``COUNT_TAIL``."""
        mean = checks.real("mean", mean, minimum=0.0, maximum=1e6)
        if mean == 0:
            return cls.fixed(0)
        return cls._counts(_Count(stats.poisson, mean), f"poisson(mean={mean:g})", "the mean")

    @classmethod
    def negative_binomial(cls, mean: float, variance: float) -> StepLaw:
        """Negative binomial counts from mean and variance (variance > mean: over-dispersed demand).

        Mean 0 to 1e6, variance above the mean and at most 1e12. Mean 0 is no demand at all: the
        point mass at 0 (the limit of the law as the mean falls to 0), as for ``poisson(0)``.
        Refused when the law reaches its ``COUNT_TAIL`` tail beyond ``MAX_JUMPS`` counts.
        """
        mean = checks.real("mean", mean, minimum=0.0, maximum=1e6)
        variance = checks.real("variance", variance, minimum=0.0, maximum=1e12)
        if variance <= mean:
            raise ValueError(f"variance must exceed the mean ({mean:g}) for a negative binomial; got {variance:g}")
        if mean == 0:
            return cls.fixed(0)
        success = mean / variance
        size = mean * mean / (variance - mean)
        label = f"negative_binomial(mean={mean:g}, variance={variance:g})"
        return cls._counts(_Count(stats.nbinom, size, success), label, "the mean or the variance")

    @classmethod
    def binomial(cls, trials: int, p: float) -> StepLaw:
        """Binomial counts: ``trials`` (0 to 10**6) independent chances, each with probability ``p``."""
        trials = checks.whole("trials", trials, minimum=0, maximum=10**6)
        p = checks.probability("p", p)
        counts = np.arange(trials + 1)
        try:
            probs = stats.binom.pmf(counts, trials, p)
        except OverflowError:  # Boost's pmf overflows for p near the smallest normal float (2.2e-308)
            probs = np.exp(stats.binom.logpmf(counts, trials, p))  # logs of order 1e3: 1e-13 relative
        return cls._trusted(0, probs, label=f"binomial(trials={trials}, p={p:g})")

    @classmethod
    def fixed(cls, amount: int) -> StepLaw:
        """A step of exactly ``amount`` (within +-``STEP_LIMIT``) every period (a scheduled delivery, say)."""
        amount = checks.whole("amount", amount, minimum=-STEP_LIMIT, maximum=STEP_LIMIT)
        return cls._trusted(amount, np.ones(1), label=f"fixed({amount})")

    @classmethod
    def empirical(cls, observations: Mapping[int, float] | Iterable[int]) -> StepLaw:
        """Law of observed whole-number changes: ``{value: count}`` or a list of observed values."""
        if isinstance(observations, Mapping):
            items = list(observations.items())
        else:
            sized = hasattr(observations, "__len__") and len(observations) > OBSERVATION_CAP
            values = [] if sized else itertools.islice(observations, OBSERVATION_CAP + 1)
            values = [checks.whole("observation", v, minimum=-STEP_LIMIT, maximum=STEP_LIMIT) for v in values]
            if sized or len(values) > OBSERVATION_CAP:
                raise ValueError(
                    f"observations must hold at most {OBSERVATION_CAP:,} values; pass {{value: count}} for more"
                )
            values, counts = np.unique(np.array(values, dtype=np.int64), return_counts=True)
            items = list(zip(values.tolist(), counts.tolist(), strict=True))
        if not items:
            raise ValueError("observations must hold at least one value")
        counts = np.array([checks.real("count", c, minimum=0.0) for _, c in items])
        if counts.max() <= 0:
            raise ValueError("observation counts must have a positive total")
        counts = counts / counts.max()  # so the total of counts near 1e308 cannot overflow
        total = math.fsum(counts)
        return cls.from_pmf({v: c / total for (v, _), c in zip(items, counts, strict=True)})

    @classmethod
    def net(cls, arrivals: StepLaw, demand: StepLaw) -> StepLaw:
        """Law of arrivals - demand for independent arrivals and demand in one period.

        One direct convolution: len(arrivals.probs) x len(demand.probs) multiply-adds, priced
        against ``walkmath.cost.WORK_CAP`` before it starts.
        """
        for name, law in (("arrivals", arrivals), ("demand", demand)):
            if not isinstance(law, StepLaw):
                raise ValueError(f"{name} must be a StepLaw; got {type(law).__name__}")
        lowest, highest = arrivals.lowest - demand.highest, arrivals.highest - demand.lowest
        if lowest < -STEP_LIMIT or highest > STEP_LIMIT:
            raise ValueError(
                f"arrivals - demand must stay within +-{STEP_LIMIT:,} per period; it spans {lowest:,} to {highest:,}"
            )
        _check_width("arrivals - demand (its number of steps)", highest - lowest + 1)
        Work(
            "StepLaw.net", arrivals.probs.size, 1, demand.probs.size, knob="coarsen the units of arrivals or demand"
        ).check()
        probs = np.convolve(arrivals.probs, demand.probs[::-1])
        return cls._trusted(
            lowest,
            probs,
            truncated_mass=min(arrivals.truncated_mass + demand.truncated_mass, 1.0),
            label=f"{arrivals.label} - {demand.label}",
        )

    @classmethod
    def _counts(cls, dist, label: str, knob: str) -> StepLaw:
        """The count law of ``dist`` on 0..cut, cut the smallest k with P(count > k) <= ``COUNT_TAIL``.

        The cut is found by galloping then bisection on ``dist.sf`` (monotone, and accurate far into
        the tail, unlike ``isf``), so at most about 2 log2(cut) survival evaluations; the law is
        refused before any pmf is evaluated when the cut would exceed ``MAX_JUMPS``.
        """

        high = _count_cut(dist, label, knob)
        probs = dist.pmf(np.arange(high + 1))
        return cls._trusted(0, probs / math.fsum(probs), truncated_mass=float(dist.sf(high)), label=label)

    @staticmethod
    def count_width(family: str, mean: float, variance: float | None = None) -> int:
        """Number of counts (0..cut) ``poisson(mean)`` or ``negative_binomial(mean, variance)`` would hold.

        Found by the same search on the survival function, without building the law (about
        2 log2(cut) evaluations), so a caller can price a law before asking for it.
        """
        family = checks.choice("family", family, ("poisson", "negative_binomial"))
        mean = checks.real("mean", mean, minimum=0.0, maximum=1e6)
        if family == "negative_binomial":
            variance = checks.real("variance", variance, minimum=0.0, maximum=1e12)
            if variance <= mean:
                raise ValueError(f"variance must exceed the mean ({mean:g}) for a negative binomial; got {variance:g}")
        return _count_width(family, mean, variance if family == "negative_binomial" else None)

    # -- properties ---------------------------------------------------------

    @property
    def highest(self) -> int:
        return self.lowest + self.probs.size - 1

    @property
    def steps(self) -> np.ndarray:
        return np.arange(self.lowest, self.highest + 1)

    @property
    def mean(self) -> float:
        # fsum of a list: the same correctly rounded sum as of the array, without numpy's per-item scalars
        return math.fsum((self.steps * self.probs).tolist())

    @property
    def variance(self) -> float:
        centred = self.steps - self.mean
        return math.fsum((centred * centred * self.probs).tolist())

    @property
    def is_nearest(self) -> bool:
        return self.lowest >= -1 and self.highest <= 1

    def prob(self, step: int) -> float:
        index = checks.whole("step", step) - self.lowest
        return float(self.probs[index]) if 0 <= index < self.probs.size else 0.0

    def generating_function(self, z: complex | np.ndarray) -> complex | np.ndarray:
        """G(z) = sum_k P(step = k) z^k (Horner on the shifted polynomial)."""
        z = np.asarray(z, dtype=complex if np.iscomplexobj(z) else float)
        return np.polyval(self.probs[::-1], z) * z ** float(self.lowest)

    def tilted(self, theta: float) -> tuple[StepLaw, float]:
        """Exponential tilt p_k theta^k / G(theta) and log G(theta) (theta > 0), in logs to stay finite."""
        theta = checks.real("theta", theta, minimum=0.0, strict_minimum=True)
        weights, log_g = self.tilt_weights(math.log(theta))
        return StepLaw._trusted(self.lowest, weights), log_g

    def tilt_weights(self, log_theta: float) -> tuple[np.ndarray, float]:
        """Tilted probabilities on all of ``steps`` (entries that underflow stay as zeros) and log G(theta)."""
        logs = np.log(self.probs, where=self.probs > 0, out=np.full(self.probs.size, -np.inf))
        logs = logs + self.steps * log_theta
        peak = logs.max()
        weights = np.exp(logs - peak)
        total = math.fsum(weights)
        return weights / total, peak + math.log(total)

    def __repr__(self) -> str:
        return f"StepLaw({self.label or 'custom'}, steps {self.lowest}..{self.highest}, mean {self.mean:.6g})"


def _check_width(name: str, width: int) -> None:
    if width > MAX_JUMPS:
        raise ValueError(f"{name} must be at most {MAX_JUMPS:,} (MAX_JUMPS); got {width:,}")


@functools.lru_cache(maxsize=256)
def _count_width(family: str, mean: float, variance: float | None) -> int:
    """``StepLaw.count_width`` for checked numbers (cached: forms price the same laws again and again)."""
    if mean == 0:
        return 1
    if family == "poisson":
        return _count_cut(_Count(stats.poisson, mean), "poisson", "the mean") + 1
    dist = _Count(stats.nbinom, mean * mean / (variance - mean), mean / variance)
    return _count_cut(dist, "negative_binomial", "the mean or the variance") + 1


class _Count:
    """A scipy count family with its shape numbers, not frozen (freezing builds a new distribution object
    each time, about a quarter of a millisecond: more than the survival evaluations a law needs)."""

    def __init__(self, family, *shape: float):
        self.family, self.shape = family, shape

    def sf(self, counts):
        return self.family.sf(counts, *self.shape)

    def pmf(self, counts):
        return self.family.pmf(counts, *self.shape)


# The gallop's counts, 1, 3, 7, ..., 2**20 - 1, then the widest law's last count (``MAX_JUMPS - 1``).
_GALLOP = np.array([*(2**k - 1 for k in range(1, (MAX_JUMPS - 1).bit_length())), MAX_JUMPS - 1])
# Counts evaluated at once in each round of the search inside the gallop's bracket.
_SCAN = 64


def _count_cut(dist, label: str, knob: str) -> int:
    """Smallest k with P(count > k) <= ``COUNT_TAIL``, on ``dist.sf`` (non-increasing in k).

    Evaluated in vectorised rounds rather than one count at a time (a survival call costs tens of
    microseconds whatever its size): the gallop's counts in one call, then the bracket they leave,
    ``_SCAN`` counts a round, which for demand laws up to a few hundred counts is one round: two calls
    in all, where a gallop and bisection made about 2 log2(cut). The answer is the same k.
    """
    tails = np.asarray(dist.sf(_GALLOP), dtype=float)
    if tails[-1] > COUNT_TAIL:
        raise ValueError(
            f"{label} has more than {COUNT_TAIL:g} of its mass above {MAX_JUMPS - 1:,} counts (MAX_JUMPS); "
            f"lower {knob} or count in coarser units"
        )
    first = int(np.argmax(tails <= COUNT_TAIL))
    low, high = (int(_GALLOP[first - 1]) if first else -1), int(_GALLOP[first])
    # invariant: P(count > low) > COUNT_TAIL >= P(count > high); P(count > -1) = 1
    while high - low > 1:
        inside = np.unique(np.linspace(low, high, _SCAN + 2).round().astype(np.int64))[1:-1]
        met = np.asarray(dist.sf(inside), dtype=float) <= COUNT_TAIL
        if met.any():
            at = int(np.argmax(met))
            low, high = (int(inside[at - 1]) if at else low), int(inside[at])
        else:
            low = int(inside[-1])
    return high


def as_cycle(law, name: str = "law") -> tuple[StepLaw, ...]:
    """A StepLaw or a non-empty list of them, used cyclically one per period."""
    laws = (law,) if isinstance(law, StepLaw) else tuple(law) if isinstance(law, (list, tuple)) else None
    if not laws or not all(isinstance(item, StepLaw) for item in laws):
        raise ValueError(f"{name} must be a StepLaw or a non-empty list of StepLaws")
    return laws
