"""walkmath.portfolio: many items at once, each answered as the single-item engine answers it."""

import dataclasses
import math
from fractions import Fraction

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import walkmath as wm
from tests.walkmath import exact
from walkmath import portfolio as pf
from walkmath import portfolio_sample


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


# -- the batched path against the reference, item by item --------------------------------------


def _close(fast: float, reference: float) -> bool:
    """Risks equal up to rounding: 1e-12 relative, 1e-8 relative for tails below 1e-8 (the house rule)."""
    return math.isclose(fast, reference, rel_tol=1e-12 if reference > 1e-8 else 1e-8, abs_tol=1e-300)


def assert_same_outcomes(fast, reference):
    assert len(fast) == len(reference)
    for position, (mine, theirs) in enumerate(zip(fast, reference, strict=True)):
        assert mine.reason == theirs.reason, position
        assert type(mine.answer) is type(theirs.answer), position
        if theirs.answer is None:
            continue
        for field in dataclasses.fields(theirs.answer):
            got, want = getattr(mine.answer, field.name), getattr(theirs.answer, field.name)
            if isinstance(want, float):
                assert _close(got, want), (position, field.name, got, want)
            else:
                assert got == want, (position, field.name, got, want)  # whole numbers and None: exactly


def _mixed_portfolio():
    """Shared and distinct laws, cycles, every rule pair, no capacity, bad items, reorder and spares items."""
    poisson = wm.StepLaw.poisson
    coin = wm.StepLaw.nearest(up=0.3, down=0.4)
    table = wm.StepLaw.from_pmf({-2: 0.15, -1: 0.3, 0: 0.2, 1: 0.25, 2: 0.1})
    supplied = wm.StepLaw.net(arrivals=poisson(1.5), demand=poisson(1.5))
    quiet = wm.StepLaw.net(arrivals=wm.StepLaw.fixed(0), demand=poisson(1.2))
    cycle = (quiet, quiet, wm.StepLaw.net(arrivals=wm.StepLaw.fixed(4), demand=poisson(1.2)))
    items = []
    for number, (below, above) in enumerate((b, a) for b in ("backorder", "lost", "stop") for a in ("spill", "stop")):
        for laws in ((coin,), (table,), (supplied,), cycle):
            high = 6 + 3 * number % 11
            items.append(
                pf.StockItem(
                    laws,
                    start=2 + number % 4,
                    horizon=25,
                    stockout_target=(0.05, 0.2, 0.5)[number % 3],
                    low=number % 2,
                    high=high,
                    below=below,
                    above=above,
                    overflow_target=(0.02, 0.1)[number % 2],
                )
            )
        items.append(pf.StockItem((table,), start=3, horizon=20, stockout_target=0.1, below=below, above=above))
        items.append(pf.StockItem((coin,), start=4, horizon=20, stockout_target=0.1, high=9, below=below, above=above))
    # A law of its own: a hair away from the shared one.
    items.append(pf.StockItem((wm.StepLaw.nearest(up=0.3000001, down=0.4),), 3, 25, 0.1, high=8, overflow_target=0.05))
    # Bad items, each refused with its own reason while the others answer.
    items.append(pf.StockItem((coin,), start=3, horizon=10, stockout_target=1.5, high=8))
    items.append(pf.StockItem((coin,), start=9, horizon=10, stockout_target=0.1, high=8))
    items.append(pf.StockItem((coin,), start=3, horizon=10, stockout_target=0.1, high=8, below="sideways"))
    items.append(pf.StockItem((coin,), start=3, horizon=10, stockout_target=0.1, high=8, overflow_target=-0.5))
    items.append(pf.StockItem((), start=3, horizon=10, stockout_target=0.1))
    demand = poisson(1.5)
    items += [
        pf.ReorderItem(demand, lead_time=3, target=0.95),
        pf.ReorderItem(demand, lead_time=3, target=0.99),  # shares the lead-time law with the one before
        pf.ReorderItem(demand, lead_time=3, target=0.97, measure="fill", order_quantity=6),
        pf.ReorderItem(demand, lead_time=wm.StepLaw.from_pmf({2: 0.5, 4: 0.5}), target=0.9, review_period=1),
        pf.ReorderItem(demand, lead_time=3, target=1.0),
        pf.ReorderItem(demand, lead_time=3, target=0.9, measure="fill"),  # no order quantity
        pf.SparesItem(units=4, spares=1, failure_rate=0.05, repair_rate=0.5, availability_target=0.99),
    ]
    return items


def test_batched_answers_equal_the_reference_on_a_mixed_portfolio():
    items = _mixed_portfolio()
    fast, reference = pf.answer_items(items), pf.answer_items_by_item(items)
    assert_same_outcomes(fast, reference)
    assert sum(outcome.answer is None for outcome in reference) == 7  # the bad ones, and only they
    assert any(o.answer.smallest_capacity is not None for o in reference if isinstance(o.answer, pf.StockAnswer))


def test_batched_answers_equal_the_reference_under_a_tight_cap():
    # Refused at the price, refused part-way through a capacity search, or answered: the same either way.
    items = _mixed_portfolio()
    prices = sorted(pf.stock_item_work(item).units for item in items[:30])
    for cap in (prices[0], prices[len(prices) // 2], prices[-2]):
        reference = pf.answer_items_by_item(items, cap=cap)
        assert any(o.reason.startswith("too large to work out") for o in reference)
        assert_same_outcomes(pf.answer_items(items, cap=cap), reference)


def test_a_refusal_at_the_price_is_the_reference_refusal_without_any_work():
    # What a portfolio run writes for an item before queueing its work (``item_refusal``) is what the
    # reference would answer for it: over the cap, or not valid. An item that fits may still be refused
    # later (a capacity or spares search reaching the cap); none refused at its price is ever answered.
    items = _mixed_portfolio()
    items.append(pf.SparesItem(units=40, spares=3, failure_rate=0.05, repair_rate=0.5, availability_target=0.99))
    invalid = [item for item in items if pf.item_refusal(item) and not pf.item_refusal(item).startswith("too large")]
    assert len(invalid) >= 4  # the bad stock items' values, refused at any cap
    prices = sorted(pf.item_work(item).units for item in items if item not in invalid)
    for cap in (prices[0] - 1, prices[len(prices) // 2], prices[-1], pf.WORK_CAP):
        reference = pf.answer_items_by_item(items, cap=cap)
        refusals = [pf.item_refusal(item, cap=cap) for item in items]
        for item, refusal, outcome in zip(items, refusals, reference, strict=True):
            if refusal:
                assert outcome.answer is None and outcome.reason == refusal, item
        over = sum(refusal.startswith("too large to work out:") for refusal in refusals)
        assert over == sum(price > cap for price in prices)  # every item priced, each against the cap
    spares = items[-1]
    held = wm.SparesPool(units=40, spares=3, failure_rate=0.05, repair_rate=0.5).cost("long_run").units
    none = wm.SparesPool(units=40, spares=0, failure_rate=0.05, repair_rate=0.5).cost("long_run").units
    assert pf.spares_item_work(spares).units == held + none  # the two pools every spares answer works out
    assert pf.item_refusal(spares, cap=held + none) == ""
    assert pf.item_refusal(spares, cap=held + none - 1).startswith("too large to work out:")


def test_batched_answers_equal_the_reference_on_a_sampled_store():
    # The benchmark's store on a shorter horizon (the reference takes up to a second an item at 90 days).
    stock = [dataclasses.replace(item, horizon=30) for item in portfolio_sample.stock_items(40, seed=7)]
    items = stock + portfolio_sample.reorder_items(40, seed=7)
    assert_same_outcomes(pf.answer_items(items), pf.answer_items_by_item(items))


def test_unreachable_stockout_target_matches_the_reference():
    # A stock-out target no capacity meets (spill): the reference gallops to the end of its reach, the
    # batched path settles it from a lower bound and replays the search's path (and its work) without probes.
    law = wm.StepLaw.net(arrivals=wm.StepLaw.poisson(4.0), demand=wm.StepLaw.poisson(4.0))
    item = pf.StockItem((law,), start=3, horizon=40, stockout_target=0.01, high=20, below="lost", overflow_target=0.05)
    work = pf.stock_item_work(item).units
    for cap in (work, 10 * work, pf.WORK_CAP):
        assert_same_outcomes(pf.answer_items([item], cap=cap), pf.answer_items_by_item([item], cap=cap))
    assert pf.answer_items([item])[0].answer.smallest_capacity is None


_STEPS = st.dictionaries(st.integers(-3, 3), st.integers(1, 9), min_size=1, max_size=5)


@st.composite
def _small_stock_items(draw):
    weights = draw(_STEPS)
    total = sum(weights.values())
    law = wm.StepLaw.from_pmf({step: weight / total for step, weight in weights.items()})
    cycle = (law,) if draw(st.booleans()) else (law, wm.StepLaw.net(arrivals=law, demand=wm.StepLaw.fixed(-2)))
    low = draw(st.integers(-2, 2))
    high = draw(st.one_of(st.none(), st.integers(low, low + 12)))
    start = draw(st.integers(low, high if high is not None else low + 12))
    return pf.StockItem(
        cycle,
        start=start,
        horizon=draw(st.integers(1, 18)),
        stockout_target=draw(st.sampled_from((0.0, 0.01, 0.1, 0.3, 1.0))),
        low=low,
        high=high,
        below=draw(st.sampled_from(("backorder", "lost", "stop"))),
        above=draw(st.sampled_from(("spill", "stop"))),
        overflow_target=draw(st.sampled_from((None, 0.0, 0.01, 0.1, 0.5))),
    )


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(_small_stock_items(), min_size=1, max_size=6))
def test_batched_answers_equal_the_reference_on_random_mixtures(items):
    items = items + items[:2]  # repeated items share every sweep
    assert_same_outcomes(pf.answer_items(items), pf.answer_items_by_item(items))


# Exact rational risks of a small walk (tests/walkmath/exact.py: the rules read literally, in fractions).
_QUARTERS = {-1: Fraction(1, 4), 0: Fraction(1, 4), 1: Fraction(1, 2)}
_LAW = wm.StepLaw.from_pmf({step: float(p) for step, p in _QUARTERS.items()})


def _exact_risks(start, high, below, above, horizon):
    out = exact.banded_outlook(_QUARTERS, start, 0, high, below, above, horizon)
    return out["stockout"][-1], out["overflow"][-1]


@pytest.mark.parametrize("below", ["backorder", "lost", "stop"])
@pytest.mark.parametrize("above", ["spill", "stop"])
def test_smallest_start_and_capacity_match_exact_fractions(below, above):
    horizon, high, start, stockout_target, overflow_target = 7, 5, 3, 0.3, 0.2
    item = pf.StockItem((_LAW,), start, horizon, stockout_target, 0, high, below, above, overflow_target)
    answer = pf.answer_items([item])[0].answer
    stockout, overflow = _exact_risks(start, high, below, above, horizon)
    assert answer.stockout == pytest.approx(float(stockout), rel=1e-12)
    assert answer.overflow == pytest.approx(float(overflow), rel=1e-12)
    meeting = [
        s
        for s in range(0, high + 1)
        if _exact_risks(s, high, below, above, horizon)[0] <= Fraction(stockout_target)
        and _exact_risks(s, high, below, above, horizon)[1] <= Fraction(overflow_target)
    ]
    assert answer.smallest_start == (meeting[0] if meeting else None)
    # Smallest capacity by its definition (walkmath.sizing.smallest_capacity): spill needs both targets,
    # stop needs the overflow target and then the stock-out target at that capacity.
    capacity = None
    for c in range(start, start + horizon + 1):
        risk_low, risk_high = _exact_risks(start, c, below, above, horizon)
        if risk_high <= Fraction(overflow_target) and (above == "stop" or risk_low <= Fraction(stockout_target)):
            capacity = c if above == "spill" or risk_low <= Fraction(stockout_target) else None
            break
    assert answer.smallest_capacity == capacity
