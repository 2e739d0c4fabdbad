"""The kind registry: every kind registered once, found by key, unknown keys are 404."""

import pytest
from django.http import Http404

from planner.kinds import Kind, all_kinds, get_kind, register
from planner.models import ScenarioKind


def test_every_registered_kind_is_a_database_kind_and_back():
    assert {kind.key for kind in all_kinds()} == set(ScenarioKind.values)
    for kind in all_kinds():
        assert isinstance(kind, Kind) and kind.tables and kind.label


def test_unknown_kind_is_404():
    with pytest.raises(Http404):
        get_kind("silo_fill")


def test_a_kind_registers_once():
    with pytest.raises(ValueError, match="registered twice"):
        register(get_kind("stock_plan"))
