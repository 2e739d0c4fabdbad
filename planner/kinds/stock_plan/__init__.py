"""The stock plan: a stock level moved each period by demand, deliveries and supply.

Everything this kind needs lives in this package: ``params`` (parameters and
their laws), ``forms`` (parse and validate), ``compute`` (walkmath calls,
priced first), ``whatif`` (changes on a saved plan), ``charts`` and
``tables``. The last line registers it.
"""

from __future__ import annotations

import numpy as np

from planner.formatting import rate
from planner.kinds import Kind, Part, register
from planner.kinds.stock_plan import charts, comparison, crosscheck, from_fit, tables
from planner.kinds.stock_plan.compute import StockJob
from planner.kinds.stock_plan.forms import ChangeLawForm, StockPlanForm, WhatIfForm, form_initial
from planner.kinds.stock_plan.params import StockPlanParams
from planner.kinds.stock_plan.whatif import apply_changes, describe_changes

# The preview charts the changes that can be seen (>= 1e-6 of the most likely one); its summary uses the whole law.
PREVIEW_FLOOR = 1e-6


class StockPlan(Kind):
    key = "stock_plan"
    label = "Stock plan"
    form_template = "planner/kinds/stock_plan/form_fields.html"
    headline_template = "planner/kinds/stock_plan/headline.html"
    whatif_template = "planner/kinds/stock_plan/whatif.html"
    table_builders = tables.ROWS  # before ``tables`` below takes the module's name in this class
    tables = tables.TABLES
    check_template = "planner/kinds/stock_plan/cross_check.html"
    check_tables = {"cross-check": "cross-check: exact, normal approximation and simulation"}

    # The shared plumbing's calls, answered by this package's own functions and classes.
    params_from_json = staticmethod(StockPlanParams.from_json)
    scenario_form = staticmethod(StockPlanForm)
    form_initial = staticmethod(form_initial)
    changes_form = staticmethod(WhatIfForm)
    apply_changes = staticmethod(apply_changes)
    describe_changes = staticmethod(describe_changes)
    prepare = staticmethod(StockJob)
    figures = staticmethod(charts.charts_for)
    params_from_fit = staticmethod(from_fit.params_from_fit)
    fit_note = staticmethod(from_fit.fit_note)
    preview_form = staticmethod(ChangeLawForm)
    comparable = staticmethod(comparison.comparable)
    check_figure = staticmethod(crosscheck.chart)

    def cross_check(self, params, stockout_target, overflow_target):
        return crosscheck.CrossCheckJob(params, stockout_target)

    def check_rows(self, check, table):
        return crosscheck.csv_rows(check)

    def sample_changes(self, params) -> list[dict]:
        """Start one lower, as saved and one higher, kept inside the floor and capacity (the horizon as saved)."""
        top = params.high if params.high is not None else params.start + 1
        starts = sorted({max(params.low, params.start - 1), params.start, min(top, params.start + 1)})
        return [{"start": start, "horizon": params.horizon} for start in starts]

    def preview_parts(self, form) -> list[Part]:
        """The preview builds one law: priced as supply width x demand width (one convolution)."""
        params = form.cleaned_data["params"]
        if params.step_method != "net":
            return [Part("preview", len(params.table) or 3)]
        scale = params.profile[0] if params.profile else 1.0
        supply = params.arrivals.width_bound() if params.arrivals else 1
        return [Part("preview", supply * params.demand.width_bound(scale))]

    def preview(self, form) -> dict:
        """The first period's change law and the cycle's mean change (one law built, never the whole cycle)."""
        params = form.cleaned_data["params"]
        first = params.first_law()
        visible = np.flatnonzero(first.probs >= PREVIEW_FLOOR * first.probs.max())
        shown = slice(visible[0], visible[-1] + 1)
        return {
            "ready": True,
            "steps": first.steps[shown].tolist(),
            "probs": first.probs[shown].tolist(),
            "mean": first.mean,
            "variance": first.variance,
            "cycle": params.cycle_length,
            "cycle_mean": params.mean_change,
            "period": params.period,
            "summary": f"Mean change {rate(params.mean_change, params.period)}",
        }


register(StockPlan())
