"""First stock-out time by the hitting-time theorem.

For a walk whose down-steps are at most 1 (it cannot jump over a level on the
way down), started ``distance`` levels above the first level that counts as a
stock-out, the first time T it gets there satisfies

    P(T = n) = (distance / n) P(S_n = -distance),   n >= 1,

where S_n is the free walk (van der Hofstad and Keane, "An elementary proof of
the hitting time theorem", American Mathematical Monthly 115 (2008) 753-756).
P(S_n = -distance) comes from the closed binomial form for nearest-neighbour
laws without a stay, and from an exact running convolution otherwise, so each
P(T = n) is a product of non-negative terms and keeps its relative accuracy.
"""

from __future__ import annotations

import numpy as np
from scipy import stats

from walkmath import checks
from walkmath.cost import Work
from walkmath.distribution import EVALUATION_UNITS
from walkmath.steplaw import StepLaw


def first_stockout_times(law: StepLaw, start: int, low: int, horizon: int) -> np.ndarray:
    """P(first stock-out happens in period n) for n = 0..horizon, no capacity (hitting-time theorem).

    ``low`` and ``start`` (at least low) within +-``checks.LEVEL_LIMIT``, ``horizon`` 0 to
    ``checks.HORIZON_CAP``; the work (``work``) is priced first and refused over ``WORK_CAP``.
    """
    if not isinstance(law, StepLaw):
        raise ValueError("law must be a single StepLaw (the hitting-time theorem needs a fixed step law)")
    if law.lowest < -1:
        raise ValueError(
            f"law must have down-steps of at most 1 for the hitting-time theorem; its lowest step is {law.lowest}"
        )
    low = checks.level("low", low)
    start = checks.whole("start", start, minimum=low, maximum=checks.LEVEL_LIMIT)
    horizon = checks.horizon(horizon)
    work(law, horizon).check()
    distance = start - low + 1  # the level low - 1 is the first stock-out level
    periods = np.arange(1, horizon + 1)
    result = np.zeros(horizon + 1)
    if law.lowest > -1 or horizon == 0:
        return result
    result[1:] = distance / periods * _free_walk_at(law, -distance, horizon)
    return result


def work(law: StepLaw, horizon: int) -> Work:
    """Priced work of ``first_stockout_times`` over ``horizon`` periods, in ``walkmath.cost`` units.

    Two-point laws: one binomial term per period. Otherwise the running convolution: per
    period, one ``np.convolve`` of the kept window with the law plus the period's fixed
    charge. The window grows by (jumps - 1) a period from the start and shrinks by
    (largest up-step + 1) a period towards the horizon, so its mean length is at most half
    its peak, which is priced here.
    """
    knob = "shorten the horizon or coarsen the units of the step law"
    if law.lowest > -1 or horizon == 0:
        return Work("first_stockout_times", 1, horizon, law.probs.size, copies=0, knob=knob)
    if np.count_nonzero(law.probs) == 2:
        units = horizon * EVALUATION_UNITS
        return Work("first_stockout_times", horizon, 1, 1, copies=0, dense=units, knob=knob)
    growth, shrink = law.probs.size - 1, max(law.highest, 0) + 1
    peak = growth * shrink * horizon / (growth + shrink) + 1
    return Work("first_stockout_times", int(peak // 2) + 1, horizon, law.probs.size, knob=knob)


def _free_walk_at(law: StepLaw, level: int, horizon: int) -> np.ndarray:
    """P(S_n = level) for n = 1..horizon, S_0 = 0."""
    if np.count_nonzero(law.probs) == 2:
        # Steps -1 and h only: S_n = (h + 1) U - n with U ~ Binomial(n, P(step = h)).
        h = law.highest
        periods = np.arange(1, horizon + 1)
        ups, spare = np.divmod(periods + level, h + 1)
        whole = (spare == 0) & (ups >= 0) & (ups <= periods)
        values = np.zeros(horizon)
        values[whole] = stats.binom.pmf(ups[whole], periods[whole], law.probs[-1])
        return values
    return _running_convolution(law, level, horizon)


def _running_convolution(law: StepLaw, level: int, horizon: int) -> np.ndarray:
    """P(S_n = level) by convolving one period at a time, keeping only levels that can still return.

    At period n only levels from level - (horizon - n) x largest up-step to
    level + (horizon - n) can still reach ``level`` by the horizon (down-steps
    are at most 1), so the kept window shrinks as n grows.
    """
    up = max(law.highest, 0)
    values = np.zeros(horizon)
    lowest, probs = 0, np.ones(1)
    for n in range(1, horizon + 1):
        probs = np.convolve(probs, law.probs)
        lowest += law.lowest
        remaining = horizon - n
        keep_lo = max(level - remaining * up - lowest, 0)
        keep_hi = min(level + remaining - lowest, probs.size - 1)
        index = level - lowest
        values[n - 1] = probs[index] if 0 <= index < probs.size else 0.0
        if keep_hi < keep_lo:
            break
        probs = probs[keep_lo : keep_hi + 1]
        lowest += keep_lo
    return values
