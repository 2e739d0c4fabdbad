"""walkmath.portfolio: many items at once, each answered as the single-item engine answers it."""

from fractions import Fraction

import pytest

import walkmath as wm
from walkmath import portfolio as pf


def _coin_item(**changes):
    law = wm.StepLaw.nearest(up=0.5, down=0.5)
    values = dict(laws=(law,), start=2, horizon=4, stockout_target=0.2, high=6, overflow_target=0.2, below="stop")
    values.update(changes)
    return pf.StockItem(**values)


def _first_passage_below_zero(start: int, horizon: int, high: int) -> Fraction:
    """P(a fair coin walk from ``start`` steps below 0 within ``horizon`` steps, never above ``high`` first),
    by enumerating every path in exact fractions."""
    total = Fraction(0)
    for path in range(2**horizon):
        level = start
        for step in range(horizon):
            level += 1 if path >> step & 1 else -1
            if level > high:
                break
            if level < 0:
                total += Fraction(1, 2**horizon)
                break
    return total


def test_stock_item_risk_matches_path_enumeration():
    # Exact rational arithmetic over all 2^8 paths (brute force, independent of the engine).
    item = _coin_item(start=2, horizon=8, high=6)
    answer = pf.answer_items([item])[0].answer
    assert answer.stockout == pytest.approx(float(_first_passage_below_zero(2, 8, 6)), rel=1e-12)


def test_smallest_start_is_minimal():
    item = _coin_item(start=3, horizon=6, stockout_target=0.3)
    answer = pf.answer_items([item])[0].answer
    best = answer.smallest_start
    assert best is not None
    assert float(_first_passage_below_zero(best, 6, 6)) <= 0.3
    assert best == 0 or float(_first_passage_below_zero(best - 1, 6, 6)) > 0.3


def test_bad_item_gets_reason_and_others_still_answer():
    good = _coin_item()
    bad = _coin_item(stockout_target=1.5)
    outcomes = pf.answer_items([good, bad, good])
    assert outcomes[0].answer == outcomes[2].answer is not None
    assert outcomes[1].answer is None and "stockout_target" in outcomes[1].reason


def test_item_over_the_cap_is_reported_not_run():
    wide = wm.StepLaw.poisson(mean=20.0)
    law = wm.StepLaw.net(arrivals=wide, demand=wide)
    item = pf.StockItem((law,), start=100, horizon=3650, stockout_target=0.01, high=5000, overflow_target=0.01)
    outcome = pf.answer_items([item], cap=10**9)[0]
    assert outcome.answer is None and outcome.reason.startswith("too large to work out")


def test_reorder_item_matches_published_poisson_example():
    # Poisson lead-time demand with mean 4: 95 % needs 8 (Stevenson, Operations Management, Poisson
    # service-level example; P(D <= 7) = 0.948866, P(D <= 8) = 0.978637).
    item = pf.ReorderItem(wm.StepLaw.poisson(mean=1.0), lead_time=4, target=0.95)
    answer = pf.answer_items([item])[0].answer
    assert answer.reorder_point == 8
    assert answer.achieved == pytest.approx(0.978637, abs=5e-7)


def test_spares_item_meets_target_with_smallest_spares():
    item = pf.SparesItem(units=4, spares=1, failure_rate=0.05, repair_rate=0.5, availability_target=0.99)
    answer = pf.answer_items([item])[0].answer
    assert answer.availability + answer.unavailability == pytest.approx(1.0, abs=1e-15)
    best = answer.smallest_spares
    pool = wm.SparesPool(units=4, spares=best, failure_rate=0.05, repair_rate=0.5)
    assert pool.availability() >= 0.99
    if best > 0:
        assert wm.SparesPool(units=4, spares=best - 1, failure_rate=0.05, repair_rate=0.5).availability() < 0.99
