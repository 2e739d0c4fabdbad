"""Run a stock plan through walkmath and gather every number its page shows.

Reads only; no database. The job builds the plan's laws and its walk once;
``parts`` prices every engine call with the engine's cost model before any of
them runs, and ``run`` makes only the calls the read service allowed. Charts,
headline figures and CSV files all read the same ``StockResult``, so a
download always matches what is on screen.
"""

from __future__ import annotations

import contextlib
import functools
import math
from dataclasses import dataclass, field

import numpy as np

import walkmath as wm
from planner.formatting import period_name, periods, units
from planner.kinds import Job, Part
from planner.kinds.stock_plan.params import StockPlanParams
from planner.kinds.stock_plan.words import ABOVE_SHORT, BELOW_SHORT

# Largest stock-by-period table a request keeps (levels x periods floats; 4e6 cells = 32 MB).
MAX_LEVEL_CELLS = 4_000_000
# Price of the normal comparison per level it covers, in work units: measured about 1 microsecond a level
# (log_ndtr on both tails), at the roughly 1e9 units a second the engine's sweeps run here.
NORMAL_UNITS_PER_LEVEL = 1_000


@dataclass(frozen=True)
class SizingAnswer:
    """Smallest start stock (or capacity) meeting one target, or the best achievable and what would meet it."""

    value: int | None
    target: float
    best_risk: float | None = None  # when unmet: the lowest risk any size tried reaches
    best_at: int | None = None  # ... and the size that reaches it
    advice: str = ""


@dataclass(frozen=True, eq=False)
class StockResult:
    params: StockPlanParams
    stockout_target: float
    overflow_target: float
    laws: tuple[wm.StepLaw, ...]
    outlook: wm.Outlook
    start_risk: wm.StartRisk
    start_answer: SizingAnswer
    capacity_answer: SizingAnswer | None  # None without a capacity
    both_answer: SizingAnswer | None  # smallest start meeting both targets at this capacity
    mean_periods_to_stockout: float | None  # None when left out of this request
    normal_final: wm.LevelDistribution | None  # None when left out (a very wide free-walk law)
    left_out: tuple[str, ...] = field(default=())  # notes on optional figures this request could not afford

    @functools.cached_property
    def normal_stockout(self) -> np.ndarray:
        """The normal approximation's stock-out curve over the horizon, worked out on first use: only the
        risk-curves CSV shows it, so pages and what-ifs (which show no CSV) do not pay for it."""
        params = self.params
        curve = wm.normal_stockout_curve(list(self.laws), start=params.start, low=params.low, horizon=params.horizon)
        return np.asarray(curve)

    @property
    def horizon(self) -> int:
        return self.params.horizon

    @property
    def period(self) -> str:
        return self.params.period

    @property
    def periods(self) -> np.ndarray:
        return np.arange(self.horizon + 1)

    @property
    def stockout_risk(self) -> float:
        return float(self.outlook.stockout[-1])

    @property
    def overflow_risk(self) -> float | None:
        return float(self.outlook.overflow[-1]) if self.params.high is not None else None

    @property
    def lost_units(self) -> float | None:
        """Expected demand lost over the horizon (unmet demand lost only)."""
        return math.fsum(self.outlook.lost_units[1:]) if self.params.below == "lost" else None

    @property
    def spilled_units(self) -> float | None:
        """Expected units spilled or turned away over the horizon (with a capacity that spills)."""
        if self.params.above != "spill" or self.params.high is None:
            return None
        return math.fsum(self.outlook.spilled_units[1:])

    @property
    def stockout_periods(self) -> float:
        return float(self.outlook.stockout_periods[-1])

    @property
    def meets_stockout_target(self) -> bool:
        return self.stockout_risk <= self.stockout_target

    @property
    def meets_overflow_target(self) -> bool | None:
        return None if self.overflow_risk is None else self.overflow_risk <= self.overflow_target

    @property
    def cycle_mean(self) -> float:
        """Mean change per period, averaged over the repeating cycle (units per period)."""
        return math.fsum(law.mean for law in self.laws) / len(self.laws)

    @property
    def level_probs(self) -> np.ndarray:
        """P(stock at period n = level, still counted): a second sweep on first access."""
        return self.outlook.level_probs

    @property
    def unmet_words(self) -> str:
        return BELOW_SHORT.get(self.params.below, self.params.below)

    @property
    def excess_words(self) -> str:
        return ABOVE_SHORT.get(self.params.above, self.params.above)

    @property
    def span(self) -> str:
        return periods(self.horizon, self.period)


class StockJob(Job):
    """One request's work on one plan: laws and walk built once, each engine call priced first."""

    def __init__(self, params: StockPlanParams, stockout_target: float, overflow_target: float):
        self.params = params
        self.stockout_target = stockout_target
        self.overflow_target = overflow_target
        self.laws = tuple(params.step_laws())
        self.walk = params.walk(list(self.laws))
        self._works: dict[str, wm.cost.Work] = {}

    def _work(self, method: str):
        if method not in self._works:
            self._works[method] = self.walk.cost(self.params.horizon, method)
        return self._works[method]

    def parts(self) -> list[Part]:
        """Every engine call the page makes, priced by ``walk.cost`` (level·period·jump units).

        The stock-by-period table is also bounded in memory (``MAX_LEVEL_CELLS``): over it the
        request is refused here, before any work.
        """
        table = self._work("level_probs")
        cells = table.levels * (table.periods + 1)
        if cells > MAX_LEVEL_CELLS:
            raise wm.ComputeTooLarge(
                f"This plan is too large to show in one request: its stock-by-{period_name(self.params.period)} "
                f"table would hold {cells:,} cells ({table.levels:,} stock levels over "
                f"{periods(self.params.horizon, self.params.period)}; at most {MAX_LEVEL_CELLS:,}). "
                f"To fit, {self._advice(table)}."
            )
        parts = [
            Part("outlook", self._work("level_probs").units),  # one sweep keeping every period
            Part("risk_by_start", self._work("risk_by_start").units),
        ]
        if self.params.high is not None:
            search = self._work("smallest_capacity").units
            parts.append(Part("smallest_capacity", search, required=False, stops_itself=True))
            if self.params.above == "spill":
                # Only run when the stock-out target is out of reach: the capacity that would meet it.
                parts.append(Part("capacity_for_stockout", search, required=False, stops_itself=True))
        parts.append(Part("mean_time", self._work("mean_time").units, required=False))
        parts.append(Part("normal_levels", self._normal_levels() * NORMAL_UNITS_PER_LEVEL, required=False))
        return parts

    def _normal_levels(self) -> int:
        """Levels the normal comparison covers: every level the walk could reach with no floor or capacity."""
        cycles, rest = divmod(self.params.horizon, len(self.laws))
        return 1 + sum((cycles + (index < rest)) * (law.highest - law.lowest) for index, law in enumerate(self.laws))

    def refusal(self, units: int, cap: int) -> str:
        """Why the page is refused, in the analyst's words, naming what to shorten."""
        work = max((self._work(m) for m in ("outlook", "risk_by_start")), key=lambda w: w.units)
        period = self.params.period
        return (
            f"This plan is too large to work out in one request: the stock could take {work.levels:,} levels "
            f"over {periods(work.periods, period)}, with up to {work.jumps:,} possible changes per "
            f"{period_name(period)} (about {units / cap:.1f} times this server's limit). To fit, {self._advice(work)}."
        )

    def _advice(self, work) -> str:
        advice = []
        if self.params.high is None:
            advice.append("set a capacity")
        advice.append(f"shorten the horizon (now {periods(self.params.horizon, self.params.period)})")
        if work.jumps > 50:
            advice.append("count in larger units (crates rather than loaves)")
        elif self.params.high is not None:
            advice.append("lower the capacity")
        return ", ".join(advice[:-1]) + " or " + advice[-1]

    def headline(self) -> tuple[float, str]:
        """The stock-out risk over the horizon (one forward sweep) and that horizon, stored with the plan."""
        risk = float(self.walk.outlook(self.params.horizon).stockout[-1])
        return risk, periods(self.params.horizon, self.params.period)

    def headline_of(self, result: StockResult) -> tuple[float, str]:
        """The same figure off a finished result (its outlook is the headline's sweep, keeping every period)."""
        return result.stockout_risk, result.span

    def run(self, allowed: dict[str, int]) -> StockResult:
        """Every figure of the page; optional parts not in ``allowed`` (name -> budget) are left out with a note."""
        params, walk, horizon = self.params, self.walk, self.params.horizon
        outlook = walk.outlook(horizon, keep_levels=True)  # the heat map reads every period
        self.part_done("outlook")
        start_risk = walk.risk_by_start(horizon)
        self.part_done("risk_by_start")
        left_out = []
        capacity_answer = both_answer = None
        if params.high is not None:
            if "smallest_capacity" in allowed:
                capacity_answer = self._capacity_answer(allowed["smallest_capacity"], start_risk)
                self.part_done("smallest_capacity")
            if capacity_answer is None:
                left_out.append("the smallest capacity for the overflow target (too large a search for one request)")
            both_answer = self._start_answer(start_risk, both=True)
        normal_final = None
        if "normal_levels" in allowed:
            with contextlib.suppress(ValueError):  # wider than the engine's own limit for this comparison
                normal_final = wm.normal_level_distribution(list(self.laws), steps=horizon, start=params.start)
            self.part_done("normal_levels")
        if normal_final is None:
            left_out.append(f"the normal approximation of the stock on {period_name(params.period)} {horizon}")
        mean_time = None
        if "mean_time" in allowed:
            mean_time = walk.mean_periods_to_stockout()
            self.part_done("mean_time")
        else:
            why = "set a capacity" if params.high is None else "too large a solve for one request"
            left_out.append(f"the expected {period_name(params.period, 2)} to the first stock-out ({why})")
        start_answer = self._start_answer(start_risk, budget=allowed.get("capacity_for_stockout", 0))
        if "capacity_for_stockout" in allowed:
            self.part_done("capacity_for_stockout")  # run, or not needed: the target is within reach
        return StockResult(
            params=params,
            stockout_target=self.stockout_target,
            overflow_target=self.overflow_target,
            laws=self.laws,
            outlook=outlook,
            start_risk=start_risk,
            start_answer=start_answer,
            capacity_answer=capacity_answer,
            both_answer=both_answer,
            mean_periods_to_stockout=mean_time,
            normal_final=normal_final,
            left_out=tuple(left_out),
        )

    def _start_answer(self, risk: wm.StartRisk, *, both: bool = False, budget: int = 0) -> SizingAnswer:
        """Smallest start stock meeting the stock-out target (and, with ``both``, the overflow target).

        When none does and a ``budget`` is given, a capacity search says what capacity would meet it.
        """
        overflow_target = self.overflow_target if both else None
        value = risk.smallest_meeting(self.stockout_target, overflow_target)
        if value is not None:
            return SizingAnswer(value=value, target=self.stockout_target)
        combined = np.maximum(risk.stockout, risk.overflow) if both else risk.stockout
        best = int(np.argmin(combined))
        low, top = int(risk.starts[0]), int(risk.starts[-1])
        if both:
            advice = (
                f"No start stock from {low} to {top} units meets both targets at this capacity: a higher start "
                "lowers the stock-out risk but raises the overflow risk. Raise the capacity, or relax one target."
            )
        else:
            advice = (
                f"No start stock from {low} to {top} units meets the stock-out target over "
                f"{periods(self.params.horizon, self.params.period)}. "
                + (self._capacity_needed(budget, risk) if budget else "")
                + ("Raise the capacity, " if self.params.high is not None else "")
                + "schedule larger or more frequent deliveries, or shorten the horizon."
            )
        return SizingAnswer(
            value=None,
            target=self.stockout_target,
            best_risk=float(combined[best]),
            best_at=int(risk.starts[best]),
            advice=advice,
        )

    def _capacity_needed(self, budget: int, start_risk: wm.StartRisk) -> str:
        """'With the start stock at 45 units, a capacity of 120 units would meet it. ' (or why none would)."""
        try:
            # Overflow target 1 (always met): the smallest capacity whose spill-over keeps enough stock.
            capacity = self.walk.smallest_capacity(
                self.params.horizon, 1.0, self.stockout_target, cap=budget, own_overflow=start_risk.overflow
            )
        except wm.ComputeTooLarge:
            return ""
        start = units(self.params.start)
        if capacity is None:
            return f"With the start stock at {start}, no larger capacity would meet it either. "
        return f"With the start stock at {start}, a capacity of {units(capacity)} would meet it. "

    def _capacity_answer(self, budget: int, start_risk: wm.StartRisk) -> SizingAnswer | None:
        """Smallest capacity meeting the overflow target alone; None when the search does not settle in ``budget``.

        The search's first guess reads the overflow risk by start the page has already worked out.
        """
        try:
            value = self.walk.smallest_capacity(
                self.params.horizon, self.overflow_target, cap=budget, own_overflow=start_risk.overflow
            )
        except wm.ComputeTooLarge:
            return None
        if value is not None:
            return SizingAnswer(value=value, target=self.overflow_target)
        reach = self.params.start + self.params.horizon * self.walk.max_up
        return SizingAnswer(
            value=None,
            target=self.overflow_target,
            advice=f"No capacity up to {reach:,} units meets the overflow target; lower the start stock or the supply.",
        )
