"""Reading an analyst's history file: a CSV of stock levels or of units in and out, one row a period.

Two shapes, told apart by the header (column names in any order, any case):

    date,level          the level at the end of each period
    date,in,out         units received (in) and units used or sold (out) in each period

Dates are written YYYY-MM-DD, one row per period (``PERIODS``: a day, or a week
with rows 7 days apart), in date order with no gaps; values are whole numbers.
The file is read from a file object in bounded chunks and refused once it
passes ``max_bytes``, so an oversized upload is never read whole; then decoded
as UTF-8 and parsed by the standard library's ``csv`` with an explicit dialect
(commas, double quotes, strict). The first problem found is raised as
``HistoryFileError`` naming the row (as a spreadsheet numbers it: the header is
row 1) and the column.

No Django here: the upload view, a management command and the tests call
``read_history`` alike; the history is shared by every kind a fit can create.
"""

from __future__ import annotations

import codecs
import csv
import datetime
import io
import re
from dataclasses import dataclass

import numpy as np

# Largest file accepted: about 60,000 rows of "2025-01-31,123456,123456".
MAX_BYTES = 2 * 2**20
# Most rows of data accepted (over a century of days).
MAX_ROWS = 50_000
# Bytes asked of the file object per read.
CHUNK = 64 * 1024
# Days between consecutive rows for each period the reader knows.
PERIODS = {"day": 1, "week": 7}
# Largest size of a level or of units in or out (the engine's largest step).
VALUE_LIMIT = 10**9
SHAPES = {frozenset(("date", "level")): "levels", frozenset(("date", "in", "out")): "movements"}
COLUMNS_TEXT = "date,level (levels) or date,in,out (units in and out)"
OTHER_SEPARATORS = {";": "semicolons", "\t": "tabs", "|": "vertical bars"}

WHOLE = re.compile(r"[+-]?[0-9]+")
ISO_DATE = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}")


class HistoryDialect(csv.Dialect):
    """The one dialect read: RFC 4180 commas and double quotes; a stray quote is an error (strict)."""

    delimiter = ","
    quotechar = '"'
    doublequote = True
    skipinitialspace = False
    lineterminator = "\r\n"
    quoting = csv.QUOTE_MINIMAL
    strict = True


class HistoryFileError(ValueError):
    """A history file refused; ``row`` (1 = the header) and ``column`` name where, when known."""

    def __init__(self, problem: str, *, row: int | None = None, column: str | None = None):
        self.problem, self.row, self.column = problem, row, column
        where = ", ".join(part for part in (row and f"row {row}", column and f"column {column}") if part)
        super().__init__(f"{where[0].upper()}{where[1:]}: {problem}" if where else problem[0].upper() + problem[1:])


@dataclass(frozen=True, eq=False)
class History:
    """A parsed history: ``levels`` (for "levels") or ``arrivals`` and ``demand`` (for "movements").

    ``rows[i]`` is the file row ``dates[i]`` came from.
    """

    shape: str
    period: str
    dates: tuple[datetime.date, ...]
    rows: tuple[int, ...]
    levels: np.ndarray | None = None
    arrivals: np.ndarray | None = None
    demand: np.ndarray | None = None

    @property
    def periods(self) -> int:
        """Number of periods whose change is known: rows - 1 for levels, rows for units in and out."""
        return len(self.dates) - (self.shape == "levels")

    def changes(self) -> np.ndarray:
        """Net change of the level in each period (in - out, or the difference of consecutive levels)."""
        if self.shape == "levels":
            return np.diff(self.levels)
        return self.arrivals - self.demand

    def change_dates(self) -> tuple[datetime.date, ...]:
        """The period each change belongs to (a level series' first row only sets the starting level)."""
        return self.dates[1:] if self.shape == "levels" else self.dates

    def weekdays(self) -> np.ndarray:
        """Weekday of each change's period, 0 = Monday (for a weekday profile of daily data)."""
        return np.array([day.weekday() for day in self.change_dates()], dtype=np.int64)


def read_history(file, *, period: str, max_bytes: int = MAX_BYTES, max_rows: int = MAX_ROWS, name: str = "") -> History:
    """Parse a history from a binary file object (``read(size)`` returning bytes); ``name`` (the
    uploaded file's name) is shown in the messages about the whole file.

    Reads at most ``max_bytes`` + one chunk before refusing an oversized file.
    Raises ``HistoryFileError`` naming the row and column of the first problem.
    """
    if period not in PERIODS:
        raise HistoryFileError(f"the period must be one of {', '.join(PERIODS)}; got {period!r}", column="period")
    name = f"the file {name}" if name else "the file"
    text = _decode(_read_bounded(file, max_bytes, name), name)
    reader = csv.reader(io.StringIO(text, newline=""), dialect=HistoryDialect)
    try:
        columns = _header(reader)
        shape = SHAPES[frozenset(columns)]
        dates, rows, values = _rows(reader, columns, period, max_rows)
    except csv.Error as error:
        raise HistoryFileError(f"the file is not valid CSV ({error})", row=reader.line_num) from None
    if not dates:
        raise HistoryFileError("the file has a header but no rows of data")
    if shape == "levels" and len(dates) < 2:
        raise HistoryFileError("a level history needs at least two rows (the first only sets the starting level)")
    arrays = {column: np.array(values[column], dtype=np.int64) for column in columns if column != "date"}
    if shape == "levels":
        return History(shape, period, tuple(dates), tuple(rows), levels=arrays["level"])
    return History(shape, period, tuple(dates), tuple(rows), arrivals=arrays["in"], demand=arrays["out"])


def _read_bounded(file, max_bytes: int, name: str) -> bytes:
    """The file's bytes, read ``CHUNK`` at a time; refused as soon as they pass ``max_bytes``."""
    parts, size = [], 0
    while True:
        chunk = file.read(CHUNK)
        if not chunk:
            break
        if not isinstance(chunk, (bytes, bytearray)):
            raise TypeError("read_history needs a file opened in binary mode (read() must return bytes)")
        size += len(chunk)
        if size > max_bytes:
            raise HistoryFileError(
                f"{name} is larger than {_size(max_bytes)}, the most a history may be; "
                "send a shorter stretch of it, or weekly rows"
            )
        parts.append(chunk)
    return b"".join(parts)


def _size(count: int) -> str:
    return f"{count / 2**20:g} MB" if count >= 2**20 else f"{count:,} bytes"


def _decode(data: bytes, name: str) -> str:
    if not data.strip():
        raise HistoryFileError(f"{name} is empty")
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)) or b"\x00" in data:
        raise HistoryFileError(
            f"{name} is not UTF-8 text (it holds zero bytes: UTF-16 text or not a text file); "
            "save it as CSV (comma-separated) in UTF-8"
        )
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as error:
        row = data[: error.start].count(b"\n") + 1
        raise HistoryFileError(
            f"byte 0x{data[error.start]:02x} is not UTF-8 text; save the file as CSV in UTF-8", row=row
        ) from None


def _header(reader) -> list[str]:
    for fields in reader:
        if _blank(fields):
            continue
        _check_separator(fields, reader.line_num)
        columns = [field.strip().lower() for field in fields]
        for index, column in enumerate(columns):
            if column not in ("date", "level", "in", "out"):
                raise HistoryFileError(
                    f"unknown column {fields[index].strip()!r}; the header must name {COLUMNS_TEXT}",
                    row=reader.line_num, column=str(index + 1),
                )  # fmt: skip
            if column in columns[:index]:
                raise HistoryFileError(f"column {column!r} is named twice", row=reader.line_num, column=column)
        if frozenset(columns) not in SHAPES:
            raise HistoryFileError(
                f"the header names {','.join(columns)}; it must name {COLUMNS_TEXT}", row=reader.line_num
            )
        return columns
    raise HistoryFileError("the file holds only blank lines")


def _blank(fields: list[str]) -> bool:
    return all(not field.strip() for field in fields)


def _check_separator(fields: list[str], row: int) -> None:
    if len(fields) == 1:
        for mark, words in OTHER_SEPARATORS.items():
            if mark in fields[0]:
                raise HistoryFileError(
                    f"the values are separated by {words}; this reader expects commas "
                    "(save the file as CSV, comma-separated)",
                    row=row,
                )


def _rows(reader, columns: list[str], period: str, max_rows: int):
    dates: list[datetime.date] = []
    rows: list[int] = []
    values = {column: [] for column in columns if column != "date"}
    for fields in reader:
        row = reader.line_num
        if _blank(fields):
            continue
        if len(dates) == max_rows:
            raise HistoryFileError(f"the file has more than {max_rows:,} rows of data, the most a history may have",
                                   row=row)  # fmt: skip
        if len(fields) != len(columns):
            _check_separator(fields, row)
            raise HistoryFileError(f"the row has {len(fields)} values; the header names {len(columns)}", row=row)
        for column, field in zip(columns, fields, strict=True):
            if column == "date":
                day = _date(field, row)
                if dates:
                    _check_step(dates[-1], rows[-1], day, row, period)
                dates.append(day)
            else:
                values[column].append(_whole(field, row, column))
        rows.append(row)
    return dates, rows, values


def _date(field: str, row: int) -> datetime.date:
    text = field.strip()
    if not text:
        raise HistoryFileError("missing value", row=row, column="date")
    if not ISO_DATE.fullmatch(text):
        raise HistoryFileError(f"{text!r} is not a date written YYYY-MM-DD", row=row, column="date")
    try:
        return datetime.date.fromisoformat(text)
    except ValueError:
        raise HistoryFileError(f"{text} is not a calendar date", row=row, column="date") from None


def _check_step(before: datetime.date, before_row: int, day: datetime.date, row: int, period: str) -> None:
    step = PERIODS[period]
    days = (day - before).days
    if days == 0:
        raise HistoryFileError(f"{day} repeats the date of row {before_row}", row=row, column="date")
    if days < 0:
        raise HistoryFileError(
            f"{day} comes before {before} (row {before_row}); rows must be in date order", row=row, column="date"
        )
    if days == step:
        return
    if days % step:
        raise HistoryFileError(
            f"{day} is {days} days after {before} (row {before_row}); rows of weekly data must be "
            "7 days apart",
            row=row, column="date",
        )  # fmt: skip
    first_missing = before + datetime.timedelta(days=step)
    last_missing = day - datetime.timedelta(days=step)
    missing = f"{first_missing}" if first_missing == last_missing else f"{first_missing} to {last_missing}"
    raise HistoryFileError(
        f"gap: no row for {missing} between {before} (row {before_row}) and {day}; "
        f"a history needs one row per {period}",
        row=row, column="date",
    )  # fmt: skip


def _whole(field: str, row: int, column: str) -> int:
    text = field.strip()
    if not text:
        raise HistoryFileError("missing value", row=row, column=column)
    if not WHOLE.fullmatch(text):
        raise HistoryFileError(f"{text!r} is not a whole number", row=row, column=column)
    if len(text.lstrip("+-")) > len(str(VALUE_LIMIT)):  # before int(), which refuses 4,300+ digits
        raise HistoryFileError(f"{text[:12]}... is beyond {VALUE_LIMIT:,} in size", row=row, column=column)
    value = int(text)
    if column in ("in", "out") and value < 0:
        raise HistoryFileError(
            f"{value} is negative; units in and out are counted as 0 or more", row=row, column=column
        )
    if abs(value) > VALUE_LIMIT:
        raise HistoryFileError(f"{value} is beyond {VALUE_LIMIT:,} in size", row=row, column=column)
    return value
