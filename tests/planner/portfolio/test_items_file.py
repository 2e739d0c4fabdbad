# ruff: noqa: E501  (the expected messages are written out whole, one case a line)
"""Reading a table of items: every kind of malformed row refused with its row, column and allowed range,
the other rows still read; whole-file refusals; the size limit checked before the file is read whole."""

import io

import pytest

from planner.portfolio.items_file import MAX_BYTES, ItemsFileError, read_items

HEADER = (
    "item,description,kind,period,demand law,demand mean,demand variance,supply mean,start level,floor,capacity,"
    "horizon,stock-out target %,overflow target %,when short,lead time,review period,service target %,"
    "service measure,order quantity,units in service,spares held,time between failures,repair time,"
    "repair crews,availability target %"
)
COLUMNS = HEADER.split(",")
GOOD = {
    "stock": {"item": "FL-RYE", "kind": "stock", "demand mean": "4", "supply mean": "4", "start level": "20",
              "capacity": "40", "horizon": "30", "stock-out target %": "1", "overflow target %": "2"},
    "reorder": {"item": "YE-DRY", "kind": "reorder", "demand mean": "2", "lead time": "5", "service target %": "95"},
    "spares": {"item": "IG-OVN", "kind": "spares", "period": "hour", "units in service": "4", "spares held": "1",
               "time between failures": "400", "repair time": "24", "availability target %": "99.5"},
}  # fmt: skip


def _line(cells: dict) -> str:
    return ",".join(cells.get(column, "") for column in COLUMNS)


def _read(*rows: dict):
    text = "\n".join([HEADER, *(_line(row) for row in rows)]) + "\n"
    return read_items(io.BytesIO(text.encode()))


def test_good_rows_of_each_kind_are_read_into_specs():
    parsed = _read(*GOOD.values())
    assert not parsed.bad
    stock, reorder, spares = (row.spec for row in parsed.good)
    assert stock["demand"] == {"family": "poisson", "mean": 4.0} and stock["high"] == 40
    assert stock["stockout_target"] == pytest.approx(0.01) and stock["overflow_target"] == pytest.approx(0.02)
    assert reorder["lead_time"] == 5 and reorder["target"] == pytest.approx(0.95) and reorder["measure"] == "cycle"
    # A mean time between failures of 400 hours is a failure rate of 1/400 an hour (common practice).
    assert spares["failure_rate"] == 1 / 400 and spares["repair_rate"] == 1 / 24


# (kind, the change, the message expected): one case per kind of malformed row.
MALFORMED = [
    ("stock", {"item": ""}, "Row 2, column item: missing item code"),
    ("stock", {"kind": "bucket"}, "Row 2, column kind: 'bucket' is not a kind; give stock, reorder or spares"),
    ("stock", {"period": "fortnight"}, "Row 2, column period: 'fortnight' is not a period here; give day or week or shift or month"),
    ("spares", {"period": "week"}, "Row 2, column period: 'week' is not a period here; give hour or day"),
    ("stock", {"demand law": "gamma"}, "Row 2, column demand law: 'gamma' is not allowed; give poisson or negative binomial or fixed"),
    ("stock", {"demand mean": ""}, "Row 2, column demand mean: missing value; give a number from 0 to 10000"),
    ("stock", {"demand mean": "lots"}, "Row 2, column demand mean: 'lots' is not a number; give one from 0 to 10000"),
    ("stock", {"demand mean": "-1"}, "Row 2, column demand mean: -1 is out of range; give a number from 0 to 10000"),
    ("stock", {"demand law": "negative binomial", "demand variance": "3"},
     "Row 2, column demand variance: 3 must exceed the mean (4) for a negative binomial law"),
    ("stock", {"demand law": "fixed", "demand mean": "2.5"}, "Row 2, column demand mean: a fixed demand must be a whole number; got 2.5"),
    ("stock", {"start level": "4.5"}, "Row 2, column start level: '4.5' is not a whole number; give one from 0 to 40"),
    ("stock", {"start level": "41"}, "Row 2, column start level: 41 is out of range; give a whole number from 0 to 40"),
    ("stock", {"horizon": "0"}, "Row 2, column horizon: 0 is out of range; give a whole number from 1 to 3,650"),
    ("stock", {"stock-out target %": "100"},
     "Row 2, column stock-out target %: '100': Give a percentage above 0 and below 100, e.g. 5 or 0.1 %."),
    ("stock", {"stock-out target %": "often"},
     "Row 2, column stock-out target %: 'often': Give a percentage, e.g. 5, 0.1 % or 1e-4 %."),
    ("stock", {"capacity": ""}, "Row 2, column overflow target %: an overflow target needs a capacity"),
    ("stock", {"when short": "wait"}, "Row 2, column when short: 'wait' is not allowed; give backorder or lost or stop"),
    ("reorder", {"lead time": "-3"}, "Row 2, column lead time: -3 is out of range; give a whole number from 0 to 365"),
    ("reorder", {"lead time": "0"}, "Row 2, column lead time: must be at least 1 period when the stock is watched all the time"),
    ("reorder", {"service measure": "fill"}, "Row 2, column order quantity: missing value; give a whole number from 1 to 1,000,000"),
    ("spares", {"units in service": "0"}, "Row 2, column units in service: 0 is out of range; give a whole number from 1 to 5,000"),
    ("spares", {"repair time": "0"}, "Row 2, column repair time: 0 is out of range; give a number from 1e-09 to 1e+09"),
    ("spares", {"availability target %": ""}, "Row 2, column availability target %: missing value; give a percentage above 0 and below 100"),
]  # fmt: skip


@pytest.mark.parametrize(("kind", "change", "message"), MALFORMED)
def test_each_malformed_row_is_refused_with_row_column_and_range(kind, change, message):
    parsed = _read(GOOD[kind] | change, GOOD["reorder"] | {"item": "OK-1"})
    assert len(parsed.bad) == 1 and parsed.bad[0].problem.startswith(message), parsed.bad[0].problem
    assert [row.code for row in parsed.good] == ["OK-1"]  # the good row after it is still read, as row 3
    assert parsed.good[0].row == 3


def test_a_row_with_too_many_values_is_refused_and_the_rest_read():
    text = HEADER + "\n" + _line(GOOD["reorder"]) + ",extra\n" + _line(GOOD["reorder"]) + "\n"
    parsed = read_items(io.BytesIO(text.encode()))
    assert parsed.bad[0].problem == f"Row 2: the row has {len(COLUMNS) + 1} values; the header names {len(COLUMNS)}"
    assert len(parsed.good) == 1


@pytest.mark.parametrize(
    ("data", "message"),
    [
        (b"", "The file is empty"),
        (b"item,kind,colour\nA,stock,red\n", "Row 1, column 3: unknown column 'colour'"),
        (b"item,item,kind\n", "Row 1, column item: column 'item' is named twice"),
        (b"item,description\nA,b\n", "Row 1: the header must name the column 'kind'"),
        (b"item;kind\nA;stock\n", "Row 1: the values are separated by semicolons"),
        (b"item,kind\n", "The file has a header but no items"),
        (b"item,kind\n\xff,stock\n", "Row 2: byte 0xff is not UTF-8 text"),
        (b'item,kind\n"A,stock\n', "Row 2: the file is not valid CSV (unexpected end of data)"),
    ],
)
def test_whole_file_refusals_name_the_problem(data, message):
    with pytest.raises(ItemsFileError) as refused:
        read_items(io.BytesIO(data))
    assert str(refused.value).startswith(message), str(refused.value)


class _Endless(io.RawIOBase):
    """A 50 MB file that counts what is read from it."""

    size = 50 * 2**20

    def __init__(self):
        self.given = 0

    def read(self, count=-1):
        count = min(count, self.size - self.given)
        self.given += count
        return b"x" * count


def test_a_50_megabyte_file_is_refused_before_it_is_read_whole():
    source = _Endless()
    with pytest.raises(ItemsFileError, match="larger than 8 MB"):
        read_items(source)
    assert source.given <= MAX_BYTES + 64 * 1024  # the limit and at most one more chunk


def test_the_ranges_are_the_kinds_own():
    from planner.kinds.reorder_plan import params as reorder
    from planner.kinds.spares_pool import params as spares
    from planner.kinds.stock_plan import params as stock
    from planner.portfolio import items_file

    for module, names in (
        (stock, ("MAX_HORIZON", "MAX_LEVEL")),
        (reorder, ("MAX_LEAD_TIME", "MAX_REVIEW_PERIOD", "MAX_ORDER_QUANTITY")),
        (spares, ("MAX_UNITS", "MAX_SPARES", "MAX_CREWS", "MIN_VALUE", "MAX_VALUE")),
    ):
        for name in names:
            assert getattr(items_file, name) == getattr(module, name), name
