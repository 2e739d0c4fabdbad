"""What a background worker shares with the page that watches it: a heartbeat while it works, and the
queue's tasks that a worker took and then lost.

The database queue (``django_tasks_db`` 0.13) never hands a task out again once a worker has claimed it,
even when that worker is killed (its row stays "running"). So work that must survive a dead worker
carries its own lease: while it works, the worker stamps a heartbeat every third of
``PORTFOLIO_LEASE_SECONDS`` from a side thread (``Heartbeat``), and whoever watches the work queues it
again once the stamp is older than the lease, or once its task was taken a lease ago and the work never
claimed (``tasks_taken_before``).
"""

from __future__ import annotations

import datetime
import logging
import threading
from collections.abc import Callable, Iterable

from django.conf import settings
from django.db import DatabaseError, connection
from django.utils import timezone
from django_tasks_db import DatabaseBackend
from django_tasks_db.models import DBTaskResult

log = logging.getLogger(__name__)


def lease() -> datetime.timedelta:
    return datetime.timedelta(seconds=settings.PORTFOLIO_LEASE_SECONDS)


class Heartbeat:
    """Calls ``beat`` every third of the lease from a side thread (with its own database connection)."""

    def __init__(self, beat: Callable[[], None], what: str):
        self.beat, self.what = beat, what
        self.stop = threading.Event()
        self.thread = threading.Thread(target=self._beat, daemon=True)

    def __enter__(self):
        self.thread.start()
        return self

    def __exit__(self, *exc):
        self.stop.set()
        self.thread.join()

    def _beat(self) -> None:
        try:
            while not self.stop.wait(settings.PORTFOLIO_LEASE_SECONDS / 3):
                try:
                    self.beat()
                except DatabaseError as error:  # a busy SQLite file: the next beat tries again
                    log.warning("heartbeat of %s missed: %s", self.what, error)
        finally:
            connection.close()


def seconds_left(started: datetime.datetime | None, done: float, total: float) -> float | None:
    """The time left at the pace so far: ``done`` of ``total`` (rows, or priced work units) since
    ``started``; None before anything is done, or once all of it is."""
    if started is None or not 0 < done < total:
        return None
    return (timezone.now() - started).total_seconds() * (total - done) / done


def tasks_taken_before(task, task_ids: Iterable[str]) -> set[str]:
    """Those of ``task_ids`` (tasks of ``task``) that a worker took more than a lease ago and that have not
    finished well: the database queue keeps such a task "running" forever when its worker dies. Asked in
    one query; empty on a backend that is not the database queue."""
    task_ids = [task_id for task_id in task_ids if task_id]
    if not task_ids or not isinstance(task.get_backend(), DatabaseBackend):
        return set()
    taken = DBTaskResult.objects.filter(id__in=task_ids, started_at__lt=timezone.now() - lease())
    return {str(task_id) for task_id in taken.exclude(status="READY").values_list("id", flat=True)}


def queue_of(task, task_id: str, default: str) -> str:
    """The queue the task ``task_id`` (of ``task``) was put on, or ``default`` when the backend cannot say."""
    if not task_id or not isinstance(task.get_backend(), DatabaseBackend):
        return default
    return DBTaskResult.objects.filter(id=task_id).values_list("queue_name", flat=True).first() or default
