"""Step laws: the distribution of the net change of the level in one period.

A ``StepLaw`` is a finite integer probability law stored as a lowest step and a
dense probability array, ``probs[i] = P(step = lowest + i)``. Count laws with
infinite support (Poisson, negative binomial) are cut where the dropped upper
tail is below ``COUNT_TAIL``; the dropped mass is kept in ``truncated_mass``
and the rest renormalised.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field

import numpy as np
from scipy import stats

from walkmath import checks

# Upper tail dropped from infinite count laws. Far below the 1e-15 of mass the
# design allows, because a tail probability of a sum of many periods leans on
# individual large counts: with 1e-15 a Poisson(1) cut at 17 would move the
# 50-period probability of 150 units (about 2.4e-30) by 5e-8 relative.
COUNT_TAIL = 1e-24


@dataclass(frozen=True, eq=False)
class StepLaw:
    """P(step = lowest + i) = probs[i]; probs are non-negative and sum to 1."""

    lowest: int
    probs: np.ndarray
    truncated_mass: float = 0.0
    label: str = field(default="", compare=False)

    def __post_init__(self):
        probs = np.asarray(self.probs, dtype=float)
        nonzero = np.flatnonzero(probs > 0)
        if nonzero.size == 0:
            raise ValueError("step law must have a non-empty support (some step with positive probability)")
        probs = probs[nonzero[0] : nonzero[-1] + 1].copy()
        probs.setflags(write=False)
        object.__setattr__(self, "lowest", int(self.lowest) + int(nonzero[0]))
        object.__setattr__(self, "probs", probs)

    # -- constructors -------------------------------------------------------

    @classmethod
    def nearest(cls, up: float, down: float) -> StepLaw:
        """Nearest-neighbour step: +1 with ``up``, -1 with ``down``, 0 otherwise."""
        up = checks.probability("up", up)
        down = checks.probability("down", down)
        stay = 1.0 - up - down
        if stay < -checks.SUM_TOLERANCE:
            raise ValueError(f"up + down must be at most 1; got {up + down:.12g}")
        return cls(-1, np.array([down, max(stay, 0.0), up]), label=f"nearest(up={up:g}, down={down:g})")

    @classmethod
    def from_pmf(cls, pmf: Mapping[int, float] | Iterable[tuple[int, float]]) -> StepLaw:
        """Any finite integer law given as ``{step: probability}``."""
        items = list(pmf.items() if isinstance(pmf, Mapping) else pmf)
        if not items:
            raise ValueError("step probabilities must name at least one step")
        steps = [checks.whole("step", step) for step, _ in items]
        if len(set(steps)) != len(steps):
            raise ValueError("step probabilities must name each step once")
        weights = checks.probability_vector("step probabilities", [w for _, w in items])
        lowest = min(steps)
        probs = np.zeros(max(steps) - lowest + 1)
        probs[np.array(steps) - lowest] = weights
        return cls(lowest, probs, label="table")

    @classmethod
    def poisson(cls, mean: float) -> StepLaw:
        """Poisson counts 0, 1, 2, ... with the given mean, cut at ``COUNT_TAIL``."""
        mean = checks.real("mean", mean, minimum=0.0, maximum=1e6)
        if mean == 0:
            return cls.fixed(0)
        return cls._counts(stats.poisson(mean), mean, math.sqrt(mean), f"poisson(mean={mean:g})")

    @classmethod
    def negative_binomial(cls, mean: float, variance: float) -> StepLaw:
        """Negative binomial counts from mean and variance (variance > mean: over-dispersed demand)."""
        mean = checks.real("mean", mean, minimum=0.0, maximum=1e6, strict_minimum=True)
        variance = checks.real("variance", variance, maximum=1e12)
        if variance <= mean:
            raise ValueError(f"variance must exceed the mean ({mean:g}) for a negative binomial; got {variance:g}")
        success = mean / variance
        size = mean * mean / (variance - mean)
        label = f"negative_binomial(mean={mean:g}, variance={variance:g})"
        return cls._counts(stats.nbinom(size, success), mean, math.sqrt(variance), label)

    @classmethod
    def binomial(cls, trials: int, p: float) -> StepLaw:
        """Binomial counts: ``trials`` independent chances, each with probability ``p``."""
        trials = checks.whole("trials", trials, minimum=0, maximum=10**6)
        p = checks.probability("p", p)
        counts = np.arange(trials + 1)
        return cls(0, stats.binom.pmf(counts, trials, p), label=f"binomial(trials={trials}, p={p:g})")

    @classmethod
    def fixed(cls, amount: int) -> StepLaw:
        """A step of exactly ``amount`` every period (a scheduled delivery, say)."""
        amount = checks.whole("amount", amount, minimum=-(10**9), maximum=10**9)
        return cls(amount, np.ones(1), label=f"fixed({amount})")

    @classmethod
    def empirical(cls, observations: Mapping[int, float] | Iterable[int]) -> StepLaw:
        """Law of observed whole-number changes: ``{value: count}`` or a list of observed values."""
        if isinstance(observations, Mapping):
            items = list(observations.items())
        else:
            values, counts = np.unique([checks.whole("observation", v) for v in observations], return_counts=True)
            items = list(zip(values.tolist(), counts.tolist(), strict=True))
        if not items:
            raise ValueError("observations must hold at least one value")
        counts = np.array([checks.real("count", c, minimum=0.0) for _, c in items])
        if counts.sum() <= 0:
            raise ValueError("observation counts must have a positive total")
        return cls.from_pmf({int(v): c / counts.sum() for (v, _), c in zip(items, counts, strict=True)})

    @classmethod
    def net(cls, arrivals: StepLaw, demand: StepLaw) -> StepLaw:
        """Law of arrivals - demand for independent arrivals and demand in one period."""
        for name, law in (("arrivals", arrivals), ("demand", demand)):
            if not isinstance(law, StepLaw):
                raise ValueError(f"{name} must be a StepLaw; got {type(law).__name__}")
        probs = np.convolve(arrivals.probs, demand.probs[::-1])
        return cls(
            arrivals.lowest - demand.highest,
            probs,
            truncated_mass=arrivals.truncated_mass + demand.truncated_mass,
            label=f"{arrivals.label} - {demand.label}",
        )

    @classmethod
    def _counts(cls, dist, mean: float, spread: float, label: str) -> StepLaw:
        reach = int(math.ceil(mean + 40 * spread + 200))
        counts = np.arange(reach + 1)
        beyond = dist.sf(counts)  # P(count > k), accurate far into the tail
        cut = int(np.argmax(beyond <= COUNT_TAIL))
        if beyond[cut] > COUNT_TAIL:
            cut = reach
        probs = dist.pmf(counts[: cut + 1])
        dropped = float(beyond[cut])
        return cls(0, probs / math.fsum(probs), truncated_mass=dropped, label=label)

    # -- properties ---------------------------------------------------------

    @property
    def highest(self) -> int:
        return self.lowest + self.probs.size - 1

    @property
    def steps(self) -> np.ndarray:
        return np.arange(self.lowest, self.highest + 1)

    @property
    def mean(self) -> float:
        return math.fsum(self.steps * self.probs)

    @property
    def variance(self) -> float:
        centred = self.steps - self.mean
        return math.fsum(centred * centred * self.probs)

    @property
    def is_nearest(self) -> bool:
        return self.lowest >= -1 and self.highest <= 1

    def prob(self, step: int) -> float:
        index = int(step) - self.lowest
        return float(self.probs[index]) if 0 <= index < self.probs.size else 0.0

    def generating_function(self, z: complex | np.ndarray) -> complex | np.ndarray:
        """G(z) = sum_k P(step = k) z^k (Horner on the shifted polynomial)."""
        z = np.asarray(z, dtype=complex if np.iscomplexobj(z) else float)
        return np.polyval(self.probs[::-1], z) * z ** float(self.lowest)

    def tilted(self, theta: float) -> tuple[StepLaw, float]:
        """Exponential tilt p_k theta^k / G(theta) and log G(theta), in logs to stay finite."""
        logs = np.log(self.probs, where=self.probs > 0, out=np.full(self.probs.size, -np.inf))
        logs = logs + self.steps * math.log(theta)
        peak = logs.max()
        weights = np.exp(logs - peak)
        total = math.fsum(weights)
        return StepLaw(self.lowest, weights / total), peak + math.log(total)

    def __repr__(self) -> str:
        return f"StepLaw({self.label or 'custom'}, steps {self.lowest}..{self.highest}, mean {self.mean:.6g})"


def as_cycle(law, name: str = "law") -> tuple[StepLaw, ...]:
    """A StepLaw or a non-empty list of them, used cyclically one per period."""
    laws = (law,) if isinstance(law, StepLaw) else tuple(law) if isinstance(law, (list, tuple)) else None
    if not laws or not all(isinstance(item, StepLaw) for item in laws):
        raise ValueError(f"{name} must be a StepLaw or a non-empty list of StepLaws")
    return laws
