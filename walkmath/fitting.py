"""Laws fitted to a history: counts per period by maximum likelihood, and the observed change law.

* ``fit_count_law``: Poisson or negative-binomial counts (demand, deliveries) by
  maximum likelihood, with standard errors and confidence intervals;
* ``empirical_change_law``: the observed law of the net change per period, with
  a stated smoothing for changes inside the observed span that were never seen.

Every sum over the history runs on its table of frequencies: ``beyond[j]``, the
number of periods whose count exceeds j, turns the log-likelihood of the
negative binomial into sums of non-negative terms over j (no differences of
log-gamma values of large arguments). Journal references here are cited from
memory (authors, year, volume and pages not checked against the papers).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction

import numpy as np
from scipy import optimize, special, stats

from walkmath import checks
from walkmath.steplaw import MAX_JUMPS, OBSERVATION_CAP, STEP_LIMIT, StepLaw

# Largest count of one period the fits accept (the Poisson law's own limit on its mean).
COUNT_LIMIT = 10**6
FAMILIES = ("poisson", "negative_binomial")


@dataclass(frozen=True)
class Estimate:
    """A fitted parameter: its value, standard error and confidence interval (``high`` may be inf)."""

    name: str
    value: float
    standard_error: float
    low: float
    high: float
    method: str  # how the interval was found, in a few words


@dataclass(frozen=True, eq=False)
class CountFit:
    """Maximum-likelihood count law of a history of counts per period.

    ``law`` is a StepLaw over counts 0, 1, 2, ...; ``loglik`` the maximised
    log-likelihood; ``frequencies[k]`` the number of periods with count k.
    ``at_boundary``: a negative-binomial fit to counts no more spread than a
    Poisson law's, whose likelihood is highest in the Poisson limit (size
    infinite); its law is then that Poisson law.
    """

    family: str
    law: StepLaw
    loglik: float
    mean: float
    variance: float  # of the fitted law
    size: float  # negative-binomial size (clumping); inf for a Poisson law
    estimates: tuple[Estimate, ...]
    frequencies: np.ndarray
    confidence: float
    at_boundary: bool = False

    @property
    def periods(self) -> int:
        return int(self.frequencies.sum())

    @property
    def parameters(self) -> int:
        """Number of parameters fitted (for degrees of freedom): 1 for Poisson, 2 for negative binomial."""
        return 1 if self.family == "poisson" else 2

    def estimate(self, name: str) -> Estimate:
        for item in self.estimates:
            if item.name == name:
                return item
        raise ValueError(f"name must be one of {', '.join(repr(e.name) for e in self.estimates)}; got {name!r}")

    def distribution(self):
        """The fitted law as a frozen scipy.stats distribution, uncut (for expected frequencies)."""
        if math.isinf(self.size):
            return stats.poisson(self.mean)
        return stats.nbinom(self.size, self.size / (self.size + self.mean))


def count_history(name: str, counts, *, minimum: int = 0) -> np.ndarray:
    """``counts`` as an int64 array of whole numbers from ``minimum`` to ``COUNT_LIMIT`` (1 to
    ``OBSERVATION_CAP`` of them), or ValueError naming ``name``, the entry and the range."""
    values = np.asarray(counts)
    if values.ndim != 1 or values.size == 0:
        raise ValueError(f"{name} must be a non-empty list of whole numbers")
    if values.size > OBSERVATION_CAP:
        raise ValueError(f"{name} must hold at most {OBSERVATION_CAP:,} periods; got {values.size:,}")
    if values.dtype.kind == "f":
        bad = ~np.isfinite(values) | (values != np.floor(values))
    elif values.dtype.kind in "iu":
        bad = np.zeros(values.size, dtype=bool)
    else:
        raise ValueError(f"{name} must be a list of whole numbers; got values of type {values.dtype}")
    bad |= (values < minimum) | (values > COUNT_LIMIT)
    if bad.any():
        index = int(np.argmax(bad))
        raise ValueError(
            f"{name} must be whole numbers from {minimum} to {COUNT_LIMIT:,}; entry {index} is {values[index].item()!r}"
        )
    return values.astype(np.int64)


def fit_count_law(counts, family: str = "poisson", *, confidence: float = 0.95) -> CountFit:
    """Poisson or negative-binomial law of ``counts`` (whole numbers per period) by maximum likelihood.

    Poisson: the mean is the average count; its interval is the exact one from
    the chi-square quantiles of the total (Garwood 1936, Biometrika 28:437-442).
    Negative binomial (mean, size; variance = mean + mean^2 / size): the mean is
    again the average count, whatever the size, and the size solves the profile
    score equation (Anscombe 1950, Biometrika 37:358-382), which has a finite root
    exactly when the counts' variance (divisor n) exceeds their mean (Aragon,
    Eberly and Eberly 1992, Stat. Probab. Letters 15:375-379); otherwise the fit is
    the Poisson limit (``at_boundary``). The mean's interval is the normal one
    with the observed information, the size's the profile-likelihood interval
    (its upper end inf when the Poisson limit lies inside). Root finding by
    Brent's method to 1e-12 relative in log size; O(periods + largest count).
    """
    family = checks.choice("family", family, FAMILIES)
    confidence = checks.open_probability("confidence", confidence)
    values = count_history("counts", counts)
    frequencies = np.bincount(values)
    if family == "poisson":
        return _poisson_fit(frequencies, confidence)
    return _negative_binomial_fit(frequencies, confidence)


def _poisson_fit(frequencies: np.ndarray, confidence: float) -> CountFit:
    periods, total = int(frequencies.sum()), _total(frequencies)
    mean = total / periods
    tail = (1.0 - confidence) / 2.0
    # Garwood's exact interval for the mean of a Poisson count, scaled to one period.
    low = 0.0 if total == 0 else stats.chi2.ppf(tail, 2 * total) / (2 * periods)
    high = stats.chi2.isf(tail, 2 * total + 2) / (2 * periods)
    estimate = Estimate("mean", mean, math.sqrt(mean / periods), float(low), float(high), "exact (Garwood)")
    return CountFit(
        family="poisson",
        law=StepLaw.poisson(mean),
        loglik=float(_poisson_loglik(frequencies, mean)),
        mean=mean,
        variance=mean,
        size=math.inf,
        estimates=(estimate,),
        frequencies=frequencies,
        confidence=confidence,
    )


def _negative_binomial_fit(frequencies: np.ndarray, confidence: float) -> CountFit:
    periods, total = int(frequencies.sum()), _total(frequencies)
    mean = total / periods
    z = float(stats.norm.isf((1.0 - confidence) / 2.0))
    if not over_dispersed(frequencies):
        poisson = _poisson_fit(frequencies, confidence)
        size_estimate = Estimate("size", math.inf, math.nan, math.inf, math.inf, "Poisson limit")
        return CountFit(
            "negative_binomial", poisson.law, poisson.loglik, mean, mean, math.inf,
            (poisson.estimates[0], size_estimate), frequencies, confidence, at_boundary=True,
        )  # fmt: skip
    beyond = beyond_counts(frequencies)
    groups = ((periods, mean),)
    size = solve_size(beyond, groups)
    variance = mean + mean * mean / size
    try:
        law = StepLaw.negative_binomial(mean, variance)
    except ValueError as refusal:
        raise ValueError(f"counts: the fitted negative binomial cannot be used ({refusal})") from None
    loglik = float(profile_loglik(beyond, groups, size) - log_factorials(frequencies))
    mean_se = math.sqrt(variance / periods)  # observed information of the mean (orthogonal to the size)
    size_info = size_information(beyond, groups, size)
    size_se = math.inf if size_info <= 0 else 1.0 / math.sqrt(size_info)
    low, high = profile_interval(beyond, groups, size, stats.chi2.isf(1.0 - confidence, 1) / 2.0)
    # variance = mean + mean^2 / size: delta method, interval normal on the log scale
    slope_mean, slope_size = 1.0 + 2.0 * mean / size, -((mean / size) ** 2)
    variance_se = math.hypot(slope_mean * mean_se, slope_size * size_se)
    spread = z * variance_se / variance
    estimates = (
        Estimate("mean", mean, mean_se, max(mean - z * mean_se, 0.0), mean + z * mean_se, "normal"),
        Estimate("size", size, size_se, low, high, "profile likelihood"),
        Estimate("variance", variance, variance_se, variance * math.exp(-spread), variance * math.exp(spread),
                 "delta method, log scale"),
    )  # fmt: skip
    return CountFit("negative_binomial", law, loglik, mean, variance, size, estimates, frequencies, confidence)


def _total(frequencies: np.ndarray) -> int:
    return int(np.dot(np.arange(frequencies.size, dtype=np.int64), frequencies))


def over_dispersed(frequencies: np.ndarray, groups: list[tuple[int, int]] | None = None) -> bool:
    """Spread about the group means (divisor n) above the mean, decided exactly: sum x^2 - sum_g S_g^2 / n_g > S.

    ``groups`` lists (periods, total) per group (default: one group, the whole history); this is
    when the size's profile score has a finite root (its sign far out, expanded in 1 / size).
    """
    counts = np.arange(frequencies.size, dtype=np.int64)
    # each sum stays below 1e18 with at most 1e6 periods of at most 1e6 units; products in Python ints
    total, squares = int(counts @ frequencies), int((counts * counts) @ frequencies)
    groups = groups or [(int(frequencies.sum()), total)]
    return squares - sum(Fraction(part * part, periods) for periods, part in groups) > total


def beyond_counts(frequencies: np.ndarray) -> np.ndarray:
    """beyond[j] = number of periods whose count exceeds j, j = 0..largest - 1."""
    return (frequencies.sum() - np.cumsum(frequencies))[:-1].astype(float)


def log_factorials(frequencies: np.ndarray) -> float:
    counts = np.arange(frequencies.size, dtype=float)
    return math.fsum(frequencies * special.gammaln(counts + 1.0))


def _poisson_loglik(frequencies: np.ndarray, mean: float) -> float:
    """sum_k f_k (k log mean - mean - log k!), with 0 log 0 = 0."""
    counts = np.arange(frequencies.size, dtype=float)
    return math.fsum(frequencies * special.xlogy(counts, mean)) - frequencies.sum() * mean - log_factorials(frequencies)


def profile_loglik(beyond: np.ndarray, groups, size: float) -> float:
    """Negative-binomial log-likelihood without the log k! terms, groups of (periods, mean) sharing ``size``.

    log Gamma(x + r) - log Gamma(r) = sum_{j < x} log(r + j), summed over the history as
    sum_j beyond[j] log(r + j); the rest is sum_g n_g (r log(r / (r + m_g)) + m_g log(m_g / (r + m_g))).
    """
    part = math.fsum(beyond * np.log(size + np.arange(beyond.size)))
    for periods, mean in groups:
        part -= periods * size * math.log1p(mean / size)
        part += periods * (special.xlogy(mean, mean) - special.xlogy(mean, size + mean))
    return part


def size_score(beyond: np.ndarray, groups, size: float) -> float:
    """d loglik / d size with every mean at its group's average:
    sum_j beyond[j] / (r + j) - sum_g n_g log(1 + m_g / r)."""
    part = math.fsum(beyond / (size + np.arange(beyond.size)))
    return part - math.fsum(periods * math.log1p(mean / size) for periods, mean in groups)


def size_information(beyond: np.ndarray, groups, size: float) -> float:
    """Observed information of the size: -d^2 loglik / d size^2 at fixed group means."""
    part = math.fsum(beyond / (size + np.arange(beyond.size)) ** 2)
    return part - math.fsum(periods * mean / (size * (size + mean)) for periods, mean in groups)


def solve_size(beyond: np.ndarray, groups) -> float:
    """Root of the size score in log size, bracketed by galloping (the score is positive near 0 and
    negative far out when the counts are over-dispersed)."""

    def score(log_size: float) -> float:
        return size_score(beyond, groups, math.exp(log_size))

    low, high = 0.0, 0.0
    while score(low) <= 0:
        low -= 4.0
        if low < -700:
            raise ValueError("counts: no negative-binomial size fits (clumping too extreme)")
    while score(high) >= 0:
        high += 4.0
        if high > 700:
            raise ValueError("counts: no negative-binomial size fits (spread too close to a Poisson law's)")
    return math.exp(optimize.brentq(score, low, high, xtol=1e-13, rtol=1e-12))


def profile_interval(beyond: np.ndarray, groups, size: float, drop: float) -> tuple[float, float]:
    """Sizes whose profile log-likelihood lies within ``drop`` of its top (chi-square(1) / 2).

    Above the top the log-likelihood falls toward the Poisson limit; when that limit lies
    within ``drop`` the interval has no upper end (inf).
    """
    top = profile_loglik(beyond, groups, size)

    def short(log_size: float) -> float:
        return top - profile_loglik(beyond, groups, math.exp(log_size)) - drop

    start = math.log(size)
    low = start - 1.0
    while short(low) < 0:
        low -= 2.0
        if low < -700:
            return 0.0, math.inf
    limit = poisson_limit(groups)
    if top - limit - drop <= 0:
        high_value = math.inf
    else:
        high = start + 1.0
        while short(high) < 0:
            high += 2.0
        high_value = math.exp(optimize.brentq(short, start, high, xtol=1e-12, rtol=1e-12))
    return math.exp(optimize.brentq(short, low, start, xtol=1e-12, rtol=1e-12)), high_value


def poisson_limit(groups) -> float:
    """Limit of ``profile_loglik`` as the size grows: sum_g n_g (m_g log m_g - m_g), the Poisson log-likelihood
    without log k! (the sum over j of log(r + j) and the group terms' r log r cancel in the limit)."""
    return math.fsum(periods * (special.xlogy(mean, mean) - mean) for periods, mean in groups)


# -- the observed law of the change per period --------------------------------------------------


@dataclass(frozen=True, eq=False)
class ChangeFit:
    """Observed law of the net change per period, smoothed.

    ``steps`` is every whole change from the smallest to the largest seen,
    ``observed[i]`` how many periods changed by ``steps[i]``; ``law`` gives each
    step (observed + smoothing) / (periods + smoothing x len(steps)): the
    posterior mean under a symmetric Dirichlet prior of weight ``smoothing`` per
    step (``walkmath.posterior``), so a change inside the span never seen keeps
    a small chance. No chance is given beyond the span.
    """

    law: StepLaw
    steps: np.ndarray
    observed: np.ndarray
    smoothing: float
    mean: float
    mean_standard_error: float

    @property
    def periods(self) -> int:
        return int(self.observed.sum())

    @property
    def unseen(self) -> int:
        """Number of changes inside the observed span that no period shows."""
        return int(np.count_nonzero(self.observed == 0))


def empirical_change_law(changes, *, smoothing: float = 0.5, name: str = "changes") -> ChangeFit:
    """Observed law of whole changes per period (negative: the level fell), with add-``smoothing``.

    ``smoothing`` (0 to 10; default 1/2, the Jeffreys prior of a multinomial) is
    added to the count of every whole change from the smallest to the largest
    observed; 0 gives the raw frequencies. The mean's standard error is the
    sample standard deviation / sqrt(periods).
    """
    smoothing = checks.real("smoothing", smoothing, minimum=0.0, maximum=10.0)
    values = np.asarray(changes)
    if values.ndim != 1 or values.size == 0:
        raise ValueError(f"{name} must be a non-empty list of whole numbers")
    if values.size > OBSERVATION_CAP:
        raise ValueError(f"{name} must hold at most {OBSERVATION_CAP:,} periods; got {values.size:,}")
    if values.dtype.kind not in "iuf" or (values.dtype.kind == "f" and not np.all(np.isfinite(values))):
        raise ValueError(f"{name} must be a list of whole numbers")
    bad = (values != np.floor(values)) | (np.abs(values) > STEP_LIMIT)
    if bad.any():
        index = int(np.argmax(bad))
        raise ValueError(f"{name} must be whole numbers from {-STEP_LIMIT:,} to {STEP_LIMIT:,}; "
                         f"entry {index} is {values[index].item()!r}")  # fmt: skip
    values = values.astype(np.int64)
    lowest, span = int(values.min()), int(values.max() - values.min()) + 1
    if span > MAX_JUMPS:
        raise ValueError(f"{name} must span at most {MAX_JUMPS:,} whole numbers (largest - smallest + 1); "
                         f"they span {span:,}")  # fmt: skip
    observed = np.bincount(values - lowest)
    weights = observed + smoothing
    law = StepLaw._trusted(lowest, weights / math.fsum(weights), label="observed changes")
    periods = values.size
    centred = values - values.mean()
    spread = math.sqrt(math.fsum(centred * centred) / (periods - 1)) if periods > 1 else math.inf
    return ChangeFit(
        law=law,
        steps=np.arange(lowest, lowest + observed.size),
        observed=observed,
        smoothing=smoothing,
        mean=float(values.mean()),
        mean_standard_error=spread / math.sqrt(periods),
    )
