"""CSV files for every kind (RFC 4180: header row, CRLF, comma-separated).

Kinds yield a header row and data rows of machine numbers (``number``: a float
written with ``repr`` precision, so a download reproduces the engine's floats
exactly) and ints. This module adds the columns every table shares: the
scenario, whether the numbers are the saved plan or a what-if, and the
what-if's changed inputs.

Text and spreadsheets (the rule, also in the README). A spreadsheet reads a cell
that starts with ``=``, ``+``, ``-`` or ``@`` (or a tab, carriage return or line
feed, which some skip first) as a formula, and a formula can fetch addresses or
start programs (OWASP, "CSV Injection"). So:

1. Every text cell is quoted; numbers are not, so spreadsheets still read them
   as numbers. A reader that honours the quotes sees each text cell whole.
2. A reader told to split on another character (semicolon, tab, pipe, space,
   line breaks) may cut a text cell into pieces; every piece, and the whole
   cell, is checked after skipping its leading spaces and double quotes. A
   piece that would start a formula gets an apostrophe (the prefix spreadsheets
   read as "this is text") just before that character: ``x;=1+1`` is written
   ``x;'=1+1``, ``=SUM(A1)`` as ``'=SUM(A1)``.
3. A piece that starts with ``+`` or ``-`` then a digit keeps its text when the
   piece holds none of the characters a formula needs to compute or reach
   anything (``= + - * / ^ & ( ) ! | @ [ ] { } < > % $ # ~ \\``): "-20 C
   freezer" and "Flour silo - winter" stay as typed, "-2+3" becomes "'-2+3".
   Such a piece can only be read as the number it shows.

Nothing is removed: taking out the added apostrophes gives the text back.
"""

from __future__ import annotations

import csv
import io
import numbers
from collections.abc import Iterable, Iterator

from django.utils.text import slugify

SHARED_HEADER = ["plan version", "what-if changes"]
# Characters a spreadsheet may be told to split on (rule 2), and those that start a formula (rule 2, 3).
DELIMITERS = (",", ";", "\t", "|", " ", "\r", "\n")
FORMULA_STARTS = ("=", "@", "\t", "\r", "\n")
SIGNS = ("+", "-")
COMPUTING = frozenset("=+-*/^&()!|@[]{}<>%$#~\\\t\r\n")


def _pieces(text: str) -> Iterator[tuple[int, str]]:
    """(offset, piece): the whole cell, then the pieces a reader splitting on each delimiter would see."""
    yield 0, text
    for delimiter in DELIMITERS:
        offset = 0
        for piece in text.split(delimiter):
            yield offset, piece
            offset += len(piece) + len(delimiter)


def _formula_start(piece: str) -> int | None:
    """Where a formula would start in ``piece`` (rules 2 and 3), or None."""
    body = piece.lstrip(' "')
    if not body:
        return None
    at = len(piece) - len(body)
    if body.startswith(FORMULA_STARTS):
        return at
    if body.startswith(SIGNS):
        rest = body[1:]
        if rest == "" or (rest[0] in "0123456789" and COMPUTING.isdisjoint(rest)):
            return None
        return at
    return None


def neutralise(text: str) -> str:
    """User text made safe to open in a spreadsheet, whatever delimiter it splits on (the rule above)."""
    text = str(text)
    starts = {offset + at for offset, piece in _pieces(text) if (at := _formula_start(piece)) is not None}
    for position in sorted(starts, reverse=True):
        text = text[:position] + "'" + text[position:]
    return text


def number(value) -> float:
    """A machine number for a CSV cell (written unquoted, with ``repr`` precision)."""
    return float(value)


def _cell(value):
    if value is None:
        return ""
    if isinstance(value, numbers.Integral):
        return int(value)
    if isinstance(value, numbers.Real):
        return float(value)
    return neutralise(value)


def file_name(title: str, table: str, *, whatif: bool = False) -> str:
    """'<title-slug>-<table>.csv', or '<title-slug>-whatif-<table>.csv'; letters, digits and hyphens only."""
    return f"{slugify(title) or 'scenario'}{'-whatif' if whatif else ''}-{table}.csv"


def table_csv(rows: Iterator[list], *, title: str, changes: Iterable[str] = ()) -> str:
    """The CSV text of one table: the kind's rows, the scenario first, the version and changes last.

    ``rows`` yields the header (its first cell names the scenario column) then
    data rows whose first cell is left for the title.
    """
    changes = "; ".join(changes)
    tail = ["what-if" if changes else "saved plan", changes]
    buffer = io.StringIO()
    # QUOTE_NONNUMERIC: every str is quoted, ints and floats are not (rule 1).
    writer = csv.writer(buffer, lineterminator="\r\n", quoting=csv.QUOTE_NONNUMERIC)
    writer.writerow([_cell(value) for value in next(rows) + SHARED_HEADER])
    for row in rows:
        row[0] = title
        writer.writerow([_cell(value) for value in row + tail])
    return buffer.getvalue()


def rows_csv(rows: Iterable[list]) -> str:
    """Any table as CSV under the same rules (text quoted and guarded, numbers bare); the first row is the header."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\r\n", quoting=csv.QUOTE_NONNUMERIC)
    for row in rows:
        writer.writerow([_cell(value) for value in row])
    return buffer.getvalue()
