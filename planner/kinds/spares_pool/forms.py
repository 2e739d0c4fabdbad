"""Spares-pool forms: they parse and validate request data into parameters or changes; they never write.

Every field error shows on the first submit: each input (or small group, such as a warm spare's
failures beside the failures in service) is checked on its own against neutral values for the
rest, so a bad mission length does not hide a bad repair time. Validation builds no pool.
"""

from __future__ import annotations

from django import forms

from planner.form_fields import PoolTimeUnit, add_parameter_error, mission_field
from planner.forms import PoolTargets
from planner.kinds.spares_pool.params import (
    MAX_CREWS,
    MAX_MISSION,
    MAX_SPARES,
    MAX_UNITS,
    SparesPoolParams,
)
from planner.kinds.spares_pool.words import STANDBY_KINDS

# Parameter messages start with the input's name; this maps the name to its field (longest first).
MESSAGE_FIELDS = [
    ("time unit", "time_unit"),
    ("units needed", "units"),
    ("spares", "spares"),
    ("repair crews", "crews"),
    ("standby MTBF", "standby_failure"),
    ("standby failure rate", "standby_failure"),
    ("standby", "standby"),
    ("failures given as", "failure_style"),
    ("repairs given as", "repair_style"),
    ("MTBF", "failure"),
    ("failure rate", "failure"),
    ("mean repair time", "repair"),
    ("repair rate", "repair"),
    ("mission length", "mission"),
    ("availability target", "availability_target"),
]
# Inputs checked together, each group against neutral values for the rest.
GROUPS = [
    ("units",),
    ("spares",),
    ("crews",),
    ("failure", "failure_style"),
    ("repair", "repair_style"),
    ("mission",),
    ("availability_target",),
    ("standby", "standby_failure", "failure", "failure_style"),
]
NEUTRAL = {"units": 1, "spares": 0, "failure": 1.0, "repair": 1.0, "mission": 1.0, "crews": 1, "standby": "cold"}


class PoolFields(PoolTimeUnit):
    """The pool itself; also the live preview's form."""

    units = forms.IntegerField(
        label="Units needed in service",
        min_value=1,
        max_value=MAX_UNITS,
        help_text="A shortage is any time fewer than this many are in working order.",
    )
    spares = forms.IntegerField(label="Spares", min_value=0, max_value=MAX_SPARES, initial=0)
    standby = forms.ChoiceField(
        label="Spares wait", choices=list(STANDBY_KINDS.items()), initial="cold", widget=forms.RadioSelect
    )
    failure_style = forms.ChoiceField(
        label="Failures given as",
        choices=[
            ("mtbf", "Mean time between failures of one unit, MTBF ({many})"),
            ("rate", "Failure rate (per {one})"),
        ],
        initial="mtbf",
    )
    failure = forms.FloatField(label="Failures of one unit in service")
    standby_failure = forms.FloatField(
        label="Failures of one waiting spare (warm only)",
        required=False,
        help_text="Given the same way as the failures in service: an MTBF on standby, or a rate.",
    )
    repair_style = forms.ChoiceField(
        label="Repairs given as",
        choices=[("mean", "Mean repair time ({many})"), ("rate", "Repair rate (repairs per {one} for one crew)")],
        initial="mean",
    )
    repair = forms.FloatField(label="Repair of one unit", help_text="A repaired unit is as good as new.")
    crews = forms.IntegerField(
        label="Repair crews",
        min_value=1,
        max_value=MAX_CREWS,
        initial=1,
        help_text="Crews work in parallel, one unit each; the others wait their turn.",
    )
    mission = mission_field(MAX_MISSION, ", starting with every unit in working order")

    def clean(self):
        data = super().clean()
        if (
            data.get("standby") == "warm"
            and data.get("standby_failure") is None
            and "standby_failure" not in self.errors
        ):
            self.add_error("standby_failure", forms.ValidationError("Required for warm spares.", code="required"))
        names = [name for group in GROUPS for name in group]
        readable = {name for name in names if name in data and data[name] is not None and name not in self.errors}
        fixed = {"time_unit": data.get("time_unit") or "hour", "availability_target": 0.5}
        for group in GROUPS:
            if all(name in readable for name in group if name != "standby_failure"):
                self._try(NEUTRAL | fixed | {name: data.get(name) for name in group})
        complete = all(name in readable for name in names if name in self.fields and name != "standby_failure")
        if complete and not self.errors:
            values = {name: data.get(name) for name in names if name in self.fields}
            data["params"] = self._try(fixed | values)
        return data

    def _try(self, values: dict) -> SparesPoolParams | None:
        try:
            return SparesPoolParams(**values)
        except ValueError as exc:
            add_parameter_error(self, str(exc), MESSAGE_FIELDS, "units")
            return None


class SparesPoolForm(PoolTargets, PoolFields):
    field_order = ["title", "notes", "time_unit"]


def form_initial(params: SparesPoolParams) -> dict:
    """Form initial values from saved parameters."""
    return params.to_json()


class WhatIfForm(forms.Form):
    """Changes to try on a saved pool; empty fields keep the saved value. Parses only."""

    spares = forms.IntegerField(required=False, min_value=0, max_value=MAX_SPARES)
    crews = forms.IntegerField(required=False, min_value=1, max_value=MAX_CREWS)
    units = forms.IntegerField(required=False, min_value=1, max_value=MAX_UNITS)
    mission = forms.FloatField(required=False)
    failure = forms.FloatField(required=False)
    repair = forms.FloatField(required=False)

    def changes(self) -> dict:
        """The values given, by parameter; empty ones are left out."""
        return {name: value for name, value in self.cleaned_data.items() if value is not None}
