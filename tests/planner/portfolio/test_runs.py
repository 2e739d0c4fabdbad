"""Portfolio runs on SQLite, the embedded default: the database queue drained by an in-process
``db_worker --batch``; every item's figures equal the engine's own answer for it
(``walkmath.portfolio.answer_items``); items over the cap refused at their price, before any work is
queued; chunks written once; silent workers' chunks handed out again at the stage they were at."""

import datetime

import pytest
from django.core.management import call_command
from django.utils import timezone
from django_tasks_db.models import DBTaskResult

from planner.portfolio import services, tasks
from planner.portfolio.models import ChunkStatus, PortfolioChunk, PortfolioItem, PortfolioResult, RunStatus
from tests.planner.portfolio.helpers import engine_figures, parsed, stored_figures
from walkmath import portfolio as pf
from walkmath import portfolio_engine as pf_engine

pytestmark = pytest.mark.django_db(transaction=True)


@pytest.fixture(autouse=True)
def _small_chunks(settings):
    settings.PORTFOLIO_CHUNK_ITEMS = 3
    settings.TASKS = {"default": {"BACKEND": "django_tasks_db.DatabaseBackend"}}


def _drain():
    call_command("db_worker", batch=True, startup_delay=False, reload=False, interval=0, verbosity=0)


def _price_by_hand(chunk) -> None:
    """What ``tasks.price_chunk`` does, without its task (so no work is queued)."""
    refused, _ = tasks.price_items(services.chunk_claim(chunk_id=chunk.pk, priced=False))
    services.chunk_priced(chunk_id=chunk.pk, refused=refused)


def _tasks_of(stage) -> DBTaskResult:
    return DBTaskResult.objects.filter(task_path=stage.module_path)


def test_run_on_the_database_queue_equals_the_engine_item_by_item(owner):
    run = services.run_create(owner=owner, title="Shelf", parsed=parsed())
    assert run.status == RunStatus.READY and run.rows == 13 and run.refused == 1
    run = services.run_start(run=run)
    assert run.status == RunStatus.QUEUED and sum(run.chunks.values_list("items", flat=True)) == 12
    _drain()
    run.refresh_from_db()
    assert run.status == RunStatus.FINISHED
    results = PortfolioResult.objects.filter(run=run).select_related("item")
    assert results.count() == 12 and all(result.answered for result in results)
    for result in results:
        assert stored_figures(result) == engine_figures(result.item.spec), result.item.code
    progress = services.run_progress(run)
    assert progress["done"] == 13 and progress["failed"] == 1 and progress["percent"] == 100.0
    bad = PortfolioItem.objects.get(run=run, code="BAD-0")
    assert bad.refusal.startswith("Row 14, column lead time: -3 is out of range")


def test_every_row_is_stored_as_read(owner):
    """The bulk write (COPY on PostgreSQL, executemany on SQLite) stores what the ORM would: each row's
    fields, its spec read back equal to the parsed one (floats included), a refused row's reason and no spec."""
    table = parsed(stock=5, reorder=4, spares=3, bad=2)
    run = services.run_create(owner=owner, title="Shelf", parsed=table, file_name="shelf.csv")
    stored = {item.row: item for item in PortfolioItem.objects.filter(run=run)}
    assert len(stored) == len(table.rows) == 14
    for row in table.rows:
        item = stored[row.row]
        got = (item.code, item.description, item.kind, item.period, item.spec, item.refusal, item.chunk_id)
        assert got == (row.code, row.description, row.kind, row.period, row.spec, row.problem, None)
    assert sum(item.spec is None and item.refusal != "" for item in stored.values()) == 2


def test_a_result_row_is_stored_whole():
    # The bulk write of results names its columns: every field of a result, none left to a default.
    assert set(services.RESULT_COLUMNS) == {field.name for field in PortfolioResult._meta.concrete_fields}


def test_an_item_over_the_cap_is_reported_at_its_price_and_never_queued_for_work(owner, settings, monkeypatch):
    settings.PORTFOLIO_ITEM_CAP = 10**6  # below a 20-period stock item's price, above a reorder item's
    swept, worked = [], []
    for name in ("stacked_risks", "room_overflow"):  # every sweep of the batched stock path
        sweep = getattr(pf_engine, name)
        monkeypatch.setattr(pf_engine, name, lambda *a, _sweep=sweep, **k: swept.append(a) or _sweep(*a, **k))
    monkeypatch.setattr(pf, "answer_stock_item", lambda *a, **k: swept.append(a))  # and the item-by-item one
    answer_items = pf.answer_items
    monkeypatch.setattr(pf, "answer_items", lambda items, **k: worked.extend(items) or answer_items(items, **k))
    run = services.run_start(
        run=services.run_create(owner=owner, title="Shelf", parsed=parsed(stock=2, reorder=1, spares=0, bad=0))
    )
    assert run.chunks.count() == 3 and _tasks_of(tasks.price_chunk).count() == 3 and not _tasks_of(tasks.work_out_chunk)
    _drain()
    refused = PortfolioResult.objects.filter(run=run, answered=False)
    assert sorted(refused.values_list("item__code", flat=True)) == ["BIN-0", "BIN-1"]
    assert all(result.reason.startswith("too large to work out:") for result in refused)
    assert PortfolioResult.objects.filter(run=run, answered=True).count() == 1  # the reorder item
    assert swept == []  # priced by the engine's cost model and refused before any stock sweep
    assert [type(item) for item in worked] == [pf.ReorderItem]  # the only item whose work was queued
    assert _tasks_of(tasks.work_out_chunk).count() == 1  # the stock items' chunks never went to work
    run.refresh_from_db()
    assert run.status == RunStatus.FINISHED
    progress = services.run_progress(run)
    assert (progress["done"], progress["failed"]) == (3, 2)


def test_a_chunk_priced_is_reported_before_its_work_and_priced_once(owner, settings):
    settings.PORTFOLIO_ITEM_CAP = 10**6  # below a stock or spares item's price, above a reorder item's
    table = parsed(stock=4, reorder=5, spares=0, bad=0)
    run = services.run_start(run=services.run_create(owner=owner, title="Shelf", parsed=table))
    stock = PortfolioItem.objects.get(run=run, code="BIN-0").chunk
    _price_by_hand(stock)
    stock.refresh_from_db()
    assert stock.priced and stock.unanswered == stock.items > 0  # every stock item refused at its price
    assert stock.status == ChunkStatus.DONE  # no work left to queue
    assert services.run_progress(run)["failed"] == stock.items  # reported before any chunk was worked out
    assert services.chunk_priced(chunk_id=stock.pk, refused=[]) is False  # a second pricer writes nothing
    assert services.chunk_claim(chunk_id=stock.pk, priced=False) is None
    reorder = PortfolioItem.objects.get(run=run, code="ORD-0").chunk
    _price_by_hand(reorder)
    reorder.refresh_from_db()
    assert reorder.priced and reorder.unanswered == 0 and reorder.status == ChunkStatus.WAITING
    assert services.chunk_claim(chunk_id=reorder.pk, priced=False) is None  # a stale pricing task: nothing to do
    assert len(services.chunk_claim(chunk_id=reorder.pk, priced=True)) == reorder.items


def test_a_chunk_finished_twice_is_written_once(owner):
    run = services.run_start(run=services.run_create(owner=owner, title="Shelf", parsed=parsed(bad=0)))
    chunk = run.chunks.first()
    _price_by_hand(chunk)
    items = services.chunk_claim(chunk_id=chunk.pk, priced=True)
    results, _ = tasks.answer_chunk(items)
    assert services.chunk_finish(chunk_id=chunk.pk, results=results) is True
    again, _ = tasks.answer_chunk(items)  # a second worker that thought the first one dead
    assert services.chunk_finish(chunk_id=chunk.pk, results=again) is False
    assert PortfolioResult.objects.filter(item__chunk=chunk).count() == len(items) == chunk.items


def test_a_silent_chunk_is_handed_out_again_then_given_up(owner, settings):
    settings.PORTFOLIO_MAX_ATTEMPTS = 2
    run = services.run_start(run=services.run_create(owner=owner, title="Shelf", parsed=parsed(bad=0)))
    chunk = run.chunks.first()
    silent = timezone.now() - datetime.timedelta(seconds=settings.PORTFOLIO_LEASE_SECONDS + 1)
    assert services.chunk_claim(chunk_id=chunk.pk, priced=False) is not None
    assert services.chunk_claim(chunk_id=chunk.pk, priced=False) is None  # its worker is alive: nobody else takes it
    PortfolioChunk.objects.filter(pk=chunk.pk).update(heartbeat=silent)  # ...then goes silent
    assert services.chunks_requeue_stale(run=run) == [chunk.pk]
    chunk.refresh_from_db()
    assert chunk.status == ChunkStatus.WAITING and chunk.attempts == 1
    assert services.chunk_claim(chunk_id=chunk.pk, priced=False) is not None  # second try
    PortfolioChunk.objects.filter(pk=chunk.pk).update(heartbeat=silent)
    assert services.chunks_requeue_stale(run=run) == []  # given up after two tries
    chunk.refresh_from_db()
    assert chunk.status == ChunkStatus.FAILED
    reasons = PortfolioResult.objects.filter(item__chunk=chunk).values_list("reason", flat=True)
    assert len(reasons) == chunk.items and all(
        reason.startswith("not worked out: the worker on it stopped 2 times") for reason in reasons
    )
    _drain()  # the other chunks, and the stale task of the given-up chunk, which now writes nothing
    run.refresh_from_db()
    assert run.status == RunStatus.FAILED
    assert PortfolioResult.objects.filter(run=run).count() == 12  # every row once: none lost, none twice


def test_cancel_stops_the_waiting_chunks_and_keeps_the_rows_done(owner):
    run = services.run_start(run=services.run_create(owner=owner, title="Shelf", parsed=parsed(bad=0)))
    first = run.chunks.first()
    _price_by_hand(first)
    services.chunk_finish(
        chunk_id=first.pk, results=tasks.answer_chunk(services.chunk_claim(chunk_id=first.pk, priced=True))[0]
    )
    run = services.run_cancel(run=run)
    _drain()
    assert run.status == RunStatus.CANCELLED
    assert PortfolioResult.objects.filter(run=run).count() == first.items
    assert set(run.chunks.exclude(pk=first.pk).values_list("status", flat=True)) == {ChunkStatus.CANCELLED}


def test_immediate_backend_works_the_run_out_when_it_starts(owner, settings):
    settings.TASKS = {"default": {"BACKEND": "django_tasks.backends.immediate.ImmediateBackend"}}
    run = services.run_start(run=services.run_create(owner=owner, title="Shelf", parsed=parsed(bad=0)))
    run.refresh_from_db()
    assert run.status == RunStatus.FINISHED and PortfolioResult.objects.filter(run=run, answered=True).count() == 12


def test_a_silent_chunk_is_handed_out_again_at_the_stage_it_was_at(owner, settings):
    run = services.run_start(run=services.run_create(owner=owner, title="Shelf", parsed=parsed(bad=0)))
    pricing, working = run.chunks.all()[:2]
    silent = timezone.now() - datetime.timedelta(seconds=settings.PORTFOLIO_LEASE_SECONDS + 1)
    assert services.chunk_claim(chunk_id=pricing.pk, priced=False) is not None  # its pricing worker dies
    _price_by_hand(working)
    assert services.chunk_claim(chunk_id=working.pk, priced=True) is not None  # its work's worker dies
    PortfolioChunk.objects.filter(pk__in=[pricing.pk, working.pk]).update(heartbeat=silent)
    assert tasks.requeue_stale(run) == 2
    pricing.refresh_from_db()
    working.refresh_from_db()
    assert DBTaskResult.objects.get(id=pricing.task_id).task_path == tasks.price_chunk.module_path
    assert DBTaskResult.objects.get(id=working.task_id).task_path == tasks.work_out_chunk.module_path
    _drain()
    run.refresh_from_db()
    assert run.status == RunStatus.FINISHED and PortfolioResult.objects.filter(run=run, answered=True).count() == 12


def test_a_silent_chunk_goes_back_on_its_runs_queue(owner, settings):
    settings.TASKS = {"default": {"BACKEND": "django_tasks_db.DatabaseBackend", "QUEUES": ["default", "benchmark"]}}
    run = services.run_create(owner=owner, title="Shelf", parsed=parsed(bad=0))
    run = services.run_start(run=run, queue_name="benchmark")
    chunk = run.chunks.first()
    assert services.chunk_claim(chunk_id=chunk.pk, priced=False) is not None  # its pricing worker dies
    silent = timezone.now() - datetime.timedelta(seconds=settings.PORTFOLIO_LEASE_SECONDS + 1)
    PortfolioChunk.objects.filter(pk=chunk.pk).update(heartbeat=silent)
    assert tasks.requeue_stale(run) == 1
    chunk.refresh_from_db()
    again = DBTaskResult.objects.get(id=chunk.task_id)
    assert again.queue_name == "benchmark" and again.task_path == tasks.price_chunk.module_path


def test_a_task_taken_by_a_worker_that_died_before_claiming_its_chunk_is_queued_again(owner, settings):
    run = services.run_start(run=services.run_create(owner=owner, title="Shelf", parsed=parsed(bad=0)))
    chunk = run.chunks.first()
    long_ago = timezone.now() - datetime.timedelta(seconds=settings.PORTFOLIO_LEASE_SECONDS + 1)
    # What db_worker writes when it takes a task; the worker then dies before the task claims the chunk.
    DBTaskResult.objects.filter(id=chunk.task_id).update(status="RUNNING", started_at=long_ago)
    assert tasks.requeue_stale(run) == 1
    chunk.refresh_from_db()
    assert chunk.status == ChunkStatus.WAITING and chunk.attempts == 1
    assert DBTaskResult.objects.get(id=chunk.task_id).status == "READY"  # a new task for it
    _drain()
    run.refresh_from_db()
    assert run.status == RunStatus.FINISHED and PortfolioResult.objects.filter(run=run).count() == 12


def test_chunks_hold_items_alike_and_cheap_items_five_to_one(settings):
    # Items sharing their laws go together (the run sorts them first); a reorder item weighs a fifth.
    settings.PORTFOLIO_CHUNK_ITEMS = 3
    weighted = [(n, 5) for n in range(4)] + [(n, 1) for n in range(4, 14)] + [(14, 5)]
    groups = services._chunk_groups(weighted)
    assert [pk for group in groups for pk in group] == list(range(15))  # every item once, order kept
    # 7 items' worth over at least 8 chunks: one item's worth a chunk, five reorder items together
    assert groups == [[0], [1], [2], [3], list(range(4, 9)), list(range(9, 14)), [14]]
    settings.PORTFOLIO_CHUNK_ITEMS = 200
    big = services._chunk_groups([(n, 1) for n in range(10_000)])
    assert [len(group) for group in big] == [1000] * 10  # 10,000 reorder items: 2,000 items' worth
