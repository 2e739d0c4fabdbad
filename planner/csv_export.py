"""CSV files for every table on the results page (RFC 4180: header row, CRLF, quoted when needed).

Numbers are written with ``repr`` precision so a download reproduces the engine's
floats exactly. User text (the scenario title) is guarded against spreadsheet
formula injection: a cell starting with ``=``, ``+``, ``-``, ``@`` (or a tab or
carriage return, which some spreadsheets skip before reading a formula) gets a
leading apostrophe, the neutralising prefix spreadsheets recognise (OWASP,
"CSV Injection").
"""

from __future__ import annotations

import csv
import io

from django.utils.text import slugify

from planner.outlook import StockOutlook

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")

TABLES = {
    "level-law": "level law by period",
    "risk-curves": "risk curves",
    "risk-by-start": "risk by starting level",
}


def neutralise(text: str) -> str:
    """User text made safe to open in a spreadsheet."""
    text = str(text)
    return "'" + text if text.startswith(FORMULA_STARTS) else text


def file_name(title: str, table: str) -> str:
    """'<title-slug>-<table>.csv'; the slug keeps letters, digits and hyphens only."""
    return f"{slugify(title) or 'scenario'}-{table}.csv"


def _number(value) -> str:
    return repr(float(value))


def level_law_rows(result: StockOutlook):
    yield ["scenario", "period", "level [units]", "probability [level at period, path not stopped]"]
    probs = result.level_probs
    for period in range(probs.shape[0]):
        for level, prob in zip(result.outlook.levels, probs[period], strict=True):
            yield [None, period, int(level), _number(prob)]


def risk_curve_rows(result: StockOutlook):
    yield [
        "scenario",
        "period",
        "stock-out risk [probability of at least one by period]",
        "overflow risk [probability of at least one by period]",
        "expected lost [units in period]",
        "expected spilled [units in period]",
        "expected stock-out periods [periods, cumulative]",
    ]
    out = result.outlook
    for period in range(result.horizon + 1):
        yield [
            None,
            period,
            _number(out.stockout[period]),
            _number(out.overflow[period]),
            _number(out.lost_units[period]),
            _number(out.spilled_units[period]),
            _number(out.stockout_periods[period]),
        ]


def risk_by_start_rows(result: StockOutlook):
    yield [
        "scenario",
        "start level [units]",
        f"stock-out risk by period {result.horizon} [probability]",
        f"overflow risk by period {result.horizon} [probability]",
    ]
    risk = result.start_risk
    for start, stockout, overflow in zip(risk.starts, risk.stockout, risk.overflow, strict=True):
        yield [None, int(start), _number(stockout), _number(overflow)]


ROWS = {"level-law": level_law_rows, "risk-curves": risk_curve_rows, "risk-by-start": risk_by_start_rows}


def table_csv(result: StockOutlook, table: str, title: str) -> str:
    """The CSV text of one table; every data row starts with the (neutralised) scenario title."""
    if table not in ROWS:
        raise ValueError(f"table must be one of {', '.join(ROWS)}; got {table!r}")
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\r\n")
    safe_title = neutralise(title)
    rows = ROWS[table](result)
    writer.writerow(next(rows))
    for row in rows:
        row[0] = safe_title
        writer.writerow(row)
    return buffer.getvalue()
