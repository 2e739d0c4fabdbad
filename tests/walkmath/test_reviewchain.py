"""GTH state reduction and the pipeline chain (walkmath/reviewchain.py)."""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest
from scipy import sparse

from walkmath.reviewchain import closed_class, gth_steady_state


def test_gth_keeps_relative_accuracy_where_one_minus_p_kk_rounds_to_zero():
    # Birth-death chain: pi(k + 1) / pi(k) = up(k) / down(k + 1) (detailed balance, product form),
    # evaluated in exact fractions. The first row's stay probability 1 - 1e-20 is 1.0 in floating point,
    # so any method reading 1 - p_kk loses the leaving rate entirely; GTH never reads the diagonal.
    up = [Fraction(1, 10**20), Fraction(1, 4)]
    down = [Fraction(1, 2), Fraction(1, 1000)]
    matrix = np.array(
        [
            [1.0 - 1e-20, 1e-20, 0.0],
            [0.5, 0.25, 0.25],
            [0.0, 1e-3, 1.0 - 1e-3],
        ]
    )
    weights = [Fraction(1)]
    for k in range(2):
        weights.append(weights[-1] * up[k] / down[k])
    exact = [w / sum(weights) for w in weights]
    np.testing.assert_allclose(gth_steady_state(matrix), [float(p) for p in exact], rtol=1e-14)


def test_gth_matches_a_dense_linear_solve_on_a_well_conditioned_chain():
    # numpy.linalg least squares on pi (P - I) = 0, sum pi = 1, as a general-purpose reference.
    rng = np.random.default_rng(3)
    matrix = rng.random((7, 7))
    matrix /= matrix.sum(axis=1, keepdims=True)
    system = np.vstack([(matrix - np.eye(7)).T, np.ones(7)])
    reference, *_ = np.linalg.lstsq(system, np.append(np.zeros(7), 1.0), rcond=None)
    np.testing.assert_allclose(gth_steady_state(matrix), reference, rtol=1e-12)


def test_closed_class_is_found_and_two_classes_are_refused():
    # 0 -> 1 <-> 2 (0 transient); then 3 absorbing as a second closed class.
    moves = sparse.csr_matrix(np.array([[0, 1, 0], [0, 0, 1], [0, 1, 0]], dtype=float))
    assert closed_class(moves).tolist() == [1, 2]
    two = sparse.csr_matrix(np.array([[0, 0.5, 0.5], [0, 1, 0], [0, 0, 1]], dtype=float))
    with pytest.raises(ValueError, match="2 closed classes"):
        closed_class(two)


def test_blocked_gth_matches_a_dense_linear_solve_across_several_blocks():
    # 300 states: four blocks of 64 and a remainder, so the block products are exercised. numpy.linalg
    # least squares on pi (P - I) = 0, sum pi = 1 as the reference (a well-conditioned sparse-ish chain).
    rng = np.random.default_rng(11)
    size = 300
    matrix = rng.random((size, size)) * (rng.random((size, size)) < 0.05)
    matrix[np.arange(size), (np.arange(size) + 1) % size] += 0.2  # a cycle through every state: irreducible
    matrix /= matrix.sum(axis=1, keepdims=True)
    system = np.vstack([(matrix - np.eye(size)).T, np.ones(size)])
    reference, *_ = np.linalg.lstsq(system, np.append(np.zeros(size), 1.0), rcond=None)
    np.testing.assert_allclose(gth_steady_state(matrix), reference, rtol=1e-10)
    np.testing.assert_allclose(gth_steady_state(matrix, block=7), gth_steady_state(matrix, block=300), rtol=1e-12)
