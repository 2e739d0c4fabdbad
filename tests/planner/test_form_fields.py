"""Targets are typed as percentages and stored as fractions."""

import pytest
from django import forms

from planner.form_fields import PercentField, parse_percent


@pytest.mark.parametrize(
    ("text", "fraction"),
    [("1%", 0.01), ("1", 0.01), ("0.5 %", 0.005), (" 5 ", 0.05), ("1e-4", 1e-6), ("1e-4 %", 1e-6), ("99.9%", 0.999)],
)
def test_percentages_read_as_fractions(text, fraction):
    assert parse_percent(text) == pytest.approx(fraction, rel=1e-15)


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("0", "above 0 and below 100"),
        ("100 %", "above 0 and below 100"),
        ("150", "above 0 and below 100"),
        ("-1", "Give a percentage"),
        ("one percent", "Give a percentage"),
        ("1%%", "Give a percentage"),
    ],
)
def test_bad_percentages_are_refused(text, message):
    with pytest.raises(forms.ValidationError, match=message):
        parse_percent(text)


def test_field_shows_a_stored_fraction_as_the_percentage_typed():
    class TargetForm(forms.Form):
        target = PercentField()

    assert 'value="5"' in str(TargetForm(initial={"target": 0.05})["target"])
    bound = TargetForm({"target": "0.5 %"})
    assert bound.is_valid() and bound.cleaned_data["target"] == 0.005
    assert not TargetForm({"target": ""}).is_valid()
