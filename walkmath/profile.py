"""A weekday profile of daily counts, kept only when the history supports it.

The profile gives each weekday its own mean (Poisson), or its own mean with one
shared size (negative binomial), fitted by maximum likelihood; it is tested by
the likelihood ratio against one law for every day (Wilks 1938, Ann. Math.
Statist. 9:60-62: twice the log-ratio is chi-square with 6 degrees of freedom
when the days do not differ). ``WeekdayProfile.cycle`` lines the seven laws up
with a plan's first day for ``BandedWalk``'s list of laws used cyclically.
The reference is cited from memory.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from walkmath import checks
from walkmath.fitting import (
    FAMILIES,
    beyond_counts,
    count_history,
    log_factorials,
    over_dispersed,
    poisson_limit,
    profile_loglik,
    solve_size,
)
from walkmath.steplaw import StepLaw

WEEKDAYS = ("Monday", "Tuesday", "Wednesday", "Thursday", "Friday", "Saturday", "Sunday")
# Fewest days of each weekday the test accepts (four weeks of history).
MIN_PER_WEEKDAY = 4


@dataclass(frozen=True, eq=False)
class WeekdayProfile:
    """Per-weekday means (index 0 = Monday, as ``datetime.date.weekday``), the test, and the laws.

    ``supported``: the likelihood-ratio test rejects one law for every day at
    ``level``. ``laws[d]`` is weekday d's law; ``size`` the shared negative-binomial
    size (inf for Poisson, or a negative binomial at its Poisson limit).
    """

    family: str
    means: tuple[float, ...]
    days: tuple[int, ...]
    size: float
    loglik: float
    flat_loglik: float
    statistic: float
    degrees_of_freedom: int
    p_value: float
    level: float
    laws: tuple[StepLaw, ...]

    @property
    def supported(self) -> bool:
        return self.p_value < self.level

    def cycle(self, first_weekday: int) -> list[StepLaw]:
        """The seven laws starting at ``first_weekday`` (the weekday of a plan's first period)."""
        first = checks.whole("first_weekday", first_weekday, minimum=0, maximum=6)
        return [self.laws[(first + offset) % 7] for offset in range(7)]


def weekday_profile(counts, weekdays, family: str = "poisson", *, level: float = 0.05) -> WeekdayProfile:
    """Fit one law per weekday to daily ``counts`` and test it against one law for every day.

    ``weekdays[i]`` (0 = Monday .. 6 = Sunday) is the weekday of ``counts[i]``; each
    weekday needs at least ``MIN_PER_WEEKDAY`` days. The negative binomial shares
    one size across the week (its profile score solved as in ``fit_count_law``),
    at the Poisson limit when the counts are no more spread about their weekday
    means than a Poisson law's. O(days + largest count).
    """
    family = checks.choice("family", family, FAMILIES)
    level = checks.open_probability("level", level)
    values = count_history("counts", counts)
    days = count_history("weekdays", weekdays)
    if days.size != values.size:
        raise ValueError(f"weekdays must name one weekday per count ({values.size}); got {days.size}")
    if days.max() > 6:
        index = int(np.argmax(days > 6))
        raise ValueError(
            f"weekdays must be whole numbers from 0 (Monday) to 6 (Sunday); entry {index} is {days[index]}"
        )
    per_day = np.bincount(days, minlength=7)
    if per_day.min() < MIN_PER_WEEKDAY:
        short = int(np.argmin(per_day))
        raise ValueError(
            f"weekdays: a weekday profile needs at least {MIN_PER_WEEKDAY} of each weekday; "
            f"the history has {per_day[short]} {WEEKDAYS[short]}(s)"
        )
    totals = np.bincount(days, weights=values, minlength=7).astype(np.int64)
    means = tuple(float(total / count) for total, count in zip(totals, per_day, strict=True))
    frequencies = np.bincount(values)
    flat = [(int(values.size), int(totals.sum()))]
    weekly = [(int(n), int(total)) for n, total in zip(per_day, totals, strict=True)]
    if family == "poisson":
        size = math.inf
        loglik, flat_loglik = _poisson_sup(frequencies, weekly), _poisson_sup(frequencies, flat)
    else:
        size, loglik = _nb_sup(frequencies, weekly)
        flat_loglik = _nb_sup(frequencies, flat)[1]
    loglik, flat_loglik = float(loglik), float(flat_loglik)
    statistic = max(2.0 * (loglik - flat_loglik), 0.0)
    laws = tuple(_law(mean, size) for mean in means)
    return WeekdayProfile(
        family, means, tuple(int(n) for n in per_day), size, loglik, flat_loglik, statistic, 6,
        float(stats.chi2.sf(statistic, 6)), level, laws,
    )  # fmt: skip


def _groups(counts: list[tuple[int, int]]) -> tuple[tuple[int, float], ...]:
    return tuple((periods, total / periods) for periods, total in counts)


def _poisson_sup(frequencies: np.ndarray, counts: list[tuple[int, int]]) -> float:
    """Largest Poisson log-likelihood with one mean per group: sum_g (S_g log m_g - S_g) - sum log x!."""
    return poisson_limit(_groups(counts)) - log_factorials(frequencies)


def _nb_sup(frequencies: np.ndarray, counts: list[tuple[int, int]]) -> tuple[float, float]:
    """Size and largest negative-binomial log-likelihood with one mean per group and a shared size."""
    if not over_dispersed(frequencies, counts):
        return math.inf, _poisson_sup(frequencies, counts)
    beyond, groups = beyond_counts(frequencies), _groups(counts)
    size = solve_size(beyond, groups)
    return size, profile_loglik(beyond, groups, size) - log_factorials(frequencies)


def _law(mean: float, size: float) -> StepLaw:
    if mean == 0 or math.isinf(size):
        return StepLaw.poisson(mean)
    return StepLaw.negative_binomial(mean, mean + mean * mean / size)
