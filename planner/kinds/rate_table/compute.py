"""Run a rate-table pool through walkmath and gather every number its page shows.

Reads only; no database. The job builds the pool once; ``parts`` prices every engine call with the
engine's cost model (``RatePool.cost``) before any of them runs, and ``run`` makes only the calls
the read service allowed. Charts, headline figures and CSV files all read the same
``RateTableResult``, so a download always matches what is on screen.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

import walkmath as wm
from planner.formatting import number
from planner.kinds import Part
from planner.kinds.rate_table import advice
from planner.kinds.rate_table.params import RateTableParams
from planner.pool_words import PER_YEAR, count, duration, meets_availability, share, unit_name
from walkmath.uniformization import PassageCurve

# Points on the mission curves and the failed-unit law: the start and 40 equal steps to the end.
MISSION_STEPS = 40
# Most starting numbers failed the risk-by-start table works out (0 .. this - 1, below the shortage level).
MAX_STARTS = 25
# Repair speeds tried, as multiples of every repair rate in the table (1: as tabled).
REPAIR_SPEEDS = (0.25, 0.5, 0.75, 1.0, 1.25, 1.5, 2.0, 3.0, 4.0, 6.0, 8.0, 10.0)


@dataclass(frozen=True, eq=False)
class SpeedCurve:
    """Long-run and mission figures at each repair speed in ``speeds`` (those worked out, in order).

    Availability never falls and the mission risk never rises as repairs speed up (coupling: faster
    repairs at every number failed can only keep fewer failed); a running maximum (minimum) removes
    rounding ripples, so the curves are monotone by construction.
    """

    speeds: np.ndarray
    availability: np.ndarray
    unavailability: np.ndarray
    risk: np.ndarray
    safe: np.ndarray
    complete: bool  # every speed of ``REPAIR_SPEEDS`` was worked out

    def at(self, speed: float) -> int | None:
        found = np.flatnonzero(self.speeds == speed)
        return int(found[0]) if found.size else None


@dataclass(frozen=True, eq=False)
class RateTableResult:
    params: RateTableParams
    risk_target: float
    pool: wm.RatePool
    availability: float
    unavailability: float
    long_run_law: np.ndarray
    expected_failed: float
    shortage_frequency: float
    mean_shortage_duration: float
    mean_time_to_shortage: float
    times: np.ndarray
    mission: PassageCurve  # over ``times``: .reached (shortage by then), .not_reached
    failed_law: wm.FailedLaw
    time_split: wm.TimeSplit
    by_start: dict | None  # {"failed", "risk", "safe", "mean_time"} arrays; None when left out
    speeds: SpeedCurve | None  # None when not even the first speed fitted this request
    left_out: tuple[str, ...] = field(default=())

    @property
    def unit(self) -> str:
        return self.params.time_unit

    @property
    def mission_risk(self) -> float:
        return float(self.mission.reached[-1])

    @property
    def mission_safe(self) -> float:
        return float(self.mission.not_reached[-1])

    @property
    def availability_target(self) -> float:
        return self.params.availability_target

    @property
    def meets_availability(self) -> bool:
        return meets_availability(self.availability, self.unavailability, self.availability_target)

    @property
    def meets_risk(self) -> bool:
        return self.mission_risk <= self.risk_target

    @property
    def speed_needed(self) -> float | None:
        """Slowest repair speed tried (times the table's repair rates) meeting both targets; None when
        none of those worked out does."""
        curve = self.speeds
        if curve is None:
            return None
        for index, speed in enumerate(curve.speeds):
            long_run_ok = meets_availability(
                curve.availability[index], curve.unavailability[index], self.availability_target
            )
            if long_run_ok and curve.risk[index] <= self.risk_target:
                return float(speed)
        return None

    @property
    def recommendation(self) -> str:
        return advice.recommendation(self)

    # -- the same in words, for the headline ---------------------------------------------------------

    @property
    def span(self) -> str:
        return duration(self.params.mission, self.unit)

    @property
    def start_words(self) -> str:
        """'every unit in working order' or '1 unit failed'."""
        start = self.params.start_failed
        return "every unit in working order" if start == 0 else f"{count(start, 'unit')} already failed"

    @property
    def unit_many(self) -> str:
        return unit_name(self.unit, 2)

    @property
    def speeds_note(self) -> str:
        """Which repair speeds the figure comes from, in a few words."""
        curve = self.speeds
        if curve is None:
            return "not worked out in this request (too much work)"
        tried = f"{number(float(curve.speeds[0]))} to {number(float(curve.speeds[-1]))}"
        reach = "" if curve.complete else " (as far as worked out)"
        return f"the slowest of {tried} times the table's repair rates{reach}"

    @property
    def availability_words(self) -> str:
        return share(self.availability)

    @property
    def availability_target_words(self) -> str:
        return share(self.availability_target)

    @property
    def mttf_words(self) -> str:
        return duration(self.mean_time_to_shortage, self.unit)

    @property
    def duration_words(self) -> str:
        return duration(self.mean_shortage_duration, self.unit)

    @property
    def time_short_words(self) -> str:
        return duration(self.time_split.short, self.unit)

    @property
    def shortages_per_year(self) -> float:
        return self.shortage_frequency * PER_YEAR[self.unit]


class RateTableJob:
    """One request's work on one pool: the pool built once, each engine call priced first."""

    def __init__(self, params: RateTableParams, risk_target: float, overflow_target: float = 0.05):
        self.params = params
        self.risk_target = risk_target
        self.pool = params.pool()
        self.times = np.linspace(0.0, params.mission, MISSION_STEPS + 1)
        self.starts = np.arange(min(params.shortage_at, MAX_STARTS))

    def _speed_price(self, speed: float) -> int:
        """Price of one repair speed's figures: its long-run figures and its mission risk."""
        pool = self.params.pool(repair_speed=speed)
        return pool.cost("long_run").units + pool.cost("shortage_curve", times=self.params.mission).units

    def parts(self) -> list[Part]:
        """Every engine call the page makes, priced by ``RatePool.cost``.

        The risk by units failed at the start is optional at its fixed price; the figures by repair
        speed stop themselves at their budget, slowest speed first.
        """
        pool, mission = self.pool, self.params.mission
        one_start = pool.cost("shortage_curve", times=mission).units + pool.cost("mean_time").units
        return [
            Part("long_run", pool.cost("long_run").units + 2 * pool.cost("mean_time").units),
            Part("mission", pool.cost("shortage_curve", times=self.times).units),
            Part("failed_law", pool.cost("failed_law", times=self.times).units),
            Part("shortage_time", pool.cost("shortage_time", times=mission).units),
            Part("by_start", len(self.starts) * one_start, required=False),
            Part("speeds", sum(self._speed_price(speed) for speed in REPAIR_SPEEDS), required=False, stops_itself=True),
        ]

    def refusal(self, units: int, cap: int) -> str:
        """Why the page is refused, in the planner's words, naming what to change."""
        events = self.pool.chain.uniformization_rate * self.params.mission
        return (
            f"This pool is too large to work out in one request: {self.params.top + 1:,} rows, with up to about "
            f"{number(events)} failures and repairs within a mission of {self.span_words()} (about "
            f"{number(units / cap)} times this server's limit). To fit, shorten the mission or plan the pool in "
            "smaller groups."
        )

    def span_words(self) -> str:
        return duration(self.params.mission, self.params.time_unit)

    def headline(self) -> tuple[float, str]:
        """The shortage risk over the mission from its start (one sweep), stored with the pool."""
        risk, _ = self.pool.shortage_split(self.params.mission, failed=self.params.start_failed)
        return risk, self.span_words()

    def run(self, allowed: dict[str, int]) -> RateTableResult:
        """Every figure of the page; optional parts not in ``allowed`` are left out with a note."""
        params, pool, start = self.params, self.pool, self.params.start_failed
        left_out = []
        by_start = self._by_start() if "by_start" in allowed else None
        if by_start is None:
            left_out.append("the mission risk by units already failed at the start (too much work for one request)")
        speeds = self._speeds(allowed.get("speeds", 0))
        if speeds is None or not speeds.complete:
            left_out.append("part of the figures by repair speed (too much work for one request)")
        availability, unavailability = pool.availability_split()
        return RateTableResult(
            params=params,
            risk_target=self.risk_target,
            pool=pool,
            availability=availability,
            unavailability=unavailability,
            long_run_law=pool.long_run_law(),
            expected_failed=pool.expected_failed(),
            shortage_frequency=pool.shortage_frequency(),
            mean_shortage_duration=pool.mean_shortage_duration(),
            mean_time_to_shortage=pool.mean_time_to_shortage(start),
            times=self.times,
            mission=pool.mission_curves(self.times, start),
            failed_law=pool.failed_law(self.times, start),
            time_split=pool.shortage_time(params.mission, start),
            by_start=by_start,
            speeds=speeds,
            left_out=tuple(left_out),
        )

    def _by_start(self) -> dict:
        risk, safe, mean_time = [], [], []
        for failed in self.starts.tolist():
            shortage, no_shortage = self.pool.shortage_split(self.params.mission, failed=failed)
            risk.append(shortage)
            safe.append(no_shortage)
            mean_time.append(self.pool.mean_time_to_shortage(failed=failed))
        return {"failed": self.starts, "risk": np.array(risk), "safe": np.array(safe), "mean_time": np.array(mean_time)}

    def _speeds(self, budget: int) -> SpeedCurve | None:
        """Figures at each repair speed, slowest first, each priced before it runs, while ``budget`` lasts."""
        rows = []
        for speed in REPAIR_SPEEDS:
            price = self._speed_price(speed)
            if price > budget:
                break
            budget -= price
            pool = self.params.pool(repair_speed=speed)
            shortage, no_shortage = pool.shortage_split(self.params.mission, failed=self.params.start_failed)
            rows.append((speed, *pool.availability_split(), shortage, no_shortage))
        if not rows:
            return None
        speeds, availability, unavailability, risk, safe = (np.array(column) for column in zip(*rows, strict=True))
        return SpeedCurve(
            speeds=speeds,
            availability=np.maximum.accumulate(availability),
            unavailability=np.minimum.accumulate(unavailability),
            risk=np.minimum.accumulate(risk),
            safe=np.maximum.accumulate(safe),
            complete=len(rows) == len(REPAIR_SPEEDS),
        )
