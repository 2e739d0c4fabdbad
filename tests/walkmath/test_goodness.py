"""Chi-square on pooled cells and the choice of law (walkmath/goodness.py)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

import walkmath as wm

DAYS = 730


def fitted(counts, family="poisson"):
    fit = wm.fit_count_law(counts, family=family)
    return fit, wm.goodness_of_fit(fit)


@pytest.mark.parametrize(
    ("family", "history"),
    [
        ("poisson", lambda rng: rng.poisson(26.0, DAYS)),
        ("negative_binomial", lambda rng: rng.negative_binomial(4.0, 4.0 / 34.0, DAYS)),
        ("poisson", lambda rng: rng.poisson(0.7, DAYS)),  # spare tyres: mostly 0 or 1 a day
    ],
)
def test_statistic_and_p_value_match_scipy_chisquare(family, history):
    counts = history(np.random.default_rng(51))
    fit, check = fitted(counts, family)
    observed = [cell.observed for cell in check.cells]
    expected = [cell.expected for cell in check.cells]
    # scipy.stats.chisquare with ddof = parameters fitted: df = cells - 1 - ddof
    reference = stats.chisquare(observed, expected, ddof=fit.parameters)
    assert check.statistic == pytest.approx(reference.statistic, rel=1e-12)
    assert check.p_value == pytest.approx(reference.pvalue, rel=1e-10)
    assert check.degrees_of_freedom == len(check.cells) - 1 - fit.parameters


def test_pooled_cells_follow_the_stated_rule():
    counts = np.random.default_rng(52).poisson(26.0, DAYS)
    fit, check = fitted(counts)
    cells = check.cells
    assert "at least 5 periods" in check.rule
    assert all(cell.expected >= 5.0 for cell in cells)
    assert cells[0].first == 0 and cells[-1].last is None  # from 0 to everything above
    for left, right in zip(cells, cells[1:], strict=False):
        assert right.first == left.last + 1
    assert sum(cell.observed for cell in cells) == DAYS
    assert sum(cell.expected for cell in cells) == pytest.approx(DAYS, rel=1e-12)
    # each closed cell stopped at the first count that brought it to 5 (except the last, which
    # takes the remainder): without its last count it expected less than 5
    law = stats.poisson(fit.mean)
    for cell in cells[:-1]:
        short = DAYS * law.pmf(np.arange(cell.first, cell.last)).sum()
        assert short < 5.0


def test_worked_example_of_pooling():
    # 20 periods, counts 0..4; fitted Poisson mean 1.5. Expected n pmf(k) (scipy.stats.poisson):
    # 0: 4.463, 1: 6.694, 2: 5.021, 3: 2.510, 4: 0.941, 5+: 0.372. Pooled by hand under the rule:
    # {0, 1} (11.16), {2} (5.02), {3, 4, 5+} (3.82 -> below 5, joins {2}) -> cells {0, 1}, {2 and above}.
    counts = [0] * 4 + [1] * 7 + [2] * 5 + [3] * 3 + [4] * 1
    fit, check = fitted(counts)
    assert fit.mean == 1.5
    assert [(c.first, c.last, c.observed) for c in check.cells] == [(0, 1, 11), (2, None, 9)]
    law = stats.poisson(1.5)
    assert check.cells[0].expected == pytest.approx(20 * law.cdf(1), rel=1e-12)
    assert check.cells[1].expected == pytest.approx(20 * law.sf(1), rel=1e-12)
    # 2 cells - 1 - 1 parameter = 0 degrees of freedom: no test
    assert check.degrees_of_freedom == 0 and check.p_value is None
    # the observed-against-fitted table keeps every count, and the open row above the largest
    table = check.table
    assert [row.count for row in table] == [0, 1, 2, 3, 4, 5] and table[-1].and_above
    assert [row.observed for row in table] == [4, 7, 5, 3, 1, 0]
    assert table[-1].fitted == pytest.approx(20 * law.sf(4), rel=1e-12)
    assert table[2].fitted == pytest.approx(20 * law.pmf(2), rel=1e-14)


def test_chi_square_rejects_at_about_its_level_when_the_law_is_right():
    # Size of the test: Poisson histories fitted by Poisson laws are rejected at 5 % about 5 % of the
    # time (the maximum-likelihood fit from ungrouped counts makes it a little liberal: Chernoff and
    # Lehmann 1954, Ann. Math. Statist. 25:579-586, from memory), exact binomial test on the count.
    rng = np.random.default_rng(53)
    trials = 300
    rejected = sum(fitted(rng.poisson(15.0, DAYS))[1].p_value < 0.05 for _ in range(trials))
    assert stats.binomtest(rejected, trials, 0.05).pvalue > 0.001, rejected


def test_chi_square_finds_a_wrong_law():
    # Two-humped demand (quiet weekdays, busy market days): no single Poisson law fits
    rng = np.random.default_rng(54)
    counts = np.where(rng.random(DAYS) < 0.3, rng.poisson(40.0, DAYS), rng.poisson(10.0, DAYS))
    assert fitted(counts)[1].p_value < 1e-6
    assert fitted(counts, "negative_binomial")[1].p_value < 1e-3


def test_goodness_refusals():
    with pytest.raises(ValueError, match="fit must be a CountFit"):
        wm.goodness_of_fit([1, 2, 3])
    fit = wm.fit_count_law([1, 2, 3])
    with pytest.raises(ValueError, match="min_expected must be a number above 0 and at most 1,000,000"):
        wm.goodness_of_fit(fit, min_expected=0)


# -- the recommendation ---------------------------------------------------------------------------


def test_recommends_poisson_for_poisson_demand():
    counts = np.random.default_rng(61).poisson(24.0, DAYS)
    advice = wm.recommend_law(counts, what="demand", period="day")
    assert advice.choice == "poisson"
    assert "Demand varies from day to day about as a Poisson law" in advice.reason
    assert advice.law is advice.poisson.law
    assert advice.spread_p_value >= 0.05


def test_recommends_the_negative_binomial_for_clumped_demand():
    counts = np.random.default_rng(62).negative_binomial(3.0, 3.0 / 27.0, DAYS)  # mean 24, variance 216
    advice = wm.recommend_law(counts, what="demand", period="day")
    assert advice.choice == "negative_binomial"
    assert "varies more from day to day than a Poisson law allows" in advice.reason
    assert "busy days come in clumps" in advice.reason
    # the likelihood-ratio p-value against half chi-square(1) (Self and Liang 1987), from scipy
    ratio = 2 * (advice.negative_binomial.loglik - advice.poisson.loglik)
    assert advice.spread_p_value == pytest.approx(0.5 * stats.chi2.sf(ratio, 1), rel=1e-12)


def test_recommends_the_observed_amounts_when_no_count_law_fits():
    rng = np.random.default_rng(63)
    counts = np.where(rng.random(DAYS) < 0.3, rng.poisson(40.0, DAYS), rng.poisson(10.0, DAYS))
    advice = wm.recommend_law(counts, what="deliveries", period="day")
    assert advice.choice == "empirical" and advice.reason.startswith("Deliveries vary more from day to day")
    assert "plan with the amounts as they were observed over 730 days" in advice.reason
    assert advice.law is advice.empirical.law


def test_recommends_the_observed_changes_when_the_level_moves_both_ways():
    rng = np.random.default_rng(64)
    changes = rng.poisson(30.0, DAYS) - rng.poisson(30.0, DAYS)
    advice = wm.recommend_law(changes, what="change", period="day")
    assert advice.choice == "empirical" and advice.poisson is None
    assert "moved both ways" in advice.reason


def test_short_history_says_it_cannot_test_the_shape():
    advice = wm.recommend_law([3, 4, 2, 5], period="week")
    assert advice.choice == "poisson"
    assert "4 weeks are too few to test" in advice.reason


def test_one_period_and_a_spread_too_wide_for_a_negative_binomial():
    assert "; 1 day is too few to test how often each amount occurs." in wm.recommend_law([4]).reason
    # two days, 0 and a million units: the fitted negative binomial's variance (about 4.4e12) is past
    # the 1e12 the engine's laws accept, so the observed amounts are the advice, not an error
    advice = wm.recommend_law([0, 1_000_000])
    assert advice.choice == "empirical" and advice.negative_binomial is None and advice.poisson is not None
    assert "more than a negative binomial in these units can hold" in advice.reason


def test_recommendation_words_avoid_method_names():
    rng = np.random.default_rng(65)
    for history in (rng.poisson(20.0, DAYS), rng.negative_binomial(2.0, 0.1, DAYS), rng.poisson(5, 60) - 5):
        reason = wm.recommend_law(history).reason.lower()
        for word in ("walk", "step law", "band", "likelihood"):
            assert word not in reason


def test_recommendation_refusals():
    with pytest.raises(ValueError, match="period must be one of"):
        wm.recommend_law([1, 2], period="fortnight")
    with pytest.raises(ValueError, match="history must be whole numbers"):
        wm.recommend_law([1, 2.5])
