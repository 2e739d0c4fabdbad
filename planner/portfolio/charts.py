"""The run's risk distribution: how many items fall in each decade of headline risk, by kind."""

from __future__ import annotations

import math
from collections import Counter

from planner import chart_layout
from planner.portfolio.models import ItemKind, PortfolioResult, PortfolioRun

COLOURS = {ItemKind.STOCK: chart_layout.STOCKOUT, ItemKind.SPARES: chart_layout.OVERFLOW}
LOWEST_DECADE = -12  # risks below 1e-12 are counted with it


def _decade(risk: float) -> int:
    return LOWEST_DECADE if risk <= 0 else min(max(math.floor(math.log10(risk)), LOWEST_DECADE), -1)


def risk_chart(run: PortfolioRun) -> dict:
    """A plotly figure (bars of items per decade of risk, one colour per kind), its summary and table."""
    pairs = PortfolioResult.objects.filter(run=run, answered=True, risk__isnull=False)
    counts: dict[str, Counter] = {kind: Counter() for kind in COLOURS}
    for kind, risk in pairs.values_list("item__kind", "risk").iterator(chunk_size=5000):
        counts[kind][_decade(risk)] += 1
    decades = list(range(LOWEST_DECADE, 0))
    labels = [f"1e{d}–1e{d + 1}" if d > LOWEST_DECADE else f"below 1e{d + 1}" for d in decades]
    traces = [
        {
            "type": "bar",
            "x": labels,
            "y": [counts[kind][d] for d in decades],
            "name": ItemKind(kind).label + (" (stock-out risk)" if kind == ItemKind.STOCK else " (unavailability)"),
            "marker": {"color": colour},
        }
        for kind, colour in COLOURS.items()
    ]
    layout = chart_layout.layout("Items by headline risk", "risk (per decade)", "items")
    layout["barmode"] = "stack"
    layout["hovermode"] = "closest"
    total = sum(sum(c.values()) for c in counts.values())
    over = PortfolioResult.objects.filter(run=run, over_target=True).count()
    summary = f"{total:,} items with a headline risk; {over:,} over their target."
    table = [[label, *(counts[kind][d] for kind in COLOURS)] for label, d in zip(labels, decades, strict=True)]
    return {"figure": {"data": traces, "layout": layout}, "summary": summary, "table": table}
