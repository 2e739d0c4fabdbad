"""walkmath.stacked: many backward sweeps of one law in one array, against risk_by_start and exact fractions."""

from fractions import Fraction

import numpy as np
import pytest

import walkmath as wm
from tests.walkmath import exact
from walkmath import stacked

POISSON = wm.StepLaw.poisson
CYCLE = (
    wm.StepLaw.net(arrivals=wm.StepLaw.fixed(0), demand=POISSON(2.3)),
    wm.StepLaw.net(arrivals=wm.StepLaw.fixed(0), demand=POISSON(2.3)),
    wm.StepLaw.net(arrivals=wm.StepLaw.fixed(7), demand=POISSON(2.3)),
)
LAWS = {
    "supply and demand": (wm.StepLaw.net(arrivals=POISSON(3.0), demand=POISSON(3.0)),),
    "delivery every third day": CYCLE,
    "only up": (wm.StepLaw.from_pmf({2: 0.5, 3: 0.5}),),
    "only down": (wm.StepLaw.from_pmf({-1: 0.7, -2: 0.3}),),
}


def _close(mine, reference):
    scale = np.maximum(np.abs(mine), np.abs(reference))
    relative = np.where(scale > 0, np.abs(mine - reference) / np.where(scale > 0, scale, 1.0), 0.0)
    return float(relative.max())


@pytest.mark.parametrize("name", sorted(LAWS))
@pytest.mark.parametrize("below", ["backorder", "lost", "stop"])
@pytest.mark.parametrize("above", ["spill", "stop"])
def test_rows_equal_risk_by_start(name, below, above):
    laws, horizon = LAWS[name], 30
    widths = (1, 4, 25, 60)
    rows = [(stacked.row_kind("stockout", above), w) for w in widths]
    if below != "backorder":
        rows += [(stacked.row_kind("overflow", below), w) for w in widths]
    values = stacked.stacked_risks(laws, horizon, rows)
    rooms = stacked.room_overflow(laws, horizon, max(widths))
    for position, width in enumerate(widths):
        walk = wm.BandedWalk(list(laws), 0, 0, width - 1, below, above)
        reference = walk.risk_by_start(horizon)
        assert _close(values[position], reference.stockout) <= 1e-12
        overflow = values[len(widths) + position] if below != "backorder" else rooms[width - 1 - np.arange(width)]
        assert _close(overflow, reference.overflow) <= 1e-12
        assert np.all(values[position] >= 0) and np.all(overflow >= 0)


def test_rows_match_exact_fractions():
    # tests/walkmath/exact.py walks every path's law in fractions with the rules read literally.
    pmf = {-2: Fraction(1, 8), -1: Fraction(3, 8), 0: Fraction(1, 4), 1: Fraction(1, 4)}
    law = wm.StepLaw.from_pmf({step: float(p) for step, p in pmf.items()})
    horizon, width = 6, 5
    spill, lost = stacked.stacked_risks([law], horizon, [("stockout-spill", width), ("overflow-lost", width)])
    rooms = stacked.room_overflow([law], horizon, width)
    for start in range(width):
        out = exact.banded_outlook(pmf, start, 0, width - 1, "lost", "spill", horizon)
        assert spill[start] == pytest.approx(float(out["stockout"][-1]), rel=1e-14)
        assert lost[start] == pytest.approx(float(out["overflow"][-1]), rel=1e-14)
        free = exact.banded_outlook(pmf, start, 0, width - 1, "backorder", "stop", horizon)
        assert rooms[width - 1 - start] == pytest.approx(float(free["overflow"][-1]), rel=1e-14)


def test_tiny_tails_keep_their_relative_accuracy():
    # From level 5 a stock-out within 3 periods needs three falls of 2 (5 -> 3 -> 1 -> -1): exactly
    # (1e-30)^3 = 1e-90, one product; from level 6 up it cannot happen at all (exactly 0).
    law = wm.StepLaw.from_pmf({-2: 1e-30, 0: 1.0})
    (risk,) = stacked.stacked_risks([law], 3, [("stockout-stop", 40)])
    assert risk[5] == pytest.approx(1e-90, rel=1e-14)
    assert np.all(risk[6:] == 0.0)


def test_no_rows_and_bad_rows():
    assert stacked.stacked_risks([wm.StepLaw.nearest(0.3, 0.3)], 5, []) == []
    with pytest.raises(ValueError, match="width"):
        stacked.stacked_risks([wm.StepLaw.nearest(0.3, 0.3)], 5, [("stockout-stop", 0)])
    with pytest.raises(ValueError, match="rule"):
        stacked.row_kind("stockout", "lost")


def test_far_steps_are_gathered_at_the_ends():
    # Steps far beyond the band leave it from every level: gathered into one step, the risks are those of
    # the plain sweep (risk_by_start on lost/spill walks sweeps the band with operator.backward_step).
    law = wm.StepLaw.from_pmf({-50: 0.25, -1: 0.25, 0: 0.2, 2: 0.2, 60: 0.1})
    horizon, width = 12, 6
    for above in ("spill", "stop"):
        rows = [(stacked.row_kind("stockout", above), width), ("overflow-lost", width)]
        stockout, overflow = stacked.stacked_risks([law], horizon, rows)
        reference = wm.BandedWalk(law, 0, 0, width - 1, "lost", above).risk_by_start(horizon)
        assert _close(stockout, reference.stockout) <= 1e-12
        assert _close(overflow, reference.overflow) <= 1e-12
    # A law a billion levels away: every start stocks out in the first period, and no pad is that wide.
    away = wm.StepLaw.from_pmf({-(10**9): 0.5, 1 - 10**9: 0.5})
    (certain,) = stacked.stacked_risks([away], 3, [("stockout-spill", 4)])
    assert np.all(certain == 1.0)
    assert np.all(stacked.room_overflow([away], 3, 4) == 0.0)
