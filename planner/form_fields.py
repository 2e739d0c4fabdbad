"""Form fields shared by every scenario kind."""

from __future__ import annotations

import re

from django import forms

from planner.formatting import percent_input

PERCENT = re.compile(r"^\s*([0-9]*\.?[0-9]+(?:[eE][+-]?[0-9]+)?)\s*%?\s*$")


def parse_percent(text) -> float:
    """'1%', '1', '0.5 %', '1e-4' -> the fraction 0.01, 0.01, 0.005, 1e-6 (a percentage above 0 and below 100)."""
    match = PERCENT.match(str(text))
    if not match:
        raise forms.ValidationError("Give a percentage, e.g. 5, 0.1 % or 1e-4 %.", code="invalid")
    value = float(match[1])
    if not 0 < value < 100:
        raise forms.ValidationError("Give a percentage above 0 and below 100, e.g. 5 or 0.1 %.", code="range")
    return value / 100


class PercentInput(forms.TextInput):
    def format_value(self, value):
        if isinstance(value, float):
            return percent_input(value)
        return super().format_value(value)


class PercentField(forms.Field):
    """A target typed as a percentage ('1%', '1', '0.5 %'); cleaned to a fraction (0.01)."""

    widget = PercentInput(attrs={"inputmode": "decimal"})

    def to_python(self, value):
        if value in self.empty_values:
            return None
        if isinstance(value, float):
            return value
        return parse_percent(value)
