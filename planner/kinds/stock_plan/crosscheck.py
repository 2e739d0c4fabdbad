"""The cross-check of a stock plan: the exact risk beside the normal approximation and a simulation.

Neither comparison is the answer. The normal approximation (Brownian first
passage with the plan's mean and variance per period, no capacity) is the
shortcut spreadsheets use; the seeded simulation (``walkmath.monte_carlo_outlook``,
the same rules at the floor and the capacity) is an independent check whose 95 %
interval should hold the exact figure. The cross-check runs on its own request,
priced like every page, so the results page does not wait for the simulation.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

import walkmath as wm
from planner import formatting
from planner.chart_layout import NORMAL, OVERFLOW, STOCKOUT, layout, line, log_range, target_line
from planner.csv_writer import number
from planner.formatting import period_name, periods, probabilities, probability
from planner.kinds import Part
from planner.kinds.stock_plan.params import StockPlanParams
from walkmath.compare import monte_carlo_work

PATHS = 20_000  # 95 % interval about ±0.14 points at a 1 % risk
SEED = 1
CONFIDENCE = 0.95
CHECKPOINTS = 8  # periods in the table (evenly spread, the horizon last)
# Price of the normal curve per period, in work units (a few special functions per period).
NORMAL_UNITS_PER_PERIOD = 1_000
# Below this the exact risk is too small for a ratio to mean anything on the page.
RATIO_FLOOR = 1e-300


@dataclass(frozen=True, eq=False)
class CrossCheck:
    params: StockPlanParams
    stockout_target: float
    exact: wm.Outlook
    normal: np.ndarray  # stock-out risk by period, normal approximation
    simulated: wm.MonteCarloOutlook

    @property
    def horizon(self) -> int:
        return self.params.horizon

    @property
    def checkpoints(self) -> list[int]:
        """Up to ``CHECKPOINTS`` periods from the first to the horizon, evenly spread."""
        return sorted({max(1, math.ceil(self.horizon * k / CHECKPOINTS)) for k in range(1, CHECKPOINTS + 1)})

    @property
    def bounded(self) -> bool:
        return self.params.high is not None

    def rows(self) -> list[dict]:
        """One row per checkpoint: exact, normal, the normal's miss, the simulation and its interval."""
        sim, out = self.simulated, self.exact
        table = []
        for n in self.checkpoints:
            exact, normal = float(out.stockout[n]), float(self.normal[n])
            row = {
                "period": n,
                "exact": exact,
                "normal": normal,
                "ratio": normal / exact if exact > RATIO_FLOOR else None,
                "simulated": float(sim.stockout[n]),
                "lower": float(sim.stockout_lower[n]),
                "upper": float(sim.stockout_upper[n]),
                "inside": bool(sim.stockout_lower[n] <= exact <= sim.stockout_upper[n]),
            }
            if self.bounded:
                exact_over = float(out.overflow[n])
                row |= {
                    "overflow": exact_over,
                    "overflow_simulated": float(sim.overflow[n]),
                    "overflow_lower": float(sim.overflow_lower[n]),
                    "overflow_upper": float(sim.overflow_upper[n]),
                    "overflow_inside": bool(sim.overflow_lower[n] <= exact_over <= sim.overflow_upper[n]),
                }
            table.append(row)
        return table

    def verdict(self) -> str:
        """Where and by how much the normal approximation misses, in one sentence."""
        name = period_name(self.params.period)
        rows = [row for row in self.rows() if row["ratio"] is not None]
        if not rows:
            return f"The exact stock-out risk stays at 0 over {periods(self.horizon, self.params.period)}."
        worst = max(rows, key=lambda row: abs(math.log(row["ratio"])) if row["ratio"] > 0 else math.inf)
        ratio = worst["ratio"]
        where = f"by {name} {worst['period']} ({probability(worst['normal'])} against {probability(worst['exact'])})"
        if ratio == 0:
            return f"The normal approximation shows no stock-out risk at all {where}."
        if 0.9 <= ratio <= 1.1:
            return f"The normal approximation stays within 10 % of the exact stock-out risk (largest gap {where})."
        if ratio < 1:
            return (
                f"The normal approximation understates the stock-out risk by a factor of {factor(1 / ratio)} {where}."
            )
        return f"The normal approximation overstates the stock-out risk by a factor of {factor(ratio)} {where}."

    def agreement(self) -> str:
        """How many checkpoints' exact figures fall inside the simulation's interval."""
        rows = self.rows()
        inside = sum(row["inside"] for row in rows)
        return (
            f"The exact stock-out risk lies inside the simulation's {100 * CONFIDENCE:g} % interval at {inside} of "
            f"{len(rows)} checkpoints ({self.simulated.paths:,} simulated paths, seed {self.simulated.seed}); about "
            f"one in twenty may fall outside by chance."
        )


def factor(value: float) -> str:
    """'2.99', '9,999', and from 10,000 up '6.1 × 10⁴' (three significant digits)."""
    return formatting.number(value) if value < 1e4 else formatting.scientific(value)


class CrossCheckJob:
    """The cross-check's work on one plan: exact outlook, normal curve and simulation, each priced first."""

    def __init__(self, params: StockPlanParams, stockout_target: float):
        self.params = params
        self.stockout_target = stockout_target
        self.laws = list(params.step_laws())
        self.walk = params.walk(self.laws)

    def parts(self) -> list[Part]:
        horizon = self.params.horizon
        return [
            Part("outlook", self.walk.cost(horizon, "outlook").units),
            Part("normal", (horizon + 1) * NORMAL_UNITS_PER_PERIOD),
            Part("simulation", monte_carlo_work(PATHS, horizon).units),
        ]

    def refusal(self, units: int, cap: int) -> str:
        return (
            f"This plan is too large to cross-check in one request (about {units / cap:.1f} times this server's "
            f"limit); shorten the horizon (now {periods(self.params.horizon, self.params.period)})."
        )

    def run(self, allowed: dict[str, int]) -> CrossCheck:
        params = self.params
        return CrossCheck(
            params=params,
            stockout_target=self.stockout_target,
            exact=self.walk.outlook(params.horizon),
            normal=np.asarray(
                wm.normal_stockout_curve(self.laws, start=params.start, low=params.low, horizon=params.horizon)
            ),
            simulated=wm.monte_carlo_outlook(
                self.laws,
                params.start,
                params.low,
                params.high,
                params.below,
                params.above,
                params.horizon,
                paths=PATHS,
                seed=SEED,
                confidence=CONFIDENCE,
            ),
        )


def chart(check: CrossCheck) -> dict:
    """Stock-out risk by period: exact line, normal dashed, simulation points with their interval."""
    x = np.arange(check.horizon + 1)
    name = period_name(check.params.period)
    points = check.checkpoints
    sim = check.simulated
    simulated = {
        "type": "scatter",
        "mode": "markers",
        "x": points,
        "y": [float(sim.stockout[n]) for n in points],
        "name": f"simulation ({sim.paths:,} paths, {100 * CONFIDENCE:g} % interval)",
        "marker": {"color": STOCKOUT, "size": 7, "symbol": "diamond-open"},
        "error_y": {
            "type": "data",
            "symmetric": False,
            "array": [float(sim.stockout_upper[n] - sim.stockout[n]) for n in points],
            "arrayminus": [float(sim.stockout[n] - sim.stockout_lower[n]) for n in points],
            "color": STOCKOUT,
        },
        "customdata": [f"{probability(sim.stockout_lower[n])} to {probability(sim.stockout_upper[n])}" for n in points],
        "hovertemplate": "simulation: %{y:.3g} (%{customdata})<extra></extra>",
    }
    data = [
        line(x, check.exact.stockout, "exact", STOCKOUT, hover=probabilities),
        line(x, check.normal, "normal approximation", NORMAL, width=2, dash="dash", hover=probabilities),
        simulated,
        target_line(x, check.stockout_target, "stock-out target"),
    ]
    if check.bounded:
        data.insert(1, line(x, check.exact.overflow, "overflow, exact", OVERFLOW, width=1.5, hover=probabilities))
    figure = {
        "data": data,
        "layout": layout(
            "Cross-check: exact, normal approximation and simulation",
            name,
            "probability",
            log_switch=True,
            y_type="log",
            y_range=log_range(check.exact.stockout, check.normal, [check.stockout_target]),
        ),
    }
    return {"figure": figure, "summary": check.verdict(), "table": "cross-check"}


def csv_rows(check: CrossCheck):
    """Header and one row per checkpoint (plain machine numbers)."""
    name = period_name(check.params.period)
    level = f"{100 * CONFIDENCE:g} %"
    header = [
        "scenario",
        name,
        f"stock-out risk by that {name}, exact [probability]",
        "stock-out risk, normal approximation [probability]",
        "normal / exact [ratio]",
        f"stock-out risk, simulation [share of {check.simulated.paths} paths, seed {check.simulated.seed}]",
        f"simulation {level} interval, lower",
        f"simulation {level} interval, upper",
    ]
    if check.bounded:
        header += [
            f"overflow risk by that {name}, exact [probability]",
            "overflow risk, simulation [share of paths]",
            f"overflow simulation {level} interval, lower",
            f"overflow simulation {level} interval, upper",
        ]
    yield header
    for row in check.rows():
        cells = [None, row["period"], number(row["exact"]), number(row["normal"])]
        cells += ["" if row["ratio"] is None else number(row["ratio"])]
        cells += [number(row["simulated"]), number(row["lower"]), number(row["upper"])]
        if check.bounded:
            keys = ("overflow", "overflow_simulated", "overflow_lower", "overflow_upper")
            cells += [number(row[key]) for key in keys]
        yield cells
