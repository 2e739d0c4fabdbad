"""Spares pool: ``units`` must operate, ``spares`` wait cold, ``crews`` repair in parallel.

The number of failed units is a birth–death chain on 0..units + spares (design notes, section 3):
with f failed, min(units, units + spares - f) operate and each fails at ``failure_rate`` (cold
spares do not fail while waiting), and min(f, crews) repairs run at ``repair_rate`` each. A
shortage is fewer than ``units`` operating, that is more than ``spares`` failed.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from walkmath import checks
from walkmath.continuous import BirthDeath, time_within, times_within

# Largest number of units, of spares and of crews; largest failure or repair rate (per unit time).
POOL_CAP = 100_000
POOL_RATE_CAP = 1e12


@dataclass(frozen=True, eq=False)
class SparesPool:
    """A repairable pool; ``chain`` is the failed-count chain, ``shortage_chain`` the same chain
    stopped at the first shortage (level spares + 1 absorbing)."""

    units: int
    spares: int
    failure_rate: float
    repair_rate: float
    crews: int = 1
    chain: BirthDeath = field(init=False, repr=False)
    shortage_chain: BirthDeath = field(init=False, repr=False)

    def __post_init__(self):
        units = checks.whole("units", self.units, minimum=1, maximum=POOL_CAP)
        spares = checks.whole("spares", self.spares, minimum=0, maximum=POOL_CAP)
        failure_rate = _rate("failure_rate", self.failure_rate)
        repair_rate = _rate("repair_rate", self.repair_rate)
        crews = checks.whole("crews", self.crews, minimum=1, maximum=POOL_CAP)
        failed = np.arange(units + spares + 1)
        operating = np.minimum(units, units + spares - failed)
        birth = failure_rate * operating
        death = repair_rate * np.minimum(failed, crews)
        short = spares + 1
        stopped = death[: short + 1].copy()
        stopped[short] = 0.0  # no repair out of the first shortage: first-passage accounting
        values = {
            "units": units,
            "spares": spares,
            "failure_rate": failure_rate,
            "repair_rate": repair_rate,
            "crews": crews,
            "chain": BirthDeath(birth, death),
            "shortage_chain": BirthDeath(birth[: short + 1], stopped),
        }
        for name, value in values.items():
            object.__setattr__(self, name, value)

    def availability(self) -> float:
        """Long-run P(no shortage) = P(failed <= spares), a sum of product-form terms."""
        return math.fsum(self.chain.steady_state()[: self.spares + 1])

    def unavailability(self) -> float:
        """Long-run P(shortage), summed over the shortage states (not 1 - availability)."""
        return math.fsum(self.chain.steady_state()[self.spares + 1 :])

    def mean_time_to_shortage(self) -> float:
        """Expected time from all good to the first shortage (the pool's MTTF), by the passage recursion."""
        return self.chain.mean_first_passage(0, self.spares + 1)

    def shortage_probability(self, mission_time: float) -> float:
        """P(a shortage at some time in [0, mission_time]) starting with all good.

        The absorbed mass of the stopped chain by uniformization: a sum of non-negative terms, so a
        small risk keeps its relative accuracy (never 1 - survival).
        """
        mission_time = time_within("mission_time", mission_time, self.shortage_chain.longest_time)
        return float(self.shortage_chain.transient_with_bound(0, mission_time).probs[-1])

    def shortage_curve(self, mission_times: Sequence[float]) -> np.ndarray:
        """``shortage_probability`` at each of ``mission_times``, in one uniformization sweep."""
        mission_times = times_within("mission_times", mission_times, self.shortage_chain.longest_time)
        return self.shortage_chain.transient_curve(0, mission_times)[:, -1]


def _rate(name: str, value) -> float:
    message = f"{name} must be a finite number above 0 and at most {POOL_RATE_CAP:g}; got {value!r}"
    try:
        rate = checks.real(name, value, minimum=0.0, maximum=POOL_RATE_CAP, strict_minimum=True)
    except ValueError:
        raise ValueError(message) from None
    return rate
