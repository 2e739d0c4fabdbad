"""History forms: they parse and check request data; they never write and never compute."""

from __future__ import annotations

from pathlib import Path

from django import forms

from planner.formatting import period_name
from planner.history.models import HistoryPeriod
from planner.history_file import COLUMNS_TEXT, MAX_BYTES

# Bounds of the range form, the same as a stock plan's (planner/kinds/stock_plan/params.py).
MAX_LEVEL = 1_000_000
MAX_HORIZON = 3650


class HistoryFields(forms.Form):
    title = forms.CharField(label="Name", max_length=120)
    notes = forms.CharField(widget=forms.Textarea(attrs={"rows": 2}), required=False)
    period = forms.ChoiceField(
        label="One row per",
        choices=HistoryPeriod.choices,
        initial=HistoryPeriod.DAY,
        help_text="Daily rows follow one another day by day; weekly rows are 7 days apart.",
    )


class UploadForm(HistoryFields):
    field_order = ["file", "period", "title", "notes"]

    file = forms.FileField(
        label="History file (CSV)",
        help_text=f"A header naming {COLUMNS_TEXT}, then one row per period in date order, dates written "
        "YYYY-MM-DD, whole numbers only. At most 2 MB.",
        widget=forms.ClearableFileInput(attrs={"accept": ".csv,text/csv"}),
        allow_empty_file=True,  # the reader says so itself, in the words it uses for every refusal
    )

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self.fields["title"].required = False
        self.fields["title"].help_text = "Leave empty to use the file's name."

    def clean(self):
        data = super().clean()
        if not data.get("title") and data.get("file"):
            data["title"] = Path(data["file"].name).stem[:120] or "History"
        return data


class SaveForm(HistoryFields):
    """The preview's form: the name, notes and period again, and the history as the reader wrote it back."""

    data = forms.CharField(widget=forms.Textarea(attrs={"hidden": True, "readonly": True}), max_length=MAX_BYTES)
    file_name = forms.CharField(widget=forms.HiddenInput, max_length=255, required=False)


class RangeForm(forms.Form):
    """Start stock, capacity and horizon for the risk on the fit page (GET); each field names its range."""

    start = forms.IntegerField(label="Start stock (units)", min_value=0, max_value=MAX_LEVEL)
    high = forms.IntegerField(
        label="Capacity (units)",
        required=False,
        min_value=0,
        max_value=MAX_LEVEL,
        help_text="The most the store holds; leave empty for no limit.",
    )
    horizon = forms.IntegerField(label="Horizon", min_value=1, max_value=MAX_HORIZON)

    def __init__(self, data=None, *, period: str = "day", **kwargs):
        super().__init__(data, **kwargs)
        self.fields["horizon"].label = f"Horizon ({period_name(period, 2)})"

    def clean(self):
        data = super().clean()
        start, high = data.get("start"), data.get("high")
        if start is not None and high is not None and high < start:
            self.add_error("high", f"Capacity must be at least the start stock ({start}); or leave it empty.")
        return data


class PlanFromFitForm(RangeForm):
    """The same inputs, posted to make a plan; ``weekday_pattern`` asks for the weekday profile when found."""

    weekday_pattern = forms.BooleanField(label="Follow the weekday pattern of demand", required=False)
