"""The band operator on wide laws (31 jumps): forward, backward and squaring against exact rational arithmetic."""

import itertools
from fractions import Fraction

import numpy as np
import pytest

import walkmath as wm
from tests.walkmath.exact import banded_outlook

# A wide, lopsided law over steps -15..15 (31 jumps) with weights 1..31 / 496; exact as Fractions.
WIDE_PMF = {step: Fraction(step + 16, 496) for step in range(-15, 16)}
WIDE = wm.StepLaw.from_pmf({k: float(v) for k, v in WIDE_PMF.items()})
# A delivery period: +10 or +20 with equal chance, then the wide law again.
DELIVERY_PMF = {10: Fraction(1, 2), 20: Fraction(1, 2)}
DELIVERY = wm.StepLaw.from_pmf({10: 0.5, 20: 0.5})
RULES = list(itertools.product(wm.checks.BELOW_RULES, wm.checks.ABOVE_RULES, [40, None]))
HORIZON = 8


def _close(values, exact, rel):
    exact = np.array([float(x) for x in exact])
    assert np.all(np.abs(np.asarray(values) - exact) <= rel * np.abs(exact) + 1e-300)


def _close_outlook(out, ref):
    """Every curve of an outlook and its final level law against the exact reference, to 1e-12."""
    for name, values in (
        ("stockout", out.stockout),
        ("overflow", out.overflow),
        ("alive", out.alive),
        ("lost", out.lost_units),
        ("spilled", out.spilled_units),
    ):
        _close(values, ref[name], 1e-12)
    for level, p in ref["final"].items():
        assert out.final.prob(level) == pytest.approx(float(p), rel=1e-12)


@pytest.mark.parametrize("below, above, high", RULES)
def test_forward_sweep_on_a_wide_law_matches_exact_rational_arithmetic(below, above, high):
    # reference: tests/walkmath/exact.py, a literal Fraction walk over (level, flags)
    ref = banded_outlook(WIDE_PMF, 12, 0, high, below, above, HORIZON)
    out = wm.BandedWalk(WIDE, start=12, low=0, high=high, below=below, above=above).outlook(HORIZON)
    _close_outlook(out, ref)


@pytest.mark.parametrize("below, above", list(itertools.product(wm.checks.BELOW_RULES, wm.checks.ABOVE_RULES)))
def test_cyclic_wide_law_matches_exact_rational_arithmetic(below, above):
    ref = banded_outlook([WIDE_PMF, WIDE_PMF, DELIVERY_PMF], 6, 0, 45, below, above, 9)
    out = wm.BandedWalk([WIDE, WIDE, DELIVERY], start=6, low=0, high=45, below=below, above=above).outlook(9)
    _close(out.stockout, ref["stockout"], 1e-12)
    _close(out.overflow, ref["overflow"], 1e-12)
    _close(out.lost_units, ref["lost"], 1e-12)
    _close(out.spilled_units, ref["spilled"], 1e-12)


@pytest.mark.parametrize("below, above, high", RULES)
def test_backward_sweep_on_a_wide_law_matches_exact_rational_arithmetic_for_every_start(below, above, high):
    walk = wm.BandedWalk([WIDE, DELIVERY], start=0, low=0, high=high, below=below, above=above)
    by_start = walk.risk_by_start(6, top=30 if high is None else None)
    for start in (0, 7, 15, 30):
        ref = banded_outlook([WIDE_PMF, DELIVERY_PMF], start, 0, high, below, above, 6)
        row = int(np.flatnonzero(by_start.starts == start)[0])
        assert by_start.stockout[row] == pytest.approx(float(ref["stockout"][-1]), rel=1e-12, abs=1e-300)
        assert by_start.overflow[row] == pytest.approx(float(ref["overflow"][-1]), rel=1e-12, abs=1e-300)


@pytest.mark.parametrize("below, above", list(itertools.product(("lost", "stop"), wm.checks.ABOVE_RULES)))
def test_squaring_on_a_wide_law_matches_exact_rational_arithmetic(below, above):
    ref = banded_outlook([WIDE_PMF, DELIVERY_PMF], 20, 0, 40, below, above, 7)
    long = wm.BandedWalk([WIDE, DELIVERY], start=20, low=0, high=40, below=below, above=above).outlook_at([3, 7, 6])
    _close(long.stockout, [ref["stockout"][n] for n in (3, 7, 6)], 1e-11)
    _close(long.overflow, [ref["overflow"][n] for n in (3, 7, 6)], 1e-11)
    for level, p in ref["final"].items():
        assert long.final.prob(level) == pytest.approx(float(p), rel=1e-10, abs=1e-300)


def test_long_horizon_risk_never_falls_and_never_exceeds_one():
    walk = wm.BandedWalk(WIDE, start=200, low=0, high=400, below="lost", above="spill")
    periods = [1, 10, 100, 1_000, 10_000, 100_000, 1_000_000, 10_000_000]
    long = walk.outlook_at(periods)
    for curve in (long.stockout, long.overflow):
        assert np.all(np.diff(curve) >= 0)  # absorbed mass only grows: computed as non-negative sums
        assert np.all((curve >= 0) & (curve <= 1))
    # the law drifts up 5 units a period (sum of k (k + 16) / 496 over -15..15): overflow is certain
    assert long.overflow[-1] > 1 - 1e-12


def test_work_over_the_cap_is_refused_before_any_period_is_swept(monkeypatch):
    def no_sweep(*args, **kwargs):
        raise AssertionError("a period was swept before the cost check")

    monkeypatch.setattr(wm.operator.Forward, "step", no_sweep)
    monkeypatch.setattr(wm.operator, "backward_step", no_sweep)
    wide_table = wm.StepLaw.from_pmf({-10_000: 0.5, 10_000: 0.5})
    walk = wm.BandedWalk(wide_table, start=0, low=0)
    for call in (
        lambda: walk.outlook(3650),
        lambda: walk.outlook(3650).level_probs,
        lambda: walk.risk_by_start(3650),
        lambda: walk.smallest_start(3650, 0.01),
        lambda: wm.BandedWalk(wm.StepLaw.nearest(0.3, 0.3), start=5, low=0, high=10).outlook(10**6),
    ):
        with pytest.raises(wm.ComputeTooLarge, match="units of work|levels in memory"):
            call()


def test_cost_names_each_method_and_grows_with_jumps():
    narrow = wm.BandedWalk(wm.StepLaw.nearest(0.3, 0.3), start=20, low=0, high=40, below="lost")
    wide = wm.BandedWalk(WIDE, start=20, low=0, high=40, below="lost")
    for method in wm.cost.COST_METHODS:
        assert narrow.cost(365, method).units > 0
        assert wide.cost(365, method).units >= narrow.cost(365, method).units
    assert wide.cost(365).jumps == 31
    with pytest.raises(ValueError, match="method"):
        wide.cost(365, "everything")


def _mp_stockout(law, start, high, horizon):
    """Stock-out by ``horizon`` (stop below 0, spill at ``high``) in 50-digit mpmath, level by level."""
    import mpmath

    mpmath.mp.dps = 50
    probs = [mpmath.mpf(float(p)) for p in law.probs]
    mass = {start: mpmath.mpf(1)}
    ended = mpmath.mpf(0)
    for _ in range(horizon):
        fresh: dict = {}
        for level, weight in mass.items():
            for offset, p in enumerate(probs):
                target = min(level + law.lowest + offset, high)
                if target < 0:
                    ended += weight * p
                else:
                    fresh[target] = fresh.get(target, 0) + weight * p
        mass = fresh
    return ended


def test_far_tail_of_a_daily_flow_keeps_relative_accuracy_against_mpmath():
    # Poisson(3) in and out (about 50 jumps); a 1e-30-scale stock-out from a high start; reference:
    # the same truncated law walked in 50-digit mpmath arithmetic (mpmath, a general-purpose library).
    law = wm.StepLaw.net(arrivals=wm.StepLaw.poisson(3.0), demand=wm.StepLaw.poisson(3.0))
    walk = wm.BandedWalk(law, start=60, low=0, high=65, below="stop", above="spill")
    exact = float(_mp_stockout(law, 60, 65, 4))
    assert 1e-40 < exact < 1e-15
    assert walk.outlook(4).stockout[-1] == pytest.approx(exact, rel=1e-8)
    by_start = walk.risk_by_start(4)
    assert by_start.stockout[60] == pytest.approx(exact, rel=1e-8)
    assert walk.outlook_at([4]).stockout[0] == pytest.approx(exact, rel=1e-8)


@pytest.mark.parametrize("below, above", list(itertools.product(("lost", "stop"), wm.checks.ABOVE_RULES)))
def test_a_band_narrower_than_the_law_takes_the_dense_step_and_stays_exact(below, above):
    # 10 levels, 31 jumps: the step is one dense product (most of a convolution would fall off the band)
    ref = banded_outlook([WIDE_PMF, DELIVERY_PMF], 5, 0, 9, below, above, 8)
    out = wm.BandedWalk([WIDE, DELIVERY], start=5, low=0, high=9, below=below, above=above).outlook(8)
    _close_outlook(out, ref)
