"""A saved history fitted, and the credible range of its stock-out and overflow risk; no Django here.

``fit_history`` fits each series of a parsed history with the engine
(``walkmath.recommend_law``: the observed amounts, a Poisson law or a negative
binomial, with its reason; ``weekday_profile`` for daily demand) and keeps the
posterior of the law each recommendation chose. ``RangeJob`` prices the risk
from the fitted laws and the credible range over posterior draws with the
engine's cost model, chooses how many draws the page's budget affords, and
only then runs them. ``fitted_laws`` hands a kind the plain description of the
laws it needs to make a plan (``Kind.params_from_fit``).

Rules of the risk (fixed here and stated on the page): unmet demand is lost
(the stock stays at 0) and stock beyond the capacity is turned away. Without a
capacity only the stock-out curve is wanted; it counts the first stock-out,
whatever happens after it, so it is worked out with the path stopped there,
which prices lower and gives the same curve (DESIGN.md, section 3).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

import walkmath as wm
from planner.history_file import History
from walkmath.profile import WEEKDAYS

SEED = 1
# Said before the engine's reason when a history's counts or changes are too wide for its laws.
FIT_REFUSED = "These records cannot be fitted:"
CREDIBLE = 0.9
# Draws of the fitted laws for the credible range: as many as the page's budget affords, within these.
MIN_DRAWS, MAX_DRAWS = 20, 400
# Draws priced first (and twice as many) to learn the cost of one (risk_band_work), and the margin kept over it.
PILOT_DRAWS, PILOT_MARGIN = 10, 1.25
LOW = 0

SIDE_WORDS = {"deliveries": "Deliveries (in)", "demand": "Demand (out)", "change": "Change in the level"}
CHOICE_WORDS = {
    "poisson": "Poisson law",
    "negative_binomial": "negative binomial",
    "empirical": "the amounts as observed",
}


@dataclass(frozen=True, eq=False)
class SideFit:
    """One series of the history (deliveries, demand, or the change of a level) and its fitted laws."""

    what: str  # "deliveries", "demand" or "change"
    values: np.ndarray
    recommendation: wm.Recommendation

    @property
    def choice(self) -> str:
        return self.recommendation.choice

    @property
    def chosen_fit(self):
        """The recommended fit: a CountFit (Poisson or negative binomial) or the observed ChangeFit."""
        found = self.recommendation
        return {"poisson": found.poisson, "negative_binomial": found.negative_binomial}.get(
            found.choice, found.empirical
        )

    @property
    def law(self) -> wm.StepLaw:
        return self.recommendation.law

    @property
    def posterior(self):
        return wm.law_posterior(self.chosen_fit)

    @property
    def count_fits(self) -> tuple:
        """The Poisson and negative-binomial fits made (none for changes that go both ways)."""
        found = self.recommendation
        return tuple(fit for fit in (found.poisson, found.negative_binomial) if fit is not None)


@dataclass(frozen=True, eq=False)
class HistoryFit:
    history: History
    sides: tuple[SideFit, ...]
    profile: wm.WeekdayProfile | None
    profile_note: str  # why there is no weekday test, or what it found

    def side(self, what: str) -> SideFit | None:
        return next((side for side in self.sides if side.what == what), None)

    @property
    def first_plan_weekday(self) -> int:
        """Weekday of the period after the history ends (0 = Monday): a plan's first period."""
        return (self.history.dates[-1].weekday() + (1 if self.history.period == "day" else 7)) % 7


def fit_history(history: History) -> HistoryFit:
    """Every fit the fit page shows. O(periods + largest count) per series; no cost cap needed."""
    period = history.period
    if history.shape == "levels":
        changes = history.changes()
        sides = (SideFit("change", changes, wm.recommend_law(changes, what="change", period=period)),)
    else:
        sides = (
            SideFit(
                "deliveries", history.arrivals, wm.recommend_law(history.arrivals, what="deliveries", period=period)
            ),
            SideFit("demand", history.demand, wm.recommend_law(history.demand, what="demand", period=period)),
        )
    profile, note = _weekday_test(history, sides)
    return HistoryFit(history, sides, profile, note)


def _weekday_test(history: History, sides) -> tuple[wm.WeekdayProfile | None, str]:
    if history.period != "day":
        return None, "Weekly rows: there is no weekday pattern to test."
    demand = next((side for side in sides if side.what == "demand"), None)
    if demand is None:
        return (
            None,
            "A level series does not separate demand from deliveries, so no weekday pattern of demand is tested.",
        )
    family = "poisson" if demand.choice == "poisson" else "negative_binomial"
    try:
        profile = wm.weekday_profile(demand.values, history.weekdays(), family)
    except ValueError as refusal:
        return None, f"No weekday pattern tested: {refusal}."
    return profile, ""


def weekday_factors(profile: wm.WeekdayProfile, first_weekday: int) -> tuple[float, ...]:
    """Each weekday's mean over the week's average, starting at ``first_weekday``, rounded to 3 decimals."""
    overall = math.fsum(m * n for m, n in zip(profile.means, profile.days, strict=True)) / sum(profile.days)
    if overall == 0:
        return ()
    return tuple(round(profile.means[(first_weekday + i) % 7] / overall, 3) for i in range(7))


# -- laws a kind can plan with ---------------------------------------------------------------------


@dataclass(frozen=True)
class FittedLaws:
    """What a fit hands to ``Kind.params_from_fit``: plain values only.

    Count laws are dicts in the stock plan's JSON shape (``{"family": "poisson", "mean": ...}``,
    ``"negative_binomial"`` with ``"variance"``, ``"table"`` with ``[[count, chance], ...]``).
    A level history gives ``change_table`` (``[[change, chance], ...]``) instead of the two laws.
    ``weekday_factors`` (from the plan's first day, 7 of them) is set only when asked for and the
    history supports a weekday pattern; ``demand`` is then the profile's own law at the week's mean.
    """

    source: str  # the history's name
    period: str
    shape: str
    periods: int
    first_date: str
    last_date: str
    arrivals: dict | None
    demand: dict | None
    change_table: tuple[tuple[int, float], ...]
    weekday_factors: tuple[float, ...]
    first_weekday: str  # the weekday of a plan's first period (the period after the history ends)
    summary: str  # the laws in words, for a plan's notes


def fitted_laws(fit: HistoryFit, *, source: str, weekday_pattern: bool = False) -> FittedLaws:
    """The recommended laws of ``fit`` as plain values (no law is built here)."""
    history = fit.history
    arrivals = demand = None
    table: tuple[tuple[int, float], ...] = ()
    factors: tuple[float, ...] = ()
    words = []
    for side in fit.sides:
        if side.what == "change" and side.choice == "empirical":
            table = _table(side.chosen_fit)
        elif side.what == "demand":
            demand = count_law_json(side.chosen_fit)
        elif side.what == "deliveries":
            arrivals = count_law_json(side.chosen_fit)
        else:  # a level that never fell: its changes are counts in, with nothing going out
            arrivals, demand = count_law_json(side.chosen_fit), {"family": "fixed", "amount": 0}
        words.append(f"{SIDE_WORDS[side.what].lower()}: {law_words(side.chosen_fit, history.period)}")
    if weekday_pattern and fit.profile is not None and fit.profile.supported:
        factors = weekday_factors(fit.profile, fit.first_plan_weekday)
        if factors:
            demand = _profile_law(fit.profile)
            words[-1] = (
                f"{SIDE_WORDS['demand'].lower()}: {_profile_words(demand, history.period)}, following the weekday "
                "pattern (each weekday's mean and variance scaled by its factor)"
            )
    return FittedLaws(
        source=source,
        period=history.period,
        shape=history.shape,
        periods=history.periods,
        first_date=str(history.dates[0]),
        last_date=str(history.dates[-1]),
        arrivals=arrivals,
        demand=demand,
        change_table=table,
        weekday_factors=factors,
        first_weekday=WEEKDAYS[fit.first_plan_weekday],
        summary="; ".join(words),
    )


def count_law_json(fit) -> dict:
    """A fitted count law as ``{"family": ...}`` (a ChangeFit of counts becomes a table of counts)."""
    if isinstance(fit, wm.ChangeFit):
        return {"family": "table", "table": [list(row) for row in _table(fit)]}
    if fit.family == "poisson" or math.isinf(fit.size):
        return {"family": "poisson", "mean": fit.mean}
    return {"family": "negative_binomial", "mean": fit.mean, "variance": fit.variance}


def _profile_law(profile: wm.WeekdayProfile) -> dict:
    mean = math.fsum(m * n for m, n in zip(profile.means, profile.days, strict=True)) / sum(profile.days)
    if math.isinf(profile.size):
        return {"family": "poisson", "mean": mean}
    return {"family": "negative_binomial", "mean": mean, "variance": mean + mean * mean / profile.size}


def _profile_words(law: dict, period: str) -> str:
    if law["family"] == "poisson":
        return f"Poisson, mean {law['mean']:.3g} a {period} over the week"
    return f"negative binomial, mean {law['mean']:.3g} and variance {law['variance']:.3g} a {period} over the week"


def _table(fit: wm.ChangeFit) -> tuple[tuple[int, float], ...]:
    """The observed law's rows (change or count, chance), chances as the engine holds them."""
    return tuple((int(step), float(chance)) for step, chance in zip(fit.law.steps, fit.law.probs, strict=True))


def law_words(fit, period: str) -> str:
    """'Poisson, mean 30.1 a day', 'negative binomial, mean 29 and variance 93.3 a day', 'as observed (...)'."""
    if isinstance(fit, wm.ChangeFit):
        return (
            f"as observed over {fit.periods:,} {period}s, {fit.steps[0]:+d} to {fit.steps[-1]:+d} a {period} "
            f"(mean {fit.mean:+.3g})"
        )
    if fit.family == "poisson" or math.isinf(fit.size):
        return f"Poisson, mean {fit.mean:.3g} a {period}"
    return f"negative binomial, mean {fit.mean:.3g} and variance {fit.variance:.3g} a {period}"


# -- the risk and its credible range ---------------------------------------------------------------


@dataclass(frozen=True)
class RangeInputs:
    start: int
    high: int | None
    horizon: int


@dataclass(frozen=True, eq=False)
class RangeResult:
    inputs: RangeInputs
    outlook: wm.Outlook  # from the fitted laws
    band: wm.RiskBand | None  # None when the budget affords fewer than MIN_DRAWS draws
    affordable: int  # draws the budget affords (before the MAX_DRAWS ceiling)
    unit_cost: int  # estimated work units of one draw
    budget: int
    refusal: str  # why there is no credible range, when there is none

    @property
    def stockout(self) -> float:
        return float(self.outlook.stockout[-1])

    @property
    def overflow(self) -> float | None:
        return float(self.outlook.overflow[-1]) if self.inputs.high is not None else None


class RangeJob:
    """The risk from the fitted laws and its credible range over posterior draws, priced first.

    ``headline_work()`` prices the fitted laws' outlook; ``run(cap)`` refuses with
    ComputeTooLarge when that alone exceeds ``cap``, then spends what is left on
    as many draws as it affords (``MIN_DRAWS`` to ``MAX_DRAWS``).
    """

    def __init__(self, fit: HistoryFit, inputs: RangeInputs, *, seed: int = SEED):
        self.fit, self.inputs, self.seed = fit, inputs, seed
        self.rules = {
            "start": inputs.start,
            "low": LOW,
            "high": inputs.high,
            "below": "lost" if inputs.high is not None else "stop",
            "above": "spill",
        }
        sides = {side.what: side for side in fit.sides}
        if "change" in sides:
            self.laws = {"change": sides["change"]}
        else:
            self.laws = {"arrivals": sides["deliveries"], "demand": sides["demand"]}

    def knob(self) -> str:
        """What makes the work smaller: a capacity bounds the stock levels worked over."""
        if self.inputs.high is None:
            return "set a capacity, shorten the horizon or lower the start stock"
        return "shorten the horizon or lower the capacity"

    def walk(self) -> wm.BandedWalk:
        if "change" in self.laws:
            law = self.laws["change"].law
        else:
            law = wm.StepLaw.net(arrivals=self.laws["arrivals"].law, demand=self.laws["demand"].law)
        return wm.BandedWalk(law, **self.rules)

    def headline_work(self) -> wm.Work:
        return self.walk().cost(self.inputs.horizon, "outlook")

    def _band_args(self, draws: int) -> dict:
        posteriors = {name: side.posterior for name, side in self.laws.items()}
        return (
            posteriors
            | self.rules
            | {
                "horizon": self.inputs.horizon,
                "draws": draws,
                "seed": self.seed,
                "credible": CREDIBLE,
            }
        )

    def _draw_price(self) -> tuple[int, int]:
        """(fixed, per draw) work units of the credible range, from two pilot prices (``PILOT_DRAWS`` and
        twice as many draws): the engine sweeps draws in batches, so part of the price does not grow with
        the draws. The per-draw part is kept with ``PILOT_MARGIN`` to spare."""
        try:
            one = wm.risk_band_work(**self._band_args(PILOT_DRAWS)).units
            two = wm.risk_band_work(**self._band_args(2 * PILOT_DRAWS)).units
        except wm.ComputeTooLarge:  # even the pilot's laws are past the engine's own limits
            return 0, wm.WORK_CAP
        per_draw = max(1, two - one, one // (4 * PILOT_DRAWS)) / PILOT_DRAWS
        return max(0, one - math.ceil(per_draw * PILOT_DRAWS)), max(1, math.ceil(per_draw * PILOT_MARGIN))

    def run(self, cap: int) -> RangeResult:
        walk = self.walk()
        headline = walk.cost(self.inputs.horizon, "outlook").units
        if headline > cap:
            raise wm.ComputeTooLarge(
                f"Working out the risk over {self.inputs.horizon:,} {self.fit.history.period}s from these laws needs "
                f"about {headline / cap:.1f} times this page's budget. To fit, {self.knob()}."
            )
        outlook = walk.outlook(self.inputs.horizon)
        budget = cap - headline
        fixed, unit_cost = self._draw_price()
        affordable = max(budget - fixed, 0) // unit_cost
        draws = min(affordable, MAX_DRAWS)
        band, refusal = None, ""
        for _attempt in range(2):
            if draws < MIN_DRAWS:
                break
            try:
                band = wm.risk_band(**self._band_args(draws), cap=budget)
                break
            except wm.ComputeTooLarge:  # the draws came out wider than the pilot's: fewer, once
                draws = affordable = int(draws / PILOT_MARGIN)
        if band is None:
            refusal = (
                f"A credible range needs at least {MIN_DRAWS} draws of the fitted laws; this page's budget affords "
                f"{affordable} at these inputs. To see it, {self.knob()}."
            )
        return RangeResult(self.inputs, outlook, band, int(affordable), unit_cost, budget, refusal)
