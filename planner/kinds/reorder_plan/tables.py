"""The reorder plan's CSV tables: header and rows of plain machine numbers (the shared writer adds the rest).

The review policy's tables hold only their header when the page left the
policy out (a lead-time table, a lead time that is not a whole number of
review periods, or a request too large); the page says why.
"""

from __future__ import annotations

from planner.csv_writer import number
from planner.formatting import period_name
from planner.kinds.reorder_plan.compute import ReorderResult
from planner.kinds.reorder_plan.words import measure_label, policy_service_label

TABLES = {
    "service-by-reorder-point": "service by reorder point",
    "lead-time-demand": "demand over the lead time",
    "order-up-to": "service and cost by order-up-to level",
    "long-run-stock": "long-run stock of the review policy",
}


def lead_time_rows(result: ReorderResult):
    unit = result.unit
    yield [
        "scenario",
        f"demand over {result.span} [{unit}]",
        "probability [exactly this demand]",
        "probability [demand at most this]",
        "probability [demand above this]",
    ]
    law = result.protection
    below, above = law.tails()
    for row in zip(law.levels, law.probs, below, above, strict=True):
        yield [None, int(row[0]), *(number(value) for value in row[1:])]


def service_rows(result: ReorderResult):
    plan, unit = result.plan, result.unit
    label = measure_label(plan.measure)
    yield [
        "scenario",
        f"reorder point [{unit}]",
        f"safety stock [{unit}; reorder point - mean demand over the lead time]",
        f"{label}, exact [probability]",
        f"shortfall, exact [1 - {label}, summed on its own]",
        f"{label} the normal model claims [probability]",
        f"expected shortage per order cycle [{unit}]",
    ]
    rows = zip(plan.points, plan.service, plan.shortfall, plan.normal_service, plan.expected_short, strict=True)
    for point, service, shortfall, normal, short in rows:
        yield [
            None,
            int(point),
            number(point - plan.mean_demand),
            number(service),
            number(shortfall),
            number(normal),
            number(short),
        ]


def stock_rows(result: ReorderResult):
    what = (
        "stock on hand at each count before ordering"
        if result.params.unmet == "lost"
        else "net stock at each count before ordering"
    )
    note = "demand beyond it is lost" if result.params.unmet == "lost" else "below 0 = backordered"
    yield ["scenario", f"{what} [{result.unit}; {note}]", "probability [long run]"]
    if result.policy is None:
        return
    stock = result.policy.stock
    for level, prob in zip(stock.levels, stock.probs, strict=True):
        yield [None, int(level), number(prob)]


def order_up_to_rows(result: ReorderResult):
    unit, name = result.unit, period_name(result.period)
    header = [
        "scenario",
        f"order-up-to level [{unit}]",
        f"reorder level [{unit}]",
        f"service: {policy_service_label(result.params)} [the target's measure]",
        "shortfall [1 - service, summed on its own]",
        "chance of a stock-out in a review cycle [probability]",
        "fill rate [share of demand served from stock]",
        f"mean stock on hand at each count [{unit}]",
        f"mean demand {'lost' if result.params.unmet == 'lost' else 'not served from stock'} [{unit} per review cycle]",
        "orders [per review cycle]",
    ]
    policy = result.policy
    with_cost = policy is not None and policy.cost is not None
    if with_cost:
        header.append(f"cost [per {name}]")
    yield header
    if policy is None:
        return
    search = policy.search
    for index, level in enumerate(search.levels):
        row = [
            None,
            int(level),
            int(level) - policy.gap,
            number(search.service[index]),
            number(search.shortfall[index]),
            number(search.stockout[index]),
            number(search.fill_rate[index]),
            number(search.mean_on_hand[index]),
            number(search.mean_short[index]),
            number(search.orders_per_period[index]),
        ]
        if with_cost:
            row.append(number(policy.cost[index]))
        yield row


ROWS = {
    "service-by-reorder-point": service_rows,
    "lead-time-demand": lead_time_rows,
    "order-up-to": order_up_to_rows,
    "long-run-stock": stock_rows,
}
