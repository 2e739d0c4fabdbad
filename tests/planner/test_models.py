"""Scenario: database constraints hold even when Python checks are bypassed."""

import pytest
from django.core.exceptions import ValidationError
from django.db import IntegrityError, transaction

from planner.models import Scenario, ScenarioKind

pytestmark = pytest.mark.django_db


def make(owner, **changes):
    values = {
        "owner": owner,
        "title": "Oat bin",
        "kind": ScenarioKind.STOCK_PLAN,
        "parameters": {"start": 1, "horizon": 2, "step_method": "nearest", "up": 0.1, "down": 0.2},
        "stockout_target": 0.05,
        "overflow_target": 0.05,
    }
    return Scenario(**(values | changes))


@pytest.mark.parametrize(
    "changes",
    [
        {"title": ""},
        {"kind": "silo_fill"},
        {"kind": "stock_walk"},  # the first release's name, renamed by migration 0002
        {"headline_risk": 1.5},
        {"stockout_target": 0.0},
        {"stockout_target": 1.0},
        {"overflow_target": -0.1},
        {"overflow_target": 1.5},
    ],
)
def test_constraints_refuse_bad_rows(owner, changes):
    with pytest.raises(IntegrityError), transaction.atomic():
        make(owner, **changes).save()
    assert Scenario.objects.count() == 0


def test_full_clean_checks_the_parameters(owner):
    scenario = make(owner, parameters={"start": 5, "horizon": 2, "high": 3, "up": 0.1, "down": 0.2})
    with pytest.raises(ValidationError) as caught:
        scenario.full_clean()
    assert "start stock must be a whole number from 0 to 3" in str(caught.value.message_dict["parameters"])


def test_good_row_saves_and_reads_back(owner):
    scenario = make(owner)
    scenario.full_clean()
    scenario.save()
    assert Scenario.objects.get().params.up == 0.1
    assert scenario.get_absolute_url() == f"/scenarios/{scenario.pk}/"
