"""Walks in a band: stock-out and overflow risk period by period.

The one-period transition operator of a step law is a band matrix (width = the
number of possible steps), so every update here is a handful of shifted,
scaled vector additions over the levels that can hold mass, never a dense
matrix. Stopped mass is accumulated as a sum of non-negative terms, which keeps
small risks (1e-25 and below) to full relative precision.

Meaning of every number: see the project's design notes, section 3. In short, a
stock-out happens in a period where the level would fall below ``low``, an
overflow where it would rise above ``high``; ``stockout[n]`` and
``overflow[n]`` are first-passage probabilities (at least one event in periods
1..n) under the walk's rules.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from walkmath import checks, longrun, risk, sizing
from walkmath import cost as _cost
from walkmath.checks import ABOVE_RULES, BELOW_RULES, DEFAULT_ABOVE, DEFAULT_BELOW
from walkmath.cost import COST_METHODS, WORK_CAP, ComputeTooLarge, Work
from walkmath.distribution import LevelDistribution
from walkmath.operator import Forward, Rules
from walkmath.steplaw import StepLaw, as_cycle

# Largest level-by-period table ``Outlook.level_probs`` builds (200 MB of floats).
LEVEL_TABLE_CAP = 25_000_000
# Kept for callers of the first release: the engine's cap, now in work units (see walkmath.cost).
COMPUTE_CAP = WORK_CAP


@dataclass(frozen=True, eq=False)
class Outlook:
    """Period-by-period results of ``BandedWalk.outlook``; arrays have length horizon + 1."""

    horizon: int
    levels: np.ndarray
    stockout: np.ndarray
    overflow: np.ndarray
    alive: np.ndarray
    lost_units: np.ndarray
    spilled_units: np.ndarray
    stockout_periods: np.ndarray
    final: LevelDistribution
    _walk: BandedWalk = field(repr=False)

    @cached_property
    def level_probs(self) -> np.ndarray:
        """level_probs[n, i] = P(level_n = levels[i], path not stopped).

        Computed on first access by a second sweep that keeps every period:
        allocates (horizon + 1) x len(levels) floats.
        """
        return self._walk._sweep(self.horizon, keep_levels=True)[1]

    def level_law(self, period: int) -> LevelDistribution:
        """Level law at ``period`` for paths not stopped (sub-probability when a rule stops paths)."""
        period = checks.whole("period", period, minimum=0, maximum=self.horizon)
        return LevelDistribution(self.levels, self.level_probs[period])


@dataclass(frozen=True, eq=False)
class StartRisk:
    """Risk at the horizon for every start level: ``stockout[i]`` from start ``starts[i]``."""

    horizon: int
    starts: np.ndarray
    stockout: np.ndarray
    overflow: np.ndarray

    def smallest_meeting(self, stockout_target: float, overflow_target: float | None = None) -> int | None:
        """Smallest start whose stock-out risk (and overflow risk, if given) meets the targets; None if none does."""
        meets = self.stockout <= checks.probability("stockout_target", stockout_target)
        if overflow_target is not None:
            meets &= self.overflow <= checks.probability("overflow_target", overflow_target)
        return int(self.starts[np.argmax(meets)]) if meets.any() else None


class BandedWalk:
    """An integer walk started at ``start`` in the band ``low``..``high`` (``high=None``: no capacity).

    ``below``: "backorder" (keeps walking below low), "lost" (set to low; the
    shortfall is lost), "stop" (the path ends). ``above``: "spill" (set to
    high; the excess is spilled) or "stop". ``law`` is a StepLaw or a list of
    them applied cyclically, one per period (period n uses law[(n - 1) % len]).
    """

    def __init__(
        self, law, start: int, low: int = 0, high: int | None = None, below=DEFAULT_BELOW, above=DEFAULT_ABOVE
    ):
        self.laws = as_cycle(law)
        self.low = checks.level("low", low)
        self.high = None if high is None else checks.level("high", high)
        if self.high is not None and self.high < self.low:
            raise ValueError(f"high (capacity) must be at least low ({self.low}); got {self.high}")
        upper = "" if self.high is None else f" and at most high ({self.high})"
        self.start = checks.level("start", start)
        if self.start < self.low or (self.high is not None and self.start > self.high):
            raise ValueError(f"start must be at least low ({self.low}){upper}; got {self.start}")
        self.below = checks.choice("below", below, BELOW_RULES)
        self.above = checks.choice("above", above, ABOVE_RULES)
        self.max_down = max(0, -min(law.lowest for law in self.laws))
        self.max_up = max(0, max(law.highest for law in self.laws))

    def __repr__(self) -> str:
        return (
            f"BandedWalk(start={self.start}, low={self.low}, high={self.high}, "
            f"below={self.below!r}, above={self.above!r}, laws={len(self.laws)})"
        )

    # -- cost model -----------------------------------------------------------

    def cost(self, horizon: int, method: str = "outlook") -> Work:
        """Priced work of ``method`` over ``horizon`` periods, before doing any of it (see walkmath.cost).

        Methods: "outlook", "level_probs" (the outlook keeping every period),
        "risk_by_start" (also "smallest_start"), "smallest_capacity" (bound over
        the whole search), "outlook_at" (operator squaring) and "mean_time".
        """
        horizon = checks.horizon(horizon)
        method = checks.choice("method", method, COST_METHODS)
        return _cost.price(self, horizon, method)

    def _price(self, horizon: int, method: str) -> Work:
        jumps = max(law.probs.size for law in self.laws)
        if method in ("outlook", "level_probs", "first_passage"):
            low, high = self._grid(horizon, self.start)
            levels = high - low + 1
            if self.high is not None and self.below != "backorder":
                jumps = min(jumps, levels)  # a law wider than the band takes one dense product a period
            if method == "first_passage":
                return Work(method, levels, horizon, jumps)
            copies = 1 + (self.below != "stop") + (self.above != "stop" and self.high is not None)
            return Work(method, levels, horizon, jumps, copies)
        if method in ("risk_by_start", "smallest_start"):
            return risk.work(self, horizon, method)
        if method == "smallest_capacity":
            return sizing.capacity_work(self, horizon)
        if method == "outlook_at":
            return longrun.work(self, horizon)
        return risk.mean_time_work(self)

    def law_for_period(self, period: int) -> StepLaw:
        return self.laws[(period - 1) % len(self.laws)]

    # -- forward: outlook from the start level --------------------------------

    def outlook(self, horizon: int, *, keep_levels: bool = False) -> Outlook:
        """Stock-out and overflow curves, expected lost/spilled units, stock-out periods.

        Banded forward updates over the levels that can hold mass; O(horizon x
        levels x steps) time, O(levels) memory. The per-period level law
        (``level_probs``, (horizon + 1) x levels floats) comes from a second
        sweep when first read, or from this one with ``keep_levels=True``.
        """
        outlook, by_period = self._sweep(checks.horizon(horizon), keep_levels=keep_levels)
        if keep_levels:
            outlook.__dict__["level_probs"] = by_period  # the cached_property's slot, filled by this sweep
        return outlook

    def _grid(self, horizon: int, start: int) -> tuple[int, int]:
        """Lowest and highest level the walk can occupy within the horizon (never beyond a bounded end).

        The grid may stop short of ``low`` or ``high`` when the horizon cannot reach them; the
        forward step then never settles anything there.
        """
        lowest = start - horizon * self.max_down
        if self.below != "backorder":
            lowest = max(lowest, self.low)
        highest = start + horizon * self.max_up
        if self.high is not None:
            highest = min(highest, self.high)
        return lowest, highest

    def _copies(self) -> tuple[list[Rules], int, int]:
        """State copies a forward sweep carries: the walk under its own rules, then, where a rule
        does not end paths, a copy that ends at that event so its first passage can be counted.
        Returns the copies and the copy whose ended-below mass is the stock-out curve (and overflow)."""
        copies = [Rules(self.below, self.above)]
        stockout_copy = overflow_copy = 0
        if self.below != "stop":
            copies.append(Rules("stop", self.above))
            stockout_copy = len(copies) - 1
        if self.above != "stop" and self.high is not None:
            copies.append(Rules(self.below, "stop"))
            overflow_copy = len(copies) - 1
        return copies, stockout_copy, overflow_copy

    def _sweep(self, horizon: int, keep_levels: bool) -> tuple[Outlook, np.ndarray | None]:
        self.cost(horizon, "level_probs" if keep_levels else "outlook").check()
        grid_low, grid_high = self._grid(horizon, self.start)
        size = grid_high - grid_low + 1
        if keep_levels and (horizon + 1) * size > LEVEL_TABLE_CAP:
            raise ComputeTooLarge(
                f"the level law for every period needs {(horizon + 1) * size:,} numbers (at most "
                f"{LEVEL_TABLE_CAP:,}, {LEVEL_TABLE_CAP * 8 // 2**20} MB); shorten the horizon or narrow the band"
            )
        copies, stockout_copy, overflow_copy = self._copies()
        forward, mass, reach = self._forward_from_start(copies, grid_low, size)
        counts_stockout = bool(forward.end_low[stockout_copy])  # which copies' ended mass the curves are
        counts_overflow = bool(forward.end_high[overflow_copy])
        ended_low = ended_high = 0.0  # running sums of non-negative terms
        stockout, overflow, fell, lost, spilled, alive = (np.zeros(horizon + 1) for _ in range(6))
        alive[0] = 1.0
        by_period = np.zeros((horizon + 1, size)) if keep_levels else None
        if keep_levels:
            by_period[0] = mass[0]
        for period in range(1, horizon + 1):
            if reach[0] > reach[1]:  # every path has ended: the curves stay where they are
                stockout[period], overflow[period] = ended_low, ended_high
                continue
            reach, flows = forward.step(mass, reach, self.law_for_period(period))
            if counts_stockout:
                ended_low += flows.fell[stockout_copy]
            if counts_overflow:
                ended_high += flows.rose[overflow_copy]
            stockout[period], overflow[period], fell[period] = ended_low, ended_high, flows.fell[0]
            lost[period], spilled[period] = flows.lost_units, flows.spilled_units
            if reach[0] <= reach[1]:
                alive[period] = mass[0, reach[0] : reach[1] + 1].sum()
            if keep_levels:
                by_period[period] = mass[0]
        # expected number of periods ending in a stock-out: a running sum of non-negative terms
        stockout_periods = stockout if self.below == "stop" else np.cumsum(fell)
        levels = np.arange(grid_low, grid_high + 1)
        outlook = Outlook(
            horizon=horizon,
            levels=levels,
            stockout=np.minimum(stockout, 1.0),  # sums of ended mass: the cap meets only a last-ulp rounding
            overflow=np.minimum(overflow, 1.0),
            alive=np.minimum(alive, 1.0),
            lost_units=lost,
            spilled_units=spilled,
            stockout_periods=stockout_periods,
            final=LevelDistribution(levels, mass[0].copy()),
            _walk=self,
        )
        return outlook, by_period

    def _forward_from_start(self, copies: list[Rules], grid_low: int, size: int):
        """The forward operator on the grid, every copy's mass at the start level, and its reach."""
        band_hi = None if self.high is None else self.high - grid_low
        forward = Forward(copies, size, self.low - grid_low, band_hi)
        mass = np.zeros((len(copies), size))
        mass[:, self.start - grid_low] = 1.0
        return forward, mass, (self.start - grid_low,) * 2

    def first_passage(self, horizon: int, rules: Rules) -> tuple[float, float]:
        """P(the path ends below low, above high) within ``horizon`` for one copy under ``rules``.

        The single-copy forward sweep the sizing probes use (a third of an
        outlook's work when the outlook carries three copies).
        """
        horizon = checks.horizon(horizon)
        self.cost(horizon, "first_passage").check()
        grid_low, grid_high = self._grid(horizon, self.start)
        forward, mass, reach = self._forward_from_start([rules], grid_low, grid_high - grid_low + 1)
        ended_low = ended_high = 0.0
        for period in range(1, horizon + 1):
            if reach[0] > reach[1]:
                break
            reach, flows = forward.step(mass, reach, self.law_for_period(period))
            ended_low += flows.fell[0] if forward.end_low[0] else 0.0
            ended_high += flows.rose[0] if forward.end_high[0] else 0.0
        return ended_low, ended_high

    def outlook_at(self, periods, *, cap: int = WORK_CAP) -> longrun.LongOutlook:
        """Stock-out and overflow risk at chosen periods, up to 10**7, by operator squaring (bounded bands).

        Dense (levels + 2)-square products, about 2 log2(period) of them per
        chain; refused over ``cap`` units of work (a 2,000-level band at 10**6
        periods needs a larger ``cap``: about a minute on one core).
        """
        return longrun.long_outlook(self, periods, cap)

    # -- backward: every start level, buffer sizing, mean times ---------------

    def risk_by_start(self, horizon: int, top: int | None = None) -> StartRisk:
        """Risk at ``horizon`` for every start level low..top, by one backward banded sweep."""
        return risk.risk_by_start(self, horizon, top)

    def smallest_start(self, horizon: int, stockout_target: float, overflow_target: float | None = None):
        """Smallest start level meeting the targets at ``horizon`` (None if none does), from the backward sweep."""
        return sizing.smallest_start(self, horizon, stockout_target, overflow_target)

    def smallest_capacity(
        self,
        horizon: int,
        overflow_target: float,
        stockout_target: float | None = None,
        *,
        cap: int = WORK_CAP,
        own_overflow=None,
    ):
        """Smallest capacity (at least the start) meeting the targets at ``horizon`` (None if none can).

        A galloping then bisecting search from the start, each probe priced; the
        whole search stays under ``cap`` units of work. ``own_overflow``: this walk's
        ``risk_by_start(horizon).overflow``, when the caller has it (the search's first guess reads it).
        """
        return sizing.smallest_capacity(
            self, horizon, overflow_target, stockout_target, cap=cap, own_overflow=own_overflow
        )

    def risk_by_capacity(self, horizon: int, capacities) -> sizing.CapacityRisk:
        """Stock-out and overflow risk at ``horizon`` for each of ``capacities`` (for charts)."""
        return sizing.risk_by_capacity(self, horizon, capacities)

    def mean_periods_to_exit(self) -> float:
        """E[first period with a stock-out or an overflow] as a ``MeanTime``; inf if not certain.

        Closed forms for nearest-neighbour laws, a subtraction-free elimination
        otherwise (``walkmath.meantime``): relative accuracy for any finite
        mean; ``at_least`` marks a proven lower bound where the cost cap stops
        the computation short.
        """
        return risk.mean_periods_to_exit(self, overflow_ends=True)

    def mean_periods_to_stockout(self) -> float:
        """E[first period with a stock-out] as a ``MeanTime``; inf only if not certain or the mean is infinite."""
        return risk.mean_periods_to_exit(self, overflow_ends=False)
