import math

from planner.templatetags.planner_format import expectation, probability


def test_probability_reads_as_percent_or_power_of_ten():
    assert probability(0.0231) == "2.31 %"
    assert probability(3.2e-9) == "3.2 × 10⁻⁹"
    assert probability(1e-300) == "1 × 10⁻³⁰⁰"
    assert probability(0) == "0"
    assert probability(None) == "—"


def test_expectation_says_when_an_event_is_not_certain():
    assert expectation(math.inf) == "not certain to happen"
    assert expectation(199.99999999) == "200"
    assert expectation(None) == "—"
