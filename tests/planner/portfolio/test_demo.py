"""The demo portfolio: the seeded generator writes the CSV in the repository, and load_demo loads it once."""

import csv
import importlib.util
import io
from io import StringIO

import pytest
from django.contrib.auth import get_user_model
from django.core.management import call_command

from planner.portfolio.demo import DEMO_FILE, TITLE
from planner.portfolio.items_file import read_items
from planner.portfolio.models import PortfolioRun, RunStatus

pytestmark = pytest.mark.django_db


def test_generator_writes_the_file_in_the_repository():
    spec = importlib.util.spec_from_file_location("make_demo_portfolio", DEMO_FILE.with_name("make_demo_portfolio.py"))
    make_demo_portfolio = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(make_demo_portfolio)
    written = StringIO()
    writer = csv.DictWriter(written, make_demo_portfolio.HEADER, lineterminator="\n")
    writer.writeheader()
    writer.writerows(make_demo_portfolio.rows())
    assert written.getvalue() == DEMO_FILE.read_text(encoding="utf-8")


def test_demo_file_reads_as_2000_items_with_five_refusals():
    parsed = read_items(io.BytesIO(DEMO_FILE.read_bytes()))
    assert len(parsed.rows) == 2000 and len(parsed.bad) == 5
    assert {row.kind for row in parsed.good} == {"stock", "reorder", "spares"}


def test_load_demo_queues_the_run_once(django_capture_on_commit_callbacks):
    with django_capture_on_commit_callbacks(execute=True):
        call_command("load_demo", stdout=StringIO())
    call_command("load_demo", stdout=StringIO())
    demo = get_user_model().objects.get(username="demo")
    run = PortfolioRun.objects.get(owner=demo, title=TITLE)
    assert PortfolioRun.objects.count() == 1 and run.rows == 2000 and run.refused == 5
    assert run.status == RunStatus.QUEUED and sum(run.chunks.values_list("items", flat=True)) == 1995
