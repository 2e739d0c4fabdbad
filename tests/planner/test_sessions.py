"""planner/sessions.py reads exactly what Django's own database session store reads.

Reference: ``django.contrib.sessions.backends.db.SessionStore`` (Django's store, which this one
extends) on the same rows: a live session, an expired one, an unknown key, a key too short to be one.
"""

from datetime import timedelta

import pytest
from django.contrib.sessions.backends import db
from django.contrib.sessions.models import Session
from django.urls import reverse
from django.utils import timezone

from planner import sessions

pytestmark = pytest.mark.django_db


def _saved(data: dict) -> str:
    store = sessions.SessionStore()
    store.update(data)
    store.save()
    return store.session_key


def test_the_settings_use_this_store(settings):
    assert settings.SESSION_ENGINE == "planner.sessions"


def test_a_live_session_loads_as_djangos_store_loads_it():
    key = _saved({"basket": [1, 2, 3], "name": "Rye"})
    ours, theirs = sessions.SessionStore(key), db.SessionStore(key)
    assert ours.load() == theirs.load() == {"basket": [1, 2, 3], "name": "Rye"}
    assert ours.session_key == theirs.session_key == key


@pytest.mark.parametrize("age", [timedelta(seconds=1), timedelta(days=30)])
def test_an_expired_session_loads_nothing_and_forgets_its_key_as_djangos_store_does(age):
    key = _saved({"basket": [1]})
    Session.objects.filter(session_key=key).update(expire_date=timezone.now() - age)
    ours, theirs = sessions.SessionStore(key), db.SessionStore(key)
    assert ours.load() == theirs.load() == {}
    assert ours.session_key is theirs.session_key is None


def test_a_session_expiring_later_is_still_read():
    key = _saved({"basket": [2]})
    Session.objects.filter(session_key=key).update(expire_date=timezone.now() + timedelta(seconds=30))
    assert sessions.SessionStore(key).load() == db.SessionStore(key).load() == {"basket": [2]}


@pytest.mark.parametrize("key", ["nosuchsessionkeyatall00000000000", "short", "' OR 1=1 --abcdefgh"])
def test_an_unknown_or_malformed_key_loads_nothing(key):
    _saved({"basket": [3]})
    ours, theirs = sessions.SessionStore(key), db.SessionStore(key)
    assert ours.load() == theirs.load() == {}
    assert ours.session_key is theirs.session_key is None


def test_a_signed_in_page_is_served_and_an_expired_sign_in_is_sent_to_sign_in(client, owner):
    client.force_login(owner)
    url = reverse("scenario_list")
    assert client.get(url).status_code == 200
    Session.objects.update(expire_date=timezone.now() - timedelta(seconds=1))
    response = client.get(url)
    assert response.status_code == 302 and response["Location"].startswith(reverse("login"))
