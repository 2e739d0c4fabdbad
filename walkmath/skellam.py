"""The free walk in continuous time: +1 jumps at one Poisson rate, -1 jumps at another.

Its level at time t is the Skellam law (Skellam, JRSS 109(3), 1946): the difference
of two independent Poisson counts.
"""

from __future__ import annotations

import math

import numpy as np

from walkmath import checks
from walkmath.continuous import time_within
from walkmath.cost import Work
from walkmath.distribution import LevelDistribution
from walkmath.uniformization import peak_relative_weights

# Each tail of the Skellam law left out of ``continuous_level_distribution`` holds at most this mass.
SKELLAM_TAIL = 1e-300
# Largest mean number of jumps (up_rate + down_rate) * t of the free walk. The work (one Python
# step of the ratio recurrence per level, ``LEVEL_UNITS``) is priced and capped separately.
JUMP_CAP = 1e9
# Work units (``walkmath.cost``) of one step of the ratio recurrence, a Python loop: about 260 ns.
LEVEL_UNITS = 1_300


def continuous_level_distribution(up_rate: float, down_rate: float, t: float, start: int = 0) -> LevelDistribution:
    """Level at time t of a free walk with +1 jumps at ``up_rate`` and -1 jumps at ``down_rate``.

    Skellam law P(N = k) = e^-(a+b) (a/b)^(k/2) I_|k|(2 sqrt(ab)), a = up_rate t, b = down_rate t.
    Built from ratios of successive probabilities, which are ratios of Bessel functions: the
    recurrence I_{k-1} - I_{k+1} = (2k/z) I_k (Abramowitz and Stegun 9.6.26) run downwards is a
    continued fraction of positive terms (Miller's algorithm), then normalised to total mass 1.
    Every entry keeps relative accuracy near 1e-13 at any rates, where the closed form through
    ``scipy.special.ive`` underflows (ive(1000, 2) = 0 though P(N = 1000) = 0.0126 for a = 1000,
    b = 0.001). The levels leave out at most ``SKELLAM_TAIL`` (1e-300) of mass on each side.
    Rates at least 0, t at least 0 with (up_rate + down_rate) t at most ``JUMP_CAP``;
    the work (``work``) is priced before it starts and refused over ``WORK_CAP``.
    """
    up_rate = checks.real("up_rate", up_rate, minimum=0.0)
    down_rate = checks.real("down_rate", down_rate, minimum=0.0)
    jump_rate = up_rate + down_rate
    t = time_within("t", t, JUMP_CAP / jump_rate if jump_rate > 0 else math.inf)
    start = checks.level("start", start)
    up, down = up_rate * t, down_rate * t
    work(up, down).check()
    # log P(N = k) - log P(N = k - 1) for every step of the range, lowest level first
    below = _log_ratios(down, up)  # log P(N = -k) - log P(N = 1 - k), k = 1, 2, ...
    increments = np.concatenate((-below[::-1], _log_ratios(up, down)))
    lowest = start - below.size
    weights = peak_relative_weights(increments)
    probs = weights / math.fsum(weights)
    kept = np.flatnonzero(probs)  # drop end levels whose probability underflows to 0
    probs = probs[kept[0] : kept[-1] + 1]
    lowest += int(kept[0])
    return LevelDistribution(np.arange(lowest, lowest + probs.size), probs)


def work(up: float, down: float) -> Work:
    """Priced work for mean jump counts ``up`` and ``down`` (rate x time): one recurrence step per level.

    Each side runs from ``_tail_reach`` plus a margin of 64 + sqrt(up + down) levels down to 1.
    """
    margin = 64 + math.ceil(math.sqrt(up + down))
    steps = sum(_tail_reach(a, b) + margin for a, b in ((up, down), (down, up)) if a > 0)
    return Work(
        "continuous_level_distribution",
        steps,
        1,
        1,
        copies=0,
        dense=steps * LEVEL_UNITS,
        knob="shorten the time t or lower the jump rates (coarser units)",
    )


def _log_ratios(a: float, b: float) -> np.ndarray:
    """log P(N = k) - log P(N = k - 1) for k = 1..reach, N = Poisson(a) - Poisson(b).

    rho_k = P(N = k) / P(N = k - 1) solves rho_k = a / (k + b rho_{k+1}) (from a p_{k-1} = k p_k +
    b p_{k+1}); run downwards from well beyond the reach, started at the local fixed point, where
    the start no longer matters: each step damps an error by b rho / (k + b rho) < 1. Near the mode
    rho is close to 1, so its excess rho - 1 = (a - b - k - b (rho_{k+1} - 1)) / (k + b rho_{k+1}) is
    carried too and the log taken as log1p(excess): a million such logs then lose no digits.
    """
    reach = _tail_reach(a, b)
    if reach == 0:
        return np.empty(0)
    top = reach + 64 + math.ceil(math.sqrt(a + b))
    ratio = 2 * a / (top + 1 + math.sqrt((top + 1) ** 2 + 4 * a * b))
    excess = ratio - 1.0
    drift = a - b
    logs = [0.0] * reach
    for k in range(top, 0, -1):
        denominator = k + b * ratio
        ratio = a / denominator
        excess = ((drift - k) - b * excess) / denominator
        if k <= reach:
            if ratio == 0:  # underflow: from here up every probability is 0
                reach = k - 1
            else:
                logs[k - 1] = math.log1p(excess) if abs(excess) < 0.5 else math.log(ratio)
    return np.array(logs[:reach])


def _tail_reach(a: float, b: float) -> int:
    """Smallest k >= 0 with P(N > k) <= SKELLAM_TAIL by the Chernoff bound, N = Poisson(a) - Poisson(b).

    min over theta of E e^{theta (N - k)} = exp(sqrt(k^2 + 4ab) - a - b - k log x), with
    x = e^theta = (k + sqrt(k^2 + 4ab)) / (2a); it is 1 at the mean a - b and falls beyond it.
    """
    if a == 0:
        return 0
    goal = math.log(SKELLAM_TAIL)

    def log_bound(k: float) -> float:
        root = math.sqrt(k * k + 4 * a * b)
        return root - a - b - k * math.log((k + root) / (2 * a))

    low = max(math.floor(a - b), 0)  # P(N > k) <= bound(k + 1); the bound is not below goal at the mean
    high = low + 1
    while log_bound(high + 1) > goal:
        high = low + 2 * (high - low)
    while high - low > 1:  # invariant: bound(low + 1) > goal >= bound(high + 1)
        middle = (low + high) // 2
        low, high = (low, middle) if log_bound(middle + 1) <= goal else (middle, high)
    return high if log_bound(low + 1) > goal else low
