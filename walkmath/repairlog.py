"""Failure and repair rates of a repairable pool fitted to its repair log; no Django here.

A repair log is one row per failure: when the unit failed and when it came back
from repair (or not yet, when the record ends). With ``units`` needed in service
and ``spares`` on cold standby (design notes, section 3):

* failure rate per unit in service = failures / unit-time in service, the
  maximum-likelihood rate of a Poisson process over its exposure. Exposure is
  counted from the log itself: min(units, units + spares - in the shop) units
  are in service at each moment, so time short of units is not counted;
* repair rate = completed repairs / total time in the shop, repairs still open
  when the record ends counted up to its end (right-censored). For exponential
  repair times this is the maximum-likelihood estimate with censoring
  (Lawless, Statistical Models and Methods for Lifetime Data, 2nd ed., 2003,
  section 2.2.1 and the exponential chapter: events over total time on test;
  section numbers from memory).

Each rate gets the exact two-sided Poisson confidence interval through the
chi-square distribution (Garwood 1936; the time-truncated form with 2n and
2n + 2 degrees of freedom, common practice in reliability handbooks) and a
gamma posterior: a gamma(a, b) prior gives gamma(a + events, b + exposure),
the conjugate update for a Poisson process and for censored exponential
times alike (their likelihoods are both rate^events e^(-rate exposure)).
Default prior: Jeffreys, gamma(1/2, 0).

``availability_band`` carries the two posteriors to the pool's long-run
availability: seeded draws of both rates, each draw's availability exact
(``SparesPool.availability``, product form), priced first with the engine's
cost model.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from walkmath import checks
from walkmath.cost import WORK_CAP, Work
from walkmath.posterior import DRAWS_CAP, JEFFREYS_RATE, JEFFREYS_SHAPE, RatePosterior
from walkmath.spares import POOL_CAP, POOL_RATE_CAP, SparesPool

# Most rows (failures) a log may hold, and the longest record, in its own time unit.
MAX_FAILURES = 100_000
MAX_SPAN = 1e9
KNOB = "use fewer draws or model fewer units"


@dataclass(frozen=True)
class RateEstimate:
    """A rate fitted as ``events`` over ``exposure`` (time units): estimate, exact interval, posterior."""

    events: int
    exposure: float
    confidence: float
    low: float
    high: float
    posterior: RatePosterior

    @property
    def value(self) -> float:
        """The maximum-likelihood rate, events / exposure."""
        return self.events / self.exposure

    @property
    def mean_time(self) -> float:
        """1 / rate (inf when no event was seen)."""
        return math.inf if self.events == 0 else self.exposure / self.events

    @property
    def mean_time_interval(self) -> tuple[float, float]:
        """The interval of 1 / rate: the rate's interval turned over (inf when its lower end is 0)."""
        return 1.0 / self.high, (math.inf if self.low == 0 else 1.0 / self.low)


def poisson_rate(
    events: int,
    exposure: float,
    *,
    confidence: float = 0.9,
    prior_shape: float = JEFFREYS_SHAPE,
    prior_rate: float = JEFFREYS_RATE,
) -> RateEstimate:
    """Rate of ``events`` over ``exposure`` with the exact chi-square interval and the gamma posterior.

    Interval (Garwood 1936): chi2(alpha/2, 2n) / 2T to chi2(1 - alpha/2, 2n + 2) / 2T, each quantile
    from its own tail (``ppf`` for the lower, ``isf`` for the upper); 0 at the lower end when n = 0.
    """
    events = checks.whole("events", events, minimum=0, maximum=10**9)
    exposure = checks.real("exposure", exposure, minimum=0.0, maximum=1e15, strict_minimum=True)
    confidence = checks.open_probability("confidence", confidence)
    prior_shape = checks.real("prior_shape", prior_shape, minimum=0.0, maximum=1e6)
    prior_rate = checks.real("prior_rate", prior_rate, minimum=0.0, maximum=1e6)
    if prior_shape + events <= 0:
        raise ValueError("prior_shape must be above 0 when no event was seen (else the posterior is improper)")
    tail = (1.0 - confidence) / 2.0
    low = 0.0 if events == 0 else float(stats.chi2.ppf(tail, 2 * events)) / (2.0 * exposure)
    high = float(stats.chi2.isf(tail, 2 * events + 2)) / (2.0 * exposure)
    posterior = RatePosterior(prior_shape + events, prior_rate + exposure, prior_shape, prior_rate)
    return RateEstimate(events, exposure, confidence, low, high, posterior)


@dataclass(frozen=True)
class RepairLogFit:
    """The fitted failure and repair rates of a pool, per unit of the log's time, and what they rest on."""

    units: int
    spares: int
    span: float  # length of the record
    failure: RateEstimate  # per unit in service
    repair: RateEstimate  # per unit in the shop
    still_in_repair: int  # repairs open when the record ends
    most_in_shop: int  # most units in the shop at once
    time_short: float  # time with fewer than ``units`` in service (no exposure then for the missing ones)

    def pool(self, *, crews: int | None = None) -> SparesPool:
        """The pool at the fitted rates; ``crews`` defaults to one per unit (repairs never wait)."""
        if self.failure.events == 0 or self.repair.events == 0:
            raise ValueError(
                "the pool needs at least one failure and one completed repair in the record to fit both rates"
            )
        crews = self.units + self.spares if crews is None else crews
        return SparesPool(self.units, self.spares, self.failure.value, self.repair.value, crews)


def fit_repair_log(
    failed,
    returned,
    *,
    start: float,
    end: float,
    units: int,
    spares: int,
    confidence: float = 0.9,
    prior_shape: float = JEFFREYS_SHAPE,
    prior_rate: float = JEFFREYS_RATE,
) -> RepairLogFit:
    """Fit the failure and repair rates of a log: ``failed[i]`` the time unit i failed, ``returned[i]`` the
    time it came back (NaN: still in repair at ``end``), all within ``start`` .. ``end``.

    O(failures log failures): one sort of the moments units leave and rejoin service.
    """
    units = checks.whole("units", units, minimum=1, maximum=POOL_CAP)
    spares = checks.whole("spares", spares, minimum=0, maximum=POOL_CAP)
    start = checks.real("start", start, minimum=-MAX_SPAN, maximum=MAX_SPAN)
    end = checks.real("end", end, minimum=-MAX_SPAN, maximum=MAX_SPAN)
    if not end > start:
        raise ValueError(f"end must be after start ({start:g}); got {end:g}")
    failed = np.asarray(failed, dtype=float)
    returned = np.asarray(returned, dtype=float)
    if failed.ndim != 1 or failed.shape != returned.shape or failed.size > MAX_FAILURES:
        raise ValueError(f"failed and returned must be two lists of the same length, at most {MAX_FAILURES:,}")
    open_ = np.isnan(returned)
    back = np.where(open_, end, returned)
    if np.any(~np.isfinite(failed)) or np.any(failed < start) or np.any(failed > end):
        raise ValueError(f"every failure must be within the record, {start:g} to {end:g}")
    if np.any(back < failed) or np.any(back > end):
        raise ValueError("every return must be at or after its failure and at most the record's end")
    in_shop, short = _time_short(failed, back, units, spares, start)
    exposure = units * (end - start) - short
    shop_time = math.fsum((back - failed).tolist())
    failures = int(failed.size)
    completed = failures - int(open_.sum())
    if exposure <= 0:
        raise ValueError("the record has no time with units in service")
    if shop_time <= 0:
        raise ValueError(
            "the record holds no time in the shop (every repair took no time at the record's resolution, or the "
            "failures are at its very end): use a finer time unit or a longer record"
        )
    args = {"confidence": confidence, "prior_shape": prior_shape, "prior_rate": prior_rate}
    failure = poisson_rate(failures, exposure, **args)
    repair = poisson_rate(completed, shop_time, **args)
    return RepairLogFit(units, spares, end - start, failure, repair, int(open_.sum()), in_shop, short)


def _time_short(failed: np.ndarray, back: np.ndarray, units: int, spares: int, start: float) -> tuple[int, float]:
    """Most units in the shop at once, and the unit-time missing from service: the integral of
    max(0, in the shop - spares), over the moments units leave (+1) and rejoin (-1) service.
    A return and a failure at the same moment: the return first (the unit is back in time)."""
    moments = np.concatenate([back, failed])
    moves = np.concatenate([-np.ones(back.size, dtype=np.int64), np.ones(failed.size, dtype=np.int64)])
    order = np.lexsort((moves, moments))
    moments, moves = moments[order], moves[order]
    in_shop = np.cumsum(moves)
    if in_shop.size and in_shop.max() > units + spares:
        raise ValueError(f"more units are in the shop at once ({int(in_shop.max())}) than units + spares")
    missing = np.maximum(in_shop[:-1] - spares, 0)
    short = math.fsum((missing * np.diff(moments)).tolist()) if moments.size else 0.0
    return (int(in_shop.max()) if in_shop.size else 0), short


@dataclass(frozen=True, eq=False)
class AvailabilityBand:
    """Long-run availability at the fitted rates and over ``draws`` posterior draws of both rates."""

    availability: float  # at the fitted (maximum-likelihood) rates
    draws: int
    seed: int
    credible: float
    low: float
    median: float
    high: float
    mean: float
    by_draw: np.ndarray
    failure_rates: np.ndarray
    repair_rates: np.ndarray
    work: Work


def availability_band_work(fit: RepairLogFit, *, crews: int | None = None, draws: int = 400) -> Work:
    """The work of ``availability_band``: one long-run figure per draw and one at the fit."""
    draws = checks.whole("draws", draws, minimum=1, maximum=DRAWS_CAP)
    one = fit.pool(crews=crews).cost("long_run")
    return Work(
        f"availability over {draws} draws", one.levels, 1, one.jumps, copies=0, dense=(draws + 1) * one.units,
        knob=KNOB,
    )  # fmt: skip


def availability_band(
    fit: RepairLogFit,
    *,
    crews: int | None = None,
    draws: int = 400,
    seed: int = 0,
    credible: float = 0.9,
    cap: int = WORK_CAP,
) -> AvailabilityBand:
    """Availability at the fit and its equal-tailed credible range over posterior draws of both rates.

    One numpy Generator seeded with ``seed`` draws the failure rates, then the repair rates (gamma, one
    vectorised call each); each draw's availability is exact to the engine's accuracy (product form,
    each side summed on its own); the range's own error is that of ``draws`` Monte Carlo draws. Edges are
    order statistics (numpy's "inverted_cdf" quantile). Priced first; ComputeTooLarge over ``cap``.
    """
    work = availability_band_work(fit, crews=crews, draws=draws).check(cap)
    seed = checks.whole("seed", seed, minimum=0, maximum=2**63 - 1)
    credible = checks.open_probability("credible", credible)
    draws = checks.whole("draws", draws, minimum=1, maximum=DRAWS_CAP)
    rng = np.random.default_rng(seed)
    failure_rates = fit.failure.posterior.draw_means(draws, rng)
    repair_rates = fit.repair.posterior.draw_means(draws, rng)
    # a draw past the engine's rate limits (only from a record of a handful of events) is held at them
    lowest = 1e-300
    failure_rates = np.clip(failure_rates, lowest, POOL_RATE_CAP)
    repair_rates = np.clip(repair_rates, lowest, POOL_RATE_CAP)
    pool = fit.pool(crews=crews)
    by_draw = np.array(
        [
            SparesPool(pool.units, pool.spares, float(f), float(r), pool.crews).availability()
            for f, r in zip(failure_rates, repair_rates, strict=True)
        ]
    )
    low, median, high = np.quantile(by_draw, ((1 - credible) / 2, 0.5, (1 + credible) / 2), method="inverted_cdf")
    return AvailabilityBand(
        pool.availability(), draws, seed, credible, float(low), float(median), float(high),
        float(min(by_draw.mean(), 1.0)), by_draw, failure_rates, repair_rates, work,
    )  # fmt: skip
