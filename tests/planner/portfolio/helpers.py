"""Small portfolios for the run tests, and the engine's own answers to compare with."""

import io

from planner.portfolio import items as item_specs
from planner.portfolio.items_file import read_items
from walkmath import portfolio as pf

HEADER = (
    "item,kind,period,demand mean,supply mean,start level,capacity,horizon,stock-out target %,overflow target %,"
    "lead time,service target %,units in service,spares held,time between failures,repair time,availability target %"
)


def portfolio_csv(stock: int = 6, reorder: int = 4, spares: int = 2, bad: int = 1, horizon: int = 20) -> bytes:
    """A table of bakery items: stock bins, reorder items, spares, and ``bad`` rows with a negative lead time."""
    lines = [HEADER]
    for n in range(stock):
        mean = 1 + n % 5
        lines.append(f"BIN-{n},stock,day,{mean},{mean},{10 + n % 7},{30 + n % 11},{horizon},1,2,,,,,,,")
    for n in range(reorder):
        lines.append(f"ORD-{n},reorder,day,{0.5 + n % 4},,,,,,,{1 + n % 6},{90 + n % 9},,,,,")
    for n in range(spares):
        lines.append(f"SPR-{n},spares,hour,,,,,,,,,,{2 + n % 3},{n % 2},{300 + 50 * n},24,99")
    for n in range(bad):
        lines.append(f"BAD-{n},reorder,day,2,,,,,,,-3,95,,,,,")
    return ("\n".join(lines) + "\n").encode()


def parsed(**counts):
    return read_items(io.BytesIO(portfolio_csv(**counts)))


def engine_figures(spec: dict) -> item_specs.Figures:
    """The figures the engine gives this item on its own (``walkmath.portfolio.answer_items``)."""
    outcome = pf.answer_items([item_specs.to_item(spec)])[0]
    return item_specs.figures(spec, outcome.answer)


def stored_figures(result) -> item_specs.Figures:
    return item_specs.Figures(**{name: getattr(result, name) for name in item_specs.Figures.__dataclass_fields__})
