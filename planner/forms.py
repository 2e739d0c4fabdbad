"""Form parts every scenario kind shares: name, notes, targets (as percentages) and "save as new"."""

from __future__ import annotations

from django import forms

from planner.form_fields import PercentField

SHARED_FIELDS = ("title", "notes", "stockout_target", "overflow_target")
# The model keeps an overflow target for every scenario; kinds with nothing to overflow store this one.
UNUSED_OVERFLOW_TARGET = 0.05


class ScenarioFields(forms.Form):
    """Mixed into each kind's create/edit form; the kind's form adds ``cleaned_data["params"]``."""

    title = forms.CharField(label="Name", max_length=120)
    notes = forms.CharField(widget=forms.Textarea(attrs={"rows": 3}), required=False)
    stockout_target = PercentField(
        label="Stock-out target (%)",
        initial=0.05,
        help_text="Largest acceptable chance of at least one stock-out over the horizon, e.g. 5, 1 % or 0.01 %.",
    )
    overflow_target = PercentField(
        label="Overflow target (%)",
        initial=0.05,
        help_text="Largest acceptable chance of at least one overflow over the horizon (with a capacity).",
    )


class PoolTargets(ScenarioFields):
    """Name, notes and a pool's two targets: long-run availability and the chance of a shortage during the
    mission (kept as the scenario's stock-out target); a pool has nothing to overflow."""

    stockout_target = PercentField(
        label="Mission shortage target (%)",
        initial=0.01,
        help_text="Largest acceptable chance of at least one shortage during the mission, e.g. 1 or 0.1 %.",
    )
    overflow_target = None
    availability_target = PercentField(
        label="Availability target (%)",
        initial=0.999,
        help_text="Smallest acceptable long-run share of time without a shortage, e.g. 99.9.",
    )

    def clean(self):
        data = super().clean()
        data["overflow_target"] = UNUSED_OVERFLOW_TARGET
        return data


class SaveAsNewForm(forms.Form):
    title = forms.CharField(
        label="Name for the new plan", max_length=120, error_messages={"required": "give the new plan a name."}
    )


def scenario_values(form: forms.Form) -> dict:
    """The cleaned values the write services take."""
    return {key: form.cleaned_data[key] for key in SHARED_FIELDS} | {"params": form.cleaned_data["params"]}


def scenario_initial(scenario, kind) -> dict:
    """Initial values of the edit form: the shared fields and the kind's parameters."""
    return {key: getattr(scenario, key) for key in SHARED_FIELDS} | kind.form_initial(scenario.params)
