"""Reorder-plan forms: they parse and validate request data into parameters or changes; they never write.

Every field error shows on the first submit: the demand law, the lead time and
review period, and the target with its order quantity and costs are checked
each on their own (beside neutral stand-ins for the other parts), so a bad lead
time does not hide a bad demand law. Validation never builds a law.
"""

from __future__ import annotations

from django import forms

from planner.count_law import MAX_JUMP, CountLaw
from planner.form_fields import PercentField, format_table, parse_table
from planner.formatting import PERIODS, period_name
from planner.forms import ScenarioFields
from planner.kinds.reorder_plan.params import (
    MAX_LEAD_TIME,
    MAX_ORDER_QUANTITY,
    MAX_PRICE,
    MAX_REVIEW_PERIOD,
    MAX_UNIT_NAME,
    MEASURES,
    ReorderPlanParams,
)
from planner.kinds.reorder_plan.words import MEASURE_CHOICE, UNMET_CHOICE

COUNT_CHOICES = [
    ("poisson", "Poisson (give the mean)"),
    ("negative_binomial", "Negative binomial (mean and variance, for erratic or lumpy demand)"),
    ("fixed", "The same amount every {one}"),
    ("table", "Table of amounts"),
]
LEAD_CHOICES = [("fixed", "Always the same"), ("table", "Varies: a table of lead times and their chances")]
COUNT_NEEDS = {"poisson": ["mean"], "negative_binomial": ["mean", "variance"], "fixed": ["amount"], "table": ["table"]}
# Parameter messages start with the input's name; this maps the name to its field.
MESSAGE_FIELDS = [
    ("period", "period"),
    ("unit name", "unit"),
    ("review period", "review_period"),
    ("lead time table", "lead_time_table"),
    ("service measure", "measure"),
    ("when the shelf is empty", "unmet"),
    ("service target", "service_target"),
    ("order quantity", "order_quantity"),
    ("holding cost", "holding"),
    ("order cost", "order_cost"),
    ("shortage penalty", "shortage_penalty"),
    ("mean", "demand_mean"),
    ("variance", "demand_variance"),
    ("amount", "demand_amount"),
    ("count table", "demand_table"),
]
# Neutral stand-ins, so that each part of the form is checked on its own.
NEUTRAL_DEMAND = CountLaw("poisson", mean=1.0)
NEUTRAL_LEAD = {"lead_time": 1, "lead_time_table": (), "review_period": 0}
NEUTRAL_TARGET = {"measure": "cycle", "target": 0.5}


def _period_word(text: str, period: str) -> str:
    """A label with the period named: '{one}' -> 'day', '{many}' -> 'days'."""
    return text.format(one=period_name(period), many=period_name(period, 2))


def _field_for(message: str, default: str) -> str:
    for prefix, name in MESSAGE_FIELDS:
        if message.startswith(prefix):
            return name
    return default


class DemandLeadTimeForm(forms.Form):
    """Demand per period, lead time and review period; also the live preview's form."""

    period = forms.ChoiceField(
        label="Planning period",
        choices=[(key, one.capitalize()) for key, (one, _) in PERIODS.items()],
        initial="day",
        required=False,
        help_text="Demand, lead time, review period and costs are all counted in it.",
    )
    unit = forms.CharField(
        label="Counted in",
        required=False,
        initial="units",
        max_length=MAX_UNIT_NAME,
        help_text="What the stock is counted in, e.g. crates or sacks.",
    )
    demand_family = forms.ChoiceField(label="Demand law", choices=COUNT_CHOICES, initial="poisson")
    demand_mean = forms.FloatField(label="Mean demand (per {one})", required=False)
    demand_variance = forms.FloatField(label="Demand variance (per {one})", required=False)
    demand_amount = forms.IntegerField(label="Demand every {one}", required=False, min_value=0, max_value=MAX_JUMP)
    demand_table = forms.CharField(
        label="Demand table (amount: probability)", required=False, help_text="e.g. 0: 0.7, 1: 0.2, 4: 0.1"
    )
    lead_time_method = forms.ChoiceField(
        label="Lead time", choices=LEAD_CHOICES, initial="fixed", widget=forms.RadioSelect
    )
    lead_time = forms.IntegerField(
        label="Lead time ({many})",
        required=False,
        min_value=0,
        max_value=MAX_LEAD_TIME,
        help_text="From placing an order to the delivery being on the shelf.",
    )
    lead_time_table = forms.CharField(
        label="Lead times ({many}: chance)",
        required=False,
        help_text="e.g. 3: 0.6, 4: 0.3, 7: 0.1",
    )
    review_period = forms.IntegerField(
        label="Review period ({many})",
        initial=0,
        required=False,
        min_value=0,
        max_value=MAX_REVIEW_PERIOD,
        help_text="0 if the stock is watched all the time (every sale recorded); 7 if it is counted once a week.",
    )

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        period = self.data.get("period") if self.is_bound else self.initial.get("period")
        self.plan_period = period if isinstance(period, str) and period in PERIODS else "day"
        for field in self.fields.values():
            if field.label:
                field.label = _period_word(str(field.label), self.plan_period)
            if field.help_text:
                field.help_text = _period_word(str(field.help_text), self.plan_period)
            if isinstance(field, forms.ChoiceField):
                field.choices = [(key, _period_word(str(text), self.plan_period)) for key, text in field.choices]

    def clean_period(self):
        return self.cleaned_data["period"] or "day"

    def clean_unit(self):
        return self.cleaned_data["unit"] or "units"

    def clean_review_period(self):
        value = self.cleaned_data["review_period"]
        return 0 if value is None else value

    def clean_demand_table(self):
        return parse_table(self.cleaned_data["demand_table"])

    def clean_lead_time_table(self):
        return parse_table(self.cleaned_data["lead_time_table"])

    def _required(self, names: list[str], data: dict, message: str) -> bool:
        missing = [name for name in names if data.get(name) in (None, (), "")]
        for name in missing:
            self.add_error(name, forms.ValidationError(message, code="required"))
        return not missing

    def demand_part(self, data: dict) -> CountLaw | None:
        family = data.get("demand_family")
        if family is None:
            return None
        names = [f"demand_{need}" for need in COUNT_NEEDS[family]]
        if any(name in self.errors for name in names):
            return None
        if not self._required(names, data, f"Required for a {family.replace('_', ' ')} demand law."):
            return None
        try:
            return CountLaw(
                family=family,
                mean=data.get("demand_mean"),
                variance=data.get("demand_variance"),
                amount=data.get("demand_amount"),
                table=data.get("demand_table") or (),
            )
        except ValueError as exc:
            self.add_error(_field_for(str(exc), "demand_family"), str(exc))
            return None

    def lead_part(self, data: dict) -> dict | None:
        method = data.get("lead_time_method")
        names = ["lead_time"] if method == "fixed" else ["lead_time_table"]
        if method is None or any(name in self.errors for name in [*names, "review_period"]):
            return None
        if not self._required(names, data, "Required for this choice."):
            return None
        return {
            "lead_time": data.get("lead_time") if method == "fixed" else None,
            "lead_time_table": data.get("lead_time_table") if method == "table" else (),
            "review_period": data["review_period"],
        }

    def target_part(self, data: dict) -> dict | None:
        """The preview has no target: a neutral one."""
        return dict(NEUTRAL_TARGET)

    def clean(self):
        data = super().clean()
        common = {"period": data.get("period") or "day", "unit": data.get("unit") or "units"}
        demand = self.demand_part(data)
        lead = self.lead_part(data)
        target = self.target_part(data)
        lead_field = "lead_time" if data.get("lead_time_method") == "fixed" else "lead_time_table"
        # Each part is checked on its own so that every part's errors show at once.
        if demand is not None:
            self._try(common | NEUTRAL_LEAD | NEUTRAL_TARGET | {"demand": demand}, "demand_family")
        if lead is not None:
            self._try(common | lead | NEUTRAL_TARGET | {"demand": NEUTRAL_DEMAND}, lead_field)
        if target is not None:
            self._try(common | NEUTRAL_LEAD | target | {"demand": NEUTRAL_DEMAND}, "service_target")
        if None not in (demand, lead, target) and not self.errors:
            data["params"] = self._try(common | lead | target | {"demand": demand}, lead_field)
        return data

    def _try(self, values: dict, default: str) -> ReorderPlanParams | None:
        try:
            return ReorderPlanParams(**values)
        except ValueError as exc:
            message = str(exc)
            field = _field_for(message, default)
            if message.startswith(("demand", "mean", "variance", "amount", "count table")):
                family = self.cleaned_data.get("demand_family") or "poisson"
                field = field if field != default else f"demand_{COUNT_NEEDS[family][0]}"
            self.add_error(field, message)
            return None


class ReorderPlanForm(ScenarioFields, DemandLeadTimeForm):
    """The whole plan. The shared stock-out and overflow targets give way to the plan's own service target."""

    field_order = ["title", "notes", "period", "unit"]

    stockout_target = None
    overflow_target = None
    measure = forms.ChoiceField(
        label="Service target for", choices=list(MEASURE_CHOICE.items()), initial="cycle", widget=forms.RadioSelect
    )
    service_target = PercentField(
        label="Service target (%)",
        initial=0.95,
        help_text="e.g. 95, 99 or 99.9 %.",
    )
    order_quantity = forms.IntegerField(
        label="Order quantity",
        required=False,
        min_value=1,
        max_value=MAX_ORDER_QUANTITY,
        help_text="Units in one order. Needed for a fill-rate target; otherwise optional.",
    )
    holding = forms.FloatField(
        label="Holding cost (per unit per {one})", required=False, min_value=0, max_value=MAX_PRICE
    )
    order_cost = forms.FloatField(label="Cost of one order", required=False, min_value=0, max_value=MAX_PRICE)
    shortage_penalty = forms.FloatField(
        label="Shortage penalty (per unit short)", required=False, min_value=0, max_value=MAX_PRICE
    )
    unmet = forms.ChoiceField(
        label="When the shelf is empty",
        choices=list(UNMET_CHOICE.items()),
        initial="backorder",
        required=False,
        widget=forms.RadioSelect,
        help_text="Lost sales need a fixed lead time that is a whole number of review periods.",
    )

    def target_part(self, data: dict) -> dict | None:
        names = ["measure", "service_target", "order_quantity", "holding", "order_cost", "shortage_penalty", "unmet"]
        if any(name in self.errors for name in names) or data.get("measure") not in MEASURES:
            return None
        if data.get("service_target") is None:
            return None
        if data["measure"] == "fill" and not self._required(
            ["order_quantity"], data, "Required for a fill-rate target (the fill rate depends on the order size)."
        ):
            return None
        return {
            "measure": data["measure"],
            "target": data["service_target"],
            "order_quantity": data.get("order_quantity"),
            "holding": data.get("holding"),
            "order_cost": data.get("order_cost"),
            "shortage_penalty": data.get("shortage_penalty"),
            "unmet": data.get("unmet") or "backorder",
        }

    def clean(self):
        data = super().clean()
        if "params" in data and data["params"] is not None:
            # The scenario list compares a stored stock-out risk with a stored target: the plan's shortfall at
            # its reorder point against 1 - its service target. Overflow does not arise in a reorder plan.
            data["stockout_target"] = 1.0 - data["params"].target
            data["overflow_target"] = 0.05
        return data


def form_initial(params: ReorderPlanParams) -> dict:
    """Form initial values from saved parameters."""
    demand = params.demand
    return {
        "period": params.period,
        "unit": params.unit,
        "demand_family": demand.family,
        "demand_mean": demand.mean,
        "demand_variance": demand.variance,
        "demand_amount": demand.amount,
        "demand_table": format_table(demand.table),
        "lead_time_method": "fixed" if params.fixed_lead_time else "table",
        "lead_time": params.lead_time,
        "lead_time_table": format_table(params.lead_time_table),
        "review_period": params.review_period,
        "measure": params.measure,
        "service_target": params.target,
        "order_quantity": params.order_quantity,
        "holding": params.holding,
        "order_cost": params.order_cost,
        "shortage_penalty": params.shortage_penalty,
        "unmet": params.unmet,
    }


class WhatIfForm(forms.Form):
    """Changes to try on a saved plan; empty fields keep the saved value. Parses only."""

    demand_mean = forms.FloatField(required=False, min_value=0)
    lead_time = forms.IntegerField(required=False, min_value=0, max_value=MAX_LEAD_TIME)
    review_period = forms.IntegerField(required=False, min_value=0, max_value=MAX_REVIEW_PERIOD)
    order_quantity = forms.IntegerField(required=False, min_value=1, max_value=MAX_ORDER_QUANTITY)
    unmet = forms.ChoiceField(required=False, choices=[("", "as saved"), *UNMET_CHOICE.items()])

    def changes(self) -> dict:
        """The values given, by parameter; empty ones are left out."""
        return {name: value for name, value in self.cleaned_data.items() if value not in (None, "")}
