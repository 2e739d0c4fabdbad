"""The free-walk level law's priced work, and paths it had no honest answer for before."""

import numpy as np
import pytest

import walkmath as wm
from walkmath import distribution
from walkmath.cost import WORK_CAP, ComputeTooLarge


def repeated_convolution(probs: np.ndarray, times: int) -> np.ndarray:
    """The obviously-correct slow path: one np.convolve per period."""
    result = np.ones(1)
    for _ in range(times):
        result = np.convolve(result, probs)
    return result


def test_tilted_windows_work_when_the_tilted_law_underflows_at_an_end():
    # Tilting Poisson(1000) far enough makes its lowest counts underflow to 0; the windows must keep
    # the law's full width (they once raised a broadcasting error here).
    law = wm.StepLaw.poisson(1000.0)
    steps = 20
    assert steps * (law.probs.size - 1) + 1 > distribution.DIRECT_LIMIT  # the tilted path is the one taken
    result = wm.level_distribution(law, steps)
    reference = repeated_convolution(law.probs, steps)
    kept = reference > 1e-280
    np.testing.assert_allclose(result.probs[kept], reference[kept], rtol=1e-9)


def test_one_period_is_the_step_law_itself():
    law = wm.StepLaw.poisson(1e5)  # wider than DIRECT_LIMIT would allow for two periods
    result = wm.level_distribution(law, 1, start=3)
    assert result.levels[0] == 3 + law.lowest
    assert result.probs.tolist() == law.probs.tolist()


@pytest.mark.parametrize(
    "law",
    [wm.StepLaw.nearest(0.3, 0.3), wm.StepLaw.nearest(0.3, 0.0), wm.StepLaw.from_pmf({-1: 0.5, 0: 0.2, 2: 0.3})],
    ids=["three-point", "two-point", "skip-free"],
)
def test_priced_work_grows_with_the_steps(law):
    units = [distribution.work(law, steps).units for steps in (10, 100, 1_000, 10_000, 100_000)]
    assert np.all(np.diff(units) >= 0)


def test_support_cap_refuses_exactly_past_the_limit():
    # Three-point steps spread over 2 x steps + 1 levels: 5e6 steps fill SUPPORT_CAP exactly.
    law = wm.StepLaw.nearest(0.3, 0.3)
    at_cap = distribution.work(law, (distribution.SUPPORT_CAP - 1) // 2)
    assert at_cap.levels == distribution.SUPPORT_CAP
    with pytest.raises(ComputeTooLarge, match="levels; the limit"):
        distribution.work(law, (distribution.SUPPORT_CAP - 1) // 2 + 1)
    # a two-point law over the longest horizon fits both caps (binomial form, one term per level)
    assert distribution.work(wm.StepLaw.nearest(0.3, 0.0), wm.checks.HORIZON_CAP).units <= WORK_CAP


def test_cycle_product_is_priced_before_it_is_built():
    wide = wm.StepLaw(0, np.full(150_000, 1 / 150_000))
    with pytest.raises(ComputeTooLarge, match="one cycle"):
        wm.level_distribution([wide, wide, wide], 3)
