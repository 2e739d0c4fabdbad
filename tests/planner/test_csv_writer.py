"""The shared CSV writer: RFC 4180 layout, the spreadsheet-formula guard, what-if file names and columns."""

import csv
import io

import pytest

from planner.csv_writer import file_name, neutralise, number, table_csv


def rows():
    yield ["scenario", "day", "stock-out risk [probability]"]
    yield [None, 0, number(0.0)]
    yield [None, 1, number(1 / 3)]


def read(text: str) -> list[list[str]]:
    return list(csv.reader(io.StringIO(text, newline="")))


def test_rfc_4180_layout():
    text = table_csv(rows(), title='Crates, "big" ones')
    lines = text.split("\r\n")
    assert lines[-1] == "" and all("\n" not in line for line in lines)  # CRLF after every record
    assert lines[1].startswith('"Crates, ""big"" ones",0,')  # comma and quote inside a field: quoted, doubled
    assert len({len(row) for row in read(text)}) == 1
    assert float(read(text)[2][2]) == 1 / 3  # repr precision: the float comes back exactly


def test_saved_plan_and_whatif_name_themselves():
    saved = read(table_csv(rows(), title="Flour silo"))
    assert saved[0][-2:] == ["plan version", "what-if changes"]
    assert saved[1][-2:] == ["saved plan", ""]
    whatif = read(table_csv(rows(), title="Flour silo", changes=["start stock 45 → 30 units", "horizon 56 → 28 days"]))
    assert whatif[1][-2:] == ["what-if", "start stock 45 → 30 units; horizon 56 → 28 days"]


@pytest.mark.parametrize("title", ['=HYPERLINK("http://x.invalid")', "+1+2", "-2+3", "@SUM(A1)", "\t=1", "\r=1"])
def test_formula_injection_is_neutralised(title):
    assert all(row[0] == "'" + title for row in read(table_csv(rows(), title=title))[1:])
    assert neutralise(title).startswith("'")
    changed = read(table_csv(rows(), title="x", changes=[title]))
    assert changed[1][-1] == "'" + title


def test_file_names_come_from_the_title():
    assert file_name("Flour silo: week 12", "risk-curves") == "flour-silo-week-12-risk-curves.csv"
    assert file_name("Flour silo", "risk-curves", whatif=True) == "flour-silo-whatif-risk-curves.csv"
    assert file_name("=cmd|' /C calc'!A0", "stock-by-period") == "cmd-c-calca0-stock-by-period.csv"
    assert file_name("???", "risk-by-start") == "scenario-risk-by-start.csv"
