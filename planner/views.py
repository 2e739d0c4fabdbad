"""Views: a permission-checked fetch, a form, one service call, then render or redirect."""

from __future__ import annotations

import time

import numpy as np
from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.http import Http404, HttpResponse, JsonResponse
from django.shortcuts import redirect, render
from django.template.loader import render_to_string
from django.views.decorators.http import require_GET, require_http_methods, require_POST
from plotly.utils import PlotlyJSONEncoder

from planner import services
from planner.charts import figures_for, figures_script
from planner.csv_export import TABLES, file_name, table_csv
from planner.forms import ScenarioForm, StepLawForm, WhatIfForm, compute_size_error, scenario_initial
from planner.models import Scenario
from planner.outlook import StockOutlook, Targets, run_outlook
from planner.permissions import get_scenario_for

PREVIEW_FLOOR = 1e-6


def _outlook(scenario: Scenario, query) -> StockOutlook:
    """The outlook of ``scenario`` with the what-if changes in ``query``; ValueError explains a bad one."""
    form = WhatIfForm(query)
    if not form.is_valid():
        raise ValueError("; ".join(f"{name}: {' '.join(errors)}" for name, errors in form.errors.items()))
    params = form.variant_of(scenario.walk_params)
    targets = Targets(stockout=scenario.stockout_target, overflow=scenario.overflow_target)
    return run_outlook(params=params, targets=targets)


def _form_values(form: ScenarioForm) -> dict:
    keys = ("title", "notes", "stockout_target", "overflow_target")
    return {key: form.cleaned_data[key] for key in keys} | {"params": form.cleaned_data["params"]}


@login_required
@require_GET
def scenario_list(request):
    scenarios = Scenario.objects.filter(owner=request.user)
    return render(request, "planner/scenario_list.html", {"scenarios": scenarios})


@login_required
@require_http_methods(["GET", "POST"])
def scenario_new(request):
    form = ScenarioForm(request.POST or None)
    if form.is_valid():
        scenario = services.scenario_create(owner=request.user, **_form_values(form))
        messages.success(request, f"Saved “{scenario.title}”.")
        return redirect(scenario)
    return render(request, "planner/scenario_form.html", {"form": form})


@login_required
@require_http_methods(["GET", "POST"])
def scenario_edit(request, pk: int):
    scenario = get_scenario_for(request.user, pk)
    form = ScenarioForm(request.POST or None, initial=scenario_initial(scenario))
    if request.method == "POST" and form.is_valid():
        services.scenario_update(scenario=scenario, **_form_values(form))
        messages.success(request, f"Updated “{scenario.title}”.")
        return redirect(scenario)
    return render(request, "planner/scenario_form.html", {"form": form, "scenario": scenario})


@login_required
@require_http_methods(["GET", "POST"])
def scenario_delete(request, pk: int):
    scenario = get_scenario_for(request.user, pk)
    if request.method == "POST":
        services.scenario_delete(scenario=scenario)
        messages.success(request, f"Deleted “{scenario.title}”.")
        return redirect("scenario_list")
    return render(request, "planner/scenario_confirm_delete.html", {"scenario": scenario})


@login_required
@require_GET
def scenario_results(request, pk: int):
    scenario = get_scenario_for(request.user, pk)
    params = scenario.walk_params
    context = {"scenario": scenario, "params": params, "whatif": WhatIfForm(), "tables": TABLES}
    try:
        context["error"] = compute_size_error(params)
        if not context["error"]:
            context["result"] = result = _outlook(scenario, {})
            context["figures_script"] = figures_script(result)
    except ValueError as exc:
        context["error"] = str(exc)
    return render(request, "planner/scenario_results.html", context)


@login_required
@require_GET
def scenario_outlook_json(request, pk: int):
    """Figures and headline for the what-if values in the query string; 400 with the message if unfit."""
    scenario = get_scenario_for(request.user, pk)
    began = time.perf_counter()
    try:
        result = _outlook(scenario, request.GET)
    except ValueError as exc:
        return JsonResponse({"error": str(exc)}, status=400)
    headline = render_to_string("planner/_headline.html", {"result": result, "scenario": scenario}, request)
    data = {"figures": figures_for(result), "headline_html": headline, "params": result.params.to_json()}
    response = JsonResponse(data, encoder=PlotlyJSONEncoder)
    response["Server-Timing"] = f"outlook;dur={1000 * (time.perf_counter() - began):.1f}"
    return response


@login_required
@require_POST
def scenario_variant_save(request, pk: int):
    """Keep the current what-if values as a new scenario."""
    scenario = get_scenario_for(request.user, pk)
    form = WhatIfForm(request.POST)
    try:
        if not form.is_valid():
            raise ValueError("the what-if values are not valid")
        variant = services.scenario_copy(
            scenario=scenario, owner=request.user, params=form.variant_of(scenario.walk_params)
        )
    except ValueError as exc:
        messages.error(request, f"Could not save the variant: {exc}")
        return redirect(scenario)
    messages.success(request, f"Saved the what-if as “{variant.title}”.")
    return redirect(variant)


@login_required
@require_GET
def scenario_csv(request, pk: int, table: str):
    scenario = get_scenario_for(request.user, pk)
    if table not in TABLES:
        raise Http404("No such table")
    try:
        result = _outlook(scenario, request.GET)
    except ValueError as exc:
        return HttpResponse(str(exc), status=400, content_type="text/plain; charset=utf-8")
    response = HttpResponse(table_csv(result, table, scenario.title), content_type="text/csv; charset=utf-8")
    response["Content-Disposition"] = f'attachment; filename="{file_name(scenario.title, table)}"'
    return response


@login_required
@require_GET
def step_law_preview(request):
    """The step law the form describes (first period of the cycle) and the cycle's mean change."""
    form = StepLawForm(request.GET)
    if not form.is_valid():
        return JsonResponse({"errors": {name: list(errors) for name, errors in form.errors.items()}}, status=400)
    laws = form.cleaned_data["params"].step_laws()
    first = laws[0]
    # Chart only the steps that can be seen (>= 1e-6 of the largest); the summary uses the whole law.
    visible = np.flatnonzero(first.probs >= PREVIEW_FLOOR * first.probs.max())
    shown = slice(visible[0], visible[-1] + 1)
    return JsonResponse(
        {
            "steps": first.steps[shown].tolist(),
            "probs": first.probs[shown].tolist(),
            "mean": first.mean,
            "variance": first.variance,
            "cycle": len(laws),
            "cycle_mean": sum(law.mean for law in laws) / len(laws),
        }
    )
