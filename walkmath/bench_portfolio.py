"""Benchmark of many items at once: ``python -m walkmath.bench portfolio [items] [distinct items] [sample]``.

Prints one table: for the seeded store of ``walkmath.portfolio_sample`` (10,000
stock items and 10,000 reorder items by default), the batched
``answer_items`` in one process and split over two worker processes (items
sorted by their laws, so each worker keeps the sharing), the item-by-item
reference on a sample of the same items (and the batched path on that sample,
for the ratio), and the worst case for sharing: every stock item with a law of
its own. Engine time only (no queue, no database). Times are wall-clock
seconds on whatever machine runs it, which may be shared: rerun before quoting.
"""

from __future__ import annotations

import multiprocessing
import os
import sys
import time

from walkmath import portfolio, portfolio_sample
from walkmath.portfolio_engine import law_digest

_WORK: list = []  # the items a forked worker reads (inherited, never pickled)


def _answer_chunk(bounds: tuple[int, int]) -> int:
    outcomes = portfolio.answer_items(_WORK[bounds[0] : bounds[1]])
    return sum(outcome.answer is not None for outcome in outcomes)


def by_law(items: list) -> list:
    """Items sorted by the digest of their laws, so that a contiguous chunk keeps its groups whole."""

    def key(item):
        laws = item.laws if isinstance(item, portfolio.StockItem) else (item.demand,)
        return law_digest(laws)

    return sorted(items, key=key)


def timed(run) -> tuple[float, object]:
    began = time.perf_counter()
    result = run()
    return time.perf_counter() - began, result


def two_processes(items: list) -> float:
    """Wall time of ``answer_items`` over two forked workers, each on half the items (sorted by law)."""
    global _WORK
    _WORK = by_law(items)
    middle = len(_WORK) // 2
    while 0 < middle < len(_WORK) and law_key(_WORK[middle]) == law_key(_WORK[middle - 1]):
        middle += 1  # keep a group in one worker
    context = multiprocessing.get_context("fork")
    began = time.perf_counter()
    with context.Pool(2) as pool:
        pool.map(_answer_chunk, [(0, middle), (middle, len(_WORK))])
    return time.perf_counter() - began


def law_key(item) -> bytes:
    return law_digest(item.laws if isinstance(item, portfolio.StockItem) else (item.demand,))


def rows_for(name: str, items: list, sample: int, rows: list) -> None:
    count = len(items)
    laws = portfolio_sample.distinct_laws(items)
    one, outcomes = timed(lambda: portfolio.answer_items(items))
    answered = sum(outcome.answer is not None for outcome in outcomes)
    rows.append(
        (
            f"{name}: {count:,} items, {laws:,} distinct laws, batched, 1 process",
            one,
            f"{count / one:,.0f} items/s; {answered:,} answered",
        )
    )
    two = two_processes(items)
    rows.append((f"{name}: batched, 2 processes", two, f"{count / two:,.0f} items/s"))
    if sample:
        picked = items[:: max(1, count // sample)][:sample]
        fast, _ = timed(lambda: portfolio.answer_items(picked))
        slow, _ = timed(lambda: portfolio.answer_items_by_item(picked))
        rows.append(
            (
                f"{name}: item-by-item reference, {len(picked)} of them",
                slow,
                f"{slow / len(picked) * 1e3:.2f} ms/item (batched on the same sample {fast:.2f} s: "
                f"{slow / fast:.1f}x); for all {count:,} about {slow / len(picked) * count:,.0f} s",
            )
        )


def main(argv: list[str]) -> None:
    count = int(argv[0]) if argv else 10_000
    distinct = int(argv[1]) if len(argv) > 1 else 2_000
    sample = int(argv[2]) if len(argv) > 2 else 200
    rows: list = []
    rows_for("stock items", portfolio_sample.stock_items(count), sample, rows)
    if distinct:
        rows_for("stock items, every law distinct", portfolio_sample.stock_items(distinct, distinct=True), 0, rows)
    rows_for("reorder points", portfolio_sample.reorder_items(count), sample * 10, rows)
    print(f"| case ({os.cpu_count()} cores) | seconds | comparison |")
    print("|---|---:|---|")
    for name, seconds, note in rows:
        print(f"| {name} | {seconds:.2f} | {note} |")


if __name__ == "__main__":
    main(sys.argv[1:])
