"""Sign-in throttling (django-axes, planner/settings.py): per account and per address, the right password
refused during a lockout, sign-in back once the lockout ends."""

from datetime import timedelta

import pytest
from axes.models import AccessAttempt
from django.conf import settings
from django.db.models import F
from django.test import Client
from django.urls import reverse

from tests.conftest import PASSWORD

pytestmark = pytest.mark.django_db

LOGIN = reverse("login")
HOME = reverse("scenario_list")


def sign_in(username, password, address="198.51.100.7"):
    """One sign-in from a fresh browser at ``address``; the response and whether it left the user signed in."""
    browser = Client(REMOTE_ADDR=address)
    response = browser.post(LOGIN, {"username": username, "password": password})
    return response, browser.get(HOME).status_code == 200


def let_lockout_end():
    # As if AXES_COOLOFF_TIME had passed since the last counted failure (the records are all the clock axes reads).
    AccessAttempt.objects.update(attempt_time=F("attempt_time") - timedelta(hours=settings.AXES_COOLOFF_TIME))


def test_defaults():
    assert (settings.AXES_FAILURE_LIMIT, settings.AXES_COOLOFF_TIME) == (10, 0.25)  # 15 minutes


def test_thirty_wrong_passwords_then_the_right_one_is_refused_until_the_lockout_ends(owner):
    answers = [sign_in("olwen", f"wrong-{n}")[0].status_code for n in range(30)]
    # The form's own "wrong password" page until the limit, then the lockout page (429 Too Many Requests).
    assert answers == [200] * (settings.AXES_FAILURE_LIMIT - 1) + [429] * (31 - settings.AXES_FAILURE_LIMIT)
    response, signed_in = sign_in("olwen", PASSWORD)
    assert response.status_code == 429 and not signed_in
    page = response.content.decode()
    assert 'data-error-page="429"' in page and "Too many failed sign-ins" in page and "15 minutes" in page
    assert PASSWORD not in page
    # Failures during the lockout were not counted: it ends AXES_COOLOFF_TIME after the tenth.
    assert AccessAttempt.objects.get().failures_since_start == settings.AXES_FAILURE_LIMIT
    let_lockout_end()
    response, signed_in = sign_in("olwen", PASSWORD)
    assert response.status_code == 302 and signed_in


def test_an_account_is_locked_whatever_the_address(owner):
    for n in range(settings.AXES_FAILURE_LIMIT):
        sign_in("olwen", "wrong", address=f"203.0.113.{n + 1}")
    response, signed_in = sign_in("olwen", PASSWORD, address="192.0.2.200")
    assert response.status_code == 429 and not signed_in


def test_an_address_is_locked_whatever_the_account(owner, outsider):
    for n in range(settings.AXES_FAILURE_LIMIT):
        sign_in(f"baker-{n}", "guess", address="203.0.113.50")
    response, signed_in = sign_in("ivo", PASSWORD, address="203.0.113.50")
    assert response.status_code == 429 and not signed_in
    # the same account from another address, and another account, are not affected
    assert sign_in("ivo", PASSWORD, address="203.0.113.51")[1]
    assert sign_in("olwen", PASSWORD, address="203.0.113.51")[1]


def test_a_few_mistakes_do_not_lock_anyone_out(owner):
    for _ in range(settings.AXES_FAILURE_LIMIT - 1):
        assert sign_in("olwen", "stale bread")[0].status_code == 200
    assert sign_in("olwen", PASSWORD)[1]


def test_admin_sign_in_is_throttled_too(django_user_model):
    django_user_model.objects.create_superuser("marit", password=PASSWORD)
    url = reverse("admin:login")
    for _ in range(settings.AXES_FAILURE_LIMIT):
        Client().post(url, {"username": "marit", "password": "wrong"})
    browser = Client()
    assert browser.post(url, {"username": "marit", "password": PASSWORD}).status_code == 429
    assert browser.get("/admin/").status_code == 302  # still signed out
