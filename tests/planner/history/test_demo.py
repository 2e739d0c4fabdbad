"""The demo history: written by the seeded script in fixtures/, loaded by load_demo, idempotent, fictional."""

import importlib.util
import re
from io import StringIO

import pytest
from django.core.management import call_command
from django.test import Client
from django.urls import reverse

from planner.history.demo import DEMO_FILE
from planner.models import SavedHistory

pytestmark = pytest.mark.django_db


def script():
    spec = importlib.util.spec_from_file_location("make_demo_history", DEMO_FILE.with_name("make_demo_history.py"))
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_the_demo_file_is_what_the_seeded_script_writes():
    maker = script()
    assert maker.FILE.read_text(encoding="utf-8") == maker.text()


def test_load_demo_loads_the_history_once(django_user_model):
    out = StringIO()
    call_command("load_demo", stdout=out)
    assert "1 history" in out.getvalue()
    first = SavedHistory.objects.get()
    call_command("load_demo", stdout=StringIO())
    again = SavedHistory.objects.get()
    assert again.pk == first.pk and again.rows == 731 and again.owner.username == "demo"
    assert again.shape == "movements" and again.period == "day"


def test_the_demo_fit_page_shows_a_credible_range():
    call_command("load_demo", stdout=StringIO())
    history = SavedHistory.objects.get()
    client = Client()
    client.force_login(history.owner)
    page = client.get(reverse("history_fit", args=[history.pk]), {"start": 200, "high": 400, "horizon": 28})
    text = page.content.decode()
    assert page.status_code == 200 and re.search(r'id="stockout-range">[^<]+<', text)
    assert 'data-choice="demand">negative binomial</b>' in text and "The weekdays differ." in text


def test_demo_text_stays_in_the_fictional_island():
    text = DEMO_FILE.read_text(encoding="utf-8")
    assert "Saltmarrow" in text and "invented" in text
