"""Rate-table forms: they parse and validate request data into parameters or changes; they never write.

The table is typed like the planner's other tables ('value: probability' rows, ``planner.form_fields``),
one row per number failed: 'failed: failure rate, repair rate'. Every field error shows on the first
submit: each line of the table that does not read gets its own message naming it, each rule the
rates break names its row, and every other input is checked on its own against neutral values for
the rest, so a bad mission length does not hide a bad row. Validation builds no pool.
"""

from __future__ import annotations

import re

from django import forms

from planner.form_fields import PoolTimeUnit, add_parameter_error, mission_field
from planner.forms import PoolTargets
from planner.kinds.rate_table.params import MAX_MISSION, MAX_ROWS, TABLE, RateTableParams, rate_text, table_problems

ROW = re.compile(r"^\s*(\d+)\s*[:=]\s*([^\s,]+)\s*(?:,\s*|\s+)([^\s,]+)\s*$")
EXAMPLE = "'2: 0.006, 0.25'"
# Most unreadable lines named one by one; the rest are counted.
MOST_LINE_ERRORS = 8
# Parameter messages start with the input's name; this maps the name to its field.
MESSAGE_FIELDS = [
    ("time unit", "time_unit"),
    (TABLE, "rates"),
    ("shortage level", "shortage_at"),
    ("units failed at the start", "start_failed"),
    ("mission length", "mission"),
    ("availability target", "availability_target"),
]
PARAMETER_FIELDS = ("shortage_at", "start_failed", "mission", "availability_target")
NEUTRAL = {"failure_rates": (1.0, 0.0), "repair_rates": (0.0, 1.0), "shortage_at": 1, "mission": 1.0}


def _rate(text: str) -> float | None:
    try:
        return float(text)
    except ValueError:
        return None


def parse_rate_table(text: str) -> tuple[tuple[float, ...], tuple[float, ...]]:
    """Rows 'failed: failure rate, repair rate', one a line (or separated by ';'), failed counting 0, 1, 2, ...

    ValidationError listing every line that does not read, each named by its number and text.
    """
    failure, repair, errors = [], [], []
    lines = [chunk.strip() for chunk in re.split(r"[\n;]+", text or "") if chunk.strip()]
    if len(lines) > MAX_ROWS:
        raise forms.ValidationError(f"Give at most {MAX_ROWS:,} rows (0 failed up to every unit failed).")
    for number, line in enumerate(lines, start=1):
        match = ROW.match(line)
        rates = (_rate(match[2]), _rate(match[3])) if match else (None, None)
        if None in rates:
            errors.append(
                f"Line {number} ({line!r}): write each row as 'failed: failure rate, repair rate', e.g. {EXAMPLE}."
            )
            continue
        if int(match[1]) != number - 1:
            errors.append(
                f"Line {number} ({line!r}) is for {int(match[1]):,} failed; the rows count the units failed 0, 1, 2, "
                f"… in order, so this line should be for {number - 1:,} failed."
            )
            continue
        failure.append(rates[0])
        repair.append(rates[1])
    if len(errors) > MOST_LINE_ERRORS:
        errors[MOST_LINE_ERRORS:] = [f"… and {len(errors) - MOST_LINE_ERRORS} more lines that do not read."]
    if errors:
        raise forms.ValidationError(errors)
    return tuple(failure), tuple(repair)


def format_rate_table(failure_rates, repair_rates) -> str:
    return "\n".join(
        f"{failed}: {rate_text(up)}, {rate_text(down)}"
        for failed, (up, down) in enumerate(zip(failure_rates, repair_rates, strict=True))
    )


class TableFields(PoolTimeUnit):
    """The pool itself; also the live preview's form."""

    rates = forms.CharField(
        label="Failures and repairs by number failed (per {one}, whole pool)",
        widget=forms.Textarea(attrs={"rows": 7, "spellcheck": "false", "autocapitalize": "off"}),
        help_text=(
            "One row per number failed, from 0 up to every unit failed: 'failed: failure rate, repair rate', both "
            "per {one} for the whole pool. With that many failed, the failure rate is how many failures to expect in "
            "one {one} (four units each failing once in 500 {many}: 0.008), the repair rate how many repairs finish "
            "in one {one}. The first row has no repairs (0) and the last no failures (0)."
        ),
    )
    shortage_at = forms.IntegerField(
        label="Short with this many failed or more",
        min_value=1,
        help_text="E.g. 2 when 3 of 4 units must run.",
    )

    def clean_rates(self):
        return parse_rate_table(self.cleaned_data["rates"])

    def clean(self):
        data = super().clean()
        unit = {"time_unit": data.get("time_unit") or "hour"}
        table = self._table(data)
        if table is not None:  # the shortage level and the start only mean something against a table
            if self._reads("shortage_at"):
                self._try(unit | table | {"shortage_at": data["shortage_at"]})
            if self._reads("start_failed") and self._reads("shortage_at"):
                self._try(unit | table | {name: data[name] for name in ("shortage_at", "start_failed")})
        for name in ("mission", "availability_target"):
            if self._reads(name):
                self._try(unit | {name: data[name]})
        wanted = [name for name in PARAMETER_FIELDS if name in self.fields]
        if table is not None and all(self._reads(name) for name in wanted) and not self.errors:
            data["params"] = self._try(unit | table | {name: data[name] for name in wanted})
        return data

    def _reads(self, name: str) -> bool:
        return name in self.fields and self.cleaned_data.get(name) is not None and name not in self.errors

    def _table(self, data: dict) -> dict | None:
        """The table's rates once every row reads and keeps the rules (each broken rule named by its row)."""
        if not self._reads("rates"):
            return None
        failure, repair = data["rates"]
        for problem in table_problems(failure, repair):
            self.add_error("rates", _sentence(problem.removeprefix(f"{TABLE}, ")))
        return None if "rates" in self.errors else {"failure_rates": failure, "repair_rates": repair}

    def _try(self, values: dict) -> RateTableParams | None:
        try:
            return RateTableParams(**(NEUTRAL | values))
        except ValueError as exc:
            add_parameter_error(self, str(exc), MESSAGE_FIELDS, "rates")
            return None


class RateTableForm(PoolTargets, TableFields):
    field_order = ["title", "notes", "time_unit", "rates", "shortage_at"]

    start_failed = forms.IntegerField(
        label="Units failed when the mission starts",
        min_value=0,
        required=False,
        initial=0,
        help_text="Usually 0: every unit in working order.",
    )
    mission = mission_field(MAX_MISSION)

    def clean_start_failed(self):
        value = self.cleaned_data["start_failed"]
        return 0 if value is None else value


def form_initial(params: RateTableParams) -> dict:
    """Form initial values from saved parameters."""
    data = params.to_json()
    data["rates"] = format_rate_table(data.pop("failure_rates"), data.pop("repair_rates"))
    return data


class WhatIfForm(forms.Form):
    """Changes to try on a saved pool; empty fields keep the saved value. Parses only."""

    repair_speed = forms.FloatField(required=False)
    failure_factor = forms.FloatField(required=False)
    mission = forms.FloatField(required=False)
    start_failed = forms.IntegerField(required=False, min_value=0)
    shortage_at = forms.IntegerField(required=False, min_value=1)

    def changes(self) -> dict:
        """The values given, by name; empty ones are left out."""
        return {name: value for name, value in self.cleaned_data.items() if value is not None}


def _sentence(text: str) -> str:
    return text[:1].upper() + text[1:] + "."
