"""The load-test command: its quantiles, its workload, and a short run end to end.

Timings are printed by the command, never asserted here (speed belongs in benchmarks).
"""

import random
import re
import statistics
from io import StringIO

import pytest
from django.core.management import call_command
from django.core.management.base import CommandError

from planner.management.commands.loadtest import percentile, workload
from planner.models import Scenario


def test_percentile_matches_the_standard_library():
    # Reference: Python's statistics.quantiles(method="inclusive"), the same linear interpolation
    # between order statistics (Hyndman and Fan's definition 7).
    rng = random.Random(7)
    values = [rng.expovariate(1 / 40) for _ in range(201)]
    cuts = statistics.quantiles(values, n=100, method="inclusive")
    assert percentile(values, 0.50) == pytest.approx(cuts[49], rel=1e-12)
    assert percentile(values, 0.95) == pytest.approx(cuts[94], rel=1e-12)
    assert percentile([5.0], 0.95) == 5.0


@pytest.mark.django_db
def test_workload_has_each_results_page_and_what_ifs_inside_the_band():
    call_command("load_demo", stdout=StringIO())
    scenarios = list(Scenario.objects.order_by("pk"))
    jobs = workload(scenarios)
    kinds = [kind for kind, _, _ in jobs]
    assert kinds.count("results page") == len(scenarios)
    assert kinds.count("what-if JSON") >= 2 * len(scenarios)
    for scenario in scenarios:
        saved = scenario.parameters  # the stored plan
        # What each kind samples, within its bounds: a stock plan's start inside floor and capacity; a
        # reorder plan's lead time at least 1 day (the demo stock is watched all the time); a spares pool's
        # spares, never below none; a rate-table pool's units failed at the start, below its shortage level.
        knob, low, high = {
            "stock_plan": ("start", saved.get("low"), saved.get("high")),
            "reorder_plan": ("lead_time", 1, None),
            "spares_pool": ("spares", 0, None),
            "rate_table": ("start_failed", 0, saved.get("shortage_at", 1) - 1),
        }[scenario.kind]
        values = [
            int(m.group(1))
            for _, title, path in jobs
            if title == scenario.title and (m := re.search(rf"/outlook\.json\?{knob}=(\d+)", path))
        ]
        top = high if high is not None else saved[knob] + 1
        assert values and all(low <= value <= top for value in values)
        assert saved[knob] in values


@pytest.mark.django_db(transaction=True)
def test_short_run_against_a_live_server_has_no_errors(live_server):
    call_command("load_demo", stdout=StringIO())
    out = StringIO()
    call_command("loadtest", url=live_server.url, clients=2, duration=1.0, warmup=0.2, stdout=out)
    report = out.getvalue()
    summary = report.split("by scenario:")[0]
    rows = {line.split("|")[1].strip(): line.split("|") for line in summary.splitlines() if line.startswith("| ")}
    for kind in ("results page", "what-if JSON"):
        assert int(rows[kind][2]) >= 1, report  # count
        assert int(rows[kind][3]) == 0, report  # errors
    assert re.search(r"all requests: [0-9.]+ req/s", report)
    by_scenario = report.split("by scenario:")[1]
    assert all(title in by_scenario for title in Scenario.objects.values_list("title", flat=True))


@pytest.mark.django_db(transaction=True)
def test_wrong_password_is_reported_not_measured(live_server):
    call_command("load_demo", stdout=StringIO())
    with pytest.raises(CommandError, match="could not sign in"):
        call_command("loadtest", url=live_server.url, password="not-the-password", duration=0.1, stdout=StringIO())
