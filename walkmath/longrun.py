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

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from walkmath import checks
from walkmath.cost import Work
from walkmath.distribution import LevelDistribution

if TYPE_CHECKING:
    from walkmath.banded import BandedWalk

DENSE_LEVELS = 2_000


@dataclass(frozen=True, eq=False)
class LongOutlook:
    """Risk at chosen periods: ``stockout[j]`` = P(at least one stock-out in periods 1..periods[j])."""

    periods: np.ndarray
    stockout: np.ndarray
    overflow: np.ndarray
    final: LevelDistribution  # level law at the latest period, paths not stopped


def work(walk: BandedWalk, horizon: int) -> Work:
    """Priced work of operator squaring to ``horizon``: dense products of (levels + 2)-square matrices."""
    size = (walk.high if walk.high is not None else walk.start) - walk.low + 3
    products = 2 * max(1, int(horizon).bit_length()) + len(walk.laws)
    rule_sets = 1 + (walk.below != "stop") + (walk.above != "stop")
    return Work(
        "outlook_at", size, 1, 1, copies=0, dense=rule_sets * products * size**3, knob="narrow the band (capacity)"
    )


def long_outlook(walk: BandedWalk, periods) -> LongOutlook:
    """Stock-out and overflow risk at each of ``periods`` (any order, up to ``HORIZON_CAP``)."""
    wanted = np.array([checks.horizon(p, "periods") for p in np.atleast_1d(periods)], dtype=np.int64)
    if wanted.size == 0:
        raise ValueError("periods must hold at least one period")
    if walk.high is None or walk.below == "backorder":
        raise ValueError("long horizons need a bounded band: set high (capacity) and a below rule of 'lost' or 'stop'")
    size = walk.high - walk.low + 1
    if size > DENSE_LEVELS:
        raise ValueError(f"long horizons take bands of at most {DENSE_LEVELS} levels; this band has {size}")
    own_rules = (walk.below, walk.above)
    rules_for = {"stockout": ("stop", walk.above), "overflow": (walk.below, "stop"), "levels": own_rules}
    start = np.zeros(size + 2)
    start[walk.start - walk.low] = 1.0
    order = np.argsort(wanted)
    by_rules: dict[tuple[str, str], np.ndarray] = {}  # rules -> vectors at the sorted periods
    for rules in dict.fromkeys(rules_for.values()):
        stepper = _CyclePowers([_period_matrix(law, size, rules) for law in walk.laws])
        by_rules[rules] = np.array(list(stepper.vectors(start, wanted[order])))
    unsort = np.argsort(order)
    return LongOutlook(
        periods=wanted,
        stockout=by_rules[rules_for["stockout"]][unsort, size],
        overflow=by_rules[rules_for["overflow"]][unsort, size + 1],
        final=LevelDistribution(np.arange(walk.low, walk.high + 1), by_rules[own_rules][-1, :size]),
    )


def _period_matrix(law, size: int, rules: tuple[str, str]) -> np.ndarray:
    """Row-stochastic one-period matrix on levels low..high plus [stocked out, overflowed] absorbing states."""
    below, above = rules
    matrix = np.zeros((size + 2, size + 2))
    matrix[size, size] = matrix[size + 1, size + 1] = 1.0
    levels = np.arange(size)
    for offset, weight in enumerate(law.probs):
        if weight == 0.0:
            continue
        target = levels + law.lowest + offset
        under, over = target < 0, target >= size
        inside = ~(under | over)
        matrix[levels[inside], target[inside]] += weight
        matrix[levels[under], 0 if below == "lost" else size] += weight
        matrix[levels[over], size - 1 if above == "spill" else size + 1] += weight
    return matrix


class _CyclePowers:
    """v M_1 M_2 ... M_n for a cycle of period matrices, by cached squarings of the cycle product."""

    def __init__(self, matrices: list[np.ndarray]):
        self.matrices = matrices
        cycle = matrices[0]
        for matrix in matrices[1:]:
            cycle = cycle @ matrix
        self.squares = [cycle]  # cycle^(2^k)

    def _square(self, k: int) -> np.ndarray:
        while len(self.squares) <= k:
            self.squares.append(self.squares[-1] @ self.squares[-1])
        return self.squares[k]

    def vectors(self, start: np.ndarray, sorted_periods: np.ndarray):
        length = len(self.matrices)
        vector, done_cycles = start, 0
        for period in sorted_periods:
            cycles, rest = divmod(int(period), length)
            gap, k = cycles - done_cycles, 0
            while gap:
                if gap & 1:
                    vector = vector @ self._square(k)
                gap >>= 1
                k += 1
            done_cycles = cycles
            partial = vector
            for matrix in self.matrices[:rest]:
                partial = partial @ matrix
            yield partial
