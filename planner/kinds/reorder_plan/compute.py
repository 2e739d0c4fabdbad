"""Run a reorder plan through walkmath and gather every number its page shows.

Reads only; no database. The job builds the plan's demand and lead-time laws
once; ``parts`` prices every engine call with the engine's cost model before
any of them runs, and ``run`` makes only the calls the read service allowed.
Charts, headline figures and CSV files all read the same ``ReorderResult``, so
a download always matches what is on screen.

Two answers, each exact for its own model:

* the reorder point (``wm.reorder_point_plan``): demand over the lead time
  plus the review period, its exact law, the smallest reorder point meeting
  the target and the normal rule beside it;
* the review policy (``wm.smallest_order_up_to``, ``wm.PeriodicReview``):
  counted every review period (every period when the stock is watched all the
  time), orders of at least the order quantity (one unit when none is given),
  unmet demand backordered or lost as the plan says; its smallest order-up-to
  level meeting the target per review cycle, its long-run stock and, with
  costs, the cheapest policy. With lost sales it is the plan's answer (the
  reorder-point formulas assume backorders), so it is required: a plan too
  large for it is refused with advice. With lost sales and a lead time the
  search is a bisection and its curve holds the levels worked out (the
  bisection's, a coarse grid and the normal rule's level), not every level.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

import walkmath as wm
from planner.formatting import period_name, periods, units
from planner.kinds import Job, Part
from planner.kinds.reorder_plan import words
from planner.kinds.reorder_plan.params import ReorderPlanParams

# Largest backorder search run while pricing a lost-sales plan (its answer bounds the lost-sales search), in
# the engine's work units (about 0.025 s); past it the lost-sales chains would be far past any page's cap.
BOUND_SEARCH_UNITS = 100_000_000


@dataclass(frozen=True, eq=False)
class ReviewPolicy:
    """The review policy: count every ``review_cycle`` periods; at or below ``reorder_level`` order up to
    ``order_up_to``. ``search`` holds the measures per review cycle at every order-up-to level
    (reorder level = level - ``gap``); ``cost[i]`` the cost per period there (None without costs)."""

    review_cycle: int
    lead_cycles: int
    gap: int
    search: wm.LevelSearch
    order_up_to: int
    reorder_level: int
    measures: wm.PolicyMeasures
    stock: wm.LevelDistribution  # long-run net stock at the end of a review cycle (below 0: backorders)
    cost: np.ndarray | None
    cheapest_index: int | None  # cheapest order-up-to level meeting the target at this order size

    def index_of(self, order_up_to: int) -> int | None:
        """Where a level sits on the search's curve, or None if it was not worked out."""
        levels = self.search.levels
        index = int(np.searchsorted(levels, order_up_to))
        return index if index < levels.size and int(levels[index]) == order_up_to else None

    @property
    def every_level(self) -> bool:
        """True when the curve holds every level in its range (False: lost sales with a lead time)."""
        levels = self.search.levels
        return int(levels[-1]) - int(levels[0]) + 1 == levels.size

    @property
    def cost_per_period(self) -> float | None:
        if self.cost is None:
            return None
        return float(self.cost[self.index_of(self.order_up_to)])

    @property
    def service(self) -> float:
        """The target's measure at the chosen order-up-to level (per review cycle for the cycle service level)."""
        return float(self.search.service[self.index_of(self.order_up_to)])

    def service_at(self, order_up_to: int) -> float:
        """The target's measure at any order-up-to level: 0 below the searched ones (nothing in stock to
        speak of), 1 above them (the search ends where no stock-out can happen). Between levels worked out
        (lost sales with a lead time) the level below's, a lower bound, as service grows with the level;
        the job asks the search for the normal rule's level, so the page never needs that."""
        levels = self.search.levels
        if order_up_to < levels[0]:
            return 0.0
        if order_up_to > levels[-1]:
            return 1.0
        return float(self.search.service[int(np.searchsorted(levels, order_up_to, side="right")) - 1])

    @property
    def cheapest_level(self) -> int | None:
        return None if self.cheapest_index is None else int(self.search.levels[self.cheapest_index])


@dataclass(frozen=True, eq=False)
class CheapestPolicy:
    """The cheapest (reorder level, order-up-to level) on the stated costs that meets the target."""

    reorder_level: int
    order_up_to: int
    cost_per_period: float
    measures: wm.PolicyMeasures


@dataclass(frozen=True, eq=False)
class ReorderResult:
    params: ReorderPlanParams
    plan: wm.ReorderPointPlan
    policy: ReviewPolicy | None  # None when left out (see ``left_out``)
    cheapest: CheapestPolicy | None  # None without costs, or left out
    left_out: tuple[str, ...] = field(default=())

    @property
    def period(self) -> str:
        return self.params.period

    @property
    def unit(self) -> str:
        return self.params.unit

    @property
    def reorder_point(self) -> int:
        return self.plan.reorder_point

    @property
    def normal_reorder_point(self) -> int:
        return self.plan.normal_reorder_point

    @property
    def protection(self) -> wm.LevelDistribution:
        """Demand over the lead time plus the review period, exact."""
        return self.plan.protection

    @property
    def under_protects(self) -> bool:
        """The normal rule reorders too late: below the smallest reorder point meeting the target."""
        return self.plan.gap_units < 0

    @property
    def over_protects(self) -> bool:
        return self.plan.gap_units > 0

    # -- words for the page (planner.kinds.reorder_plan.words) ------------------------------------

    @property
    def recommendation(self) -> str:
        return words.recommendation(self)

    @property
    def gap_words(self) -> str:
        return words.gap_words(self)

    @property
    def normal_order_up_to(self) -> int:
        """The normal rule's order-up-to level at the review policy's order size (common practice): its
        reorder point for an order-up-to policy (orders of whatever was used), else that point + the order size."""
        gap = self.policy.gap if self.policy is not None else 1
        return self.plan.normal_reorder_point + (gap if gap > 1 else 0)

    @property
    def policy_rule(self) -> str:
        return words.policy_rule(self)

    @property
    def count_moment(self) -> str:
        return words.count_moment(self.params)

    @property
    def gap_figure(self) -> str:
        return words.gap_figure(self)

    @property
    def demand_words(self) -> str:
        return words.demand_words(self.params)

    @property
    def lead_time_words(self) -> str:
        return words.lead_time_words(self.params)

    @property
    def unmet_words(self) -> str:
        return words.unmet_words(self.params)

    @property
    def review_words(self) -> str:
        return words.review_words(self.params)

    @property
    def measure_label(self) -> str:
        return words.measure_label(self.params.measure)

    @property
    def policy_rhythm(self) -> str:
        return words.policy_rhythm(self.params)

    @property
    def policy_service_label(self) -> str:
        return words.policy_service_label(self.params)

    @property
    def span(self) -> str:
        """The protection interval in the plan's words: '4 days', '4 days of lead time + 7 days between counts'."""
        p = self.params
        lead = periods(p.lead_time, p.period) if p.fixed_lead_time else f"{periods(p.mean_lead_time, p.period)} (mean)"
        if p.review_period:
            return f"{lead} of lead time + {periods(p.review_period, p.period)} between counts"
        return lead


class ReorderJob(Job):
    """One request's work on one reorder plan: laws built once, each engine call priced first."""

    def __init__(self, params: ReorderPlanParams, stockout_target: float = 0.0, overflow_target: float = 0.0):
        # The targets stored with the scenario mirror this plan's own (params.target); the plan's is used.
        self.params = params
        self.demand = params.demand_law()
        self.lead_time = params.lead_time_law()
        self._prices: dict[str, int] = {}

    # -- cost ---------------------------------------------------------------------------------------

    def _plan_work(self) -> wm.Work:
        p = self.params
        return wm.reorder_point_plan_work(self.demand, self.lead_time, p.measure, p.order_quantity, p.review_period)

    def _stand_in(self, cycle: int) -> wm.StepLaw:
        """A two-point law with the span and the mean of the demand over one review cycle.

        The searches' prices read only those (the span sets the levels, the mean the
        default largest order size), so the cycle's law need not be built to price them.
        """
        low, high = cycle * self.demand.lowest, cycle * self.demand.highest
        if high == low:
            return wm.StepLaw.fixed(low)
        weight = min(max((cycle * self.demand.mean - low) / (high - low), 0.0), 1.0)
        return wm.StepLaw.from_pmf({low: 1.0 - weight, high: weight})

    def _policy_units(self) -> int:
        """The review policy's work: the cycle's demand law, the order-up-to search, the chosen policy.

        The cycle's law is priced, not built (except for lost sales with a lead time, whose chains
        are priced on it when it is cheap to build): for a cycle longer than one period a stand-in with its
        span and mean prices the searches' sweeps, and each lead-time law (the search's and the chosen
        policy's) is priced as the period's law over the same periods.
        """
        p = self.params
        cycle, lead, gap = p.review_cycle, p.policy_lead_cycles, p.order_quantity or 1
        law = self.demand if cycle == 1 else self._stand_in(cycle)
        real = cycle == 1
        if self._chain_search and not real and wm.law_power_work(self.demand, cycle).units <= BOUND_SEARCH_UNITS:
            law, real = self._cycle_demand(), True  # cheap to build, and it bounds the chains far better
        top = gap - 1 + (lead + 1) * law.highest  # no stock-out there: bounds the answer
        chosen = top  # the chosen level is at most the search's top
        if self._chain_search:
            # The bisection's bound is found from the real cycle law's backorder search when that search is
            # cheap; a stand-in's would not bound the real one, and a costly one is not run to price a chain
            # that large: the solves are then priced up to ``top`` (and refused).
            cheap = wm.order_up_to_work(law, lead, "backorder", gap=1, top=top).units <= BOUND_SEARCH_UNITS
            target = p.target if real and cheap else None
            _, include = self._search_extent(law, gap)
            units = wm.order_up_to_work(
                law, lead, p.unmet, gap=gap, top=top, target=target, measure=p.measure, include=include
            ).units
            if gap == 1 and target is not None:
                # Lost sales meet the target by the backorder answer (walkmath/reviewlevels.py, fact 2): the
                # chosen level is at most that; the search's own pricing runs the same cheap search.
                back = wm.smallest_order_up_to(law, target, p.measure, lead, "backorder", gap=1, top=top)
                chosen = back.answer if back.answer is not None else top
        else:
            units = wm.order_up_to_work(law, lead, p.unmet, gap=gap).units
        units += wm.PeriodicReview(law, chosen - gap, chosen, lead, p.unmet).cost().units
        return units + self._lead_laws(1 if cycle == 1 else 2)

    @property
    def _chain_search(self) -> bool:
        """Lost sales with a lead time: each order-up-to level is its own pipeline chain."""
        return self.params.unmet == "lost" and bool(self.params.policy_lead_cycles)

    def _search_extent(self, law: wm.StepLaw, gap: int) -> tuple[int, tuple[int, ...]]:
        """The order-up-to search's top (no stock-out there) and the levels it must work out besides its own:
        the normal rule's (so the page compares with it exactly)."""
        top = gap - 1 + (self.params.policy_lead_cycles + 1) * law.highest
        return top, (min(max(self._normal_order_up_to(gap), gap), top),)

    def _normal_order_up_to(self, gap: int) -> int:
        """The normal rule's order-up-to level (moments only; equal to ``ReorderResult.normal_order_up_to``)."""
        p = self.params
        point = wm.normal_reorder_point(
            self.demand, self.lead_time, p.target, p.measure, p.order_quantity, p.review_period
        )
        return point + (gap if gap > 1 else 0)

    def _lead_laws(self, count: int) -> int:
        """``count`` lead-time laws over the review cycles, priced on the period's law, and the cycle's law."""
        p = self.params
        cycle, lead = p.review_cycle, p.policy_lead_cycles
        units = count * wm.law_power_work(self.demand, cycle * lead).units if lead else 0
        return units + (wm.law_power_work(self.demand, cycle).units if cycle > 1 else 0)

    def _cheapest_units(self) -> int:
        p = self.params
        holding, order_cost, _ = p.prices()
        cycle = p.review_cycle
        law = self.demand if cycle == 1 else self._stand_in(cycle)
        search = wm.best_policy_work(
            law, holding=holding * cycle, order_cost=order_cost, lead_time=p.policy_lead_cycles, unmet=p.unmet
        )
        return search.units + (self._lead_laws(2) if cycle > 1 else 0)

    def parts(self) -> list[Part]:
        """Every engine call the page makes, priced with the engine's cost model (level·period·jump units).

        The reorder point is required; the review policy (when the plan allows it
        exactly) and the cheapest policy (with costs) are left out, with a note,
        when the request's budget cannot cover them.
        """
        parts = [Part("reorder_point", self._plan_work().units)]
        if self.params.policy_lead_cycles is not None:
            lost = self.params.unmet == "lost"
            for name, price in (("policy", self._policy_units), ("cheapest", self._cheapest_units)):
                if name == "cheapest" and not self.params.has_costs:
                    continue
                required = lost and name == "policy"  # with lost sales the review policy is the answer
                try:
                    parts.append(Part(name, price(), required=required))
                except ValueError:
                    # Past one of the engine's limits (its own cap, a level over a million units): an optional
                    # part is left out with its note; a required one refuses the plan like any too-large one.
                    if required:
                        parts.append(Part(name, wm.WORK_CAP + 1, required=True))
        return parts

    def refusal(self, units_of_work: int, cap: int) -> str:
        """Why the page is refused, in the analyst's words, naming what to shorten."""
        p = self.params
        if p.unmet == "lost":
            return self._lost_refusal(units_of_work, cap)
        top = self.demand.highest * (
            (p.lead_time if p.fixed_lead_time else max(v for v, _ in p.lead_time_table)) + p.review_period
        )
        advice = ["shorten the lead time", "count in larger units (crates rather than loaves)"]
        if not p.fixed_lead_time:
            advice.insert(0, "give fewer, shorter lead times in the table")
        if p.measure == "fill":
            advice.append("give a smaller order quantity")
        return (
            f"This reorder plan is too large to work out in one request: demand over {self._span_words()} "
            f"could reach {units(top, p.unit)} (about {units_of_work / cap:.1f} times this server's limit). "
            f"To fit, {', '.join(advice[:-1])} or {advice[-1]}."
        )

    def _lost_refusal(self, units_of_work: int, cap: int) -> str:
        p = self.params
        advice = ["shorten the lead time", "count in larger units (crates rather than loaves)"]
        if p.order_quantity:
            advice.append("leave the order quantity out (order back up to the level each count)")
        advice.append("choose backorders, which are worked out at any size")
        return (
            f"This reorder plan is too large to work out in one request: with lost sales every order on its way "
            f"has to be followed, and with {periods(p.lead_time, p.period)} of lead time and demand of up to "
            f"{units(self.demand.highest, p.unit)} a {period_name(p.period)} there are too many ways the stock "
            f"and the orders due can stand ({self._times(units_of_work, cap)} this server's limit). "
            f"To fit, {', '.join(advice[:-1])} or {advice[-1]}."
        )

    @staticmethod
    def _times(units_of_work: int, cap: int) -> str:
        """'about 4.2 times', or 'more than 17 times' past the engine's own cap (the work was not priced further)."""
        if units_of_work > wm.WORK_CAP:
            return f"more than {wm.WORK_CAP / cap:.0f} times"
        return f"about {units_of_work / cap:.1f} times"

    def _span_words(self) -> str:
        p = self.params
        lead = "the lead time" if p.fixed_lead_time else "the longest lead time"
        return lead + (f" and {periods(p.review_period, p.period)} between counts" if p.review_period else "")

    # -- work ---------------------------------------------------------------------------------------

    def _plan(self) -> wm.ReorderPointPlan:
        p = self.params
        return wm.reorder_point_plan(
            self.demand, self.lead_time, p.target, p.measure, p.order_quantity, p.review_period
        )

    def headline(self) -> tuple[float, str]:
        """Stored with the plan for the list: the shortfall at the exact reorder point and what it is per.

        Cycle service: the chance of a stock-out in an order cycle. Fill rate: the
        share of demand not served from stock. The target stored beside it is 1 - the plan's target.
        """
        if self.params.unmet == "lost":
            policy = self._policy()
            span = (
                "a review cycle (sales lost)"
                if self.params.measure == "cycle"
                else "a review cycle (share of demand lost)"
            )
            return float(policy.search.shortfall[policy.index_of(policy.order_up_to)]), span
        plan = self._plan()
        span = (
            "an order cycle"
            if self.params.measure == "cycle"
            else "an order cycle (share of demand not served from stock)"
        )
        return float(plan.shortfall_at_point), span

    def run(self, allowed: dict[str, int]) -> ReorderResult:
        """Every figure of the page; optional parts not in ``allowed`` are left out with a note."""
        p = self.params
        plan = self._plan()
        self.part_done("reorder_point")
        left_out = []
        policy = cheapest = None
        name = period_name(p.period, 2)
        if p.policy_lead_cycles is None:
            why = (
                "they need a fixed lead time, not a table"
                if not p.fixed_lead_time
                else f"they need a lead time that is a whole number of review periods: now "
                f"{periods(p.lead_time, p.period)} with a count every {periods(p.review_period, p.period)}"
            )
            left_out.append(f"the review policy's figures ({why})")
        elif "policy" in allowed:
            policy = self._policy()
            self.part_done("policy")
        else:
            left_out.append(f"the review policy's figures (too large to work out in one request at these {name})")
        if policy is not None and p.has_costs:
            if "cheapest" in allowed:
                cheapest = self._cheapest()
                self.part_done("cheapest")
            else:
                left_out.append("the cheapest policy on your costs (too large a search for one request)")
        return ReorderResult(params=p, plan=plan, policy=policy, cheapest=cheapest, left_out=tuple(left_out))

    def _cycle_demand(self) -> wm.StepLaw:
        """Demand over one review cycle: the period's law itself, or its power over the cycle's periods."""
        cycle = self.params.review_cycle
        if cycle == 1:
            return self.demand
        lowest, probs = wm.law_power(self.demand, cycle)
        return wm.StepLaw(lowest, probs, min(cycle * self.demand.truncated_mass, 1.0))

    def _policy(self) -> ReviewPolicy:
        p = self.params
        cycle, lead, gap = p.review_cycle, p.policy_lead_cycles, p.order_quantity or 1
        demand = self._cycle_demand()
        if self._chain_search:
            top, include = self._search_extent(demand, gap)
            search = wm.smallest_order_up_to(demand, p.target, p.measure, lead, p.unmet, gap, top, include)
        else:
            search = wm.smallest_order_up_to(demand, p.target, p.measure, lead, p.unmet, gap=gap)
        # The search's top allows no stock-out at all, so every target is met by then.
        level = search.answer
        policy = wm.PeriodicReview(demand, level - gap, level, lead, p.unmet)
        cost = cheapest = None
        if p.has_costs:
            holding, order_cost, penalty = p.prices()
            # Per period: holding on the stock left at each count, order cost and penalty spread over the cycle.
            cost = (
                holding * search.mean_on_hand
                + (order_cost * search.orders_per_period + penalty * search.mean_short) / cycle
            )
            meeting = np.flatnonzero(search.levels >= level)
            cheapest = int(meeting[np.argmin(cost[meeting])])
        return ReviewPolicy(
            review_cycle=cycle,
            lead_cycles=lead,
            gap=gap,
            search=search,
            order_up_to=level,
            reorder_level=level - gap,
            measures=policy.measures(),
            stock=policy.steady_state(),
            cost=cost,
            cheapest_index=cheapest,
        )

    def _cheapest(self) -> CheapestPolicy | None:
        p = self.params
        holding, order_cost, penalty = p.prices()
        cycle = p.review_cycle
        choice = wm.best_policy(
            self._cycle_demand(),
            holding=holding * cycle,  # per review cycle, on the stock left at each count
            order_cost=order_cost,
            shortage_penalty=penalty,
            lead_time=p.policy_lead_cycles,
            unmet=p.unmet,
            target=p.target,
            measure=p.measure,
        )
        if choice.order_up_to is None:
            return None
        return CheapestPolicy(
            reorder_level=choice.reorder_level,
            order_up_to=choice.order_up_to,
            cost_per_period=choice.cost / cycle,
            measures=choice.measures,
        )
