"""Subtraction-free state reduction on a band: expected periods to end, and where the path ends.

The states are the levels low..high of a band that have not ended; ``Q`` is
the one-period sub-stochastic matrix among them and ``e[i]`` the chance of
ending from level i this period, both from ``operator.substochastic_band``
(sums of non-negative terms). For a cycle of laws one period at a time is
replaced by one cycle: C = Q_1 ... Q_p (non-negative products), with the
chance of ending within the cycle sum_r Q_1 ... Q_{r-1} e_r and the expected
periods spent in it g = sum_{r < p} Q_1 ... Q_r 1.

The elimination (Grassmann, Taksar and Heyman, Operations Research 33 (1985)
1107-1116, applied to the absorbing chain) removes levels from the top. When
level k goes, every remaining level i that can step to k inherits k's moves,
its chance of ending and its expected time, in proportion Q[i, k] / leave_k,
where leave_k = e_k + sum_{j < k} Q[k, j] is a sum of non-negative terms equal
to 1 - Q[k, k]; no entry is ever formed by a subtraction. Removing an end
level keeps the fill-in inside the band, so the work is about levels x
lower x upper multiply-adds plus one Python step per level. Back-substitution
t_k = (c_k + sum_{j < k} Q[k, j] t_j) / leave_k is again positive. A level
whose leave chance is exactly zero, or that can reach such a level, never
ends: its time is inf (an exact, structural zero, not a rounding).
"""

from __future__ import annotations

import hashlib
import threading
from collections import OrderedDict
from dataclasses import dataclass

import numpy as np
from numpy.lib.stride_tricks import sliding_window_view
from scipy.linalg import lapack

from walkmath.cost import ComputeTooLarge, Work
from walkmath.operator import Rules, substochastic_band

# Fixed cost of one pivot (a dozen numpy calls, about 12 microseconds), in the
# cost model's units (see walkmath.cost); a narrow pivot on Python floats costs
# about 4 microseconds plus 0.3 per multiply-add (more on a busy machine or a large band).
PIVOT_OVERHEAD = 60_000
NARROW_BASE, NARROW_PER_UPDATE = 20_000, 1_500
# Largest band the elimination holds in memory (float64 entries, about 160 MB),
# with room for the product of a cycle and the operator's own arrays.
BAND_ENTRIES_CAP = 20_000_000
# Pivots with at most this many multiply-adds run on Python floats (faster than a dozen numpy calls).
NARROW_PIVOT = 24
_KNOB = "narrow the band (capacity), coarsen the units or shorten the cycle of laws"
# Solutions kept for reuse (each holds a few arrays over the band's levels): one solve answers every
# start level, so a what-if that only moves the start stock finds its band already solved.
SOLUTIONS_KEPT = 16


@dataclass(frozen=True, eq=False)
class BandSolution:
    """Per level (index 0 = low): expected periods to end, chance of ending each way, never ends."""

    times: np.ndarray  # inf where the path may never end
    ended: np.ndarray  # ended[i, w]: P(the path ends the w-th way); ways: [any] or [below, above]
    stuck: np.ndarray  # True where some path never ends


def _widths(law, size: int) -> tuple[int, int]:
    return min(max(-law.lowest, 0), size - 1), min(max(law.highest, 0), size - 1)


def _reduced_widths(laws, size: int) -> tuple[int, int, int]:
    """Band widths (lower, upper) of the cycle product C, and the multiply-adds of forming it."""
    lower = upper = products = 0
    for law in laws:
        down, up = _widths(law, size)
        products += size * (lower + upper + 1) * (down + up + 1)
        lower, upper = min(lower + down, size - 1), min(upper + up, size - 1)
    return lower, upper, products


def band_work(laws, size: int, knob: str = _KNOB) -> Work:
    """Priced work of ``solve_band``: levels x bandwidth^2 for the elimination, plus the cycle products.

    ``jumps`` holds bandwidth^2 (the elimination's multiply-adds per level); ``dense`` the
    cycle products and a charge per level for the Python step of each pivot (measured).
    """
    lower, upper, products = _reduced_widths(laws, size)
    width = lower + upper + 1
    updates = _updates(lower, upper, ways=1)
    per_pivot = NARROW_BASE + NARROW_PER_UPDATE * updates if updates <= NARROW_PIVOT else PIVOT_OVERHEAD
    return Work("mean_time", size, 1, width * width, dense=products + size * per_pivot, knob=knob)


def _updates(lower: int, upper: int, ways: int) -> int:
    """Multiply-adds of one pivot: the rows above it times (its row below the diagonal + the carried values)."""
    return upper * (lower + ways + 2)


def fits_in_memory(laws, size: int) -> bool:
    """Whether the reduced band of ``size`` levels stays within ``BAND_ENTRIES_CAP`` entries."""
    lower, upper, _ = _reduced_widths(laws, size)
    return size * (lower + upper + 1) <= BAND_ENTRIES_CAP


def solve_band(laws, size: int, above: str, *, split_ends: bool = False) -> BandSolution:
    """Mean periods to end for every start level on a band of ``size`` levels; stock-out ends the path.

    ``above`` is the rule at the top ("stop" ends the path, "spill" holds it).
    With ``split_ends`` the chance of ending below and above is kept apart.
    Checks the cost (time and memory) before any work; see the module notes for the method.

    The last ``SOLUTIONS_KEPT`` solutions are kept, keyed by the laws' contents (each law's
    lowest step and a digest of its probabilities), the size and the rules, and returned again
    (read-only arrays) for the same band.
    """
    band_work(laws, size).check()
    if not fits_in_memory(laws, size):
        raise ComputeTooLarge(
            f"mean_time needs a band of {size:,} levels, more than {BAND_ENTRIES_CAP:,} entries "
            f"held in memory. To fit, {_KNOB}."
        )
    key = (tuple(_law_key(law) for law in laws), size, above, split_ends)
    with _kept_lock:
        if key in _kept:
            _kept.move_to_end(key)
            return _kept[key]
    solution = _solve_band(laws, size, above, split_ends)
    for array in (solution.times, solution.ended, solution.stuck):
        array.setflags(write=False)
    with _kept_lock:
        _kept[key] = solution
        while len(_kept) > SOLUTIONS_KEPT:
            _kept.popitem(last=False)
    return solution


_kept: OrderedDict[tuple, BandSolution] = OrderedDict()
_kept_lock = threading.Lock()


def forget_solutions() -> None:
    """Drop every kept solution (tests start from none)."""
    with _kept_lock:
        _kept.clear()


def _law_key(law) -> tuple[int, bytes]:
    probs = np.ascontiguousarray(law.probs, dtype=float)
    return law.lowest, hashlib.blake2b(probs.tobytes(), digest_size=20).digest()


def _solve_band(laws, size: int, above: str, split_ends: bool) -> BandSolution:
    rules = Rules("stop", above)
    lower, upper, product = 0, 0, np.ones((size, 1))  # Q_1 ... Q_r in row form, starting at I
    spent = np.zeros(size)
    ways = 2 if split_ends else 1
    ending = np.zeros((size, ways))
    for law in laws:
        down, up, rows, end_now = _rows(law, size, rules)
        if split_ends:  # the same ends, told apart: the other end held instead of ending
            below = substochastic_band(law, size, Rules("stop", "spill"))[3]
            over = substochastic_band(law, size, Rules("lost", "stop"))[3]
            end_now = np.stack([below, over], axis=1)
        spent += product.sum(axis=1)
        for way in range(ways):
            ending[:, way] += _apply(lower, product, end_now[:, way])
        lower, upper, product = _product(lower, upper, product, down, up, rows)
    return _eliminate(lower, upper, product, ending, spent)


def _rows(law, size: int, rules: Rules) -> tuple[int, int, np.ndarray, np.ndarray]:
    """The operator's band in row form: rows[i, lower + o] = P(i -> i + o); and the ending chance."""
    band_lower, band_upper, band, ending = substochastic_band(law, size, rules)
    lower, upper = min(band_lower, size - 1), min(band_upper, size - 1)
    rows = np.zeros((size, lower + upper + 1))
    for offset in range(-lower, upper + 1):
        first, last = max(0, -offset), min(size, size - offset)
        rows[first:last, lower + offset] = band[band_upper - offset, first + offset : last + offset]
    return lower, upper, rows, ending[:, None]


def _apply(lower: int, rows: np.ndarray, vector: np.ndarray) -> np.ndarray:
    """(A v)[i] = sum_o A[i, i + o] v[i + o] for A in row form (non-negative terms)."""
    size, width = rows.shape
    padded = np.zeros(size + width - 1)
    padded[lower : lower + size] = vector
    return (rows * sliding_window_view(padded, width)).sum(axis=1)


def _product(lower_a, upper_a, rows_a, lower_b, upper_b, rows_b):
    """A B for band matrices in row form (non-negative terms), looping over the narrower factor's diagonals.

    (A B)[i, i + o_a + o_b] gathers A[i, i + o_a] B[i + o_a, i + o_a + o_b]: with B's rows shifted
    into ``shifted`` (row i + a holds B's row i + a - lower_a), each diagonal a of A adds one
    scaled slice of ``shifted``; each diagonal b of B adds A times one column of its windows.
    """
    size, width_a = rows_a.shape
    width_b = rows_b.shape[1]
    out = np.zeros((size, width_a + width_b - 1))
    shifted = np.zeros((size + width_a - 1, width_b))
    shifted[lower_a : lower_a + size] = rows_b
    if width_a <= width_b:
        for a in range(width_a):
            out[:, a : a + width_b] += rows_a[:, a : a + 1] * shifted[a : a + size]
    else:
        windows = sliding_window_view(shifted, width_a, axis=0)  # windows[i, b, a] = shifted[i + a, b]
        for b in range(width_b):
            out[:, b : b + width_a] += rows_a * windows[:, b, :]
    lower, upper = min(lower_a + lower_b, size - 1), min(upper_a + upper_b, size - 1)
    first = lower_a + lower_b - lower
    return lower, upper, out[:, first : first + lower + upper + 1].copy()


def _eliminate(lower: int, upper: int, rows: np.ndarray, ending: np.ndarray, spent: np.ndarray) -> BandSolution:
    """Remove levels top-down, then back-substitute (module notes); ``rows`` is overwritten."""
    size = rows.shape[0]
    ways = ending.shape[1]
    # carried along per level: expected periods, chance of ending each way, chance of ending at all
    carried = np.column_stack([spent, ending, ending.sum(axis=1)])
    narrow = _updates(lower, upper, ways) <= NARROW_PIVOT
    leave, stuck = (_pivots_in_python if narrow else _pivots)(lower, upper, rows, carried)
    solved = _forward(lower, rows, leave, carried[:, :-1])
    times, ended = solved[:, 0], solved[:, 1 : 1 + ways]
    never = np.zeros(size, dtype=bool)
    if stuck:
        marker = np.zeros((size, 1))
        marker[sorted(stuck), 0] = 1.0
        never = _forward(lower, (rows > 0.0).astype(float), np.ones(size), marker)[:, 0] > 0.0
        times[never] = np.inf
        ended[never] = 0.0
    return BandSolution(times=times, ended=ended, stuck=never)


def _pivots(lower: int, upper: int, rows: np.ndarray, carried: np.ndarray) -> tuple[np.ndarray, set]:
    """The elimination, one level at a time with numpy on the band; returns leave chances and stuck levels."""
    size, width = rows.shape
    flat = rows.reshape(-1)
    pitch = width - 1  # flat index of (i, j) is i * pitch + j + lower
    item = flat.itemsize
    leave = np.ones(size)
    stuck = set()
    for k in range(size - 1, -1, -1):
        first_col, first_row = max(0, k - lower), max(0, k - upper)
        at_k = k * pitch + lower
        row = flat[at_k + first_col : at_k + k]  # Q[k, j], j < k
        column = flat[first_row * pitch + k + lower : at_k + k : max(pitch, 1)]  # Q[i, k], i < k
        leave_k = carried[k, -1] + row.sum()  # = 1 - Q[k, k], as a sum of non-negative terms
        if leave_k == 0.0 or k in stuck:
            stuck.add(k)  # never ends from here; whoever can step here inherits that
            stuck.update((first_row + np.flatnonzero(column)).tolist())
            row[:] = 0.0
            continue
        leave[k] = leave_k
        share = column / leave_k
        if share.size and row.size:
            block = np.ndarray(
                (share.size, row.size),
                dtype=flat.dtype,
                buffer=flat,
                offset=(first_row * pitch + first_col + lower) * item,
                strides=(pitch * item, item),
            )
            block += np.multiply.outer(share, row)
        carried[first_row:k] += np.multiply.outer(share, carried[k])
    return leave, stuck


def _pivots_in_python(lower: int, upper: int, rows: np.ndarray, carried: np.ndarray) -> tuple[np.ndarray, set]:
    """The same elimination on Python floats, for narrow bands where numpy's per-call cost dominates.

    Flat lists of floats only (no list per level), so the garbage collector has nothing to track.
    """
    size, width = rows.shape
    pitch, kept = width - 1, carried.shape[1]
    flat = rows.reshape(-1).tolist()
    carry = carried.reshape(-1).tolist()
    leave = [1.0] * size
    stuck = set()
    for k in range(size - 1, -1, -1):
        first_col, first_row = max(0, k - lower), max(0, k - upper)
        at_k = k * pitch + lower
        row = flat[at_k + first_col : at_k + k]
        carry_k = carry[k * kept : (k + 1) * kept]
        leave_k = carry_k[-1] + sum(row)
        if leave_k == 0.0 or k in stuck:
            stuck.add(k)
            stuck.update(i for i in range(first_row, k) if flat[i * pitch + k + lower] > 0.0)
            flat[at_k + first_col : at_k + k] = [0.0] * len(row)
            continue
        leave[k] = leave_k
        for i in range(first_row, k):
            weight = flat[i * pitch + k + lower]
            if weight == 0.0:
                continue
            share = weight / leave_k
            base = i * pitch + lower + first_col
            for offset, value in enumerate(row):
                flat[base + offset] += share * value
            base = i * kept
            for offset, value in enumerate(carry_k):
                carry[base + offset] += share * value
    rows.reshape(-1)[:] = flat
    carried.reshape(-1)[:] = carry
    return np.array(leave), stuck


def _forward(lower: int, rows: np.ndarray, leave: np.ndarray, values: np.ndarray) -> np.ndarray:
    """x_k = (values_k + sum_{j < k} Q[k, j] x_j) / leave_k for every k (LAPACK dtbtrs).

    The triangular band holds leave_k on its diagonal and -Q[k, j] below it, so
    each step subtracts non-positive terms: x_k is a sum of non-negative terms.
    """
    size = rows.shape[0]
    triangle = np.zeros((lower + 1, size), order="F")
    triangle[0] = leave
    for below in range(1, lower + 1):  # triangle[d, j] = A[j + d, j] = -Q[j + d, j]
        triangle[below, : size - below] = -rows[below:, lower - below]
    solved, info = lapack.dtbtrs(triangle, np.asfortranarray(values), uplo="L")
    if info != 0:  # cannot happen: every diagonal entry is a positive leave chance
        raise ArithmeticError(f"triangular solve failed (info {info})")
    return solved
