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


def recommendation(result) -> str:
    """One sentence in the trade's words: when to reorder, what it achieves and what the normal rule would do."""
    p, plan = result.params, result.plan
    unit = p.unit
    if p.review_period:
        start = (
            f"At each count ({policy_rhythm(p)}), order when the stock on hand plus on order is at or below "
            f"{units(plan.reorder_point, unit)}"
        )
    else:
        start = f"Reorder when the stock on hand plus on order falls to {units(plan.reorder_point, unit)} or fewer"
    if p.order_quantity:
        start += f", {units(p.order_quantity, unit)} at a time"
    meets = (
        f": that meets the {probability(plan.target)} {measure_label(p.measure)} (exactly {probability(plan.achieved)})"
    )
    normal = units(plan.normal_reorder_point, unit)
    if result.under_protects:
        compare = (
            f", where the usual normal rule would reorder at {normal} and reach only "
            f"{probability(plan.normal_achieved)}."
        )
    elif result.over_protects:
        compare = (
            f", where the usual normal rule would reorder at {normal}, holding "
            f"{units(plan.gap_units, unit)} more than needed ({probability(plan.normal_achieved)})."
        )
    else:
        compare = ", as the usual normal rule also finds."
    return start + meets + compare


def gap_words(result) -> str:
    """The normal rule's gap in units and in achieved service: '5 crates short: 96.8 % against 99 %'."""
    plan, unit = result.plan, result.params.unit
    if result.under_protects:
        return (
            f"{units(-plan.gap_units, unit)} too low: it reaches {probability(plan.normal_achieved)} "
            f"against the {probability(plan.target)} target"
        )
    if result.over_protects:
        return (
            f"{units(plan.gap_units, unit)} more than needed: it reaches {probability(plan.normal_achieved)} "
            f"where {probability(plan.target)} was asked"
        )
    return "none: the normal rule finds the same reorder point"


def gap_figure(result) -> str:
    """The normal rule's reorder point minus the exact one: '−5 crates', '+1 crates', 'the same'."""
    gap = result.plan.gap_units
    if gap == 0:
        return "the same"
    return f"{'−' if gap < 0 else '+'}{units(abs(gap), result.params.unit)}"
