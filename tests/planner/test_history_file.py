"""Reading history files (planner/history_file.py): good files at realistic sizes, and every refusal.

The files follow the co-operative's flour store: sacks at the end of each day (date,level), or
sacks received and used each day (date,in,out). Dates are ISO 8601 calendar dates (YYYY-MM-DD);
CSV framing is RFC 4180's.
"""

from __future__ import annotations

import datetime
import io

import numpy as np
import pytest

from planner.history_file import CHUNK, MAX_BYTES, MAX_ROWS, HistoryFileError, read_history

START = datetime.date(2024, 1, 1)  # a Monday


def daily_movements(days: int = 730, seed: int = 1) -> tuple[bytes, np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    sacks_in, sacks_out = rng.poisson(30, days), rng.poisson(29, days)
    lines = ["date,in,out"] + [
        f"{START + datetime.timedelta(days=i)},{a},{b}"
        for i, (a, b) in enumerate(zip(sacks_in, sacks_out, strict=True))
    ]
    return ("\r\n".join(lines) + "\r\n").encode(), sacks_in, sacks_out


def levels_file(levels, *, step: int = 1, header: str = "date,level") -> bytes:
    lines = [header] + [f"{START + datetime.timedelta(days=step * i)},{v}" for i, v in enumerate(levels)]
    return "\n".join(lines).encode()


def read(data: bytes, period: str = "day", **limits):
    return read_history(io.BytesIO(data), period=period, **limits)


def refusal(data: bytes, period: str = "day", **limits) -> HistoryFileError:
    with pytest.raises(HistoryFileError) as caught:
        read(data, period, **limits)
    return caught.value


# -- good files -------------------------------------------------------------------------------------


def test_two_years_of_daily_movements():
    data, sacks_in, sacks_out = daily_movements()
    history = read(data)
    assert history.shape == "movements" and history.period == "day" and history.periods == 730
    np.testing.assert_array_equal(history.arrivals, sacks_in)
    np.testing.assert_array_equal(history.demand, sacks_out)
    np.testing.assert_array_equal(history.changes(), sacks_in - sacks_out)
    assert history.dates[0] == START and history.dates[-1] == START + datetime.timedelta(days=729)
    assert history.rows[0] == 2 and history.rows[-1] == 731  # spreadsheet rows: the header is row 1
    # weekdays from the calendar (datetime.date.weekday: Monday 0); 2024-01-01 was a Monday
    assert history.weekdays()[:8].tolist() == [0, 1, 2, 3, 4, 5, 6, 0]


def test_two_years_of_daily_levels():
    levels = 150 + np.cumsum(np.random.default_rng(2).poisson(30, 731) - np.random.default_rng(3).poisson(30, 731))
    history = read(levels_file(levels))
    assert history.shape == "levels" and history.periods == 730
    np.testing.assert_array_equal(history.changes(), np.diff(levels))
    assert history.change_dates()[0] == START + datetime.timedelta(days=1)  # the first row sets the start
    assert history.weekdays()[0] == 1


def test_weekly_rows_seven_days_apart():
    history = read(levels_file([40, 35, 38, 30], step=7), period="week")
    assert history.changes().tolist() == [-5, 3, -8] and history.period == "week"


def test_header_in_any_order_and_case_with_bom_quotes_spaces_and_blank_lines():
    data = '\ufeff Out ,DATE,In\r\n"4",2024-01-01, 3\r\n\r\n5,"2024-01-02",0\r\n,,\r\n\r\n'.encode()
    history = read(data)
    assert history.arrivals.tolist() == [3, 0] and history.demand.tolist() == [4, 5]
    assert history.rows == (2, 4)  # the blank line is counted, as a spreadsheet counts it


def test_negative_levels_are_backorders():
    assert read(levels_file([2, -3, 1])).changes().tolist() == [-5, 4]


def test_reads_a_django_upload():
    # the upload view hands over Django's UploadedFile; it is a binary file object like any other
    from django.core.files.uploadedfile import SimpleUploadedFile

    upload = SimpleUploadedFile("flour.csv", levels_file([10, 12, 9]), content_type="text/csv")
    assert read_history(upload, period="day").changes().tolist() == [2, -3]


# -- refusals, each with its message ------------------------------------------------------------------


# Every kind of malformed file the reader refuses, with the start of its message (the upload view
# tests run the same cases through the page: tests/planner/history/test_upload.py).
MALFORMED_FILES = [
    (b"", "The file is empty"),
    (b" \r\n\r\n", "The file is empty"),
    (b"date,level\r\n", "The file has a header but no rows of data"),
    (b"date,level\r\n2024-01-01,5\r\n", "A level history needs at least two rows"),
    (b"date,level\n2024-01-01,5\n2024-01-02,\n", "Row 3, column level: missing value"),
    (b"date,in,out\n2024-01-01,,4\n", "Row 2, column in: missing value"),
    (b"date,in,out\n2024-01-01,3, \n", "Row 2, column out: missing value"),
    (b"date,level\n,5\n", "Row 2, column date: missing value"),
    (b"date,level\n2024-01-01,12.5\n", "Row 2, column level: '12.5' is not a whole number"),
    (b"date,level\n2024-01-01,twelve\n", "Row 2, column level: 'twelve' is not a whole number"),
    (b'date,level\n2024-01-01,"1,200"\n', "Row 2, column level: '1,200' is not a whole number"),
    (b"date,level\n2024-01-01,1_200\n", "Row 2, column level: '1_200' is not a whole number"),
    ("date,level\n2024-01-01,١٢\n".encode(), "Row 2, column level: '١٢' is not a whole number"),
    (b"date,in,out\n2024-01-01,3,-4\n", "Row 2, column out: -4 is negative; units in and out are counted"),
    (b"date,level\n2024-01-01,1000000001\n", "Row 2, column level: 1000000001 is beyond 1,000,000,000"),
    (b"date,level\n2024-01-01," + b"9" * 5000 + b"\n", "Row 2, column level: 999999999999... is beyond"),
    (b"date,level\n01/02/2024,5\n", "Row 2, column date: '01/02/2024' is not a date written YYYY-MM-DD"),
    (b"date,level\n2024-02-30,5\n", "Row 2, column date: 2024-02-30 is not a calendar date"),
    (
        b"date,level\n2024-01-02,5\n2024-01-01,6\n",
        "Row 3, column date: 2024-01-01 comes before 2024-01-02 (row 2); rows must be in date order",
    ),
    (b"date,level\n2024-01-01,5\n2024-01-01,6\n", "Row 3, column date: 2024-01-01 repeats the date of row 2"),
    (
        b"date,level\n2024-01-01,5\n2024-01-02,6\n2024-01-05,6\n",
        "Row 4, column date: gap: no row for 2024-01-03 to 2024-01-04 between 2024-01-02 (row 3) and "
        "2024-01-05; a history needs one row per day",
    ),
    (b"date;level\n2024-01-01;5\n", "Row 1: the values are separated by semicolons; this reader expects commas"),
    (b"date\tlevel\n2024-01-01\t5\n", "Row 1: the values are separated by tabs"),
    (b"date,level\n2024-01-01;5\n", "Row 2: the values are separated by semicolons"),
    (b"date,level\n2024-01-01,5,7\n", "Row 2: the row has 3 values; the header names 2"),
    (b"date,level,note\n", "Row 1, column 3: unknown column 'note'; the header must name date,level"),
    (b"date,in\n", "Row 1: the header names date,in; it must name date,level (levels) or date,in,out"),
    (b"date,level,level\n", "Row 1, column level: column 'level' is named twice"),
    (b'date,level\n2024-01-01,"5"7\n', "Row 2: the file is not valid CSV"),
    (b"date,level\n2024-01-01,5\n2024-01-02,\xe96\n", "Row 3: byte 0xe9 is not UTF-8 text; save the file as CSV"),
    ("date,level\n2024-01-01,5\n".encode("utf-16"), "The file is not UTF-8 text (it holds zero bytes"),
    (b"PK\x03\x04\x14\x00\x06\x00", "The file is not UTF-8 text (it holds zero bytes"),  # a spreadsheet
]


@pytest.mark.parametrize(("data", "message"), MALFORMED_FILES)
def test_malformed_files_are_refused_naming_row_and_column(data, message):
    assert str(refusal(data)).startswith(message)


def test_weekly_rows_not_seven_days_apart():
    error = refusal(b"date,level\n2024-01-01,5\n2024-01-06,6\n", period="week")
    assert str(error) == (
        "Row 3, column date: 2024-01-06 is 5 days after 2024-01-01 (row 2); rows of weekly data must be 7 days apart"
    )
    assert (error.row, error.column) == (3, "date")
    gap = refusal(b"date,level\n2024-01-01,5\n2024-01-15,6\n", period="week")
    assert "gap: no row for 2024-01-08 between 2024-01-01 (row 2) and 2024-01-15" in str(gap)


def test_unknown_period():
    error = refusal(levels_file([1, 2]), period="fortnight")
    assert str(error) == "Column period: the period must be one of day, week; got 'fortnight'"


def test_too_many_rows_at_the_default_limit():
    lines = ["date,in,out"] + [
        f"{datetime.date(1900, 1, 1) + datetime.timedelta(days=i)},3,4" for i in range(MAX_ROWS + 1)
    ]
    data = "\n".join(lines).encode()
    assert len(data) < MAX_BYTES  # refused for its rows, not its size
    error = refusal(data)
    assert str(error) == f"Row {MAX_ROWS + 2}: the file has more than 50,000 rows of data, the most a history may have"
    assert read(data[: data.rindex(b"\n")]).periods == MAX_ROWS  # one row fewer is read


class EndlessHistory(io.RawIOBase):
    """A 50 MB daily history made on demand; counts the bytes handed out, so the test can tell the
    reader stopped early instead of reading it whole."""

    def __init__(self, size: int):
        self.size, self.served, self.day = size, 0, 0
        self.pending = b"date,in,out\r\n"

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


def test_a_50_megabyte_file_is_refused_before_it_is_read_whole():
    upload = EndlessHistory(50 * 2**20)
    with pytest.raises(HistoryFileError) as caught:
        read_history(upload, period="day")
    assert str(caught.value) == (
        "The file is larger than 2 MB, the most a history may be; send a shorter stretch of it, or weekly rows"
    )
    assert upload.served <= MAX_BYTES + CHUNK  # at most one chunk past the limit
    assert upload.served < 50 * 2**20 // 20


def test_a_smaller_byte_limit_names_the_file():
    data, *_ = daily_movements(days=100)
    error = refusal(data, max_bytes=1000, name="flour.csv")
    assert str(error).startswith("The file flour.csv is larger than 1,000 bytes")


def test_a_text_mode_file_is_a_programming_error():
    with pytest.raises(TypeError, match="binary mode"):
        read_history(io.StringIO("date,level\n"), period="day")
