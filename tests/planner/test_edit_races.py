"""Concurrent saves in real threads, each with its own database connection (PostgreSQL; CI runs the suite on it).

Two people open the same plan and save at the same moment, one the name, the other the notes: exactly one
is saved, the other is told and keeps its values, and after it saves again both changes are in. An edit
racing a delete never ends in a server error.
"""

import re
import threading

import pytest
from django.db import connection, connections
from django.test import Client
from django.urls import reverse

from planner.models import Scenario, ScenarioVersion
from planner.services import scenario_create
from tests.planner.test_edit_conflicts import edit_values

pytestmark = [
    pytest.mark.django_db(transaction=True),
    pytest.mark.skipif(
        connection.vendor != "postgresql",
        reason=(
            "needs PostgreSQL (DATABASE_URL): the SQLite test database is an in-memory shared cache, whose "
            "concurrent writers fail at once with 'database table is locked' instead of waiting; "
            "test_edit_conflicts.py covers the same refusals one request at a time on both databases"
        ),
    ),
]

ROUNDS = 50  # two simultaneous conflicting saves each: 100 saves


def in_threads(*jobs):
    """Run each job in its own thread, all released at once; their results, in order."""
    barrier = threading.Barrier(len(jobs))
    results = [None] * len(jobs)

    def run(index, job):
        try:
            results[index] = job(barrier)
        except BaseException as exc:  # reported below, not swallowed by the thread
            results[index] = exc
        finally:
            connections.close_all()  # this thread's own connection

    threads = [threading.Thread(target=run, args=(i, job)) for i, job in enumerate(jobs)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(timeout=120)
    assert not any(isinstance(r, BaseException) for r in results), results
    return results


def browser_for(user) -> Client:
    browser = Client()
    browser.force_login(user)
    return browser


def opened_version(browser, url) -> str:
    return re.search(r'name="version" value="(\d+)"', browser.get(url).content.decode()).group(1)


def test_simultaneous_conflicting_saves_lose_nothing(owner, small_params):
    scenario = scenario_create(owner=owner, kind="stock_plan", title="Rye 0", params=small_params, notes="note 0")
    url = reverse("scenario_edit", args=[scenario.pk])
    saved, refused, errors = 0, 0, []
    for n in range(1, ROUNDS + 1):
        current = Scenario.objects.get(pk=scenario.pk)

        def save(field, value, current=current):
            def job(barrier):
                browser = browser_for(owner)
                version = opened_version(browser, url)
                barrier.wait()  # both forms were opened at the same version; now both are sent
                sent = edit_values(current, version=version, **{field: value})
                return browser, browser.post(url, sent)

            return job

        (title_browser, by_title), (notes_browser, by_notes) = in_threads(
            save("title", f"Rye {n}"), save("notes", f"note {n}")
        )
        statuses = sorted([by_title.status_code, by_notes.status_code])
        errors += [s for s in statuses if s >= 500]
        assert statuses == [302, 409], f"round {n}: {statuses}"
        saved, refused = saved + 1, refused + 1
        # The refused one read what changed and saves both changes on top of the current version.
        loser = notes_browser if by_notes.status_code == 409 else title_browser
        page = (by_notes if loser is notes_browser else by_title).content.decode()
        version = re.search(r'name="version" value="(\d+)"', page).group(1)
        both = edit_values(current, version=version, title=f"Rye {n}", notes=f"note {n}")
        assert loser.post(url, both).status_code == 302
        fresh = Scenario.objects.get(pk=scenario.pk)
        assert (fresh.title, fresh.notes) == (f"Rye {n}", f"note {n}"), f"round {n} lost a change"
        assert fresh.version == 1 + 2 * n
    assert errors == [] and (saved, refused) == (ROUNDS, ROUNDS)
    # Every save that was reported is in the history, one version each, none skipped or doubled.
    numbers = list(
        ScenarioVersion.objects.filter(scenario=scenario).order_by("number").values_list("number", flat=True)
    )
    assert numbers == list(range(1, 2 * ROUNDS + 2))


def test_many_saves_from_one_version_save_exactly_one(owner, small_params):
    scenario = scenario_create(owner=owner, kind="stock_plan", title="Oat bin", params=small_params)
    url = reverse("scenario_edit", args=[scenario.pk])
    editors = 16  # PostgreSQL's default allows 100 connections, shared with whatever else runs

    def save(n):
        def job(barrier):
            browser = browser_for(owner)
            barrier.wait()
            return browser.post(url, edit_values(scenario, title=f"Oat bin {n}")).status_code

        return job

    statuses = in_threads(*(save(n) for n in range(editors)))
    assert sorted(statuses) == [302] + [409] * (editors - 1)
    fresh = Scenario.objects.get(pk=scenario.pk)
    assert fresh.version == 2 and ScenarioVersion.objects.filter(scenario=scenario).count() == 2


def test_an_edit_racing_a_delete_never_fails(owner, small_params):
    for n in range(25):
        scenario = scenario_create(owner=owner, kind="stock_plan", title=f"Crates {n}", params=small_params)

        def edit(barrier, scenario=scenario):
            browser = browser_for(owner)
            barrier.wait()
            return browser.post(reverse("scenario_edit", args=[scenario.pk]), edit_values(scenario, notes="late"))

        def delete(barrier, scenario=scenario):
            browser = browser_for(owner)
            barrier.wait()
            return browser.post(reverse("scenario_delete", args=[scenario.pk]))

        edited, deleted = in_threads(edit, delete)
        assert deleted.status_code == 302
        # saved just before the delete (302), or told the plan is gone with the values kept (404)
        assert edited.status_code in (302, 404), edited.status_code
        if edited.status_code == 404:
            assert b'id="plan-gone"' in edited.content and b"late" in edited.content
    assert not Scenario.objects.exists()


def test_sharing_and_deleting_at_once_never_fail(owner, outsider, small_params):
    """The owner deletes the plan in one window while sharing it, making a link or deleting it again in others."""
    for n in range(10):
        scenario = scenario_create(owner=owner, kind="stock_plan", title=f"Tyres {n}", params=small_params)

        def post(name, data, scenario=scenario):
            def job(barrier):
                browser = browser_for(owner)
                barrier.wait()
                return browser.post(reverse(name, args=[scenario.pk]), data).status_code

            return job

        statuses = in_threads(
            post("scenario_delete", {}),
            post("scenario_delete", {}),
            post("scenario_sharing", {"person": outsider.username, "role": "viewer"}),
            post("scenario_link_create", {"label": "board"}),
        )
        assert statuses[0] in (302, 404) and statuses[1] in (302, 404) and 302 in statuses[:2], statuses
        assert statuses[2] in (302, 404) and statuses[3] in (201, 404), statuses
    assert not Scenario.objects.exists()
