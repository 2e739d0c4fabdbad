"""Shared fixtures: a fast password hasher and a named cast of users."""

import pytest

from planner.kinds.stock_plan.params import StockPlanParams

PASSWORD = "crust-and-crumb-42"


@pytest.fixture(autouse=True)
def _fast_password_hasher(settings):
    # MD5 only to keep tests quick; production uses Django's default (PBKDF2).
    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]


@pytest.fixture
def owner(django_user_model):
    """Olwen plans the bakery's stock and owns the scenarios under test."""
    return django_user_model.objects.create_user("olwen", password=PASSWORD)


@pytest.fixture
def outsider(django_user_model):
    """Ivo has an account but no business with Olwen's scenarios."""
    return django_user_model.objects.create_user("ivo", password=PASSWORD)


@pytest.fixture
def small_params():
    """A quick, capacity-bound walk: +1 w.p. 0.3, -1 w.p. 0.4 on 0..8."""
    return StockPlanParams(
        start=4, horizon=12, low=0, high=8, below="lost", above="spill", step_method="nearest", up=0.3, down=0.4
    )


@pytest.fixture
def scenario(owner, small_params):
    from planner.services import scenario_create

    return scenario_create(
        owner=owner, kind="stock_plan", title="Rye loaf shelf", params=small_params, notes="Back shelf."
    )


def pytest_configure(config):
    # WhiteNoise warns that STATIC_ROOT does not exist until collectstatic runs; tests serve via finders.
    config.addinivalue_line("filterwarnings", "ignore:No directory at:UserWarning")
