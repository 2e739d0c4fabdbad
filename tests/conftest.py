"""Shared fixtures: a fast password hasher and a named cast of users; hypothesis without deadlines."""

import pytest
from hypothesis import settings as hypothesis_settings

from planner.kinds.stock_plan.params import StockPlanParams

# No per-example deadline: a deadline is a timing assertion, and on a busy machine a quick example can
# take longer than 200 ms (speed lives in the benchmarks).
hypothesis_settings.register_profile("no_deadline", deadline=None)
hypothesis_settings.load_profile("no_deadline")

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
    """A quick, capacity-bound plan: one more unit w.p. 0.3, one fewer w.p. 0.4, on 0..8."""
    return KIND_EXAMPLES["stock_plan"]()


@pytest.fixture
def small_spares_params():
    return spares_example()


def small_reorder_params():
    """A quick reorder plan: Poisson demand 0.8 crates a day, lead time 3 days, 95 % cycle service level."""
    from planner.count_law import CountLaw
    from planner.kinds.reorder_plan.params import ReorderPlanParams

    return ReorderPlanParams(
        demand=CountLaw("poisson", mean=0.8), target=0.95, lead_time=3, unit="crates", order_quantity=6
    )


def spares_example():
    """A quick spares pool: 3 oven igniters in service, 1 cold spare, one crew, a 200-hour mission."""
    from planner.kinds.spares_pool.params import SparesPoolParams

    return SparesPoolParams(units=3, spares=1, failure=400.0, repair=24.0, mission=200.0, crews=1)


def rate_table_example():
    """A quick rate-table pool: 3 proofing-cabinet fans, short with 2 failed, one fitter, a 200-hour mission."""
    from planner.kinds.rate_table.params import RateTableParams

    return RateTableParams(
        failure_rates=(0.003, 0.002, 0.001, 0.0), repair_rates=(0.0, 0.05, 0.05, 0.04), shortage_at=2, mission=200.0
    )


# One small example per scenario kind (its key -> its parameters): the generic view tests run every URL on each.
KIND_EXAMPLES = {
    "stock_plan": lambda: StockPlanParams(
        start=4, horizon=12, low=0, high=8, below="lost", above="spill", step_method="nearest", up=0.3, down=0.4
    ),
    "reorder_plan": small_reorder_params,
    "spares_pool": spares_example,
    "rate_table": rate_table_example,
}


def example_scenario(owner, kind: str):
    """A saved scenario of ``kind`` from its example, named as every generic view test expects."""
    from planner.services import scenario_create

    assert kind in KIND_EXAMPLES, "add a small example of the new kind to KIND_EXAMPLES in tests/conftest.py"
    return scenario_create(
        owner=owner, kind=kind, title="Rye loaf shelf", params=KIND_EXAMPLES[kind](), notes="Back shelf."
    )


@pytest.fixture
def scenario(owner):
    return example_scenario(owner, "stock_plan")


def pytest_configure(config):
    # WhiteNoise warns that STATIC_ROOT does not exist until collectstatic runs; tests serve via finders.
    config.addinivalue_line("filterwarnings", "ignore:No directory at:UserWarning")
