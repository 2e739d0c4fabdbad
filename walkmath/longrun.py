"""Long horizons (up to 10**7 periods) by operator squaring.

The one-period operator on the band, with absorbing states for a stopped
stock-out and a stopped overflow, is raised to the needed powers by repeated
squaring: about log2(horizon) products of (levels + 2)-square matrices. All
entries are non-negative, so the products have no cancellation and small
risks keep their relative accuracy (unlike a spectral form, accurate only to
about 1e-16 in absolute terms). The powers are dense (a power of a band
matrix fills in), so this path is for bands up to ``DENSE_LEVELS`` levels.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from typing import TYPE_CHECKING

import numpy as np

from walkmath import checks
from walkmath.cost import WORK_CAP, Work
from walkmath.distribution import LevelDistribution
from walkmath.operator import Rules, period_matrix

if TYPE_CHECKING:
    from walkmath.banded import BandedWalk

DENSE_LEVELS = 2_000
# Memory the cached squarings may hold (one 2,000-level band matrix).
CACHE_BYTES = 32 * 2**20


@dataclass(frozen=True, eq=False)
class LongOutlook:
    """Risk at chosen periods: ``stockout[j]`` = P(at least one stock-out in periods 1..periods[j])."""

    periods: np.ndarray
    stockout: np.ndarray
    overflow: np.ndarray
    _levels_at_latest: object = field(repr=False)

    @cached_property
    def final(self) -> LevelDistribution:
        """Level law at the latest period, paths not ended: one more squaring run, done on first read."""
        return self._levels_at_latest()


def work(walk: BandedWalk, horizon: int, periods: int = 1) -> Work:
    """Priced work of operator squaring to ``horizon``: dense products of (levels + 2)-square matrices.

    With the squarings cached, each further period asked for costs one vector product per squaring.
    """
    size = (walk.high if walk.high is not None else walk.start) - walk.low + 3
    bits = max(1, int(horizon).bit_length())
    cached = max(1, CACHE_BYTES // (8 * size * size))
    products = bits + len(walk.laws) + (periods - 1) * max(0, bits - cached)
    rule_sets = 2  # the stock-out and the overflow chains (the level law is priced when read)
    return Work(
        "outlook_at", size, 1, 1, copies=0, dense=rule_sets * products * size**3, knob="narrow the band (capacity)"
    )


def long_outlook(walk: BandedWalk, periods, cap: int = WORK_CAP) -> LongOutlook:
    """Stock-out and overflow risk at each of ``periods`` (any order, up to ``HORIZON_CAP``).

    Memory: a few (levels + 2)-square matrices at once (the squarings are kept
    only within ``CACHE_BYTES``); work: priced by ``work`` and checked first.
    """
    wanted = np.array([checks.horizon(p, "periods") for p in np.atleast_1d(periods)], dtype=np.int64)
    if wanted.size == 0:
        raise ValueError("periods must hold at least one period")
    if walk.high is None or walk.below == "backorder":
        raise ValueError("long horizons need a bounded band: set high (capacity) and a below rule of 'lost' or 'stop'")
    size = walk.high - walk.low + 1
    if size > DENSE_LEVELS:
        raise ValueError(f"long horizons take bands of at most {DENSE_LEVELS} levels; this band has {size}")
    work(walk, int(wanted.max()), len(wanted)).check(cap)
    own_rules = Rules(walk.below, walk.above)
    rules_for = {"stockout": Rules("stop", walk.above), "overflow": Rules(walk.below, "stop")}
    start = np.zeros(size + 2)
    start[walk.start - walk.low] = 1.0
    order = np.argsort(wanted)
    unsort = np.argsort(order)

    def at_sorted_periods(rules: Rules, periods: np.ndarray) -> np.ndarray:
        return np.array(list(_CyclePowers(walk.laws, size, rules).vectors(start, periods)))

    chains = dict.fromkeys(rules_for.values())  # one chain when both rules end the path
    by_rules = {rules: at_sorted_periods(rules, wanted[order]) for rules in chains}

    def levels_at_latest() -> LevelDistribution:
        vector = at_sorted_periods(own_rules, wanted[order][-1:])[-1]
        return LevelDistribution(np.arange(walk.low, walk.high + 1), vector[:size])

    # Each absorbed mass is a sum of non-negative terms that never falls from one period to the next;
    # the cap at 1 only meets rounding of the last ulp.
    return LongOutlook(
        periods=wanted,
        stockout=np.minimum(by_rules[rules_for["stockout"]][unsort, size], 1.0),
        overflow=np.minimum(by_rules[rules_for["overflow"]][unsort, size + 1], 1.0),
        _levels_at_latest=levels_at_latest,
    )


def risk_by_start(walk: BandedWalk, horizon: int, cap: int = WORK_CAP) -> tuple[np.ndarray, np.ndarray]:
    """Stock-out and overflow risk at ``horizon`` from every level low..high, by squaring (bounded bands).

    The absorbing columns of the operator's power: each entry a sum of
    non-negative products, so small risks keep their relative accuracy.
    """
    size = walk.high - walk.low + 1
    work(walk, horizon).check(cap)
    risks = []
    for rules, absorbing in ((Rules("stop", walk.above), size), (Rules(walk.below, "stop"), size + 1)):
        end = np.zeros(size + 2)
        end[absorbing] = 1.0
        risks.append(np.minimum(_CyclePowers(walk.laws, size, rules).column(end, horizon)[:size], 1.0))
    return risks[0], risks[1]


class _CyclePowers:
    """v M_1 M_2 ... M_n for a cycle of period matrices, by squarings of the cycle product.

    The period matrices are rebuilt when needed rather than kept, and
    squarings are cached only up to ``CACHE_BYTES``; each product's rows are
    rescaled to sum to 1 (they are stochastic: this keeps rounding from
    drifting a probability above 1, and moves each entry by a few ulps at most).
    """

    def __init__(self, laws, size: int, rules: Rules):
        self.laws, self.size, self.rules = laws, size, rules
        cycle = period_matrix(laws[0], size, rules)
        for law in laws[1:]:
            cycle = _stochastic(cycle @ period_matrix(law, size, rules))
        self.squares = [cycle]  # cycle^(2^k), as many as the cache holds
        self.cache_limit = max(1, CACHE_BYTES // cycle.nbytes)

    def _squares_for(self, count: int):
        """cycle^(2^k) for each set bit k of ``count``, lowest first, computed (and cached) as needed.

        Powers of one matrix commute, so a product over these in any order is cycle^count.
        """
        k, square = 0, self.squares[0]
        while count:
            if k < len(self.squares):
                square = self.squares[k]
            if count & 1:
                yield square
            count >>= 1
            k += 1
            if count and k >= len(self.squares):
                square = _stochastic(square @ square)
                if len(self.squares) < self.cache_limit:
                    self.squares.append(square)

    def _power_step(self, vector: np.ndarray, gap: int) -> np.ndarray:
        """vector @ cycle^gap by binary powers."""
        for square in self._squares_for(gap):
            vector = vector @ square
        return vector

    def column(self, end: np.ndarray, period: int) -> np.ndarray:
        """M_1 M_2 ... M_period @ end: the chance of ``end`` by ``period`` from every level at once."""
        cycles, rest = divmod(int(period), len(self.laws))
        column = end
        for law in reversed(self.laws[:rest]):
            column = period_matrix(law, self.size, self.rules) @ column
        for square in self._squares_for(cycles):
            column = square @ column
        return column

    def vectors(self, start: np.ndarray, sorted_periods: np.ndarray):
        length = len(self.laws)
        vector, done_cycles = start, 0
        for period in sorted_periods:
            cycles, rest = divmod(int(period), length)
            vector = self._power_step(vector, cycles - done_cycles)
            done_cycles = cycles
            partial = vector
            for law in self.laws[:rest]:
                partial = partial @ period_matrix(law, self.size, self.rules)
            yield partial


def _stochastic(matrix: np.ndarray) -> np.ndarray:
    """Rescale each row of a product of stochastic matrices to sum to 1 (in place)."""
    matrix /= matrix.sum(axis=1, keepdims=True)
    return matrix
