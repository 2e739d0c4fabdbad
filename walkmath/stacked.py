"""Backward sweeps of many risk rows of one law at once (the portfolio engine's workhorse).

A *row* is one backward sweep of ``walkmath.risk.risk_by_start`` for one risk
on a band of ``width`` levels (0..width - 1, relative to the floor): the
stock-out risk with the capacity's rule (``spill`` holds the level at the top,
``stop`` ends the path there), or the overflow risk with the floor's rule
(``lost`` holds the level at the floor, ``stop`` ends the path there). The
stock-out risk does not depend on the floor's rule (levels under the floor have
stocked out already, value 1) and the overflow risk does not depend on the
capacity's rule (an overflow is the event itself), so rows are shared by every
item whose law, horizon and width agree, whatever its start, floor and other
rule.

All rows of one law are laid end to end in one array, each row padded on both
sides with its end values (the width of the law's steps), so each period is one
``np.correlate`` over the whole array, one masked copy and one gather for the
ends that hold the level: three numpy calls a period whatever the number of
rows. The outputs between rows are computed and thrown away (the law's width
less one per row). Every value is the same sum of non-negative products as in
``walkmath.operator.backward_step`` (relative accuracy kept far into the
tails).

``room_overflow`` is the overflow risk of a backordering walk (no floor for the
overflow chain): it depends only on the room above the start, so one vector
over the room serves every capacity and every start. It is swept on a window
that keeps only the rooms still needed and still reachable, each period.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from walkmath.steplaw import StepLaw

STOCKOUT_SPILL = "stockout-spill"
STOCKOUT_STOP = "stockout-stop"
OVERFLOW_LOST = "overflow-lost"
OVERFLOW_STOP = "overflow-stop"
ROW_KINDS = (STOCKOUT_SPILL, STOCKOUT_STOP, OVERFLOW_LOST, OVERFLOW_STOP)


def row_kind(event: str, rule: str) -> str:
    """The row kind of ``event`` ("stockout" or "overflow") under the rule at the other end of the band."""
    kind = f"{event}-{rule}"
    if kind not in ROW_KINDS:
        raise ValueError(f"no stacked row for {event} under the rule {rule!r}")
    return kind


def stacked_work(laws: Sequence[StepLaw], horizon: int, widths: Sequence[int]) -> int:
    """Multiply-adds of ``stacked_risks`` for rows of these widths (each row and its padding, every period)."""
    pad_low, pad_high = _pads(_folded(laws, max(widths, default=1)))
    jumps = max(law.probs.size for law in laws)
    return horizon * jumps * int(sum(width + pad_low + pad_high for width in widths))


def stacked_risks(laws: Sequence[StepLaw], horizon: int, rows: Sequence[tuple[str, int]]) -> list[np.ndarray]:
    """Risk at ``horizon`` from every level 0..width - 1 for each row ``(kind, width)``.

    ``laws`` is the cycle (period n uses ``laws[(n - 1) % len(laws)]``). Equal to
    ``risk_by_start``'s stock-out (``stockout-*`` rows, band 0..width - 1 with that
    capacity rule) or overflow (``overflow-*`` rows, that floor rule) up to rounding.
    O(horizon x (sum of widths + rows x steps) x steps) multiply-adds, O(that / horizon) memory.
    """
    if not rows:
        return []
    widths = np.array([width for _, width in rows], dtype=np.int64)
    if widths.min() < 1:
        raise ValueError("every row needs a width of at least 1 level")
    laws = _folded(laws, int(widths.max()))
    pad_low, pad_high = _pads(laws)
    blocks = widths + pad_low + pad_high
    offsets = np.concatenate(([0], np.cumsum(blocks)[:-1]))
    total = int(blocks.sum())
    values = np.zeros(total)
    is_value = np.zeros(total, dtype=bool)
    hold_at, hold_from = [], []
    for (kind, width), offset in zip(rows, offsets.tolist(), strict=True):
        first = offset + pad_low  # position of level 0
        is_value[first : first + width] = True
        below = slice(offset, first)
        above = slice(first + width, first + width + pad_high)
        if kind in (STOCKOUT_SPILL, STOCKOUT_STOP):
            values[below] = 1.0  # under the floor the stock-out has happened
            if kind == STOCKOUT_SPILL:  # held at the capacity: the value of the top level
                hold_at.append(np.arange(above.start, above.stop))
                hold_from.append(np.full(pad_high, first + width - 1))
        elif kind in (OVERFLOW_LOST, OVERFLOW_STOP):
            values[above] = 1.0  # over the capacity the overflow has happened
            if kind == OVERFLOW_LOST:  # held at the floor: the value of level 0
                hold_at.append(np.arange(below.start, below.stop))
                hold_from.append(np.full(pad_low, first))
        else:
            raise ValueError(f"row kind must be one of {', '.join(ROW_KINDS)}; got {kind!r}")
    hold_at = np.concatenate(hold_at) if hold_at else np.zeros(0, dtype=np.int64)
    hold_from = np.concatenate(hold_from) if hold_from else np.zeros(0, dtype=np.int64)
    inner = slice(pad_low, total - pad_high)
    writable = is_value[inner]
    for period in range(horizon, 0, -1):
        law = laws[(period - 1) % len(laws)]
        moved = np.correlate(values, law.probs, "valid")
        shift = pad_low + law.lowest  # moved[i + shift] is the new value at values[i + pad_low]
        np.copyto(values[inner], moved[shift : shift + total - pad_low - pad_high], where=writable)
        if hold_at.size:
            values[hold_at] = values[hold_from]
    # Each value is a weighted mean of values in [0, 1]; the cap meets only a last-ulp rounding.
    starts = offsets + pad_low
    return [np.minimum(values[first : first + width], 1.0) for first, width in zip(starts, widths, strict=True)]


def room_overflow(laws: Sequence[StepLaw], horizon: int, rooms: int) -> np.ndarray:
    """P(an overflow within ``horizon``) for a walk with no floor, by room above the start: 0..rooms - 1.

    The overflow risk of a backordering walk from start s with capacity c is the
    entry c - s. Period by period (n periods left) only rooms below ``rooms`` plus
    the largest fall of the periods before are needed later, and only rooms below
    the largest rise of the n periods left can still overflow (above it the risk is
    exactly 0), so the window is the smaller of the two. Same sums of non-negative
    products as the banded sweep over the whole grid.
    """
    risk = np.zeros(max(rooms, 0))
    if rooms < 1:
        return risk
    cycle = [laws[(period - 1) % len(laws)] for period in range(1, horizon + 1)]
    fall_before = np.concatenate(([0], np.cumsum([max(0, -law.lowest) for law in cycle])))  # periods 1..k
    rise_after = np.concatenate(([0], np.cumsum([max(0, law.highest) for law in reversed(cycle)])))  # last k
    windows = [
        min(rooms - 1 + int(fall_before[horizon - left]), int(rise_after[left]) - 1) + 1
        for left in range(1, horizon + 1)
    ]
    # A rise of the widest window or more overflows from every room: only its total chance matters.
    cycle = _folded(cycle, max(max(windows, default=1), 1), below=False)
    previous = np.zeros(0)  # by level, lowest first: previous[i] is the room previous.size - 1 - i
    for left in range(1, horizon + 1):
        law = cycle[horizon - left]  # the period with ``left`` periods to go
        width = windows[left - 1]
        if width <= 0:  # no rise yet: the risk is 0 at every room
            previous = np.zeros(0)
            continue
        # Levels y = -room from -(width - 1) + lowest to highest: 1 above the capacity (y > 0),
        # the previous period's risk where it was kept, 0 below it (exactly 0 or never read).
        low_y = -(width - 1) + law.lowest
        padded = np.zeros(width + law.probs.size - 1)
        if law.highest >= 1:
            padded[max(1, low_y) - low_y :] = 1.0
        top = min(0, law.highest)
        bottom = max(-(previous.size - 1), low_y)
        if previous.size and bottom <= top:
            padded[bottom - low_y : top - low_y + 1] = previous[bottom + previous.size - 1 : top + previous.size]
        previous = np.correlate(padded, law.probs, "valid")
    kept = min(rooms, previous.size)
    risk[:kept] = previous[::-1][:kept]
    return np.minimum(risk, 1.0)


def _folded(laws: Sequence[StepLaw], reach: int, below: bool = True) -> list[StepLaw]:
    """The cycle with each law's steps of ``reach`` levels or more gathered at +reach (and at -reach,
    if ``below``).

    From any level of a band at most ``reach`` wide such a step leaves the band at that end, where
    the value is the same whatever the step, so only its total chance matters; the pads then stay
    within the band's width however far the law reaches (a law shifted by 10**9, say, or the
    Poisson counts of a mean of 10**6).
    """
    low_limit = -reach if below else None
    folded: dict[int, StepLaw] = {}
    for law in laws:
        lowest = law.lowest if low_limit is None else max(law.lowest, low_limit)
        highest = min(law.highest, reach)
        if id(law) in folded or (lowest == law.lowest and highest == law.highest):
            folded.setdefault(id(law), law)
            continue
        if lowest > highest:  # every step lies beyond one end
            lowest = highest = reach if law.lowest > reach else low_limit
        probs = np.zeros(highest - lowest + 1)
        np.add.at(probs, np.clip(law.steps, lowest, highest) - lowest, law.probs)
        folded[id(law)] = StepLaw._trusted(lowest, probs, law.truncated_mass)
    return [folded[id(law)] for law in laws]


def _pads(laws: Sequence[StepLaw]) -> tuple[int, int]:
    """Levels each row needs beyond its ends: the largest fall and the largest rise of the cycle."""
    return max(0, max(-law.lowest for law in laws)), max(0, max(law.highest for law in laws))
