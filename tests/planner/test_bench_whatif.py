"""The what-if benchmark command runs end to end (its timings are reported, never asserted)."""

from io import StringIO

import pytest
from django.core.management import call_command

pytestmark = pytest.mark.django_db


def test_bench_reports_every_demo_scenario():
    call_command("load_demo", stdout=StringIO())
    out = StringIO()
    call_command("bench_whatif", repeat=1, stdout=out)
    lines = out.getvalue().splitlines()
    assert len(lines) == 3
    assert all("server median" in line and "(status 200)" in line for line in lines)
