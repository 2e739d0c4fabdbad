"""The stock plan's cross-check panel: exact, normal approximation and simulation, each against its own reference.

References: an exact rational (fractions) first-passage chain for the exact column; the Brownian
first-passage law with drift (the inverse Gaussian distribution function, Cox and Miller, The Theory of
Stochastic Processes, 1965, §5.7; the same closed form as scipy.stats.invgauss) for the normal column;
and the simulation's own 95 % interval, which should hold the exact figure at most checkpoints.
"""

import csv
import io
import math
from fractions import Fraction

import pytest
from scipy import stats

from planner.csv_writer import table_csv
from planner.kinds.stock_plan import crosscheck
from planner.kinds.stock_plan.params import CountLaw, StockPlanParams

NEAREST = StockPlanParams(start=4, horizon=24, low=0, step_method="nearest", up=0.3, down=0.4)


def run(params, target=0.05):
    job = crosscheck.CrossCheckJob(params, target)
    return job.run({part.name: part.units for part in job.parts()})


def exact_stockout(up, down, start, horizon):
    """P(the level falls below 0 by period n), n = 0..horizon, by an exact rational chain (no capacity)."""
    up, down = Fraction(up).limit_denominator(10**6), Fraction(down).limit_denominator(10**6)
    stay = 1 - up - down
    alive = {start: Fraction(1)}
    curve = [Fraction(0)]
    for _ in range(horizon):
        nxt = {}
        for level, p in alive.items():
            for step, q in ((1, up), (0, stay), (-1, down)):
                nxt[level + step] = nxt.get(level + step, 0) + p * q
        fallen = nxt.pop(-1, Fraction(0))
        curve.append(curve[-1] + fallen)
        alive = nxt
    return curve


def brownian_first_passage(drift, variance, distance, t):
    """P(min over [0, t] of Brownian motion with ``drift`` falls by ``distance``) (Cox and Miller §5.7)."""
    sd = math.sqrt(variance * t)
    return stats.norm.cdf((-distance - drift * t) / sd) + math.exp(-2 * drift * distance / variance) * stats.norm.cdf(
        (-distance + drift * t) / sd
    )


def test_exact_normal_and_simulated_columns_against_their_references():
    check = run(NEAREST)
    exact = exact_stockout(0.3, 0.4, 4, 24)
    drift, variance = 0.3 - 0.4, 0.3 + 0.4 - (0.3 - 0.4) ** 2
    rows = check.rows()
    assert [row["period"] for row in rows] == [3, 6, 9, 12, 15, 18, 21, 24]
    inside = 0
    for row in rows:
        n = row["period"]
        assert row["exact"] == pytest.approx(float(exact[n]), rel=1e-12)
        # continuity correction: the level first falls below 0 when it reaches -1, half a unit past -0.5
        assert row["normal"] == pytest.approx(brownian_first_passage(drift, variance, 4.5, n), rel=1e-9)
        if exact[n] == 0:  # five steps down cannot happen in three days: no ratio to show
            assert row["exact"] == 0 and row["ratio"] is None
        else:
            assert row["ratio"] == pytest.approx(row["normal"] / row["exact"], rel=1e-15)
        assert row["lower"] <= row["simulated"] <= row["upper"]
        inside += row["inside"]
    # 8 checkpoints of one seeded run (correlated, so not a binomial count): at least 6 should hold the exact value
    assert inside >= 6
    assert check.simulated.paths == crosscheck.PATHS and check.simulated.seed == crosscheck.SEED


def test_verdict_names_where_and_by_how_much_the_normal_rule_misses():
    # Lumpy demand (negative binomial, variance 10 x mean) with daily deliveries: the normal rule understates
    # the stock-out tail (common practice: heavy right tails of demand are what it misses).
    lumpy = StockPlanParams(
        start=30,
        horizon=30,
        low=0,
        high=80,
        step_method="net",
        arrivals=CountLaw(family="fixed", amount=3),
        demand=CountLaw(family="negative_binomial", mean=2.5, variance=25),
    )
    check = run(lumpy)
    rows = check.rows()
    worst = max((row for row in rows if row["ratio"]), key=lambda row: abs(math.log(row["ratio"])))
    verdict = check.verdict()
    assert f"by day {worst['period']}" in verdict
    if worst["ratio"] < 1:
        assert f"understates the stock-out risk by a factor of {crosscheck.factor(1 / worst['ratio'])}" in verdict
    else:
        assert f"overstates the stock-out risk by a factor of {crosscheck.factor(worst['ratio'])}" in verdict
    assert "overflow" in " ".join(next(crosscheck.csv_rows(check)))  # a capacity adds the overflow columns


def test_csv_reproduces_the_table():
    check = run(NEAREST)
    text = table_csv(crosscheck.csv_rows(check), title="Rye loaf shelf")
    lines = list(csv.reader(io.StringIO(text)))
    header, body = lines[0], lines[1:]
    assert header[1] == "day" and "seed 1" in header[5] and header[-1] == "what-if changes"
    assert len(body) == len(check.rows())
    for cells, row in zip(body, check.rows(), strict=True):
        assert cells[0] == "Rye loaf shelf" and int(cells[1]) == row["period"]
        assert float(cells[2]) == row["exact"] and float(cells[5]) == row["simulated"]


@pytest.mark.parametrize(("value", "text"), [(2.994, "2.99"), (10.0, "10"), (9999.0, "9,999"), (60965.2, "6.1 × 10⁴")])
def test_factors_read_as_three_digits(value, text):
    assert crosscheck.factor(value) == text


def test_short_horizons_have_one_checkpoint_per_period():
    check = run(StockPlanParams(start=2, horizon=3, low=0, step_method="nearest", up=0.3, down=0.4))
    assert [row["period"] for row in check.rows()] == [1, 2, 3]


def test_the_job_is_priced_before_it_runs():
    job = crosscheck.CrossCheckJob(NEAREST, 0.05)
    names = [part.name for part in job.parts()]
    assert names == ["outlook", "normal", "simulation"]
    assert all(part.units > 0 and part.required for part in job.parts())
    assert "shorten the horizon (now 24 days)" in job.refusal(10**10, 10**9)
