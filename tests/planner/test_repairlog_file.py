"""Reading a repair log (planner/repairlog_file.py): a good log in dates and in period numbers, and every
malformed kind refused with a message naming the row and column (or the form's field).

CSV framing is RFC 4180's, dates ISO 8601's; the message wording is ours.
"""

import io

import numpy as np
import pytest

from planner.repairlog_file import (
    MAX_POOL,
    RepairLogError,
    canonical_csv,
    read_canonical,
    read_repair_log,
)

GOOD = (
    b"unit,failed,returned\r\nigniter-03,2025-01-14,2025-01-17\r\nigniter-07,2025-02-02,\r\n"
    b"igniter-03,2025-01-20,2025-01-21\r\n"
)
FRAME = {"time_unit": "day", "record_start": "2025-01-01", "record_end": "2025-03-02", "units": 6, "spares": 2}


def read(data: bytes, **changes):
    return read_repair_log(io.BytesIO(data), **(FRAME | changes))


def test_a_good_log_in_dates():
    log = read(GOOD)
    assert log.dated and log.span == 60.0 and log.failures == 3 and log.still_in_repair == 1
    assert log.failed.tolist() == [13.0, 32.0, 19.0]  # days after 1 January (ISO 8601 calendar arithmetic)
    assert log.returned[0] == 16.0 and np.isnan(log.returned[1]) and log.returned[2] == 20.0
    assert log.rows == (2, 3, 4) and log.unit_names[1] == "igniter-07"


def test_a_good_log_in_period_numbers_any_column_order_and_case():
    data = b"Returned,UNIT,failed\n130,tyre-2,100\n,tyre-5,700\n"
    log = read(data, time_unit="hour", record_start="0", record_end="720")
    assert not log.dated and log.failed.tolist() == [100.0, 700.0] and log.returned[0] == 130.0
    assert log.unit_names == ("tyre-2", "tyre-5")


def test_the_canonical_csv_reads_back_to_the_same_log():
    log = read(b'unit,failed,returned\n"oven 1, left",2025-01-14,2025-01-17\n')
    again = read_canonical(canonical_csv(log), **FRAME)
    assert again.unit_names == ("oven 1, left",) and again.failed.tolist() == log.failed.tolist()


HEAD = "unit,failed,returned\n"
MALFORMED = [
    # (name, file, frame changes, words in the message, row, column, field)
    ("empty", b"", {}, "is empty", None, None, None),
    ("blank lines only", b"\n  \n", {}, "is empty", None, None, None),
    ("header only", HEAD.encode(), {}, "no rows of failures", None, None, None),
    ("semicolons", b"unit;failed;returned\na;2025-01-02;\n", {}, "separated by semicolons", 1, None, None),
    ("latin-1", (HEAD + "fo\xf6,2025-01-02,\n").encode("latin-1"), {}, "not UTF-8", 2, None, None),
    ("UTF-16", (HEAD + "a,2025-01-02,\n").encode("utf-16"), {}, "not UTF-8 text", None, None, None),
    ("unknown column", b"unit,failed,back\n", {}, "unknown column 'back'", 1, "3", None),
    ("column twice", b"unit,failed,unit\n", {}, "named twice", 1, "unit", None),
    ("column missing", b"unit,failed\n", {}, "lacks returned", 1, None, None),
    ("stray quote", (HEAD + 'a,2025-01-02,"2025\n').encode(), {}, "not valid CSV", 2, None, None),
    ("too few values", (HEAD + "a,2025-01-02\n").encode(), {}, "has 2 values", 2, None, None),
    ("no unit", (HEAD + ",2025-01-02,\n").encode(), {}, "name the unit", 2, "unit", None),
    ("unit name too long", (HEAD + "x" * 61 + ",2025-01-02,\n").encode(), {}, "longer than 60", 2, "unit", None),
    ("no failure time", (HEAD + "a,,2025-01-03\n").encode(), {}, "when did the unit fail", 2, "failed", None),
    ("not a time", (HEAD + "a,14/01/2025,\n").encode(), {}, "neither a date", 2, "failed", None),
    ("not a calendar date", (HEAD + "a,2025-02-30,\n").encode(), {}, "not a calendar date", 2, "failed", None),
    ("styles mixed", (HEAD + "a,2025-01-02,\nb,40,\n").encode(), {}, "mixes styles", 3, "failed", None),
    ("failure outside", (HEAD + "a,2025-04-01,\n").encode(), {}, "outside the record", 2, "failed", None),
    ("back before failure", (HEAD + "a,2025-01-09,2025-01-05\n").encode(), {}, "before the failure", 2,
     "returned", None),
    ("back after the end", (HEAD + "a,2025-01-09,2025-03-05\n").encode(), {}, "after the record ends", 2,
     "returned", None),
    ("fails while still in repair", (HEAD + "a,2025-01-02,\nb,2025-01-03,2025-01-04\na,2025-01-09,\n").encode(),
     {}, "a fails on 2025-01-09 but it failed on 2025-01-02 (row 2) and is still in repair", 4, "failed", None),
    ("fails before it came back", (HEAD + "a,2025-01-02,2025-01-10\na,2025-01-09,\n").encode(), {},
     "came back only on 2025-01-10", 3, "failed", None),
    ("more in the shop than the pool", (HEAD + "a,2025-01-02,\nb,2025-01-03,\nc,2025-01-04,\n").encode(),
     {"units": 1, "spares": 1}, "3 units are in the shop at once", 4, "failed", None),
    ("too many rows", (HEAD + "a,2025-01-02,2025-01-03\n" * 3).encode(), {"max_rows": 2}, "more than 2 failures", 4,
     None, None),
    ("too large", (HEAD + "a,2025-01-02,2025-01-03\n" * 100).encode(), {"max_bytes": 1000}, "larger than 1,000 bytes",
     None, None, None),
    ("dates counted in hours", GOOD, {"time_unit": "hour"}, "dates, which count in days", None, None, "time_unit"),
    ("unknown time unit", GOOD, {"time_unit": "week"}, "must be one of day, hour", None, None, "time_unit"),
    ("start not a date", GOOD, {"record_start": "0"}, "is not a date written YYYY-MM-DD", None, None, "record_start"),
    ("start missing", GOOD, {"record_start": " "}, "Missing value: give a date", None, None, "record_start"),
    ("end before start", GOOD, {"record_end": "2024-12-01"}, "must end after it starts", None, None, "record_end"),
    ("no units", GOOD, {"units": 0}, "at least 1", None, None, "units"),
    ("pool too large", GOOD, {"units": MAX_POOL, "spares": 1}, f"at most {MAX_POOL:,}", None, None, "spares"),
    ("period number too large", b"unit,failed,returned\na,1000000000,\n", {"time_unit": "hour", "record_start": "0",
     "record_end": "5"}, "beyond 100,000,000", 2, "failed", None),
]  # fmt: skip


@pytest.mark.parametrize(
    ("data", "changes", "words", "row", "column", "field"),
    [case[1:] for case in MALFORMED],
    ids=[case[0] for case in MALFORMED],
)
def test_every_malformed_log_is_refused_naming_where(data, changes, words, row, column, field):
    with pytest.raises(RepairLogError) as refused:
        read(data, **changes)
    error = refused.value
    assert words in str(error)
    assert (error.row, error.column, error.field) == (row, column, field)
    if row:
        assert str(error).startswith(f"Row {row}")


def test_an_oversized_file_is_not_read_whole():
    """Refused after at most max_bytes + one chunk, however large the file."""

    class Endless:
        read_bytes = 0

        def read(self, size):
            self.read_bytes += size
            return b"a" * size

    endless = Endless()
    with pytest.raises(RepairLogError, match="larger than"):
        read_repair_log(endless, max_bytes=2**20, **FRAME)
    assert endless.read_bytes <= 2**20 + 64 * 1024
