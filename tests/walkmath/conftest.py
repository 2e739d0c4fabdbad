"""Engine tests start with no kept solutions, so no test is answered from another test's solve."""

import pytest

from walkmath import elimination


@pytest.fixture(autouse=True)
def no_kept_solutions():
    elimination.forget_solutions()
    yield
    elimination.forget_solutions()
