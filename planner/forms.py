"""Forms validate and convert request data into ``StockWalkParams``; they never write."""

from __future__ import annotations

import re

from django import forms
from django.conf import settings

from planner.params import (
    MAX_HORIZON,
    MAX_JUMP,
    MAX_LEVEL,
    CountLaw,
    StockWalkParams,
    compute_size,
)

BELOW_CHOICES = [
    ("backorder", "Backorder: the level goes below low and keeps moving"),
    ("lost", "Lost: the level stays at low; the missing units are lost"),
    ("stop", "Stop: the first stock-out ends the path"),
]
ABOVE_CHOICES = [
    ("spill", "Spill: the level stays at capacity; the excess is spilled"),
    ("stop", "Stop: the first overflow ends the path"),
]
STEP_CHOICES = [
    ("nearest", "Up / down probabilities"),
    ("table", "Table of jump probabilities"),
    ("net", "Arrivals minus demand"),
]
COUNT_CHOICES = [
    ("poisson", "Poisson (mean)"),
    ("negative_binomial", "Negative binomial (mean, variance)"),
    ("fixed", "Fixed amount"),
    ("table", "Table of counts"),
]
ROW = re.compile(r"^\s*([+-]?\d+)\s*[:=]\s*([0-9.eE+-]+)\s*$")
# Messages from StockWalkParams start with the parameter's name; this maps the name to its field.
MESSAGE_FIELDS = [
    ("start level", "start"),
    ("capacity", "high"),
    ("low", "low"),
    ("horizon", "horizon"),
    ("up + down", "down"),
    ("up", "up"),
    ("down", "down"),
    ("step table", "step_table"),
    ("profile", "profile"),
    ("delivery every", "delivery_every"),
    ("delivery size", "delivery_size"),
]
COUNT_MESSAGE_FIELDS = [("mean", "mean"), ("variance", "variance"), ("amount", "amount"), ("count table", "table")]


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


def _count_family(prefix: str) -> forms.ChoiceField:
    return forms.ChoiceField(label=f"{prefix.capitalize()} law", choices=COUNT_CHOICES, initial="poisson")


class StepLawForm(forms.Form):
    """The step-law part of a scenario: how the level moves in one period."""

    step_method = forms.ChoiceField(
        label="Step law given as", choices=STEP_CHOICES, initial="nearest", widget=forms.RadioSelect
    )
    up = forms.FloatField(label="P(up one)", required=False, min_value=0, max_value=1)
    down = forms.FloatField(label="P(down one)", required=False, min_value=0, max_value=1)
    step_table = forms.CharField(
        label="Jump probabilities", required=False, help_text="e.g. -2: 0.1, -1: 0.4, 0: 0.3, 1: 0.2"
    )
    arrivals_family = _count_family("arrivals")
    arrivals_mean = forms.FloatField(label="Arrivals mean (units per period)", required=False)
    arrivals_variance = forms.FloatField(label="Arrivals variance (units²)", required=False)
    arrivals_amount = forms.IntegerField(label="Arrivals fixed amount (units)", required=False)
    arrivals_table = forms.CharField(label="Arrivals count table", required=False, help_text="e.g. 0: 0.5, 2: 0.5")
    demand_family = _count_family("demand")
    demand_mean = forms.FloatField(label="Demand mean (units per period)", required=False)
    demand_variance = forms.FloatField(label="Demand variance (units²)", required=False)
    demand_amount = forms.IntegerField(label="Demand fixed amount (units)", required=False)
    demand_table = forms.CharField(label="Demand count table", required=False, help_text="e.g. 0: 0.2, 1: 0.5, 2: 0.3")
    profile = forms.CharField(
        label="Repeating demand profile",
        required=False,
        help_text="Factors on mean demand, one per period, repeating (e.g. seven weekday factors).",
    )
    delivery_every = forms.IntegerField(label="Delivery every (periods)", required=False, min_value=1)
    delivery_size = forms.IntegerField(label="Delivery size (units)", required=False, min_value=1, max_value=MAX_JUMP)

    def clean_step_table(self):
        return parse_table(self.cleaned_data["step_table"])

    def clean_arrivals_table(self):
        return parse_table(self.cleaned_data["arrivals_table"])

    def clean_demand_table(self):
        return parse_table(self.cleaned_data["demand_table"])

    def clean_profile(self):
        return parse_profile(self.cleaned_data["profile"])

    def band_values(self, data: dict) -> dict:
        """Start, band and horizon for the parameters; the preview has none and uses a neutral probe."""
        return {"start": 0, "horizon": 1}

    def clean(self):
        data = super().clean()
        if self.errors:
            return data
        method = data["step_method"]
        required = {"nearest": ["up", "down"], "table": ["step_table"], "net": []}[method]
        if data.get("delivery_every") and not data.get("delivery_size"):
            required.append("delivery_size")
        for name in required:
            if data.get(name) in (None, (), ""):
                self.add_error(name, "Required for this choice.")
        counts = {prefix: self._count_law(prefix, data) for prefix in ("arrivals", "demand")} if method == "net" else {}
        if self.errors:
            return data
        try:
            data["params"] = StockWalkParams(
                **self.band_values(data),
                step_method=method,
                up=data.get("up"),
                down=data.get("down"),
                table=data.get("step_table") or (),
                arrivals=counts.get("arrivals"),
                demand=counts.get("demand"),
                profile=data.get("profile") or (),
                delivery_every=data.get("delivery_every"),
                delivery_size=data.get("delivery_size") or 0,
            )
        except ValueError as exc:
            self.add_error(_field_for(str(exc), MESSAGE_FIELDS, "step_method"), str(exc))
        return data

    def _count_law(self, prefix: str, data: dict) -> CountLaw | None:
        family = data[f"{prefix}_family"]
        needs = {
            "poisson": ["mean"],
            "negative_binomial": ["mean", "variance"],
            "fixed": ["amount"],
            "table": ["table"],
        }
        missing = [f"{prefix}_{name}" for name in needs[family] if data.get(f"{prefix}_{name}") in (None, ())]
        for name in missing:
            self.add_error(name, f"Required for a {family.replace('_', ' ')} {prefix} law.")
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


class ScenarioForm(StepLawForm):
    title = forms.CharField(max_length=120)
    notes = forms.CharField(widget=forms.Textarea(attrs={"rows": 3}), required=False)
    start = forms.IntegerField(label="Start level (units)", min_value=-MAX_LEVEL, max_value=MAX_LEVEL)
    low = forms.IntegerField(label="Low (units)", initial=0, min_value=-MAX_LEVEL, max_value=MAX_LEVEL)
    high = forms.IntegerField(
        label="Capacity (units)",
        required=False,
        min_value=-MAX_LEVEL,
        max_value=MAX_LEVEL,
        help_text="Leave empty for no capacity.",
    )
    below = forms.ChoiceField(label="When the level would fall below low", choices=BELOW_CHOICES, initial="stop")
    above = forms.ChoiceField(label="When the level would rise above capacity", choices=ABOVE_CHOICES, initial="spill")
    horizon = forms.IntegerField(label="Horizon (periods)", min_value=1, max_value=MAX_HORIZON, initial=30)
    stockout_target = forms.FloatField(
        label="Largest acceptable stock-out risk", initial=0.05, help_text="A probability, above 0 and below 1."
    )
    overflow_target = forms.FloatField(
        label="Largest acceptable overflow risk", initial=0.05, help_text="A probability, above 0 and below 1."
    )
    field_order = [
        "title",
        "notes",
        "start",
        "low",
        "high",
        "below",
        "above",
        "horizon",
        "step_method",
        "up",
        "down",
        "step_table",
    ]

    def _clean_target(self, name: str) -> float:
        value = self.cleaned_data[name]
        if not 0 < value < 1:
            raise forms.ValidationError("Give a probability above 0 and below 1, e.g. 0.05 or 1e-4.")
        return value

    def clean_stockout_target(self):
        return self._clean_target("stockout_target")

    def clean_overflow_target(self):
        return self._clean_target("overflow_target")

    def band_values(self, data: dict) -> dict:
        return {key: data.get(key) for key in ("start", "horizon", "low", "high", "below", "above")}

    def clean(self):
        data = super().clean()
        if "params" in data:
            size_error = compute_size_error(data["params"])
            if size_error:
                self.add_error("horizon", size_error)
        return data


def compute_size_error(params: StockWalkParams) -> str:
    """A message when the walk exceeds the web app's levels x periods cap, else ''."""
    cap = settings.PLANNER_COMPUTE_CAP
    levels, periods = compute_size(params)
    if levels * periods <= cap:
        return ""
    return (
        f"levels x periods must be at most {cap:,} here; this walk needs about {levels:,} levels x {periods:,} "
        "periods. Shorten the horizon, set a capacity, or count in larger units."
    )


def scenario_initial(scenario) -> dict:
    """Form initial values from a saved scenario."""
    params = scenario.walk_params
    initial = {
        "title": scenario.title,
        "notes": scenario.notes,
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
        "stockout_target": scenario.stockout_target,
        "overflow_target": scenario.overflow_target,
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
    return initial


class WhatIfForm(forms.Form):
    """Changes to try on a saved scenario; empty fields keep the saved value."""

    start = forms.IntegerField(required=False, min_value=-MAX_LEVEL, max_value=MAX_LEVEL)
    high = forms.IntegerField(required=False, min_value=-MAX_LEVEL, max_value=MAX_LEVEL)
    no_capacity = forms.BooleanField(required=False)
    horizon = forms.IntegerField(required=False, min_value=1, max_value=MAX_HORIZON)
    up = forms.FloatField(required=False, min_value=0, max_value=1)
    down = forms.FloatField(required=False, min_value=0, max_value=1)
    step_table = forms.CharField(required=False)
    arrivals_mean = forms.FloatField(required=False, min_value=0)
    demand_mean = forms.FloatField(required=False, min_value=0)

    def clean_step_table(self):
        return parse_table(self.cleaned_data["step_table"])

    def variant_of(self, params: StockWalkParams) -> StockWalkParams:
        """``params`` with this form's changes; ValueError (naming the parameter) if they do not fit."""
        data = self.cleaned_data
        changes = {name: data[name] for name in ("start", "horizon") if data.get(name) is not None}
        if data.get("no_capacity"):
            changes["high"] = None
        elif data.get("high") is not None:
            changes["high"] = data["high"]
        if params.step_method == "nearest":
            changes.update({name: data[name] for name in ("up", "down") if data.get(name) is not None})
        if params.step_method == "table" and data.get("step_table"):
            changes["table"] = data["step_table"]
        if params.step_method == "net":
            for prefix in ("arrivals", "demand"):
                law, mean = getattr(params, prefix), data.get(f"{prefix}_mean")
                if mean is not None and law.family in ("poisson", "negative_binomial"):
                    variance = (
                        law.variance * mean / law.mean if law.family == "negative_binomial" and law.mean else None
                    )
                    changes[prefix] = CountLaw(family=law.family, mean=mean, variance=variance)
        variant = params.replace(**changes)
        size_error = compute_size_error(variant)
        if size_error:
            raise ValueError(size_error)
        return variant
