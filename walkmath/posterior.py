"""How sure a fitted law is: posteriors over its parameters, and seeded draws of whole laws.

* ``ChangePosterior``: Dirichlet over the observed changes' chances; its mean
  is the smoothed observed law (``walkmath.fitting.empirical_change_law``);
* ``RatePosterior``: gamma over a Poisson mean (conjugate);
* ``SpreadPosterior``: negative-binomial mean and size, normal on their logs
  at the maximum-likelihood fit (an approximation, stated on the object).

``law_posterior(fit)`` picks the one for a fit. Every posterior draws whole
step laws (``draw_laws(draws, rng)``), vectorised across draws: the parameters
in one numpy call, the count laws' probabilities as one (draws x counts)
array on a common cut where every draw's dropped tail is below ``COUNT_TAIL``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from walkmath import checks
from walkmath.cost import LEVELS_CAP, ComputeTooLarge
from walkmath.fitting import ChangeFit, CountFit
from walkmath.steplaw import COUNT_TAIL, MAX_JUMPS, StepLaw

# Most posterior draws one call accepts.
DRAWS_CAP = 10_000
# Jeffreys prior of a Poisson mean: density proportional to mean^(-1/2), the gamma(1/2, 0) limit.
JEFFREYS_SHAPE, JEFFREYS_RATE = 0.5, 0.0


def _draws(draws) -> int:
    return checks.whole("draws", draws, minimum=1, maximum=DRAWS_CAP)


def _check_table(method: str, draws: int, width: int) -> None:
    """Refuse a (draws x width) table of chances over the engine's memory bound, before it is made."""
    if draws * width > LEVELS_CAP:
        raise ComputeTooLarge(
            f"{method} needs a table of {draws:,} draws x {width:,} chances; the limit is {LEVELS_CAP:,} "
            "numbers. To fit, use fewer draws or count in coarser units."
        )


@dataclass(frozen=True, eq=False)
class ChangePosterior:
    """Dirichlet posterior over the chances of ``steps``: concentration = observed + ``prior`` per step.

    Prior: symmetric Dirichlet with weight ``prior`` on every whole change from
    the smallest to the largest observed (steps with weight 0 never occur in a
    draw). The posterior mean is ``law``; with the default prior 1/2 (Jeffreys)
    it is the observed law smoothed by 1/2 (Gelman et al., Bayesian Data
    Analysis, 3rd ed., 2013, section 3.4, the multinomial model with its
    Dirichlet conjugate; section number from memory).
    """

    steps: np.ndarray
    concentration: np.ndarray
    prior: float
    law: StepLaw

    @property
    def prior_text(self) -> str:
        return (
            f"Dirichlet prior with weight {self.prior:g} on every change from {self.steps[0]:+d} to "
            f"{self.steps[-1]:+d} a period"
        )

    def draw_laws(self, draws: int, rng: np.random.Generator) -> list[StepLaw]:
        """``draws`` laws, each a Dirichlet draw of the chances (numpy's ``Generator.dirichlet``)."""
        draws = _draws(draws)
        live = np.flatnonzero(self.concentration > 0)
        _check_table("ChangePosterior.draw_laws", draws, live.size)
        chances = np.zeros((draws, self.steps.size))
        chances[:, live] = rng.dirichlet(self.concentration[live], size=draws)
        lowest = int(self.steps[0])
        return [StepLaw._trusted(lowest, row / math.fsum(row), label="observed changes, drawn") for row in chances]


@dataclass(frozen=True, eq=False)
class RatePosterior:
    """Gamma posterior over a Poisson mean per period: shape = prior shape + total, rate = prior rate + periods.

    The conjugate update of Gelman et al., Bayesian Data Analysis, 3rd ed.,
    2013, section 2.6 (the Poisson model: gamma(alpha, beta) prior, gamma(alpha +
    sum y, beta + n) posterior; section number from memory). Default prior:
    Jeffreys, gamma(1/2, 0) (improper; the posterior is proper once a period is seen).
    """

    shape: float
    rate: float
    prior_shape: float
    prior_rate: float

    @property
    def prior_text(self) -> str:
        if (self.prior_shape, self.prior_rate) == (JEFFREYS_SHAPE, JEFFREYS_RATE):
            return "Jeffreys prior on the mean (density proportional to mean^-1/2)"
        return f"gamma prior on the mean with shape {self.prior_shape:g} and rate {self.prior_rate:g} periods"

    @property
    def mean(self) -> float:
        return self.shape / self.rate

    @property
    def law(self) -> StepLaw:
        """Poisson law at the posterior mean."""
        return StepLaw.poisson(self.mean)

    def interval(self, credible: float = 0.9) -> tuple[float, float]:
        """Equal-tailed credible interval of the mean (gamma quantiles, each from its own tail)."""
        tail = (1.0 - checks.open_probability("credible", credible)) / 2.0
        law = stats.gamma(self.shape, scale=1.0 / self.rate)
        return float(law.ppf(tail)), float(law.isf(tail))

    def draw_means(self, draws: int, rng: np.random.Generator) -> np.ndarray:
        return rng.gamma(self.shape, 1.0 / self.rate, size=_draws(draws))

    def draw_laws(self, draws: int, rng: np.random.Generator) -> list[StepLaw]:
        """Poisson laws at ``draws`` gamma draws of the mean."""
        means = np.minimum(self.draw_means(draws, rng), 1e6)  # the Poisson law's own limit (1e-300 chance here)
        return _count_laws(stats.poisson(means), means, "poisson, drawn")


@dataclass(frozen=True, eq=False)
class SpreadPosterior:
    """Negative-binomial mean and size: independent normals on log mean and log size at the fit.

    An approximation (Gelman et al., Bayesian Data Analysis, 3rd ed., 2013,
    section 4.1, the normal approximation at the mode; from memory), with a flat
    prior on both logs: the standard deviations are the fit's standard errors
    over the estimates (observed information; mean and size are orthogonal, so
    the normals are independent).
    """

    log_mean: float
    log_mean_sd: float
    log_size: float
    log_size_sd: float
    law: StepLaw

    prior_text = "flat prior on log mean and log size; posterior approximated as normal at the fit"

    def draw_laws(self, draws: int, rng: np.random.Generator) -> list[StepLaw]:
        draws = _draws(draws)
        means = np.exp(self.log_mean + self.log_mean_sd * rng.standard_normal(draws))
        sizes = np.exp(self.log_size + self.log_size_sd * rng.standard_normal(draws))
        means = np.minimum(means, 1e6)  # the planner's largest mean (a 1e-300 chance here)
        return _count_laws(stats.nbinom(sizes, sizes / (sizes + means)), means, "negative binomial, drawn")


def law_posterior(fit, *, prior_shape: float = JEFFREYS_SHAPE, prior_rate: float = JEFFREYS_RATE):
    """The posterior of a fitted law: ``ChangePosterior`` for a ``ChangeFit`` (its smoothing is the prior),
    ``RatePosterior`` for a Poisson ``CountFit`` (gamma prior ``prior_shape``, ``prior_rate``; default
    Jeffreys), ``SpreadPosterior`` for a negative binomial (a negative binomial at its Poisson limit
    gets the ``RatePosterior``, as does one whose likelihood is flat toward that limit: no finite
    standard error of the size)."""
    if isinstance(fit, ChangeFit):
        concentration = fit.observed + fit.smoothing
        return ChangePosterior(fit.steps, concentration, fit.smoothing, fit.law)
    if not isinstance(fit, CountFit):
        raise ValueError(f"fit must be a CountFit or a ChangeFit; got {type(fit).__name__}")
    size = fit.estimate("size") if fit.family == "negative_binomial" else None
    if size is None or fit.at_boundary or not math.isfinite(size.standard_error):
        prior_shape = checks.real("prior_shape", prior_shape, minimum=0.0, maximum=1e6)
        prior_rate = checks.real("prior_rate", prior_rate, minimum=0.0, maximum=1e6)
        total = int(np.arange(fit.frequencies.size, dtype=np.int64) @ fit.frequencies)
        if prior_shape + total <= 0:
            raise ValueError("prior_shape must be above 0 when every period counted 0 (else the posterior is improper)")
        return RatePosterior(prior_shape + total, prior_rate + fit.periods, prior_shape, prior_rate)
    mean = fit.estimate("mean")
    return SpreadPosterior(
        math.log(mean.value), mean.standard_error / mean.value, math.log(size.value),
        size.standard_error / size.value, fit.law,
    )  # fmt: skip


def _count_laws(dist, means: np.ndarray, label: str) -> list[StepLaw]:
    """Count laws of a vectorised scipy distribution (one parameter set per draw), on one common cut:
    the smallest k with every draw's P(count > k) at most ``COUNT_TAIL`` (galloping then bisection
    on the survival function, as ``StepLaw``'s own cut)."""

    def beyond(count: int) -> float:
        return float(np.max(dist.sf(count)))

    last = MAX_JUMPS - 1
    if beyond(last) > COUNT_TAIL:
        raise ValueError(f"a drawn law has more than {COUNT_TAIL:g} of its mass above {last:,} counts; "
                         "count in coarser units")  # fmt: skip
    low, high = -1, 1
    while beyond(high) > COUNT_TAIL:
        low, high = high, min(2 * high + 1, last)
    while high - low > 1:
        middle = (low + high) // 2
        low, high = (low, middle) if beyond(middle) <= COUNT_TAIL else (middle, high)
    _check_table("posterior draw_laws", means.size, high + 1)
    chances = dist.pmf(np.arange(high + 1)[:, None]).T  # (draws, counts)
    dropped = np.asarray(dist.sf(high), dtype=float)
    laws = []
    for row, tail, mean in zip(chances, np.broadcast_to(dropped, means.shape), means, strict=True):
        if mean == 0:
            laws.append(StepLaw.fixed(0))
            continue
        laws.append(StepLaw._trusted(0, row / math.fsum(row), truncated_mass=float(tail), label=label))
    return laws
