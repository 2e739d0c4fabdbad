"""Form fields shared by every scenario kind."""

from __future__ import annotations

import re

from django import forms

from planner.formatting import percent_input

ROW = re.compile(r"^\s*([+-]?\d+)\s*[:=]\s*([0-9.eE+-]+)\s*$")
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


def parse_table(text: str) -> tuple[tuple[int, float], ...]:
    """Rows 'value: probability' separated by commas or new lines."""
    rows = []
    for chunk in re.split(r"[,\n;]+", text or ""):
        if not chunk.strip():
            continue
        match = ROW.match(chunk)
        if not match:
            raise forms.ValidationError(
                f"Write each row as 'value: probability', e.g. '-1: 0.4'; could not read {chunk.strip()!r}."
            )
        try:
            rows.append((int(match[1]), float(match[2])))
        except ValueError as exc:
            raise forms.ValidationError(f"Could not read the probability in {chunk.strip()!r}.") from exc
    return tuple(rows)


def format_table(rows) -> str:
    return ", ".join(f"{value}: {prob:.12g}" for value, prob in rows)
