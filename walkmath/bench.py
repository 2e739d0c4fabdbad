"""Benchmark: ``python -m walkmath.bench`` prints one table of timings and ratios.

Baselines are written here, for the same walk: a dense K x K matrix-vector
product per period, and a minimal numpy slicing loop (three shifted adds per
period, no rules beyond stopping). Times are the best of a few repeats on
whatever machine runs it; paste the table into the README.
"""

from __future__ import annotations

import math
import time

import numpy as np

import walkmath as wm

UP, DOWN = 0.3, 0.3


def best_time(run, repeats: int = 3) -> tuple[float, object]:
    best, result = math.inf, None
    for _ in range(repeats):
        began = time.perf_counter()
        result = run()
        best = min(best, time.perf_counter() - began)
    return best, result


def dense_baseline(levels: int, horizon: int, start: int) -> tuple[float, float]:
    """Stock-out and overflow at the horizon by v <- v P with a dense (levels + 2)-square P."""
    size = levels + 2  # two absorbing states: stocked out, overflowed
    matrix = np.zeros((size, size))
    index = np.arange(levels)
    matrix[index, index] = 1 - UP - DOWN
    matrix[index[1:], index[:-1]] = DOWN
    matrix[index[:-1], index[1:]] = UP
    matrix[0, levels] = DOWN
    matrix[levels - 1, levels + 1] = UP
    matrix[levels, levels] = matrix[levels + 1, levels + 1] = 1.0
    vector = np.zeros(size)
    vector[start] = 1.0
    for _ in range(horizon):
        vector = vector @ matrix
    return vector[levels], vector[levels + 1]


def slicing_baseline(levels: int, horizon: int, start: int) -> tuple[float, float]:
    """The same walk as three shifted vector adds per period over the whole band."""
    vector = np.zeros(levels)
    vector[start] = 1.0
    stockout = overflow = 0.0
    for _ in range(horizon):
        stockout += DOWN * vector[0]
        overflow += UP * vector[-1]
        fresh = (1 - UP - DOWN) * vector
        fresh[:-1] += DOWN * vector[1:]
        fresh[1:] += UP * vector[:-1]
        vector = fresh
    return stockout, overflow


def main() -> None:
    law = wm.StepLaw.nearest(UP, DOWN)
    rows = []

    levels, horizon, start = 3000, 1000, 60  # near empty, so stock-outs happen
    walk = wm.BandedWalk(law, start=start, low=0, high=levels - 1, below="stop", above="stop")
    engine, out = best_time(lambda: walk.outlook(horizon))
    dense, (d_stock, d_over) = best_time(lambda: dense_baseline(levels, horizon, start), repeats=1)
    loop, (s_stock, s_over) = best_time(lambda: slicing_baseline(levels, horizon, start))
    agree = max(abs(out.stockout[-1] - d_stock), abs(out.overflow[-1] - s_over), abs(d_stock - s_stock))
    rows.append(("banded outlook, K=3000, N=1000 (stop/stop)", engine, f"dense / engine = {dense / engine:,.0f}"))
    rows.append(("  dense K x K product per period", dense, f"stock-out {d_stock:.6f}, all three agree to {agree:.0e}"))
    rows.append(("  minimal slicing loop, same walk", loop, f"engine / loop = {engine / loop:.2f}"))

    walk = wm.BandedWalk(law, start=start, low=0, high=levels - 1, below="lost", above="spill")
    timing, _ = best_time(lambda: walk.outlook(1000))
    rows.append(("banded outlook, K=3000, N=1000 (lost/spill)", timing, f"engine / loop = {timing / loop:.2f}"))

    walk = wm.BandedWalk(law, start=100, low=0, high=9999, below="stop", above="spill")
    timing, _ = best_time(lambda: walk.outlook(10_000), repeats=1)
    rows.append(("stock-out + overflow curves, K=N=10^4", timing, "target <= 2 s"))

    walk = wm.BandedWalk(law, start=200, low=0, high=399, below="stop", above="spill")
    timing, long = best_time(lambda: walk.outlook_at([10**6]))
    rows.append(("10^6 periods, 400-level band (squaring)", timing, f"risk {long.stockout[0]:.6f}; target <= 1 s"))

    rare = wm.StepLaw.nearest(0.35, 0.25)
    walk = wm.BandedWalk(rare, start=37, low=0, high=80, below="lost", above="spill")
    timing, out = best_time(lambda: walk.outlook(300))
    risk = out.stockout[-1]
    trial_paths = 100_000
    mc_time, _ = best_time(
        lambda: wm.monte_carlo_outlook(rare, 37, 0, 80, "lost", "spill", 300, paths=trial_paths, seed=1), repeats=1
    )
    needed = 1.96**2 * (1 - risk) / (0.1**2 * risk)  # 95% half-width = 10% of the risk (normal interval)
    mc_needed = mc_time / trial_paths * needed
    rows.append((f"exact stock-out risk {risk:.2e} (K=81, N=300)", timing, ""))
    rows.append(
        (
            f"  Monte Carlo for 10% precision: {needed:.2e} paths",
            mc_needed,
            f"extrapolated from {trial_paths:,} paths; {mc_needed / timing:,.0f}x the exact time",
        )
    )

    print("| case | seconds | comparison |")
    print("|---|---:|---|")
    for name, seconds, note in rows:
        print(f"| {name} | {seconds:.4f} | {note} |")


if __name__ == "__main__":
    main()
