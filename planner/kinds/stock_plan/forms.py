"""Stock-plan forms: they parse and validate request data into parameters or changes; they never write.

Every field error shows on the first submit: the start/floor/capacity part and
the change-law part are checked separately, each as soon as its own fields
read, so a bad capacity does not hide a bad demand law. Validation never builds
a law (the parameters' own caps bound what a later request builds).
"""

from __future__ import annotations

import re

from django import forms

from planner.count_law import MAX_JUMP, CountLaw
from planner.form_fields import format_table, parse_table
from planner.formatting import PERIODS, period_name
from planner.forms import ScenarioFields
from planner.kinds.stock_plan.params import MAX_HORIZON, MAX_LEVEL, StockPlanParams
from planner.kinds.stock_plan.words import ABOVE_CHOICE, BELOW_CHOICE
from walkmath import checks

STEP_CHOICES = [
    ("net", "Demand and deliveries (the usual way)"),
    ("table", "Advanced: probability of each change"),
    ("nearest", "Advanced: chance of one more or one fewer"),
]
COUNT_CHOICES = [
    ("poisson", "Poisson (give the mean)"),
    ("negative_binomial", "Negative binomial (mean and variance, for erratic amounts)"),
    ("fixed", "The same amount every period"),
    ("table", "Table of amounts"),
]
SUPPLY_CHOICES = [("none", "None")] + COUNT_CHOICES
# Parameter messages start with the input's name; this maps the name to its field.
MESSAGE_FIELDS = [
    ("start stock", "start"),
    ("capacity", "high"),
    ("safety floor", "low"),
    ("horizon", "horizon"),
    ("period", "period"),
    ("chance of one up + ", "down"),
    ("chance of one up", "up"),
    ("chance of one down", "down"),
    ("change table", "step_table"),
    ("demand profile", "profile"),
    ("demand mean", "demand_mean"),
    ("demand law", "demand_family"),
    ("delivery every", "delivery_every"),
    ("delivery size", "delivery_size"),
]
COUNT_MESSAGE_FIELDS = [("mean", "mean"), ("variance", "variance"), ("amount", "amount"), ("count table", "table")]
BAND_FIELDS = ("period", "start", "low", "high", "below", "above", "horizon")
LAW_FIELDS = ("step_method", "up", "down", "step_table", "profile", "delivery_every", "delivery_size")


def parse_profile(text: str) -> tuple[float, ...]:
    try:
        return tuple(float(part) for part in re.split(r"[,\s;]+", text or "") if part)
    except ValueError as exc:
        raise forms.ValidationError("Write the profile as numbers separated by commas, e.g. '1, 1, 1.2, 0.8'.") from exc


def _field_for(message: str, table, default: str) -> str:
    for prefix, name in table:
        if message.startswith(prefix):
            return name
    return default


def _period_word(text: str, period: str) -> str:
    """A label with the period named: '{one}' -> 'day', '{many}' -> 'days'."""
    return text.format(one=period_name(period), many=period_name(period, 2))


class ChangeLawForm(forms.Form):
    """How the stock changes in one period; also the live preview's form."""

    period = forms.ChoiceField(
        label="Planning period",
        choices=[(key, one.capitalize()) for key, (one, _) in PERIODS.items()],
        initial="day",
        required=False,
        help_text="Every time, rate and horizon of this plan is counted in it.",
    )
    step_method = forms.ChoiceField(
        label="How the stock changes each {one}", choices=STEP_CHOICES, initial="net", widget=forms.RadioSelect
    )
    demand_family = forms.ChoiceField(label="Demand law", choices=COUNT_CHOICES, initial="poisson")
    demand_mean = forms.FloatField(label="Mean demand (units per {one})", required=False)
    demand_variance = forms.FloatField(label="Demand variance (units² per {one})", required=False)
    demand_amount = forms.IntegerField(label="Demand every {one} (units)", required=False)
    demand_table = forms.CharField(
        label="Demand table (units: probability)", required=False, help_text="e.g. 0: 0.2, 1: 0.5, 2: 0.3"
    )
    profile = forms.CharField(
        label="Demand profile (optional)",
        required=False,
        help_text=(
            "Factors on mean demand, one per {one}, repeating: e.g. seven weekday factors 1, 1, 1.2, 1.4, 0.6, 0.8, 0.9"
        ),
    )
    delivery_every = forms.IntegerField(
        label="Delivery every ({many})",
        required=False,
        min_value=1,
        help_text="Leave empty for no scheduled deliveries.",
    )
    delivery_size = forms.IntegerField(label="Delivery size (units)", required=False, min_value=1, max_value=MAX_JUMP)
    arrivals_family = forms.ChoiceField(
        label="Other supply each {one}",
        choices=SUPPLY_CHOICES,
        initial="none",
        required=False,
        help_text="Returns or a supply that varies from {one} to {one}, on top of scheduled deliveries.",
    )
    arrivals_mean = forms.FloatField(label="Mean supply (units per {one})", required=False)
    arrivals_variance = forms.FloatField(label="Supply variance (units² per {one})", required=False)
    arrivals_amount = forms.IntegerField(label="Supply every {one} (units)", required=False)
    arrivals_table = forms.CharField(
        label="Supply table (units: probability)", required=False, help_text="e.g. 0: 0.5, 2: 0.5"
    )
    step_table = forms.CharField(
        label="Probability of each change in a {one}",
        required=False,
        help_text="Net change in units: probability, e.g. -2: 0.1, -1: 0.4, 0: 0.3, 1: 0.2",
    )
    up = forms.FloatField(label="Chance of one more unit in a {one}", required=False, min_value=0, max_value=1)
    down = forms.FloatField(label="Chance of one fewer unit in a {one}", required=False, min_value=0, max_value=1)

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        period = self.data.get("period") if self.is_bound else self.initial.get("period")
        period = period if isinstance(period, str) and period in PERIODS else "day"
        self.plan_period = period
        for field in self.fields.values():
            if field.label:  # None: Django derives the label from the field name
                field.label = _period_word(str(field.label), period)
            if field.help_text:
                field.help_text = _period_word(str(field.help_text), period)
            if isinstance(field, forms.ChoiceField):
                field.choices = [
                    (key, _period_word(str(text).replace("every period", "every {one}"), period))
                    for key, text in field.choices
                ]

    def clean_period(self):
        return self.cleaned_data["period"] or "day"  # the default period when none is sent

    def clean_step_table(self):
        return parse_table(self.cleaned_data["step_table"])

    def clean_arrivals_table(self):
        return parse_table(self.cleaned_data["arrivals_table"])

    def clean_demand_table(self):
        return parse_table(self.cleaned_data["demand_table"])

    def clean_profile(self):
        return parse_profile(self.cleaned_data["profile"])

    def band_values(self, data: dict) -> dict | None:
        """Start, floor, capacity, rules and horizon; the preview has none and uses a neutral probe."""
        return {"start": 0, "horizon": 1, "period": data.get("period") or "day"}

    def law_values(self, data: dict) -> dict | None:
        """The change-law part of the parameters, or None when one of its fields did not read."""
        method = data.get("step_method")
        if method is None or any(name in self.errors for name in LAW_FIELDS):
            return None
        required = {"nearest": ["up", "down"], "table": ["step_table"], "net": []}[method]
        if data.get("delivery_every") and not data.get("delivery_size"):
            required.append("delivery_size")
        missing = [name for name in required if data.get(name) in (None, (), "")]
        for name in missing:
            self.add_error(name, forms.ValidationError("Required for this choice.", code="required"))
        counts = {}
        if method == "net":
            counts["demand"] = self._count_law("demand", data)
            if (data.get("arrivals_family") or "none") != "none":
                counts["arrivals"] = self._count_law("arrivals", data)
        if missing or any(law is None for law in counts.values()):
            return None
        return {
            "step_method": method,
            "up": data.get("up"),
            "down": data.get("down"),
            "table": data.get("step_table") or (),
            "arrivals": counts.get("arrivals"),
            "demand": counts.get("demand"),
            "profile": data.get("profile") or (),
            "delivery_every": data.get("delivery_every"),
            "delivery_size": data.get("delivery_size") or 0,
        }

    def clean(self):
        data = super().clean()
        band = self.band_values(data)
        law = self.law_values(data)
        neutral_law = {"step_method": "nearest", "up": 0.0, "down": 0.0}
        neutral_band = {"start": 0, "horizon": 1, "period": data.get("period") or "day"}
        # Each part is checked on its own so that both parts' errors show at once.
        if band is not None:
            self._try(band | neutral_law)
        if law is not None:
            self._try(neutral_band | law)
        if band is not None and law is not None and not self.errors:
            data["params"] = self._try(band | law)
        return data

    def _try(self, values: dict) -> StockPlanParams | None:
        try:
            return StockPlanParams(**values)
        except ValueError as exc:
            self.add_error(_field_for(str(exc), MESSAGE_FIELDS, "step_method"), str(exc))
            return None

    def _count_law(self, prefix: str, data: dict) -> CountLaw | None:
        family = data.get(f"{prefix}_family")
        if family is None:
            return None
        needs = {
            "poisson": ["mean"],
            "negative_binomial": ["mean", "variance"],
            "fixed": ["amount"],
            "table": ["table"],
        }
        names = [f"{prefix}_{name}" for name in needs[family]]
        if any(name in self.errors for name in names):
            return None
        missing = [name for name in names if data.get(name) in (None, ())]
        for name in missing:
            noun = "supply" if prefix == "arrivals" else prefix
            message = f"Required for a {family.replace('_', ' ')} {noun} law."
            self.add_error(name, forms.ValidationError(message, code="required"))
        if missing:
            return None
        try:
            return CountLaw(
                family=family,
                mean=data.get(f"{prefix}_mean"),
                variance=data.get(f"{prefix}_variance"),
                amount=data.get(f"{prefix}_amount"),
                table=data.get(f"{prefix}_table") or (),
            )
        except ValueError as exc:
            self.add_error(f"{prefix}_{_field_for(str(exc), COUNT_MESSAGE_FIELDS, 'family')}", str(exc))
            return None


class StockPlanForm(ScenarioFields, ChangeLawForm):
    field_order = ["title", "notes", "period", "start", "low", "high", "horizon", "below", "above"]

    start = forms.IntegerField(label="Start stock (units)", min_value=-MAX_LEVEL, max_value=MAX_LEVEL)
    low = forms.IntegerField(
        label="Safety floor (units)",
        initial=0,
        min_value=-MAX_LEVEL,
        max_value=MAX_LEVEL,
        help_text="A stock-out is a {one} whose net change would take the stock below this level; usually 0.",
    )
    high = forms.IntegerField(
        label="Capacity (units)",
        required=False,
        min_value=-MAX_LEVEL,
        max_value=MAX_LEVEL,
        help_text="The most the store holds; leave empty for no limit.",
    )
    below = forms.ChoiceField(
        label="Demand the stock cannot meet",
        choices=[(rule, BELOW_CHOICE.get(rule, rule)) for rule in checks.BELOW_RULES],
        initial=checks.DEFAULT_BELOW,
    )
    above = forms.ChoiceField(
        label="Stock beyond capacity",
        choices=[(rule, ABOVE_CHOICE.get(rule, rule)) for rule in checks.ABOVE_RULES],
        initial=checks.DEFAULT_ABOVE,
    )
    horizon = forms.IntegerField(label="Horizon ({many})", min_value=1, max_value=MAX_HORIZON, initial=28)

    def band_values(self, data: dict) -> dict | None:
        if any(data.get(name) is None and name != "high" for name in BAND_FIELDS):
            return None
        return {name: data.get(name) for name in BAND_FIELDS}


def form_initial(params: StockPlanParams) -> dict:
    """Form initial values from saved parameters."""
    initial = {
        "period": params.period,
        "start": params.start,
        "low": params.low,
        "high": params.high,
        "below": params.below,
        "above": params.above,
        "horizon": params.horizon,
        "step_method": params.step_method,
        "up": params.up,
        "down": params.down,
        "step_table": format_table(params.table),
        "profile": ", ".join(f"{f:g}" for f in params.profile),
        "delivery_every": params.delivery_every,
        "delivery_size": params.delivery_size or None,
        "arrivals_family": "none",
    }
    for prefix in ("arrivals", "demand"):
        law = getattr(params, prefix)
        if law is not None:
            initial.update(
                {
                    f"{prefix}_family": law.family,
                    f"{prefix}_mean": law.mean,
                    f"{prefix}_variance": law.variance,
                    f"{prefix}_amount": law.amount,
                    f"{prefix}_table": format_table(law.table),
                }
            )
    if params.arrivals is not None and params.arrivals.family == "fixed" and params.arrivals.amount == 0:
        initial["arrivals_family"] = "none"  # plans saved before "none" existed stated no supply this way
    return initial


class WhatIfForm(forms.Form):
    """Changes to try on a saved plan; empty fields keep the saved value. Parses only."""

    start = forms.IntegerField(required=False, min_value=-MAX_LEVEL, max_value=MAX_LEVEL)
    high = forms.IntegerField(required=False, min_value=-MAX_LEVEL, max_value=MAX_LEVEL)
    no_capacity = forms.BooleanField(required=False)
    horizon = forms.IntegerField(required=False, min_value=1, max_value=MAX_HORIZON)
    up = forms.FloatField(required=False, min_value=0, max_value=1)
    down = forms.FloatField(required=False, min_value=0, max_value=1)
    step_table = forms.CharField(required=False)
    arrivals_mean = forms.FloatField(required=False, min_value=0)
    demand_mean = forms.FloatField(required=False, min_value=0)
    delivery_size = forms.IntegerField(required=False, min_value=1, max_value=MAX_JUMP)

    def clean_step_table(self):
        return parse_table(self.cleaned_data["step_table"])

    def changes(self) -> dict:
        """The values given, by parameter ('table' for the change table); empty ones are left out."""
        data = self.cleaned_data
        changes = {name: value for name, value in data.items() if value not in (None, (), "", False)}
        if "step_table" in changes:
            changes["table"] = changes.pop("step_table")
        return changes
