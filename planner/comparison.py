"""Two to four plans side by side: each plan's risk curve on one chart, key figures in one table, CSV files.

Generic over kinds: each kind says what of a plan is compared (``Kind.comparable``); a kind that does not
yet (None) is listed with a note. Every plan is computed through the read service with its share of the
compute cap, so a comparison costs no more than one results page.
"""

from __future__ import annotations

from dataclasses import dataclass

from planner import reading
from planner.chart_layout import STOCKOUT, layout, line, log_range
from planner.formatting import period_name, probabilities
from planner.kinds import Comparable, get_kind

MIN_PLANS, MAX_PLANS = 2, 4
# One colour per plan, in the order chosen (the first is the planner's stock-out colour).
COLOURS = [STOCKOUT, "#2b7a84", "#c98a12", "#5b4b8a"]


@dataclass(frozen=True)
class Compared:
    scenario: object
    comparable: Comparable | None  # None: this plan's kind is not compared yet
    error: str = ""  # the plan cannot be worked out in this request (the message names what to change)


def compare(scenarios: list) -> list[Compared]:
    """Each plan's comparable figures, each computed within 1/len(scenarios) of the compute cap."""
    compared = []
    for scenario in scenarios:
        kind = get_kind(scenario.kind)
        try:
            result = reading.scenario_reading(scenario=scenario, share=len(scenarios)).result
        except ValueError as exc:
            note = f"(each of the {len(scenarios)} plans compared gets that share of this server's limit)"
            compared.append(Compared(scenario, None, f"{exc} {note}"))
            continue
        compared.append(Compared(scenario, kind.comparable(result)))
    return compared


def label(entry: Compared) -> str:
    return f"{entry.scenario.title} ({period_name(entry.comparable.period, 2)})"


def figure(compared: list[Compared]) -> dict:
    """One chart: every compared plan's curve, over its own periods."""
    shown = [entry for entry in compared if entry.comparable]
    periods = {entry.comparable.period for entry in shown}
    x_title = period_name(periods.pop(), 2) if len(periods) == 1 else "periods (each plan's own)"
    data = [
        line(entry.comparable.x, entry.comparable.y, label(entry), COLOURS[i % len(COLOURS)], hover=probabilities)
        for i, entry in enumerate(shown)
    ]
    y_range = log_range(*[entry.comparable.y for entry in shown]) if shown else None
    title = "Chance of at least one stock-out, plan by plan"
    return {"data": data, "layout": layout(title, x_title, "probability", log_switch=True, y_range=y_range)}


def figure_rows(compared: list[Compared]) -> list[tuple[str, list[tuple[str, float | None] | None]]]:
    """(label, [(text, value) per plan, None where the plan has no such figure]) in first-seen order."""
    labels: list[str] = []
    by_plan = []
    for entry in compared:
        figures = {name: (text, value) for name, text, value in (entry.comparable.figures if entry.comparable else [])}
        labels += [name for name in figures if name not in labels]
        by_plan.append(figures)
    return [(name, [figures.get(name) for figures in by_plan]) for name in labels]


def figures_csv_rows(compared: list[Compared]):
    yield ["figure", *[entry.scenario.title for entry in compared]]
    for name, cells in figure_rows(compared):
        yield [name, *[None if cell is None else (cell[1] if cell[1] is not None else cell[0]) for cell in cells]]


def curves_csv_rows(compared: list[Compared]):
    """One row per period: each plan's chance of at least one stock-out by then (empty past its horizon)."""
    shown = [entry for entry in compared if entry.comparable]
    yield ["period", *[f"{label(entry)}: {entry.comparable.curve} [probability]" for entry in shown]]
    longest = max((len(entry.comparable.x) for entry in shown), default=0)
    for n in range(longest):
        yield [n, *[entry.comparable.y[n] if n < len(entry.comparable.y) else None for entry in shown]]
