"""A spares pool from a repair log's fit (planner/kinds/spares_pool/from_fit.py): the fitted rates become the
MTTF and mean repair time exactly (1 / rate, IEEE division checked both ways), and every refusal names why.
A stock history's fit makes no spares pool, and a repair log's fit makes no stock or reorder plan."""

import pytest

from planner.history.fit import fit_history, fitted_laws
from planner.kinds import get_kind
from planner.repairlog.fit import FittedRates
from tests.planner.history.conftest import movements_csv, parse


def rates(**changes) -> FittedRates:
    values = {
        "source": "Oven igniters", "time_unit": "day", "units": 6, "spares": 2, "failure_rate": 29 / 4380,
        "repair_rate": 29 / 134, "failures": 29, "repairs": 29, "span": 730.0, "summary": "29 failures",
    }  # fmt: skip
    return FittedRates(**(values | changes))


def test_a_pool_holds_the_fitted_rates():
    params = get_kind("spares_pool").params_from_fit(rates(), start=0, high=None, horizon=28)
    assert (params.units, params.spares, params.crews, params.standby, params.time_unit) == (6, 2, 8, "cold", "day")
    assert params.failure == 4380 / 29 and params.repair == 134 / 29 and params.mission == 28.0
    assert params.failure_rate == pytest.approx(29 / 4380, rel=1e-15)
    assert "One repair crew per unit (8)" in get_kind("spares_pool").fit_note(rates())


@pytest.mark.parametrize(
    ("changes", "words"),
    [
        ({"failures": 0, "failure_rate": 0.0}, "at least one failure and one completed repair"),
        ({"repairs": 0, "repair_rate": 0.0}, "at least one failure and one completed repair"),
        ({"failure_rate": 1e-12}, "A spares pool cannot hold this fit as it stands: MTBF must be a number from"),
    ],
)
def test_refusals_name_why(changes, words):
    with pytest.raises(ValueError, match=words):
        get_kind("spares_pool").params_from_fit(rates(**changes), start=0, high=None, horizon=28)


def test_each_record_makes_only_its_own_kinds():
    history = fitted_laws(fit_history(parse(movements_csv())), source="Rye flour")
    assert get_kind("spares_pool").params_from_fit(history, start=10, high=None, horizon=7) is None
    for kind in ("stock_plan", "reorder_plan"):
        assert get_kind(kind).params_from_fit(rates(), start=0, high=None, horizon=28) is None
