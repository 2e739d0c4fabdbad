"""The what-if benchmark command runs end to end (its timings are reported, never asserted)."""

from io import StringIO

import pytest
from django.core.management import call_command

from planner.models import Scenario

pytestmark = pytest.mark.django_db


def test_bench_reports_every_demo_scenario():
    call_command("load_demo", stdout=StringIO())
    out = StringIO()
    call_command("bench_whatif", repeat=1, stdout=out)
    lines = out.getvalue().splitlines()
    assert len(lines) == Scenario.objects.count() >= 8  # stock plans, reorder plans and spares pools
    assert all("server median" in line and "(status 200)" in line for line in lines)


def test_worst_case_bench_finds_the_longest_horizon_within_the_cap(settings):
    settings.PLANNER_COMPUTE_CAP = 50_000_000  # a small cap keeps this run short
    out = StringIO()
    call_command("bench_whatif", worst=True, stdout=out)
    lines = out.getvalue().splitlines()
    assert len(lines) == 9 + 3
    assert all("longest within the cap of 5e+07" in line for line in lines[:9])
    # the lost-sales reorder plans: the longest lead time allowed, or a refusal at every one
    assert all("lead time" in line for line in lines[9:])
