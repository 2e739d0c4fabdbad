"""Between a stored row and the engine: a spec (plain JSON) -> a ``walkmath.portfolio`` item, its price,
and an engine outcome -> the figures a result row stores. No Django here.

Specs come from ``planner.portfolio.items_file`` (already checked); building
the item runs the engine's own checks again, so a spec changed in the
database is refused with the engine's message rather than computed.
"""

from __future__ import annotations

import functools
import json
import math
from dataclasses import dataclass

import walkmath as wm
from planner.count_law import CountLaw
from walkmath import portfolio as pf

# Count laws a worker keeps across chunks (a portfolio repeats demand laws: building a Poisson law costs
# about 0.2 ms of tail evaluations, about half a reorder item's answer). Only laws of at most
# ``KEPT_WIDTH`` counts are kept, so the cache holds at most about 16 MB.
KEPT_LAWS = 1024
KEPT_WIDTH = 2001


@functools.lru_cache(maxsize=KEPT_LAWS)
def _kept_count_law(key: str) -> wm.StepLaw:
    return CountLaw.from_json(json.loads(key))._build(1.0)


class Laws:
    """Step laws built once and shared by the items that repeat them (within a chunk; narrow count laws
    across the worker's chunks too)."""

    def __init__(self):
        self.built: dict = {}

    def count(self, data: dict) -> wm.StepLaw:
        key = json.dumps(data, sort_keys=True)
        if key not in self.built:
            family, mean = data.get("family"), data.get("mean")
            narrow = family == "fixed" or (family == "poisson" and isinstance(mean, int | float) and mean <= 500)
            self.built[key] = _kept_count_law(key) if narrow else CountLaw.from_json(data).law()
        return self.built[key]

    def net(self, supply: dict | None, demand: dict) -> wm.StepLaw:
        key = ("net", json.dumps(supply, sort_keys=True), json.dumps(demand, sort_keys=True))
        if key not in self.built:
            arrivals = self.count(supply) if supply else wm.StepLaw.fixed(0)
            self.built[key] = wm.StepLaw.net(arrivals=arrivals, demand=self.count(demand))
        return self.built[key]


def to_item(spec: dict, laws: Laws | None = None) -> pf.StockItem | pf.ReorderItem | pf.SparesItem:
    """The engine's item for a stored spec (its laws from ``laws`` when given); ValueError naming the
    parameter when it is not valid."""
    laws = laws or Laws()
    kind = spec["kind"]
    if kind == "stock":
        return pf.StockItem(
            laws=(laws.net(spec.get("supply"), spec["demand"]),),
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
            demand=laws.count(spec["demand"]),
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


def built(spec: dict, laws: Laws) -> tuple[object | None, str]:
    """(the engine's item, "") for a stored row, or (None, the reason) when its values do not make one.
    Nothing is priced or run here: ``walkmath.portfolio.answer_items`` prices every item first."""
    try:
        return to_item(spec, laws), ""
    except (ValueError, KeyError, TypeError) as error:
        return None, f"not valid: {error}"


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
