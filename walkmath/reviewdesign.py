"""Design of a periodic-review (s, S) policy: the smallest levels meeting a service target, the cheapest pair.

Every solver returns its answer with the whole decision-against-service curve,
built from shared pieces rather than one policy solve per candidate:

* the renewal weights u(0..G-1) of the position law (walkmath/policy.py) are
  one sequence for every gap S - s up to G: the law for gap g is u(0..g-1)
  normalised, so widening the gap adds one term;
* the lead-time demand is built once; the drop W = (S - y) + lead-time demand
  for gap g + 1 is the one for g plus one shifted copy (non-negative additions);
* for a fixed gap, every order-up-to level S reads the same drop law, and each
  measure over all S is one direct convolution with a one-period demand table.

Lost sales with a lead time have no such shared form: the pipeline chain on
(on hand, orders due) changes with S, and with s, and is not the chain of a
neighbouring policy shifted (the shelf is floored at 0 when a sale is lost), so
each policy keeps its own exact steady state (GTH, walkmath/reviewchain.py).
What is shared there:

* every candidate's chain is built with numpy from one known state set and the
  chains of one size class are reduced together along an array axis
  (walkmath/reviewstack.py): one pass for the cheapest policy's whole grid, an
  order-up-to search with a gap above 1, or a reorder-level search; no Python
  loop over states, demands or candidates;
* for a reorder-level search (one S, every s), the chains share the GTH
  reduction of the low positions, where every chain s' >= s orders: one sweep
  keeping both versions of each row left serves them all, and each s needs GTH
  only above it and a triangular solve back (walkmath/reviewsweep.py); which
  reorder levels use it is chosen by price (small gaps: few states above s);

* for an order-up-to policy (s = S - 1), the search is a bisection over S
  (``smallest_order_up_to``), which is sound because both facts below are
  proved, not assumed:

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

Every candidate's price is its own: its exact state count (``pipeline_count``),
the GTH arithmetic on its padded size, and the numpy calls of its stack
(``stack_work``, ``lost_policy_work``), so a grid of many small chains is priced
as the small chains it holds, not as many copies of the largest.

Service measures: "cycle" = P(no stock-out in a period), "fill" = fill rate.
Cost per period = holding x mean on hand + order cost x orders per period +
shortage penalty x mean units short (demand not served from stock).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from functools import partial

import numpy as np

from walkmath import checks
from walkmath.cost import Work
from walkmath.leadtime import lead_time_demand
from walkmath.policy import (
    LEAD_CAP,
    LEVEL_CAP,
    UNMET_RULES,
    DemandTables,
    PeriodicReview,
    PolicyMeasures,
    _count_law,
    count_probs,
    end_drop_law,
    finish_curves,
    measure_curves,
    orders_per_review,
    renewal_weights,
)
from walkmath.reviewstack import lost_sales_measures, stack_work
from walkmath.reviewsweep import lost_policy_measures, lost_policy_work
from walkmath.steplaw import StepLaw

MEASURES = ("cycle", "fill")
# Largest holding, order or shortage price accepted (any money unit).
PRICE_CAP = 1e12
# Unfilled share of the backorder policy at the default search edge for lost sales with a lead time.
LOST_EDGE = 1e-9
_SERVICE = {"cycle": ("in_stock_probability", "stockout_probability"), "fill": ("fill_rate", "unfilled_share")}
_KNOB = "lower top (the largest order-up-to level searched), the largest gap, or coarsen the demand units"
# Levels of the coarse grid solved for the curve of an order-up-to search with lost sales and a lead time.
GRID_POINTS = 9


@dataclass(frozen=True, eq=False)
class LevelSearch:
    """Smallest level meeting a service target and the service at every candidate level.

    ``levels`` are the candidates (order-up-to levels S, or reorder levels s), every one in range
    except for an order-up-to search with lost sales and a lead time, where they are the levels solved
    (the bisection's, a coarse grid and those asked for: see the module's docstring);
    ``service[i]`` the measure there, ``shortfall[i]`` its complement from its own
    side; ``stockout``, ``fill_rate``, ``mean_on_hand``, ``orders_per_period`` the
    other measures at each candidate; ``mean_short`` the mean units of demand not
    served from stock per period. ``answer`` is None when no candidate meets
    the target.
    """

    measure: str
    target: float
    answer: int | None
    levels: np.ndarray
    service: np.ndarray
    shortfall: np.ndarray
    stockout: np.ndarray
    fill_rate: np.ndarray
    mean_on_hand: np.ndarray
    orders_per_period: np.ndarray
    mean_short: np.ndarray | None = None


@dataclass(frozen=True, eq=False)
class PolicyChoice:
    """Cheapest (s, S) on the searched grid, every candidate's cost and service, and the best cost by S.

    ``reorder_levels[i], order_up_to_levels[i]`` list the candidates with their
    ``cost``, ``service``, ``shortfall`` and ``feasible`` (meets the service
    target, if any). ``curve_order_up_to[k]``: the best feasible cost
    ``curve_cost[k]`` with that S, reached at ``curve_reorder_level[k]``.
    """

    reorder_level: int | None
    order_up_to: int | None
    cost: float | None
    measures: PolicyMeasures | None
    reorder_levels: np.ndarray
    order_up_to_levels: np.ndarray
    costs: np.ndarray
    service: np.ndarray
    shortfall: np.ndarray
    feasible: np.ndarray
    curve_order_up_to: np.ndarray
    curve_reorder_level: np.ndarray
    curve_cost: np.ndarray


# -- shared pieces -----------------------------------------------------------------------------------------


class _Shared:
    """The lead-time demand, the demand tables and the renewal weights, built once for a search."""

    def __init__(self, demand: StepLaw, lead_time: int, unmet: str, top: int, largest_gap: int):
        self.demand, self.lead_time, self.unmet, self.top = demand, lead_time, unmet, top
        self.tables = DemandTables(demand, top)
        self.shared = unmet == "backorder" or lead_time == 0
        if self.shared:
            self.lead = lead_time_demand(demand, lead_time).probs if lead_time else np.ones(1)
            self.renewal = renewal_weights(demand, largest_gap)

    def drops(self, gaps):
        """Yield (gap, drop law W, orders per period) for increasing gaps, each from the one before."""
        sums = np.zeros(self.lead.size + int(max(gaps)))
        totals = np.cumsum(self.renewal)  # non-negative terms: relative error a few ulps per term at most
        done = 0
        for gap in gaps:
            for j in range(done, gap):  # add the shifted copies for positions S - j
                sums[j : j + self.lead.size] += self.renewal[j] * self.lead
            done = gap
            total = totals[gap - 1]
            position = self.renewal[:gap] / total
            yield (
                gap,
                np.minimum(sums[: gap + self.lead.size - 1] / total, 1.0),
                orders_per_review(position, self.tables),
            )

    def curves(self, drop: np.ndarray, levels: np.ndarray) -> dict[str, np.ndarray]:
        return measure_curves(drop, end_drop_law(drop, self.demand), self.tables, levels, self.unmet)

    def gap_curves(self, gaps, *, backorders: bool = True):
        """Yield (gap, measures at S = gap..top, orders per period) for increasing gaps, sharing the work.

        ``backorders=False``: no ``mean_backorders`` curve, and no end-of-period law convolved for it
        (the cheapest-policy search reads on hand, units short and service only).

        The drop law is a mixture, W = sum_j position(j) x (lead-time demand shifted by j), so each
        expectation sum_{w <= S} P(W = w) f(S - w) is sum_{j < gap} u(j) B_f(S - j) / U(gap) with
        B_f = (lead-time demand) * f convolved once; each gap adds one shifted copy of B_f: O(top) per
        gap and table instead of a convolution of length top (same non-negative terms, summed in
        another order). Equal to ``curves`` for each gap to rounding.
        """
        top = self.top
        levels = np.arange(top + 1)
        lead = self.lead[: top + 1]
        bases = {name: np.convolve(lead, table[: top + 1])[: top + 1] for name, table in self.tables.named().items()}
        end_lead = np.convolve(self.lead, count_probs(self.demand))[:top]
        bases["on_hand"] = np.convolve(end_lead, levels.astype(float))[: top + 1]
        sums = {name: np.zeros(top + 1) for name in bases}
        done = 0
        for gap, drop, ordered in self.drops(gaps):
            for j in range(done, min(gap, top + 1)):
                for name, base in bases.items():
                    sums[name][j:] += self.renewal[j] * base[: top + 1 - j]
            done = gap
            total = math.fsum(self.renewal[:gap])
            at = levels[gap:]
            bodies = {name: values[at] / total for name, values in sums.items()}
            on_hand = bodies.pop("on_hand")
            end_drop = end_drop_law(drop, self.demand) if backorders else None
            curves = finish_curves(bodies, on_hand, drop, end_drop, self.tables, at, self.unmet)
            yield gap, curves, np.full(at.size, ordered)

    def chain_gaps(self, gaps, top: int):
        """Yield (gap, measures at S = gap..top, orders per period) for each gap, every chain solved in one
        stacked pass (walkmath/reviewstack.py)."""
        gaps = list(gaps)
        policies = [(big_s - gap, big_s) for gap in gaps for big_s in range(gap, top + 1)]
        rows = lost_sales_measures(self.demand, policies, self.lead_time)
        self.solved = dict(zip(policies, rows, strict=True))  # the chosen policy's measures, not solved again
        done = 0
        for gap in gaps:
            count = top + 1 - gap
            yield (gap, *_stacked_curves(rows[done : done + count]))
            done += count


def _stacked_curves(rows: list[PolicyMeasures]) -> tuple[dict[str, np.ndarray], np.ndarray]:
    names = [name for name in PolicyMeasures.__dataclass_fields__ if name != "orders_per_period"]
    curves = {name: np.array([getattr(row, name) for row in rows]) for name in names}
    return curves, np.array([row.orders_per_period for row in rows])


def _search_work(
    method: str,
    demand: StepLaw,
    lead_time: int,
    unmet: str,
    top: int,
    gaps: int,
    per_gap: int,
    policies=list,
    one_level: bool = False,
) -> Work:
    """The shared forms' sweeps; lost sales with a lead time: the chains of the (s, S) pairs ``policies()``
    lists (called only then: the grid of a shared form may be far too large to list), stacked
    (walkmath/reviewstack.py) or, for a reorder-level search (``one_level``), partly read off one shared
    reduction (walkmath/reviewsweep.py)."""
    if unmet == "lost" and lead_time > 0:
        if one_level:
            return lost_policy_work(method, demand, policies(), lead_time, _KNOB)
        return stack_work(method, demand, policies(), lead_time, _KNOB)
    lead_levels = lead_time * demand.highest + 1
    return Work(method, top + gaps + lead_levels, gaps, 7 * (top + 1) + lead_levels, knob=_KNOB)


def _inside(include, gap: int, top: int) -> tuple[int, ...]:
    """The asked-for levels that are candidates (gap..top), whole numbers; others are left out."""
    levels = {checks.whole("include", level, minimum=0, maximum=LEVEL_CAP) for level in include}
    return tuple(sorted(level for level in levels if gap <= level <= top))


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


def _base_stock_bound(demand: StepLaw, target: float, measure: str, lead_time: int, top: int) -> tuple[int, bool]:
    """An order-up-to level where lost sales surely meet the target (the backorder answer; fact 2 of the
    module's docstring), and True; or ``top`` and False when backorders do not meet it by ``top``."""
    back = smallest_order_up_to(demand, target, measure, lead_time, "backorder", gap=1, top=top)
    return (back.answer, True) if back.answer is not None else (top, False)


def _meets(service: np.ndarray, shortfall: np.ndarray, target: float) -> np.ndarray:
    # Above 1/2 decide on the shortfall side, where 1 - target is exact (no cancellation).
    return service >= target if target <= 0.5 else shortfall <= 1.0 - target


def _common(demand, target, measure, lead_time, unmet):
    demand = _count_law(demand)
    target = checks.open_probability("target", target)
    measure = checks.choice("measure", measure, MEASURES)
    lead_time = checks.whole("lead_time", lead_time, minimum=0, maximum=LEAD_CAP)
    unmet = checks.choice("unmet", unmet, UNMET_RULES)
    return demand, target, measure, lead_time, unmet


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


# -- smallest order-up-to level ----------------------------------------------------------------------------------


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


def _order_up_to_grid(demand: StepLaw, lead_time: int, unmet: str, gap, top) -> tuple[int, int]:
    gap = checks.whole("gap", gap, minimum=1, maximum=LEVEL_CAP)
    if top is None:
        return gap, _default_top(demand, lead_time, unmet, gap)
    return gap, checks.whole("top", top, minimum=gap, maximum=LEVEL_CAP)


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


# -- cheapest (s, S) --------------------------------------------------------------------------------------------------


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


def _at_gap(gap: int, levels) -> list[tuple[int, int]]:
    """The (s, S) candidates of an order-up-to search with this gap."""
    return [(int(level) - gap, int(level)) for level in levels]


def _at_level(order_up_to: int) -> list[tuple[int, int]]:
    """The (s, S) candidates of a reorder-level search, by gap 1..S (reorder levels S - 1 down to 0)."""
    return [(s, order_up_to) for s in range(order_up_to - 1, -1, -1)]


def _cells(largest_gap: int, top: int) -> list[tuple[int, int]]:
    """The (s, S) candidates of the cheapest-policy grid, by gap, then S."""
    return [(big_s - gap, big_s) for gap in range(1, largest_gap + 1) for big_s in range(gap, top + 1)]


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


def _price(name: str, value, positive: bool = False) -> float:
    """A money rate per unit-period, per order or per unit short: finite, at most ``PRICE_CAP``."""
    low = "above 0" if positive else "at least 0"
    message = f"{name} must be a finite number {low} and at most {PRICE_CAP:g}; got {value!r}"
    try:
        price = checks.real(name, value, minimum=0.0, maximum=PRICE_CAP, strict_minimum=positive)
    except ValueError:
        raise ValueError(message) from None
    return price


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
