"""Lost sales with a lead time: one order-up-to level S, many reorder levels s, one shared reduction.

For a fixed S, the chains of (s, S) for every s < S live on one state set U
(``pipeline_states(S, 1, L)``: every (on hand, orders due) with sum at most S)
and move by two rules that do not depend on s: a state whose position is at
most s orders up to S (its "ordering" row), a state above s does not (its
"waiting" row). Chain s takes the ordering row below and at s, the waiting
row above. Put U in order of position, highest first; GTH reduces the last
state first, so the lowest positions go first. Reducing the positions 0..s
uses only ordering rows, the same for every chain s' >= s; so one sweep, which
keeps both versions of every row not yet reduced, serves all of them: when
positions 0..s are reduced, the waiting versions of the rows left are chain
s's own chain censored on the positions above s, exactly. Each chain then
needs only GTH on those states (few when s is near S: a small gap) and one
triangular solve back through the shared sweep's columns,
pi_E = (pi_R C_RE) (I - U_EE)^-1 with C and U non-negative (forward
substitution adds only non-negative terms). Every step is GTH's: pivots are
sums of off-diagonal probabilities, updates add non-negative products, so
each law keeps its entrywise relative accuracy.

U also holds states a chain never reaches (orders due below its gap); they
come out with probability 0. The GTH on the positions above s keeps a state
of the censored chain's one closed class to the last. A censored chain with
more than one closed class, or a sweep that meets a zero pivot (demand that
never lets the position climb back), raises ``ValueError``: the caller solves
those chains one by one (walkmath/reviewstack.py), which gives the same
answers.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
from scipy import sparse
from scipy.linalg import solve_triangular

from walkmath.cost import Work
from walkmath.policy import DemandTables, PolicyMeasures, count_probs
from walkmath.reviewchain import GTH_BLOCK, closed_class
from walkmath.reviewstack import (
    CALL_UNITS,
    CALLS_PER_POLICY,
    MOVE_UNITS,
    _measures,
    lost_sales_measures,
    lost_sales_moves,
    next_states,
    pipeline_count,
    pipeline_states,
    row_keys,
    size_class,
    stack_work,
    stacked_gth,
)
from walkmath.steplaw import StepLaw

# Numpy calls per state reduced in the sweep (both versions of the rows), and per chain read off it.
SWEEP_CALLS_PER_STATE = 8
CALLS_PER_CHAIN = 80


class LevelSweep:
    """The shared reduction for one S, down to position ``lowest`` (the smallest reorder level wanted)."""

    def __init__(self, demand: StepLaw, order_up_to: int, lowest: int, lead_time: int):
        probs = count_probs(demand)
        self.order_up_to = order_up_to
        states = pipeline_states(order_up_to, 1, lead_time)
        position = states.sum(axis=1)
        turn = np.lexsort((*states.T[::-1], -position))  # position highest first, then lexicographic
        states, position = states[turn], position[turn]
        size = states.shape[0]
        self.on_hand, self.position = states[:, 0], position
        # starts[p]: first index of position p (positions run down, so levels at or below p are the tail).
        self.starts = np.searchsorted(-position, -np.arange(order_up_to + 1))
        rows, left, weights = lost_sales_moves(probs, self.on_hand)
        waiting, ordering = np.zeros(size, dtype=np.int64), order_up_to - position
        nexts = [next_states(states, rows, left, order, lead_time) for order in (waiting, ordering)]
        keys, *next_keys = row_keys(states, *nexts)
        order_keys = np.argsort(keys)
        work = np.zeros((2, size, size))  # [0]: waiting rows, [1]: ordering rows
        for version, targets in enumerate(next_keys):
            cols = order_keys[np.searchsorted(keys[order_keys], targets)]
            np.add.at(work[version], (rows, cols), weights)
        self.snapshots: dict[int, np.ndarray] = {}
        self.work = work
        self._sweep(lowest)

    def _sweep(self, lowest: int) -> None:
        """Reduce positions 0..S-1 (the tail), in blocks inside one position, keeping a copy of the waiting
        rows left at each position boundary at or above ``lowest``."""
        work, starts = self.work, self.starts
        for level in range(self.order_up_to):
            first_of_level = int(starts[level])
            last = (int(starts[level - 1]) if level else work.shape[1]) - 1
            while last >= first_of_level:
                first = max(first_of_level, last - GTH_BLOCK + 1)
                if first <= GTH_BLOCK:  # few states before the block: one rank-one update per state costs less
                    _reduce_ordering_block_by_steps(work, first, last)
                else:
                    _reduce_ordering_block(work, first, last)
                last = first - 1
            if level >= lowest:
                self.snapshots[level] = work[0, :first_of_level, :first_of_level].copy()

    def measures(self, reorder_level: int, demand: StepLaw, tables: DemandTables) -> PolicyMeasures:
        """Policy (reorder_level, S): GTH on the waiting rows above s, then back through the sweep."""
        cut = int(self.starts[reorder_level])  # states 0..cut-1: positions above s
        upper = _steady_state(self.snapshots[reorder_level])
        if cut < self.work.shape[1]:
            carried = upper @ self.work[0, :cut, cut:]  # into each reduced state from the positions above s
            steps = -np.triu(self.work[1, cut:, cut:], 1).T  # between reduced states: pi_E (I - U) = carried
            lower = solve_triangular(steps, carried, lower=True, unit_diagonal=True, check_finite=False)
            law = np.concatenate([upper, lower])
        else:
            law = upper
        law = law / math.fsum(law)
        ordering = self.position <= reorder_level
        return _measures(law, self.on_hand, ordering, self.order_up_to, demand, tables)


def _reduce_ordering_block_by_steps(work: np.ndarray, first: int, last: int) -> None:
    """Reduce states last..first with their ordering rows (``work[1]``) as ``gth_steady_state`` does,
    updating both versions of the block's columns and of the rest (the block's own rows: ordering only)."""
    for k in range(last, first - 1, -1):
        pivot = math.fsum(work[1, k, :k])  # leaving k for the states left: never 1 - p_kk
        if not pivot > 0:
            raise ValueError("the shared reduction met a state that never climbs back")
        work[:, :k, k] /= pivot
        if k > first:
            work[1, first:k, :k] += np.outer(work[1, first:k, k], work[1, k, :k])
            work[:, :first, first:k] += work[:, :first, k, None] * work[1, k, None, first:k]
    span = slice(first, last + 1)
    work[:, :first, :first] += np.matmul(work[:, :first, span], work[1, span, :first])


def _reduce_ordering_block(work: np.ndarray, first: int, last: int) -> None:
    """Reduce states last..first with their ordering rows (``work[1]``), updating both versions of the rest.

    As ``_reduce_block_by_products`` (walkmath/reviewstack.py) for one matrix: only the block's own ordering
    rows are reduced state by state (each pivot the in-block sum plus the running sum before the block);
    the block's rows before it become (I - upper)^-1 times their first values, the other rows' block
    columns, in both versions, their first values times V (the same V: the reduced rows are the ordering
    ones), and both versions of the rest take the product.
    """
    span = slice(first, last + 1)
    width = last - first + 1
    inner = work[1, span, span].copy()
    outside = work[1, span, :first].sum(axis=1)
    pivots = np.empty(width)
    for k in range(width - 1, -1, -1):
        pivot = outside[k] + math.fsum(inner[k, :k])  # leaving k for the states left: never 1 - p_kk
        if not pivot > 0:
            raise ValueError("the shared reduction met a state that never climbs back")
        pivots[k] = pivot
        inner[:k, k] /= pivot
        inner[:k, :k] += np.outer(inner[:k, k], inner[k, :k])
        outside[:k] += inner[:k, k] * outside[k]
    rows = np.zeros((width, width))
    cols = np.zeros((width, width))
    for k in range(width - 1, -1, -1):
        rows[k, k] = 1.0
        rows[k, :] += inner[k, k + 1 :] @ rows[k + 1 :, :]
        cols[k, k] = 1.0
        cols[:, k] += cols[:, k + 1 :] @ inner[k + 1 :, k]
        cols[:, k] /= pivots[k]
    row_part = rows @ work[1, span, :first]
    column_part = np.matmul(work[:, :first, span], cols)
    work[1, span, span] = inner
    work[:, :first, span] = column_part
    work[:, :first, :first] += np.matmul(column_part, row_part)


def _steady_state(censored: np.ndarray) -> np.ndarray:
    """GTH on a censored chain, with a state of its one closed class kept to the last (GTH's state 0).

    The censored chain may hold states its policy never reaches; ``closed_class`` raises unless there is
    exactly one closed class.
    """
    root = int(closed_class(sparse.csr_matrix(censored))[0])
    turn = np.arange(censored.shape[0])
    turn[[0, root]] = turn[[root, 0]]
    law = np.empty(censored.shape[0])
    law[turn] = stacked_gth(censored[np.ix_(turn, turn)][None])[0]
    return law


def sweep_work_units(order_up_to: int, reorder_levels, lead_time: int, jumps: int) -> int:
    """Units of one ``LevelSweep`` and the chains read off it (same scale as ``stack_work``).

    The sweep: the moves of both versions, then every state below S reduced with both versions of the
    rows left, 2 n^3 + 4,000 n^2 as ``gth_work`` prices one chain twice, and its numpy calls; each chain:
    GTH on the states above its reorder level, the triangular solve (n^2) and its calls.
    """
    states = pipeline_count(order_up_to, 1, lead_time)
    units = _base_units(states, jumps)
    return units + sum(_chain_units(states, pipeline_count(level, 1, lead_time)) for level in reorder_levels)


# -- choosing, per order-up-to level, which chains the shared reduction serves -------------------------------


def plan(demand: StepLaw, policies: list[tuple[int, int]], lead_time: int) -> tuple[dict[int, int], list[int]]:
    """For each S, the lowest reorder level served by a ``LevelSweep`` (if any), and the policies left to
    the stacked one-by-one path, by price: per S, the cheaper of the sweep (its base, then each chain
    above the cut) and the stacked chains, over every cut. Only with demand 0 possible in a period (then
    every position climbs back to S, so the sweep meets no zero pivot)."""
    jumps = demand.probs.size
    by_level: dict[int, list[int]] = {}
    for index, (_, big_s) in enumerate(policies):
        by_level.setdefault(big_s, []).append(index)
    cuts: dict[int, int] = {}
    rest: list[int] = []
    for big_s, members in by_level.items():
        members = sorted(members, key=lambda i: -policies[i][0])  # highest reorder level (smallest gap) first
        best, cut = None, None
        if demand.lowest == 0 and len(members) > 1:
            states = pipeline_count(big_s, 1, lead_time)
            stacked = [_stack_units(policies[i], lead_time, jumps) for i in members]
            total_stacked = sum(stacked)
            best = total_stacked
            spent = _base_units(states, jumps)
            left = total_stacked
            for k, i in enumerate(members):
                spent += _chain_units(states, pipeline_count(policies[i][0], 1, lead_time))
                left -= stacked[k]
                if spent + left < best:
                    best, cut = spent + left, policies[i][0]
        if cut is None:
            rest.extend(members)
        else:
            cuts[big_s] = cut
            rest.extend(i for i in members if policies[i][0] < cut)
    return cuts, sorted(rest)


def lost_policy_measures(demand: StepLaw, policies, lead_time: int) -> list[PolicyMeasures]:
    """Long-run measures of lost-sales (s, S) policies with a lead time of at least 1, in the order given.

    As ``lost_sales_measures`` (walkmath/reviewstack.py), with the chains of one S that ``plan`` gives to
    a ``LevelSweep`` read off it instead; equal to rounding. A sweep or a chain it cannot serve (more
    than one closed class above the cut) goes to the stacked path, priced and checked again first.
    """
    policies = [(int(s), int(big_s)) for s, big_s in policies]
    cuts, rest = plan(demand, policies, lead_time)
    fallback: list[int] = []
    results: list[PolicyMeasures | None] = [None] * len(policies)
    tables = DemandTables(demand, max((big_s for _, big_s in policies), default=1))
    for big_s, cut in cuts.items():
        members = [i for i, (s, level) in enumerate(policies) if level == big_s and s >= cut]
        try:
            sweep = LevelSweep(demand, big_s, cut, lead_time)
        except ValueError:
            fallback.extend(members)
            continue
        for i in members:
            try:
                results[i] = sweep.measures(policies[i][0], demand, tables)
            except ValueError:
                fallback.append(i)
    if fallback:
        stack_work("steady_state", demand, [policies[i] for i in fallback], lead_time).check()
    rest = sorted([*rest, *fallback])
    for i, row in zip(rest, lost_sales_measures(demand, [policies[i] for i in rest], lead_time), strict=True):
        results[i] = row
    return results


def lost_policy_work(method: str, demand: StepLaw, policies, lead_time: int, knob: str) -> Work:
    """Price of ``lost_policy_measures``: the sweeps ``plan`` chooses and the stacked rest, before any runs."""
    policies = [(int(s), int(big_s)) for s, big_s in policies]
    cuts, rest = plan(demand, policies, lead_time)
    work = stack_work(method, demand, [policies[i] for i in rest], lead_time, knob)
    jumps = demand.probs.size
    units = 0
    for big_s, cut in cuts.items():
        levels = [s for s, level in policies if level == big_s and s >= cut]
        units += sweep_work_units(big_s, levels, lead_time, jumps)
    largest = max([work.levels, *(pipeline_count(big_s, 1, lead_time) for big_s in cuts)])
    return replace(work, levels=largest, dense=work.dense + units)


def _stack_units(policy: tuple[int, int], lead_time: int, jumps: int) -> int:
    s, big_s = policy
    states = pipeline_count(big_s, big_s - s, lead_time)
    padded = size_class(states)
    return states * jumps * MOVE_UNITS + CALLS_PER_POLICY * CALL_UNITS + padded**3 + 2_000 * padded**2


def _base_units(states: int, jumps: int) -> int:
    return (
        2 * states * jumps * MOVE_UNITS
        + 2 * states**3
        + 4_000 * states**2
        + SWEEP_CALLS_PER_STATE * CALL_UNITS * states
    )


def _chain_units(states: int, reduced: int) -> int:
    upper = states - reduced
    return upper**3 + 2_000 * upper**2 + 12 * CALL_UNITS * upper + 2 * states**2 + CALLS_PER_CHAIN * CALL_UNITS
