"""CSV files for every kind (RFC 4180: header row, CRLF, quoted when needed).

Kinds yield a header row and data rows of plain machine numbers (``number``:
``repr`` precision, so a download reproduces the engine's floats exactly).
This module adds the columns every table shares: the scenario, whether the
numbers are the saved plan or a what-if, and the what-if's changed inputs.
User text is guarded against spreadsheet formula injection: a cell starting
with ``=``, ``+``, ``-``, ``@`` (or a tab or carriage return, which some
spreadsheets skip before reading a formula) gets a leading apostrophe, the
neutralising prefix spreadsheets recognise (OWASP, "CSV Injection").
"""

from __future__ import annotations

import csv
import io
from collections.abc import Iterable, Iterator

from django.utils.text import slugify

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
SHARED_HEADER = ["plan version", "what-if changes"]


def neutralise(text: str) -> str:
    """User text made safe to open in a spreadsheet."""
    text = str(text)
    return "'" + text if text.startswith(FORMULA_STARTS) else text


def number(value) -> str:
    return repr(float(value))


def file_name(title: str, table: str, *, whatif: bool = False) -> str:
    """'<title-slug>-<table>.csv', or '<title-slug>-whatif-<table>.csv'; letters, digits and hyphens only."""
    return f"{slugify(title) or 'scenario'}{'-whatif' if whatif else ''}-{table}.csv"


def table_csv(rows: Iterator[list], *, title: str, changes: Iterable[str] = ()) -> str:
    """The CSV text of one table: the kind's rows, the scenario first, the version and changes last.

    ``rows`` yields the header (its first cell names the scenario column) then
    data rows whose first cell is left for the title.
    """
    changes = "; ".join(changes)
    version = "what-if" if changes else "saved plan"
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\r\n")
    writer.writerow(next(rows) + SHARED_HEADER)
    tail = [version, neutralise(changes)]
    safe_title = neutralise(title)
    for row in rows:
        row[0] = safe_title
        writer.writerow(row + tail)
    return buffer.getvalue()
