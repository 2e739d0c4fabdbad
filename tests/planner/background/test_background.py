"""Saved plans over the page's cap but within the background cap: queued, worked out by a worker, shown.

The worker is ``manage.py db_worker`` run in this process (``batch=True``), on the database queue. Every
figure a background worker stores is checked against the same plan worked out by a page (with the page's
cap raised): the CSV tables must be equal cell for cell, and the headline equal to the engine's own
forward sweep (``walkmath``, ``outlook``).
"""

import json

import pytest
from django.core.management import call_command
from django.urls import reverse
from django.utils import timezone

from planner import reading, services
from planner.background import services as background
from planner.background.models import BackgroundReading, WorkStatus
from planner.csv_writer import table_csv
from planner.kinds import get_kind
from tests.conftest import KIND_EXAMPLES, example_scenario

pytestmark = pytest.mark.django_db(transaction=True)  # db_worker closes the connection it used


@pytest.fixture(autouse=True)
def _small_page_cap(settings):
    """Pages take at most 1,000 work units, so every example plan is too large for them; workers take any."""
    settings.TASKS = {"default": {"BACKEND": "django_tasks_db.DatabaseBackend"}}
    settings.PLANNER_COMPUTE_CAP = 1_000
    settings.PLANNER_BACKGROUND_CAP = 20_000_000_000


def drain():
    call_command("db_worker", batch=True, startup_delay=False, reload=False, interval=0, verbosity=0)


def page_tables(scenario, settings) -> dict[str, str]:
    """Every CSV table of the plan worked out by a page (the page's cap lifted for the comparison)."""
    cap = settings.PLANNER_COMPUTE_CAP
    settings.PLANNER_COMPUTE_CAP = 20_000_000_000
    try:
        found = reading.scenario_reading(scenario=scenario)
    finally:
        settings.PLANNER_COMPUTE_CAP = cap
    return {table: table_csv(found.kind.table_rows(found.result, table), title="t") for table in found.kind.tables}


@pytest.mark.parametrize("kind", sorted(KIND_EXAMPLES))
def test_a_plan_too_large_for_a_page_is_saved_queued_and_worked_out_by_a_worker(kind, owner, settings):
    scenario = example_scenario(owner, kind)
    assert scenario.headline_risk is None and scenario.headline_span == ""  # the worker stores it
    work = BackgroundReading.objects.get(scenario=scenario)
    assert (work.version, work.status, work.task_id != "") == (1, WorkStatus.QUEUED, True)

    drain()
    work.refresh_from_db()
    scenario.refresh_from_db()
    assert work.status == WorkStatus.DONE and work.units > settings.PLANNER_COMPUTE_CAP
    assert work.units_done == work.units
    found, same = background.saved_reading(scenario=scenario)
    assert same == work
    stored = {table: table_csv(found.kind.table_rows(found.result, table), title="t") for table in found.kind.tables}
    assert stored == page_tables(scenario, settings)  # cell for cell what a page works out

    job = get_kind(kind).prepare(scenario.params, scenario.stockout_target, scenario.overflow_target)
    assert (scenario.headline_risk, scenario.headline_span) == job.headline()  # the engine's own sweep
    assert scenario.versions.get().headline_risk == scenario.headline_risk


def test_the_stock_plan_headline_is_the_forward_sweeps_risk(owner, settings):
    """The stored headline of a stock plan is read off the result: it equals the engine's ``outlook``."""
    scenario = example_scenario(owner, "stock_plan")
    drain()
    scenario.refresh_from_db()
    params = scenario.params
    walk = params.walk(list(params.step_laws()))
    assert scenario.headline_risk == float(walk.outlook(params.horizon).stockout[-1])


def test_the_results_page_shows_the_bar_then_the_figures(client, owner):
    scenario = example_scenario(owner, "stock_plan")
    client.force_login(owner)
    page = client.get(scenario.get_absolute_url())
    text = page.content.decode()
    assert page.status_code == 200 and 'id="run-progress"' in text and "Being worked out in the background" in text
    assert 'id="progress-bar"' in text and "progress.js" in text and "plotly" not in text
    status = client.get(reverse("plan_work_status", args=[scenario.pk])).json()
    assert status | {"seconds_left": None} == {
        "status": "queued",
        "status_text": "Waiting for a worker",
        "open": True,
        "percent": 0.0,
        "rows": None,
        "seconds_left": None,
        "message": "",
    }
    drain()
    status = client.get(reverse("plan_work_status", args=[scenario.pk])).json()
    assert (status["status"], status["percent"], status["open"]) == ("done", 100.0, False)
    text = client.get(scenario.get_absolute_url()).content.decode()
    assert 'id="worked-in-background"' in text and 'id="run-progress"' not in text and 'id="fig-' in text
    csv = client.get(reverse("scenario_csv", args=[scenario.pk, next(iter(get_kind("stock_plan").tables))]))
    assert csv.status_code == 200 and csv["Content-Type"].startswith("text/csv")


def test_tables_wait_for_the_worker_and_say_so(client, owner):
    scenario = example_scenario(owner, "stock_plan")
    client.force_login(owner)
    csv = client.get(reverse("scenario_csv", args=[scenario.pk, next(iter(get_kind("stock_plan").tables))]))
    assert csv.status_code == 400
    assert "being worked out in the background (waiting for a worker)" in csv.content.decode()


def test_a_whatif_on_it_is_refused_naming_the_way_out(client, owner):
    scenario = example_scenario(owner, "stock_plan")
    client.force_login(owner)
    answer = client.get(reverse("scenario_outlook_json", args=[scenario.pk]), {"start": 3})
    assert answer.status_code == 400
    assert "Saved as a new plan, these values would be worked out in the background." in json.dumps(answer.json())


def test_a_plan_too_large_for_workers_too_is_refused_and_nothing_saved(owner, settings):
    settings.PLANNER_BACKGROUND_CAP = 1_500
    with pytest.raises(ValueError, match="also beyond what a background worker takes"):
        example_scenario(owner, "stock_plan")
    assert not BackgroundReading.objects.exists()


def test_a_plan_a_page_can_work_out_is_not_queued(owner, settings):
    settings.PLANNER_COMPUTE_CAP = 1_200_000_000
    scenario = example_scenario(owner, "stock_plan")
    assert scenario.headline_risk is not None and not BackgroundReading.objects.exists()


def test_cancel_stops_it_and_start_again_queues_it(client, owner):
    scenario = example_scenario(owner, "stock_plan")
    client.force_login(owner)
    assert client.post(reverse("plan_work_cancel", args=[scenario.pk])).status_code == 302
    work = BackgroundReading.objects.get()
    assert (work.status, work.message) == (WorkStatus.CANCELLED, "Cancelled by olwen.")
    drain()  # the queued task finds the work cancelled and does nothing
    work.refresh_from_db()
    assert work.status == WorkStatus.CANCELLED and work.result is None
    page = client.get(scenario.get_absolute_url()).content.decode()
    assert 'id="restart-work"' in page and "Cancelled by olwen." in page

    assert client.post(reverse("plan_work_restart", args=[scenario.pk])).status_code == 302
    work.refresh_from_db()
    assert work.status == WorkStatus.QUEUED
    drain()
    work.refresh_from_db()
    assert work.status == WorkStatus.DONE


def test_a_running_worker_stops_at_the_next_part_once_cancelled(owner):
    """The job reports each part done; the worker's listener finds the work cancelled and stops it there."""
    scenario = example_scenario(owner, "stock_plan")
    work = BackgroundReading.objects.get()
    claimed = background.work_claim(work_id=work.pk)
    BackgroundReading.objects.filter(pk=work.pk).update(status=WorkStatus.CANCELLED)
    assert not background.work_progress(work_id=work.pk, attempt=claimed.attempts, units_done=1)
    assert scenario.pk == work.scenario_id


def test_a_silent_worker_is_replaced_and_its_late_result_is_not_written(client, owner, settings):
    scenario = example_scenario(owner, "stock_plan")
    work = BackgroundReading.objects.get()
    first = background.work_claim(work_id=work.pk)  # a worker claims it, then goes silent for a lease
    assert first.attempts == 1
    stale = timezone.now() - timezone.timedelta(seconds=settings.PORTFOLIO_LEASE_SECONDS + 1)
    BackgroundReading.objects.filter(pk=work.pk).update(heartbeat=stale)
    client.force_login(owner)
    status = client.get(reverse("plan_work_status", args=[scenario.pk])).json()
    assert status["status"] == "queued"  # the poll queued it again
    drain()
    work.refresh_from_db()
    assert (work.status, work.attempts) == (WorkStatus.DONE, 2)
    late = background.work_finish(
        work_id=work.pk, attempt=first.attempts, result=None, headline=(0.5, "x"), engine_seconds=0.0
    )
    assert late is False  # the first worker's claim passed on: nothing written
    work.refresh_from_db()
    assert work.result is not None and background.stored_reading(work=work, scenario=scenario) is not None


def test_after_the_last_try_it_stops_with_the_reason(client, owner, settings):
    scenario = example_scenario(owner, "stock_plan")
    stale = timezone.now() - timezone.timedelta(seconds=settings.PORTFOLIO_LEASE_SECONDS + 1)
    BackgroundReading.objects.update(
        status=WorkStatus.RUNNING, attempts=settings.PORTFOLIO_MAX_ATTEMPTS, heartbeat=stale
    )
    client.force_login(owner)
    status = client.get(reverse("plan_work_status", args=[scenario.pk])).json()
    assert status["status"] == "failed" and status["open"] is False
    assert status["message"].startswith(
        f"Stopped: the worker on it went silent {settings.PORTFOLIO_MAX_ATTEMPTS} times"
    )


def test_an_edit_queues_the_new_version_and_drops_the_old(owner, small_params):
    scenario = example_scenario(owner, "stock_plan")
    services.scenario_update(
        scenario=scenario,
        title=scenario.title,
        params=small_params,
        stockout_target=0.02,
        overflow_target=0.05,
        based_on=1,
    )
    assert list(BackgroundReading.objects.values_list("version", "status")) == [(2, WorkStatus.QUEUED)]
    drain()
    scenario.refresh_from_db()
    assert scenario.headline_risk is not None and BackgroundReading.objects.get().status == WorkStatus.DONE


def test_a_task_for_an_older_version_does_nothing(owner):
    scenario = example_scenario(owner, "stock_plan")
    work = BackgroundReading.objects.get()
    type(scenario).objects.filter(pk=scenario.pk).update(version=5)  # edited since, by a path that queued nothing
    drain()
    work.refresh_from_db()
    assert (work.status, work.message) == (WorkStatus.FAILED, "The plan was edited or deleted.")


def test_a_result_stored_by_other_code_is_worked_out_again(owner):
    scenario = example_scenario(owner, "stock_plan")
    drain()
    BackgroundReading.objects.update(code_mark="older code")
    found, work = background.saved_reading(scenario=scenario)
    assert found is None and work.status == WorkStatus.QUEUED
    drain()
    found, work = background.saved_reading(scenario=scenario)
    assert found is not None and work.status == WorkStatus.DONE


URLS = [("plan_work_status", "get"), ("plan_work_cancel", "post"), ("plan_work_restart", "post")]


@pytest.mark.parametrize(("name", "method"), URLS)
def test_permissions(name, method, client, cast, scenario):
    """Owner and editors may cancel and start again, viewers only watch; outsiders 404, anonymous to sign-in."""
    url = reverse(name, args=[scenario.pk])
    expected = {
        "owner": {200, 302},
        "editor": {200, 302},
        "group editor": {200, 302},
        "viewer": {200} if method == "get" else {403},
        "group viewer": {200} if method == "get" else {403},
        "outsider": {404},
    }
    for role, person in cast.items():
        client.logout()
        if person is not None:
            client.force_login(person)
        answer = getattr(client, method)(url)
        if person is None:
            assert answer.status_code == 302 and "/accounts/login/" in answer["Location"], role
        else:
            assert answer.status_code in expected[role], role


def test_a_plan_worked_out_by_its_page_has_no_background_work(client, owner, settings):
    settings.PLANNER_COMPUTE_CAP = 1_200_000_000
    scenario = example_scenario(owner, "stock_plan")
    client.force_login(owner)
    status = client.get(reverse("plan_work_status", args=[scenario.pk])).json()
    assert (status["status"], status["open"]) == ("none", False)
    assert client.post(reverse("plan_work_restart", args=[scenario.pk])).status_code == 302
    assert not BackgroundReading.objects.exists()  # nothing to start again


def test_a_read_only_link_shows_the_bar_without_controls(client, owner):
    scenario = example_scenario(owner, "stock_plan")
    _, token = services.link_create(scenario=scenario, days=7)
    text = client.get(reverse("link_results", args=[token])).content.decode()
    assert "Reload this page later" in text and 'id="cancel-work"' not in text and "data-status-url" not in text


@pytest.mark.parametrize("kind", KIND_EXAMPLES)
def test_the_bar_moves_part_by_part(owner, kind):
    """Each part a kind's job reports done raises the share done, priced by the engine's cost model, and every
    part it was allowed is reported, so the bar climbs in steps and reaches 100 % as the job ends."""
    from planner.background import tasks

    scenario = example_scenario(owner, kind)
    work = background.work_claim(work_id=BackgroundReading.objects.get().pk)
    job, allowed = reading.background_job(
        kind=get_kind(kind), params=scenario.params, stockout_target=0.05, overflow_target=0.05
    )
    background.work_progress(work_id=work.pk, attempt=work.attempts, units_done=0, units=sum(allowed.values()))
    listener = tasks._Progress(work.pk, work.attempts, allowed)
    seen = []

    def record(part):
        listener(part)
        work.refresh_from_db()
        seen.append((part, background.work_progress_view(work)["percent"]))

    job.on_part_done = record
    job.run(allowed)
    parts = [part for part, _ in seen]
    assert set(parts) >= set(allowed) and set(parts) <= {part.name for part in job.parts()}
    assert len(set(parts)) >= 2 and len(parts) == len(set(parts))  # in steps, each part once
    shares = [share for part, share in seen if part in allowed]
    assert all(later - earlier > 0 for earlier, later in zip(shares, shares[1:], strict=False))
    assert 0 < shares[0] < 100.0 and shares[-1] == 100.0
    if kind == "stock_plan":
        assert parts[:2] == ["outlook", "risk_by_start"]


def test_the_api_answers_202_with_the_progress_then_200(client, owner):
    scenario = example_scenario(owner, "stock_plan")
    client.force_login(owner)
    url = f"/api/plans/{scenario.pk}/result"
    waiting = client.get(url)
    assert waiting.status_code == 202
    assert waiting.json() == {
        "plan": scenario.pk,
        "version": 1,
        "status": "queued",
        "percent": 0.0,
        "seconds_left": None,
        "message": "",
    }
    drain()
    done = client.get(url)
    assert done.status_code == 200 and done.json()["curve"]["y"][-1] == scenario.__class__.objects.get().headline_risk


def test_a_large_whatif_saved_as_a_new_plan_is_worked_out_in_the_background(client, owner, settings):
    settings.PLANNER_COMPUTE_CAP = 1_200_000_000
    scenario = example_scenario(owner, "stock_plan")  # worked out by its page
    settings.PLANNER_COMPUTE_CAP = 1_000
    client.force_login(owner)
    answer = client.post(
        reverse("scenario_variant_save", args=[scenario.pk]), {"title": "Rye shelf, a month", "horizon": "30"}
    )
    variant = type(scenario).objects.get(title="Rye shelf, a month")
    assert answer.status_code == 302 and answer["Location"] == variant.get_absolute_url()
    assert variant.params.horizon == 30 and variant.headline_risk is None
    assert BackgroundReading.objects.get().scenario == variant
    drain()
    variant.refresh_from_db()
    assert variant.headline_risk is not None
