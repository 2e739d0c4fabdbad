"""How well a fitted count law matches its history, and which law to plan with.

* ``goodness_of_fit``: Pearson's chi-square on pooled cells, and the table of
  observed against fitted frequencies for each count;
* ``recommend_law``: the observed changes, a Poisson law or a negative binomial,
  with the reason in the planner's words.

Journal references here are cited from memory.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from walkmath import checks
from walkmath.fitting import ChangeFit, CountFit, empirical_change_law, fit_count_law

# Pooling rule: every pooled cell expects at least this many periods (the usual rule of thumb for
# Pearson's chi-square; common practice, after Cochran 1954, Biometrics 10:417-451, from memory).
MIN_EXPECTED = 5.0
POOLING_RULE = (
    "counts are pooled from 0 upward until each pooled cell expects at least {min:g} periods; "
    "the remainder, with every count above the largest seen, joins the last cell"
)


@dataclass(frozen=True)
class FrequencyRow:
    """Periods with exactly ``count`` units (``and_above``: ``count`` or more), seen and fitted."""

    count: int
    observed: int
    fitted: float
    and_above: bool = False


@dataclass(frozen=True)
class PooledCell:
    """Counts ``first`` to ``last`` (``last`` None: and above) pooled into one chi-square cell."""

    first: int
    last: int | None
    observed: int
    expected: float

    @property
    def contribution(self) -> float:
        return (self.observed - self.expected) ** 2 / self.expected


@dataclass(frozen=True, eq=False)
class GoodnessOfFit:
    """Pearson's chi-square of a count fit on pooled cells.

    ``p_value`` is None when the pooled cells leave no degrees of freedom
    (cells - 1 - fitted parameters < 1): too short a history to test the shape.
    """

    statistic: float
    degrees_of_freedom: int
    p_value: float | None
    cells: tuple[PooledCell, ...]
    table: tuple[FrequencyRow, ...]
    min_expected: float
    rule: str


def goodness_of_fit(fit: CountFit, *, min_expected: float = MIN_EXPECTED) -> GoodnessOfFit:
    """Chi-square of ``fit`` against its own history (``fit.frequencies``), cells pooled by ``POOLING_RULE``.

    Expected frequencies come from the uncut law (scipy.stats pmf, and the
    survival function for the cell above the largest count seen, never
    1 - cdf), so they sum to the number of periods. Degrees of freedom: pooled
    cells - 1 - parameters fitted (1 Poisson, 2 negative binomial, also at its
    Poisson limit); p-value from the chi-square survival function.
    """
    if not isinstance(fit, CountFit):
        raise ValueError(f"fit must be a CountFit from fit_count_law; got {type(fit).__name__}")
    try:
        min_expected = checks.real("min_expected", min_expected, minimum=0.0, maximum=1e6, strict_minimum=True)
    except ValueError:
        raise ValueError(f"min_expected must be a number above 0 and at most 1,000,000; got {min_expected!r}") from None
    frequencies, periods = fit.frequencies, fit.periods
    law = fit.distribution()
    counts = np.arange(frequencies.size)
    fitted = np.append(periods * law.pmf(counts), periods * law.sf(counts[-1]))
    observed = np.append(frequencies, 0)
    table = tuple(
        FrequencyRow(int(k), int(o), float(e), and_above=k == frequencies.size)
        for k, o, e in zip(np.arange(frequencies.size + 1), observed, fitted, strict=True)
    )
    cells = _pool(observed, fitted, min_expected)
    statistic = math.fsum(cell.contribution for cell in cells)
    freedom = len(cells) - 1 - fit.parameters
    p_value = float(stats.chi2.sf(statistic, freedom)) if freedom >= 1 else None
    return GoodnessOfFit(statistic, freedom, p_value, cells, table, min_expected, POOLING_RULE.format(min=min_expected))


def _pool(observed: np.ndarray, fitted: np.ndarray, min_expected: float) -> tuple[PooledCell, ...]:
    """Adjacent cells from count 0 upward, each closed once it expects ``min_expected``; the last
    index is the open cell above the largest count seen."""
    cells: list[PooledCell] = []
    first, seen, expected = 0, 0, 0.0
    for count in range(observed.size):
        seen, expected = seen + int(observed[count]), expected + float(fitted[count])
        if expected >= min_expected and count < observed.size - 1:
            cells.append(PooledCell(first, count, seen, expected))
            first, seen, expected = count + 1, 0, 0.0
    if cells and expected < min_expected:  # the remainder joins the last closed cell
        last = cells.pop()
        first, seen, expected = last.first, last.observed + seen, last.expected + expected
    cells.append(PooledCell(first, None, seen, expected))
    return tuple(cells)


# -- which law to plan with -------------------------------------------------------------------

CHOICES = ("empirical", "poisson", "negative_binomial")
PERIOD_WORDS = ("day", "week", "shift", "month", "period", "hour")
# What the history counts, as the subject of the reason's first sentence.
SUBJECTS = {
    "demand": "Demand varies",
    "deliveries": "Deliveries vary",
    "change": "The change varies",
    "failures": "Failures vary",
    "returns": "Returns vary",
    "use": "Use varies",
}


@dataclass(frozen=True, eq=False)
class Recommendation:
    """The law to plan with (``choice``, one of ``CHOICES``) and why, with every fit it weighed.

    ``spread_p_value``: likelihood-ratio test of the Poisson law against the
    negative binomial (small: the counts vary more than a Poisson law allows);
    None when the history is not counts (changes that go both ways).
    """

    choice: str
    reason: str
    empirical: ChangeFit
    poisson: CountFit | None = None
    negative_binomial: CountFit | None = None
    goodness: dict[str, GoodnessOfFit] | None = None
    spread_p_value: float | None = None

    @property
    def law(self):
        """The recommended law (a StepLaw)."""
        fit = {"empirical": self.empirical, "poisson": self.poisson, "negative_binomial": self.negative_binomial}
        return fit[self.choice].law


def recommend_law(history, *, what: str = "demand", period: str = "day", level: float = 0.05) -> Recommendation:
    """Choose between the observed changes, a Poisson law and a negative binomial for ``history``.

    ``history``: whole numbers per period: counts (``what`` names them: demand,
    deliveries) or net changes (negative values: the observed changes are the
    only choice). For counts: the negative binomial when the likelihood-ratio
    test rejects the Poisson law at ``level`` (its null distribution on the
    boundary is half chi-square(0), half chi-square(1): Self and Liang 1987,
    JASA 82:605-610), else the Poisson law; then the observed changes instead
    when that law's chi-square rejects it at ``level``.
    """
    what = checks.choice("what", what, tuple(SUBJECTS))
    period = checks.choice("period", period, PERIOD_WORDS)
    level = checks.open_probability("level", level)
    values = np.asarray(history)
    empirical = empirical_change_law(values, name="history")
    span = _periods(values.size, period)
    if values.min() < 0:
        reason = (
            f"The level moved both ways (from {int(values.min()):+d} to {int(values.max()):+d} a {period}); "
            f"Poisson and negative-binomial laws describe counts in one direction, so plan with the changes "
            f"as they were observed over {span}."
        )
        return Recommendation("empirical", reason, empirical)
    poisson = fit_count_law(values, "poisson")
    figures = f"variance {float(np.var(values)):.3g} against a mean of {poisson.mean:.3g} units a {period}"
    try:
        spread = fit_count_law(values, "negative_binomial")
    except ValueError:  # too wide a negative binomial for the engine's laws
        reason = (
            f"{SUBJECTS[what]} far more from {period} to {period} than a Poisson law allows ({figures}), more "
            f"than a negative binomial in these units can hold, so plan with the amounts as they were "
            f"observed over {span}."
        )
        return Recommendation("empirical", reason, empirical, poisson, goodness={"poisson": goodness_of_fit(poisson)})
    goodness = {"poisson": goodness_of_fit(poisson), "negative_binomial": goodness_of_fit(spread)}
    ratio = max(2.0 * (spread.loglik - poisson.loglik), 0.0)
    spread_p = 0.5 * float(stats.chi2.sf(ratio, 1)) if ratio > 0 else 1.0
    if spread_p < level:
        choice = "negative_binomial"
        reason = (
            f"{SUBJECTS[what]} more from {period} to {period} than a Poisson law allows ({figures}): "
            f"busy {period}s come in clumps. The negative binomial covers that extra spread"
        )
    else:
        choice = "poisson"
        reason = (
            f"{SUBJECTS[what]} from {period} to {period} about as a Poisson law with the same mean "
            f"does ({figures}), so the plainest law, fitted by its mean alone, is enough"
        )
    check = goodness[choice]
    if check.p_value is None:
        reason += f"; {span} {'is' if values.size == 1 else 'are'} too few to test how often each amount occurs."
    elif check.p_value < level:
        label = "the negative binomial" if choice == "negative_binomial" else "a Poisson law"
        reason += (
            f"; but even {label} does not match how often each amount occurred (chi-square p = "
            f"{check.p_value:.2g} on {len(check.cells)} pooled cells), so plan with the amounts as they were "
            f"observed over {span}."
        )
        choice = "empirical"
    else:
        reason += f" (chi-square p = {check.p_value:.2g} on {len(check.cells)} pooled cells)."
    return Recommendation(choice, reason, empirical, poisson, spread, goodness, spread_p)


def _periods(count: int, period: str) -> str:
    return f"{count:,} {period}" + ("" if count == 1 else "s")
