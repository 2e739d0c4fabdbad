"""Uploading a history: preview, save, every malformed file refused with the reader's message, nothing saved
on error, and an oversized upload refused before its body is read.

Messages are the reader's own (planner/history_file.py, its cases in tests/planner/test_history_file.py);
CSV framing is RFC 4180's, dates ISO 8601's, multipart bodies RFC 7578's.
"""

import datetime
import io
import json
import re

import numpy as np
import pytest
from django.conf import settings
from django.test import Client
from django.urls import reverse
from django.utils.html import escape

from planner.history.upload import MAX_REQUEST
from planner.history_file import MAX_BYTES
from planner.models import SavedHistory
from tests.planner.history.conftest import START, levels_csv, movements_csv, upload
from tests.planner.test_history_file import MALFORMED_FILES

pytestmark = pytest.mark.django_db


def send(client, data: bytes, *, period: str = "day", title: str = "Rye flour", name: str = "rye.csv"):
    return client.post(reverse("history_new"), {"title": title, "period": period, "file": upload(data, name)})


def save_fields(page: str) -> dict:
    """The preview's save form, as the browser would post it back."""
    form = page[page.index('id="save-form"') :]
    form = form[: form.index("</form>")]
    fields = dict(re.findall(r'<input type="hidden" name="(\w+)" value="([^"]*)"', form))
    fields["title"] = re.search(r'name="title" value="([^"]*)"', form)[1]
    fields["data"] = re.search(r"<textarea[^>]*name=\"data\"[^>]*>\n?(.*?)</textarea>", form, re.S)[1]
    return fields


@pytest.fixture
def signed_in(client, owner):
    client.force_login(owner)
    return client


def test_upload_page_names_the_two_shapes(signed_in):
    page = signed_in.get(reverse("history_new")).content.decode()
    assert "date,level" in page and "date,in,out" in page and 'enctype="multipart/form-data"' in page


def test_a_good_file_is_previewed_and_nothing_is_saved_until_asked(signed_in):
    data = movements_csv()
    response = send(signed_in, data)
    assert response.status_code == 200
    page = response.content.decode()
    assert "84 rows of units in and out" in page and str(START) in page
    # The first rows as in the file (numbers regenerated here with the same seed: numpy's Generator).
    rng = np.random.default_rng(5)
    sacks_in, sacks_out = rng.poisson(12.0, 84), rng.poisson(11.0, 84)
    first_row = f'<td>{START}</td><td class="num">{sacks_in[0]}</td><td class="num">{sacks_out[0]}</td>'
    assert first_row in page
    assert "69 more rows" in page  # 10 first and 5 last rows shown
    figures = json.loads(re.search(r'<script id="figures" type="application/json">(.*?)</script>', page, re.S)[1])
    assert figures["series"]["data"][0]["y"] == sacks_in.tolist()
    assert SavedHistory.objects.count() == 0


def test_saving_the_preview_keeps_exactly_the_rows_read(signed_in, owner):
    page = send(signed_in, movements_csv()).content.decode()
    response = signed_in.post(reverse("history_save"), save_fields(page))
    history = SavedHistory.objects.get()
    assert response.status_code == 302 and response["Location"] == history.get_absolute_url()
    rng = np.random.default_rng(5)
    assert history.series == {"in": rng.poisson(12.0, 84).tolist(), "out": rng.poisson(11.0, 84).tolist()}
    assert (history.owner, history.title, history.period, history.shape) == (owner, "Rye flour", "day", "movements")
    assert history.first_date == START and history.rows == 84 and history.file_name == "rye.csv"


def test_an_empty_name_takes_the_files(signed_in):
    page = send(signed_in, levels_csv(), title="", name="oat-bin 2025.csv").content.decode()
    assert save_fields(page)["title"] == "oat-bin 2025"


def test_weekly_rows(signed_in):
    data = b"date,level\n2025-01-06,40\n2025-01-13,35\n2025-01-20,38\n"
    page = send(signed_in, data, period="week").content.decode()
    assert "3 rows of stock levels" in page and "2 weeks of changes" in page


@pytest.mark.parametrize(
    ("data", "message"),
    [
        (b"date,level\n2025-03-03,40\n2025-03-04,\n", "Row 3, column level: missing value"),
        (b"date;level\n2025-03-03;40\n", "Row 1: the values are separated by semicolons; this reader expects commas"),
        (
            b"date,in,out\n2025-03-03,3,4\n2025-03-06,3,4\n",
            "Row 3, column date: gap: no row for 2025-03-04 to 2025-03-05 between 2025-03-03 (row 2) and 2025-03-06; "
            "a history needs one row per day",
        ),
        (b"", "The file rye.csv is empty"),
    ],
)
def test_a_bad_file_is_shown_with_the_readers_message_and_nothing_saved(signed_in, data, message):
    response = send(signed_in, data)
    page = response.content.decode()
    assert response.status_code == 200
    assert escape(message) in page
    assert 'class="field has-error" data-field="file"' in page  # beside the file field
    assert "Nothing was saved" in page
    assert SavedHistory.objects.count() == 0


@pytest.mark.parametrize(("data", "message"), MALFORMED_FILES)
def test_every_malformed_file_kind_reaches_the_page(signed_in, data, message):
    page = send(signed_in, data).content.decode()
    # Messages about the whole file name the upload ("The file rye.csv is empty"); the others are as read.
    assert escape(message) in page or escape(message.replace("The file ", "The file rye.csv ", 1)) in page
    assert SavedHistory.objects.count() == 0


def test_the_weekly_period_is_checked_too(signed_in):
    page = send(signed_in, b"date,level\n2025-03-03,5\n2025-03-08,6\n", period="week").content.decode()
    assert escape("rows of weekly data must be 7 days apart") in page
    assert SavedHistory.objects.count() == 0


def test_missing_file_and_unknown_period_name_their_fields(signed_in):
    page = signed_in.post(reverse("history_new"), {"title": "x", "period": "fortnight"}).content.decode()
    assert 'data-field="file"' in page and "This field is required." in page
    assert "Select a valid choice. fortnight is not one of the available choices." in page
    assert SavedHistory.objects.count() == 0


def test_a_changed_save_form_is_read_again_and_refused(signed_in):
    fields = save_fields(send(signed_in, movements_csv()).content.decode())
    fields["data"] = fields["data"].replace("2025-03-04", "2025-03-05", 1)  # a day missing, then a repeat
    page = signed_in.post(reverse("history_save"), fields).content.decode()
    assert (
        "Nothing was saved. Row 3, column date: gap: no row for 2025-03-04 between 2025-03-03 (row 2) and 2025-03-05"
        in page
    )
    assert SavedHistory.objects.count() == 0


def test_a_save_without_a_name_shows_the_preview_again(signed_in):
    fields = save_fields(send(signed_in, movements_csv()).content.decode()) | {"title": ""}
    page = signed_in.post(reverse("history_save"), fields).content.decode()
    assert 'id="save-form"' in page and "This field is required." in page
    assert SavedHistory.objects.count() == 0


def test_a_file_just_over_the_readers_limit_is_refused_by_the_reader(signed_in):
    # The request fits the upload limit (file + form room); the reader refuses the file at 2 MB.
    line = b"2025-03-03,1\n"
    data = b"date,level\n" + line * ((MAX_BYTES + 1000) // len(line))
    assert MAX_BYTES < len(data) < MAX_REQUEST - 4096
    page = send(signed_in, data).content.decode()
    assert "The file rye.csv is larger than 2 MB, the most a history may be" in page
    assert SavedHistory.objects.count() == 0


def test_django_keeps_an_accepted_upload_and_the_save_form_in_memory():
    # Django's defaults (docs, "File Uploads" and the DATA_UPLOAD_MAX_MEMORY_SIZE setting): an upload at most
    # FILE_UPLOAD_MAX_MEMORY_SIZE stays in memory, and non-file fields may total DATA_UPLOAD_MAX_MEMORY_SIZE.
    assert MAX_REQUEST <= settings.FILE_UPLOAD_MAX_MEMORY_SIZE  # never a temporary file on disk
    assert MAX_BYTES + 64 * 1024 <= settings.DATA_UPLOAD_MAX_MEMORY_SIZE  # the preview's rows fit the save form


class EndlessUpload(io.RawIOBase):
    """A multipart/form-data body (RFC 7578) with a CSRF token and a 50 MB daily history, made on demand;
    it counts the bytes the server reads from it."""

    BOUNDARY = "rye-flour-boundary"

    def __init__(self, size: int, token: str):
        self.size, self.served, self.day = size, 0, 0
        self.pending = (
            f'--{self.BOUNDARY}\r\nContent-Disposition: form-data; name="csrfmiddlewaretoken"\r\n\r\n{token}\r\n'
            f'--{self.BOUNDARY}\r\nContent-Disposition: form-data; name="period"\r\n\r\nday\r\n'
            f'--{self.BOUNDARY}\r\nContent-Disposition: form-data; name="file"; filename="huge.csv"\r\n'
            "Content-Type: text/csv\r\n\r\ndate,in,out\r\n"
        ).encode()

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:
        while len(self.pending) < len(buffer) and self.served + len(self.pending) < self.size:
            day = datetime.date(1, 1, 1) + datetime.timedelta(days=self.day % 700_000)
            self.pending += f"{day},30,29\r\n".encode()
            self.day += 1
        count = min(len(buffer), len(self.pending), self.size - self.served)
        buffer[:count] = self.pending[:count]
        self.pending = self.pending[count:]
        self.served += count
        return count


def test_a_50_megabyte_upload_is_refused_before_its_body_is_read(owner):
    # CSRF checks enforced, as in production: the middleware would otherwise read the whole body for its token.
    client = Client(enforce_csrf_checks=True)
    client.force_login(owner)
    token = client.get(reverse("history_new")).cookies[settings.CSRF_COOKIE_NAME].value
    size = 50 * 2**20
    body = EndlessUpload(size, token)
    response = client.generic(
        "POST",
        reverse("history_new"),
        **{
            "CONTENT_LENGTH": str(size),
            "CONTENT_TYPE": f"multipart/form-data; boundary={EndlessUpload.BOUNDARY}",
            "wsgi.input": body,
        },
    )
    assert response.status_code == 413
    page = response.content.decode()
    assert "The upload is 50 MB; a history file may be at most 2 MB. Nothing was read or saved." in page
    assert body.served == 0  # not one byte of the body was read
    assert SavedHistory.objects.count() == 0


def test_the_upload_still_checks_the_csrf_token(owner):
    client = Client(enforce_csrf_checks=True)
    client.force_login(owner)
    response = client.post(reverse("history_new"), {"title": "x", "period": "day", "file": upload(levels_csv())})
    assert response.status_code == 403
    token = client.get(reverse("history_new")).cookies[settings.CSRF_COOKIE_NAME].value
    response = client.post(
        reverse("history_new"),
        {"title": "x", "period": "day", "file": upload(levels_csv()), "csrfmiddlewaretoken": token},
    )
    assert response.status_code == 200 and b'id="save-form"' in response.content
    assert SavedHistory.objects.count() == 0
