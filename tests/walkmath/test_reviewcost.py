"""Prices of the design solvers (walkmath/reviewcost.py): each covers every step its solver checks."""

from __future__ import annotations

import pytest

import walkmath as wm
from walkmath.reviewcost import best_policy_work, order_up_to_work
from walkmath.reviewdesign import best_policy, smallest_order_up_to


def _checked_units(monkeypatch, call) -> int:
    """Units of every Work the call checks against the cap (as the engine prices it on the way)."""
    seen = []
    real = wm.Work.check

    def record(work, cap=wm.WORK_CAP):
        seen.append(work.units)
        return real(work, cap)

    monkeypatch.setattr(wm.Work, "check", record)
    call()
    monkeypatch.undo()
    return sum(seen)


@pytest.mark.parametrize("lead_time, gap", [(0, 1), (3, 1), (6, 9), (14, 4)])
def test_search_prices_cover_what_the_searches_check(monkeypatch, lead_time, gap):
    demand = wm.StepLaw.negative_binomial(mean=2.0, variance=5.0)
    priced = order_up_to_work(demand, lead_time, "backorder", gap=gap).units
    spent = _checked_units(
        monkeypatch, lambda: smallest_order_up_to(demand, 0.99, "fill", lead_time, "backorder", gap=gap)
    )
    assert spent > 0 and priced >= spent
    priced = best_policy_work(demand, holding=1.0, order_cost=8.0, lead_time=lead_time, unmet="backorder").units
    spent = _checked_units(
        monkeypatch,
        lambda: best_policy(
            demand, holding=1.0, order_cost=8.0, shortage_penalty=3.0, lead_time=lead_time, unmet="backorder"
        ),
    )
    assert spent > 0 and priced >= spent


def test_search_prices_refuse_what_the_searches_refuse():
    demand = wm.StepLaw.poisson(mean=2.0)
    with pytest.raises(ValueError, match="gap must be a whole number"):
        order_up_to_work(demand, 2, "backorder", gap=0)
    with pytest.raises(ValueError, match="holding must be a finite number above 0"):
        best_policy_work(demand, holding=0.0, order_cost=1.0)


@pytest.mark.parametrize("lead_time", [1, 2])
def test_lost_sales_search_prices_cover_what_the_searches_check(monkeypatch, lead_time):
    # Lost sales with a lead time: every candidate's chain in the stacked pass (walkmath/reviewstack.py).
    demand = wm.StepLaw.poisson(mean=0.8)
    priced = order_up_to_work(demand, lead_time, "lost", gap=3, top=10).units
    spent = _checked_units(
        monkeypatch, lambda: smallest_order_up_to(demand, 0.95, "fill", lead_time, "lost", gap=3, top=10)
    )
    assert spent > 0 and priced >= spent
    priced = best_policy_work(demand, holding=1.0, order_cost=4.0, lead_time=lead_time, unmet="lost", top=9).units
    spent = _checked_units(
        monkeypatch,
        lambda: best_policy(
            demand, holding=1.0, order_cost=4.0, shortage_penalty=2.0, lead_time=lead_time, unmet="lost", top=9
        ),
    )
    assert spent > 0 and priced >= spent
