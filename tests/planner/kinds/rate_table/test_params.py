"""Rate-table parameters: JSON round trip, the rules of the table (each naming its row), other inputs named."""

import math

import pytest

from planner.kinds.rate_table.params import RateTableParams, rate_text, table_problems

BASE = {
    "failure_rates": (0.006, 0.006, 0.006, 0.004, 0.0),
    "repair_rates": (0.0, 0.08, 0.05, 0.04, 0.04),
    "shortage_at": 2,
    "mission": 168.0,
}


@pytest.mark.parametrize(
    "values",
    [{}, {"time_unit": "day", "start_failed": 1, "availability_target": 0.99}, {"shortage_at": 4, "start_failed": 3}],
)
def test_json_round_trip(values):
    params = RateTableParams(**BASE | values)
    data = params.to_json()
    assert data["failure_rates"] == list(BASE["failure_rates"])  # plain lists in the model's JSON
    assert RateTableParams.from_json(data) == params


def test_whole_numbers_in_the_table_are_read_as_rates():
    params = RateTableParams(**BASE | {"failure_rates": [2, 2, 1, 1, 0], "repair_rates": [0, 3, 3, 3, 3]})
    assert params.failure_rates == (2.0, 2.0, 1.0, 1.0, 0.0) and params.top == 4


def test_scaling_multiplies_every_rate_of_its_column():
    params = RateTableParams(**BASE).scaled(failure=2.0, repair=0.5)
    assert params.failure_rates == (0.012, 0.012, 0.012, 0.008, 0.0)
    assert params.repair_rates == (0.0, 0.04, 0.025, 0.02, 0.02)
    with pytest.raises(ValueError, match="repair speed must be a finite number above 0"):
        RateTableParams(**BASE).scaled(repair=0.0)
    assert RateTableParams(**BASE).pool(repair_speed=2.0).repair_rates.tolist() == [0.0, 0.16, 0.1, 0.08, 0.08]


def test_rates_are_written_back_as_typed_and_read_back_to_the_same_float():
    rates = (0.006, 0.0, 2.0, 1e-7, 0.1 + 0.2, 1 / 3)
    assert [rate_text(rate) for rate in rates[:4]] == ["0.006", "0", "2", "1e-07"]
    assert all(float(rate_text(rate)) == rate for rate in rates)


@pytest.mark.parametrize(
    ("failure", "repair", "words"),
    [
        ((1.0, 1.0, 0.0), (0.0, 1.0, -1.0), "the row for 2 failed: the repair rate must be a number from 0 to 1e+09"),
        ((1.0, math.nan, 0.0), (0.0, 1.0, 1.0), "the row for 1 failed: the failure rate must be a number from 0"),
        ((1.0, 0.0, 0.0), (0.0, 1.0, 1.0), "the row for 1 failed: the failure rate must be above 0"),
        ((1.0, 1.0, 1.0), (0.0, 1.0, 1.0), "the row for 2 failed: the last row is every unit failed"),
        ((1.0, 1.0, 0.0), (2.0, 1.0, 1.0), "the row for 0 failed: with none failed nothing is repaired"),
        ((1.0, 1.0, 0.0), (0.0, 0.0, 1.0), "the row for 1 failed: the repair rate must be above 0"),
        ((0.0,), (0.0,), "must have from 2 to 1,001 rows"),
        ((1.0, 0.0), (0.0, 1e10), "the row for 1 failed: the repair rate must be a number from 0 to 1e+09"),
    ],
)
def test_each_rule_of_the_table_names_its_row(failure, repair, words):
    assert any(words in problem for problem in table_problems(failure, repair))
    with pytest.raises(ValueError, match=f"^rate table.*{words.replace('+', '[+]')}"):
        RateTableParams(**BASE | {"failure_rates": failure, "repair_rates": repair, "shortage_at": 1})


def test_every_broken_rule_is_listed_at_once():
    problems = table_problems((0.0, 1.0, 1.0), (1.0, 0.0, -2.0))
    assert [problem.split(":")[0] for problem in problems] == [
        "rate table, the row for 0 failed",
        "rate table, the row for 0 failed",
        "rate table, the row for 1 failed",
        "rate table, the row for 2 failed",
    ]


@pytest.mark.parametrize(
    ("changes", "message"),
    [
        ({"shortage_at": 0}, "shortage level must be a whole number from 1 to 4"),
        ({"shortage_at": 5}, "shortage level must be a whole number from 1 to 4"),
        ({"start_failed": 2}, "units failed at the start must be a whole number from 0 to 1"),
        ({"start_failed": -1}, "units failed at the start must be a whole number from 0 to 1"),
        ({"mission": 0.0}, "mission length must be above 0 and at most 10,000,000 hours"),
        ({"mission": 2e7, "time_unit": "day"}, "mission length must be above 0 and at most 10,000,000 days"),
        ({"mission": math.inf}, r"mission length \(hours\) must be a finite number"),
        ({"availability_target": 1.0}, "availability target must be a probability strictly between 0 and 1"),
        ({"time_unit": "fortnight"}, "time unit must be one of"),
        ({"failure_rates": "fast"}, "rate table must be a list of rates"),
    ],
)
def test_bad_parameters_name_the_input(changes, message):
    with pytest.raises(ValueError, match=message):
        RateTableParams(**BASE | changes)


def test_saved_json_with_unknown_or_missing_keys_is_refused():
    with pytest.raises(ValueError, match="unknown keys: colour"):
        RateTableParams.from_json(BASE | {"colour": "red"})
    with pytest.raises(ValueError, match="must include repair_rates"):
        RateTableParams.from_json({k: v for k, v in BASE.items() if k != "repair_rates"})
    with pytest.raises(ValueError, match="must be an object"):
        RateTableParams.from_json([1, 2])
