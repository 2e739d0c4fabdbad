"""Reading a repair log: one row per failure of a unit in a pool, and when it came back from repair.

The header names three columns (any order, any case)::

    unit,failed,returned
    igniter-03,2025-01-14,2025-01-17
    igniter-07,2025-02-02,

``unit`` names the unit that failed; ``failed`` is when it failed and
``returned`` when it came back from repair, blank while it is still in repair
when the record ends. Times are dates (YYYY-MM-DD, counted in days) or whole
period numbers (hours or days, as the upload form says), the same style in every
row and in the record's start and end. Rows may come in any order.

The file is read like a history file (``planner.history_file``: bounded chunks
refused past ``max_bytes``, UTF-8, the standard library's ``csv`` with the same
strict dialect); the first problem is raised as ``RepairLogError`` naming the
row (the header is row 1) and the column, or the form's field (``field``) when
the record's start, end, units or spares do not fit the rows.

No Django here: the upload view, the demo loader and the tests call
``read_repair_log`` alike.
"""

from __future__ import annotations

import csv
import datetime
import io
import re
from dataclasses import dataclass

import numpy as np

from planner.history_file import (
    MAX_BYTES,
    OTHER_SEPARATORS,
    HistoryDialect,
    HistoryFileError,
    _blank,
    _decode,
    _read_bounded,
)

# Most failures a log may hold.
MAX_FAILURES = 50_000
# Most units in service plus spares (one repair crew each in a plan made from the log).
MAX_POOL = 1_000
# Largest period number accepted.
MAX_PERIOD = 10**8
MAX_UNIT_NAME = 60
TIME_UNITS = ("day", "hour")
COLUMNS = ("unit", "failed", "returned")
COLUMNS_TEXT = "unit,failed,returned"
WHOLE = re.compile(r"[0-9]+")
ISO_DATE = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}")


class RepairLogError(HistoryFileError):
    """A repair log refused; ``row``/``column`` name where in the file, ``field`` the form's input, when known."""

    def __init__(self, problem: str, *, row: int | None = None, column: str | None = None, field: str | None = None):
        super().__init__(problem, row=row, column=column)
        self.field = field


@dataclass(frozen=True, eq=False)
class RepairLog:
    """A parsed log: times as offsets from the record's start in ``time_unit``s (NaN: still in repair)."""

    time_unit: str
    dated: bool  # dates (counted in days) or period numbers
    record_start: str  # as written
    record_end: str
    units: int
    spares: int
    unit_names: tuple[str, ...]
    failed_text: tuple[str, ...]
    returned_text: tuple[str, ...]  # "" while in repair
    rows: tuple[int, ...]
    failed: np.ndarray
    returned: np.ndarray
    span: float

    @property
    def failures(self) -> int:
        return len(self.rows)

    @property
    def still_in_repair(self) -> int:
        return int(np.isnan(self.returned).sum())


def read_repair_log(
    file,
    *,
    time_unit: str,
    record_start: str,
    record_end: str,
    units: int,
    spares: int,
    max_bytes: int = MAX_BYTES,
    max_rows: int = MAX_FAILURES,
    name: str = "",
) -> RepairLog:
    """Parse a repair log from a binary file object; ``RepairLogError`` naming the row and column of the
    first problem (or the form's field). Reads at most ``max_bytes`` + one chunk of an oversized file."""
    if time_unit not in TIME_UNITS:
        raise RepairLogError(f"the time unit must be one of {', '.join(TIME_UNITS)}; got {time_unit!r}",
                             field="time_unit")  # fmt: skip
    _pool_size(units, spares)
    label = f"the file {name}" if name else "the file"
    try:
        text = _decode(_read_bounded(file, max_bytes, label), label)
    except RepairLogError:
        raise
    except HistoryFileError as error:  # the history reader's own refusals of the bytes, in the same words
        raise RepairLogError(error.problem, row=error.row, column=error.column) from None
    reader = csv.reader(io.StringIO(text, newline=""), dialect=HistoryDialect)
    try:
        columns = _header(reader)
        raw = _rows(reader, columns, max_rows)
    except csv.Error as error:
        raise RepairLogError(f"the file is not valid CSV ({error})", row=reader.line_num) from None
    if not raw:
        raise RepairLogError("the file has a header but no rows of failures")
    dated = bool(ISO_DATE.fullmatch(raw[0][2]))
    if dated and time_unit != "day":
        raise RepairLogError(
            "the file's times are dates, which count in days; choose days, or write period numbers (hours)",
            field="time_unit",
        )
    start = _time(record_start, dated, field="record_start")
    end = _time(record_end, dated, field="record_end")
    if end <= start:
        raise RepairLogError(f"the record must end after it starts ({record_start.strip()})", field="record_end")
    failed = np.empty(len(raw))
    returned = np.full(len(raw), np.nan)
    for index, (row, _unit, failed_text, returned_text) in enumerate(raw):
        failed[index] = _time(failed_text, dated, row=row, column="failed") - start
        if not 0 <= failed[index] <= end - start:
            raise RepairLogError(
                f"{failed_text} is outside the record, {record_start.strip()} to {record_end.strip()}",
                row=row, column="failed",
            )  # fmt: skip
        if returned_text:
            returned[index] = _time(returned_text, dated, row=row, column="returned") - start
            if returned[index] < failed[index]:
                raise RepairLogError(f"{returned_text} is before the failure ({failed_text})", row=row,
                                     column="returned")  # fmt: skip
            if returned[index] > end - start:
                raise RepairLogError(
                    f"{returned_text} is after the record ends ({record_end.strip()}); leave it blank for a unit "
                    "still in repair when the record ends",
                    row=row, column="returned",
                )  # fmt: skip
    rows = tuple(item[0] for item in raw)
    _check_units(raw, failed, returned, rows)
    _check_shop(failed, returned, rows, units, spares, end - start)
    return RepairLog(
        time_unit, dated, record_start.strip(), record_end.strip(), units, spares,
        tuple(item[1] for item in raw), tuple(item[2] for item in raw), tuple(item[3] for item in raw),
        rows, failed, returned, float(end - start),
    )  # fmt: skip


def _pool_size(units, spares) -> None:
    if isinstance(units, bool) or not isinstance(units, int) or units < 1:
        raise RepairLogError(f"units in service must be a whole number of at least 1; got {units!r}", field="units")
    if isinstance(spares, bool) or not isinstance(spares, int) or spares < 0:
        raise RepairLogError(f"spares must be a whole number of at least 0; got {spares!r}", field="spares")
    if units + spares > MAX_POOL:
        raise RepairLogError(
            f"units in service plus spares must be at most {MAX_POOL:,}; got {units + spares:,}", field="spares"
        )


def _header(reader) -> list[str]:
    for fields in reader:
        if _blank(fields):
            continue
        if len(fields) == 1:
            for mark, words in OTHER_SEPARATORS.items():
                if mark in fields[0]:
                    raise RepairLogError(
                        f"the values are separated by {words}; this reader expects commas "
                        "(save the file as CSV, comma-separated)",
                        row=reader.line_num,
                    )
        columns = [field.strip().lower() for field in fields]
        for index, column in enumerate(columns):
            if column not in COLUMNS:
                raise RepairLogError(
                    f"unknown column {fields[index].strip()!r}; the header must name {COLUMNS_TEXT}",
                    row=reader.line_num, column=str(index + 1),
                )  # fmt: skip
            if column in columns[:index]:
                raise RepairLogError(f"column {column!r} is named twice", row=reader.line_num, column=column)
        if set(columns) != set(COLUMNS):
            missing = ", ".join(column for column in COLUMNS if column not in columns)
            raise RepairLogError(f"the header lacks {missing}; it must name {COLUMNS_TEXT}", row=reader.line_num)
        return columns
    raise RepairLogError("the file holds only blank lines")


def _rows(reader, columns: list[str], max_rows: int) -> list[tuple[int, str, str, str]]:
    """(row, unit, failed, returned) for every row, texts stripped; the time style checked row by row."""
    found: list[tuple[int, str, str, str]] = []
    for fields in reader:
        row = reader.line_num
        if _blank(fields):
            continue
        if len(found) == max_rows:
            raise RepairLogError(f"the file has more than {max_rows:,} failures, the most a log may have", row=row)
        if len(fields) != len(columns):
            raise RepairLogError(f"the row has {len(fields)} values; the header names {len(columns)}", row=row)
        values = {column: field.strip() for column, field in zip(columns, fields, strict=True)}
        unit = values["unit"]
        if not unit:
            raise RepairLogError("missing value: name the unit that failed", row=row, column="unit")
        if len(unit) > MAX_UNIT_NAME:
            raise RepairLogError(f"the unit's name is longer than {MAX_UNIT_NAME} characters", row=row, column="unit")
        if not values["failed"]:
            raise RepairLogError("missing value: when did the unit fail?", row=row, column="failed")
        for column in ("failed", "returned"):
            text = values[column]
            if text and not (ISO_DATE.fullmatch(text) or WHOLE.fullmatch(text)):
                raise RepairLogError(f"{text!r} is neither a date written YYYY-MM-DD nor a whole period number",
                                     row=row, column=column)  # fmt: skip
            if text and found and bool(ISO_DATE.fullmatch(text)) != bool(ISO_DATE.fullmatch(found[0][2])):
                style = "dates" if ISO_DATE.fullmatch(found[0][2]) else "period numbers"
                raise RepairLogError(f"{text} mixes styles: the rows above give times as {style}", row=row,
                                     column=column)  # fmt: skip
        found.append((row, unit, values["failed"], values["returned"]))
    return found


def _time(text: str, dated: bool, *, row: int | None = None, column: str | None = None, field: str | None = None):
    """A time as a number: days since 1 January of year 1 for a date, the period number otherwise."""
    text = (text or "").strip()
    where = {"row": row, "column": column, "field": field}
    style = "a date written YYYY-MM-DD" if dated else "a whole period number"
    if not text:
        raise RepairLogError(f"missing value: give {style}, as in the file", **where)
    if dated:
        if not ISO_DATE.fullmatch(text):
            raise RepairLogError(f"{text!r} is not {style} (the file's times are dates)", **where)
        try:
            return float(datetime.date.fromisoformat(text).toordinal())
        except ValueError:
            raise RepairLogError(f"{text} is not a calendar date", **where) from None
    if not WHOLE.fullmatch(text):
        raise RepairLogError(f"{text!r} is not {style} (the file's times are period numbers)", **where)
    if len(text) > 9 or int(text) > MAX_PERIOD:
        raise RepairLogError(f"{text[:12]} is beyond {MAX_PERIOD:,}, the largest period number", **where)
    return float(int(text))


def _check_units(raw, failed: np.ndarray, returned: np.ndarray, rows: tuple[int, ...]) -> None:
    """A unit fails again only after it came back from its last repair."""
    last: dict[str, int] = {}
    for index in np.lexsort((rows, failed)):
        unit = raw[index][1]
        before = last.get(unit)
        if before is not None:
            back = returned[before]
            if np.isnan(back) or back > failed[index]:
                until = "is still in repair" if np.isnan(back) else f"came back only on {raw[before][3]}"
                raise RepairLogError(
                    f"{unit} fails on {raw[index][2]} but it failed on {raw[before][2]} (row {rows[before]}) and "
                    f"{until}",
                    row=rows[index], column="failed",
                )  # fmt: skip
        last[unit] = int(index)


def _check_shop(failed, returned, rows, units: int, spares: int, span: float) -> None:
    """No more units in the shop at once than the units in service plus the spares; the row where it happens."""
    back = np.where(np.isnan(returned), span, returned)
    moments = np.concatenate([back, failed])
    moves = np.concatenate([-np.ones(back.size, dtype=np.int64), np.ones(failed.size, dtype=np.int64)])
    order = np.lexsort((moves, moments))  # a return before a failure at the same moment
    in_shop = np.cumsum(moves[order])
    over = np.flatnonzero(in_shop > units + spares)
    if over.size:
        index = int(order[over[0]] - back.size)
        raise RepairLogError(
            f"with this failure {int(in_shop[over[0]])} units are in the shop at once, more than the "
            f"{units} in service plus {spares} spares stated on the form",
            row=rows[index], column="failed",
        )  # fmt: skip


def canonical_csv(log: RepairLog) -> str:
    """The log as this reader's own CSV (a header, then the rows in the file's order)."""
    lines = [COLUMNS_TEXT] + [
        f"{_quoted(unit)},{failed},{returned}"
        for unit, failed, returned in zip(log.unit_names, log.failed_text, log.returned_text, strict=True)
    ]
    return "\n".join(lines) + "\n"


def _quoted(text: str) -> str:
    if any(mark in text for mark in ',"\r\n'):
        return '"' + text.replace('"', '""') + '"'
    return text


def read_canonical(text: str, **form) -> RepairLog:
    """Read back what ``canonical_csv`` wrote, with the record's start, end, units and spares as saved."""
    return read_repair_log(io.BytesIO(text.encode("utf-8")), **form)
