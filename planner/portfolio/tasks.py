"""Background work of portfolio runs, through Django's Tasks interface (the ``django_tasks`` backport).

Each chunk is queued twice. ``price_chunk`` prices its items through the
engine's cost model (``walkmath.portfolio.item_refusal``): an item over
``PORTFOLIO_ITEM_CAP``, or whose values do not make an item, gets its reason
written there and is never queued for work; the chunk's work is queued in the
same transaction that marks it priced. ``work_out_chunk`` answers the items
left through ``walkmath.portfolio.answer_items`` (which prices each again
before any work, as a guard), then writes the results and marks the chunk done
in one transaction. Pricing runs on the workers, chunk by chunk, in parallel
(building a price's laws takes about 0.3 ms an item: seconds for a large table,
too long for the request that starts the run).

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
from django.db import transaction
from django.utils import timezone
from django_tasks import DEFAULT_TASK_QUEUE_NAME, TaskContext, default_task_backend, task

from planner.heartbeat import Heartbeat, queue_of, tasks_taken_before
from planner.portfolio import items as item_specs
from planner.portfolio import services
from planner.portfolio.models import OPEN_STATUSES, PortfolioChunk, PortfolioResult, PortfolioRun
from walkmath import portfolio as pf


def enqueue_run(run_id: int, chunk_ids: list[int], queue_name: str = DEFAULT_TASK_QUEUE_NAME) -> None:
    """Queue the pricing of every chunk of a run on ``queue_name`` (the benchmark keeps its own; each
    chunk's work follows on the same queue), then the run's watcher (when the backend can run a task later)."""
    pricing = price_chunk.using(queue_name=queue_name)
    services.chunks_mark_queued(tasks={chunk_id: pricing.enqueue(chunk_id).id for chunk_id in chunk_ids})
    _watch_later(run_id)


def _watch_later(run_id: int) -> None:
    if default_task_backend.supports_defer:
        later = timezone.now() + datetime.timedelta(seconds=settings.PORTFOLIO_LEASE_SECONDS)
        watch_run.using(run_after=later).enqueue(run_id)


def requeue_stale(run: PortfolioRun) -> int:
    """Queue again the chunks of ``run`` whose worker went silent, and those whose task a worker took and
    then died before claiming the chunk; how many."""
    again = services.chunks_requeue_stale(run=run, lost=_lost_chunks(run))
    if not again:
        return 0
    chunks = list(PortfolioChunk.objects.filter(pk__in=again).values_list("pk", "priced", "task_id"))
    queue = queue_of(work_out_chunk, chunks[0][2], DEFAULT_TASK_QUEUE_NAME)  # one queue a run: its start's
    stages = {False: price_chunk.using(queue_name=queue), True: work_out_chunk.using(queue_name=queue)}
    tasks = {chunk_id: stages[priced].enqueue(chunk_id).id for chunk_id, priced, _ in chunks}  # each at its stage
    services.chunks_mark_queued(tasks=tasks)
    return len(again)


def _lost_chunks(run: PortfolioRun) -> list[int]:
    """Waiting chunks whose task (pricing or work) a worker took more than a lease ago without the chunk
    ever being claimed: that worker died between the two."""
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


@task(takes_context=True)
def price_chunk(context: TaskContext, chunk_id: int) -> dict:
    items = services.chunk_claim(chunk_id=chunk_id, priced=False)
    if items is None:
        return {"chunk": chunk_id, "priced": False}
    with Heartbeat(lambda: services.chunk_beat(chunk_id=chunk_id), f"chunk {chunk_id}"):
        refused, engine_seconds = price_items(items)
    with transaction.atomic():  # the chunk marked priced and its work queued together, or neither
        if services.chunk_priced(chunk_id=chunk_id, refused=refused, engine_seconds=engine_seconds):
            work = work_out_chunk.using(queue_name=context.task_result.task.queue_name).enqueue(chunk_id)
            services.chunks_mark_queued(tasks={chunk_id: work.id})
    return {"chunk": chunk_id, "priced": True, "refused": len(refused), "engine_seconds": engine_seconds}


def price_items(items) -> tuple[list[PortfolioResult], float]:
    """The refusal rows (unsaved) of the items whose values do not make an engine item or whose price is
    over ``PORTFOLIO_ITEM_CAP``, and the seconds spent inside the engine."""
    began = time.perf_counter()
    refused, laws = [], item_specs.Laws()
    for item in items:
        engine_item, reason = item_specs.built(item.spec, laws)
        reason = reason or pf.item_refusal(engine_item, cap=settings.PORTFOLIO_ITEM_CAP)
        if reason:
            refused.append(PortfolioResult(item=item, run_id=item.run_id, answered=False, reason=reason))
    return refused, time.perf_counter() - began


@task()
def work_out_chunk(chunk_id: int) -> dict:
    items = services.chunk_claim(chunk_id=chunk_id, priced=True)
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

    Items were priced before their work was queued (``price_chunk``); ``answer_items`` prices each again
    before any work, so an item over ``PORTFOLIO_ITEM_CAP`` still gets its reason and is not run. Laws are
    built once per chunk and shared by the items that repeat them.
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
