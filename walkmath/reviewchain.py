"""The periodic-review stock chain with its order pipeline, and GTH state reduction.

State at a review, before ordering: (on hand I, orders still due, oldest first).
The rules are the design notes' (section 3): at a review with stock position
I + (orders due) at or below the reorder level s, order up to S; an order
placed at a review arrives L periods later, before that period's demand (at
once when L = 0); then the period's demand is served from stock on hand, the
unmet part lost. While no stock-out has happened the on-hand stock never goes
below 0, so the same chain gives the first stock-out time under both rules.

Steady state by GTH state reduction (Grassmann, Taksar and Heyman, "Regenerative
analysis and steady state distributions for Markov chains", Operations Research
33, 1985): Gaussian elimination in which every pivot is a sum of off-diagonal
probabilities rather than 1 - p_kk, so no step subtracts and the long-run law
keeps its relative accuracy entrywise; done in blocks, so that most of its work
is one matrix product per block.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import sparse
from scipy.sparse import csgraph

from walkmath.cost import Work

# Cost of one (state, demand) step of the Python state search, in work units (about 1 microsecond).
SEARCH_STEP = 5_000
# States reduced one at a time before the rest of the matrix takes their updates as one product.
GTH_BLOCK = 64


def state_bound(top: int, lead_time: int, order_up_to: int, gap: int) -> int:
    """Upper bound on the states (on hand, L - 1 orders due) reachable from at most ``top`` on hand.

    On hand is 0..top; every order is at least the gap S - s and the orders due
    sum to at most S, so at most min(L - 1, S // gap) of them are not 0; k such
    orders with sum <= S can be chosen in C(S - k gap + k, k) ways. The position
    (on hand plus orders due) is at most top, which bounds the count by
    C(top + L, L) as well.
    """
    slots = max(lead_time - 1, 0)
    due = sum(
        math.comb(slots, k) * math.comb(order_up_to - k * gap + k, k) for k in range(min(slots, order_up_to // gap) + 1)
    )
    parts = max(lead_time, 1)  # on hand and the orders due also sum to at most top
    return min((top + 1) * due, math.comb(top + parts, parts))


def chain_work(method: str, states: int, jumps: int, horizon: int = 0) -> Work:
    """The state search over at most ``states`` states and ``horizon`` sparse sweeps over them.

    The GTH solve is priced separately on the closed class actually found (``gth_work``).
    """
    return Work(method, states, horizon, jumps, dense=states * jumps * SEARCH_STEP, knob=_KNOB)


def gth_work(states: int) -> Work:
    """Blocked GTH on a dense closed class of n states, in the cost model's units (about 4e9 a second).

    Measured on this machine kind (numpy on one of two shared cores): 5 ms at n = 100, 0.08 s at 300,
    0.36 s at 1,000, 1.8 s at 2,000, 4.7 s at 3,000; priced n^3 (the product) + 2,000 n^2 (the
    block updates and the back-substitution) + 200,000 n (a few numpy calls per state), which
    covers each of those with room.
    """
    dense = states**3 + 2_000 * states**2 + 200_000 * states
    return Work("steady_state", states, 1, 1, copies=0, dense=dense, knob=_KNOB)


_KNOB = "lower the order-up-to level, shorten the lead time or coarsen the demand units"


class ReviewChain:
    """The pipeline chain from one start, its states found by breadth-first search.

    ``transitions`` is a sparse matrix of the moves that end without a stock-out;
    ``stockout`` the probability that the period from each state has one;
    ``available`` the stock on hand when the period's demand comes.
    """

    def __init__(
        self,
        demand_probs: np.ndarray,
        reorder_level: int,
        order_up_to: int,
        lead_time: int,
        start: tuple[int, ...],
        *,
        shortage_moves: bool = False,
    ):
        self.reorder_level, self.order_up_to, self.lead_time = reorder_level, order_up_to, lead_time
        support = np.flatnonzero(demand_probs > 0)
        # Plain lists for the search (it runs in Python, one state at a time); the support rises, so the
        # demands a state can serve are a prefix of it.
        steps = list(zip(support.tolist(), demand_probs[support].tolist(), strict=True))
        above = np.append(np.cumsum(demand_probs[::-1])[::-1][1:], 0.0).tolist()  # P(D > k), tail sums
        index = {start: 0}
        states = [start]  # in the order found: breadth first, so state i is the i-th taken up
        moves: list[tuple[int, int, float]] = []
        short: list[tuple[int, int, float]] = []
        ended, kept, ordering = [], [], []
        here = 0
        while here < len(states):
            state = states[here]
            on_hand, due = state[0], state[1:]
            position = on_hand + sum(due)
            order = order_up_to - position if position <= reorder_level else 0
            available = on_hand + order if lead_time == 0 else on_hand
            ends = above[available] if available < len(above) else 0.0
            ended.append(ends)
            kept.append(available)
            ordering.append(order > 0)
            # The state at the next review is (left + shift, *rest) for what is left (``_next``).
            shift, rest = self._arrival(due, order)
            for units, p in steps:
                if units > available:
                    break
                nxt = (available - units + shift, *rest)
                found = index.get(nxt)
                if found is None:
                    found = index[nxt] = len(states)
                    states.append(nxt)
                moves.append((here, found, p))
            if shortage_moves and ends > 0:  # lost sales: the stock-out leaves nothing on hand
                nxt = (shift, *rest)
                found = index.get(nxt)
                if found is None:
                    found = index[nxt] = len(states)
                    states.append(nxt)
                short.append((here, found, ends))
            here += 1
        size = len(states)
        self.states = states
        self.transitions = _matrix(moves, size)
        self.shortage_transitions = _matrix(short, size)
        self.stockout = np.array(ended)
        self.available = np.array(kept)
        self.ordering = np.array(ordering)

    def _next(self, left: int, due: tuple[int, ...], order: int) -> tuple[int, ...]:
        """The state at the next review: what is left, plus the order arriving then."""
        shift, rest = self._arrival(due, order)
        return (left + shift, *rest)

    def _arrival(self, due: tuple[int, ...], order: int) -> tuple[int, tuple[int, ...]]:
        """What the next review adds to the stock left (the order due then) and the orders still due after it."""
        if self.lead_time == 0:
            return 0, ()
        if self.lead_time == 1:
            return order, ()
        return due[0], (*due[1:], order)

    def stockout_curve(self, horizon: int) -> tuple[np.ndarray, np.ndarray]:
        """P(a stock-out in periods 1..n) and P(none), n = 0..horizon, each summed from its own side.

        The stopped mass accumulates as a sum of non-negative terms; the surviving
        mass is the sum of the live state probabilities (never 1 - risk).
        """
        mass = np.zeros(len(self.states))
        mass[0] = 1.0
        risk, alive = np.zeros(horizon + 1), np.ones(horizon + 1)
        moves = self.transitions.T.tocsr()
        total = 0.0
        for period in range(1, horizon + 1):
            total += float(mass @ self.stockout)
            mass = moves @ mass
            risk[period], alive[period] = min(total, 1.0), min(math.fsum(mass), 1.0)
        return risk, alive


def _matrix(entries: list[tuple[int, int, float]], size: int) -> sparse.csr_matrix:
    if not entries:
        return sparse.csr_matrix((size, size))
    rows, cols, values = zip(*entries, strict=True)
    return sparse.csr_matrix((values, (rows, cols)), shape=(size, size))  # duplicates are summed


def closed_class(matrix: sparse.csr_matrix) -> np.ndarray:
    """Indices of the single closed communicating class of a chain's move graph.

    Raises if there is not exactly one (then the long run would depend on the start).
    """
    count, labels = csgraph.connected_components(matrix, directed=True, connection="strong")
    graph = matrix.tocoo()
    leaving = np.zeros(count, dtype=bool)
    crossing = labels[graph.row] != labels[graph.col]
    leaving[labels[graph.row[crossing]]] = True
    closed = np.flatnonzero(~leaving)
    if closed.size != 1:
        raise ValueError(f"the stock chain has {closed.size} closed classes; its long run depends on the start")
    return np.flatnonzero(labels == closed[0])


def gth_steady_state(matrix: np.ndarray, block: int = GTH_BLOCK) -> np.ndarray:
    """Stationary law of an irreducible stochastic matrix by GTH state reduction (subtraction-free).

    Blocked: the states of a block of ``block`` are reduced one at a time on the block's own rows
    and columns (each pivot a sum of the current row's off-diagonal probabilities, never 1 - p_kk);
    the rest of the matrix then takes all of the block's rank-one updates at once as one matrix
    product, which adds the same non-negative products in another order (so the entrywise relative
    accuracy of GTH is kept). About n^3 / 3 multiply-adds on a dense copy, most of them in that
    product; the diagonal is never read, so rows need only be stochastic off the diagonal.
    """
    work = np.array(matrix, dtype=float)
    size = work.shape[0]
    last = size - 1
    # The rank-one updates are written as broadcast products (work[:, k, None] * work[None, k, :]): the same
    # products as np.outer, added in the same order, without its per-call overhead (chains here are small, so
    # the per-state numpy calls, not the arithmetic, set the time).
    while last > 0:
        first = max(1, last - block + 1)  # reduce states last, last - 1, ..., first
        for k in range(last, first - 1, -1):
            row = work[k, :k]
            pivot = float(row.sum())  # probability of leaving k downwards: a sum, never 1 - p_kk
            if pivot <= 0:
                raise ValueError("the stock chain is not irreducible on its closed class")
            column = work[:k, k]
            column /= pivot
            if k > first:  # the block's own rows (all columns) and the block's columns of the other rows
                work[first:k, :k] += column[first:, None] * row
                work[:first, first:k] += column[:first, None] * row[first:]
        work[:first, :first] += work[:first, first : last + 1] @ work[first : last + 1, :first]
        last = first - 1
    weights = np.zeros(size)
    weights[0] = 1.0
    for k in range(1, size):
        weights[k] = weights[:k] @ work[:k, k]  # non-negative terms
    return weights / math.fsum(weights)
