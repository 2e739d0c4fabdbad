"""The stock plan's job (StockJob.run) against a brute-force Markov chain in exact rational arithmetic (fractions).

The reference walks every (level, stocked-out?, overflowed?) state period by
period, applying the band rules of the design notes (section 3) literally, so
it shares no code with walkmath's banded sweep.
"""

from collections import defaultdict
from dataclasses import dataclass
from fractions import Fraction

import numpy as np
import pytest
from scipy import stats

from planner.kinds.stock_plan.compute import StockJob
from planner.kinds.stock_plan.params import CountLaw, StockPlanParams


@dataclass(frozen=True)
class Targets:
    stockout: float
    overflow: float


TARGETS = Targets(stockout=0.05, overflow=0.05)


def run_outlook(*, params, targets):
    """Every part of the page, as the read service runs it when the budget allows all of them."""
    job = StockJob(params, targets.stockout, targets.overflow)
    return job.run({part.name: part.units for part in job.parts()})


def reference_chain(laws, *, start, low, high, below, above, horizon):
    """Exact curves for a cyclic list of {step: probability} laws (Fractions in, Fractions out)."""
    zero = Fraction(0)
    state = {(start, False, False, False): Fraction(1)}  # level, stocked out, overflowed, stopped
    curves = {"stockout": [zero], "overflow": [zero], "lost": [zero], "spilled": [zero]}
    for period in range(1, horizon + 1):
        law = laws[(period - 1) % len(laws)]
        new = defaultdict(Fraction)
        lost = spilled = zero
        for (level, stocked, overflowed, stopped), p in state.items():
            if stopped:
                new[(level, stocked, overflowed, True)] += p
                continue
            for step, q in law.items():
                weight, nxt, s, o, halt = p * q, level + step, stocked, overflowed, False
                if nxt < low:
                    s = True
                    if below == "stop":
                        halt = True
                    elif below == "lost":
                        lost += weight * (low - nxt)
                        nxt = low
                if high is not None and nxt > high:
                    o = True
                    if above == "stop":
                        halt = True
                    else:
                        spilled += weight * (nxt - high)
                        nxt = high
                new[(nxt, s, o, halt)] += weight
        state = dict(new)
        curves["stockout"].append(sum((p for k, p in state.items() if k[1]), zero))
        curves["overflow"].append(sum((p for k, p in state.items() if k[2]), zero))
        curves["lost"].append(lost)
        curves["spilled"].append(spilled)
    final = defaultdict(Fraction)
    for (level, _, _, stopped), p in state.items():
        if not stopped:
            final[level] += p
    return curves, dict(final)


def as_floats(values):
    return np.array([float(v) for v in values])


QUARTER = {-1: Fraction(1, 4), 0: Fraction(1, 2), 1: Fraction(1, 4)}


@pytest.mark.parametrize("below", ["backorder", "lost", "stop"])
@pytest.mark.parametrize(("high", "above"), [(None, "spill"), (5, "spill"), (5, "stop")])
def test_table_walk_with_deliveries_matches_exact_chain(below, high, above):
    params = StockPlanParams(
        start=2,
        horizon=10,
        low=0,
        high=high,
        below=below,
        above=above,
        step_method="table",
        table=tuple((k, float(v)) for k, v in QUARTER.items()),
        delivery_every=3,
        delivery_size=2,
    )
    result = run_outlook(params=params, targets=TARGETS)
    delivery = {k + 2: v for k, v in QUARTER.items()}
    curves, final = reference_chain(
        [QUARTER, QUARTER, delivery], start=2, low=0, high=high, below=below, above=above, horizon=10
    )
    out = result.outlook
    np.testing.assert_allclose(out.stockout, as_floats(curves["stockout"]), rtol=1e-12, atol=0)
    np.testing.assert_allclose(out.overflow, as_floats(curves["overflow"]), rtol=1e-12, atol=0)
    np.testing.assert_allclose(out.lost_units, as_floats(curves["lost"]), rtol=1e-12, atol=0)
    np.testing.assert_allclose(out.spilled_units, as_floats(curves["spilled"]), rtol=1e-12, atol=0)
    expected_final = np.array([float(final.get(int(level), 0)) for level in out.levels])
    np.testing.assert_allclose(result.outlook.final.probs, expected_final, rtol=1e-12, atol=0)
    np.testing.assert_allclose(result.level_probs[-1], expected_final, rtol=1e-12, atol=0)
    if below == "lost":
        assert result.lost_units == pytest.approx(float(sum(curves["lost"])), rel=1e-12)
    assert result.stockout_risk == pytest.approx(float(curves["stockout"][-1]), rel=1e-12)


def test_risk_by_start_and_smallest_start_match_the_chain():
    params = StockPlanParams(
        start=3, horizon=8, low=0, high=7, below="lost", above="spill", step_method="nearest", up=0.25, down=0.5
    )
    targets = Targets(stockout=0.2, overflow=0.3)
    result = run_outlook(params=params, targets=targets)
    law = {-1: Fraction(1, 2), 0: Fraction(1, 4), 1: Fraction(1, 4)}
    exact = {}
    for start in range(0, 8):
        curves, _ = reference_chain([law], start=start, low=0, high=7, below="lost", above="spill", horizon=8)
        exact[start] = (curves["stockout"][-1], curves["overflow"][-1])
    assert result.start_risk.starts.tolist() == list(range(8))
    np.testing.assert_allclose(result.start_risk.stockout, [float(exact[s][0]) for s in range(8)], rtol=1e-12)
    np.testing.assert_allclose(result.start_risk.overflow, [float(exact[s][1]) for s in range(8)], rtol=1e-12)
    meeting = [s for s in range(8) if exact[s][0] <= Fraction(1, 5) and exact[s][1] <= Fraction(3, 10)]
    assert result.both_answer.value == (meeting[0] if meeting else None)
    alone = [s for s in range(8) if exact[s][0] <= Fraction(1, 5)]
    assert result.start_answer.value == alone[0]


def test_profiled_poisson_walk_matches_skellam_chain():
    # Reference step laws: Skellam(arrivals mean, demand mean x factor) from scipy.stats.skellam,
    # cut at |step| <= 40 (dropped mass below 1e-30 for these means), as Fractions of the floats.
    params = StockPlanParams(
        start=4,
        horizon=6,
        low=0,
        high=9,
        below="lost",
        above="spill",
        step_method="net",
        arrivals=CountLaw("poisson", mean=1.2),
        demand=CountLaw("poisson", mean=1.0),
        profile=(1.0, 2.0),
    )
    steps = np.arange(-40, 41)
    laws = [
        {
            int(k): Fraction(float(p))
            for k, p in zip(steps, stats.skellam.pmf(steps, 1.2, 1.0 * f), strict=True)
            if p > 0
        }
        for f in (1.0, 2.0)
    ]
    curves, final = reference_chain(laws, start=4, low=0, high=9, below="lost", above="spill", horizon=6)
    result = run_outlook(params=params, targets=TARGETS)
    np.testing.assert_allclose(result.outlook.stockout, as_floats(curves["stockout"]), rtol=1e-10, atol=0)
    np.testing.assert_allclose(result.outlook.lost_units, as_floats(curves["lost"]), rtol=1e-10, atol=0)
    np.testing.assert_allclose(result.outlook.spilled_units, as_floats(curves["spilled"]), rtol=1e-10, atol=0)
    expected_final = [float(final.get(int(level), 0)) for level in result.outlook.levels]
    np.testing.assert_allclose(result.outlook.final.probs, expected_final, rtol=1e-10, atol=1e-300)


def test_mean_periods_to_stockout_follows_walds_identity():
    # Skip-free downward walk, no capacity: E[first passage below 0 from start s] = (s + 1) / (down - up)
    # (Wald's identity; Feller, An Introduction to Probability Theory, vol. 1, ch. XIV).
    params = StockPlanParams(start=6, horizon=20, low=0, below="stop", step_method="nearest", up=0.01, down=0.045)
    result = run_outlook(params=params, targets=TARGETS)
    assert result.mean_periods_to_stockout == pytest.approx(7 / 0.035, rel=1e-9)


def test_normal_approximation_uses_the_whole_cycle():
    params = StockPlanParams(
        start=30,
        horizon=14,
        low=0,
        high=None,
        below="backorder",
        step_method="net",
        arrivals=CountLaw("fixed", amount=0),
        demand=CountLaw("poisson", mean=2.0),
        profile=(1.0, 0.5),
        delivery_every=7,
        delivery_size=10,
    )
    result = run_outlook(params=params, targets=TARGETS)
    # 14 periods = one full lcm(2, 7) cycle: mean change 7 x (-2) + 7 x (-1) + 2 x 10, variance 7 x 2 + 7 x 1
    # (Poisson variance = mean); continuity-corrected normal bins from scipy.stats.norm.
    mean, sd = 30 - 21 + 20, np.sqrt(21.0)
    levels = result.normal_final.levels
    expected = stats.norm.cdf(levels + 0.5, mean, sd) - stats.norm.cdf(levels - 0.5, mean, sd)
    central = np.abs(levels - mean) < 4 * sd
    np.testing.assert_allclose(result.normal_final.probs[central], expected[central], rtol=1e-9)
    assert result.cycle_mean == pytest.approx(-1 / 14 * (21 - 20), rel=1e-12)
    assert np.all(result.normal_stockout >= 0) and np.all(result.normal_stockout <= 1)


def test_headline_figures_read_the_outlook(small_params):
    result = run_outlook(params=small_params, targets=Targets(stockout=0.5, overflow=1e-6))
    assert result.stockout_risk == result.outlook.stockout[-1]
    assert result.meets_stockout_target is (result.stockout_risk <= 0.5)
    assert result.meets_overflow_target is False  # from 4 of 8, twelve periods surely risk more than 1e-6
    no_cap = run_outlook(params=small_params.replace(high=None, below="stop"), targets=TARGETS)
    assert no_cap.overflow_risk is None and no_cap.spilled_units is None and no_cap.lost_units is None
    assert no_cap.capacity_answer is None and no_cap.both_answer is None


def _exact_risks(law, *, start, high, horizon):
    curves, _ = reference_chain([law], start=start, low=0, high=high, below="lost", above="spill", horizon=horizon)
    return curves["stockout"][-1], curves["overflow"][-1]


def test_separate_sizing_answers_match_the_exact_chain():
    # Upward drift on 0..high: the stock-out target and the overflow target pull the start in opposite
    # directions, so each answer is checked on its own (exact rational chain, fractions).
    law = {-1: Fraction(3, 10), 0: Fraction(3, 10), 1: Fraction(2, 5)}
    params = StockPlanParams(
        start=2, horizon=10, low=0, high=6, below="lost", above="spill", step_method="nearest", up=0.4, down=0.3
    )
    result = run_outlook(params=params, targets=Targets(stockout=0.1, overflow=0.3))
    stockout_by_start = {s: _exact_risks(law, start=s, high=6, horizon=10)[0] for s in range(7)}
    assert result.start_answer.value == min(s for s, r in stockout_by_start.items() if r <= Fraction(1, 10))
    capacity = result.capacity_answer.value
    overflow_at = {c: _exact_risks(law, start=2, high=c, horizon=10)[1] for c in (capacity - 1, capacity)}
    assert overflow_at[capacity] <= Fraction(3, 10) < overflow_at[capacity - 1]
    # The engine gives the same numbers (walkmath.BandedWalk sizing on the same walk).
    walk = params.walk()
    assert result.start_answer.value == walk.smallest_start(10, stockout_target=0.1)
    assert capacity == walk.smallest_capacity(10, overflow_target=0.3)
    assert result.both_answer.value == walk.smallest_start(10, stockout_target=0.1, overflow_target=0.3)


def test_unmet_target_reports_the_best_achievable_and_what_would_meet_it():
    # Strong downward drift over a long horizon: no start stock within the capacity meets 1e-6.
    params = StockPlanParams(
        start=5, horizon=60, low=0, high=10, below="lost", above="spill", step_method="nearest", up=0.1, down=0.5
    )
    result = run_outlook(params=params, targets=Targets(stockout=1e-6, overflow=0.5))
    answer = result.start_answer
    assert answer.value is None
    risk = result.start_risk
    assert answer.best_risk == risk.stockout.min() and answer.best_at == int(risk.starts[np.argmin(risk.stockout)])
    assert answer.best_risk > 1e-6
    assert "No start stock from 0 to 10 units" in answer.advice and "Raise the capacity" in answer.advice


def test_optional_parts_are_left_out_with_a_note():
    params = StockPlanParams(
        start=4, horizon=12, low=0, high=8, below="lost", above="spill", step_method="nearest", up=0.3, down=0.4
    )
    job = StockJob(params, 0.05, 0.05)
    result = job.run({part.name: part.units for part in job.parts() if part.required})
    assert result.capacity_answer is None and result.mean_periods_to_stockout is None
    assert result.normal_final is None
    assert len(result.left_out) == 3 and "smallest capacity" in result.left_out[0]


def test_unmet_stockout_target_says_what_capacity_would_meet_it():
    # Upward drift, but a capacity of 3 spills the gains: more room would keep enough stock.
    params = StockPlanParams(
        start=3, horizon=30, low=0, high=3, below="lost", above="spill", step_method="nearest", up=0.45, down=0.3
    )
    result = run_outlook(params=params, targets=Targets(stockout=0.2, overflow=0.5))
    assert result.start_answer.value is None
    advice = result.start_answer.advice
    needed = int(advice.split("a capacity of ")[1].split(" units")[0])

    def stockout(capacity):  # the same plan straight through walkmath with another capacity
        return params.replace(high=capacity).walk().outlook(30).stockout[-1]

    assert stockout(needed) <= 0.2 < stockout(needed - 1)
