"""Writes and reads of background readings (keyword-only arguments, as ``planner/services.py``).

A plan version has at most one ``BackgroundReading`` (the database refuses a second). A worker claims
it (``work_claim``), reports each part it finished (``work_progress``, which also tells it to stop when
the work was cancelled), and writes the result, the plan's headline and "done" in one transaction
(``work_finish``), only while its claim holds: a worker presumed dead that finishes after all writes
nothing. Whoever watches the work (the page's progress poll) queues it again when its worker went silent
for a lease (``work_requeue_stale``), up to ``PORTFOLIO_MAX_ATTEMPTS`` tries.
"""

from __future__ import annotations

import functools
import hashlib
import pickle
import zlib
from pathlib import Path

from django.conf import settings
from django.db import transaction
from django.utils import timezone

from planner import reading
from planner.background import tasks
from planner.background.models import OPEN_WORK, BackgroundReading, WorkStatus
from planner.heartbeat import lease, seconds_left
from planner.kinds import get_kind
from planner.models import Scenario, ScenarioVersion
from planner.reading import Reading, saved_params

ROOT = Path(__file__).resolve().parent.parent.parent


@functools.cache
def code_mark(kind_key: str) -> str:
    """A digest of the code a stored result's objects come from (the kind's package, the shared planner
    modules it reads, the engine): a stored result is read back only by the same code."""
    digest = hashlib.sha256()
    folders = (ROOT / "walkmath", ROOT / "planner" / "kinds" / kind_key)
    files = [path for folder in folders for path in sorted(folder.rglob("*.py"))]
    files += sorted((ROOT / "planner").glob("*.py"))
    for path in files:
        digest.update(path.read_bytes())
    return digest.hexdigest()


def work_for(scenario: Scenario) -> BackgroundReading | None:
    """The background reading of the plan's current version, if one was asked for."""
    return BackgroundReading.objects.filter(scenario=scenario, version=scenario.version).first()


def work_request(*, scenario: Scenario) -> BackgroundReading:
    """The plan version's background reading, queued now if none was asked for (or its stored result was
    written by other code); readings of older versions are dropped. Closed work (done, failed, cancelled)
    is returned as it is."""
    with transaction.atomic():
        work, created = BackgroundReading.objects.get_or_create(
            scenario=scenario, version=scenario.version, defaults={"units": 0}
        )
        stale = work.status == WorkStatus.DONE and work.code_mark != code_mark(scenario.kind)
        if stale:
            work.status, work.result, work.units_done, work.attempts = WorkStatus.QUEUED, None, 0, 0
            work.save(update_fields=["status", "result", "units_done", "attempts"])
        if created:
            BackgroundReading.objects.filter(scenario=scenario, version__lt=scenario.version).delete()
        if created or stale:
            tasks.enqueue_work(work.pk)  # on the database queue, in the same transaction as the work's row
    return work


def work_restart(*, work: BackgroundReading) -> bool:
    """Queue failed or cancelled work again (its tries counted afresh); False when it is open or done."""
    rows = BackgroundReading.objects.filter(pk=work.pk, status__in=(WorkStatus.FAILED, WorkStatus.CANCELLED))
    if not rows.update(status=WorkStatus.QUEUED, units_done=0, attempts=0, message="", heartbeat=None):
        return False
    tasks.enqueue_work(work.pk)
    return True


def work_cancel(*, work: BackgroundReading, by) -> bool:
    """Stop open work: a waiting task does nothing when its turn comes, a running worker stops at the end
    of its current part (the engine's calls are not interrupted). False when it was not open."""
    message = f"Cancelled by {by.get_username()}."
    return bool(
        BackgroundReading.objects.filter(pk=work.pk, status__in=OPEN_WORK).update(
            status=WorkStatus.CANCELLED, message=message, finished=timezone.now()
        )
    )


def work_mark_queued(*, work_id: int, task_id: str) -> None:
    BackgroundReading.objects.filter(pk=work_id).update(task_id=task_id)


def work_claim(*, work_id: int) -> BackgroundReading | None:
    """Mark the work running for this worker (one more try); None when there is nothing to do (closed,
    gone, or another worker alive on it)."""
    now = timezone.now()
    with transaction.atomic():
        work = BackgroundReading.objects.select_for_update().filter(pk=work_id).first()
        if work is None or work.status not in OPEN_WORK:
            return None
        if work.status == WorkStatus.RUNNING and work.heartbeat and work.heartbeat > now - lease():
            return None
        work.status, work.heartbeat, work.started, work.attempts = WorkStatus.RUNNING, now, now, work.attempts + 1
        work.units_done = 0
        work.save(update_fields=["status", "heartbeat", "started", "attempts", "units_done"])
    return work


def work_beat(*, work_id: int, attempt: int) -> None:
    """The worker on the work is alive (every third of the lease while it works)."""
    BackgroundReading.objects.filter(pk=work_id, status=WorkStatus.RUNNING, attempts=attempt).update(
        heartbeat=timezone.now()
    )


def work_progress(*, work_id: int, attempt: int, units_done: int, units: int | None = None) -> bool:
    """Record the parts done (and, when the worker has priced the work, its ``units``); False when the
    worker should stop (cancelled, or its claim passed on)."""
    rows = BackgroundReading.objects.filter(pk=work_id, status=WorkStatus.RUNNING, attempts=attempt)
    values = {"units_done": units_done, "heartbeat": timezone.now()} | ({} if units is None else {"units": units})
    return bool(rows.update(**values))


def work_finish(*, work_id: int, attempt: int, result, headline: tuple[float, str], engine_seconds: float) -> bool:
    """Store the result and mark the work done, with the plan's headline when the plan is still at this
    version and has none, in one transaction; False (nothing written) when this worker's claim no longer holds."""
    with transaction.atomic():
        work = BackgroundReading.objects.select_for_update().filter(pk=work_id).first()
        if work is None or work.status != WorkStatus.RUNNING or work.attempts != attempt:
            return False
        scenario = Scenario.objects.only("kind").get(pk=work.scenario_id)
        work.result = zlib.compress(pickle.dumps(result, protocol=pickle.HIGHEST_PROTOCOL), 1)
        work.code_mark = code_mark(scenario.kind)
        work.status, work.units_done, work.finished = WorkStatus.DONE, work.units, timezone.now()
        work.engine_seconds = engine_seconds
        work.save(update_fields=["result", "code_mark", "status", "units_done", "finished", "engine_seconds"])
        risk, span = headline
        values = {"headline_risk": risk, "headline_span": span[:60]}
        Scenario.objects.filter(pk=work.scenario_id, version=work.version, headline_risk=None).update(**values)
        ScenarioVersion.objects.filter(scenario_id=work.scenario_id, number=work.version, headline_risk=None).update(
            **values
        )
    return True


def work_fail(*, work_id: int, attempt: int | None, message: str) -> None:
    """Stop the work with its reason (an engine limit, the plan changed); ``attempt`` None: whatever try."""
    rows = BackgroundReading.objects.filter(pk=work_id, status__in=OPEN_WORK)
    if attempt is not None:
        rows = rows.filter(attempts=attempt)
    rows.update(status=WorkStatus.FAILED, message=message, finished=timezone.now())


def work_requeue_stale(*, work: BackgroundReading, task_lost: bool) -> bool:
    """Queue the work again when its worker went silent for a lease, or when its task was taken and never
    claimed (``task_lost``); stop it after ``PORTFOLIO_MAX_ATTEMPTS`` tries. True when it was queued again."""
    now = timezone.now()
    silent = work.status == WorkStatus.RUNNING and (work.heartbeat is None or work.heartbeat < now - lease())
    lost = work.status == WorkStatus.QUEUED and task_lost
    if not (silent or lost):
        return False
    if work.attempts >= settings.PORTFOLIO_MAX_ATTEMPTS:
        work_fail(
            work_id=work.pk,
            attempt=work.attempts,
            message=f"Stopped: the worker on it went silent {work.attempts} times (each time for "
            f"{settings.PORTFOLIO_LEASE_SECONDS:g} seconds). Ask for it again, or shorten the plan.",
        )
        return False
    rows = BackgroundReading.objects.filter(pk=work.pk, status=work.status, attempts=work.attempts)
    return bool(rows.update(status=WorkStatus.QUEUED, heartbeat=None))


def saved_reading(*, scenario: Scenario) -> tuple[Reading | None, BackgroundReading | None]:
    """The saved plan's reading and, for a plan too large for a page, its background work.

    (reading, None): worked out now, as any page. (stored reading, work): a worker's stored result.
    (None, work): queued or being worked out (or stopped: ``work.message`` says why). ValueError
    (ComputeTooLarge included) when neither a page nor a worker can work it out.
    """
    try:
        return reading.scenario_reading(scenario=scenario), None
    except reading.TooLargeForRequest:
        work = work_request(scenario=scenario)
        return stored_reading(work=work, scenario=scenario), work


def stored_reading(*, work: BackgroundReading, scenario: Scenario) -> Reading | None:
    """The stored result as the read service's ``Reading`` of the saved plan; None when there is none or it
    was written by other code (``work_request`` then queues it again)."""
    if work.status != WorkStatus.DONE or work.result is None or work.code_mark != code_mark(scenario.kind):
        return None
    result = pickle.loads(zlib.decompress(bytes(work.result)))  # noqa: S301 (written by our own workers only)
    return Reading(kind=get_kind(scenario.kind), params=saved_params(scenario), result=result, changes=())


def work_progress_view(work: BackgroundReading) -> dict:
    """The progress as the shared progress bar reads it: status, share done and the time left at the pace
    so far (from the engine's cost model: the parts done against all the parts priced)."""
    left = seconds_left(work.started, work.units_done, work.units) if work.status == WorkStatus.RUNNING else None
    percent = 100.0 if work.status == WorkStatus.DONE else 100.0 * min(work.units_done / max(work.units, 1), 1.0)
    return {
        "status": work.status,
        "status_text": work.get_status_display(),
        "open": work.open,
        "percent": percent,
        "rows": None,  # the bar shows rows for a portfolio run only
        "seconds_left": left,
        "message": work.message,
    }
