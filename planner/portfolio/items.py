"""Between a stored row and the engine: a spec (plain JSON) -> a ``walkmath.portfolio`` item, its price,
and an engine outcome -> the figures a result row stores. No Django here.

Specs come from ``planner.portfolio.items_file`` (already checked); building
the item runs the engine's own checks again, so a spec changed in the
database is refused with the engine's message rather than computed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import walkmath as wm
from planner.count_law import CountLaw
from walkmath import portfolio as pf
from walkmath.cost import ComputeTooLarge, Work


def to_item(spec: dict) -> pf.StockItem | pf.ReorderItem | pf.SparesItem:
    """The engine's item for a stored spec; ValueError naming the parameter when it is not valid."""
    kind = spec["kind"]
    if kind == "stock":
        demand = CountLaw.from_json(spec["demand"]).law()
        supply = CountLaw.from_json(spec["supply"]).law() if spec.get("supply") else wm.StepLaw.fixed(0)
        return pf.StockItem(
            laws=(wm.StepLaw.net(arrivals=supply, demand=demand),),
            start=spec["start"],
            horizon=spec["horizon"],
            stockout_target=spec["stockout_target"],
            low=spec["low"],
            high=spec["high"],
            below=spec["below"],
            above=spec["above"],
            overflow_target=spec["overflow_target"],
        )
    if kind == "reorder":
        return pf.ReorderItem(
            demand=CountLaw.from_json(spec["demand"]).law(),
            lead_time=spec["lead_time"],
            target=spec["target"],
            measure=spec["measure"],
            order_quantity=spec["order_quantity"],
            review_period=spec["review_period"],
        )
    if kind == "spares":
        return pf.SparesItem(
            units=spec["units"],
            spares=spec["spares"],
            failure_rate=spec["failure_rate"],
            repair_rate=spec["repair_rate"],
            availability_target=spec["availability_target"],
            crews=spec["crews"],
        )
    raise ValueError(f"kind must be stock, reorder or spares; got {kind!r}")


def item_work(item) -> Work | None:
    """The engine's price of one item (``walkmath.portfolio``); None for a spares item, whose search
    stops itself at the cap (``smallest_spares(cap=...)``: it is small next to a stock item's sweep)."""
    if isinstance(item, pf.StockItem):
        return pf.stock_item_work(item)
    if isinstance(item, pf.ReorderItem):
        return pf.reorder_item_work(item)
    return None


def refusal(spec: dict, cap: int) -> tuple[str, int]:
    """("", work units) for an item the engine may work out within ``cap``; otherwise (the reason, 0)."""
    try:
        work = item_work(to_item(spec))
        if work is not None:
            work.check(cap)
    except ComputeTooLarge as error:
        return f"too large to work out: {error}", 0
    except (ValueError, KeyError, TypeError) as error:
        return f"not valid: {error}", 0
    return "", work.units if work is not None else 0


@dataclass(frozen=True)
class Figures:
    """What a result row stores: the headline risk (the one compared with the item's target), whether it
    is over that target, and the kind's own figures (None where they do not apply)."""

    risk: float | None = None
    over_target: bool | None = None
    overflow: float | None = None
    smallest_start: int | None = None
    smallest_capacity: int | None = None
    reorder_point: int | None = None
    safety_stock: float | None = None
    achieved: float | None = None
    normal_reorder_point: int | None = None
    availability: float | None = None
    smallest_spares: int | None = None


def figures(spec: dict, answer) -> Figures:
    """The stored figures of one engine answer for the item ``spec``.

    The headline risk: a stock item's stock-out risk over the horizon from its start level; a spares
    item's unavailability with the spares it holds (from its own side, never 1 - availability); a reorder
    item's chance of missing its measure at the recommended point is not a risk of today's stock (no
    current point is given), so it has none and is never over target.
    """
    if isinstance(answer, pf.StockAnswer):
        over = answer.stockout > spec["stockout_target"]
        if spec.get("overflow_target") is not None:
            over = over or answer.overflow > spec["overflow_target"]
        return Figures(
            risk=_finite(answer.stockout),
            over_target=over,
            overflow=_finite(answer.overflow),
            smallest_start=answer.smallest_start,
            smallest_capacity=answer.smallest_capacity,
        )
    if isinstance(answer, pf.ReorderAnswer):
        return Figures(
            reorder_point=int(answer.reorder_point),
            safety_stock=_finite(answer.safety_stock),
            achieved=_finite(answer.achieved),
            normal_reorder_point=int(answer.normal_reorder_point),
        )
    return Figures(
        risk=_finite(answer.unavailability),
        over_target=answer.availability < spec["availability_target"],
        availability=_finite(answer.availability),
        smallest_spares=answer.smallest_spares,
    )


def _finite(value) -> float | None:
    value = float(value)
    return value if math.isfinite(value) else None
