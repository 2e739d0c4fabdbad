"""The reorder plan's words: service measures, the review rhythm and the one-sentence recommendation.

Trade terms only (reorder point, safety stock, lead time, service level, fill
rate, order-up-to level); every number goes through the shared formatter.
"""

from __future__ import annotations

from planner.formatting import number, period_name, periods, probability, units

# Form choices and labels for the service measure.
MEASURE_CHOICE = {
    "cycle": "Cycle service level: the chance an order cycle passes without a stock-out",
    "fill": "Fill rate: the share of demand served straight from stock",
}
MEASURE_LABEL = {"cycle": "cycle service level", "fill": "fill rate"}
# What happens to demand the shelf cannot meet: form choices and the page's short phrase.
UNMET_CHOICE = {
    "backorder": "Customers wait: the demand is backordered and served from the next delivery",
    "lost": "The sale is lost: customers go elsewhere (lost sales)",
}
UNMET_WORDS = {"backorder": "unmet demand waits for the next delivery", "lost": "unmet demand is lost"}


def unmet_words(params) -> str:
    return UNMET_WORDS[params.unmet]


def measure_label(measure: str) -> str:
    return MEASURE_LABEL.get(measure, measure)


def demand_words(params) -> str:
    """'Poisson, mean 0.1 crates per day', 'negative binomial, mean 0.3 and variance 1.5 crates per day'."""
    demand, per = params.demand, f"{params.unit} per {period_name(params.period)}"
    if demand.family == "poisson":
        return f"Poisson, mean {number(demand.mean)} {per}"
    if demand.family == "negative_binomial":
        return f"negative binomial, mean {number(demand.mean)} and variance {number(demand.variance)} {per}"
    if demand.family == "fixed":
        return f"{units(demand.amount, params.unit)} every {period_name(params.period)}"
    return f"a table of amounts, mean {number(demand.mean_count())} {per}"


def lead_time_words(params) -> str:
    """'4 days', or '3 to 7 days (mean 3.8 days)' for a table."""
    if params.fixed_lead_time:
        return periods(params.lead_time, params.period)
    values = [value for value, prob in params.lead_time_table if prob > 0]
    return (
        f"{number(min(values))} to {periods(max(values), params.period)} "
        f"(mean {periods(params.mean_lead_time, params.period)})"
    )


def review_words(params) -> str:
    """'the stock is watched all the time' or 'the stock is counted every 7 days'."""
    if not params.review_period:
        return "the stock is watched all the time"
    if params.review_period == 1:
        return f"the stock is counted every {period_name(params.period)}"
    return f"the stock is counted every {periods(params.review_period, params.period)}"


def policy_rhythm(params) -> str:
    """How often the review policy counts: 'every day', 'every 7 days'."""
    cycle = params.review_cycle
    return f"every {period_name(params.period)}" if cycle == 1 else f"every {periods(cycle, params.period)}"


def policy_service_label(params) -> str:
    """The review policy's service measure: per review cycle for the cycle service level."""
    if params.measure == "fill":
        return "fill rate"
    if params.review_cycle == 1:
        return f"{period_name(params.period, 2)} without a stock-out"
    return "review cycles without a stock-out"


def apart(value: float, other: float) -> str:
    """``value`` as a percentage with enough digits not to read the same as ``other`` (96.8 % against 98 %)."""
    for digits in range(3, 9):
        text = probability(value, digits)
        if text != probability(other, digits):
            return text
    return text


def recommendation(result) -> str:
    """One sentence in the trade's words: when to reorder, what it achieves and what the normal rule would do.

    Stock watched all the time: the reorder point on the demand over the lead time. Stock counted every
    few periods, when the review policy could be worked out: its reorder and order-up-to levels, exact
    for the counts, beside the normal rule's level for the same order size (the common-practice formula).
    """
    p = result.params
    if (p.review_period or p.unmet == "lost") and result.policy is not None:
        return _counted_recommendation(result)
    plan, unit = result.plan, p.unit
    if p.review_period:
        start = (
            f"At each count ({policy_rhythm(p)}), order when the stock on hand plus on order is at or below "
            f"{units(plan.reorder_point, unit)}"
        )
    else:
        start = f"Reorder when the stock on hand plus on order falls to {units(plan.reorder_point, unit)} or fewer"
    if p.order_quantity:
        start += f", {units(p.order_quantity, unit)} at a time"
    label = measure_label(p.measure)
    meets = f": that meets the {probability(plan.target)} {label} (exactly {apart(plan.achieved, plan.target)})"
    return start + meets + _compare(plan.normal_reorder_point, plan.gap_units, plan.normal_achieved, plan.target, unit)


def _counted_recommendation(result) -> str:
    p, policy, unit = result.params, result.policy, result.params.unit
    target = p.target
    moment = f"at each count ({policy_rhythm(p)})" if p.review_period else f"each {period_name(p.period)}"
    if p.unmet == "lost":
        moment = f"With sales lost when the shelf is empty, {moment}"
    else:
        moment = moment[0].upper() + moment[1:]
    if policy.gap == 1:
        start = f"{moment}, order the stock back up to {units(policy.order_up_to, unit)}"
    else:
        start = (
            f"{moment}, if the stock on hand plus on order is at or below "
            f"{units(policy.reorder_level, unit)}, order it up to {units(policy.order_up_to, unit)}"
        )
    goal = "fill rate" if p.measure == "fill" else f"target of {policy_service_label(p)}"
    meets = f": that meets the {probability(target)} {goal} (exactly {apart(policy.service, target)})"
    normal_level = result.normal_order_up_to
    gap = normal_level - policy.order_up_to
    normal_service = policy.service_at(normal_level)
    named = normal_level if policy.gap == 1 else normal_level - policy.gap
    return start + meets + _compare(named, gap, normal_service, target, unit, policy.gap == 1)


def _compare(level: int, gap: int, achieved: float, target: float, unit: str, up_to: bool = False) -> str:
    """', where the usual normal rule would reorder at 7 crates and reach only 96.8 %.' and the like."""
    verb = "order up to" if up_to else "reorder at"
    if gap < 0:
        return (
            f", where the usual normal rule would {verb} {units(level, unit)} and reach only {apart(achieved, target)}."
        )
    if gap > 0:
        return (
            f", where the usual normal rule would {verb} {units(level, unit)}, holding "
            f"{units(gap, unit)} more than needed ({apart(achieved, target)})."
        )
    return ", as the usual normal rule also finds."


def gap_words(result) -> str:
    """The normal rule's gap in units and in achieved service: '5 crates too low: it reaches 96.8 % against 99 %'."""
    plan, unit = result.plan, result.params.unit
    achieved = apart(plan.normal_achieved, plan.target)
    if result.under_protects:
        target = probability(plan.target)
        return f"{units(-plan.gap_units, unit)} too low: it reaches {achieved} against the {target} target"
    if result.over_protects:
        return (
            f"{units(plan.gap_units, unit)} more than needed: it reaches {achieved} "
            f"where {probability(plan.target)} was asked"
        )
    return "none: the normal rule finds the same reorder point"


def policy_rule(result) -> str:
    """The review policy's rule in a few words, for its figure card."""
    policy, unit = result.policy, result.params.unit
    if policy.gap == 1:
        return f"each count, order back up to it whatever was used (reorder level {units(policy.reorder_level, unit)})"
    return f"order when at or below {units(policy.reorder_level, unit)} (orders of at least {units(policy.gap, unit)})"


def count_moment(params) -> str:
    """When the review policy's stock figures are taken: 'at the end of each day', 'at each count'."""
    if params.review_cycle == 1:
        return f"at the end of each {period_name(params.period)}"
    return "at each count, before ordering"


def gap_figure(result) -> str:
    """The normal rule's reorder point minus the exact one: '−5 crates', '+1 crates', 'the same'."""
    gap = result.plan.gap_units
    if gap == 0:
        return "the same"
    return f"{'−' if gap < 0 else '+'}{units(abs(gap), result.params.unit)}"
