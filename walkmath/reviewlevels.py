"""Smallest order-up-to level and smallest reorder level of a periodic-review (s, S) policy meeting a service target.

Backorders, and lost sales without a lead time, read every candidate off the shared forms
(walkmath/reviewshared.py); lost sales with a lead time solve each candidate's chain, stacked.

With lost sales and a lead time, for an order-up-to policy (s = S - 1), the search is a bisection over S
(``smallest_order_up_to``), which is sound because both facts below are proved, not assumed:

1. Service grows with S (coupling). Run the policies for S and S + 1 on the
   same demands, from S and S + 1 on hand. At every review after ordering,
   the S + 1 system holds the S system's stock plus one extra unit, on the
   shelf or in one order due: the positions differ by 1, so both order at
   the same reviews, the same amounts; while the extra unit is on order both
   shelves are equal; on the shelf, it is either kept, or sold in a period
   whose demand empties the S shelf, after which the positions are equal and
   the S + 1 system orders exactly one unit more at the next review. So the
   S + 1 shelf is never below the S shelf when demand comes: every stock-out
   of the S + 1 system is one of the S system, it sells at least as much and
   ends each period with at least as much on hand. Long-run measures are
   averages over periods of the chain (one closed class), so the stock-out
   probability and the mean units short do not grow with S, the in-stock
   probability, fill rate and mean on hand do not fall. (The same sample-path
   idea as Janakiraman and Roundy, "Lost-sales problems with stochastic lead
   times: convexity results for base-stock policies", Operations Research 52,
   2004; from memory.) With a gap above 1 the orders differ and the coupling
   fails, so those searches test every candidate and force no monotonicity.
2. Backorders bound lost sales from below (same coupling idea). With an
   order-up-to policy, after ordering the position is S, so the lost-sales
   shelf at a period's demand is S minus the units sold in the last L
   periods, and the backorder net stock is S minus the demand of the same
   periods; sales never exceed demand, so the lost-sales shelf is at least the
   backorder net stock on every path and its service at least as high. The
   backorder system's smallest S (the renewal form: cheap, every S at once) is
   therefore an S at which lost sales meet the target: the bisection's top.

Cost: the backorder search, then at most ceil(log2 S_b) + 2 chain solves
(S_b the backorder answer, each priced at it) plus a coarse grid of
``GRID_POINTS`` levels and any levels the caller asks for (``include``), in
one stacked pass (``_lost_solves_work``), instead of one solve for every S up
to the search's top; the curve holds only the levels solved, each exact on its
own, made monotone by a running max / min (fact 1).
"""

from __future__ import annotations

import math
from dataclasses import replace
from functools import partial

import numpy as np

from walkmath import checks
from walkmath.cost import Work
from walkmath.policy import (
    LEAD_CAP,
    LEVEL_CAP,
    UNMET_RULES,
    PolicyMeasures,
    _count_law,
)
from walkmath.reviewshared import _KNOB, _SERVICE, MEASURES, LevelSearch, _meets, _search_work, _Shared, _stacked_curves
from walkmath.reviewstack import lost_sales_measures, stack_work
from walkmath.reviewsweep import lost_policy_measures
from walkmath.steplaw import StepLaw

# Unfilled share of the backorder policy at the default search edge for lost sales with a lead time.
LOST_EDGE = 1e-9
# Levels of the coarse grid solved for the curve of an order-up-to search with lost sales and a lead time.
GRID_POINTS = 9


# -- smallest order-up-to level -------------------------------------------------------------------------------------


def smallest_order_up_to(
    demand: StepLaw,
    target: float,
    measure: str = "cycle",
    lead_time: int = 0,
    unmet: str = "lost",
    gap: int = 1,
    top: int | None = None,
    include: tuple[int, ...] = (),
) -> LevelSearch:
    """Smallest S (with s = S - ``gap``; gap 1 is an order-up-to policy) whose long-run service meets ``target``.

    Candidates S = gap..top; ``top`` defaults to a level where no stock-out can
    happen, so an answer always exists then (lost sales with a lead time: see
    ``_default_top``; the answer is None if the target is not met by then). One drop law, one convolution per
    measure over all S (exact up to rounding, curves monotone in S).

    Lost sales with a lead time: for gap 1 a bisection over S, the curve on the levels solved plus
    ``include`` (levels the caller wants on it; those outside gap..top are left out); for a larger
    gap every candidate is solved and the curves are as computed (no monotonicity is proved there).
    See the module's docstring.
    """
    demand, target, measure, lead_time, unmet = _common(demand, target, measure, lead_time, unmet)
    gap, top = _order_up_to_grid(demand, lead_time, unmet, gap, top)
    include = _inside(include, gap, top)
    shared = _Shared(demand, lead_time, unmet, top, gap)
    if not shared.shared and gap == 1:
        return _lost_order_up_to(shared, target, measure, top, include)
    levels = np.arange(gap, top + 1)
    policies = partial(_at_gap, gap, levels)
    _search_work("smallest_order_up_to", demand, lead_time, unmet, top, 1, levels.size, policies).check()
    if shared.shared:
        _, drop, orders = next(shared.drops([gap]))
        curves = shared.curves(drop, levels)
        orders = np.full(levels.size, orders)
    else:
        curves, orders = _stacked_curves(lost_sales_measures(demand, policies(), lead_time))
    return _level_search(measure, target, levels, curves, orders)


def _common(demand, target, measure, lead_time, unmet):
    demand = _count_law(demand)
    target = checks.open_probability("target", target)
    measure = checks.choice("measure", measure, MEASURES)
    lead_time = checks.whole("lead_time", lead_time, minimum=0, maximum=LEAD_CAP)
    unmet = checks.choice("unmet", unmet, UNMET_RULES)
    return demand, target, measure, lead_time, unmet


def _order_up_to_grid(demand: StepLaw, lead_time: int, unmet: str, gap, top) -> tuple[int, int]:
    gap = checks.whole("gap", gap, minimum=1, maximum=LEVEL_CAP)
    if top is None:
        return gap, _default_top(demand, lead_time, unmet, gap)
    return gap, checks.whole("top", top, minimum=gap, maximum=LEVEL_CAP)


def _default_top(demand: StepLaw, lead_time: int, unmet: str, gap: int) -> int:
    """Largest S searched by default.

    Shared forms: an S at which no stock-out can happen, S - (gap - 1) - L x max
    demand >= max demand (cheap, so the search is complete). Lost sales with a lead
    time (one chain per candidate): the smallest S whose backorder policy with the
    same gap fills all but 1e-9 of demand, a heuristic edge the curves let one check.
    """
    certain = gap - 1 + (lead_time + 1) * demand.highest
    if unmet == "backorder" or lead_time == 0:
        return certain
    return smallest_order_up_to(demand, 1.0 - LOST_EDGE, "fill", lead_time, "backorder", gap=gap).answer or certain


def _inside(include, gap: int, top: int) -> tuple[int, ...]:
    """The asked-for levels that are candidates (gap..top), whole numbers; others are left out."""
    levels = {checks.whole("include", level, minimum=0, maximum=LEVEL_CAP) for level in include}
    return tuple(sorted(level for level in levels if gap <= level <= top))


def _at_gap(gap: int, levels) -> list[tuple[int, int]]:
    """The (s, S) candidates of an order-up-to search with this gap."""
    return [(int(level) - gap, int(level)) for level in levels]


def _lost_order_up_to(shared: _Shared, target: float, measure: str, top: int, include) -> LevelSearch:
    """Order-up-to search with lost sales and a lead time: bisection below the backorder answer (module docstring)."""
    demand, lead_time = shared.demand, shared.lead_time
    bound, sure = _base_stock_bound(demand, target, measure, lead_time, top)
    _lost_solves_work("smallest_order_up_to", demand, lead_time, bound, include).check()
    good, bad = _SERVICE[measure]
    solved: dict[int, PolicyMeasures] = {}

    def meets(level: int) -> bool:
        if level not in solved:
            solved[level] = lost_sales_measures(demand, [(level - 1, level)], lead_time)[0]
        row = solved[level]
        return bool(_meets(np.array(getattr(row, good)), np.array(getattr(row, bad)), target))

    low, high = 1, bound
    if not sure and not meets(bound):
        low = high = None
    while low is not None and low < high:  # invariant: bound meets; every level below low fails
        middle = (low + high) // 2
        low, high = (low, middle) if meets(middle) else (middle + 1, high)
    if low is not None:
        meets(low)
    rest = sorted({*_grid(bound).tolist(), *include} - set(solved))  # the curve's other levels, in one pass
    solved.update(
        zip(rest, lost_sales_measures(demand, [(level - 1, level) for level in rest], lead_time), strict=True)
    )
    levels = np.array(sorted(solved))
    names = [name for name in PolicyMeasures.__dataclass_fields__ if name != "orders_per_period"]
    curves = {name: np.array([getattr(solved[level], name) for level in levels]) for name in names}
    orders = np.array([solved[level].orders_per_period for level in levels])
    curves = _monotone(curves)  # fact 1 of the module's docstring: each measure is monotone in S
    curves["mean_on_hand"] = np.maximum.accumulate(curves["mean_on_hand"])
    curves["mean_short"] = np.minimum.accumulate(curves["mean_short"])
    return _level_search(measure, target, levels, curves, orders)


def _base_stock_bound(demand: StepLaw, target: float, measure: str, lead_time: int, top: int) -> tuple[int, bool]:
    """An order-up-to level where lost sales surely meet the target (the backorder answer; fact 2 of the
    module's docstring), and True; or ``top`` and False when backorders do not meet it by ``top``."""
    back = smallest_order_up_to(demand, target, measure, lead_time, "backorder", gap=1, top=top)
    return (back.answer, True) if back.answer is not None else (top, False)


def _lost_solves_work(method: str, demand: StepLaw, lead_time: int, bound: int, include) -> Work:
    """Chain solves of a lost-sales order-up-to search: the bisection below ``bound``, the grid, ``include``.

    The bisection's levels, not known in advance, are each priced at ``bound``, one at a time; the grid's
    and ``include``'s in one stacked pass (``stack_work``).
    """
    bisection = math.ceil(math.log2(bound + 1)) + 2
    single = stack_work(method, demand, [(bound - 1, bound)], lead_time, _KNOB)
    levels = sorted({*_grid(bound).tolist(), *include})
    rest = stack_work(method, demand, [(level - 1, level) for level in levels], lead_time, _KNOB)
    return replace(rest, dense=rest.dense + bisection * single.units, periods=rest.periods + bisection)


def _grid(bound: int) -> np.ndarray:
    """The coarse grid of order-up-to levels 1..bound solved for the curve."""
    return np.unique(np.rint(np.linspace(1, bound, GRID_POINTS)).astype(int))


# -- smallest reorder level ----------------------------------------------------------------------------------------


def smallest_reorder_level(
    demand: StepLaw,
    order_up_to: int,
    target: float,
    measure: str = "cycle",
    lead_time: int = 0,
    unmet: str = "lost",
) -> LevelSearch:
    """Smallest reorder level s in 0..S-1, for a given S, whose long-run service meets ``target``.

    A higher s orders sooner, so service grows with s (for the shared forms; lost sales with a lead
    time solve each s, partly from one shared reduction, and force no monotonicity, the answer being the
    first s meeting the target).
    The drop laws for gaps S - s = 1..S come one from the other (one shifted copy each); each is read at
    the one level S by dot products. Curves monotone in s.
    """
    demand, target, measure, lead_time, unmet = _common(demand, target, measure, lead_time, unmet)
    order_up_to = checks.whole("order_up_to", order_up_to, minimum=1, maximum=LEVEL_CAP)
    policies = partial(_at_level, order_up_to)
    _search_work(
        "smallest_reorder_level", demand, lead_time, unmet, order_up_to, order_up_to, 1, policies, one_level=True
    ).check()
    shared = _Shared(demand, lead_time, unmet, order_up_to, order_up_to)
    level = np.array([order_up_to])
    rows, orders = [], []
    if shared.shared:
        for _gap, drop, ordered in shared.drops(range(1, order_up_to + 1)):
            rows.append(shared.curves(drop, level))
            orders.append(ordered)
    else:
        for measures in lost_policy_measures(demand, policies(), lead_time):
            curves, ordered = _stacked_curves([measures])
            rows.append(curves)
            orders.append(float(ordered[0]))
    # Gaps 1..S are reorder levels S-1..0: reverse so that levels run upwards.
    curves = {name: np.array([row[name][0] for row in rows[::-1]]) for name in rows[0]}
    levels = np.arange(0, order_up_to)
    if shared.shared:  # the shared forms' service grows with s; lost sales with a lead time: as computed
        curves = _monotone(curves)
    return _level_search(measure, target, levels, curves, np.array(orders[::-1]))


def _at_level(order_up_to: int) -> list[tuple[int, int]]:
    """The (s, S) candidates of a reorder-level search, by gap 1..S (reorder levels S - 1 down to 0)."""
    return [(s, order_up_to) for s in range(order_up_to - 1, -1, -1)]


# -- the curves and the answer, for both searches -------------------------------------------------------------------


def _monotone(curves: dict[str, np.ndarray]) -> dict[str, np.ndarray]:
    """Service grows along the candidates; each is computed on its own, so rounding ripples are removed."""
    for name in ("stockout_probability", "unfilled_share"):
        curves[name] = np.minimum.accumulate(curves[name])
    for name in ("in_stock_probability", "fill_rate"):
        curves[name] = np.maximum.accumulate(curves[name])
    return curves


def _level_search(measure, target, levels, curves, orders) -> LevelSearch:
    good, bad = _SERVICE[measure]
    service, shortfall = curves[good], curves[bad]
    hits = np.flatnonzero(_meets(service, shortfall, target))
    return LevelSearch(
        measure=measure,
        target=target,
        answer=int(levels[hits[0]]) if hits.size else None,
        levels=levels,
        service=service,
        shortfall=shortfall,
        stockout=curves["stockout_probability"],
        fill_rate=curves["fill_rate"],
        mean_on_hand=curves["mean_on_hand"],
        orders_per_period=orders,
        mean_short=curves["mean_short"],
    )
