"""Engine tests start with no kept solutions or candidates, so no test is answered from another test's work."""

import pytest

from walkmath import elimination, sparesizing


@pytest.fixture(autouse=True)
def no_kept_solutions():
    elimination.forget_solutions()
    sparesizing.forget_candidates()
    yield
    elimination.forget_solutions()
    sparesizing.forget_candidates()
