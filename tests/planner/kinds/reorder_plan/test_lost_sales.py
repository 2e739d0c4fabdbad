"""Lost sales on the reorder plan: parameters (old saved plans still load), form, job, page, what-if, refusal.

References: the literal review chain solved in exact fractions (tests/walkmath/exact.py, independent of the
engine); the lead-time-0 fact that lost sales and backorders differ only in the shortage accounting
(common practice).
"""

from fractions import Fraction

import pytest
from django.urls import reverse

import walkmath as wm
from planner.count_law import CountLaw
from planner.kinds.reorder_plan.compute import ReorderJob
from planner.kinds.reorder_plan.forms import ReorderPlanForm
from planner.kinds.reorder_plan.params import ReorderPlanParams
from planner.kinds.reorder_plan.whatif import apply_changes, describe_changes
from planner.models import Scenario
from planner.reading import _allowed
from tests.planner.kinds.reorder_plan.test_forms import GOOD, NEW
from tests.walkmath.exact import periodic_review_long_run

# Delivery-van tyres asked for in a week at the co-operative's yard: none, one, or a set of two.
TYRES = {0: Fraction(3, 5), 1: Fraction(1, 5), 2: Fraction(1, 5)}


def tyres_plan(**changes) -> ReorderPlanParams:
    values = dict(
        demand=CountLaw("table", table=tuple((k, float(p)) for k, p in TYRES.items())),
        target=0.9,
        lead_time=2,
        period="week",
        unit="tyres",
        unmet="lost",
    )
    return ReorderPlanParams(**(values | changes))


def run(params):
    job = ReorderJob(params)
    return job.run(_allowed(job))


# -- parameters --------------------------------------------------------------------------------------------


def test_a_plan_saved_before_the_choice_loads_with_backorders():
    # JSON as plans were saved before "when the shelf is empty" existed: no "unmet" key.
    old = {
        "period": "day",
        "unit": "igniters",
        "demand": {"family": "negative_binomial", "mean": 0.3, "variance": 1.5},
        "review_period": 0,
        "measure": "cycle",
        "target": 0.99,
        "lead_time": 4,
        "order_quantity": 10,
    }
    params = ReorderPlanParams.from_json(old)
    assert params.unmet == "backorder"
    assert params.to_json() == old  # and saves back unchanged
    lost = tyres_plan()
    assert lost.to_json()["unmet"] == "lost"
    assert ReorderPlanParams.from_json(lost.to_json()) == lost


@pytest.mark.parametrize(
    "changes",
    [
        {"lead_time": None, "lead_time_table": ((1, 0.5), (3, 0.5))},
        {"lead_time": 3, "review_period": 2},  # not a whole number of review periods
    ],
)
def test_lost_sales_need_a_lead_time_the_policy_can_follow(changes):
    with pytest.raises(ValueError, match="when the shelf is empty and the sale is lost, the plan needs a fixed"):
        tyres_plan(**changes)
    with pytest.raises(ValueError, match="when the shelf is empty must be one of 'backorder', 'lost'"):
        tyres_plan(unmet="spilt")


def test_form_takes_the_choice_and_names_the_field_when_it_cannot_be_worked_out():
    form = ReorderPlanForm(GOOD | {"unmet": "lost", "order_quantity": ""})
    assert form.is_valid(), form.errors
    assert form.cleaned_data["params"].unmet == "lost"
    table = ReorderPlanForm(
        GOOD | {"unmet": "lost", "lead_time_method": "table", "lead_time_table": "3: 0.5, 6: 0.5", "lead_time": ""}
    )
    assert not table.is_valid()
    assert "a fixed lead time" in " ".join(table.errors["unmet"])
    plain = ReorderPlanForm(GOOD)  # the choice is optional: left out, customers wait (as before it was asked)
    assert plain.is_valid(), plain.errors
    assert plain.cleaned_data["params"].unmet == "backorder"


# -- the job against exact fractions -----------------------------------------------------------------------


@pytest.mark.parametrize("lead_time", [1, 2])
@pytest.mark.parametrize("measure, target", [("cycle", 0.9), ("fill", 0.97)])
def test_recommended_level_meets_the_target_and_one_less_does_not(lead_time, measure, target):
    extra = {"order_quantity": 1} if measure == "fill" else {}
    result = run(tyres_plan(lead_time=lead_time, measure=measure, target=target, **extra))
    policy = result.policy
    level = policy.order_up_to

    def service(big_s):
        exact = periodic_review_long_run(TYRES, big_s - 1, big_s, lead_time, "lost")
        return exact, (1 - exact["stockout"] if measure == "cycle" else exact["fill_rate"])

    exact, achieved = service(level)
    assert achieved >= Fraction(target) and (level == 1 or service(level - 1)[1] < Fraction(target))
    assert policy.measures.fill_rate == pytest.approx(float(exact["fill_rate"]), rel=1e-12)
    assert policy.measures.mean_on_hand == pytest.approx(float(exact["on_hand"]), rel=1e-12)
    assert policy.measures.mean_short == pytest.approx(float(exact["short"]), rel=1e-12)
    assert policy.measures.mean_backorders == 0
    stock = policy.stock
    for units, p in exact["end_law"].items():
        assert stock.prob(units) == pytest.approx(float(p), rel=1e-12)
    # the normal rule's level is on the curve, so the comparison in the recommendation is exact there
    assert policy.index_of(result.normal_order_up_to) is not None or result.normal_order_up_to < 1
    assert "With sales lost when the shelf is empty, each week, order the stock back up to" in result.recommendation


def test_lead_time_zero_lost_and_backordered_plans_differ_only_in_the_shortage_accounting():
    # Common practice: with deliveries at once the order up to S fills any backorder at the next count.
    lost = run(tyres_plan(lead_time=0, review_period=1))
    back = run(tyres_plan(lead_time=0, review_period=1, unmet="backorder"))
    assert lost.policy.order_up_to == back.policy.order_up_to
    assert lost.policy.measures.stockout_probability == pytest.approx(
        back.policy.measures.stockout_probability, rel=1e-12
    )
    for name in ("fill_rate", "mean_short", "mean_on_hand", "orders_per_period"):
        assert getattr(lost.policy.measures, name) == pytest.approx(getattr(back.policy.measures, name), rel=1e-12)
    assert lost.policy.measures.mean_backorders == 0


def test_too_large_a_lost_sales_plan_is_refused_with_advice_before_any_work(monkeypatch):
    monkeypatch.setattr(wm.PeriodicReview, "measures", None)  # no policy is solved
    params = ReorderPlanParams(demand=CountLaw("poisson", mean=6.0), target=0.99, lead_time=6, unmet="lost")
    with pytest.raises(wm.ComputeTooLarge) as refused:
        _allowed(ReorderJob(params))
    message = str(refused.value)
    assert "with lost sales every order on its way has to be followed" in message
    assert "shorten the lead time" in message and "count in larger units" in message


# -- the page and the what-if --------------------------------------------------------------------------------


@pytest.mark.django_db
def test_page_charts_and_csv_of_a_lost_sales_plan(client, owner):
    client.force_login(owner)
    data = GOOD | {"unmet": "lost", "order_quantity": "", "demand_mean": "0.3", "lead_time": "2"}
    response = client.post(NEW, data)
    scenario = Scenario.objects.get()
    assert response.status_code == 302 and scenario.parameters["unmet"] == "lost"
    page = client.get(scenario.get_absolute_url()).content.decode()
    assert "unmet demand is lost" in page and "Demand the shelf cannot meet is lost" in page
    assert "With sales lost when the shelf is empty, each day, order the stock back up to" in page
    rows = client.get(reverse("scenario_csv", kwargs={"pk": scenario.pk, "table": "long-run-stock"}))
    text = rows.content.decode()
    assert "stock on hand at each count before ordering" in text and "backordered" not in text
    assert scenario.headline_risk <= 0.01  # the policy's own shortfall at its level, against the 99 % target


@pytest.mark.django_db
def test_whatif_switches_to_lost_sales_and_refuses_in_the_trade_s_words(client, owner):
    client.force_login(owner)
    client.post(NEW, GOOD | {"order_quantity": "", "demand_mean": "0.3", "lead_time": "2"})
    scenario = Scenario.objects.get()
    url = reverse("scenario_outlook_json", kwargs={"pk": scenario.pk})
    reply = client.get(url, {"unmet": "lost"})
    assert reply.status_code == 200
    assert reply.json()["changes"] == ["when the shelf is empty: customers wait → the sale is lost"]
    assert "With sales lost when the shelf is empty" in reply.json()["headline_html"]
    big = client.get(url, {"unmet": "lost", "lead_time": "60", "demand_mean": "40"})
    assert big.status_code == 400 and "shorten the lead time" in big.json()["error"]
    assert client.get(url, {"unmet": "spilt"}).status_code == 400


def test_whatif_changes_apply_and_read_in_words():
    saved = tyres_plan(unmet="backorder")
    variant = apply_changes(saved, {"unmet": "lost"})
    assert variant.unmet == "lost"
    assert describe_changes(saved, variant) == ["when the shelf is empty: customers wait → the sale is lost"]


def test_counted_plan_works_the_policy_out_on_the_demand_between_counts():
    # Counted every 2 weeks, lead time 2 weeks (one review cycle): the policy runs on the demand over two
    # weeks, the tyres' law convolved with itself in exact fractions, and the literal chain solved on it.
    two_weeks: dict[int, Fraction] = {}
    for first, p in TYRES.items():
        for second, q in TYRES.items():
            two_weeks[first + second] = two_weeks.get(first + second, Fraction(0)) + p * q
    result = run(tyres_plan(review_period=2, lead_time=2, target=0.9))
    level = result.policy.order_up_to

    def service(big_s):
        return 1 - periodic_review_long_run(two_weeks, big_s - 1, big_s, 1, "lost")["stockout"]

    assert service(level) >= Fraction(9, 10) and (level == 1 or service(level - 1) < Fraction(9, 10))
    assert "With sales lost when the shelf is empty, at each count (every 2 weeks), order" in result.recommendation
