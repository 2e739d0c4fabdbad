"""The one number formatter: a table of values and the strings analysts see (our own house style)."""

import math

import pytest

from planner import formatting
from planner.templatetags import planner_format
from walkmath import MeanTime


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        (None, "—"),
        (0, "0 %"),
        (1, "100 %"),
        (0.5, "50 %"),
        (0.05, "5 %"),
        (0.0231, "2.31 %"),
        (0.001, "0.1 %"),
        (0.0009999, "0.1 %"),  # rounds to 0.1 % at three digits, so it is written as a percentage
        (0.000999, "9.99 × 10⁻⁴"),
        (6.63e-12, "6.63 × 10⁻¹²"),
        (3.2e-9, "3.2 × 10⁻⁹"),
        (1e-300, "1 × 10⁻³⁰⁰"),
        (0.99996, "> 99.9 %"),  # never '100 %' for an event that is not certain
        (0.9994, "99.9 %"),
    ],
)
def test_probability(value, expected):
    assert formatting.probability(value) == expected
    assert planner_format.probability(value) == expected


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        (0, "0"),
        (12, "12"),
        (0.5, "0.5"),
        (3.4567, "3.46"),
        (-3.2, "-3.2"),
        (100, "100"),
        (999.6, "1,000"),
        (1100.4, "1,100"),
        (1234567.8, "1,234,568"),
        (0.00123, "0.00123"),
        (2.5e-5, "2.5 × 10⁻⁵"),
        (9.532e12, "9.53 × 10¹²"),
        (None, "—"),
    ],
)
def test_number(value, expected):
    assert formatting.number(value) == expected


@pytest.mark.parametrize(
    ("value", "period", "expected"),
    [
        (1, "day", "1 day"),
        (56, "day", "56 days (8 weeks)"),
        (30, "day", "30 days"),
        (8, "week", "8 weeks"),
        (3, "shift", "3 shifts"),
        (1, "month", "1 month"),
        (9.532e12, "day", "9.53 × 10¹² days"),
        (MeanTime(1e15, at_least=True), "day", "more than 1 × 10¹⁵ days"),
        (MeanTime(9.532e12), "day", "9.53 × 10¹² days"),
        (math.inf, "week", "no finite average"),
        (None, "day", "—"),
    ],
)
def test_periods(value, period, expected):
    assert formatting.periods(value, period) == expected


@pytest.mark.parametrize(
    ("value", "expected"),
    [(3.4, "3.4 units per day"), (-0.1234, "−0.123 units per day"), (0, "0 units per day")],
)
def test_rate(value, expected):
    assert formatting.rate(value, "day") == expected


def test_units_and_percent_input():
    assert formatting.units(1100.4) == "1,100 units"
    assert formatting.units(None) == "—"
    assert formatting.percent_input(0.05) == "5"
    assert formatting.percent_input(1e-6) == "0.0001"


def test_probability_with_more_digits_tells_close_values_apart():
    probability = formatting.probability
    # 0.97998 and 0.98 read the same with three digits; five tell them apart (formatting rule of this project).
    assert probability(0.97998) == probability(0.98) == "98 %"
    assert probability(0.97998, 5) == "97.998 %" and probability(0.98, 5) == "98 %"
    assert probability(0.99991) == "> 99.9 %" and probability(0.99991, 5) == "99.991 %"
    assert probability(0.999999, 5) == "> 99.999 %"
    assert probability(2.5e-7, 4) == "2.5 × 10⁻⁷"


def test_probabilities_write_each_value_as_probability_does():
    # The whole-array formatter against the one-value formatter (the reference), across every class:
    # zero, 100 %, near certain, percent, the percent floor's rounding edge and powers of ten to 5e-324.
    import numpy as np

    from planner.formatting import probabilities, probability

    rng = np.random.default_rng(7)
    edges = [0.0, 1.0, 1.5, 0.9999, 0.99995, 0.999949999, 0.00099949, 0.0009995, 0.001, 0.00101, 0.00099, 5e-324]
    values = np.concatenate([10 ** rng.uniform(-320, 0, 2000), rng.uniform(0, 1, 2000), edges])
    for digits in (3, 5):
        assert probabilities(values, digits) == [probability(value, digits) for value in values.tolist()]
    assert probabilities([]) == []
