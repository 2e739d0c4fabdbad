"""Background work of portfolio runs, through Django's Tasks interface (the ``django_tasks`` backport).

``work_out_chunk`` works out one chunk: claim it, answer its items through
``walkmath.portfolio.answer_items`` (each item priced before it runs; one
bad or oversized item gets its reason, the others their answers), then write
the results and mark the chunk done in one transaction.

The database queue (``django_tasks_db``) never hands a task out again once a
worker has claimed it, even when that worker is killed (its row stays
"running"). So a chunk carries its own lease (``planner.heartbeat``): while it
works, the worker stamps the chunk's ``heartbeat`` every third of ``PORTFOLIO_LEASE_SECONDS``
from a side thread; a chunk whose stamp is older than the lease is queued
again (``services.chunks_requeue_stale``), as is a waiting chunk whose task a worker took
and then died before it could claim the chunk, by ``watch_run`` (a task that runs
once a lease while the run is open, when the backend can defer tasks), by the
run page's progress poll, and by every chunk task once it has written its results. Its results
are written once whatever happens: see ``services.chunk_finish``.
"""

from __future__ import annotations

import datetime
import time

from django.conf import settings
from django.utils import timezone
from django_tasks import DEFAULT_TASK_QUEUE_NAME, default_task_backend, task

from planner.heartbeat import Heartbeat, tasks_taken_before
from planner.portfolio import items as item_specs
from planner.portfolio import services
from planner.portfolio.models import OPEN_STATUSES, PortfolioResult, PortfolioRun
from walkmath import portfolio as pf


def enqueue_run(run_id: int, chunk_ids: list[int], queue_name: str = DEFAULT_TASK_QUEUE_NAME) -> None:
    """Queue every chunk of a run on ``queue_name`` (the benchmark keeps its own), then the run's watcher
    (when the backend can run a task later)."""
    chunk_task = work_out_chunk.using(queue_name=queue_name)
    services.chunks_mark_queued(tasks={chunk_id: chunk_task.enqueue(chunk_id).id for chunk_id in chunk_ids})
    _watch_later(run_id)


def _watch_later(run_id: int) -> None:
    if default_task_backend.supports_defer:
        later = timezone.now() + datetime.timedelta(seconds=settings.PORTFOLIO_LEASE_SECONDS)
        watch_run.using(run_after=later).enqueue(run_id)


def requeue_stale(run: PortfolioRun) -> int:
    """Queue again the chunks of ``run`` whose worker went silent, and those whose task a worker took and
    then died before claiming the chunk; how many."""
    again = services.chunks_requeue_stale(run=run, lost=_lost_chunks(run))
    services.chunks_mark_queued(tasks={chunk_id: work_out_chunk.enqueue(chunk_id).id for chunk_id in again})
    return len(again)


def _lost_chunks(run: PortfolioRun) -> list[int]:
    """Waiting chunks whose task a worker took more than a lease ago without the chunk ever being claimed:
    that worker died between the two."""
    waiting = services.waiting_tasks(run)
    return [waiting[task_id] for task_id in tasks_taken_before(work_out_chunk, waiting)]


@task()
def watch_run(run_id: int) -> int:
    run = PortfolioRun.objects.filter(pk=run_id).first()
    if run is None or run.status not in OPEN_STATUSES:
        return 0
    again = requeue_stale(run)
    run.refresh_from_db(fields=["status"])
    if run.status in OPEN_STATUSES:
        _watch_later(run_id)
    return again


@task()
def work_out_chunk(chunk_id: int) -> dict:
    items = services.chunk_claim(chunk_id=chunk_id)
    if items is None:
        return {"chunk": chunk_id, "written": False}
    with Heartbeat(lambda: services.chunk_beat(chunk_id=chunk_id), f"chunk {chunk_id}"):
        results, engine_seconds = answer_chunk(items)
    written = services.chunk_finish(chunk_id=chunk_id, results=results, engine_seconds=engine_seconds)
    run = PortfolioRun.objects.filter(chunks__pk=chunk_id).first() if written else None
    if run is not None and run.status in OPEN_STATUSES:
        requeue_stale(run)
    return {"chunk": chunk_id, "written": written, "engine_seconds": engine_seconds}


def answer_chunk(items) -> tuple[list[PortfolioResult], float]:
    """Every item's result row (unsaved), and the seconds spent inside the engine.

    Each item is priced by the engine's cost model first (``answer_items`` prices every item before any
    work); one over ``PORTFOLIO_ITEM_CAP`` gets its reason and is not run. Laws are built once per chunk
    and shared by the items that repeat them.
    """
    began = time.perf_counter()
    built, reasons, laws = [], {}, item_specs.Laws()
    for item in items:
        engine_item, reasons[item.pk] = item_specs.built(item.spec, laws)
        if engine_item is not None:
            built.append((item, engine_item))
    outcomes = pf.answer_items([engine_item for _, engine_item in built], cap=settings.PORTFOLIO_ITEM_CAP)
    engine_seconds = time.perf_counter() - began  # laws, prices and answers: all inside walkmath
    answers = {item.pk: outcome for (item, _), outcome in zip(built, outcomes, strict=True)}
    results = []
    for item in items:
        outcome = answers.get(item.pk)
        if outcome is None or outcome.answer is None:
            reason = reasons.get(item.pk) or outcome.reason
            results.append(PortfolioResult(item=item, run_id=item.run_id, answered=False, reason=reason))
            continue
        figures = item_specs.figures(item.spec, outcome.answer)
        results.append(PortfolioResult(item=item, run_id=item.run_id, answered=True, **vars(figures)))
    return results, engine_seconds
