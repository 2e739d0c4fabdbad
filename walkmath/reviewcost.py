"""Prices of the design solvers (walkmath/reviewdesign.py), before any of their work runs.

Each returns the ``Work`` the solver will check with the same arguments (its
default grid included), so a caller with a tighter budget (a web request) can
price the call first: the search itself, the lead-time demand law it builds,
and for the cheapest policy the chosen policy's own measures. ``Work + Work``
adds units exactly (walkmath/cost.py).
"""

from __future__ import annotations

from functools import partial

from walkmath import checks
from walkmath.cost import Work
from walkmath.distribution import law_power_work
from walkmath.policy import LEAD_CAP, UNMET_RULES, PeriodicReview, _count_law
from walkmath.reviewcheapest import _cells, _policy_grid, _price
from walkmath.reviewlevels import _at_gap, _base_stock_bound, _inside, _lost_solves_work, _order_up_to_grid
from walkmath.reviewshared import MEASURES, _search_work
from walkmath.steplaw import StepLaw


def order_up_to_work(
    demand: StepLaw,
    lead_time: int = 0,
    unmet: str = "lost",
    gap: int = 1,
    top: int | None = None,
    *,
    target: float | None = None,
    measure: str = "cycle",
    include: tuple[int, ...] = (),
) -> Work:
    """Priced work of ``smallest_order_up_to`` with these arguments (its default ``top`` included).

    Nothing is solved for backorders or lead time 0; lost sales with a lead time
    first find the default top (a backorder search, itself cheap). An order-up-to
    search with lost sales and a lead time is a bisection: with ``target`` given,
    its chain solves are priced below the backorder answer for that target (found
    here, cheaply, as the search finds it), without it below ``top``.
    """
    demand = _count_law(demand)
    lead_time = checks.whole("lead_time", lead_time, minimum=0, maximum=LEAD_CAP)
    unmet = checks.choice("unmet", unmet, UNMET_RULES)
    gap, top = _order_up_to_grid(demand, lead_time, unmet, gap, top)
    lead = _lead_work(demand, lead_time, unmet)
    if unmet == "lost" and lead_time > 0 and gap == 1:
        include = _inside(include, gap, top)
        bound = top
        if target is not None:
            target = checks.open_probability("target", target)
            measure = checks.choice("measure", measure, MEASURES)
            bound, _ = _base_stock_bound(demand, target, measure, lead_time, top)
            lead = law_power_work(demand, lead_time)  # the backorder search's lead-time law
        return _lost_solves_work("smallest_order_up_to", demand, lead_time, bound, include) + lead
    policies = partial(_at_gap, gap, range(gap, top + 1))
    return _search_work("smallest_order_up_to", demand, lead_time, unmet, top, 1, top - gap + 1, policies) + lead


def best_policy_work(
    demand: StepLaw,
    *,
    holding: float,
    order_cost: float,
    lead_time: int = 0,
    unmet: str = "lost",
    top: int | None = None,
    largest_gap: int | None = None,
) -> Work:
    """Priced work of ``best_policy`` with these arguments (its default grid included), before any of it runs."""
    demand = _count_law(demand)
    holding = _price("holding", holding, positive=True)
    order_cost = _price("order_cost", order_cost)
    lead_time = checks.whole("lead_time", lead_time, minimum=0, maximum=LEAD_CAP)
    unmet = checks.choice("unmet", unmet, UNMET_RULES)
    largest_gap, top = _policy_grid(demand, holding, order_cost, lead_time, unmet, top, largest_gap)
    # The search and its lead-time law; then the chosen policy's measures (bounded by the largest S and gap),
    # which build their own lead-time law; lost sales with a lead time keep the chosen cell's from the search.
    lead = _lead_work(demand, lead_time, unmet)
    chosen = PeriodicReview(demand, top - largest_gap, top, lead_time, unmet).cost() + lead
    if unmet == "lost" and lead_time > 0:
        chosen = Work("best_policy", 1, 0, 1, copies=0)
    cells = partial(_cells, largest_gap, top)
    return _search_work("best_policy", demand, lead_time, unmet, top, largest_gap, top, cells) + lead + chosen


def _lead_work(demand: StepLaw, lead_time: int, unmet: str) -> Work:
    """The lead-time demand law the shared forms build once (priced on its own by ``law_power``)."""
    if lead_time == 0 or unmet == "lost":
        return Work("lead_time_demand", 1, 0, 1, copies=0)
    return law_power_work(demand, lead_time)
