"""The cost model's own arithmetic (walkmath/cost.py)."""

import pytest

from walkmath.cost import PERIOD_OVERHEAD, ComputeTooLarge, Work


def test_work_of_two_calls_adds_their_units_exactly():
    # Definition (the module docstring): a sweep costs periods x (levels x jumps + overhead) per copy.
    sweep = Work("sweep", levels=14_921, periods=1, jumps=61_241)
    power = Work("power", levels=7_201, periods=60, jumps=121, copies=0, dense=21_058_329)
    assert sweep.units == 14_921 * 61_241 + PERIOD_OVERHEAD and power.units == 21_058_329
    both = sweep + power
    assert both.units == sweep.units + power.units  # not 60 periods of the widest sweep
    assert (both + Work("tiny", 1, 0, 1)).units == both.units  # a part with no work adds none
    assert both.levels == sweep.levels and both.method == "sweep + power"


def test_check_refuses_over_the_cap_naming_the_knob():
    work = Work("outlook", levels=1_000, periods=100, jumps=10, knob="shorten the horizon")
    assert work.check(cap=work.units) is work
    with pytest.raises(ComputeTooLarge, match="To fit, shorten the horizon"):
        work.check(cap=work.units - 1)
