"""Benchmark of many items at once: ``python -m walkmath.bench portfolio [items] [distinct items] [sample]``.

Prints one table: for the seeded store of ``walkmath.portfolio_sample`` (10,000
stock items and 10,000 reorder items by default), the batched ``answer_items``
in one process and split over two forked worker processes (each worker gets
whole groups of items sharing their laws, so it keeps the sharing, balanced on
a rough guess of their work), the item-by-item reference on a sample of the
same items (and the batched path on that sample, for the ratio), and the worst
case for sharing: every stock item with a law of its own (2,000 items by
default). Engine time only (no queue, no database). Times are wall-clock
seconds on whatever machine runs it, which may be shared (the CPU seconds
beside them say how much of the wall time was this run's): rerun before quoting.
"""

from __future__ import annotations

import multiprocessing
import os
import sys
import time

from walkmath import portfolio, portfolio_sample
from walkmath.portfolio_engine import law_digest

_WORK: list = []  # the items a forked worker reads (inherited, never pickled)


def _answer_share(indices: list[int]) -> tuple[int, float]:
    """One worker's share: its answered count and its own CPU seconds."""
    began = time.process_time()
    outcomes = portfolio.answer_items([_WORK[index] for index in indices])
    return sum(outcome.answer is not None for outcome in outcomes), time.process_time() - began


def law_key(item) -> bytes:
    return law_digest(item.laws if isinstance(item, portfolio.StockItem) else (item.demand,))


def rough_work(item) -> int:
    """A cheap guess of an item's share of the work, to balance the workers (the engine prices it exactly)."""
    if not isinstance(item, portfolio.StockItem):
        return item.lead_time if isinstance(item.lead_time, int) else 1
    jumps = max(law.probs.size for law in item.laws)
    width = (item.high - item.low + 1) if item.high is not None else 200
    return (width + jumps) * jumps


def shares(items: list, workers: int) -> list[list[int]]:
    """Indices for each worker: whole groups of items with the same laws (so each keeps its sharing),
    the heaviest groups first, each to the worker with the least work so far."""
    groups: dict[bytes, list[int]] = {}
    for index, item in enumerate(items):
        groups.setdefault(law_key(item), []).append(index)
    weights = {key: sum(rough_work(items[i]) for i in members) for key, members in groups.items()}
    loads, result = [0] * workers, [[] for _ in range(workers)]
    for key in sorted(groups, key=weights.get, reverse=True):
        lightest = loads.index(min(loads))
        result[lightest] += groups[key]
        loads[lightest] += weights[key]
    return result


def timed(run) -> tuple[float, object]:
    began = time.perf_counter()
    result = run()
    return time.perf_counter() - began, result


def two_processes(items: list) -> tuple[float, float, float]:
    """Wall time of ``answer_items`` over two forked workers (the split included), and each worker's CPU time."""
    global _WORK
    _WORK = items
    context = multiprocessing.get_context("fork")
    began = time.perf_counter()
    with context.Pool(2) as pool:
        done = pool.map(_answer_share, shares(items, 2))
    return time.perf_counter() - began, done[0][1], done[1][1]


def rows_for(name: str, items: list, sample: int, rows: list) -> None:
    count = len(items)
    laws = portfolio_sample.distinct_laws(items)
    cpu = time.process_time()
    one, outcomes = timed(lambda: portfolio.answer_items(items))
    cpu = time.process_time() - cpu
    answered = sum(outcome.answer is not None for outcome in outcomes)
    rows.append(
        (
            f"{name}: {count:,} items, {laws:,} distinct laws, batched, 1 process",
            one,
            f"{count / one:,.0f} items/s; CPU {cpu:.1f} s; {answered:,} answered",
        )
    )
    two, first, second = two_processes(items)
    rows.append(
        (f"{name}: batched, 2 processes", two, f"{count / two:,.0f} items/s; CPU {first:.1f} s + {second:.1f} s")
    )
    if sample:
        picked = items[:: max(1, count // sample)][:sample]
        fast_cpu = time.process_time()
        fast, _ = timed(lambda: portfolio.answer_items(picked))
        slow_cpu = time.process_time()
        fast_cpu = slow_cpu - fast_cpu
        slow, _ = timed(lambda: portfolio.answer_items_by_item(picked))
        slow_cpu = time.process_time() - slow_cpu
        rows.append(
            (
                f"{name}: item-by-item reference, {len(picked)} of them",
                slow,
                f"{slow_cpu / len(picked) * 1e3:.2f} ms CPU/item (batched on the same sample {fast_cpu:.2f} s CPU: "
                f"{slow_cpu / fast_cpu:.1f}x); for all {count:,} about {slow_cpu / len(picked) * count:,.0f} s CPU",
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
