"""The batched path of ``walkmath.portfolio``: many items, the single-item engine's numbers, shared work.

Stock items are grouped by their change laws and horizon (a digest of each
law's steps and probabilities). Within a group every answer is read off
backward sweeps shared by all its items, whatever their start, floor and rules
(``walkmath.stacked``): the stock-out risk for every start on a band of a given
width with the capacity's rule, the overflow risk for every start with the
floor's rule, and for backordering items the overflow risk by room above the
start, one vector for every capacity. An item's own risks and smallest start
come from the rows at its own width; its capacity search is the single-item
search itself (``walkmath.sizing.capacity_search``, same probes, same work
counted against the cap, same refusal), each probe read off the row at that
capacity. The searches of a group run side by side: each round gathers the
probes every search asks for, sweeps the rows not yet known in one stacked
sweep, and answers them all. Items without a capacity read their stock-out
risk off the mirrored walk's overflow by room. A search whose stock-out target
no capacity can meet (spill at the capacity: a lower bound at its start, from
one shared row, is above the target) replays its own path to its answer or
refusal without a probe.

Reorder items sharing a demand law, lead time and review period share the
protection-interval demand law and its tails; each answer is then read off them
as ``walkmath.service.reorder_point_plan`` reads it.

Every item is priced first, exactly as the reference prices it; an item the
fast path does not cover (a bound the reference checks against the engine's own
cap rather than the caller's) is answered by the reference itself.
"""

from __future__ import annotations

import hashlib
import math
from collections import defaultdict
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy import special

from walkmath import checks, risk, service
from walkmath.cost import WORK_CAP, ComputeTooLarge
from walkmath.sizing import capacity_search
from walkmath.stacked import room_overflow, row_kind, stacked_risks
from walkmath.steplaw import StepLaw


def law_digest(laws: Sequence[StepLaw]) -> bytes:
    """A digest of a cycle of laws: equal for laws with the same steps and probabilities, period by period."""
    digest = hashlib.blake2b(digest_size=16)
    for law in laws:
        digest.update(int(law.lowest).to_bytes(8, "little", signed=True))
        digest.update(int(law.probs.size).to_bytes(8, "little"))
        digest.update(np.ascontiguousarray(law.probs, dtype=float).tobytes())
    return digest.digest()


# -- stock items ---------------------------------------------------------------------------------


class LawTables:
    """Shared sweeps of one cycle of laws over one horizon: rows by (kind, width), rooms for backorders."""

    def __init__(self, laws: Sequence[StepLaw], horizon: int):
        self.laws, self.horizon = tuple(laws), horizon
        self.rows: dict[tuple[str, int], np.ndarray] = {}
        self.pending: set[tuple[str, int]] = set()
        self.rooms = np.zeros(0)
        self.rooms_needed = 0
        self.falls = np.zeros(0)  # stock-out risk with no capacity, by level above the floor
        self.falls_needed = 0
        self.sweeps = 0  # stacked sweeps run (for the benchmark's report)
        self.rows_swept = 0

    def want_stockout(self, above: str, width: int) -> None:
        self._want((row_kind("stockout", above), width))

    def want_overflow(self, below: str, width: int, level: int = 0) -> None:
        """The overflow row of this width; for backorders the rooms above ``level`` and up (the lowest
        start asked for, relative to the floor)."""
        if below == "backorder":
            self.rooms_needed = max(self.rooms_needed, width - level)
        else:
            self._want((row_kind("overflow", below), width))

    def want_no_capacity(self, levels: int) -> None:
        self.falls_needed = max(self.falls_needed, levels)

    def _want(self, key: tuple[str, int]) -> None:
        if key not in self.rows:
            self.pending.add(key)

    def flush(self) -> None:
        """Sweep every row asked for and not yet known, in one stacked sweep; widen the rooms if needed."""
        if self.pending:
            keys = sorted(self.pending)
            self.rows.update(zip(keys, stacked_risks(self.laws, self.horizon, keys), strict=True))
            self.sweeps += 1
            self.rows_swept += len(keys)
            self.pending.clear()
        if self.rooms_needed > self.rooms.size:
            # Grow by doubling so that a gallop asking for ever wider rooms costs a few sweeps, not one each.
            self.rooms = room_overflow(self.laws, self.horizon, max(self.rooms_needed, 2 * self.rooms.size))
            self.sweeps += 1
        if self.falls_needed > self.falls.size:
            # With no capacity a stock-out from level x is an overflow of the mirrored walk with room x.
            mirrored = [StepLaw._trusted(-law.highest, law.probs[::-1]) for law in self.laws]
            self.falls = room_overflow(mirrored, self.horizon, self.falls_needed)
            self.sweeps += 1

    def stockout(self, above: str, width: int) -> np.ndarray:
        """Stock-out risk from every level 0..width - 1 of a band of ``width`` levels."""
        return self.rows[(row_kind("stockout", above), width)]

    def overflow(self, below: str, width: int) -> np.ndarray:
        """Overflow risk from every level 0..width - 1 of a band of ``width`` levels."""
        if below == "backorder":
            return self.rooms[width - 1 - np.arange(width)]
        return self.rows[(row_kind("overflow", below), width)]

    def overflow_at(self, below: str, width: int, level: int) -> float:
        if below == "backorder":
            return float(self.rooms[width - 1 - level])
        return float(self.rows[(row_kind("overflow", below), width)][level])


@dataclass
class _StockPlan:
    """One stock item on the batched path, with its checked targets."""

    index: int
    item: object
    walk: object
    stockout_target: float
    overflow_target: float | None  # for the smallest start (None without a capacity)
    search: bool  # a capacity search runs (capacity and overflow target given)
    width: int  # levels of the item's own band (without a capacity: the starts the answer covers)
    top: int  # starts the answer covers: low..low + top - 1


def stock_outcomes(entries: Sequence[tuple[int, object]], cap: int, reference) -> dict[int, tuple]:
    """``(answer, reason)`` for each ``(index, StockItem)``: the batched path, the reference where it must."""
    from walkmath.portfolio import StockAnswer, stock_item_work

    outcomes: dict[int, tuple] = {}
    groups: dict[tuple, list[_StockPlan]] = defaultdict(list)
    for index, item in entries:
        try:
            stock_item_work(item).check(cap)  # the reference's price, first
            walk = item.walk()
            if cap > WORK_CAP and walk.cost(item.horizon, "risk_by_start").units > WORK_CAP:
                outcomes[index] = _run_reference(reference, item, cap)  # the engine's own cap decides there
                continue
            plan = _stock_plan(index, item, walk)
        except ComputeTooLarge as exc:
            outcomes[index] = (None, f"too large to work out: {exc}")
            continue
        except ValueError as exc:
            outcomes[index] = (None, str(exc))
            continue
        groups[(law_digest(walk.laws), item.horizon)].append(plan)
    for plans in groups.values():
        tables = LawTables(plans[0].walk.laws, plans[0].item.horizon)
        searching = [p for p in plans if p.search]
        bound_width = _want_stockout_bound(searching, tables)  # swept with the items' own rows
        answers = _own_answers(plans, tables)
        capacities = _capacity_answers(searching, tables, cap, bound_width)
        for plan in plans:
            stockout, overflow, smallest_start = answers[plan.index]
            found = capacities.get(plan.index, (None, ""))
            if found[1]:
                outcomes[plan.index] = (None, found[1])
            else:
                outcomes[plan.index] = (StockAnswer(stockout, overflow, smallest_start, found[0]), "")
    return outcomes


def _run_reference(reference, item, cap: int) -> tuple:
    try:
        return reference(item, cap), ""
    except ComputeTooLarge as exc:
        return None, f"too large to work out: {exc}"
    except ValueError as exc:
        return None, str(exc)


def _stock_plan(index: int, item, walk) -> _StockPlan:
    """The item's checked targets, in the order the reference checks them (smallest start, then capacity)."""
    stockout_target = checks.probability("stockout_target", item.stockout_target)
    overflow_target = None
    if walk.high is not None and item.overflow_target is not None:
        overflow_target = checks.probability("overflow_target", item.overflow_target)
    if walk.high is not None:
        width = top = walk.high - walk.low + 1
    else:  # the reference's starts without a capacity: low..top (risk_by_start's default top)
        width = top = risk._default_top(walk, item.horizon) - walk.low + 1
    return _StockPlan(index, item, walk, stockout_target, overflow_target, overflow_target is not None, width, top)


def _own_answers(plans: list[_StockPlan], tables: LawTables) -> dict[int, tuple]:
    """Risks at each item's start and its smallest start, from the rows at its own width."""
    for plan in plans:
        walk = plan.walk
        if walk.high is None:
            tables.want_no_capacity(plan.top)
            continue
        tables.want_stockout(walk.above, plan.width)
        # Backorders: two rooms more than the band, so the first capacity probes (the guess, exact for a
        # backordering walk, and its neighbours; at most the band's width above the start) find them ready.
        tables.want_overflow(walk.below, plan.width + 2 if walk.below == "backorder" else plan.width)
    tables.flush()
    answers = {}
    for plan in plans:
        walk = plan.walk
        if walk.high is None:  # no capacity: the mirrored rooms, and no overflow
            stockout, overflow = tables.falls[: plan.top], np.zeros(plan.top)
        else:
            stockout, overflow = tables.stockout(walk.above, plan.width), tables.overflow(walk.below, plan.width)
        meets = stockout <= plan.stockout_target
        if plan.overflow_target is not None:
            meets &= overflow <= plan.overflow_target
        smallest = int(walk.low + np.argmax(meets)) if meets.any() else None
        at = walk.start - walk.low
        answers[plan.index] = (float(stockout[at]), float(overflow[at]), smallest)
    return answers


def _capacity_answers(plans: list[_StockPlan], tables: LawTables, cap: int, bound_width: int) -> dict[int, tuple]:
    """``(capacity, reason)`` per item: every item's own search, run side by side, probes read off shared rows."""
    found: dict[int, tuple] = {}
    waiting = {}  # index -> (plan, search, request)
    hopeless = _stockout_out_of_reach(plans, tables, bound_width)
    for plan in plans:
        walk = plan.walk
        search = capacity_search(
            walk,
            plan.item.horizon,
            plan.overflow_target,
            plan.stockout_target,
            cap=cap,
            own_overflow=tables.overflow(walk.below, plan.width),
        )
        if plan.index in hopeless:  # every probe fails: the search's own path to None or to its refusal
            _fail_every_probe(plan, search, found)
            continue
        _advance(plan, search, None, waiting, found)
        if plan.index in waiting:  # the first probe is the guess; its neighbours are the likely next ones
            capacity = waiting[plan.index][2][0]
            for near in (capacity - 1, capacity + 1):
                if near >= walk.start:
                    _want_probe(tables, walk, near, waiting[plan.index][2][1], True)
    while waiting:
        for plan, _, (capacity, stockout, overflow) in waiting.values():
            _want_probe(tables, plan.walk, capacity, stockout, overflow)
        tables.flush()
        current, waiting = waiting, {}
        for plan, search, (capacity, stockout, overflow) in current.values():
            walk = plan.walk
            width, level = capacity - walk.low + 1, walk.start - walk.low
            risks = (
                float(tables.stockout(walk.above, width)[level]) if stockout else 0.0,
                tables.overflow_at(walk.below, width, level) if overflow else 0.0,
            )
            _advance(plan, search, risks, waiting, found)
    return found


def _want_stockout_bound(plans: list[_StockPlan], tables: LawTables) -> int:
    """Ask for the row that bounds from below the stock-out risk at any capacity (0: no item needs it).

    With spill at the capacity the stock-out risk from a start only falls as the capacity grows,
    towards the risk with no capacity at all, and that risk is at least the risk when paths that
    climb past a level T are ended there (coupling: capped paths stay below uncapped ones; ended
    paths only remove stock-outs). T is the start plus six standard deviations of the change over
    the horizon plus its drift (a bound that is nearly tight; common practice), one T per group,
    the largest.
    """
    spill = [p for p in plans if p.walk.above == "spill" and p.stockout_target < 1.0]
    if not spill:
        return 0
    laws, horizon = tables.laws, tables.horizon
    mean = sum(law.mean for law in laws) / len(laws)
    spread = math.sqrt(sum(law.variance for law in laws) / len(laws) * horizon)
    span = math.ceil(6.0 * spread + max(mean, 0.0) * horizon) + 1
    width = max(min(p.walk.start + span, p.walk.start + horizon * p.walk.max_up) - p.walk.low + 1 for p in spill)
    tables.want_stockout("stop", width)
    return width


def _stockout_out_of_reach(plans: list[_StockPlan], tables: LawTables, width: int) -> set[int]:
    """Items whose stock-out target no capacity can meet (spill at the capacity): their lower bound
    (``_want_stockout_bound``) at the start exceeds the target by more than rounding can explain, so
    every probe of the search fails and the search's answer (None at the end of its reach, or its
    refusal over the cap) follows without computing any."""
    if not width:
        return set()
    bound = tables.stockout("stop", width)
    spill = [p for p in plans if p.walk.above == "spill" and p.stockout_target < 1.0]
    return {p.index for p in spill if bound[p.walk.start - p.walk.low] > p.stockout_target * (1.0 + 1e-9)}


def _fail_every_probe(plan: _StockPlan, search, found: dict) -> None:
    waiting: dict = {}
    _advance(plan, search, None, waiting, found)
    while waiting:
        waiting.clear()
        _advance(plan, search, (1.0, 1.0), waiting, found)


def _want_probe(tables: LawTables, walk, capacity: int, stockout: bool, overflow: bool) -> None:
    width = capacity - walk.low + 1
    if stockout:
        tables.want_stockout(walk.above, width)
    if overflow:
        tables.want_overflow(walk.below, width, walk.start - walk.low)


def _advance(plan: _StockPlan, search, risks, waiting: dict, found: dict) -> None:
    """Send the probe's risks (or start the search); record its next probe, its answer or its refusal."""
    try:
        request = next(search) if risks is None else search.send(risks)
    except StopIteration as done:
        found[plan.index] = (done.value, "")
    except ComputeTooLarge as exc:
        found[plan.index] = (None, f"too large to work out: {exc}")
    except ValueError as exc:  # as the reference reports it
        found[plan.index] = (None, str(exc))
    else:
        waiting[plan.index] = (plan, search, request)


# -- reorder items -------------------------------------------------------------------------------


def reorder_outcomes(entries: Sequence[tuple[int, object]], cap: int) -> dict[int, tuple]:
    """``(answer, reason)`` for each ``(index, ReorderItem)``; items with the same demand law, lead time and
    review period share the protection-interval law and its tails."""
    from walkmath.portfolio import ReorderAnswer, reorder_item_work

    outcomes: dict[int, tuple] = {}
    shared: dict[tuple, tuple] = {}
    for index, item in entries:
        try:
            reorder_item_work(item).check(cap)  # the reference's price, first
            target = checks.open_probability("target", item.target)
            measure = checks.choice("measure", item.measure, service.MEASURES)
            quantity = service._order_quantity(item.order_quantity) if measure == "fill" else None
            key = _reorder_key(item)
            if key not in shared:
                law = service.protection_demand(item.demand, item.lead_time, item.review_period)
                moments = service._normal_moments(item.demand, item.lead_time, item.review_period)
                shared[key] = (law.tails(), moments)
            (below, above), (mean, sigma) = shared[key]
            point, achieved, normal_point = _reorder_point(below, above, mean, sigma, target, measure, quantity)
        except ComputeTooLarge as exc:
            outcomes[index] = (None, f"too large to work out: {exc}")
            continue
        except ValueError as exc:
            outcomes[index] = (None, str(exc))
            continue
        outcomes[index] = (ReorderAnswer(point, point - mean, achieved, normal_point), "")
    return outcomes


def _reorder_key(item) -> tuple:
    lead = item.lead_time
    lead_key = ("law", law_digest((lead,))) if isinstance(lead, StepLaw) else ("fixed", lead)
    return law_digest((item.demand,)), lead_key, item.review_period


def _reorder_point(below, above, mean, sigma, target, measure, quantity) -> tuple[int, float, int]:
    """Reorder point, its exact service and the normal rule's point, as ``reorder_point_plan`` reads them."""
    top = below.size - 1
    if measure == "cycle":
        first = 0
        service_curve, shortfall = below, above
        z = float(special.ndtri(target))
    else:
        from walkmath.cost import Work

        Work("fill_rate_curve", top + quantity + 1, 1, quantity).check()
        first = -quantity
        size = top + 1 + quantity
        window = np.ones(quantity)
        padded_below = np.concatenate([np.zeros(quantity), below, np.ones(quantity)])
        padded_above = np.concatenate([np.ones(quantity), above, np.zeros(quantity)])
        service_curve = np.convolve(padded_below, window)[quantity - 1 :][:size] / quantity
        shortfall = np.convolve(padded_above, window)[quantity - 1 :][:size] / quantity
        service_curve = np.minimum(np.maximum.accumulate(service_curve), 1.0)
        shortfall = np.minimum(np.minimum.accumulate(shortfall), 1.0)
        z = service.normal_loss_inverse((1.0 - target) * quantity / sigma) if sigma > 0 else 0.0
    index = service._first_meeting(service_curve, shortfall, target)
    point = first + index
    normal_point = math.ceil(mean + z * sigma - 1e-9 * max(1.0, abs(mean)))
    return point, float(service_curve[index]), normal_point
