"""Cheapest periodic-review (s, S) policy per period on a grid, with an optional service target.

Cost per period = holding x mean on hand + order cost x orders per period +
shortage penalty x mean units short (demand not served from stock).

Every cell of the grid is costed from the shared pieces (walkmath/reviewshared.py): the shared forms add
one gap at a time (``_Shared.gap_curves``); lost sales with a lead time solve every cell's chain in one
stacked pass (``_Shared.chain_gaps``). The grid's default edge is the order-up-to search's
(``_default_top``, walkmath/reviewlevels.py).
"""

from __future__ import annotations

import math

import numpy as np

from walkmath import checks
from walkmath.policy import (
    LEAD_CAP,
    LEVEL_CAP,
    UNMET_RULES,
    PeriodicReview,
    _count_law,
)
from walkmath.reviewlevels import _default_top
from walkmath.reviewshared import _SERVICE, MEASURES, PolicyChoice, _meets, _search_work, _Shared
from walkmath.steplaw import StepLaw

# Largest holding, order or shortage price accepted (any money unit).
PRICE_CAP = 1e12


def best_policy(
    demand: StepLaw,
    *,
    holding: float,
    order_cost: float,
    shortage_penalty: float = 0.0,
    lead_time: int = 0,
    unmet: str = "lost",
    target: float | None = None,
    measure: str = "cycle",
    top: int | None = None,
    largest_gap: int | None = None,
) -> PolicyChoice:
    """Cheapest (s, S) per period on the grid 0 <= s < S <= top, S - s <= largest_gap; optional service target.

    Cost = holding x mean on hand + order_cost x orders per period +
    shortage_penalty x mean units short. ``top`` defaults to a level with no
    stock-outs at the largest gap (see ``_default_top``); ``largest_gap`` to three economic order
    quantities sqrt(2 K E[D] / h) (common practice) and at least 10. The best is
    exact on that grid; the cost curves show whether the grid's edge binds.
    """
    demand = _count_law(demand)
    holding = _price("holding", holding, positive=True)
    order_cost = _price("order_cost", order_cost)
    shortage_penalty = _price("shortage_penalty", shortage_penalty)
    lead_time = checks.whole("lead_time", lead_time, minimum=0, maximum=LEAD_CAP)
    unmet = checks.choice("unmet", unmet, UNMET_RULES)
    measure = checks.choice("measure", measure, MEASURES)
    if target is not None:
        target = checks.open_probability("target", target)
    largest_gap, top = _policy_grid(demand, holding, order_cost, lead_time, unmet, top, largest_gap)
    _search_work(
        "best_policy", demand, lead_time, unmet, top, largest_gap, top, lambda: _cells(largest_gap, top)
    ).check()
    shared = _Shared(demand, lead_time, unmet, top, largest_gap)
    good, bad = _SERVICE[measure]
    # The grid by S (rows) and s ascending (columns: column k holds gap largest_gap - k), so that its
    # valid cells read row by row are the candidates in (S, s) order with no sort.
    shape = (top + 1, largest_gap)
    grid = {name: np.zeros(shape) for name in ("cost", "service", "shortfall")}
    valid = np.zeros(shape, dtype=bool)
    gaps = range(1, largest_gap + 1)
    # The grid reads no backorders: the shared form skips their curve.
    pieces = shared.gap_curves(gaps, backorders=False) if shared.shared else shared.chain_gaps(gaps, top)
    for gap, curves, orders in pieces:
        column = largest_gap - gap
        grid["cost"][gap:, column] = (
            holding * curves["mean_on_hand"] + order_cost * orders + shortage_penalty * curves["mean_short"]
        )
        grid["service"][gap:, column] = curves[good]
        grid["shortfall"][gap:, column] = curves[bad]
        valid[gap:, column] = True
    feasible = valid.copy()
    if target is not None:
        feasible &= _meets(grid["service"], grid["shortfall"], target)
    return _choice(demand, lead_time, unmet, grid, valid, feasible, getattr(shared, "solved", {}))


def _price(name: str, value, positive: bool = False) -> float:
    """A money rate per unit-period, per order or per unit short: finite, at most ``PRICE_CAP``."""
    low = "above 0" if positive else "at least 0"
    message = f"{name} must be a finite number {low} and at most {PRICE_CAP:g}; got {value!r}"
    try:
        price = checks.real(name, value, minimum=0.0, maximum=PRICE_CAP, strict_minimum=positive)
    except ValueError:
        raise ValueError(message) from None
    return price


def _policy_grid(demand, holding, order_cost, lead_time, unmet, top, largest_gap) -> tuple[int, int]:
    """The largest gap S - s and the largest S searched (defaults as ``best_policy`` states them)."""
    if largest_gap is None:
        economic = math.sqrt(2.0 * order_cost * demand.mean / holding)
        largest_gap = max(10, math.ceil(3.0 * economic))
        if top is not None:
            largest_gap = min(largest_gap, top)
    largest_gap = checks.whole("largest_gap", largest_gap, minimum=1, maximum=LEVEL_CAP)
    top = (
        _default_top(demand, lead_time, unmet, largest_gap)
        if top is None
        else checks.whole("top", top, minimum=1, maximum=LEVEL_CAP)
    )
    return min(largest_gap, top), top


def _cells(largest_gap: int, top: int) -> list[tuple[int, int]]:
    """The (s, S) candidates of the cheapest-policy grid, by gap, then S."""
    return [(big_s - gap, big_s) for gap in range(1, largest_gap + 1) for big_s in range(gap, top + 1)]


def _choice(demand, lead_time, unmet, grid, valid, feasible, solved) -> PolicyChoice:
    """The cheapest feasible cell of the (S, s) grid, and the cheapest feasible s for each S.

    ``solved`` maps (s, S) to measures already worked out (lost sales with a lead time: every cell);
    other chosen policies are solved here.

    Ties go to the smallest S, then the smallest s (the first cell in row order, columns by s).
    """
    top, largest_gap = valid.shape[0] - 1, valid.shape[1]
    order_up_to = np.broadcast_to(np.arange(top + 1)[:, None], valid.shape)
    reorder_level = order_up_to - (largest_gap - np.arange(largest_gap))[None, :]
    costs = np.where(feasible, grid["cost"], np.inf)
    column = np.argmin(costs, axis=1)  # the first (smallest s) of the cheapest in each row
    rows = np.flatnonzero(feasible.any(axis=1))
    best_costs = costs[rows, column[rows]]
    if rows.size:
        pick = int(np.argmin(best_costs))  # the first: the smallest S
        row = rows[pick]
        s, big_s, cost = int(reorder_level[row, column[row]]), int(row), float(best_costs[pick])
        measures = solved.get((s, big_s)) or PeriodicReview(demand, s, big_s, lead_time, unmet).measures()
    else:
        s = big_s = cost = measures = None
    return PolicyChoice(
        reorder_level=s,
        order_up_to=big_s,
        cost=cost,
        measures=measures,
        reorder_levels=reorder_level[valid],
        order_up_to_levels=order_up_to[valid],
        costs=grid["cost"][valid],
        service=grid["service"][valid],
        shortfall=grid["shortfall"][valid],
        feasible=feasible[valid],
        curve_order_up_to=rows.astype(int),
        curve_reorder_level=reorder_level[rows, column[rows]].astype(int),
        curve_cost=best_costs.astype(float),
    )
