"""Many items at once: each item's risks and the smallest buffer meeting its targets.

A portfolio is a list of independent items of three kinds: stock items (a band
with a start, a floor and an optional capacity), reorder items (a reorder point
for a service target) and spares items (spares for an availability target).
Each answer is the one the single-item engine gives for that item (the
reference below calls it item by item); faster paths must return the same
numbers. Every item is priced through the cost model before any work; an item
over the cap, or with bad parameters, gets its reason instead of an answer, so
one bad row never stops the others.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from walkmath import checks
from walkmath.banded import BandedWalk
from walkmath.cost import WORK_CAP, ComputeTooLarge, Work
from walkmath.service import reorder_point_plan, reorder_point_plan_work
from walkmath.spares import SparesPool
from walkmath.sparesizing import smallest_spares
from walkmath.steplaw import StepLaw


@dataclass(frozen=True)
class StockItem:
    """A stock item: change law(s) per period (a list is a repeating cycle), band, rules and targets."""

    laws: tuple[StepLaw, ...]
    start: int
    horizon: int
    stockout_target: float
    low: int = 0
    high: int | None = None
    below: str = checks.DEFAULT_BELOW
    above: str = checks.DEFAULT_ABOVE
    overflow_target: float | None = None

    def walk(self) -> BandedWalk:
        laws = self.laws[0] if len(self.laws) == 1 else list(self.laws)
        return BandedWalk(laws, self.start, self.low, self.high, self.below, self.above)


@dataclass(frozen=True)
class StockAnswer:
    """Risks at the horizon from the item's start, the smallest start meeting both targets at the
    item's capacity, and the smallest capacity meeting them from the item's start (None: none does,
    or no capacity is set)."""

    stockout: float
    overflow: float
    smallest_start: int | None
    smallest_capacity: int | None


@dataclass(frozen=True)
class ReorderItem:
    """A reorder item: demand per period, lead time (periods or a law over them), review period and target."""

    demand: StepLaw
    lead_time: int | StepLaw
    target: float
    measure: str = "cycle"  # "cycle" service or "fill" rate
    order_quantity: int | None = None
    review_period: int = 0


@dataclass(frozen=True)
class ReorderAnswer:
    reorder_point: int
    safety_stock: float
    achieved: float  # exact service at the reorder point
    normal_reorder_point: int  # the normal rule's point, for comparison


@dataclass(frozen=True)
class SparesItem:
    """A spares item: units in service, spares held, failure and repair rates per period, crews, target."""

    units: int
    spares: int
    failure_rate: float
    repair_rate: float
    availability_target: float
    crews: int = 1
    warm_failure_rate: float = 0.0


@dataclass(frozen=True)
class SparesAnswer:
    availability: float  # long-run P(no shortage) with the spares held
    unavailability: float  # its complement, from its own side
    smallest_spares: int | None


@dataclass(frozen=True)
class ItemOutcome:
    """One item's answer, or the reason it has none (bad parameters or over the cap)."""

    answer: StockAnswer | ReorderAnswer | SparesAnswer | None
    reason: str = ""


# -- prices ------------------------------------------------------------------


def stock_item_work(item: StockItem) -> Work:
    """Work of one stock item: the backward sweep (risk for every start) and the capacity search."""
    walk = item.walk()
    work = walk.cost(item.horizon, "risk_by_start")
    if item.high is not None and item.overflow_target is not None:
        work = work + walk.cost(item.horizon, "smallest_capacity")
    return work


def reorder_item_work(item: ReorderItem) -> Work:
    return reorder_point_plan_work(item.demand, item.lead_time, item.measure, item.order_quantity, item.review_period)


def spares_item_work(item: SparesItem) -> Work:
    """Work a spares item cannot do without: the long-run figures of the pool it holds and of the search's
    first candidate (no spares). The search past that first candidate spends what is left of the cap and
    stops there (``walkmath.sparesizing``), so this is the part of its work a price can refuse."""
    held, first = (_pool(item, spares) for spares in (item.spares, 0))
    return held.cost("long_run") + first.cost("long_run")


_WORK = {StockItem: stock_item_work, ReorderItem: reorder_item_work, SparesItem: spares_item_work}


def item_work(item: StockItem | ReorderItem | SparesItem) -> Work:
    """The price of one item of any kind (ValueError when its values are not valid)."""
    return _WORK[type(item)](item)


def item_refusal(item: StockItem | ReorderItem | SparesItem, cap: int = WORK_CAP) -> str:
    """Why ``item`` would not be worked out under ``cap``, from its price alone (no work done): over the
    cap, or parameters that are not valid; "" when it fits. The reasons are those ``answer_items`` gives."""
    try:
        item_work(item).check(cap)
    except ComputeTooLarge as exc:
        return f"too large to work out: {exc}"
    except ValueError as exc:
        return str(exc)
    return ""


# -- the reference: item by item through the single-item engine --------------


def answer_stock_item(item: StockItem, cap: int = WORK_CAP) -> StockAnswer:
    """One stock item by the single-item engine (priced first: ComputeTooLarge over ``cap``)."""
    stock_item_work(item).check(cap)
    walk = item.walk()
    by_start = walk.risk_by_start(item.horizon)
    at = item.start - by_start.starts[0]
    overflow_target = item.overflow_target if item.high is not None else None
    capacity = None
    if item.high is not None and item.overflow_target is not None:
        capacity = walk.smallest_capacity(item.horizon, item.overflow_target, item.stockout_target, cap=cap)
    return StockAnswer(
        stockout=float(by_start.stockout[at]),
        overflow=float(by_start.overflow[at]),
        smallest_start=by_start.smallest_meeting(item.stockout_target, overflow_target),
        smallest_capacity=capacity,
    )


def answer_reorder_item(item: ReorderItem, cap: int = WORK_CAP) -> ReorderAnswer:
    reorder_item_work(item).check(cap)
    plan = reorder_point_plan(
        item.demand, item.lead_time, item.target, item.measure, item.order_quantity, item.review_period
    )
    return ReorderAnswer(plan.reorder_point, plan.safety_stock, plan.achieved, plan.normal_reorder_point)


def answer_spares_item(item: SparesItem, cap: int = WORK_CAP) -> SparesAnswer:
    spares_item_work(item).check(cap)
    pool = _pool(item, item.spares)
    smallest = smallest_spares(
        item.units,
        item.failure_rate,
        item.repair_rate,
        item.crews,
        availability_target=item.availability_target,
        warm_failure_rate=item.warm_failure_rate,
        cap=cap,
    )
    return SparesAnswer(pool.availability(), pool.unavailability(), smallest)


def _pool(item: SparesItem, spares: int) -> SparesPool:
    return SparesPool(
        units=item.units,
        spares=spares,
        failure_rate=item.failure_rate,
        repair_rate=item.repair_rate,
        crews=item.crews,
        warm_failure_rate=item.warm_failure_rate,
    )


_ANSWER = {StockItem: answer_stock_item, ReorderItem: answer_reorder_item, SparesItem: answer_spares_item}


def answer_items_by_item(
    items: Sequence[StockItem | ReorderItem | SparesItem], cap: int = WORK_CAP
) -> list[ItemOutcome]:
    """The reference: every item through the single-item engine, one after another."""
    outcomes = []
    for item in items:
        try:
            outcomes.append(ItemOutcome(_ANSWER[type(item)](item, cap)))
        except ComputeTooLarge as exc:
            outcomes.append(ItemOutcome(None, f"too large to work out: {exc}"))
        except ValueError as exc:
            outcomes.append(ItemOutcome(None, str(exc)))
    return outcomes


def answer_items(items: Sequence[StockItem | ReorderItem | SparesItem], cap: int = WORK_CAP) -> list[ItemOutcome]:
    """Every item's answer in order; an item with bad parameters or over ``cap`` gets its reason instead.

    The same answers as ``answer_items_by_item`` (the same whole numbers, risks equal up to rounding),
    computed in batches (``walkmath.portfolio_engine``): stock items sharing their laws and horizon share
    their backward sweeps and capacity probes, reorder items sharing demand and lead time share the
    lead-time demand law. Every item is priced before any of its work, as the reference prices it.
    """
    from walkmath import portfolio_engine

    by_kind: dict[type, list[tuple[int, object]]] = {StockItem: [], ReorderItem: [], SparesItem: []}
    for index, item in enumerate(items):
        by_kind[type(item)].append((index, item))  # any other type: KeyError, as in the reference
    found = portfolio_engine.stock_outcomes(by_kind[StockItem], cap, answer_stock_item)
    found.update(portfolio_engine.reorder_outcomes(by_kind[ReorderItem], cap))
    for index, item in by_kind[SparesItem]:
        found[index] = portfolio_engine._run_reference(answer_spares_item, item, cap)
    return [ItemOutcome(*found[index]) for index in range(len(items))]
