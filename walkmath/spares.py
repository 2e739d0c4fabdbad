"""Spares pool: ``units`` must operate, ``spares`` wait on standby, ``crews`` repair in parallel.

The number of failed units is a birth–death chain on 0..units + spares (design notes, section 3):
with k failed, min(units, units + spares - k) operate and each fails at ``failure_rate``;
max(0, spares - k) wait on standby and each fails at ``warm_failure_rate`` (0: cold spares, which
do not fail while waiting; equal to ``failure_rate``: hot spares); min(k, crews) repairs run at
``repair_rate`` each, and a repaired unit is as good as new. A shortage is fewer than ``units``
operating, that is more than ``spares`` failed.

Every figure comes from ``walkmath.pools.RatePool`` on these rates: each probability with its
complement, each from its own side (availability / unavailability, shortage / no shortage over a
mission, time short / time covered). Curves over mission times are monotone by construction.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from walkmath import checks
from walkmath.continuous import BirthDeath
from walkmath.cost import Work
from walkmath.pools import FailedLaw, RatePool, TimeSplit
from walkmath.uniformization import PassageCurve

# Largest number of units, of spares and of crews; largest failure or repair rate (per unit time).
POOL_CAP = 100_000
POOL_RATE_CAP = 1e12


@dataclass(frozen=True, eq=False)
class SparesPool:
    """A repairable pool; ``chain`` is the failed-count chain, ``shortage_chain`` the same chain
    stopped at the first shortage (level spares + 1 absorbing), ``rates`` the ``RatePool`` behind
    every figure."""

    units: int
    spares: int
    failure_rate: float
    repair_rate: float
    crews: int = 1
    warm_failure_rate: float = 0.0
    rates: RatePool = field(init=False, repr=False)
    chain: BirthDeath = field(init=False, repr=False)
    shortage_chain: BirthDeath = field(init=False, repr=False)

    def __post_init__(self):
        units = checks.whole("units", self.units, minimum=1, maximum=POOL_CAP)
        spares = checks.whole("spares", self.spares, minimum=0, maximum=POOL_CAP)
        failure_rate = _rate("failure_rate", self.failure_rate)
        repair_rate = _rate("repair_rate", self.repair_rate)
        crews = checks.whole("crews", self.crews, minimum=1, maximum=POOL_CAP)
        warm = _warm_rate(self.warm_failure_rate, failure_rate)
        rates = RatePool(*pool_rates(units, spares, failure_rate, repair_rate, crews, warm), shortage_at=spares + 1)
        values = {
            "units": units,
            "spares": spares,
            "failure_rate": failure_rate,
            "repair_rate": repair_rate,
            "crews": crews,
            "warm_failure_rate": warm,
            "rates": rates,
            "chain": rates.chain,
            "shortage_chain": rates.shortage_chain,
        }
        for name, value in values.items():
            object.__setattr__(self, name, value)

    @property
    def standby(self) -> str:
        """'cold' (waiting spares do not fail), 'hot' (they fail as if operating) or 'warm'."""
        if self.warm_failure_rate == 0:
            return "cold"
        return "hot" if self.warm_failure_rate == self.failure_rate else "warm"

    @property
    def operating(self) -> np.ndarray:
        """Units operating with k failed, k = 0..units + spares."""
        failed = self.rates.failed
        return np.minimum(self.units, self.units + self.spares - failed)

    def cost(self, method: str = "long_run", *, times: Sequence[float] | float = 0.0) -> Work:
        """Priced work of a figure before any of it (``RatePool.cost``)."""
        return self.rates.cost(method, times=times)

    # -- long run ----------------------------------------------------------------------------------

    def availability(self) -> float:
        """Long-run P(no shortage) = P(failed <= spares), from the product-form steady state.

        It and ``unavailability`` each come from their own side (a sum of non-negative terms) while
        that side is at most 1/2; the other is its complement, so the two add up to 1.
        """
        return self.rates.availability()

    def unavailability(self) -> float:
        """Long-run P(shortage), summed over the shortage states while it is at most 1/2 (never
        1 - availability then): relative accuracy about 1e-13 however small."""
        return self.rates.unavailability()

    def availability_split(self) -> tuple[float, float]:
        """(``availability``, ``unavailability``) from one steady state."""
        return self.rates.availability_split()

    def expected_operating(self) -> float:
        """Long-run mean number of units operating (at most ``units``): a sum of non-negative terms."""
        law = self.rates.long_run_law()
        # the law sums to 1 within an ulp or two, so the mean is held at its bound
        return min(float(self.units), math.fsum((law * self.operating).tolist()))

    def expected_units_short(self) -> float:
        """Long-run mean number of units missing from the ``units`` needed, E[(failed - spares)+],
        summed from its own side (never units - expected operating)."""
        law = self.rates.long_run_law()
        short = self.rates.failed[self.spares + 1 :] - self.spares
        return min(float(self.units), math.fsum((law[self.spares + 1 :] * short).tolist()))

    def shortage_frequency(self) -> float:
        """Long-run shortages per unit time (``RatePool.shortage_frequency``)."""
        return self.rates.shortage_frequency()

    def mean_shortage_duration(self) -> float:
        """Mean length of one shortage (``RatePool.mean_shortage_duration``)."""
        return self.rates.mean_shortage_duration()

    # -- from a given number failed (all good unless stated) ----------------------------------------

    def mean_time_to_shortage(self, failed: int = 0) -> float:
        """Expected time from ``failed`` units failed (all good by default) to the first shortage (the
        pool's MTTF), by the passage recursion."""
        return self.rates.mean_time_to_shortage(failed)

    def shortage_probability(self, mission_time: float, failed: int = 0) -> float:
        """P(a shortage at some time in [0, mission_time]) from ``failed`` units failed at the start.

        By uniformization of the stopped chain (``absorption_curve``): the absorbed mass while it is
        at most 1/2, else 1 - P(no shortage) with that side summed directly, so either small side
        keeps its relative accuracy (never 1 - something near 1).
        """
        return self.rates.shortage_probability(mission_time, failed)

    def no_shortage_probability(self, mission_time: float, failed: int = 0) -> float:
        """P(no shortage at any time in [0, mission_time]) (mission reliability); the complement of
        ``shortage_probability``, each from its own side."""
        return self.rates.no_shortage_probability(mission_time, failed)

    def shortage_split(self, mission_time: float, failed: int = 0) -> tuple[float, float]:
        """(``shortage_probability``, ``no_shortage_probability``) from one sweep."""
        return self.rates.shortage_split(mission_time, failed)

    def shortage_curve(self, mission_times: Sequence[float], failed: int = 0) -> np.ndarray:
        """``shortage_probability`` at each of ``mission_times``: never falls as the time grows.

        Monotone by construction (non-negative increments and factors <= 1, see
        ``absorption_curve``): one uniformization sweep carried from each time to the next. Cost:
        about gamma x the longest time, plus 100 to 250 updates of the spares + 2 levels per time.
        """
        return self.rates.shortage_curve(mission_times, failed)

    def no_shortage_curve(self, mission_times: Sequence[float], failed: int = 0) -> np.ndarray:
        """``no_shortage_probability`` at each of ``mission_times``: never rises as the time grows."""
        return self.rates.no_shortage_curve(mission_times, failed)

    def mission_curves(self, mission_times: Sequence[float], failed: int = 0) -> PassageCurve:
        """Both mission curves from one sweep (``RatePool.mission_curves``)."""
        return self.rates.mission_curves(mission_times, failed)

    def shortage_time(self, mission_time: float, failed: int = 0) -> TimeSplit:
        """Expected time short and covered within the mission (``RatePool.shortage_time``)."""
        return self.rates.shortage_time(mission_time, failed)

    def expected_shortage_time(self, mission_time: float, failed: int = 0) -> float:
        """Expected time in shortage within [0, mission_time], each side summed on its own."""
        return self.rates.expected_shortage_time(mission_time, failed)

    def failed_law(self, times: Sequence[float], failed: int = 0) -> FailedLaw:
        """The law of the number failed at each of ``times`` (``RatePool.failed_law``)."""
        return self.rates.failed_law(times, failed)


def pool_rates(
    units: int, spares: int, failure_rate: float, repair_rate: float, crews: int, warm_failure_rate: float
) -> tuple[np.ndarray, np.ndarray]:
    """Failure and repair rate with k = 0..units + spares failed (design notes, section 3)."""
    failed = np.arange(units + spares + 1)
    operating = np.minimum(units, units + spares - failed)
    waiting = np.maximum(0, spares - failed)
    return failure_rate * operating + warm_failure_rate * waiting, repair_rate * np.minimum(failed, crews)


def _rate(name: str, value) -> float:
    message = f"{name} must be a finite number above 0 and at most {POOL_RATE_CAP:g}; got {value!r}"
    try:
        rate = checks.real(name, value, minimum=0.0, maximum=POOL_RATE_CAP, strict_minimum=True)
    except ValueError:
        raise ValueError(message) from None
    return rate


def _warm_rate(value, failure_rate: float) -> float:
    """A waiting spare's failure rate: from 0 (cold) to the operating ``failure_rate`` (hot)."""
    message = (
        f"warm_failure_rate must be a finite number from 0 (cold spares) to failure_rate ({failure_rate:g}, "
        f"hot spares); got {value!r}"
    )
    try:
        return checks.real("warm_failure_rate", value, minimum=0.0, maximum=failure_rate)
    except ValueError:
        raise ValueError(message) from None
