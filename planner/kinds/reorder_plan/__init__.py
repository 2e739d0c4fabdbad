"""The reorder plan: when to reorder and up to what level, so that a service target is met.

Everything this kind needs lives in this package: ``params`` (parameters and
their laws), ``forms`` (parse and validate), ``compute`` (walkmath calls,
priced first), ``whatif`` (changes on a saved plan), ``charts``, ``tables``
and ``words``. The last line registers it.
"""

from __future__ import annotations

import walkmath as wm
from planner.formatting import number, period_name, units
from planner.kinds import Kind, Part, register
from planner.kinds.reorder_plan import charts, from_fit, tables
from planner.kinds.reorder_plan.compute import ReorderJob
from planner.kinds.reorder_plan.forms import DemandLeadTimeForm, ReorderPlanForm, WhatIfForm, form_initial
from planner.kinds.reorder_plan.params import ReorderPlanParams
from planner.kinds.reorder_plan.whatif import apply_changes, describe_changes

# The preview charts the amounts that can be seen (>= 1e-6 of the most likely one); its summary uses the whole law.
PREVIEW_FLOOR = 1e-6


class ReorderPlan(Kind):
    key = "reorder_plan"
    label = "Reorder plan"
    form_template = "planner/kinds/reorder_plan/form_fields.html"
    headline_template = "planner/kinds/reorder_plan/headline.html"
    whatif_template = "planner/kinds/reorder_plan/whatif.html"
    table_builders = tables.ROWS  # before ``tables`` below takes the module's name in this class
    tables = tables.TABLES

    # The shared plumbing's calls, answered by this package's own functions and classes.
    params_from_json = staticmethod(ReorderPlanParams.from_json)
    scenario_form = staticmethod(ReorderPlanForm)
    form_initial = staticmethod(form_initial)
    changes_form = staticmethod(WhatIfForm)
    apply_changes = staticmethod(apply_changes)
    describe_changes = staticmethod(describe_changes)
    prepare = staticmethod(ReorderJob)
    figures = staticmethod(charts.charts_for)
    params_from_fit = staticmethod(from_fit.params_from_fit)
    fit_note = staticmethod(from_fit.fit_note)
    preview_form = staticmethod(DemandLeadTimeForm)

    def sample_changes(self, params) -> list[dict]:
        """Lead time one shorter, as saved and one longer (the review period instead for a lead-time table)."""
        if params.fixed_lead_time:
            shortest = 0 if params.review_period else 1
            values = sorted({max(shortest, params.lead_time - 1), params.lead_time, params.lead_time + 1})
            return [{"lead_time": value} for value in values]
        values = sorted({max(0, params.review_period - 1), params.review_period, params.review_period + 1})
        return [{"review_period": value} for value in values]

    def preview_parts(self, form) -> list[Part]:
        """The preview builds the demand over the lead time (plus the review period): priced as the engine does."""
        params = form.cleaned_data["params"]
        work = wm.reorder_point_plan_work(
            params.demand_law(), params.lead_time_law(), review_period=params.review_period
        )
        return [Part("preview", work.units)]

    def preview(self, form) -> dict:
        """Demand over the lead time plus the review period, exact, and its mean and spread."""
        params = form.cleaned_data["params"]
        law = wm.protection_demand(params.demand_law(), params.lead_time_law(), params.review_period)
        visible = law.probs >= PREVIEW_FLOOR * law.probs.max()
        first, last = visible.argmax(), visible.size - visible[::-1].argmax()
        mean = law.mean
        variance = float(((law.levels - mean) ** 2) @ law.probs)
        span = "the lead time" + (" and review period" if params.review_period else "")
        return {
            "ready": True,
            "steps": law.levels[first:last].tolist(),
            "probs": law.probs[first:last].tolist(),
            "mean": mean,
            "variance": variance,
            "cycle": 1,
            "cycle_mean": mean,
            "period": params.period,
            "x_title": f"demand over {span} ({params.unit})",
            "summary": (
                f"Demand over {span}: mean {units(mean, params.unit)}, standard deviation {number(variance**0.5)} "
                f"(demand counted per {period_name(params.period)})."
            ),
        }


register(ReorderPlan())
