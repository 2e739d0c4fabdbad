"""Reading an uploaded table of items: one row an item, its kind, its numbers, its targets.

The header names the columns (any order, any case; ``COLUMNS`` lists them with
what they hold). Every row names its ``item`` and its ``kind``:

    stock      a stock level over a horizon: demand (and supply) per period, start level,
               floor, capacity; targets for the stock-out and overflow risk
    reorder    a reorder point: demand per period, lead time, review period, service target
    spares     spares for units in service: time between failures, repair time, crews,
               availability target

A column a kind does not use is left empty. The file is read in bounded chunks
and refused once it passes ``max_bytes`` (never read whole); a whole-file
problem (not CSV, no header, an unknown column) refuses the file with
``ItemsFileError``. A problem in one row refuses that row only: it is kept
with its message naming the row (as a spreadsheet numbers it: the header is
row 1), the column and the allowed range, and the other rows go on.

Each good row becomes a JSON-ready ``spec`` (``planner.portfolio.items``
turns it into the engine's item). The checks are the planner's own: count
laws through ``planner.count_law.CountLaw``, percentages through
``planner.form_fields.parse_percent``, ranges through ``walkmath.checks`` and
the kinds' limits.
"""

from __future__ import annotations

import codecs
import csv
import io
import re
from dataclasses import dataclass, field

from django import forms

from planner.count_law import MAX_MEAN, MAX_VARIANCE, CountLaw
from planner.form_fields import parse_percent
from planner.formatting import PERIODS
from walkmath import checks

# The ranges of the kinds' forms (planner/kinds/*/params.py; this package never imports a kind, and a test
# checks that the two agree).
MAX_HORIZON = 3650
MAX_LEVEL = 1_000_000
MAX_LEAD_TIME = 365
MAX_REVIEW_PERIOD = 365
MAX_ORDER_QUANTITY = 1_000_000
MAX_UNITS = 5_000
MAX_SPARES = 5_000
MAX_CREWS = 1_000
MIN_VALUE = 1e-9
MAX_VALUE = 1e9

# Largest file accepted (about 100,000 rows of a dozen numbers); a larger one is refused unread.
MAX_BYTES = 8 * 2**20
MAX_ROWS = 100_000
CHUNK = 64 * 1024
MAX_TEXT = 200  # characters of an item code or description

KINDS = {"stock": "stock", "stock plan": "stock", "reorder": "reorder", "reorder plan": "reorder",
         "spares": "spares", "spares pool": "spares"}  # fmt: skip
KIND_WORDS = {"stock": "stock plan", "reorder": "reorder plan", "spares": "spares pool"}
SPARES_PERIODS = ("hour", "day")
LAWS = {"poisson": "poisson", "negative binomial": "negative_binomial", "fixed": "fixed"}
SHORT_RULES = checks.BELOW_RULES
FULL_RULES = checks.ABOVE_RULES
MEASURES = {"cycle": "cycle", "fill": "fill", "fill rate": "fill"}

# Every column the reader knows, with what it holds (shown on the upload page).
COLUMNS = {
    "item": "item code (required, up to 200 characters)",
    "description": "what the item is (optional)",
    "kind": "stock, reorder or spares",
    "period": "day, week, shift or month (spares: hour or day); default day",
    "demand law": "poisson, negative binomial or fixed; default poisson",
    "demand mean": f"mean demand per period, 0 to {MAX_MEAN:g}",
    "demand variance": "variance of the demand per period (negative binomial only; above the mean)",
    "supply law": "stock: deliveries per period, poisson, negative binomial or fixed (optional)",
    "supply mean": "stock: mean deliveries per period",
    "supply variance": "stock: variance of the deliveries (negative binomial only)",
    "start level": f"stock: units on hand at the start, floor to capacity (at most {MAX_LEVEL:,})",
    "floor": "stock: the lowest level before a stock-out; default 0",
    "capacity": "stock: the most the store holds (optional)",
    "horizon": f"stock: periods looked ahead, 1 to {MAX_HORIZON:,}",
    "stock-out target %": "stock: largest acceptable stock-out risk over the horizon, above 0 and below 100",
    "overflow target %": "stock: largest acceptable overflow risk (needs a capacity; optional)",
    "when short": "stock: backorder, lost or stop; default backorder",
    "when full": "stock: spill or stop; default spill",
    "lead time": f"reorder: periods from order to delivery, 0 to {MAX_LEAD_TIME}",
    "review period": f"reorder: periods between counts, 0 (watched all the time) to {MAX_REVIEW_PERIOD}",
    "service target %": "reorder: the service level to meet, above 0 and below 100",
    "service measure": "reorder: cycle (chance of no stock-out in a cycle) or fill (fill rate); default cycle",
    "order quantity": f"reorder: units per order, 1 to {MAX_ORDER_QUANTITY:,} (needed for a fill rate)",
    "units in service": f"spares: units that must run, 1 to {MAX_UNITS:,}",
    "spares held": f"spares: spare units held now, 0 to {MAX_SPARES:,}",
    "time between failures": (
        f"spares: mean time between failures of one unit, in periods ({MIN_VALUE:g} to {MAX_VALUE:g})"
    ),
    "repair time": f"spares: mean time to repair one unit, in periods ({MIN_VALUE:g} to {MAX_VALUE:g})",
    "repair crews": f"spares: units repaired at once, 1 to {MAX_CREWS:,}; default 1",
    "availability target %": "spares: the availability to meet, above 0 and below 100",
}
WHOLE = re.compile(r"[+-]?[0-9]+")
NUMBER = re.compile(r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")


class ItemsFileError(ValueError):
    """The whole file refused; ``row`` (1 = the header) and ``column`` name where, when known."""

    def __init__(self, problem: str, *, row: int | None = None, column: str | None = None):
        self.problem, self.row, self.column = problem, row, column
        super().__init__(_where(problem, row, column))


class RowError(ValueError):
    """One row refused: the column and what is wrong with it."""

    def __init__(self, problem: str, column: str | None = None):
        self.problem, self.column = problem, column
        super().__init__(problem)


def _where(problem: str, row: int | None, column: str | None) -> str:
    where = ", ".join(part for part in (row and f"row {row}", column and f"column {column}") if part)
    return f"{where[0].upper()}{where[1:]}: {problem}" if where else problem[0].upper() + problem[1:]


@dataclass(frozen=True)
class ItemRow:
    """One row of the file: its code, description, kind and period, and its spec (None when refused)."""

    row: int
    code: str
    description: str
    kind: str
    period: str
    spec: dict | None
    problem: str = ""  # "Row 7, column lead time: ..." when refused


@dataclass
class ItemsFile:
    rows: list[ItemRow] = field(default_factory=list)

    @property
    def good(self) -> list[ItemRow]:
        return [row for row in self.rows if row.spec is not None]

    @property
    def bad(self) -> list[ItemRow]:
        return [row for row in self.rows if row.spec is None]


def read_items(file, *, max_bytes: int = MAX_BYTES, max_rows: int = MAX_ROWS, name: str = "") -> ItemsFile:
    """Parse a table of items from a binary file object; reads at most ``max_bytes`` + one chunk.

    ItemsFileError for a file refused whole; a bad row is kept with its message and the others go on.
    """
    name = f"the file {name}" if name else "the file"
    text = _decode(_read_bounded(file, max_bytes, name), name)
    reader = csv.reader(io.StringIO(text, newline=""), dialect="excel", strict=True)
    parsed = ItemsFile()
    try:
        columns = _header(reader)
        for fields in reader:
            if all(not f.strip() for f in fields):
                continue
            if len(parsed.rows) == max_rows:
                raise ItemsFileError(f"the file has more than {max_rows:,} items, the most a run may have")
            parsed.rows.append(read_row(reader.line_num, columns, fields))
    except csv.Error as error:
        raise ItemsFileError(f"the file is not valid CSV ({error})", row=reader.line_num) from None
    if not parsed.rows:
        raise ItemsFileError("the file has a header but no items")
    return parsed


def _read_bounded(file, max_bytes: int, name: str) -> bytes:
    parts, size = [], 0
    while chunk := file.read(CHUNK):
        size += len(chunk)
        if size > max_bytes:
            raise ItemsFileError(
                f"{name} is larger than {max_bytes / 2**20:g} MB, the most a table of items may be; split it"
            )
        parts.append(chunk)
    return b"".join(parts)


def _decode(data: bytes, name: str) -> str:
    if not data.strip():
        raise ItemsFileError(f"{name} is empty")
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)) or b"\x00" in data:
        raise ItemsFileError(f"{name} is not UTF-8 text; save it as CSV (comma-separated) in UTF-8")
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as error:
        row = data[: error.start].count(b"\n") + 1
        problem = f"byte 0x{data[error.start]:02x} is not UTF-8 text; save the file in UTF-8"
        raise ItemsFileError(problem, row=row) from None


def _name(text: str) -> str:
    return " ".join(text.strip().lower().replace("_", " ").split())


def _header(reader) -> list[str]:
    for fields in reader:
        if all(not f.strip() for f in fields):
            continue
        if len(fields) == 1 and ";" in fields[0]:
            raise ItemsFileError("the values are separated by semicolons; save the file as CSV, comma-separated", row=1)
        columns = [_name(f) for f in fields]
        for index, column in enumerate(columns):
            if column not in COLUMNS:
                raise ItemsFileError(
                    f"unknown column {fields[index].strip()[:40]!r}; the columns are: {', '.join(COLUMNS)}",
                    row=reader.line_num, column=str(index + 1),
                )  # fmt: skip
            if column in columns[:index]:
                raise ItemsFileError(f"column {column!r} is named twice", row=reader.line_num, column=column)
        for needed in ("item", "kind"):
            if needed not in columns:
                raise ItemsFileError(f"the header must name the column {needed!r}", row=reader.line_num)
        return columns
    raise ItemsFileError("the file holds only blank lines")


def read_row(row: int, columns: list[str], fields: list[str]) -> ItemRow:
    """One row as an ItemRow: its spec, or the message naming row, column and the allowed range."""
    cells = dict(zip(columns, (f.strip() for f in fields), strict=False))
    code = cells.get("item", "")[:MAX_TEXT]
    description = cells.get("description", "")[:MAX_TEXT]
    kind = KINDS.get(_name(cells.get("kind", "")), "")
    period = _name(cells.get("period", "")) or "day"
    try:
        if len(fields) != len(columns):
            raise RowError(f"the row has {len(fields)} values; the header names {len(columns)}")
        if not code:
            raise RowError("missing item code", "item")
        if len(cells["item"]) > MAX_TEXT or len(cells.get("description", "")) > MAX_TEXT:
            raise RowError(f"at most {MAX_TEXT} characters", "item" if len(cells["item"]) > MAX_TEXT else "description")
        if not kind:
            raise RowError(f"{cells.get('kind', '')[:20]!r} is not a kind; give stock, reorder or spares", "kind")
        allowed = SPARES_PERIODS if kind == "spares" else tuple(PERIODS)
        if period not in allowed:
            raise RowError(f"{period[:20]!r} is not a period here; give {' or '.join(allowed)}", "period")
        spec = {"kind": kind} | READERS[kind](_Cells(cells))
    except RowError as error:
        return ItemRow(row, code, description, kind, period, None, _where(error.problem, row, error.column))
    return ItemRow(row, code, description, kind, period, spec)


class _Cells:
    """A row's cells, each read with the rule its column states."""

    def __init__(self, cells: dict[str, str]):
        self.cells = cells

    def text(self, column: str) -> str:
        return self.cells.get(column, "")

    def whole(self, column: str, low: int, high: int, default: int | None = None, *, required: bool = True):
        text = self.text(column)
        if not text:
            if default is None and required:
                raise RowError(f"missing value; give a whole number from {low:,} to {high:,}", column)
            return default
        if not WHOLE.fullmatch(text) or len(text) > 15:
            raise RowError(f"{text[:20]!r} is not a whole number; give one from {low:,} to {high:,}", column)
        value = int(text)
        if not low <= value <= high:
            raise RowError(f"{value:,} is out of range; give a whole number from {low:,} to {high:,}", column)
        return value

    def number(self, column: str, low: float, high: float, *, above: bool = False, required: bool = True):
        text = self.text(column)
        span = f"{'above' if above else 'from'} {low:g} {'and at most' if above else 'to'} {high:g}"
        if not text:
            if required:
                raise RowError(f"missing value; give a number {span}", column)
            return None
        if not NUMBER.fullmatch(text):
            raise RowError(f"{text[:20]!r} is not a number; give one {span}", column)
        value = float(text)
        if value < low or (above and value == low) or value > high:
            raise RowError(f"{text} is out of range; give a number {span}", column)
        return value

    def percent(self, column: str, *, required: bool = True):
        text = self.text(column)
        if not text:
            if required:
                raise RowError("missing value; give a percentage above 0 and below 100", column)
            return None
        try:
            return parse_percent(text)
        except forms.ValidationError as error:
            raise RowError(f"{text[:20]!r}: {error.messages[0]}", column) from None

    def choice(self, column: str, allowed: dict | tuple, default: str) -> str:
        text = _name(self.text(column)) or default
        names = allowed if isinstance(allowed, dict) else {a: a for a in allowed}
        if text not in names:
            raise RowError(f"{text[:20]!r} is not allowed; give {' or '.join(names)}", column)
        return names[text]

    def law(self, prefix: str, *, required: bool = True) -> dict | None:
        family = self.choice(f"{prefix} law", LAWS, "poisson")
        mean = self.number(f"{prefix} mean", 0.0, MAX_MEAN, required=required)
        if mean is None:
            return None
        if family == "fixed":
            if mean != int(mean):
                raise RowError(f"a fixed {prefix} must be a whole number; got {mean:g}", f"{prefix} mean")
            return CountLaw("fixed", amount=int(mean)).to_json()
        variance = None
        if family == "negative_binomial":
            variance = self.number(f"{prefix} variance", 0.0, MAX_VARIANCE)
            if variance <= mean:
                raise RowError(
                    f"{variance:g} must exceed the mean ({mean:g}) for a negative binomial law", f"{prefix} variance"
                )
        try:
            return CountLaw(family, mean=mean, variance=variance).to_json()
        except ValueError as error:
            raise RowError(str(error), f"{prefix} law") from None


def _stock(cells: _Cells) -> dict:
    demand = cells.law("demand")
    supply = cells.law("supply", required=False)
    floor = cells.whole("floor", -MAX_LEVEL, MAX_LEVEL, 0)
    capacity = cells.whole("capacity", floor, MAX_LEVEL, required=False)
    start = cells.whole("start level", floor, capacity if capacity is not None else MAX_LEVEL)
    horizon = cells.whole("horizon", 1, MAX_HORIZON)
    stockout = cells.percent("stock-out target %")
    overflow = cells.percent("overflow target %", required=False)
    if overflow is not None and capacity is None:
        raise RowError("an overflow target needs a capacity; give one or leave the target empty", "overflow target %")
    return {
        "demand": demand,
        "supply": supply,
        "start": start,
        "low": floor,
        "high": capacity,
        "horizon": horizon,
        "stockout_target": stockout,
        "overflow_target": overflow,
        "below": cells.choice("when short", SHORT_RULES, checks.DEFAULT_BELOW),
        "above": cells.choice("when full", FULL_RULES, checks.DEFAULT_ABOVE),
    }


def _reorder(cells: _Cells) -> dict:
    demand = cells.law("demand")
    lead = cells.whole("lead time", 0, MAX_LEAD_TIME)
    review = cells.whole("review period", 0, MAX_REVIEW_PERIOD, 0)
    if lead + review < 1:
        raise RowError("must be at least 1 period when the stock is watched all the time (review period 0)",
                       "lead time")  # fmt: skip
    measure = cells.choice("service measure", MEASURES, "cycle")
    quantity = cells.whole("order quantity", 1, MAX_ORDER_QUANTITY, required=measure == "fill")
    return {
        "demand": demand,
        "lead_time": lead,
        "review_period": review,
        "target": cells.percent("service target %"),
        "measure": measure,
        "order_quantity": quantity,
    }


def _spares(cells: _Cells) -> dict:
    between = cells.number("time between failures", MIN_VALUE, MAX_VALUE)
    repair = cells.number("repair time", MIN_VALUE, MAX_VALUE)
    return {
        "units": cells.whole("units in service", 1, MAX_UNITS),
        "spares": cells.whole("spares held", 0, MAX_SPARES),
        "failure_rate": 1.0 / between,
        "repair_rate": 1.0 / repair,
        "crews": cells.whole("repair crews", 1, MAX_CREWS, 1),
        "availability_target": cells.percent("availability target %"),
    }


READERS = {"stock": _stock, "reorder": _reorder, "spares": _spares}
