"""Repair-log forms: they parse and check request data; they never write and never compute."""

from __future__ import annotations

from pathlib import Path

from django import forms

from planner.repairlog.models import LogTimeUnit
from planner.repairlog_file import COLUMNS_TEXT, MAX_POOL

# Longest mission a plan from a log may have, in the log's time unit (the spares pool's own limit).
MAX_MISSION = 10_000_000


class LogUploadForm(forms.Form):
    field_order = ["file", "time_unit", "units", "spares", "record_start", "record_end", "title", "notes"]

    file = forms.FileField(
        label="Repair log (CSV)",
        help_text=f"A header naming {COLUMNS_TEXT}, then one row per failure: the unit, when it failed, when it "
        "came back from repair (blank: still in repair). At most 2 MB.",
        widget=forms.ClearableFileInput(attrs={"accept": ".csv,text/csv"}),
        allow_empty_file=True,  # the reader says so itself
    )
    time_unit = forms.ChoiceField(
        label="Times counted in",
        choices=LogTimeUnit.choices,
        initial=LogTimeUnit.DAY,
        help_text="Dates (YYYY-MM-DD) count in days; whole period numbers may count hours or days.",
    )
    units = forms.IntegerField(
        label="Units in service", min_value=1, max_value=MAX_POOL, help_text="How many must be working at once."
    )
    spares = forms.IntegerField(label="Spares held", min_value=0, max_value=MAX_POOL, initial=0)
    record_start = forms.CharField(
        label="Record starts", max_length=20, help_text="A date YYYY-MM-DD or a period number, as in the file."
    )
    record_end = forms.CharField(
        label="Record ends", max_length=20, help_text="Units still in repair then are counted up to this time."
    )
    title = forms.CharField(
        label="Name", max_length=120, required=False, help_text="Leave empty to use the file's name."
    )
    notes = forms.CharField(widget=forms.Textarea(attrs={"rows": 2}), required=False)

    def clean(self):
        data = super().clean()
        units, spares = data.get("units"), data.get("spares")
        if units is not None and spares is not None and units + spares > MAX_POOL:
            self.add_error("spares", f"Units in service plus spares must be at most {MAX_POOL:,}.")
        if not data.get("title") and data.get("file"):
            data["title"] = Path(data["file"].name).stem[:120] or "Repair log"
        return data


class MissionForm(forms.Form):
    """The mission for the shortage risk of a pool made from the log (GET on the log's page)."""

    mission = forms.IntegerField(label="Mission", min_value=1, max_value=MAX_MISSION)

    def __init__(self, data=None, *, time_unit: str = "day", **kwargs):
        super().__init__(data, **kwargs)
        self.fields["mission"].label = f"Mission ({time_unit}s)"
        self.fields[
            "mission"
        ].help_text = "The plan counts the chance of a shortage over this long, all units good at the start."
