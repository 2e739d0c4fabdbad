"""The read service: changes merged, the cost checked once before any engine call, then one computation."""

import pytest

import walkmath as wm
from planner.kinds import Part
from planner.reading import scenario_params, scenario_reading
from walkmath import ComputeTooLarge

pytestmark = pytest.mark.django_db

SWEEPS = ("outlook", "risk_by_start", "smallest_capacity", "mean_periods_to_stockout", "_sweep")


@pytest.fixture
def no_sweeps(monkeypatch):
    """Any engine sweep fails the test: a refusal must come before all of them."""

    def never(*args, **kwargs):
        raise AssertionError("an engine sweep ran before the cost check refused the request")

    for name in SWEEPS:
        monkeypatch.setattr(wm.BandedWalk, name, never)


def test_refusal_comes_before_any_sweep(scenario, settings, no_sweeps):
    settings.PLANNER_COMPUTE_CAP = 1_000_000
    with pytest.raises(ComputeTooLarge) as caught:
        scenario_reading(scenario=scenario, changes={"horizon": 300, "no_capacity": True})
    message = str(caught.value)
    assert "too large to work out in one request" in message
    assert "set a capacity" in message and "shorten the horizon (now 300 days)" in message


def test_the_cap_is_priced_with_the_engine_cost_model(scenario, settings):
    params = scenario.params
    walk = params.walk()
    # The page's required calls (one sweep keeping every period, the backward sweep), priced by walkmath's
    # own cost model (walk.cost, level·period·jump units).
    required = sum(walk.cost(params.horizon, method).units for method in ("level_probs", "risk_by_start"))
    settings.PLANNER_COMPUTE_CAP = required
    reading = scenario_reading(scenario=scenario)
    assert reading.result.capacity_answer is None and reading.result.left_out  # the optional parts did not fit
    settings.PLANNER_COMPUTE_CAP = required - 1
    with pytest.raises(ComputeTooLarge):
        scenario_reading(scenario=scenario)


def test_stock_table_memory_is_capped_before_any_sweep(scenario, no_sweeps):
    # No capacity, backorders and ten years: the stock-by-day table alone would be too large to keep.
    with pytest.raises(ComputeTooLarge, match="stock-by-day table would hold"):
        scenario_reading(scenario=scenario, changes={"horizon": 3650, "no_capacity": True, "up": 0.5, "down": 0.5})


def test_changes_are_merged_by_the_service_and_described(scenario):
    params = scenario_params(scenario=scenario, changes={"start": 2, "high": 20})
    assert (params.start, params.high, params.horizon) == (2, 20, 12)
    reading = scenario_reading(scenario=scenario, changes={"start": 2})
    assert reading.is_whatif and reading.changes == ("start stock 4 → 2 units",)
    same = scenario_reading(scenario=scenario, changes={"start": 4})
    assert not same.is_whatif
    with pytest.raises(ValueError, match="start stock must be a whole number from 0 to 8"):
        scenario_params(scenario=scenario, changes={"start": 9})


def test_part_defaults_to_required():
    assert Part("outlook", 10).required


def test_searches_share_what_is_left_and_the_total_stays_within_the_cap(owner, settings):
    from planner.kinds import get_kind
    from planner.kinds.stock_plan.params import CountLaw, StockPlanParams
    from planner.models import Scenario
    from planner.reading import _allowed

    params = StockPlanParams(
        start=100,
        horizon=120,
        high=200,
        below="lost",
        step_method="net",
        arrivals=CountLaw("poisson", mean=40),
        demand=CountLaw("poisson", mean=40),
    )
    job = get_kind("stock_plan").prepare(params, 0.01, 0.05)
    search = next(part for part in job.parts() if part.name == "smallest_capacity")
    assert search.units > settings.PLANNER_COMPUTE_CAP  # its bound alone would not fit
    allowed = _allowed(job)
    assert sum(allowed.values()) <= settings.PLANNER_COMPUTE_CAP
    assert 0 < allowed["smallest_capacity"] < search.units
    scenario = Scenario(owner=owner, kind="stock_plan", parameters=params.to_json(), stockout_target=0.01)
    answer = scenario_reading(scenario=scenario).result.capacity_answer
    # The search settles within its share, with the same answer as the engine's search under its own cap.
    assert answer.value is not None
    walk = params.walk()
    assert walk.smallest_capacity(120, 0.05) == answer.value
