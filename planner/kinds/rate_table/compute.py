"""A rate-table pool's job and result: the figures every pool shows (``planner.pool_job``) and this
kind's own, the long-run law by number failed and the figures at a ladder of repair speeds.

The pool is built once from the table; every engine call is priced before it runs, and the page,
its what-ifs and its CSV files all read one ``RateTableResult``.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

import walkmath as wm
from planner.formatting import number
from planner.kinds import Part
from planner.kinds.rate_table import advice
from planner.kinds.rate_table.params import RateTableParams
from planner.pool_job import BY_START_LEFT_OUT, PoolJob
from planner.pool_result import PoolResult
from planner.pool_words import count, meets_availability

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
class RateTableResult(PoolResult):
    pool: wm.RatePool
    long_run_law: np.ndarray  # the long-run share of time at each number failed
    expected_failed: float
    speeds: SpeedCurve | None  # None when not even the first speed fitted this request
    left_out: tuple[str, ...] = field(default=())

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
    def shortage_at(self) -> int:
        return self.params.shortage_at

    @property
    def shortage_words(self) -> str:
        return f"{self.params.shortage_at} or more failed"

    @property
    def start_words(self) -> str:
        """'every unit in working order' or '1 unit failed'."""
        start = self.params.start_failed
        return "every unit in working order" if start == 0 else f"{count(start, 'unit')} already failed"

    @property
    def speeds_note(self) -> str:
        """Which repair speeds the figure comes from, in a few words."""
        curve = self.speeds
        if curve is None:
            return "not worked out in this request (too much work)"
        tried = f"{number(float(curve.speeds[0]))} to {number(float(curve.speeds[-1]))}"
        reach = "" if curve.complete else " (as far as worked out)"
        return f"the slowest of {tried} times the table's repair rates{reach}"


class RateTableJob(PoolJob):
    """One request's work on one pool: the pool built once, each engine call priced first."""

    def __init__(self, params: RateTableParams, risk_target: float, overflow_target: float = 0.05):
        super().__init__(params, risk_target, params.pool(), start=params.start_failed)
        self.pool = self.rates
        self.size_words = f"{params.top + 1:,} rows"
        self._by_speed: dict[float, tuple[wm.RatePool, int]] = {}  # speed -> (pool, price): priced, then run

    def _speed_pool(self, speed: float) -> tuple[wm.RatePool, int]:
        """One repair speed's pool and the price of its figures (its long-run figures and its mission risk),
        built once a request: ``parts`` prices them and ``run`` works out those that fit."""
        if speed not in self._by_speed:
            pool = self.params.pool(repair_speed=speed)
            price = pool.cost("long_run").units + pool.cost("shortage_curve", times=self.params.mission).units
            self._by_speed[speed] = pool, price
        return self._by_speed[speed]

    def _speed_price(self, speed: float) -> int:
        """Price of one repair speed's figures: its long-run figures and its mission risk."""
        return self._speed_pool(speed)[1]

    def parts(self) -> list[Part]:
        """Every engine call the page makes, priced by ``RatePool.cost`` (``PoolJob.shared_parts``),
        then the figures by repair speed, which stop themselves at their budget, slowest speed first."""
        speeds = sum(self._speed_price(speed) for speed in REPAIR_SPEEDS)
        return [*self.shared_parts(), Part("speeds", speeds, required=False, stops_itself=True)]

    def run(self, allowed: dict[str, int]) -> RateTableResult:
        """Every figure of the page; optional parts not in ``allowed`` are left out with a note."""
        shared = self.shared_figures(allowed)
        speeds = self._speeds(allowed.get("speeds", 0))
        self.part_done("speeds")
        left_out = [BY_START_LEFT_OUT] if shared["by_start"] is None else []
        if speeds is None or not speeds.complete:
            left_out.append("part of the figures by repair speed (too much work for one request)")
        return RateTableResult(
            **shared,
            pool=self.pool,
            long_run_law=self.pool.long_run_law(),
            expected_failed=self.pool.expected_failed(),
            speeds=speeds,
            left_out=tuple(left_out),
        )

    def _speeds(self, budget: int) -> SpeedCurve | None:
        """Figures at each repair speed, slowest first, each priced before it runs, while ``budget`` lasts."""
        rows = []
        for speed in REPAIR_SPEEDS:
            pool, price = self._speed_pool(speed)
            if price > budget:
                break
            budget -= price
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
