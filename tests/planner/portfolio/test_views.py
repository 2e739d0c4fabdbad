"""Portfolio views: every URL for the owner, a viewer (sees, downloads; 403 on changes), an outsider (404)
and anonymous (sign in first); the upload with its size refusal, the progress endpoint, the results
table's filters and paging, and the CSV download (read back with the csv module, RFC 4180)."""

import csv
import io

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile
from django.urls import reverse

from planner.portfolio import services
from planner.portfolio.items_file import read_items
from planner.portfolio.models import PortfolioRun, RunStatus
from tests.conftest import PASSWORD
from tests.planner.portfolio.helpers import HEADER, parsed, portfolio_csv

pytestmark = pytest.mark.django_db

# (url name, method) for every URL that shows or changes one run, and whether a viewer may use it.
RUN_VIEWS = [
    ("portfolio_detail", "get", True),
    ("portfolio_status", "get", True),
    ("portfolio_csv", "get", True),
    ("portfolio_start", "post", False),
    ("portfolio_cancel", "post", False),
    ("portfolio_share", "post", False),
    ("portfolio_delete", "get", False),
    ("portfolio_delete", "post", False),
]


@pytest.fixture(autouse=True)
def _immediate(settings):
    settings.TASKS = {"default": {"BACKEND": "django_tasks.backends.immediate.ImmediateBackend"}}


@pytest.fixture
def run(owner):
    return services.run_create(owner=owner, title="Store shelf", parsed=parsed())


@pytest.fixture
def viewer(django_user_model, run):
    cai = django_user_model.objects.create_user("cai", password=PASSWORD)
    services.run_share(run=run, user=cai)
    return cai


@pytest.mark.parametrize(("name", "method", "_"), RUN_VIEWS)
def test_outsider_gets_404_and_changes_nothing(client, run, outsider, name, method, _):
    client.force_login(outsider)
    response = getattr(client, method)(reverse(name, args=[run.pk]), {"username": "ivo"})
    assert response.status_code == 404
    run.refresh_from_db()
    assert run.status == RunStatus.READY and not run.viewers.exists()


@pytest.mark.parametrize(("name", "method", "allowed"), RUN_VIEWS)
def test_viewer_sees_but_may_not_change(client, run, viewer, name, method, allowed):
    client.force_login(viewer)
    response = getattr(client, method)(reverse(name, args=[run.pk]), {"username": "cai"})
    assert response.status_code == (200 if allowed else 403)
    assert PortfolioRun.objects.get(pk=run.pk).status == RunStatus.READY


def test_viewer_through_a_group_sees_it(client, run, django_user_model):
    from django.contrib.auth.models import Group

    efa = django_user_model.objects.create_user("efa", password=PASSWORD)
    counter = Group.objects.create(name="Counter")
    efa.groups.add(counter)
    services.run_share(run=run, group=counter)
    client.force_login(efa)
    assert client.get(reverse("portfolio_detail", args=[run.pk])).status_code == 200
    assert client.post(reverse("portfolio_start", args=[run.pk])).status_code == 403


@pytest.mark.parametrize(("name", "method", "_"), RUN_VIEWS)
def test_anonymous_is_sent_to_sign_in(client, run, name, method, _):
    response = getattr(client, method)(reverse(name, args=[run.pk]))
    assert response.status_code == 302 and response["Location"].startswith(reverse("login") + "?next=")


@pytest.mark.parametrize("name", ["portfolio_list", "portfolio_new"])
def test_pages_of_no_run_need_sign_in(client, name):
    response = client.get(reverse(name))
    assert response.status_code == 302 and response["Location"].startswith(reverse("login"))


def test_list_shows_own_and_shared_runs_only(client, run, viewer, outsider):
    client.force_login(viewer)
    assert "Store shelf" in client.get(reverse("portfolio_list")).content.decode()
    client.force_login(outsider)
    assert "Store shelf" not in client.get(reverse("portfolio_list")).content.decode()


def test_upload_previews_then_start_works_it_out(client, owner, django_capture_on_commit_callbacks):
    client.force_login(owner)
    upload = SimpleUploadedFile("shelf.csv", portfolio_csv(), content_type="text/csv")
    response = client.post(reverse("portfolio_new"), {"file": upload, "title": "Shelf"})
    run = PortfolioRun.objects.get(title="Shelf")
    assert response.status_code == 302 and response["Location"] == run.get_absolute_url()
    page = client.get(run.get_absolute_url()).content.decode()
    assert "Row 14, column lead time: -3 is out of range; give a whole number from 0 to 365" in page
    assert 'id="start-run"' in page
    with django_capture_on_commit_callbacks(execute=True):  # immediate backend: worked out once committed
        client.post(reverse("portfolio_start", args=[run.pk]))
    status = client.get(reverse("portfolio_status", args=[run.pk])).json()
    assert status["status"] == "finished" and status["done"] == 13 and status["failed"] == 1
    assert status["percent"] == 100.0


def test_a_bad_file_is_refused_with_its_message(client, owner):
    client.force_login(owner)
    upload = SimpleUploadedFile("shelf.csv", b"item,colour\nA,red\n", content_type="text/csv")
    response = client.post(reverse("portfolio_new"), {"file": upload, "title": "Shelf"})
    assert response.status_code == 200 and "unknown column &#x27;colour&#x27;" in response.content.decode()
    assert not PortfolioRun.objects.exists()


def test_a_50_megabyte_upload_is_refused_before_its_body_is_read(client, owner):
    client.force_login(owner)

    class Unreadable(io.RawIOBase):
        def read(self, *args):
            raise AssertionError("the body was read")

    response = client.generic(
        "POST", reverse("portfolio_new"), data=b"", content_type="multipart/form-data; boundary=x",
        CONTENT_LENGTH=str(50 * 2**20), **{"wsgi.input": Unreadable()},
    )  # fmt: skip
    assert response.status_code == 413 and "at most 8 MB" in response.content.decode()


@pytest.fixture
def finished(client, run, django_capture_on_commit_callbacks):
    client.force_login(run.owner)
    with django_capture_on_commit_callbacks(execute=True):
        services.run_start(run=run)
    return run


def test_results_table_filters_and_pages(client, finished, settings):
    url = reverse("portfolio_detail", args=[finished.pk])
    page = client.get(url, {"kind": "spares"}).content.decode()
    assert "SPR-0" in page and "BIN-0" not in page and "ORD-0" not in page
    page = client.get(url, {"show": "not-worked-out"}).content.decode()
    assert "BAD-0" in page and "SPR-1" not in page
    over = client.get(url, {"show": "over"}).content.decode()
    within = client.get(url, {"show": "within"}).content.decode()
    for code in ("BIN-0", "BIN-1", "SPR-0", "SPR-1"):  # a stock or spares row is over or within, never both
        assert (f">{code}<" in over) != (f">{code}<" in within)
    page = client.get(url, {"item": "ORD"}).content.decode()
    assert "4 rows" in page


def test_csv_download_follows_the_filter_and_neutralises_formulas(client, owner, django_capture_on_commit_callbacks):
    text = HEADER + "\n" + "=SUM(A1),reorder,day,2,,,,,,,3,95,,,,,\n"
    run = services.run_create(owner=owner, title="Shelf", parsed=parsed(bad=0))
    other = services.run_create(owner=owner, title="Tricky", parsed=read_items(io.BytesIO(text.encode())))
    with django_capture_on_commit_callbacks(execute=True):
        services.run_start(run=run)
        services.run_start(run=other)
    client.force_login(owner)
    response = client.get(reverse("portfolio_csv", args=[run.pk]), {"kind": "reorder"})
    rows = list(csv.reader(io.StringIO(response.content.decode())))
    assert response["Content-Disposition"] == 'attachment; filename="shelf-results.csv"'
    assert rows[0][:4] == ["row", "item", "description", "kind"] and len(rows) == 5
    assert {row[3] for row in rows[1:]} == {"reorder"} and all(row[5] == "yes" for row in rows[1:])
    tricky = list(csv.reader(io.StringIO(client.get(reverse("portfolio_csv", args=[other.pk])).content.decode())))
    assert tricky[1][1] == "'=SUM(A1)"
