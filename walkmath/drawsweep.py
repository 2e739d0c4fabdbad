"""Stock-out and overflow curves of many laws at once: one forward sweep for every law sharing a support.

``risk_band`` needs the outlook of hundreds of drawn laws in the same band. A
law's sweep (``BandedWalk.outlook``) is one convolution per state copy per
period; its grid, its reach period by period and its rules depend only on the
band and the law's lowest and highest step, not on the chances. Draws of a
count law share one cut (``walkmath.posterior``), so their laws share a
support, and so do their net laws. ``sweep_curves`` groups the laws by support
and sweeps each group as one array (copies x laws x levels): each period is a
batched convolution (a loop over the shorter of the jumps and the reach, each
pass one multiply-add over every law and copy at once), then the band's rules,
read from ``walkmath.operator`` (``END_BEHAVIOUR`` through ``Forward``'s
per-copy flags), exactly as ``Forward.step`` applies them. Every entry is a sum
of non-negative products, so the curves agree with the law-by-law sweep to
rounding (the order of the additions differs; 1e-12 relative is tested).

A group whose period is one dense product (a law wider than a bounded band:
``Forward._dense_step``) is swept the same way: each law's in-band matrix and
its chances of leaving through each end (``Forward._dense_parts``), stacked,
and one batched matrix product a period.
"""

from __future__ import annotations

from collections import defaultdict

import numpy as np

from walkmath.banded import BandedWalk
from walkmath.cost import PERIOD_OVERHEAD, Work
from walkmath.operator import HOLD, WALK, Forward
from walkmath.steplaw import StepLaw

# Work units of one batched multiply-add pass, or of one law's convolution call, beyond its arithmetic
# (a numpy call, about 2 us).
PASS_OVERHEAD = 10_000
# Work units of one multiply-add in a batched pass (a numpy elementwise pass over every law and copy,
# measured about 12 times ``np.convolve``'s time per multiply-add, its compiled dot-product loop).
PASS_UNITS = 12
# Work units of one multiply-add in a batched product of small matrices (memory-bound: a few rows; about 4 times
# ``np.convolve``'s), and of building one level of a law's in-band matrix (``Forward._dense_parts``, a few
# numpy calls a level). Measured on the project's machine against ``np.convolve`` at the same time.
DENSE_UNITS = 4
PARTS_UNITS = 40_000
# Most numbers a batch holds at once (copies x laws x levels, and the moved mass): 64 MB of floats.
BATCH_NUMBERS = 8_000_000


def groups(laws: list[StepLaw]) -> dict[tuple[int, int], list[int]]:
    """Indices of the laws sharing each support (lowest step, number of steps), in the laws' order."""
    found: dict[tuple[int, int], list[int]] = defaultdict(list)
    for index, law in enumerate(laws):
        found[(law.lowest, law.probs.size)].append(index)
    return dict(found)


def _dense(walk: BandedWalk, horizon: int, width: int) -> bool:
    """Whether ``Forward.step`` would take its dense product (the whole bounded band, a law wider than it)."""
    low, high = walk._grid(horizon, walk.start)
    size = high - low + 1
    band_hi = None if walk.high is None else walk.high - low
    whole = walk.low - low == 0 and band_hi == size - 1 and walk.below != "backorder"
    return whole and width > size


def _batch(size: int, copies: int, width: int) -> int:
    """Laws swept together: as many as ``BATCH_NUMBERS`` allows, at least one."""
    return max(1, BATCH_NUMBERS // (copies * (size + width)))


def _dense_batch(size: int) -> int:
    """Laws whose in-band matrices (levels x levels each) are held at once."""
    return max(1, BATCH_NUMBERS // (size * size))


def _passes_cheaper(copies: int, count: int, span: int, width: int) -> bool:
    """Batched passes (one per jump, or per level of the reach) when they cost less than one convolution call
    per law and copy: narrow laws or reaches, where a call's fixed cost outweighs its arithmetic."""
    return _pass_units(copies, count, span, width) < _call_units(copies, count, span, width)


def _pass_units(copies: int, count: int, span: int, width: int) -> int:
    return min(width, span) * (copies * count * max(width, span) * PASS_UNITS + PASS_OVERHEAD)


def _call_units(copies: int, count: int, span: int, width: int) -> int:
    return copies * count * (span * width + PASS_OVERHEAD)


def sweep_work(laws: list[StepLaw], walk_args: dict, horizon: int) -> Work:
    """Work of ``sweep_curves``: per group and period, the multiply-adds over every law's copies, one pass
    overhead per pass, and the period's bookkeeping once per batch; law-by-law groups at their own price."""
    units = 0
    levels = jumps = 0
    for (_lowest, width), members in groups(laws).items():
        walk = BandedWalk(laws[members[0]], **walk_args)
        one = walk.cost(horizon, "outlook")
        levels, jumps = max(levels, one.levels), max(jumps, one.jumps)
        if _dense(walk, horizon, width):
            # one batched product of each law's in-band matrix a period: copies x levels^2 per law
            batches = -(-len(members) // min(_dense_batch(one.levels), len(members)))
            per_period = one.copies * len(members) * one.levels**2 * DENSE_UNITS + batches * 4 * PERIOD_OVERHEAD
            units += horizon * per_period + len(members) * one.levels * PARTS_UNITS
            continue
        size = min(_batch(one.levels, one.copies, width), len(members))
        batches = -(-len(members) // size)
        # each period at most the grid's levels in reach; the cheaper of the two ways, as ``_step`` chooses
        ways = (_pass_units(one.copies, size, one.levels, width), _call_units(one.copies, size, one.levels, width))
        per_period = batches * (min(ways) + one.copies * PERIOD_OVERHEAD)  # the rules: a few calls per copy
        units += horizon * per_period
    return Work(f"{len(laws)} outlooks, batched", levels, horizon, jumps, copies=0, dense=units)


def sweep_curves(laws: list[StepLaw], walk_args: dict, horizon: int) -> tuple[np.ndarray, np.ndarray]:
    """Stock-out and overflow curves (laws x horizon + 1) of ``BandedWalk(law, **walk_args).outlook(horizon)``
    for every law, batched by support. The caller prices the work first (``sweep_work``)."""
    stockout = np.empty((len(laws), horizon + 1))
    overflow = np.empty((len(laws), horizon + 1))
    for (_lowest, width), members in groups(laws).items():
        walk = BandedWalk(laws[members[0]], **walk_args)
        low, high = walk._grid(horizon, walk.start)
        size = high - low + 1
        copies = walk._copies()[0]
        dense = _dense(walk, horizon, width)
        step = _dense_batch(size) if dense else _batch(size, len(copies), width)
        for first in range(0, len(members), step):
            chunk = members[first : first + step]
            if dense:
                stockout[chunk], overflow[chunk] = _sweep_dense(walk, [laws[index] for index in chunk], horizon)
            else:
                probs = np.stack([laws[index].probs for index in chunk])
                stockout[chunk], overflow[chunk] = _sweep(walk, probs, horizon)
    return stockout, overflow


def _sweep(walk: BandedWalk, probs: np.ndarray, horizon: int) -> tuple[np.ndarray, np.ndarray]:
    """``BandedWalk._sweep``'s curves for the laws whose chances are the rows of ``probs`` (one support)."""
    grid_low, grid_high = walk._grid(horizon, walk.start)
    size = grid_high - grid_low + 1
    copies, stockout_copy, overflow_copy = walk._copies()
    band_hi = None if walk.high is None else walk.high - grid_low
    forward = Forward(copies, size, walk.low - grid_low, band_hi)
    count, width = probs.shape
    lowest = walk.laws[0].lowest
    mass = np.zeros((len(copies), count, size))
    mass[:, :, walk.start - grid_low] = 1.0
    reach = (walk.start - grid_low,) * 2
    counts_stockout = bool(forward.end_low[stockout_copy])
    counts_overflow = bool(forward.end_high[overflow_copy])
    ended_low, ended_high = np.zeros(count), np.zeros(count)  # running sums of non-negative terms
    stockout, overflow = np.zeros((count, horizon + 1)), np.zeros((count, horizon + 1))
    for period in range(1, horizon + 1):
        if reach[0] > reach[1]:  # every path has ended
            stockout[:, period], overflow[:, period] = ended_low, ended_high
            continue
        reach, fell, rose = _step(forward, mass, reach, probs, lowest, width)
        if counts_stockout:
            ended_low += fell[stockout_copy]
        if counts_overflow:
            ended_high += rose[overflow_copy]
        stockout[:, period], overflow[:, period] = ended_low, ended_high
    # sums of ended mass: the cap meets only a last-ulp rounding (as ``BandedWalk._sweep``)
    return np.minimum(stockout, 1.0), np.minimum(overflow, 1.0)


def _step(forward: Forward, mass: np.ndarray, reach, probs: np.ndarray, lowest: int, width: int):
    """``Forward.step`` for every law at once: mass (copies x laws x levels) advanced in place."""
    lo, hi = reach
    span = hi - lo + 1
    first = lo + lowest
    last = hi + lowest + width - 1
    under = forward.band_lo - first
    over_at = None
    if forward.band_hi is not None and last > forward.band_hi:
        over_at = max(forward.band_hi - first + 1, 0)
    start = min(max(first, 0), forward.size)
    stop = max(min(last + 1, forward.size), start)
    window = mass[:, :, lo : hi + 1]
    copies, count = mass.shape[:2]
    if _passes_cheaper(copies, count, span, width):
        moved = np.zeros((copies, count, span + width - 1))
        if width <= span:  # one pass per jump: the whole reach shifted by it, every law and copy at once
            for jump in range(width):
                moved[:, :, jump : jump + span] += window * probs[None, :, jump, None]
        else:  # one pass per level of the reach: the whole law placed from it
            for level in range(span):
                moved[:, :, level : level + width] += window[:, :, level, None] * probs[None]
    else:  # wide laws and reaches: each law's own convolution (compute-bound), the rules below batched
        moved = np.empty((copies, count, span + width - 1))
        for copy in range(copies):
            for law in range(count):
                moved[copy, law] = np.convolve(window[copy, law], probs[law])
    mass[:, :, lo : hi + 1] = 0.0
    fell = np.zeros(mass.shape[:2])
    rose = np.zeros(mass.shape[:2])
    for copy, rules in enumerate(forward.rules):
        if under > 0:
            below = moved[copy, :, :under]
            fell[copy] = below.sum(axis=1)
            if rules.at_low != WALK:
                below[:] = 0.0
        if over_at is not None:
            above = moved[copy, :, over_at:]
            rose[copy] = above.sum(axis=1)
            above[:] = 0.0
        if stop > start:
            mass[copy, :, start:stop] = moved[copy, :, start - first : stop - first]
        if under > 0 and rules.at_low == HOLD:
            mass[copy, :, forward.band_lo] += fell[copy]
        if over_at is not None and rules.at_high == HOLD:
            mass[copy, :, forward.band_hi] += rose[copy]
    if under > 0 and forward.any_hold_low:
        start, stop = min(start, forward.band_lo), max(stop, forward.band_lo + 1)
    if over_at is not None and forward.any_hold_high:
        start, stop = min(start, forward.band_hi), max(stop, forward.band_hi + 1)
    if not forward.any_walk_low:
        start = max(start, forward.band_lo)
    return (start, stop - 1), fell, rose


def _sweep_dense(walk: BandedWalk, laws: list[StepLaw], horizon: int) -> tuple[np.ndarray, np.ndarray]:
    """``BandedWalk._sweep``'s curves when every period is ``Forward._dense_step``, for ``laws`` at once."""
    grid_low, grid_high = walk._grid(horizon, walk.start)
    size = grid_high - grid_low + 1
    copies, stockout_copy, overflow_copy = walk._copies()
    forward = Forward(copies, size, walk.low - grid_low, walk.high - grid_low)
    parts = [forward._dense_parts(law) for law in laws]
    inside = np.stack([part[1] for part in parts])  # laws x levels x levels
    under = np.stack([part[2] for part in parts])  # laws x levels: the chance of leaving below
    over = np.stack([part[3] for part in parts])
    mass = np.zeros((len(laws), len(copies), size))  # laws first: one matrix product per law
    mass[:, :, walk.start - grid_low] = 1.0
    hold_low = [copy for copy, rules in enumerate(copies) if rules.at_low == HOLD]
    hold_high = [copy for copy, rules in enumerate(copies) if rules.at_high == HOLD]
    counts_stockout = bool(forward.end_low[stockout_copy])
    counts_overflow = bool(forward.end_high[overflow_copy])
    ended_low, ended_high = np.zeros(len(laws)), np.zeros(len(laws))
    stockout, overflow = np.zeros((len(laws), horizon + 1)), np.zeros((len(laws), horizon + 1))
    for period in range(1, horizon + 1):
        fell = np.matmul(mass, under[:, :, None])[:, :, 0]  # laws x copies
        rose = np.matmul(mass, over[:, :, None])[:, :, 0]
        mass = np.matmul(mass, inside)
        mass[:, hold_low, 0] += fell[:, hold_low]
        mass[:, hold_high, -1] += rose[:, hold_high]
        if counts_stockout:
            ended_low += fell[:, stockout_copy]
        if counts_overflow:
            ended_high += rose[:, overflow_copy]
        stockout[:, period], overflow[:, period] = ended_low, ended_high
    return np.minimum(stockout, 1.0), np.minimum(overflow, 1.0)
