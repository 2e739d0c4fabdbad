"""Run a stock walk through walkmath and gather every number the results page shows.

Reads only; no database. Charts, headline figures and CSV files all read the
same ``StockOutlook``, so a download always matches what is on screen.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np

import walkmath as wm
from planner.params import StockWalkParams


@dataclass(frozen=True)
class Targets:
    """Largest acceptable probability of at least one stock-out / overflow within the horizon."""

    stockout: float
    overflow: float


@dataclass(frozen=True, eq=False)
class StockOutlook:
    params: StockWalkParams
    targets: Targets
    laws: tuple[wm.StepLaw, ...]
    outlook: wm.Outlook
    start_risk: wm.StartRisk
    smallest_start: int | None
    smallest_capacity: int | None
    mean_periods_to_stockout: float
    normal_final: wm.LevelDistribution
    normal_stockout: np.ndarray

    @property
    def horizon(self) -> int:
        return self.params.horizon

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
        """Expected units lost over the horizon (rule 'lost' only)."""
        return math.fsum(self.outlook.lost_units[1:]) if self.params.below == "lost" else None

    @property
    def spilled_units(self) -> float | None:
        """Expected units spilled over the horizon (rule 'spill' with a capacity only)."""
        if self.params.above != "spill" or self.params.high is None:
            return None
        return math.fsum(self.outlook.spilled_units[1:])

    @property
    def stockout_periods(self) -> float:
        return float(self.outlook.stockout_periods[-1])

    @property
    def meets_stockout_target(self) -> bool:
        return self.stockout_risk <= self.targets.stockout

    @property
    def meets_overflow_target(self) -> bool | None:
        return None if self.overflow_risk is None else self.overflow_risk <= self.targets.overflow

    @property
    def cycle_mean(self) -> float:
        """Mean net change per period, averaged over the repeating cycle (units per period)."""
        return math.fsum(law.mean for law in self.laws) / len(self.laws)

    @cached_property
    def level_probs(self) -> np.ndarray:
        """P(level_n = level, path not stopped): a second sweep, (horizon + 1) x levels floats."""
        return self.outlook.level_probs

    @property
    def final_probs(self) -> np.ndarray:
        return self.outlook.final.probs


def run_outlook(*, params: StockWalkParams, targets: Targets) -> StockOutlook:
    """Exact outlook of the walk, risk by start level and the smallest start/capacity meeting the targets.

    Cost: several banded sweeps of levels x periods (outlook, one backward sweep, and a
    search per sizing answer). Raises ValueError (incl. wm.ComputeTooLarge) with a
    message naming the parameter.
    """
    walk = params.walk()
    horizon = params.horizon
    outlook = walk.outlook(horizon=horizon)
    bounded = params.high is not None
    overflow_target = targets.overflow if bounded else None
    smallest_capacity = (
        walk.smallest_capacity(horizon, targets.overflow, stockout_target=targets.stockout) if bounded else None
    )
    laws = tuple(walk.laws)
    start_risk = walk.risk_by_start(horizon)
    return StockOutlook(
        params=params,
        targets=targets,
        laws=laws,
        outlook=outlook,
        start_risk=start_risk,
        smallest_start=start_risk.smallest_meeting(targets.stockout, overflow_target),
        smallest_capacity=smallest_capacity,
        mean_periods_to_stockout=float(walk.mean_periods_to_stockout()),
        normal_final=wm.normal_level_distribution(list(laws), steps=horizon, start=params.start),
        normal_stockout=np.asarray(
            wm.normal_stockout_curve(list(laws), start=params.start, low=params.low, horizon=horizon)
        ),
    )
