"""Benchmark: ``python -m walkmath.bench`` prints one table of timings and ratios.

``python -m walkmath.bench portfolio`` times many items at once instead (``walkmath.bench_portfolio``);
``python -m walkmath.bench lost`` only the design solvers with lost sales and a lead time.

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
from walkmath.reviewstack import lost_sales_measures
from walkmath.reviewsweep import lost_policy_measures

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


def dense_flow_baseline(laws, levels: int, start: int, horizon: int) -> tuple[float, float]:
    """The outlook's outputs by dense (levels + 2)-square products v <- v P, P built by hand per law.

    Three chains, as the outputs need: the walk itself (lost sales below, spill
    above; expected lost and spilled units per period as a dot product with
    the units short or spilled from each level), one chain that ends at a
    stock-out and one that ends at an overflow.
    """

    def matrix(law, rules):
        size = levels + 2
        result = np.zeros((size, size))
        result[levels, levels] = result[levels + 1, levels + 1] = 1.0
        index = np.arange(levels)
        shortfall, excess = np.zeros(size), np.zeros(size)
        for offset, weight in enumerate(law.probs):
            target = index + law.lowest + offset
            inside = (target >= 0) & (target < levels)
            np.add.at(result, (index, np.clip(target, 0, levels - 1)), weight * inside)
            np.add.at(result, (index, np.full(levels, 0 if rules[0] == "lost" else levels)), weight * (target < 0))
            top = levels - 1 if rules[1] == "spill" else levels + 1
            np.add.at(result, (index, np.full(levels, top)), weight * (target >= levels))
            shortfall[:levels] += weight * np.maximum(-target, 0)
            excess[:levels] += weight * np.maximum(target - (levels - 1), 0)
        return result, shortfall, excess

    answers = []
    for rules in (("lost", "spill"), ("stop", "spill"), ("lost", "stop")):
        built = [matrix(law, rules) for law in laws]
        vector = np.zeros(levels + 2)
        vector[start] = 1.0
        lost = spilled = 0.0
        for period in range(horizon):
            step, shortfall, excess = built[period % len(built)]
            lost += vector @ shortfall
            spilled += vector @ excess
            vector = vector @ step
        answers.append(vector)
    return answers[1][levels], answers[2][levels + 1]


def convolve_floor(laws, levels: int, start: int, horizon: int) -> tuple[float, float]:
    """The practical floor without a compiler: one np.convolve per period for each chain the outputs need.

    The walk itself (lost sales, spill: level law, lost and spilled units),
    a chain that ends at a stock-out and one that ends at an overflow.
    """
    chains = np.zeros((3, levels))
    chains[:, start] = 1.0
    stockout = overflow = 0.0
    for period in range(horizon):
        law = laws[period % len(laws)]
        for chain in range(3):
            moved = np.convolve(chains[chain], law.probs)
            first = law.lowest  # level of moved[0]
            under = moved[: max(-first, 0)].sum()
            over = moved[levels - first :].sum()
            inside = moved[max(-first, 0) : levels - first]
            chains[chain, :] = 0.0
            chains[chain, max(first, 0) : max(first, 0) + inside.size] = inside
            if chain == 1:
                stockout += under
            else:
                chains[chain, 0] += under
            if chain == 2:
                overflow += over
            else:
                chains[chain, -1] += over
    return stockout, overflow


def results_computation(walk, horizon: int):
    """What a results page asks of the engine: outlook, risk by start, smallest start and capacity."""
    out = walk.outlook(horizon)
    by_start = walk.risk_by_start(horizon)
    smallest_start = by_start.smallest_meeting(0.01)
    smallest_capacity = walk.smallest_capacity(horizon, overflow_target=0.01)
    return out, smallest_start, smallest_capacity


def daily_flows(rows: list) -> None:
    poisson = wm.StepLaw.poisson
    weekly = [wm.StepLaw.net(arrivals=wm.StepLaw.fixed(0), demand=poisson(10.0))] * 6
    weekly.append(wm.StepLaw.net(arrivals=wm.StepLaw.fixed(70), demand=poisson(10.0)))
    cases = [
        ("capacity 300, Poisson(15) in and out, 365 days", [wm.StepLaw.net(poisson(15.0), poisson(15.0))], 300, 365),
        ("250-level band, weekly delivery of 70, Poisson(10) demand, 365 days", weekly, 250, 365),
        (
            "1,500-level band, Poisson(50) in and out, 730 days",
            [wm.StepLaw.net(poisson(50.0), poisson(50.0))],
            1500,
            730,
        ),
    ]
    for name, laws, capacity, horizon in cases:
        daily_flow_rows(rows, name, laws, capacity, horizon)


def daily_flow_rows(rows: list, name: str, laws: list, capacity: int, horizon: int) -> None:
    levels, start = capacity + 1, capacity // 2
    walk = wm.BandedWalk(laws if len(laws) > 1 else laws[0], start, 0, capacity, below="lost", above="spill")
    engine, out = best_time(lambda: walk.outlook(horizon))
    floor, (f_stock, f_over) = best_time(lambda: convolve_floor(laws, levels, start, horizon))
    dense, (d_stock, d_over) = best_time(lambda: dense_flow_baseline(laws, levels, start, horizon), repeats=1)
    agree = max(abs(out.stockout[-1] - f_stock), abs(out.overflow[-1] - d_over), abs(d_stock - f_stock))
    whole, (_, small_start, small_capacity) = best_time(lambda: results_computation(walk, horizon), repeats=1)
    jumps = max(law.probs.size for law in laws)
    rows.append((f"daily flows: {name} ({jumps} jumps)", engine, f"outlook; stock-out {out.stockout[-1]:.4g}"))
    rows.append(("  dense K x K product per period", dense, f"dense / engine = {dense / engine:,.1f}"))
    rows.append(
        (
            "  one np.convolve per period per chain",
            floor,
            f"engine / floor = {engine / floor:.2f}; agree to {agree:.0e}",
        )
    )
    target = "1 s" if levels <= 600 else "3 s"
    rows.append(
        (
            "  whole results computation",
            whole,
            f"smallest start {small_start}, smallest capacity {small_capacity}; target <= {target}",
        )
    )


def long_band(rows: list) -> None:
    import tracemalloc

    walk = wm.BandedWalk(wm.StepLaw.nearest(UP, DOWN), start=1000, low=0, high=1999, below="lost", above="spill")
    tracemalloc.start()
    timing, long = best_time(lambda: walk.outlook_at([10**6], cap=10**13), repeats=1)
    peak = tracemalloc.get_traced_memory()[1] / 2**20
    tracemalloc.stop()
    rows.append(
        (
            "10^6 periods, 2,000-level band (squaring)",
            timing,
            f"risk {long.stockout[0]:.6f}; peak memory {peak:.0f} MB (target <= 200 MB)",
        )
    )


def risk_band_rows(rows: list, draws: int = 200) -> None:
    """The credible band over posterior draws, batched (``walkmath.drawsweep``) against one draw at a time."""
    rng = np.random.default_rng(3)
    wide_in = wm.law_posterior(wm.fit_count_law(rng.poisson(30, 731)))
    wide_out = wm.law_posterior(wm.fit_count_law(rng.negative_binomial(40, 40 / 69, 731), family="negative_binomial"))
    small_in = wm.law_posterior(wm.fit_count_law(rng.poisson(2.1, 365)))
    small_out = wm.law_posterior(wm.fit_count_law(rng.poisson(2.0, 365)))
    changes = wm.law_posterior(wm.empirical_change_law(rng.integers(-3, 4, 365)))
    cases = [
        ("sacks ~30/day in and out, store 400, 28 days", {"arrivals": wide_in, "demand": wide_out, "high": 400}),
        ("the same, no capacity (stop at 0), 28 days", {"arrivals": wide_in, "demand": wide_out, "below": "stop"}),
        ("crates ~2/day, store 40, 90 days (law wider than band)", {"arrivals": small_in, "demand": small_out,
                                                                    "high": 40, "horizon": 90, "start": 20}),
        ("observed changes -3..+3, bin 60, 90 days", {"change": changes, "high": 60, "horizon": 90, "start": 30}),
    ]  # fmt: skip
    for name, case in cases:
        args = {"start": 200, "horizon": 28, "below": "lost", "draws": draws, "seed": 1} | case
        batched, band = best_time(lambda args=args: wm.risk_band(**args))
        single, reference = best_time(lambda args=args: wm.risk_band(**args, batch=False))
        agree = max(_relative(band.stockout_by_draw, reference.stockout_by_draw),
                    _relative(band.overflow_by_draw, reference.overflow_by_draw))  # fmt: skip
        priced = wm.risk_band_work(**args).units / wm.risk_band_work(**args, batch=False).units
        note = (
            f"one by one {single:.3f} s = {single / batched:.1f}x; agree to {agree:.0e} relative; priced {priced:.2f}x"
        )
        rows.append((f"risk band, {draws} draws: {name}", batched, note))


def lost_sales_rows(rows: list) -> None:
    """The design solvers with lost sales and a lead time against one PeriodicReview solve per candidate.

    Run with OPENBLAS_NUM_THREADS=1, as the app runs (planner/settings.py). The baseline is the solvers'
    former inner loop (a Python state search and a GTH per (s, S)) over the candidates the solver itself
    works out; agreement is the largest relative difference of any measure.
    """
    fields = [name for name in wm.PolicyMeasures.__dataclass_fields__ if name != "mean_backorders"]
    poisson = wm.StepLaw.poisson
    stacked, swept = lost_sales_measures, lost_policy_measures  # what each solver uses
    cases = [
        (
            "cheapest (s, S), Poisson 5/day, lead 1, S <= 40, gap <= 20",
            poisson(mean=5.0),
            1,
            lambda d: wm.best_policy(
                d, holding=1.0, order_cost=20.0, lead_time=1, unmet="lost", top=40, largest_gap=20
            ),
            lambda out: zip(out.reorder_levels.tolist(), out.order_up_to_levels.tolist(), strict=True),
            stacked,
        ),
        (
            "cheapest (s, S), Poisson 2/day, lead 2, S <= 20, gap <= 10",
            poisson(mean=2.0),
            2,
            lambda d: wm.best_policy(
                d, holding=1.0, order_cost=20.0, lead_time=2, unmet="lost", top=20, largest_gap=10
            ),
            lambda out: zip(out.reorder_levels.tolist(), out.order_up_to_levels.tolist(), strict=True),
            stacked,
        ),
        (
            "smallest reorder level, Poisson 20/day, lead 1, S = 100",
            poisson(mean=20.0),
            1,
            lambda d: wm.smallest_reorder_level(d, 100, 0.95, "cycle", 1, "lost"),
            lambda out: ((level, 100) for level in out.levels.tolist()),
            swept,
        ),
        (
            "smallest reorder level, Poisson 5/day, lead 2, S = 30",
            poisson(mean=5.0),
            2,
            lambda d: wm.smallest_reorder_level(d, 30, 0.95, "cycle", 2, "lost"),
            lambda out: ((level, 30) for level in out.levels.tolist()),
            swept,
        ),
        (
            "smallest order-up-to, gap 10, Poisson 5/day, lead 2, S <= 40",
            poisson(mean=5.0),
            2,
            lambda d: wm.smallest_order_up_to(d, 0.95, "fill", 2, "lost", gap=10, top=40),
            lambda out: ((level - 10, level) for level in out.levels.tolist()),
            stacked,
        ),
        (
            "smallest order-up-to, gap 1 (bisection), Poisson 3/day, lead 2",
            poisson(mean=3.0),
            2,
            lambda d: wm.smallest_order_up_to(d, 0.99, "fill", 2, "lost"),
            lambda out: ((level - 1, level) for level in out.levels.tolist()),
            stacked,
        ),
    ]
    for name, demand, lead_time, solve, candidates, shared_path in cases:
        shared, out = best_time(lambda solve=solve, demand=demand: solve(demand), repeats=2)
        policies = list(candidates(out))
        solved = shared_path(demand, policies, lead_time)
        baseline, reference = best_time(
            lambda p=policies, d=demand, lead=lead_time: [
                wm.PeriodicReview(d, s, S, lead, "lost").measures() for s, S in p
            ],
            repeats=1,
        )
        worst = max(
            _relative(np.array([getattr(a, f) for a in solved]), np.array([getattr(b, f) for b in reference]))
            for f in fields
        )
        rows.append(
            (
                f"lost sales: {name} ({len(policies)} candidates)",
                shared,
                f"per candidate / shared = {baseline / shared:.1f}",
            )
        )
        rows.append(("  one PeriodicReview solve per candidate", baseline, f"measures agree to {worst:.0e} (relative)"))


def _scalar_cut(mean: float) -> int:
    """Baseline for a Poisson law's cut: a frozen scipy law, galloping then bisecting one count at a time."""
    from scipy import stats

    from walkmath.steplaw import COUNT_TAIL

    law = stats.poisson(mean)
    low, high = -1, 1
    while float(law.sf(high)) > COUNT_TAIL:
        low, high = high, 2 * high + 1
    while high - low > 1:
        middle = (low + high) // 2
        low, high = (low, middle) if float(law.sf(middle)) <= COUNT_TAIL else (middle, high)
    return high


def count_law_rows(rows: list) -> None:
    """500 Poisson demand laws with means of their own (0.5 to 20 a day, three decimals), as a portfolio
    whose items all differ builds them, against finding each cut one survival value at a time."""
    means = np.round(np.random.default_rng(11).uniform(0.5, 20.0, 500), 3).tolist()
    engine, laws = best_time(lambda: [wm.StepLaw.poisson(mean) for mean in means])
    baseline, cuts = best_time(lambda: [_scalar_cut(mean) for mean in means])
    same = sum(law.highest == cut for law, cut in zip(laws, cuts, strict=True))
    rows.append(
        (
            "500 Poisson demand laws built (means of their own)",
            engine,
            f"one-at-a-time cut / engine = {baseline / engine:.1f}",
        )
    )
    rows.append(("  their cuts alone, one survival value at a time", baseline, f"{same} of 500 cuts equal"))


def _relative(got: np.ndarray, want: np.ndarray) -> float:
    return float(np.max(np.abs(got - want) / np.maximum(want, 1e-300)))


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
    rows.append(
        ("banded outlook, K=3000, N=1000 (lost/spill)", timing, f"engine (3 chains) / loop (1) = {timing / loop:.2f}")
    )

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

    daily_flows(rows)
    count_law_rows(rows)
    long_band(rows)
    risk_band_rows(rows)
    lost_sales_rows(rows)
    print_rows(rows)


def print_rows(rows: list) -> None:
    print("| case | seconds | comparison |")
    print("|---|---:|---|")
    for name, seconds, note in rows:
        print(f"| {name} | {seconds:.4f} | {note} |")


if __name__ == "__main__":
    import sys

    if sys.argv[1:2] == ["portfolio"]:
        from walkmath import bench_portfolio

        bench_portfolio.main(sys.argv[2:])
    elif sys.argv[1:2] == ["lost"]:  # only the lost-sales design solvers (a few seconds)
        lost_rows: list = []
        lost_sales_rows(lost_rows)
        print_rows(lost_rows)
    else:
        main()
