"""The demo repair log (fixtures/make_demo_repairlog.py): loaded by load_demo, read with the upload's reader,
and its fit holds the rates it was simulated with inside its 90 % intervals (a seeded check of the generator
and the fit together)."""

import pytest
from django.core.management import call_command
from django.urls import reverse

from planner.models import SavedRepairLog, Scenario
from planner.repairlog.fit import fit_log

pytestmark = pytest.mark.django_db

# The rates fixtures/make_demo_repairlog.py simulates with (MTTF_DAYS, MEAN_REPAIR_DAYS there).
MTTF_DAYS, MEAN_REPAIR_DAYS = 150.0, 5.0


def test_load_demo_loads_the_oven_igniters_once(client, capsys):
    call_command("load_demo")
    call_command("load_demo")  # a second run refreshes, never duplicates
    assert "1 repair log" in capsys.readouterr().out
    saved = SavedRepairLog.objects.get()
    assert saved.owner.username == "demo" and (saved.units, saved.spares) == (6, 2)
    fit = fit_log(saved.parsed())
    assert fit.failure.low <= 1 / MTTF_DAYS <= fit.failure.high
    assert fit.repair.low <= 1 / MEAN_REPAIR_DAYS <= fit.repair.high
    client.force_login(saved.owner)
    assert "Oven igniters" in client.get(reverse("history_list")).content.decode()
    page = client.get(saved.get_absolute_url()).content.decode()
    assert "Long-run availability" in page and "Spares pool from this record" in page
    client.post(reverse("repairlog_plan_create", args=[saved.pk, "spares_pool"]), {"mission": "28"})
    assert Scenario.objects.filter(kind="spares_pool", title__endswith="pool from the record").exists()
