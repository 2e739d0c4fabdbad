"""Pools of repairable units from a table of rates by level: a birth–death chain with a shortage line.

Level k counts the units failed (or out of service). ``failure_rates[k]`` is the rate k -> k + 1 and
``repair_rates[k]`` the rate k -> k - 1, one of each per level 0..K (the rate up out of K and down
out of 0 are ignored, as in ``BirthDeath``). A shortage is any level at or above ``shortage_at``.
``SparesPool`` is the usual template (units, spares, crews); this class takes any table, for pools
that do not fit it (a repair shop that speeds up when busy, units that fail faster when others are
down).

Every probability is reported beside its complement, each from its own side as a sum of
non-negative terms (availability and unavailability, shortage and no shortage over a mission,
time short and time covered), so a small one keeps its relative accuracy: an unavailability of
1e-12 is summed from the product-form terms of the shortage levels, never 1 - availability.
Every method prices its work with the engine's cost model (``cost``) and refuses it over the
engine's cap before doing any.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from walkmath import checks
from walkmath.continuous import BirthDeath, _rates, time_within, times_within
from walkmath.cost import WORK_CAP, Work
from walkmath.uniformization import (
    STEP_UNITS,
    UNIFORMIZATION_CAP,
    PassageCurve,
    _uniformized,
    absorption_curve,
    occupation,
    passage_steps,
    sweep_units,
    window_steps,
)

POOL_METHODS = ("long_run", "mean_time", "shortage_curve", "shortage_time", "failed_law")
# Work units of the long-run figures, measured: about 0.25 ms of fixed cost (building the pool, its
# checks, a few dozen numpy calls) and 0.3 microseconds a level (logs, exponentials, exact sums);
# and of the mean passage time (a Python loop, about half a microsecond a level).
LONG_RUN_FIXED = 1_250_000
LONG_RUN_UNITS = 1_500
MEAN_TIME_UNITS = 2_500
_KNOB = "shorten the mission, or model fewer units (the work grows with the failures and repairs it can hold)"


@dataclass(frozen=True, eq=False)
class FailedLaw:
    """probs[i, k] = P(k units failed at times[i]), from the stated number failed at time 0.

    ``shortage[i]`` = P(a shortage at times[i]) (the point unavailability) and ``covered[i]`` its
    complement, each summed from its own side.
    """

    times: np.ndarray
    failed: np.ndarray
    probs: np.ndarray
    shortage: np.ndarray
    covered: np.ndarray
    dropped_mass: float  # bound on the Poisson mass left out (at most about 1e-300 a time)


@dataclass(frozen=True)
class TimeSplit:
    """Expected time in shortage and covered within a mission; the two add up to ``mission_time``."""

    mission_time: float
    short: float
    covered: float


@dataclass(frozen=True, eq=False)
class RatePool:
    """A pool stated by its failure and repair rate at each number failed, and where a shortage starts.

    ``chain`` is the failed-count chain; ``shortage_chain`` the same chain stopped at the first
    shortage (levels 0..shortage_at, the last absorbing): first-passage accounting for missions.
    """

    failure_rates: np.ndarray
    repair_rates: np.ndarray
    shortage_at: int
    chain: BirthDeath = field(init=False, repr=False)
    shortage_chain: BirthDeath = field(init=False, repr=False)

    def __post_init__(self):
        failure = _rates("failure_rates", self.failure_rates)
        repair = _rates("repair_rates", self.repair_rates)
        chain = BirthDeath(failure, repair)  # same length, the ignored ends set to 0
        short = checks.whole("shortage_at", self.shortage_at, minimum=1, maximum=chain.top)
        stopped = chain.death[: short + 1].copy()
        stopped[short] = 0.0  # no repair out of the first shortage: first-passage accounting
        values = {
            "failure_rates": chain.birth,
            "repair_rates": chain.death,
            "shortage_at": short,
            "chain": chain,
            "shortage_chain": BirthDeath(chain.birth[: short + 1], stopped),
        }
        for name, value in values.items():
            object.__setattr__(self, name, value)

    @property
    def failed(self) -> np.ndarray:
        """The levels 0..K (units failed)."""
        return self.chain.levels

    # -- cost model ------------------------------------------------------------------------------

    def cost(self, method: str = "long_run", *, times: Sequence[float] | float = 0.0) -> Work:
        """Priced work of ``method`` (``POOL_METHODS``) at the mission time(s) ``times``, before any of it.

        Uniformization is priced the way it runs (``uniformization.sweep_units``): tridiagonal
        updates, or for a small chain the step ladder when that is cheaper, plus the weighting of
        every time asked for; steps counted exactly from the Poisson window each sweep uses.
        Past ``UNIFORMIZATION_CAP`` (gamma x the last time), which no method accepts, the price is
        over ``WORK_CAP`` and counted without building the Poisson window.
        """
        method = checks.choice("method", method, POOL_METHODS)
        levels = self.chain.top + 1
        if method == "long_run":
            return Work(method, levels, 1, LONG_RUN_UNITS, dense=LONG_RUN_FIXED, knob="model fewer units")
        if method == "mean_time":
            return Work(method, self.shortage_at + 1, 1, MEAN_TIME_UNITS, knob="model fewer units")
        moments = np.atleast_1d(np.asarray(times, dtype=float))
        if moments.size == 0 or not np.all(np.isfinite(moments)) or np.any(moments < 0):
            raise ValueError("times must be finite numbers at least 0")
        chain = self.shortage_chain if method == "shortage_curve" else self.chain
        events = chain.uniformization_rate * float(moments.max())
        if method == "shortage_curve":
            levels = self.shortage_at + 1
        if events > UNIFORMIZATION_CAP:
            # past what any method accepts: priced from the window's end (about events + 8 sqrt(events))
            # without building the window, whose ~8 sqrt(events) weights could fill the memory first
            steps = math.ceil(events + 8 * math.sqrt(events)) + 64
            units = max(levels * steps * STEP_UNITS, WORK_CAP + 1)
            return Work(method, levels, steps, STEP_UNITS, copies=0, dense=units, knob=_KNOB)
        if method == "shortage_curve":
            sweeps = passage_steps(chain.uniformization_rate, moments)
            weighted = 0
        else:
            sweeps = [window_steps(events)]
            weighted = 2 if method == "shortage_time" else moments.size
        # the whole price in ``dense``: the sweeps the cheaper way, as they run (uniformization.sweep_units)
        units = sweep_units(levels, sweeps) + weighted * levels * sum(sweeps)
        return Work(method, levels, sum(sweeps), STEP_UNITS, copies=0, dense=units, knob=_KNOB)

    # -- long run --------------------------------------------------------------------------------

    def long_run_law(self) -> np.ndarray:
        """Long-run P(k failed) over levels 0..K, by the product form (``BirthDeath.steady_state``)."""
        self.cost("long_run").check()
        return self.chain.steady_state()

    def availability(self) -> float:
        """Long-run P(no shortage) = P(failed < shortage_at), from the product-form steady state.

        It and ``unavailability`` each come from their own side: the side whose sum of product-form
        terms is at most 1/2 is that sum, the other its complement (which loses nothing once it
        is at least 1/2).
        """
        self.cost("long_run").check()
        return self.chain.steady_state_split(self.shortage_at)[0]

    def unavailability(self) -> float:
        """Long-run P(shortage), summed over the shortage levels while it is at most 1/2: relative
        accuracy about 1e-13 however small (never 1 - availability then)."""
        self.cost("long_run").check()
        return self.chain.steady_state_split(self.shortage_at)[1]

    def availability_split(self) -> tuple[float, float]:
        """(``availability``, ``unavailability``) from one steady state."""
        self.cost("long_run").check()
        return self.chain.steady_state_split(self.shortage_at)

    def expected_failed(self) -> float:
        """Long-run mean number failed: a sum of non-negative terms."""
        law = self.long_run_law()
        return min(float(self.chain.top), math.fsum((law * self.failed).tolist()))  # held at its bound (see there)

    def shortage_frequency(self) -> float:
        """Long-run shortages per unit time: the flow into the first shortage level,
        P(shortage_at - 1 failed) x its failure rate (level-crossing balance of a birth–death chain,
        Kleinrock, Queueing Systems vol. 1, 1975, §3.1)."""
        law = self.long_run_law()
        below = self.shortage_at - 1
        return float(law[below] * self.failure_rates[below])

    def mean_shortage_duration(self) -> float:
        """Mean length of one shortage: the expected time from the first shortage level back to the
        level below it, by the birth–death passage recursion (finite even when the long-run
        chance of a shortage underflows). inf when a shortage is never repaired."""
        self.cost("mean_time").check()
        return self.chain.mean_first_passage(self.shortage_at, self.shortage_at - 1)

    # -- from a given number failed ------------------------------------------------------------

    def mean_time_to_shortage(self, failed: int = 0) -> float:
        """Expected time from ``failed`` units failed to the first shortage (the pool's mean time to
        failure from all good), by the passage recursion; 0 when it starts short, inf when a
        shortage may never come."""
        failed = self._failed(failed)
        if failed >= self.shortage_at:
            return 0.0
        self.cost("mean_time").check()
        return self.chain.mean_first_passage(failed, self.shortage_at)

    def shortage_probability(self, mission_time: float, failed: int = 0) -> float:
        """P(a shortage at some time in [0, mission_time]) from ``failed`` units failed at the start.

        First passage, by uniformization of the stopped chain (``absorption_curve``): the absorbed
        mass while it is at most 1/2, else the complement of the no-shortage side summed directly,
        so either small side keeps its relative accuracy.
        """
        return self.shortage_split(mission_time, failed)[0]

    def no_shortage_probability(self, mission_time: float, failed: int = 0) -> float:
        """P(no shortage at any time in [0, mission_time]) (the mission reliability): the complement of
        ``shortage_probability``, each from its own side."""
        return self.shortage_split(mission_time, failed)[1]

    def shortage_split(self, mission_time: float, failed: int = 0) -> tuple[float, float]:
        """(``shortage_probability``, ``no_shortage_probability``) from one sweep."""
        time = time_within("mission_time", mission_time, self.shortage_chain.longest_time)
        curve = self._passage(np.array([time]), failed)
        return float(curve.reached[0]), float(curve.not_reached[0])

    def shortage_curve(self, mission_times: Sequence[float], failed: int = 0) -> np.ndarray:
        """``shortage_probability`` at each of ``mission_times``: never falls as the time grows.

        Monotone by construction (non-negative increments and factors <= 1, see
        ``absorption_curve``): one sweep carried from each time to the next.
        """
        times = times_within("mission_times", mission_times, self.shortage_chain.longest_time)
        return self._passage(times, failed).reached

    def no_shortage_curve(self, mission_times: Sequence[float], failed: int = 0) -> np.ndarray:
        """``no_shortage_probability`` at each of ``mission_times``: never rises as the time grows."""
        times = times_within("mission_times", mission_times, self.shortage_chain.longest_time)
        return self._passage(times, failed).not_reached

    def mission_curves(self, mission_times: Sequence[float], failed: int = 0) -> PassageCurve:
        """``shortage_curve`` (``.reached``) and ``no_shortage_curve`` (``.not_reached``) from one sweep."""
        times = times_within("mission_times", mission_times, self.shortage_chain.longest_time)
        return self._passage(times, failed)

    def shortage_time(self, mission_time: float, failed: int = 0) -> TimeSplit:
        """Expected time in shortage within [0, mission_time], and covered, from ``failed`` failed.

        Uniformization integrated term by term (``occupation``): each side a sum of non-negative
        terms, so 1e-12 hours short in a year keeps its relative accuracy.
        """
        failed = self._failed(failed)
        time = time_within("mission_time", mission_time, self.chain.longest_time)
        self.cost("shortage_time", times=time).check()
        inside = self.failed >= self.shortage_at
        short, covered, _ = occupation(self.chain, failed, time, inside)
        return TimeSplit(time, short, covered)

    def expected_shortage_time(self, mission_time: float, failed: int = 0) -> float:
        """Expected time in shortage within [0, mission_time] (see ``shortage_time``)."""
        return self.shortage_time(mission_time, failed).short

    def failed_law(self, times: Sequence[float], failed: int = 0) -> FailedLaw:
        """The law of the number failed at each of ``times`` (one uniformization sweep to the last).

        Every entry is a sum of non-negative terms. Memory: len(times) x (K + 1) floats.
        """
        failed = self._failed(failed)
        moments = times_within("times", times, self.chain.longest_time)
        self.cost("failed_law", times=moments).check()
        start = np.zeros(self.chain.top + 1)
        start[failed] = 1.0
        probs, dropped, _ = _uniformized(self.chain, start, moments)
        short = self.shortage_at
        return FailedLaw(
            times=moments,
            failed=self.failed,
            probs=probs,
            shortage=np.minimum(probs[:, short:].sum(axis=1), 1.0),
            covered=np.minimum(probs[:, :short].sum(axis=1), 1.0),
            dropped_mass=float(dropped.max(initial=0.0)),
        )

    # -- helpers ---------------------------------------------------------------------------------

    def _failed(self, failed) -> int:
        return checks.whole("failed", failed, minimum=0, maximum=self.chain.top)

    def _passage(self, times: np.ndarray, failed) -> PassageCurve:
        failed = self._failed(failed)
        if failed >= self.shortage_at:  # short from the start
            return PassageCurve(times, np.ones(times.size), np.zeros(times.size), 0.0, 0)
        self.cost("shortage_curve", times=times).check(WORK_CAP)
        return absorption_curve(self.shortage_chain, failed, times)

    def __repr__(self) -> str:
        return f"RatePool(levels 0..{self.chain.top}, shortage at {self.shortage_at} or more failed)"
