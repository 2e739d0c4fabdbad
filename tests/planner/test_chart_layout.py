"""Chart helpers: colour cells rounded to significant digits, checked against Python's own decimal formatting."""

import numpy as np
import pytest

from planner.chart_layout import rounded


@pytest.mark.parametrize(
    "value, expected",
    [
        (0.123456789, 0.1235),
        (0.99999, 1.0),
        (1.0, 1.0),
        (3.14159265e-9, 3.142e-9),
        (2.5e-300, 2.5e-300),
        (0.0, 0.0),
        (1e-310, 1e-310),  # below 1e-290: kept as it is
    ],
)
def test_rounded_keeps_four_significant_digits(value, expected):
    assert rounded([value]) == [expected]


def test_rounded_matches_decimal_formatting_and_prints_short():
    # reference: Python's "%.4g" formatting, read back as a float
    values = np.random.default_rng(7).random(5_000) ** 6
    out = rounded(values)
    assert out == [float(f"{value:.4g}") for value in values]
    assert all(len(repr(value)) <= 12 for value in out if value >= 1e-19)


def test_rounded_keeps_the_shape_of_a_table():
    table = np.array([[0.5, 0.25], [0.125, 0.0625]])
    assert rounded(table) == [[0.5, 0.25], [0.125, 0.0625]]
