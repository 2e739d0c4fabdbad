"""How far the stock-out and overflow risk could move because the fitted law is uncertain.

``risk_band`` draws whole laws from a posterior (``walkmath.posterior``), seeded,
computes each draw's stock-out and overflow curves exactly with
``BandedWalk.outlook`` (the band's rules coded once, in ``walkmath.operator``),
and returns, period by period, an equal-tailed credible band (order statistics
of the draws' curves) and the posterior mean. The draws and the laws are made
with vectorised numpy calls; the sweeps run batched, every draw sharing a
support in one array (``walkmath.drawsweep``: each law's own kernel, applied
to all of them in one pass per jump), or one draw after another with
``batch=False`` (the same curves to rounding). All the work is priced with
``walkmath.cost`` before any sweep starts.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from walkmath import checks
from walkmath.banded import BandedWalk
from walkmath.checks import DEFAULT_ABOVE, DEFAULT_BELOW
from walkmath.cost import LEVELS_CAP, WORK_CAP, ComputeTooLarge, Work
from walkmath.drawsweep import sweep_curves, sweep_work
from walkmath.posterior import DRAWS_CAP
from walkmath.steplaw import StepLaw

DEFAULT_DRAWS = 200
KNOB = "use fewer draws, shorten the horizon, narrow the band (capacity) or coarsen the units"


@dataclass(frozen=True, eq=False)
class RiskBand:
    """Credible band of the stock-out and overflow curves over posterior draws of the law.

    Arrays have length horizon + 1 (index 0 is 0, as in ``Outlook``). ``*_low`` and
    ``*_high`` are the draws' order statistics at (1 - credible) / 2 and
    (1 + credible) / 2 (numpy's "inverted_cdf" quantile, definition 1 of Hyndman
    and Fan 1996, cited from memory): the same draw rank in every period, so each
    edge never falls as the horizon grows. ``*_mean`` is the average over draws,
    the risk with the law's uncertainty folded in. ``stockout_by_draw[d]`` is
    draw d's curve.
    """

    horizon: int
    draws: int
    seed: int
    credible: float
    stockout_low: np.ndarray
    stockout_median: np.ndarray
    stockout_high: np.ndarray
    stockout_mean: np.ndarray
    overflow_low: np.ndarray
    overflow_median: np.ndarray
    overflow_high: np.ndarray
    overflow_mean: np.ndarray
    stockout_by_draw: np.ndarray
    overflow_by_draw: np.ndarray
    work: Work

    @property
    def stockout_interval(self) -> tuple[float, float]:
        """Credible interval of the stock-out risk at the horizon (the headline figure)."""
        return float(self.stockout_low[-1]), float(self.stockout_high[-1])

    @property
    def overflow_interval(self) -> tuple[float, float]:
        return float(self.overflow_low[-1]), float(self.overflow_high[-1])


def risk_band(
    *,
    start: int,
    horizon: int,
    change=None,
    arrivals=None,
    demand=None,
    low: int = 0,
    high: int | None = None,
    below: str = DEFAULT_BELOW,
    above: str = DEFAULT_ABOVE,
    draws: int = DEFAULT_DRAWS,
    seed: int = 0,
    credible: float = 0.9,
    cap: int = WORK_CAP,
    batch: bool = True,
) -> RiskBand:
    """Stock-out and overflow risk over ``draws`` posterior draws of the law, exact per draw.

    The law is either ``change`` (the net change per period) or ``arrivals`` -
    ``demand`` (either may be left out: none of it); each is a posterior (from
    ``law_posterior``) or a fixed StepLaw. One numpy Generator seeded with
    ``seed`` draws ``change``, or ``arrivals`` then ``demand``, so a seed gives
    the same band every time. Priced before any sweep (``risk_band_work``);
    ComputeTooLarge over ``cap``. Each draw's curve has the engine's accuracy
    (sums of non-negative terms); the band's own error is that of ``draws``
    Monte Carlo draws of the law. ``batch`` (default) sweeps the draws that share a support together
    (``walkmath.drawsweep``); ``batch=False`` sweeps them one by one (the reference it is tested against).
    """
    laws, walk_args, horizon, draws, seed, credible, combining = _prepare(
        start, horizon, change, arrivals, demand, low, high, below, above, draws, seed, credible, cap
    )
    work = _price(laws, walk_args, horizon, combining, batch).check(cap)
    if batch:
        stockout, overflow = sweep_curves(laws, walk_args, horizon)
    else:
        stockout = np.empty((draws, horizon + 1))
        overflow = np.empty((draws, horizon + 1))
        for index, law in enumerate(laws):
            outlook = BandedWalk(law, **walk_args).outlook(horizon)
            stockout[index], overflow[index] = outlook.stockout, outlook.overflow
    tails = ((1.0 - credible) / 2.0, 0.5, (1.0 + credible) / 2.0)
    stockout_edges = np.quantile(stockout, tails, axis=0, method="inverted_cdf")
    overflow_edges = np.quantile(overflow, tails, axis=0, method="inverted_cdf")
    return RiskBand(
        horizon, draws, seed, credible,
        *stockout_edges, stockout.mean(axis=0), *overflow_edges, overflow.mean(axis=0),
        stockout, overflow, work,
    )  # fmt: skip


def risk_band_work(
    *,
    start: int,
    horizon: int,
    change=None,
    arrivals=None,
    demand=None,
    low: int = 0,
    high: int | None = None,
    below: str = DEFAULT_BELOW,
    above: str = DEFAULT_ABOVE,
    draws: int = DEFAULT_DRAWS,
    seed: int = 0,
    credible: float = 0.9,
    batch: bool = True,
) -> Work:
    """Priced work of ``risk_band`` with the same arguments, without any sweep.

    Draws the laws (a few vectorised numpy calls, priced themselves) to know
    their widths, then sums ``BandedWalk.cost`` over the draws.
    """
    laws, walk_args, horizon, *_, combining = _prepare(
        start, horizon, change, arrivals, demand, low, high, below, above, draws, seed, credible, WORK_CAP
    )
    return _price(laws, walk_args, horizon, combining, batch)


def _prepare(start, horizon, change, arrivals, demand, low, high, below, above, draws, seed, credible, cap):
    """Checked arguments and the drawn laws, and the work units spent combining arrivals and demand."""
    horizon = checks.horizon(horizon)
    draws = checks.whole("draws", draws, minimum=1, maximum=DRAWS_CAP)
    if draws * (horizon + 1) > LEVELS_CAP:  # the draws' curves are kept
        raise ComputeTooLarge(
            f"risk_band keeps {draws:,} draws x {horizon + 1:,} periods of curves; the limit is "
            f"{LEVELS_CAP:,} numbers. To fit, use fewer draws or shorten the horizon."
        )
    seed = checks.whole("seed", seed, minimum=0, maximum=2**63 - 1)
    credible = checks.open_probability("credible", credible)
    walk_args = {"start": start, "low": low, "high": high, "below": below, "above": above}
    BandedWalk(StepLaw.fixed(0), **walk_args)  # the band's arguments, checked before any draw
    rng = np.random.default_rng(seed)
    if change is not None:
        if arrivals is not None or demand is not None:
            raise ValueError("change must be given alone, or arrivals and demand without change")
        return _laws("change", change, draws, rng), walk_args, horizon, draws, seed, credible, 0
    if arrivals is None and demand is None:
        raise ValueError("change, or arrivals and demand, must be given")
    supply = _laws("arrivals", arrivals, draws, rng) if arrivals is not None else [StepLaw.fixed(0)] * draws
    use = _laws("demand", demand, draws, rng) if demand is not None else [StepLaw.fixed(0)] * draws
    # one direct convolution per draw, priced together before any is made
    combining = sum(Work("StepLaw.net", a.probs.size, 1, d.probs.size).units for a, d in zip(supply, use, strict=True))
    Work(f"combining arrivals and demand ({draws} draws)", 1, 1, 1, copies=0, dense=combining, knob=KNOB).check(cap)
    laws = [StepLaw.net(arrivals=a, demand=d) for a, d in zip(supply, use, strict=True)]
    return laws, walk_args, horizon, draws, seed, credible, combining


def _laws(name: str, source, draws: int, rng: np.random.Generator) -> list[StepLaw]:
    if isinstance(source, StepLaw):
        return [source] * draws
    if not callable(getattr(source, "draw_laws", None)):
        raise ValueError(f"{name} must be a posterior (walkmath.law_posterior) or a StepLaw")
    return source.draw_laws(draws, rng)


def _price(laws: list[StepLaw], walk_args: dict, horizon: int, combining: int, batch: bool) -> Work:
    """The sweeps' price (batched: ``drawsweep.sweep_work``; else the sum of each draw's outlook price) and
    the combining work, as one ``Work`` (its units in ``dense``)."""
    if batch:
        swept = sweep_work(laws, walk_args, horizon)
        return replace(swept, method=f"risk_band ({len(laws)} draws)", dense=swept.dense + combining, knob=KNOB)
    works = [BandedWalk(law, **walk_args).cost(horizon, "outlook") for law in laws]
    return Work(
        f"risk_band ({len(laws)} draws)",
        levels=max(w.levels for w in works),
        periods=horizon,
        jumps=max(w.jumps for w in works),
        copies=0,
        dense=sum(w.units for w in works) + combining,
        knob=KNOB,
    )
