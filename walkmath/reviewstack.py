"""Lost sales with a lead time for many (s, S) policies at once: numpy-built chains, GTH over a stack.

The pipeline chains of different policies do not share their states' laws: the
shelf is floored at 0 when a sale is lost, so the chain for (s + 1, S + 1) is not
the chain for (s, S) shifted, and every chain keeps its own exact steady state
(walkmath/reviewchain.py gives the rules). What is shared instead is all of the
work around the arithmetic:

* the states of policy (s, S) lie in one set known in advance, the tuples
  (on hand, orders due) whose orders are 0 or at least the gap S - s and whose
  sum is at most S (every order is at least the gap, the position never passes
  S); it is enumerated with numpy, and every move of every state for every
  demand is one array expression (no Python loop over states or demands);
* the states reached from (S on hand, nothing due) and their closed class come
  from scipy's graph routines, as the one-policy path finds them;
* the GTH reductions of all the policies run as one: each closed class is
  padded to its size class (``size_class``) with inert states (a row that goes
  to state 0, a column of zeros: reducing one adds only exact zeros), and the
  chains of one size class are reduced together along a leading array axis,
  with GTH's pivots (sums of off-diagonal probabilities, never 1 - p_kk) and
  only non-negative products added (``stacked_gth``), so the relative accuracy
  of each steady state is kept entrywise; only the order of some additions
  differs from ``gth_steady_state``, by rounding.

Measured (one BLAS thread, ``python -m walkmath.bench lost``): 5 to 7 times
faster than one solve per candidate where chains are small and many (lead
time 1), 1.7 to 2.6 times with lead time 2 (fewer, larger chains, where the
arithmetic itself dominates).

The one-policy path (``PeriodicReview.measures``) is the reference: each
policy's measures here equal its measures there to rounding (tested to 1e-10
relative).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import sparse
from scipy.sparse import csgraph

from walkmath.cost import WORK_CAP, Work
from walkmath.policy import DemandTables, PolicyMeasures, count_probs, end_drop_law, measure_curves
from walkmath.reviewchain import GTH_BLOCK
from walkmath.steplaw import StepLaw

# Bytes of one stack of padded chains held at once (the rest of a size class waits for the next stack).
STACK_BYTES = 32 * 2**20
# Moves (state x demand) built at once for one family of policies (a few arrays of this length in memory).
FAMILY_MOVES = 2_000_000
# Cost of one numpy call on a stack, in the cost model's units (about 5 microseconds at 4e9 a second).
CALL_UNITS = 20_000
# Numpy and scipy calls to build one policy's chain, find its closed class and read its measures.
CALLS_PER_POLICY = 60
# Cost of one (state, demand) move built with numpy (index arithmetic on a few arrays), in the same units.
MOVE_UNITS = 200
# Units past which pricing stops adding policies (the price is then far past any cap).
PRICE_STOP = 10**6 * WORK_CAP
_KNOB = "lower the order-up-to level, shorten the lead time or coarsen the demand units"


def size_class(states: int) -> int:
    """The padded size a closed class of ``states`` states is reduced at: a multiple of 8, at most 1/16 more
    (above 128), so padding adds at most about a fifth to the arithmetic."""
    step = max(8, (states // 16 + 7) // 8 * 8)
    return -(-states // step) * step


def pipeline_states(order_up_to: int, gap: int, lead_time: int) -> np.ndarray:
    """Every (on hand, orders due, oldest first) tuple a policy with this S and gap can hold at a review.

    Orders due are 0 or in gap..S, and on hand plus orders due is at most S. Rows in lexicographic order.
    """
    sizes = np.array([0, *range(gap, order_up_to + 1)], dtype=np.int64)
    due = np.zeros((1, 0), dtype=np.int64)
    total = np.zeros(1, dtype=np.int64)
    for _ in range(max(lead_time - 1, 0)):
        rows, cols = np.nonzero(total[:, None] + sizes[None, :] <= order_up_to)
        due = np.column_stack([due[rows], sizes[cols]])
        total = total[rows] + sizes[cols]
    counts = order_up_to - total + 1
    owner = np.repeat(np.arange(total.size), counts)
    on_hand = np.arange(int(counts.sum())) - np.repeat(np.cumsum(counts) - counts, counts)
    states = np.column_stack([on_hand, due[owner]])
    return states[np.lexsort(states.T[::-1])]


def row_keys(rows: np.ndarray, *others: np.ndarray) -> list[np.ndarray]:
    """Integer keys for rows of non-negative whole numbers (all of one width): equal rows get equal keys,
    and keys follow the rows' lexicographic order. Digits in base (largest + 1) when they fit in 62 bits,
    else each row's rank among all the rows given (``np.unique``: slower, for many orders due)."""
    arrays = (rows, *others)
    base = max(int(array.max()) for array in arrays if array.size) + 1
    width = rows.shape[1]
    if base**width < 2**62:
        scale = base ** np.arange(width - 1, -1, -1, dtype=np.int64)
        return [array @ scale for array in arrays]
    _, rank = np.unique(np.concatenate(arrays), axis=0, return_inverse=True)
    return np.split(rank.reshape(-1), np.cumsum([array.shape[0] for array in arrays])[:-1])


def pipeline_count(order_up_to: int, gap: int, lead_time: int) -> int:
    """Number of rows ``pipeline_states`` returns, in closed form (no rows built).

    With k of the L - 1 orders due not 0 (C(L - 1, k) ways to place them), each at least the gap, and
    on hand making the sum at most S: C(S - k gap + k + 1, k + 1) ways (compositions, summed twice by
    the hockey-stick identity). Stops adding once past 10^15 states, far past any price's cap.
    """
    slots = max(lead_time - 1, 0)
    count = 0
    for k in range(min(slots, order_up_to // gap) + 1):
        count += math.comb(slots, k) * math.comb(order_up_to - k * gap + k + 1, k + 1)
        if count > 10**15:
            break
    return count


def lost_sales_moves(probs: np.ndarray, on_hand: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Every state's moves in one period with sales lost: (state row, stock left, probability) for each.

    Every demand up to the stock on hand is served (what is left: on hand - demand); demand above it is a
    lost sale, leaving 0. The two moves to 0 are summed where the matrix is filled.
    """
    above = np.append(np.cumsum(probs[::-1])[::-1][1:], 0.0)  # P(D > k), tail sums
    support = np.flatnonzero(probs > 0)
    rows, picks = np.nonzero(support[None, :] <= on_hand[:, None])
    demand = support[picks]
    unserved = above[np.minimum(on_hand, above.size - 1)]  # P(D > on hand); the last entry is 0
    short = np.flatnonzero(unserved > 0)
    left = np.concatenate([on_hand[rows] - demand, np.zeros(short.size, dtype=np.int64)])
    weights = np.concatenate([probs[demand], unserved[short]])
    return np.concatenate([rows, short]), left, weights


def next_states(states: np.ndarray, rows: np.ndarray, left: np.ndarray, order: np.ndarray, lead_time: int):
    """The states after each move: the order due now arrives on what was left, the others move up one
    period, and this review's ``order`` (per state) joins the end of the pipeline."""
    nxt = np.empty((rows.size, states.shape[1]), dtype=np.int64)
    if lead_time == 1:
        nxt[:, 0] = left + order[rows]
    else:
        nxt[:, 0] = left + states[rows, 1]
        nxt[:, 1:-1] = states[rows, 2:]
        nxt[:, -1] = order[rows]
    return nxt


class _Family:
    """The closed classes of many policies' chains, found in one pass over all their states.

    Every policy's state set (``pipeline_states``) is laid end to end; each state's moves for every
    demand are one array expression; one breadth-first search from an extra node pointing at every
    policy's start (S on hand, nothing due) finds the states reached, one strong-component pass their
    classes. Each policy must keep exactly one closed class among its reached states (as
    ``closed_class`` asks of one chain).
    """

    def __init__(self, probs: np.ndarray, policies: list[tuple[int, int]], lead_time: int):
        count = len(policies)
        sets = {}
        for s, big_s in policies:
            if (big_s - s, big_s) not in sets:
                sets[big_s - s, big_s] = pipeline_states(big_s, big_s - s, lead_time)
        blocks = [sets[big_s - s, big_s] for s, big_s in policies]
        sizes = np.array([block.shape[0] for block in blocks])
        states = np.concatenate(blocks)
        owner = np.repeat(np.arange(count), sizes)
        reorder = np.array([s for s, _ in policies])[owner]
        order_up_to = np.array([big_s for _, big_s in policies])[owner]
        on_hand = states[:, 0]
        position = states.sum(axis=1)
        order = np.where(position <= reorder, order_up_to - position, 0)
        rows, left, weights = lost_sales_moves(probs, on_hand)
        nxt = next_states(states, rows, left, order, lead_time)
        width = states.shape[1]
        firsts = np.cumsum(sizes) - sizes
        start_rows = np.zeros((count, width), dtype=np.int64)
        start_rows[:, 0] = order_up_to[firsts]  # S on hand, nothing due
        keys, cols, starts = row_keys(
            np.column_stack([owner, states]),
            np.column_stack([owner[rows], nxt]),
            np.column_stack([np.arange(count), start_rows]),
        )
        cols = np.searchsorted(keys, cols)  # keys increase: policies in turn, each's rows in lexicographic order
        starts = np.searchsorted(keys, starts)
        total = states.shape[0]
        graph = sparse.csr_matrix(
            (np.ones(rows.size + count), (np.append(rows, np.full(count, total)), np.append(cols, starts))),
            shape=(total + 1, total + 1),
        )
        reached = np.zeros(total + 1, dtype=bool)
        reached[csgraph.breadth_first_order(graph, total, directed=True, return_predecessors=False)] = True
        reached[total] = False
        _, labels = csgraph.connected_components(graph, directed=True, connection="strong")
        live = reached[rows]  # moves from a reached state (their ends are reached too)
        crossing = live & (labels[rows] != labels[cols])
        leaving = np.zeros(labels.max() + 1, dtype=bool)
        leaving[labels[rows[crossing]]] = True
        member = reached[:total] & ~leaving[labels[:total]]
        classes = np.zeros(count, dtype=np.int64)
        firsts = np.flatnonzero(member)
        firsts = firsts[np.unique(labels[firsts], return_index=True)[1]]  # one state per closed class
        np.add.at(classes, owner[firsts], 1)
        if np.any(classes != 1):
            bad = int(classes[np.flatnonzero(classes != 1)[0]])
            raise ValueError(f"the stock chain has {bad} closed classes; its long run depends on the start")
        self.members = np.flatnonzero(member)
        self.owner = owner[self.members]
        self.sizes = np.bincount(self.owner, minlength=count)
        local = np.full(total, -1)
        local[self.members] = np.arange(self.members.size) - np.repeat(np.cumsum(self.sizes) - self.sizes, self.sizes)
        kept = member[rows]  # moves out of a closed class stay in it
        self.moves = (owner[rows[kept]], local[rows[kept]], local[cols[kept]], weights[kept])
        self.available = on_hand[self.members]
        self.ordering = order[self.members] > 0

    def stack(self, group: list[int], size: int) -> np.ndarray:
        """The move matrices of the policies in ``group`` on their closed classes, padded to ``size``."""
        slot = np.full(self.sizes.size, -1)
        slot[group] = np.arange(len(group))
        policy, row, col, weight = self.moves
        pick = slot[policy] >= 0
        work = np.zeros((len(group), size, size))
        np.add.at(work, (slot[policy[pick]], row[pick], col[pick]), weight[pick])
        for i, index in enumerate(group):
            work[i, self.sizes[index] :, 0] = 1.0  # inert padding states
        return work


def lost_sales_measures(demand: StepLaw, policies, lead_time: int) -> list[PolicyMeasures]:
    """Long-run measures of lost-sales (s, S) policies with a lead time of at least 1, in the order given.

    ``policies`` is a sequence of (reorder level, order-up-to level). Exact to rounding, like
    ``PeriodicReview(demand, s, S, lead_time, "lost").measures()`` for each; priced by ``stack_work``
    (the caller checks the price first). Policies go in order of size, in families of at most about
    ``FAMILY_MOVES`` moves, and each family's chains in stacks of at most ``STACK_BYTES``.
    """
    policies = [(int(s), int(big_s)) for s, big_s in policies]
    if not policies:
        return []
    probs = count_probs(demand)
    tables = DemandTables(demand, max(big_s for _, big_s in policies))
    results: list[PolicyMeasures | None] = [None] * len(policies)
    for chosen in _families(demand, policies, lead_time):
        family = _Family(probs, [policies[i] for i in chosen], lead_time)
        starts = np.cumsum(family.sizes) - family.sizes
        for group in _stacks(family.sizes.tolist()):
            weights = stacked_gth(family.stack(group, size_class(int(family.sizes[group].max()))))
            for row, i in enumerate(group):
                at = slice(starts[i], starts[i] + family.sizes[i])
                law = weights[row, : family.sizes[i]]
                level = policies[chosen[i]][1]
                results[chosen[i]] = _measures(law, family.available[at], family.ordering[at], level, demand, tables)
    return results


def _families(demand: StepLaw, policies: list[tuple[int, int]], lead_time: int) -> list[list[int]]:
    """Policy indices by increasing state count, cut into families of at most ``FAMILY_MOVES`` moves (or one)."""
    counts = [pipeline_count(big_s, big_s - s, lead_time) for s, big_s in policies]
    families, current, moves = [], [], 0
    for index in sorted(range(len(policies)), key=counts.__getitem__):
        weight = counts[index] * demand.probs.size
        if current and moves + weight > FAMILY_MOVES:
            families.append(current)
            current, moves = [], 0
        current.append(index)
        moves += weight
    return [*families, current]


def _measures(weights, available, ordering, order_up_to: int, demand: StepLaw, tables: DemandTables) -> PolicyMeasures:
    """A policy's long-run measures from its steady state, read as ``PeriodicReview`` reads them."""
    drop = np.bincount(order_up_to - available, weights=weights, minlength=order_up_to + 1)
    orders = math.fsum(weights[ordering])
    curves = measure_curves(drop, end_drop_law(drop, demand), tables, np.array([order_up_to]), "lost")
    return PolicyMeasures(**{name: float(values[0]) for name, values in curves.items()}, orders_per_period=orders)


def _stacks(sizes: list[int]) -> list[list[int]]:
    """Indices grouped by size class, each group split so that its padded stack fits ``STACK_BYTES``."""
    classes: dict[int, list[int]] = {}
    for index, size in enumerate(sizes):
        classes.setdefault(size_class(size), []).append(index)
    groups = []
    for padded, members in sorted(classes.items()):
        room = max(1, STACK_BYTES // (8 * padded * padded))
        groups.extend(members[i : i + room] for i in range(0, len(members), room))
    return groups


def stacked_gth(work: np.ndarray, block: int = GTH_BLOCK) -> np.ndarray:
    """Stationary laws of a stack of irreducible stochastic matrices (``work[i]``), all at once; ``work`` is
    overwritten.

    GTH state reduction (walkmath/reviewchain.py), states reduced from the last, in blocks of ``block``,
    every matrix of the stack at each step: each pivot is a sum of the current row's probabilities to the
    states left, never 1 - p_kk, and every update adds non-negative products, so each law keeps GTH's
    entrywise relative accuracy. Near the top of the matrix a block is reduced as ``gth_steady_state``
    does; further down, where many states come before the block, only the block's own entries are
    reduced state by state and everything else takes the block's updates as matrix products
    (``_reduce_block_by_products``), which is faster from a few hundred states on.

    A smaller chain is padded with inert states (row: to state 0 with probability 1; column: zeros),
    which add exact zeros and come out with probability 0.
    """
    count, size = work.shape[0], work.shape[1]
    last = size - 1
    while last > 0:
        first = max(1, last - block + 1)
        if first <= block:  # few states before the block: one rank-one update per state costs less
            _reduce_block_by_steps(work, first, last)
        else:
            _reduce_block_by_products(work, first, last)
        last = first - 1
    weights = np.zeros((count, size))
    weights[:, 0] = 1.0
    for k in range(1, size):
        weights[:, k] = np.einsum("ij,ij->i", weights[:, :k], work[:, :k, k])  # non-negative terms
    totals = np.array([math.fsum(row) for row in weights])
    return weights / totals[:, None]


def _reduce_block_by_steps(work: np.ndarray, first: int, last: int) -> None:
    """Reduce states last..first of every matrix as ``gth_steady_state`` does: the block's rows and the
    block's columns of the other rows one state at a time, the rest of the matrix by one product."""
    for k in range(last, first - 1, -1):
        pivot = work[:, k, :k].sum(axis=1)  # the probability of leaving k downwards: a sum, never 1 - p_kk
        if not np.all(pivot > 0):
            raise ValueError("the stock chain is not irreducible on its closed class")
        work[:, :k, k] /= pivot[:, None]
        if k > first:
            work[:, first:k, :k] += work[:, first:k, k, None] * work[:, k, None, :k]
            work[:, :first, first:k] += work[:, :first, k, None] * work[:, k, None, first:k]
    span = slice(first, last + 1)
    work[:, :first, :first] += np.matmul(work[:, :first, span], work[:, span, :first])


def _reduce_block_by_products(work: np.ndarray, first: int, last: int) -> None:
    """Reduce states last..first of every matrix with only the block's own entries touched state by state.

    Each pivot is the current row's in-block sum plus its probability to the states before the block,
    carried as a running row sum. Afterwards the block's upper part holds each reduced column's in-block
    entries (scaled by its pivot), its lower part each row's in-block entries when it was reduced; the
    block rows' entries before the block become (I - upper)^-1 times their first values, the other rows'
    block columns their first values times V, V[:, k] = (e_k + V[:, k+1:] lower[k+1:, k]) / pivot_k (both
    triangular series of non-negative terms), and the rest of the matrix takes their product.
    """
    count = work.shape[0]
    span = slice(first, last + 1)
    width = last - first + 1
    inner = work[:, span, span].copy()
    outside = work[:, span, :first].sum(axis=2)  # each block row's probability to the states before the block
    pivots = np.empty((count, width))
    for k in range(width - 1, -1, -1):
        pivot = outside[:, k] + inner[:, k, :k].sum(axis=1)
        if not np.all(pivot > 0):
            raise ValueError("the stock chain is not irreducible on its closed class")
        pivots[:, k] = pivot
        inner[:, :k, k] /= pivot[:, None]
        inner[:, :k, :k] += inner[:, :k, k, None] * inner[:, k, None, :k]
        outside[:, :k] += inner[:, :k, k] * outside[:, k, None]
    rows = np.zeros((count, width, width))
    cols = np.zeros((count, width, width))
    for k in range(width - 1, -1, -1):
        rows[:, k, k] = 1.0
        rows[:, k, :] += np.einsum("mj,mjc->mc", inner[:, k, k + 1 :], rows[:, k + 1 :, :])
        cols[:, k, k] = 1.0
        cols[:, :, k] += np.einsum("mrj,mj->mr", cols[:, :, k + 1 :], inner[:, k + 1 :, k])
        cols[:, :, k] /= pivots[:, k, None]
    row_part = np.matmul(rows, work[:, span, :first])
    column_part = np.matmul(work[:, :first, span], cols)
    work[:, span, span] = inner
    work[:, :first, span] = column_part
    work[:, :first, :first] += np.matmul(column_part, row_part)


def stack_work(method: str, demand: StepLaw, policies, lead_time: int, knob: str = _KNOB) -> Work:
    """Price of ``lost_sales_measures`` on these policies, before any of it runs.

    Each policy: its state set (``pipeline_count``, exact) times the demand's width of moves, the calls
    that build it and read its measures, and the GTH arithmetic on the padded size class of its whole
    state set (its closed class is no larger), size^3 + 2,000 size^2 as ``gth_work`` prices one chain.
    Each stack: a dozen numpy calls per state of its size class. Stacks have distinct size classes, each
    at most the class of one of its own policies' state sets, so their sizes add up to at most the sum
    of all size classes up to the largest, and at most the sum of the policies' classes; plus one stack
    of the largest size per ``STACK_BYTES`` of padded matrices and per family (a family may cut a size
    class in two), and each family's own few dozen calls. Stops adding policies once past ``PRICE_STOP``
    (a million times the engine's cap), so a far too large search is refused quickly.
    """
    jumps = demand.probs.size
    units = largest = memory = moves = own = 0
    for s, big_s in policies:
        states = pipeline_count(big_s, big_s - s, lead_time)
        padded = size_class(states)
        largest = max(largest, padded)
        own += padded
        memory += 8 * padded * padded
        moves += states * jumps
        units += states * jumps * MOVE_UNITS + CALLS_PER_POLICY * CALL_UNITS + padded**3 + 2_000 * padded**2
        if units > PRICE_STOP:
            break  # far past any cap: the rest of the policies cannot make it affordable
    classes, padded = 0, 8
    while padded <= min(largest, own):
        classes += padded
        padded = size_class(padded + 1)
    families = moves // FAMILY_MOVES + 1
    stacks = min(classes, own) + largest * (memory // STACK_BYTES + families)
    units += 12 * CALL_UNITS * stacks + 50 * CALL_UNITS * families
    return Work(method, max(largest, 1), len(policies), jumps, copies=0, dense=units, knob=knob)
