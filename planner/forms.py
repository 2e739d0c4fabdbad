"""Form parts every scenario kind shares: name, notes, targets (as percentages) and "save as new"."""

from __future__ import annotations

from django import forms
from django.contrib.auth import get_user_model
from django.contrib.auth.models import Group

from planner.form_fields import PercentField
from planner.models import ShareRole

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


class EditBaseForm(forms.Form):
    """The hidden fields of an edit form: the version it started from and the plan's kind (kept for a
    plan deleted meanwhile, so the values sent can still be shown and saved as a new plan)."""

    version = forms.IntegerField(min_value=1)
    kind = forms.SlugField(required=False)


def scenario_values(form: forms.Form) -> dict:
    """The cleaned values the write services take."""
    return {key: form.cleaned_data[key] for key in SHARED_FIELDS} | {"params": form.cleaned_data["params"]}


def scenario_initial(scenario, kind) -> dict:
    """Initial values of the edit form: the shared fields and the kind's parameters."""
    return {key: getattr(scenario, key) for key in SHARED_FIELDS} | kind.form_initial(scenario.params)


class ShareForm(forms.Form):
    """Whom to share a plan with (one person by user name, or one group by name) and as what. Looks up, never writes."""

    person = forms.CharField(label="Person (user name)", required=False, max_length=150)
    group = forms.CharField(label="or group", required=False, max_length=150)
    role = forms.ChoiceField(choices=ShareRole.choices, initial=ShareRole.VIEWER, widget=forms.RadioSelect)

    def __init__(self, *args, owner, **kwargs):
        super().__init__(*args, **kwargs)
        self.owner = owner

    def clean(self):
        data = super().clean()
        person, group = data.get("person", "").strip(), data.get("group", "").strip()
        if bool(person) == bool(group):
            raise forms.ValidationError("Give either a person's user name or a group's name.")
        data["user"] = data["group_found"] = None
        if person:
            data["user"] = get_user_model().objects.filter(username=person).first()
            if data["user"] is None:
                self.add_error("person", f"No account has the user name “{person}”.")
            elif data["user"] == self.owner:
                self.add_error("person", "That is the plan's owner, who can already do everything with it.")
        else:
            data["group_found"] = Group.objects.filter(name=group).first()
            if data["group_found"] is None:
                self.add_error("group", f"No group is called “{group}”.")
        return data


class ShareChangeForm(forms.Form):
    role = forms.ChoiceField(choices=[*ShareRole.choices, ("remove", "remove")])


class LinkForm(forms.Form):
    label = forms.CharField(
        label="Label (for you)", max_length=80, required=False, help_text="e.g. for the co-operative's board"
    )
    days = forms.IntegerField(
        label="Open for (days)",
        required=False,
        min_value=1,
        max_value=366,
        help_text="Leave empty to keep the link open until you revoke it.",
    )


class ApiTokenForm(forms.Form):
    label = forms.CharField(label="Label (for you)", max_length=80, required=False, help_text="e.g. the weekly report")
