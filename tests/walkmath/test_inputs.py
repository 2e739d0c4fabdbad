"""Every bad or extreme input is refused before any work, with a message naming the parameter.

Each row: the call, the error it must raise (``ValueError``, or ``ComputeTooLarge`` where the
input is valid but the work or memory is over the engine's caps), and a piece of the message that
names the parameter (or, for the caps, the knob to turn). A ``ComputeTooLarge`` is a
``ValueError``, so a row expecting ``ValueError`` would pass on either: rows for the caps expect
the subclass itself.
"""

import itertools
import math

import numpy as np
import pytest

import walkmath as wm
from walkmath.cost import ComputeTooLarge
from walkmath.steplaw import MAX_JUMPS, OBSERVATION_CAP, STEP_LIMIT

NAN, INF = float("nan"), float("inf")
HALF = wm.StepLaw.nearest(0.3, 0.3)
SKIP_FREE = wm.StepLaw.from_pmf({-1: 0.5, 0: 0.2, 2: 0.3})  # down-steps of 1, three support points
DEMAND = wm.StepLaw.poisson(2.0)


def flat(width: int) -> np.ndarray:
    return np.full(width, 1.0 / width)


BAD_INPUTS = [
    # StepLaw(lowest, probs): the dataclass constructor validates
    ("StepLaw probs over 1", lambda: wm.StepLaw(-1, [0.6, 0, 0.6]), ValueError, "probs must sum to 1"),
    ("StepLaw probs negative", lambda: wm.StepLaw(0, [-0.5, 1.5]), ValueError, "probs"),
    ("StepLaw probs nan", lambda: wm.StepLaw(0, [NAN, 1.0]), ValueError, "probs"),
    ("StepLaw probs inf", lambda: wm.StepLaw(0, [INF, 1.0]), ValueError, "probs"),
    ("StepLaw probs all zero", lambda: wm.StepLaw(0, [0.0, 0.0]), ValueError, "probs"),
    ("StepLaw probs empty", lambda: wm.StepLaw(0, []), ValueError, "probs"),
    ("StepLaw probs text", lambda: wm.StepLaw(0, ["a", "b"]), ValueError, "probs"),
    ("StepLaw probs huge int", lambda: wm.StepLaw(0, [10**400]), ValueError, "probs"),
    ("StepLaw probs 1e308", lambda: wm.StepLaw(0, [1e308, 1e308]), ValueError, "probs"),
    ("StepLaw probs matrix", lambda: wm.StepLaw(0, [[0.5, 0.5]]), ValueError, "probs"),
    ("StepLaw too wide", lambda: wm.StepLaw(0, flat(MAX_JUMPS + 1)), ValueError, "MAX_JUMPS"),
    ("StepLaw lowest fraction", lambda: wm.StepLaw(0.5, [1.0]), ValueError, "lowest"),
    ("StepLaw lowest nan", lambda: wm.StepLaw(NAN, [1.0]), ValueError, "lowest"),
    ("StepLaw lowest 10**30", lambda: wm.StepLaw(10**30, [1.0]), ValueError, "lowest"),
    ("StepLaw lowest 1e308", lambda: wm.StepLaw(1e308, [1.0]), ValueError, "lowest"),
    ("StepLaw highest past limit", lambda: wm.StepLaw(STEP_LIMIT, [0.5, 0.5]), ValueError, "highest step"),
    ("StepLaw truncated mass", lambda: wm.StepLaw(0, [1.0], truncated_mass=2.0), ValueError, "truncated_mass"),
    # from_pmf, empirical
    ("from_pmf 10**400", lambda: wm.StepLaw.from_pmf({0: 10**400}), ValueError, "step probabilities"),
    ("from_pmf inf", lambda: wm.StepLaw.from_pmf({0: INF}), ValueError, "step probabilities"),
    ("from_pmf width 10**9", lambda: wm.StepLaw.from_pmf({0: 0.5, 10**9: 0.5}), ValueError, "MAX_JUMPS"),
    ("from_pmf step 10**10", lambda: wm.StepLaw.from_pmf({0: 0.5, 10**10: 0.5}), ValueError, "step"),
    ("from_pmf step nan", lambda: wm.StepLaw.from_pmf({NAN: 1.0}), ValueError, "step"),
    ("empirical width", lambda: wm.StepLaw.empirical([0, 10**9]), ValueError, "MAX_JUMPS"),
    ("empirical too many", lambda: wm.StepLaw.empirical([0] * (OBSERVATION_CAP + 1)), ValueError, "observations"),
    ("from_pmf endless", lambda: wm.StepLaw.from_pmf((k, 0.0) for k in itertools.count()), ValueError, "MAX_JUMPS"),
    ("empirical value 10**30", lambda: wm.StepLaw.empirical([0, 10**30]), ValueError, "observation"),
    ("empirical count negative", lambda: wm.StepLaw.empirical({0: -1.0, 1: 2.0}), ValueError, "count"),
    ("empirical count inf", lambda: wm.StepLaw.empirical({0: INF}), ValueError, "count"),
    ("empirical counts zero", lambda: wm.StepLaw.empirical({0: 0.0}), ValueError, "counts"),
    # count laws
    ("poisson mean 1e308", lambda: wm.StepLaw.poisson(1e308), ValueError, "mean"),
    ("poisson mean 10**30", lambda: wm.StepLaw.poisson(10**30), ValueError, "mean"),
    ("poisson mean 10**400", lambda: wm.StepLaw.poisson(10**400), ValueError, "mean"),
    ("poisson mean inf", lambda: wm.StepLaw.poisson(INF), ValueError, "mean"),
    ("negative_binomial wide tail", lambda: wm.StepLaw.negative_binomial(1e6, 1e12), ValueError, "variance"),
    ("negative_binomial mean 0, variance 0", lambda: wm.StepLaw.negative_binomial(0, 0), ValueError, "variance"),
    ("negative_binomial mean 0, variance nan", lambda: wm.StepLaw.negative_binomial(0, NAN), ValueError, "variance"),
    ("negative_binomial variance 1e13", lambda: wm.StepLaw.negative_binomial(1, 1e13), ValueError, "variance"),
    ("negative_binomial mean negative", lambda: wm.StepLaw.negative_binomial(-1, 2), ValueError, "mean"),
    ("binomial trials 10**7", lambda: wm.StepLaw.binomial(10**7, 0.5), ValueError, "trials"),
    ("binomial p nan", lambda: wm.StepLaw.binomial(5, NAN), ValueError, "p must"),
    ("fixed 10**10", lambda: wm.StepLaw.fixed(10**10), ValueError, "amount"),
    # net: range, width and the convolution's work
    ("net not a law", lambda: wm.StepLaw.net(1, DEMAND), ValueError, "arrivals"),
    (
        "net out of range",
        lambda: wm.StepLaw.net(wm.StepLaw.fixed(STEP_LIMIT), wm.StepLaw.fixed(-STEP_LIMIT)),
        ValueError,
        "arrivals - demand",
    ),
    (
        "net too wide",
        lambda: wm.StepLaw.net(wm.StepLaw(0, flat(600_000)), wm.StepLaw(0, flat(600_000))),
        ValueError,
        "MAX_JUMPS",
    ),
    (
        "net convolution work",
        lambda: wm.StepLaw.net(wm.StepLaw(0, flat(200_000)), wm.StepLaw(0, flat(200_000))),
        ComputeTooLarge,
        "coarsen the units of arrivals or demand",
    ),
    # methods of a law and of a level law
    ("tilt theta 0", lambda: HALF.tilted(0.0), ValueError, "theta"),
    ("prob of step nan", lambda: HALF.prob(NAN), ValueError, "step"),
    ("level law prob nan", lambda: wm.level_distribution(HALF, 2).prob(NAN), ValueError, "level"),
    # level_distribution, law_power
    (
        "level_distribution memory",
        lambda: wm.level_distribution(wm.StepLaw.poisson(1000), 10**6),
        ComputeTooLarge,
        "steps",
    ),
    ("level_distribution long", lambda: wm.level_distribution(HALF, 10**7), ComputeTooLarge, "steps"),
    ("level_distribution work", lambda: wm.level_distribution(HALF, 4 * 10**6), ComputeTooLarge, "units of work"),
    ("level_distribution steps nan", lambda: wm.level_distribution(HALF, NAN), ValueError, "steps"),
    ("level_distribution steps 1e308", lambda: wm.level_distribution(HALF, 1e308), ValueError, "steps"),
    ("level_distribution steps negative", lambda: wm.level_distribution(HALF, -1), ValueError, "steps"),
    ("level_distribution start 10**30", lambda: wm.level_distribution(HALF, 3, start=10**30), ValueError, "start"),
    ("level_distribution law list empty", lambda: wm.level_distribution([], 3), ValueError, "law"),
    ("law_power times", lambda: wm.law_power(HALF, 10**8), ValueError, "times"),
    ("law_power law list", lambda: wm.law_power([HALF, HALF], 3), ValueError, "law"),
    # normal comparisons
    (
        "normal_level_distribution start 10**30",
        lambda: wm.normal_level_distribution(HALF, 5, start=10**30),
        ValueError,
        "start",
    ),
    ("normal_level_distribution steps inf", lambda: wm.normal_level_distribution(HALF, INF), ValueError, "steps"),
    ("normal_stockout_curve start", lambda: wm.normal_stockout_curve(HALF, 10**30, 0, 5), ValueError, "start"),
    ("normal_stockout_curve low nan", lambda: wm.normal_stockout_curve(HALF, 3, NAN, 5), ValueError, "low"),
    ("normal_stockout_curve horizon", lambda: wm.normal_stockout_curve(HALF, 3, 0, 10**8), ValueError, "horizon"),
    ("brownian drift nan", lambda: wm.brownian_first_passage(NAN, 1.0, 1.0, 1.0), ValueError, "drift"),
    ("brownian variance inf", lambda: wm.brownian_first_passage(0.0, INF, 1.0, 1.0), ValueError, "variance"),
    ("brownian distance 0", lambda: wm.brownian_first_passage(0.0, 1.0, 0.0, 1.0), ValueError, "distance"),
    ("brownian t negative", lambda: wm.brownian_first_passage(0.0, 1.0, 1.0, -1.0), ValueError, "t must"),
    ("wilson trials 10**30", lambda: wm.wilson_interval(1, 10**30), ValueError, "trials"),
    ("wilson successes nan", lambda: wm.wilson_interval(NAN, 10), ValueError, "successes"),
    ("wilson confidence 1", lambda: wm.wilson_interval(1, 10, confidence=1.0), ValueError, "confidence"),
    # Monte Carlo
    (
        "monte_carlo work",
        lambda: wm.monte_carlo_outlook(HALF, 5, 0, None, "backorder", "spill", 1000, paths=10**6),
        ComputeTooLarge,
        "fewer paths",
    ),
    (
        "monte_carlo start",
        lambda: wm.monte_carlo_outlook(HALF, 10**30, 0, None, "backorder", "spill", 10),
        ValueError,
        "start",
    ),
    (
        "monte_carlo high",
        lambda: wm.monte_carlo_outlook(HALF, 5, 0, 1e308, "lost", "spill", 10),
        ValueError,
        "high",
    ),
    (
        "monte_carlo horizon",
        lambda: wm.monte_carlo_outlook(HALF, 5, 0, None, "backorder", "spill", 10**8),
        ValueError,
        "horizon",
    ),
    ("monte_carlo paths 0", lambda: wm.monte_carlo_outlook(HALF, 5, 0, 9, "lost", "spill", 10, 0), ValueError, "paths"),
    (
        "monte_carlo seed",
        lambda: wm.monte_carlo_outlook(HALF, 5, 0, 9, "lost", "spill", 10, seed=-1),
        ValueError,
        "seed",
    ),
    ("monte_carlo rule", lambda: wm.monte_carlo_outlook(HALF, 5, 0, 9, "spill", "spill", 10), ValueError, "below"),
    # first stock-out times
    (
        "first_stockout_times long",
        lambda: wm.first_stockout_times(SKIP_FREE, 5, 0, horizon=10**7),
        ComputeTooLarge,
        "shorten the horizon",
    ),
    ("first_stockout_times start", lambda: wm.first_stockout_times(HALF, 10**30, 0, 5), ValueError, "start"),
    ("first_stockout_times low", lambda: wm.first_stockout_times(HALF, 5, -INF, 5), ValueError, "low"),
    ("first_stockout_times below low", lambda: wm.first_stockout_times(HALF, -1, 0, 5), ValueError, "start"),
    ("first_stockout_times horizon", lambda: wm.first_stockout_times(HALF, 5, 0, 1e308), ValueError, "horizon"),
    (
        "first_stockout_times jumps",
        lambda: wm.first_stockout_times(wm.StepLaw.fixed(-2), 5, 0, 5),
        ValueError,
        "down-steps",
    ),
    # continuous-time free walk
    (
        "continuous_level_distribution work",
        lambda: wm.continuous_level_distribution(1e9, 0, 1),
        ComputeTooLarge,
        "shorten the time t",
    ),
    ("continuous t inf", lambda: wm.continuous_level_distribution(1.0, 1.0, INF), ValueError, "t must"),
    ("continuous t past jump cap", lambda: wm.continuous_level_distribution(1.0, 1.0, 1e300), ValueError, "t must"),
    ("continuous up_rate nan", lambda: wm.continuous_level_distribution(NAN, 1.0, 1.0), ValueError, "up_rate"),
    (
        "continuous down_rate 10**400",
        lambda: wm.continuous_level_distribution(1, 10**400, 1.0),
        ValueError,
        "down_rate",
    ),
    (
        "continuous start 10**30",
        lambda: wm.continuous_level_distribution(1.0, 1.0, 1.0, start=10**30),
        ValueError,
        "start",
    ),
    # lead time
    ("lead_time 10**8", lambda: wm.lead_time_demand(DEMAND, 10**8), ValueError, "lead_time"),
    ("lead_time nan", lambda: wm.lead_time_demand(DEMAND, NAN), ValueError, "lead_time"),
    (
        "lead_time x demand support",
        lambda: wm.lead_time_demand(wm.StepLaw.poisson(1000), 10**5),
        ValueError,
        "lead_time",
    ),
    (
        "random lead_time work",
        lambda: wm.lead_time_demand(wm.StepLaw.poisson(100), wm.StepLaw.from_pmf({1: 0.5, 40_000: 0.5})),
        ComputeTooLarge,
        "shorten the longest lead time",
    ),
    ("lead_time demand negative", lambda: wm.lead_time_demand(HALF, 3), ValueError, "demand"),
    ("reorder_point service 1", lambda: wm.reorder_point(DEMAND, 3, 1.0), ValueError, "service"),
    ("reorder_point service nan", lambda: wm.reorder_point(DEMAND, 3, NAN), ValueError, "service"),
    ("safety_stock lead_time 0", lambda: wm.safety_stock(DEMAND, 0, 0.9), ValueError, "lead_time"),
]


@pytest.mark.parametrize("call, error, names", [row[1:] for row in BAD_INPUTS], ids=[row[0] for row in BAD_INPUTS])
def test_bad_input_is_refused_naming_the_parameter(call, error, names):
    with pytest.raises(error) as raised:
        call()
    assert names in str(raised.value)


def test_each_cap_row_names_its_limit():
    # A ComputeTooLarge message states the limit it was measured against (and so is actionable).
    for name, call, error, _ in BAD_INPUTS:
        if error is ComputeTooLarge:
            with pytest.raises(ComputeTooLarge, match="limit") as raised:
                call()
            assert "To fit" in str(raised.value), name


def test_negative_binomial_mean_zero_is_no_demand():
    # The limit of the law as the mean falls to 0 with the variance fixed: all mass at 0 (as poisson(0)).
    law = wm.StepLaw.negative_binomial(mean=0, variance=4.0)
    assert (law.lowest, law.probs.tolist(), law.truncated_mass) == (0, [1.0], 0.0)
    assert wm.StepLaw.poisson(0).probs.tolist() == law.probs.tolist()


def test_step_law_renormalises_within_tolerance():
    law = wm.StepLaw(-1, [0.25, 0.5, 0.25 + 5e-10])
    assert math.fsum(law.probs) == pytest.approx(1.0, abs=1e-15)
    assert law.lowest == -1


@pytest.mark.parametrize("mean, variance", [(1e4, 1e8), (3.0, 7.0), (0.01, 100.0)])
def test_count_cut_is_the_smallest_with_the_tail_under_count_tail(mean, variance):
    # reference: scipy.stats.nbinom.sf at the cut and one below it
    from scipy import stats

    from walkmath.steplaw import COUNT_TAIL

    law = wm.StepLaw.negative_binomial(mean, variance)
    dist = stats.nbinom(mean * mean / (variance - mean), mean / variance)
    assert dist.sf(law.highest) <= COUNT_TAIL < dist.sf(law.highest - 1)
    assert law.truncated_mass == dist.sf(law.highest)


def test_poisson_at_the_largest_mean_fits_under_max_jumps():
    # The widest count law kept on purpose (see MAX_JUMPS): mean 1e6 reaches its tail inside the cap.
    law = wm.StepLaw.poisson(1e6)
    assert law.highest < MAX_JUMPS and law.truncated_mass <= 1e-24
