"""Form fields shared by every scenario kind."""

from __future__ import annotations

import re

from django import forms

from planner.formatting import percent_input
from planner.pool_words import TIME_UNITS, unit_name

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


class PoolTimeUnit(forms.Form):
    """A pool's time unit, and its name in every label, help text and choice of the form ('{one}': hour,
    '{many}': hours); the base of a pool kind's form."""

    time_unit = forms.ChoiceField(
        label="Time unit",
        choices=[(key, many.capitalize()) for key, (_, many) in TIME_UNITS.items()],
        initial="hour",
        required=False,
        help_text="Every time and rate of this pool is counted in it.",
    )

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        unit = self.data.get("time_unit") if self.is_bound else self.initial.get("time_unit")
        unit = unit if isinstance(unit, str) and unit in TIME_UNITS else "hour"
        self.pool_unit = unit
        words = {"one": unit_name(unit), "many": unit_name(unit, 2)}
        for field in self.fields.values():
            if field.label:
                field.label = str(field.label).format(**words)
            if field.help_text:
                field.help_text = str(field.help_text).format(**words)
            if isinstance(field, forms.ChoiceField):
                field.choices = [(key, str(text).format(**words)) for key, text in field.choices]

    def clean_time_unit(self):
        return self.cleaned_data["time_unit"] or "hour"


def mission_field(maximum: float, counted: str = "") -> forms.FloatField:
    """A pool's mission length in its time unit ('{many}' in the label), at most ``maximum``; ``counted``
    says how the mission starts, if the kind fixes it."""
    return forms.FloatField(
        label="Mission length ({many})",
        help_text=f"The time the shortage risk is counted over{counted} (at most {maximum:,.0f}).",
    )


def add_parameter_error(form: forms.Form, message: str, prefixes, default: str) -> None:
    """Show a parameter's ValueError beside its field: the field whose name ``message`` starts with
    (``prefixes``: (message start, field name) pairs, longest first), else ``default``; once a field."""
    name = next((field for prefix, field in prefixes if message.startswith(prefix)), default)
    if name not in form.errors:
        form.add_error(name if name in form.fields else None, message)
