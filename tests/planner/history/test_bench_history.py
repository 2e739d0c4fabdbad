"""The history pages' benchmark command runs end to end (its timings are reported, never asserted)."""

from io import StringIO

import pytest
from django.core.management import call_command

pytestmark = pytest.mark.django_db


def test_bench_reports_the_upload_each_fit_page_and_the_repair_log():
    call_command("load_demo", stdout=StringIO())
    out = StringIO()
    call_command("bench_history", repeat=1, stdout=out)
    lines = out.getvalue().splitlines()
    assert lines[0].startswith("upload and preview, 731 rows: median ")
    assert len(lines) == 6 and all("(status 200)" in line and " draws " in line for line in lines[1:5])
    assert lines[5].startswith("repair log page, 29 failures, 6 units + 2 spares: median ") and "400 draws" in lines[5]
