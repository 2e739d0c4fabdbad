"""A run worked out by two ``manage.py db_worker`` processes started here, one of them killed (SIGKILL)
in the middle of a chunk: the run finishes on the other, every row written once (count and compare), and
every item's figures equal the engine's own answer (``walkmath.portfolio.answer_items``).

Other processes must see the test database, so this runs when the suite runs on PostgreSQL
(``DATABASE_URL=postgres://postgres@127.0.0.1:5432/test``, as ``.ci/run`` does); SQLite's test database
lives in this process's memory.
"""

import io
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from django.db import connection
from django_tasks_db.models import DBTaskResult

from planner.portfolio import services, tasks
from planner.portfolio.items_file import read_items
from planner.portfolio.models import PortfolioResult, RunStatus
from tests.planner.portfolio.helpers import HEADER, engine_figures, stored_figures

pytestmark = pytest.mark.django_db(transaction=True)
ROOT = Path(__file__).resolve().parents[3]
LEASE = 2  # seconds


def skip_unless_postgresql() -> None:
    if connection.vendor != "postgresql":
        pytest.skip(
            "needs the suite on PostgreSQL (DATABASE_URL=postgres://postgres@127.0.0.1:5432/test): worker "
            "processes cannot see SQLite's in-memory test database"
        )


@pytest.fixture(autouse=True)
def _settings(settings):
    skip_unless_postgresql()
    settings.TASKS = {"default": {"BACKEND": "django_tasks_db.DatabaseBackend"}}
    settings.PORTFOLIO_CHUNK_ITEMS = 12
    settings.PORTFOLIO_LEASE_SECONDS = LEASE


def silos_csv(count: int) -> bytes:
    """``count`` large silos, each with its own daily use, in the columns of ``portfolio_csv``."""
    lines = [HEADER]
    for n in range(count):
        mean = round(20 + 0.37 * n, 2)
        lines.append(f"SILO-{n},stock,day,{mean},{mean + 0.6},500,{1000 + 20 * n},120,1,2,,,,,,,")
    return ("\n".join(lines) + "\n").encode()


def _worker(name: str) -> subprocess.Popen:
    db = connection.settings_dict
    url = f"postgres://{db['USER']}:{db['PASSWORD'] or ''}@{db['HOST']}:{db['PORT'] or 5432}/{db['NAME']}"
    env = os.environ | {
        "DJANGO_SETTINGS_MODULE": "tests.settings",
        "DATABASE_URL": url,
        "PLANNER_TASKS_BACKEND": "database",
        "PORTFOLIO_LEASE_SECONDS": str(LEASE),
    }
    command = [sys.executable, "manage.py", "db_worker", "--interval", "0.1", "--no-startup-delay", "--no-reload",
               "--worker-id", name, "--verbosity", "0"]  # fmt: skip
    return subprocess.Popen(command, cwd=ROOT, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)


def _wait_for(condition, seconds: float, what: str):
    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        if value := condition():
            return value
        time.sleep(0.05)
    pytest.fail(f"gave up waiting {seconds:g} s for {what}")


def _running_chunk_task_of(worker: str):
    running = DBTaskResult.objects.filter(status="RUNNING", worker_ids__contains=[worker])
    return running.filter(task_path__endswith=".work_out_chunk").first()


def test_two_workers_one_killed_mid_chunk_every_row_once_and_equal_to_the_engine(owner):
    # 24 flour silos of 1,000 to 1,460 kg over 120 days, each with its own use, with capacity searches: about
    # 0.03 s each, so a chunk of twelve takes long enough to be killed in the middle (the other kinds' chunks
    # are as quick as the poll; tests/planner/portfolio/test_runs.py works them out).
    run = services.run_create(owner=owner, title="Shelf", parsed=read_items(io.BytesIO(silos_csv(24))))
    run = services.run_start(run=run)
    workers = {"alder": _worker("alder"), "birch": _worker("birch")}
    try:
        killed_task = _wait_for(lambda: _running_chunk_task_of("alder"), 60, "worker alder to take a chunk's task")
        chunk_id = killed_task.args_kwargs["args"][0]
        # Killed in the middle of the chunk: once its task has claimed it (the task taken but the chunk not yet
        # claimed is the other case, tests/planner/portfolio/test_runs.py).
        claimed = run.chunks.filter(pk=chunk_id, status="running")
        _wait_for(claimed.exists, 60, "worker alder to claim the chunk")
        workers["alder"].send_signal(signal.SIGKILL)
        workers["alder"].wait(10)
        killed_task.refresh_from_db()
        # It died with the task: the queue will never hand it out again (whether the chunk was claimed yet or not).
        assert killed_task.status == "RUNNING"

        def closed():
            tasks.requeue_stale(run)  # what the run page's progress poll does
            run.refresh_from_db()
            return run.status not in (RunStatus.QUEUED, RunStatus.RUNNING)

        _wait_for(closed, 120, "the run to close on worker birch")
    finally:
        for process in workers.values():
            if process.poll() is None:
                process.terminate()
                process.wait(10)
    assert run.status == RunStatus.FINISHED
    chunk = run.chunks.get(pk=chunk_id)
    assert chunk.attempts >= 2 and chunk.status == "done"  # worked out again after its worker died
    results = PortfolioResult.objects.filter(run=run).select_related("item")
    assert results.count() == run.queued == 24  # none lost, none twice (the item is the result's primary key)
    assert sorted(results.values_list("item__row", flat=True)) == list(range(2, 26))
    for result in results:
        assert result.answered and stored_figures(result) == engine_figures(result.item.spec), result.item.code
