"""The one-period operator of a walk on a band, with the rules at both ends coded once.

A grid holds consecutive levels ``lowest .. lowest + size - 1``; the band is
``low`` (grid index ``band_lo``) to ``high`` (grid index ``band_hi``, or no
capacity). What a rule does to a step that leaves the band is written once, in
``END_BEHAVIOUR``, and read by every application of the operator:

* forward (``Forward.step``): mass after one period, one ``np.convolve`` per
  state copy over the levels that can hold mass, then the out-of-band mass is
  walked on, held at the end, or ended (counted as a first passage);
* backward (``backward_step``): risk by level after one more period, one
  ``np.correlate`` over the band padded with the end's value;
* squaring (``period_matrix``): the dense row-stochastic matrix with two
  absorbing states (stocked out, overflowed) for operator powers;
* mean-time solves (``substochastic_band``): the sub-stochastic band of the
  states that have not ended, with the one-period chance of ending per level.

Every entry is a sum of non-negative products, so small probabilities keep
their relative accuracy (no subtraction anywhere here).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from walkmath.steplaw import StepLaw

WALK, HOLD, END = "walk", "hold", "end"
# What each rule does to a step that would leave the band through its end.
END_BEHAVIOUR = {"backorder": WALK, "lost": HOLD, "stop": END, "spill": HOLD}


@dataclass(frozen=True)
class Rules:
    """The rule below ``low`` and the rule above ``high`` for one state copy."""

    below: str
    above: str

    @property
    def at_low(self) -> str:
        return END_BEHAVIOUR[self.below]

    @property
    def at_high(self) -> str:
        return END_BEHAVIOUR[self.above]


@dataclass(frozen=True)
class Flows:
    """What left the band in one period, per state copy (arrays over copies)."""

    fell: np.ndarray  # mass below low after the step (stock-out this period)
    rose: np.ndarray  # mass above high after the step (overflow this period)
    lost_units: float  # expected units short this period, copy 0 ("lost" only)
    spilled_units: float  # expected units spilled this period, copy 0 ("spill" only)


class Forward:
    """Forward periods for several state copies on one grid, each copy with its own rules.

    ``mass[c, i]`` is P(level = lowest + i, path of copy c not ended). Only
    indices ``reach_lo .. reach_hi`` may hold mass; each period's work is one
    convolution per copy over that window, so early periods are cheap.

    Cost model for the method: a convolution costs about reach x jumps
    multiply-adds per copy, a dense product size x size. When the grid is the
    whole band (both ends bounded, neither walks on) and the law has more
    jumps than the band has levels, most of the convolution would fall off
    the band, so the period is one dense product instead
    (``_dense_step``: the in-band matrix, and the chance and the expected
    units of leaving through each end, all sums of non-negative terms).
    """

    def __init__(self, rules: list[Rules], size: int, band_lo: int, band_hi: int | None):
        self.rules = rules
        self.size, self.band_lo, self.band_hi = size, band_lo, band_hi
        self.end_low = np.array([r.at_low == END for r in rules])
        self.end_high = np.array([r.at_high == END for r in rules])
        self.any_hold_low = any(r.at_low == HOLD for r in rules)
        self.any_hold_high = any(r.at_high == HOLD for r in rules)
        self.any_walk_low = any(r.at_low == WALK for r in rules)
        self.whole_band = band_lo == 0 and band_hi == size - 1 and not self.any_walk_low
        self._dense: dict[int, tuple] = {}  # id(law) -> (law, inside, under, over, shortfall, excess)

    def step(self, mass: np.ndarray, reach: tuple[int, int], law: StepLaw) -> tuple[tuple[int, int], Flows]:
        """Advance ``mass`` one period in place; return the new reach and what left the band.

        One convolution per copy (at most three), then a few slices: the
        per-period cost is the convolution plus a fixed handful of numpy calls.
        """
        if self.whole_band and law.probs.size > self.size:
            return self._dense_step(mass, law)
        lo, hi = reach
        first = lo + law.lowest  # grid index of moved[0]
        last = hi + law.highest
        under = self.band_lo - first  # entries of ``moved`` below low
        over_at = None
        if self.band_hi is not None and last > self.band_hi:
            over_at = max(self.band_hi - first + 1, 0)  # first entry of ``moved`` above high
        start = min(max(first, 0), self.size)  # the part of ``moved`` that lands on the grid
        stop = max(min(last + 1, self.size), start)
        fell, rose = np.zeros(len(self.rules)), np.zeros(len(self.rules))
        lost_units = spilled_units = 0.0
        for copy, rules in enumerate(self.rules):
            moved = np.convolve(mass[copy, lo : hi + 1], law.probs)
            mass[copy, lo : hi + 1] = 0.0
            if under > 0:
                below = moved[:under]
                fell[copy] = below.sum()
                if copy == 0 and rules.at_low == HOLD:
                    lost_units = float(below @ np.arange(under, under - below.size, -1, dtype=float))
                if rules.at_low != WALK:
                    below[:] = 0.0
            if over_at is not None:
                above = moved[over_at:]
                rose[copy] = above.sum()
                if copy == 0 and rules.at_high == HOLD:
                    spilled_units = float(above @ np.arange(first + over_at - self.band_hi, last - self.band_hi + 1.0))
                above[:] = 0.0
            if stop > start:
                mass[copy, start:stop] = moved[start - first : stop - first]
            if under > 0 and rules.at_low == HOLD:
                mass[copy, self.band_lo] += fell[copy]
            if over_at is not None and rules.at_high == HOLD:
                mass[copy, self.band_hi] += rose[copy]
        if under > 0 and self.any_hold_low:
            start, stop = min(start, self.band_lo), max(stop, self.band_lo + 1)
        if over_at is not None and self.any_hold_high:
            start, stop = min(start, self.band_hi), max(stop, self.band_hi + 1)
        if not self.any_walk_low:
            start = max(start, self.band_lo)
        return (start, stop - 1), Flows(fell, rose, lost_units, spilled_units)

    def _dense_step(self, mass: np.ndarray, law: StepLaw) -> tuple[tuple[int, int], Flows]:
        law, inside, under, over, shortfall, excess = self._dense_parts(law)
        fell, rose = mass @ under, mass @ over
        lost_units = float(mass[0] @ shortfall) if self.rules[0].at_low == HOLD else 0.0
        spilled_units = float(mass[0] @ excess) if self.rules[0].at_high == HOLD else 0.0
        mass[:] = mass @ inside
        for copy, rules in enumerate(self.rules):
            if rules.at_low == HOLD:
                mass[copy, 0] += fell[copy]
            if rules.at_high == HOLD:
                mass[copy, -1] += rose[copy]
        return (0, self.size - 1), Flows(fell, rose, lost_units, spilled_units)

    def _dense_parts(self, law: StepLaw) -> tuple:
        """In-band matrix and, per level, the chance and expected units of leaving below and above."""
        cached = self._dense.get(id(law))
        if cached is not None and cached[0] is law:
            return cached
        size, width = self.size, law.probs.size
        matrix = period_matrix(law, size, Rules("stop", "stop"))
        shortfall, excess = np.zeros(size), np.zeros(size)
        for level in range(size):  # once per law: size slices of the law
            depth = -(level + law.lowest)  # offset o lands depth - o units below the band
            below = min(max(depth, 0), width)  # offsets 0..below - 1 land below it
            if below:
                shortfall[level] = law.probs[:below] @ np.arange(depth, depth - below, -1, dtype=float)
            first_above = max(size - level - law.lowest, 0)  # offset o lands o - first_above + 1 above it
            if first_above < width:
                excess[level] = law.probs[first_above:] @ (
                    np.arange(first_above, width, dtype=float) + (level + law.lowest - (size - 1))
                )
        parts = (law, matrix[:size, :size].copy(), matrix[:size, size].copy(), matrix[:size, size + 1].copy())
        parts += (shortfall, excess)
        self._dense[id(law)] = parts
        return parts


def backward_step(values: np.ndarray, law: StepLaw, below_value: float, above_value: float) -> np.ndarray:
    """u(i) = sum_k P(step = k) u(i + k) over the grid, u taken as the given values off the grid."""
    size = values.size
    lowest, highest = law.lowest, law.highest
    padded = np.empty(size + law.probs.size - 1)
    left = max(0, -lowest)
    padded[:left] = below_value
    inner = values[max(0, lowest) : size + min(0, highest)]
    padded[left : left + inner.size] = inner
    padded[left + inner.size :] = above_value
    return np.correlate(padded, law.probs, "valid")


def end_values(rules: Rules, values: np.ndarray, event: str, *, band_lo: int, capacity: bool) -> tuple[float, float]:
    """Values just below and just above the grid for a backward sweep of P(``event`` within the periods left).

    ``event`` is "stockout" or "overflow". Leaving through the end that is the
    event is worth 1. Leaving through the other end is worth the value at that
    end's level if the rule holds the level there, 0 if it ends the path; a
    walking end (backorder, or no capacity) lies beyond the grid's reach within
    the horizon, so its value never reaches a reported level.
    """
    if event == "stockout":
        above = values[-1] if capacity and rules.at_high == HOLD else 0.0
        return 1.0, above
    below = values[band_lo] if rules.at_low == HOLD else 0.0
    return below, 1.0


def leaving_chances(law: StepLaw, size: int) -> tuple[np.ndarray, np.ndarray]:
    """P(a step from level i leaves the band below), and above, for levels 0..size - 1.

    Running sums of the law's probabilities from each end (non-negative terms), read at the
    first step that leaves: O(size + jumps) whatever the law's width.
    """
    levels, width = np.arange(size), law.probs.size
    from_below = np.concatenate(([0.0], np.cumsum(law.probs)))  # from_below[k] = sum of probs[:k]
    from_above = np.concatenate((np.cumsum(law.probs[::-1])[::-1], [0.0]))  # from_above[k] = sum of probs[k:]
    under = from_below[np.clip(-levels - law.lowest, 0, width)]
    over = from_above[np.clip(size - levels - law.lowest, 0, width)]
    return under, over


def period_matrix(law: StepLaw, size: int, rules: Rules) -> np.ndarray:
    """Row-stochastic one-period matrix on levels low..high plus [stocked out, overflowed] absorbing states.

    Built on a bounded band (both ends hold or end); a walking end has no place here. Row i holds
    the law shifted by i inside the band, and the mass beyond each end as a running sum of the
    law's probabilities from that end (non-negative terms): O(size^2) work whatever the law's width.
    """
    width = law.probs.size
    matrix = np.zeros((size + 2, size + 2))
    matrix[size, size] = matrix[size + 1, size + 1] = 1.0
    levels = np.arange(size)
    offset = levels[None, :] - levels[:, None] - law.lowest  # index into probs of the step i -> j
    inside = (offset >= 0) & (offset < width)
    matrix[:size, :size] = np.where(inside, law.probs[np.clip(offset, 0, width - 1)], 0.0)
    under, over = leaving_chances(law, size)
    low_target = 0 if rules.at_low == HOLD else size
    high_target = size - 1 if rules.at_high == HOLD else size + 1
    matrix[levels, low_target] += under
    matrix[levels, high_target] += over
    return matrix


def substochastic_band(law: StepLaw, size: int, rules: Rules) -> tuple[int, int, np.ndarray, np.ndarray]:
    """One-period chances among levels low..high that have not ended, in diagonal-ordered band form.

    Returns ``(lower, upper, band, ending)``: ``band[upper + i - j, j]`` = P(i -> j)
    (scipy's ``solve_banded`` layout, without the identity), and ``ending[i]`` =
    P(the path ends from level i this period), each a sum of non-negative terms,
    so elimination can use row sums without ever forming 1 - P(stay).
    """
    # Bandwidths never exceed the band: a longer step leaves it, and a held end lies within size - 1.
    lower, upper = min(max(-law.lowest, 0), size - 1), min(max(law.highest, 0), size - 1)
    band = np.zeros((lower + upper + 1, size))
    for step in range(-lower, upper + 1):  # one diagonal per step that can stay in the band
        weight = law.prob(step)
        if weight:
            band[upper - step, max(step, 0) : size + min(step, 0)] = weight  # columns j = i + step
    under, over = leaving_chances(law, size)
    ending = np.zeros(size)
    if rules.at_low == HOLD:  # the mass held at low sits in column 0, row i: band[upper + i, 0]
        rows = np.flatnonzero(under)
        band[upper + rows, 0] += under[rows]
    else:  # ends (a walking end is cut here: the caller's band must be wide enough)
        ending += under
    if rules.at_high == HOLD:  # column size - 1: band[upper + i - (size - 1), size - 1]
        rows = np.flatnonzero(over)
        band[upper + rows - (size - 1), size - 1] += over[rows]
    else:
        ending += over
    return lower, upper, band, ending
