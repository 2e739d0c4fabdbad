"""A large plan's background work on ``manage.py db_worker`` processes started here: the first worker is
killed (SIGKILL) while it works the plan out, the progress poll hands the work to a second worker once the
first has been silent for a lease, and the second stores the result once; its headline equals the engine's
own forward sweep (``walkmath``, ``outlook``) worked out here.

Other processes must see the test database, so this runs when the suite runs on PostgreSQL, as the
portfolio workers' test does (``tests/planner/portfolio/test_workers.py``, whose helpers it uses).
"""

import signal

import pytest

from planner import services
from planner.background import tasks
from planner.background.models import BackgroundReading, WorkStatus
from planner.count_law import CountLaw
from planner.kinds.stock_plan.params import StockPlanParams
from tests.planner.portfolio.test_workers import LEASE, _wait_for, _worker, skip_unless_postgresql

pytestmark = pytest.mark.django_db(transaction=True)


@pytest.fixture(autouse=True)
def _settings(settings):
    skip_unless_postgresql()
    settings.TASKS = {"default": {"BACKEND": "django_tasks_db.DatabaseBackend"}}
    settings.PORTFOLIO_LEASE_SECONDS = LEASE
    settings.PLANNER_COMPUTE_CAP = 1_000  # the plan below is too large for a page; a worker takes it


def test_a_worker_killed_mid_plan_is_replaced_and_the_result_written_once(owner):
    # Flour by the kilo: a 3,000 kg silo, Poisson use of 40 kg a day and deliveries of 40.8, over 1,300 days
    # (about a second of engine work, so the first worker is killed in the middle of it).
    params = StockPlanParams(
        start=1500, horizon=1300, low=0, high=3000, below="lost", above="spill", step_method="net",
        demand=CountLaw("poisson", mean=40), arrivals=CountLaw("poisson", mean=40.8),
    )  # fmt: skip
    scenario = services.scenario_create(owner=owner, kind="stock_plan", title="Silo, 1,300 days", params=params)
    work = BackgroundReading.objects.get()
    first = _worker("alder")
    second = None
    try:
        _wait_for(lambda: BackgroundReading.objects.filter(status=WorkStatus.RUNNING).exists(), 60, "alder to start")
        first.send_signal(signal.SIGKILL)
        first.wait(10)
        work.refresh_from_db()
        assert work.status == WorkStatus.RUNNING and work.attempts == 1 and work.result is None
        second = _worker("birch")

        def done():
            work.refresh_from_db()
            if work.open:
                tasks.watch(work)  # what the results page's progress poll does
            return work.status == WorkStatus.DONE

        _wait_for(done, 120, "birch to work the plan out")
    finally:
        for process in (first, second):
            if process is not None and process.poll() is None:
                process.terminate()
                process.wait(10)
    assert work.attempts == 2 and work.units_done == work.units > 1_000
    scenario.refresh_from_db()
    walk = params.walk(list(params.step_laws()))
    assert scenario.headline_risk == float(walk.outlook(params.horizon).stockout[-1])
