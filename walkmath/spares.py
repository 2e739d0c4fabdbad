"""Spares pool: ``units`` must operate, ``spares`` wait cold, ``crews`` repair in parallel.

The number of failed units is a birth–death chain on 0..units + spares (design notes, section 3):
with f failed, min(units, units + spares - f) operate and each fails at ``failure_rate`` (cold
spares do not fail while waiting), and min(f, crews) repairs run at ``repair_rate`` each. A
shortage is fewer than ``units`` operating, that is more than ``spares`` failed.

Each probability is reported with its complement available (availability / unavailability,
shortage / no shortage over a mission): the side at most 1/2 is summed from its own non-negative
terms, the other is 1 minus it. Curves over mission times are monotone by construction.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from walkmath import checks
from walkmath.continuous import BirthDeath, time_within, times_within
from walkmath.uniformization import PassageCurve, absorption_curve

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
        """Long-run P(no shortage) = P(failed <= spares), from the product-form steady state.

        It and ``unavailability`` each come from their own side (a sum of non-negative terms) while
        that side is at most 1/2; the other is its complement, so the two add up to 1.
        """
        return self.chain.steady_state_split(self.spares + 1)[0]

    def unavailability(self) -> float:
        """Long-run P(shortage), summed over the shortage states while it is at most 1/2 (never
        1 - availability then): relative accuracy about 1e-13 however small."""
        return self.chain.steady_state_split(self.spares + 1)[1]

    def mean_time_to_shortage(self) -> float:
        """Expected time from all good to the first shortage (the pool's MTTF), by the passage recursion."""
        return self.chain.mean_first_passage(0, self.spares + 1)

    def shortage_probability(self, mission_time: float) -> float:
        """P(a shortage at some time in [0, mission_time]) starting with all good.

        By uniformization of the stopped chain (``absorption_curve``): the absorbed mass while it is
        at most 1/2, else 1 - P(no shortage) with that side summed directly, so either small side
        keeps its relative accuracy (never 1 - something near 1).
        """
        return float(self._at(mission_time).reached[0])

    def no_shortage_probability(self, mission_time: float) -> float:
        """P(no shortage at any time in [0, mission_time]) starting with all good (mission reliability).

        The complement of ``shortage_probability``, each from its own side (see there).
        """
        return float(self._at(mission_time).not_reached[0])

    def shortage_curve(self, mission_times: Sequence[float]) -> np.ndarray:
        """``shortage_probability`` at each of ``mission_times``: never falls as the time grows.

        Monotone by construction (non-negative increments and factors <= 1, see
        ``absorption_curve``): one uniformization sweep carried from each time to the next. Cost:
        about gamma x the longest time, plus 100 to 250 updates of the spares + 2 levels per time.
        """
        return self._over(mission_times).reached

    def no_shortage_curve(self, mission_times: Sequence[float]) -> np.ndarray:
        """``no_shortage_probability`` at each of ``mission_times``: never rises as the time grows."""
        return self._over(mission_times).not_reached

    def _at(self, mission_time) -> PassageCurve:
        time = time_within("mission_time", mission_time, self.shortage_chain.longest_time)
        return absorption_curve(self.shortage_chain, 0, np.array([time]))

    def _over(self, mission_times) -> PassageCurve:
        times = times_within("mission_times", mission_times, self.shortage_chain.longest_time)
        return absorption_curve(self.shortage_chain, 0, times)


def _rate(name: str, value) -> float:
    message = f"{name} must be a finite number above 0 and at most {POOL_RATE_CAP:g}; got {value!r}"
    try:
        rate = checks.real(name, value, minimum=0.0, maximum=POOL_RATE_CAP, strict_minimum=True)
    except ValueError:
        raise ValueError(message) from None
    return rate
