"""walkmath.portfolio_sample: the benchmark's seeded store stays within the ranges it states."""

import numpy as np

from walkmath import portfolio_sample as ps


def test_store_is_reproducible_and_within_its_ranges():
    items = ps.stock_items(300, seed=4)
    again = ps.stock_items(300, seed=4)
    assert [(i.start, i.high, i.below, i.laws[0].mean) for i in items] == [
        (i.start, i.high, i.below, i.laws[0].mean) for i in again
    ]
    for item in items:
        assert item.horizon == ps.HORIZON
        assert item.low <= item.start and (item.high is None or item.start <= item.high <= ps.MAX_CAPACITY)
        assert item.stockout_target in ps.TARGETS
        assert len(item.laws) in (1, *ps.DELIVERY_DAYS)
    assert sum(item.high is None for item in items) > 0
    assert {item.below for item in items} == {"backorder", "lost", "stop"}


def test_one_decimal_means_share_laws_and_distinct_means_do_not():
    shared = ps.stock_items(400, seed=5)
    assert ps.distinct_laws(shared) < len(shared)
    distinct = ps.stock_items(60, seed=5, distinct=True)
    assert ps.distinct_laws(distinct) == len(distinct)
    means = ps.daily_means(np.random.default_rng(1), 1000)
    assert means.min() >= 0.1 and means.max() <= ps.MAX_MEAN


def test_reorder_items_within_their_ranges():
    for item in ps.reorder_items(200, seed=6):
        assert 1 <= item.lead_time <= 30
        assert item.measure == "cycle" or item.order_quantity >= 1
