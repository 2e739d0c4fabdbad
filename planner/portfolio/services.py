"""Writes of portfolio runs (``noun_verb``, keyword-only): create from a read file, start, cancel, share,
and the workers' side: claim a chunk, write its pricing's refusals, finish it, hand out again the chunks
of workers that stopped.

Lock order, everywhere: the run's row before a chunk's row (no two transactions
wait on each other). A chunk's refusals and its mark "priced", then its results
and its mark "done", are each written in one transaction; the database holds at
most one result per item (``PortfolioResult.item`` is its primary key), so a
chunk priced or worked out twice is written once: the second worker sees it
priced (done) and writes nothing.
"""

from __future__ import annotations

import json
import math

from django.conf import settings
from django.db import connection, transaction
from django.db.models import Q, Sum
from django.utils import timezone

from planner import json_text
from planner.heartbeat import lease, seconds_left
from planner.portfolio import items as item_specs
from planner.portfolio.items_file import ItemsFile
from planner.portfolio.models import (
    OPEN_STATUSES,
    ChunkStatus,
    PortfolioChunk,
    PortfolioItem,
    PortfolioResult,
    PortfolioRun,
    RunStatus,
)

MIN_CHUNKS = 8
ENDED_CHUNKS = (ChunkStatus.DONE, ChunkStatus.FAILED, ChunkStatus.CANCELLED)  # no worker takes them again


def run_create(*, owner, title: str, parsed: ItemsFile, file_name: str = "") -> PortfolioRun:
    """Store every row of ``parsed``, bad rows with their message. Nothing is queued yet (``run_start``);
    each good row is priced by the engine's cost model on a worker, before its work is queued (building
    the laws a price needs takes about 0.3 ms an item: seconds for a large table, too long for a request)."""
    with transaction.atomic():
        run = PortfolioRun(owner=owner, title=title, file_name=file_name[:255], rows=len(parsed.rows))
        run.refused = len(parsed.bad)
        run.full_clean()
        run.save()
        _store_items(run, parsed.rows)
    return run


ITEM_COLUMNS = ("run", "row", "code", "description", "kind", "period", "spec", "refusal")
RESULT_COLUMNS = ("item", "run", "answered", "reason", *(name for name in item_specs.Figures.__dataclass_fields__))


def _store_items(run: PortfolioRun, rows) -> None:
    """Every row of the file (specs as JSON text, orjson, as the JSON field itself would store them; a
    refused row's spec is NULL)."""
    values = (
        (run.pk, row.row, row.code, row.description, row.kind, row.period, _json(row.spec), row.problem) for row in rows
    )
    _bulk_insert(PortfolioItem, ITEM_COLUMNS, values)


def _store_results(results: list[PortfolioResult]) -> None:
    values = (
        (result.item_id, result.run_id, *(getattr(result, name) for name in RESULT_COLUMNS[2:])) for result in results
    )
    _bulk_insert(PortfolioResult, RESULT_COLUMNS, values)


def _bulk_insert(model, fields: tuple[str, ...], values) -> None:
    """Rows of ``model`` (tuples in the order of ``fields``) in one bulk write inside the caller's
    transaction: COPY on PostgreSQL, one ``executemany`` elsewhere. The ORM's ``bulk_create`` spent 9 of
    its 11 s on 100,000 items preparing each field of each row, and 40 ms on a chunk's 1,000 results."""
    quote = connection.ops.quote_name
    table = quote(model._meta.db_table)
    columns = ", ".join(quote(model._meta.get_field(name).column) for name in fields)
    with connection.cursor() as cursor:
        if connection.vendor == "postgresql":
            with cursor.copy(f"COPY {table} ({columns}) FROM STDIN") as copy:
                for value in values:
                    copy.write_row(value)
            return
        marks = ", ".join(["%s"] * len(fields))
        cursor.executemany(f"INSERT INTO {table} ({columns}) VALUES ({marks})", list(values))


def _json(spec) -> str | None:
    return None if spec is None else json_text.dumps(spec)


def run_start(*, run: PortfolioRun, queue_name: str = "default") -> PortfolioRun:
    """Split the run's good rows into chunks of ``PORTFOLIO_CHUNK_ITEMS`` and queue each chunk's pricing
    (after the transaction commits, so a worker never sees a chunk that is not there yet). A started run
    is left as it is."""
    from planner.portfolio import tasks

    with transaction.atomic():
        run = PortfolioRun.objects.select_for_update().get(pk=run.pk)
        if run.status != RunStatus.READY:
            return run
        rows = run.items.filter(refusal="").order_by("row").values_list("pk", "spec")
        good = sorted(rows, key=lambda row: shared_work_key(row[1]))
        groups = _chunk_groups([(pk, FIFTHS.get(spec["kind"], WHOLE)) for pk, spec in good])
        chunks = PortfolioChunk.objects.bulk_create(
            [PortfolioChunk(run=run, number=n, items=len(group)) for n, group in enumerate(groups)]
        )
        for chunk, group in zip(chunks, groups, strict=True):
            PortfolioItem.objects.filter(pk__in=group).update(chunk=chunk)
        run.queued, run.started = len(good), timezone.now()
        run.status = RunStatus.QUEUED if chunks else RunStatus.FINISHED
        run.finished = None if chunks else run.started
        run.save(update_fields=["queued", "started", "status", "finished"])
        ids = [chunk.pk for chunk in chunks]
        transaction.on_commit(lambda: tasks.enqueue_run(run.pk, ids, queue_name))
    return run


# The fields of an item that decide its laws and sweeps: items alike in them share the engine's work
# (one backward sweep serves every start, floor and target of a stock item's law; one lead-time demand
# every reorder point of a demand and lead time), so a run puts them in the same chunks.
SHARED_FIELDS = ("kind", "demand", "supply", "horizon", "lead_time", "review_period", "units", "failure_rate")


def shared_work_key(spec: dict) -> str:
    """Items with equal keys share the engine's work; the key orders a run's rows into chunks."""
    return json.dumps([spec.get(field) for field in SHARED_FIELDS], sort_keys=True, default=str)


# A reorder item's answer costs about a fifth of a stock or spares item's (bench_portfolio: 0.4 ms against
# about 2 ms of engine time), so a chunk holds five times as many: each chunk's queue and database work
# (claiming, writing its results) is then spread over enough engine work. Weights in fifths of an item.
FIFTHS = {"reorder": 1}
WHOLE = 5


def _chunk_groups(weighted: list[tuple[int, int]]) -> list[list[int]]:
    """Item ids (with their weights in fifths) in chunks of at most PORTFOLIO_CHUNK_ITEMS stock-item
    equivalents, and at least MIN_CHUNKS chunks, so that a small run of slow items is still shared by
    several workers; order kept."""
    total = sum(fifths for _, fifths in weighted)
    size = WHOLE * max(1, min(settings.PORTFOLIO_CHUNK_ITEMS, math.ceil(total / (WHOLE * MIN_CHUNKS))))
    groups, group, filled = [], [], 0
    for pk, fifths in weighted:
        if group and filled + fifths > size:
            groups.append(group)
            group, filled = [], 0
        group.append(pk)
        filled += fifths
    return [*groups, group] if group else groups


def run_cancel(*, run: PortfolioRun) -> PortfolioRun:
    """Stop handing out the run's chunks; chunks already being worked out still write what they find."""
    with transaction.atomic():
        run = PortfolioRun.objects.select_for_update().get(pk=run.pk)
        if run.status not in OPEN_STATUSES:
            return run
        run.chunks.filter(status=ChunkStatus.WAITING).update(status=ChunkStatus.CANCELLED)
        run.status, run.finished = RunStatus.CANCELLED, timezone.now()
        run.save(update_fields=["status", "finished"])
    return run


def run_delete(*, run: PortfolioRun) -> None:
    run.delete()


def run_share(*, run: PortfolioRun, user=None, group=None) -> None:
    """Let ``user`` (or every member of ``group``) see the run and download its results."""
    if user is not None:
        run.viewers.add(user)
    if group is not None:
        run.viewer_groups.add(group)


def run_unshare(*, run: PortfolioRun, user=None, group=None) -> None:
    if user is not None:
        run.viewers.remove(user)
    if group is not None:
        run.viewer_groups.remove(group)


# -- the workers' side ------------------------------------------------------------


def chunk_claim(*, chunk_id: int, priced: bool) -> list[PortfolioItem] | None:
    """Mark the chunk running for this worker and return its items still without a result, in row order;
    None when there is nothing to do (done, cancelled, gone, another worker alive on it, or the chunk is
    not at this stage: ``priced`` False for its pricing, True for its work)."""
    now = timezone.now()
    with transaction.atomic():
        chunk = PortfolioChunk.objects.select_for_update().filter(pk=chunk_id).select_related("run").first()
        if chunk is None or chunk.priced != priced or chunk.status in ENDED_CHUNKS:
            return None
        if chunk.run.status == RunStatus.CANCELLED:
            chunk.status = ChunkStatus.CANCELLED
            chunk.save(update_fields=["status"])
            return None
        if chunk.status == ChunkStatus.RUNNING and chunk.heartbeat and chunk.heartbeat > now - lease():
            return None
        chunk.status, chunk.heartbeat, chunk.attempts = ChunkStatus.RUNNING, now, chunk.attempts + 1
        chunk.save(update_fields=["status", "heartbeat", "attempts"])
    PortfolioRun.objects.filter(pk=chunk.run_id, status=RunStatus.QUEUED).update(status=RunStatus.RUNNING)
    return list(PortfolioItem.objects.filter(chunk_id=chunk_id, result__isnull=True).order_by("row"))


def chunk_priced(*, chunk_id: int, refused: list[PortfolioResult], engine_seconds: float = 0.0) -> bool:
    """Write the refusals of the chunk's items over the cap (or not valid), mark it priced and waiting for its
    work, in one transaction; True when items are left to work out (the caller queues the work in the same
    transaction). False, with nothing written, when another worker priced it first or it was given up;
    False too when every item was refused (the chunk is then done)."""
    with transaction.atomic():
        run, chunk = _lock_run_and_chunk(chunk_id)
        if chunk is None or chunk.priced or chunk.status in ENDED_CHUNKS:
            return False
        _store_results(refused)
        chunk.priced, chunk.unanswered, chunk.engine_seconds = True, len(refused), engine_seconds
        left = len(refused) < chunk.items
        chunk.status, chunk.heartbeat = (ChunkStatus.WAITING, None) if left else (ChunkStatus.DONE, chunk.heartbeat)
        chunk.save(update_fields=["priced", "unanswered", "engine_seconds", "status", "heartbeat"])
        if not left:
            _close_if_complete(run)
    return left


def _lock_run_and_chunk(chunk_id: int) -> tuple[PortfolioRun | None, PortfolioChunk | None]:
    """The chunk's run and the chunk, their rows locked in that order, inside the caller's transaction;
    (None, None) when the chunk is gone."""
    run_id = PortfolioChunk.objects.filter(pk=chunk_id).values_list("run_id", flat=True).first()
    if run_id is None:
        return None, None
    run = PortfolioRun.objects.select_for_update().get(pk=run_id)
    return run, PortfolioChunk.objects.select_for_update().get(pk=chunk_id)


def chunks_mark_queued(*, tasks: dict[int, str]) -> None:
    """Note the queue's task id of each chunk (chunk id -> task id), to find tasks lost with their worker."""
    for chunk_id, task_id in tasks.items():
        PortfolioChunk.objects.filter(pk=chunk_id).update(task_id=task_id)


def waiting_tasks(run: PortfolioRun) -> dict[str, int]:
    """The queue's task id of each waiting chunk of ``run`` (task id -> chunk id)."""
    rows = run.chunks.filter(status=ChunkStatus.WAITING).exclude(task_id="").values_list("task_id", "pk")
    return dict(rows)


def chunk_beat(*, chunk_id: int) -> None:
    """The worker on the chunk is alive (called every third of the lease while it works)."""
    PortfolioChunk.objects.filter(pk=chunk_id, status=ChunkStatus.RUNNING).update(heartbeat=timezone.now())


def chunk_finish(*, chunk_id: int, results: list[PortfolioResult], engine_seconds: float = 0.0) -> bool:
    """Write the results of the chunk's items left after its pricing and mark it done, in one transaction;
    False (nothing written) when the chunk was already written by another worker or given up."""
    with transaction.atomic():
        run, chunk = _lock_run_and_chunk(chunk_id)
        if chunk is None or chunk.status in (ChunkStatus.DONE, ChunkStatus.FAILED):
            return False
        _store_results(results)
        chunk.status, chunk.engine_seconds = ChunkStatus.DONE, chunk.engine_seconds + engine_seconds
        chunk.answered = sum(1 for result in results if result.answered)
        chunk.unanswered += len(results) - chunk.answered
        chunk.save(update_fields=["status", "engine_seconds", "answered", "unanswered"])
        _close_if_complete(run)
    return True


def _close_if_complete(run: PortfolioRun) -> None:
    """With the run's row locked: mark it finished (or failed, when a chunk was given up) once no chunk
    is waiting or running."""
    if run.status not in OPEN_STATUSES:
        return
    if run.chunks.filter(status__in=(ChunkStatus.WAITING, ChunkStatus.RUNNING)).exists():
        return
    given_up = run.chunks.filter(status=ChunkStatus.FAILED).exists()
    run.status = RunStatus.FAILED if given_up else RunStatus.FINISHED
    run.finished = timezone.now()
    run.save(update_fields=["status", "finished"])


def chunks_requeue_stale(*, run: PortfolioRun, lost: list[int] = ()) -> list[int]:
    """Chunks of ``run`` whose worker has shown no sign of life for a lease, and the waiting chunks in
    ``lost`` (their task was taken by a worker that died before it could claim the chunk): queued again
    (their ids are returned; the caller enqueues them), or, after ``PORTFOLIO_MAX_ATTEMPTS`` tries, given
    up with every item's reason written so that no row goes missing."""
    stale_before = timezone.now() - lease()
    with transaction.atomic():
        run = PortfolioRun.objects.select_for_update().get(pk=run.pk)
        silent = Q(heartbeat__lt=stale_before) | Q(heartbeat__isnull=True), Q(status=ChunkStatus.RUNNING)
        stale = list(run.chunks.select_for_update().filter(*silent))
        for chunk in run.chunks.select_for_update().filter(pk__in=lost, status=ChunkStatus.WAITING):
            chunk.attempts += 1  # a try that never reached the chunk
            stale.append(chunk)
        again = []
        for chunk in stale:
            if chunk.attempts >= settings.PORTFOLIO_MAX_ATTEMPTS:
                _give_up(chunk)
            else:
                chunk.status, chunk.heartbeat = ChunkStatus.WAITING, None
                chunk.save(update_fields=["status", "heartbeat", "attempts"])
                again.append(chunk.pk)
        _close_if_complete(run)
    return again


def _give_up(chunk: PortfolioChunk) -> None:
    reason = (
        f"not worked out: the worker on it stopped {chunk.attempts} times (each time it went silent for "
        f"{settings.PORTFOLIO_LEASE_SECONDS:g} seconds); start a new run for these rows"
    )
    items = PortfolioItem.objects.filter(chunk=chunk).exclude(result__isnull=False)
    _store_results([PortfolioResult(item=item, run_id=chunk.run_id, answered=False, reason=reason) for item in items])
    chunk.status, chunk.unanswered = ChunkStatus.FAILED, chunk.items
    chunk.save(update_fields=["status", "unanswered"])


def run_progress(run: PortfolioRun) -> dict:
    """Rows done and failed, the share done, and the time left at the pace so far (two queries)."""
    sums = run.chunks.aggregate(answered=Sum("answered"), unanswered=Sum("unanswered"))
    answered, unanswered = sums["answered"] or 0, sums["unanswered"] or 0
    done = answered + unanswered + (run.refused if run.status != RunStatus.READY else 0)
    worked = answered + unanswered
    left = seconds_left(run.started, worked, run.queued) if run.status in OPEN_STATUSES else None
    return {
        "status": run.status,
        "status_text": run.get_status_display(),
        "open": run.status in OPEN_STATUSES,
        "rows": run.rows,
        "done": done,
        "failed": unanswered + run.refused,
        "percent": 100.0 * done / run.rows if run.rows else 100.0,
        "seconds_left": left,
    }
