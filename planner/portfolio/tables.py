"""The results table of a run: filtered, sorted and paged in the database, and the same rows as CSV.

Every row of the file appears once: worked out (its figures), not worked out
(its reason), or refused at upload (bad, or over the cap: its reason).
"""

from __future__ import annotations

from django import forms
from django.core.exceptions import ObjectDoesNotExist
from django.core.paginator import Paginator
from django.db.models import F, Q

from planner import formatting
from planner.portfolio.models import ItemKind, PortfolioItem, PortfolioRun

PAGE_ROWS = 50
SORTS = {
    "row": ("row",),
    "item": ("code", "row"),
    "kind": ("kind", "row"),
    "risk": (F("result__risk").desc(nulls_last=True), "row"),
    "risk-low": (F("result__risk").asc(nulls_last=True), "row"),
}
SHOW = {
    "all": ("Every item", Q()),
    "over": ("Over target", Q(result__over_target=True)),
    "within": ("Within target", Q(result__over_target=False)),
    "not-worked-out": ("Not worked out", ~Q(refusal="") | Q(result__answered=False)),
}


class ResultsFilter(forms.Form):
    """The table's filters (a plain GET form): which rows, which kind, an item code, the order, the page."""

    show = forms.ChoiceField(choices=[(key, label) for key, (label, _) in SHOW.items()], required=False)
    kind = forms.ChoiceField(choices=[("", "Every kind"), *ItemKind.choices], required=False)
    item = forms.CharField(label="Item code contains", max_length=60, required=False)
    sort = forms.ChoiceField(
        choices=[("row", "File order"), ("item", "Item code"), ("kind", "Kind"), ("risk", "Highest risk first"),
                 ("risk-low", "Lowest risk first")],
        required=False,
    )  # fmt: skip

    def rows(self, run: PortfolioRun):
        """The run's items with their results, filtered and sorted as asked (a lazy queryset)."""
        data = self.cleaned_data if self.is_valid() else {}
        rows = PortfolioItem.objects.filter(run=run).select_related("result")
        rows = rows.filter(SHOW[data.get("show") or "all"][1])
        if data.get("kind"):
            rows = rows.filter(kind=data["kind"])
        if data.get("item"):
            rows = rows.filter(code__icontains=data["item"])
        return rows.order_by(*SORTS[data.get("sort") or "row"])


def page(rows, number) -> object:
    return Paginator(rows, PAGE_ROWS).get_page(number)


HEADER = [
    "row", "item", "description", "kind", "period", "worked out", "headline risk", "over target",
    "overflow risk", "smallest start level", "smallest capacity", "reorder point", "safety stock",
    "service achieved", "normal-rule reorder point", "availability", "smallest spares", "reason",
]  # fmt: skip


def csv_rows(rows):
    """The header, then one list per item (numbers as numbers, empty where a figure does not apply)."""
    yield list(HEADER)
    for item in rows.iterator(chunk_size=2000):
        result = _result(item)
        reason = item.refusal or (result.reason if result else "not worked out yet")
        if result is None or not result.answered:
            yield [item.row, item.code, item.description, item.kind, item.period, "no"] + [None] * 11 + [reason]
            continue
        over = None if result.over_target is None else ("yes" if result.over_target else "no")
        yield [
            item.row, item.code, item.description, item.kind, item.period, "yes", result.risk, over,
            result.overflow, result.smallest_start, result.smallest_capacity, result.reorder_point,
            result.safety_stock, result.achieved, result.normal_reorder_point, result.availability,
            result.smallest_spares, "",
        ]  # fmt: skip


def _result(item):
    """The item's result, or None before it has one (no query: it came with ``select_related``)."""
    try:
        return item.result
    except ObjectDoesNotExist:
        return None


def page_cells(item) -> dict:
    """What the page's table shows for one item: its headline risk, over target or not, the answer."""
    result = _result(item)
    risk = result.risk if result is not None else None
    over = result.over_target if result is not None else None
    return {
        "risk": "—" if risk is None else formatting.probability(risk),
        "over": "—" if over is None else ("yes" if over else "no"),
        "answer": answer_words(item),
    }


def answer_words(item) -> str:
    """The row's answer in a few words, for the page's table."""
    result = _result(item)
    if item.refusal:
        return item.refusal
    if result is None:
        return "waiting"
    if not result.answered:
        return result.reason
    if item.kind == ItemKind.STOCK:
        start = "none meets the target" if result.smallest_start is None else f"{result.smallest_start:,}"
        text = f"smallest start level {start}"
        if item.spec.get("overflow_target") is not None:
            capacity = "none" if result.smallest_capacity is None else f"{result.smallest_capacity:,}"
            text += f"; smallest capacity {capacity}"
        return text
    if item.kind == ItemKind.REORDER:
        return (
            f"reorder point {result.reorder_point:,} (safety stock {result.safety_stock:,.1f}; "
            f"service {formatting.probability(result.achieved)})"
        )
    spares = "none meets the target" if result.smallest_spares is None else f"{result.smallest_spares:,}"
    return f"smallest spares {spares}; availability now {formatting.probability(result.availability)}"
