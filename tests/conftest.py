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
def small_spares_params():
    """A quick spares pool: 3 oven igniters in service, 1 cold spare, one crew, a 200-hour mission."""
    from planner.kinds.spares_pool.params import SparesPoolParams

    return SparesPoolParams(units=3, spares=1, failure=400.0, repair=24.0, mission=200.0, crews=1)


# One small example per scenario kind (the fixture giving its parameters, a title, notes): the generic
# view tests (tests/planner/test_views.py) run every URL for each kind with these.
KIND_EXAMPLES = {
    "stock_plan": ("small_params", "Rye loaf shelf", "Back shelf."),
    "spares_pool": ("small_spares_params", "Oven igniters", "Bakehouse ovens."),
}


def example_scenario(request, owner, kind: str):
    """The saved example of ``kind`` owned by ``owner``."""
    from planner.services import scenario_create

    assert kind in KIND_EXAMPLES, f"add a small example of the kind {kind!r} to KIND_EXAMPLES in tests/conftest.py"
    fixture, title, notes = KIND_EXAMPLES[kind]
    params = request.getfixturevalue(fixture)
    return scenario_create(owner=owner, kind=kind, title=title, params=params, notes=notes)


@pytest.fixture
def scenario(request, owner):
    return example_scenario(request, owner, "stock_plan")


def pytest_configure(config):
    # WhiteNoise warns that STATIC_ROOT does not exist until collectstatic runs; tests serve via finders.
    config.addinivalue_line("filterwarnings", "ignore:No directory at:UserWarning")
