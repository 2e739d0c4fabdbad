"""Views, generic over scenario kinds: a permission-checked fetch, a form, one service call, then a response.

What-if contract (GET ``scenario_outlook_json``; the CSV links take the same query):
  query   the kind's what-if fields; empty ones keep the saved value; other keys (title,
          csrfmiddlewaretoken) are ignored. Stock plan: start, high, no_capacity ("on" when the
          capacity box is empty), horizon, up, down, step_table, arrivals_mean, demand_mean,
          delivery_size.
  200     {"figures": {name: {"data": [...], "layout": {...}}},
           "summaries": {name: {"summary": text alternative, "table": CSV slug}},
           "headline_html": the headline block, "params": the parameters used,
           "changes": [the inputs that differ from the saved plan, in words]}
          with a Server-Timing header "compute;dur=<ms>".
  400     {"error": message, "fields": {field: [messages]}} (fields may be empty: a cost refusal).
Cross-check (GET ``scenario_cross_check_json``, the same query): 200 {"figure", "summary",
  "table_html", "changes"}; 400 as above; 404 for a kind without a cross-check.
Preview (GET ``kind_preview``): 200 {"ready": true, "steps", "probs", "mean", "variance", "cycle",
  "cycle_mean", "period", "summary"}; 200 {"ready": false, "message"} while required inputs are
  missing (an untouched form shows no error); 400 {"errors": {field: [messages]}}.
"""

from __future__ import annotations

import time

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.http import Http404, HttpResponse, JsonResponse
from django.shortcuts import get_object_or_404, redirect, render
from django.template.loader import render_to_string
from django.urls import reverse
from django.utils import timezone
from django.views.decorators.http import require_GET, require_http_methods, require_POST

from planner import comparison, permissions, reading, services, version_diff
from planner.background import services as background
from planner.csv_writer import file_name, rows_csv, table_csv
from planner.forms import (
    ApiTokenForm,
    EditBaseForm,
    LinkForm,
    SaveAsNewForm,
    ShareChangeForm,
    ShareForm,
    scenario_initial,
    scenario_values,
)
from planner.json_text import json_response
from planner.kinds import all_kinds, get_kind
from planner.models import ApiToken, Scenario, ScenarioLink, ScenarioShare
from planner.permissions import EDIT, OWN, get_scenario_by_link, get_scenario_for


class InvalidChanges(ValueError):
    def __init__(self, form):
        self.fields = {name: list(errors) for name, errors in form.errors.items()}
        super().__init__("; ".join(f"{name}: {' '.join(errors)}" for name, errors in self.fields.items()))


def _changes(scenario: Scenario, data) -> dict:
    form = get_kind(scenario.kind).changes_form(data)
    if not form.is_valid():
        raise InvalidChanges(form)
    return form.changes()


def _results_context(result_reading: reading.Reading) -> dict:
    charts = result_reading.kind.figures(result_reading.result)
    figures = {name: chart["figure"] for name, chart in charts.items()}
    return {"result": result_reading.result, "reading": result_reading, "charts": charts, "figures": figures}


@login_required
@require_GET
def scenario_list(request):
    scenarios = Scenario.objects.filter(owner=request.user)
    shared = permissions.shared_with(request.user)
    return render(request, "planner/scenario_list.html", {"scenarios": scenarios, "shared": shared})


@login_required
@require_GET
def scenario_new(request):
    kinds = all_kinds()
    if len(kinds) == 1:
        return redirect("scenario_new_kind", kind=kinds[0].key)
    return render(request, "planner/scenario_new.html", {"kinds": kinds})


@login_required
@require_http_methods(["GET", "POST"])
def scenario_new_kind(request, kind: str):
    kind = get_kind(kind)
    form = kind.scenario_form(request.POST or None)
    if form.is_valid():
        try:
            scenario = services.scenario_create(owner=request.user, kind=kind.key, **scenario_values(form))
        except ValueError as exc:  # the plan cannot be computed (ComputeTooLarge or an engine limit)
            form.add_error(None, f"Nothing was saved. {exc}")
        else:
            messages.success(request, f"Saved “{scenario.title}”.")
            return redirect(scenario)
    return render(request, "planner/scenario_form.html", {"form": form, "kind": kind})


@login_required
@require_http_methods(["GET", "POST"])
def scenario_edit(request, pk: int):
    if request.method == "POST":
        return _scenario_edit_save(request, pk)
    scenario = get_scenario_for(request.user, pk, EDIT)
    kind = get_kind(scenario.kind)
    form = kind.scenario_form(initial=scenario_initial(scenario, kind))
    return _edit_page(request, form, kind, scenario, based_on=scenario.version)


def _edit_page(request, form, kind, scenario, *, based_on, status=200, **extra):
    context = {"form": form, "kind": kind, "scenario": scenario, "based_on": based_on} | extra
    return render(request, "planner/scenario_form.html", context, status=status)


def _scenario_edit_save(request, pk: int):
    """Save an edit started from the version the form names; a conflict or a deleted plan keeps the values."""
    base = EditBaseForm(request.POST)
    try:
        scenario = get_scenario_for(request.user, pk, EDIT)
    except Http404:
        return _edit_of_missing_plan(request, base)
    kind = get_kind(scenario.kind)
    form = kind.scenario_form(request.POST)
    based_on = base.cleaned_data["version"] if base.is_valid() else None
    if not form.is_valid():
        return _edit_page(request, form, kind, scenario, based_on=based_on)
    try:
        if based_on is None:  # a form from before versions were kept: treat it as stale
            raise services.EditConflict(current=scenario, based_on=None)
        services.scenario_update(scenario=scenario, editor=request.user, based_on=based_on, **scenario_values(form))
    except services.EditConflict as exc:
        return _edit_conflict(request, form, kind, exc.current, based_on)
    except services.PlanGone:
        return _edit_of_missing_plan(request, base)
    except ValueError as exc:  # the plan cannot be computed (ComputeTooLarge or an engine limit)
        form.add_error(None, f"Nothing was saved. {exc}")
        return _edit_page(request, form, kind, scenario, based_on=based_on)
    messages.success(request, f"Updated “{scenario.title}”.")
    return redirect(scenario)


def _edit_conflict(request, form, kind, current, based_on):
    """409: what was saved since the edit began, beside the refused values, which stay in the form."""
    versions = {v.number: v for v in current.versions.select_related("saved_by").filter(number__in=[based_on or 0])}
    latest = current.versions.select_related("saved_by").first()
    base = version_diff.snapshot(versions[based_on]) if based_on in versions else None
    rows = version_diff.conflict(kind, base=base, current=version_diff.snapshot(current), form=form)
    conflict = {"rows": rows, "base": based_on, "latest": latest}
    return _edit_page(request, form, kind, current, based_on=current.version, status=409, conflict=conflict)


def _edit_of_missing_plan(request, base):
    """404, as for any plan out of reach, but with the values sent kept in a form that saves them as a new plan."""
    if not base.is_valid():
        raise Http404("No such scenario")
    kind = get_kind(base.cleaned_data["kind"])
    form = kind.scenario_form(request.POST)
    context = {"form": form, "kind": kind, "gone": True}
    return render(request, "planner/scenario_form.html", context, status=404)


@login_required
@require_http_methods(["GET", "POST"])
def scenario_delete(request, pk: int):
    scenario = get_scenario_for(request.user, pk, OWN)
    if request.method == "POST":
        services.scenario_delete(scenario=scenario)
        messages.success(request, f"Deleted “{scenario.title}”.")
        return redirect("scenario_list")
    return render(request, "planner/scenario_confirm_delete.html", {"scenario": scenario})


@login_required
@require_GET
def scenario_results(request, pk: int):
    scenario = get_scenario_for(request.user, pk)
    kind = get_kind(scenario.kind)
    context = {"scenario": scenario, "kind": kind, "save_form": SaveAsNewForm()}
    try:
        context["params"] = scenario.params
        context |= _saved_context(scenario)
    except ValueError as exc:
        context["error"] = str(exc)
    return render(request, "planner/scenario_results.html", context)


def _saved_context(scenario: Scenario) -> dict:
    """The saved plan's figures, worked out now or by a background worker (then ``work`` and, while the
    worker is on it, its ``progress`` instead of the figures)."""
    found, work = background.saved_reading(scenario=scenario)
    context = {} if work is None else {"work": work, "progress": background.work_progress_view(work)}
    return context | (_results_context(found) if found is not None else {})


@login_required
@require_GET
def scenario_outlook_json(request, pk: int):
    """Figures and headline for the what-if values in the query string (contract at the top); 400 if unfit."""
    scenario = get_scenario_for(request.user, pk)
    began = time.perf_counter()
    try:
        result_reading = reading.scenario_reading(scenario=scenario, changes=_changes(scenario, request.GET))
    except ValueError as exc:
        return JsonResponse({"error": str(exc), "fields": getattr(exc, "fields", {})}, status=400)
    context = _results_context(result_reading) | {"scenario": scenario}
    charts = context["charts"]
    data = {
        "figures": context["figures"],
        "summaries": {name: {"summary": c["summary"], "table": c["table"]} for name, c in charts.items()},
        "headline_html": render_to_string(result_reading.kind.headline_template, context, request),
        "params": result_reading.params.to_json(),
        "changes": list(result_reading.changes),
    }
    response = json_response(data)
    response["Server-Timing"] = f"compute;dur={1000 * (time.perf_counter() - began):.1f}"
    return response


@login_required
@require_POST
def scenario_variant_save(request, pk: int):
    """Keep the current what-if values as a new scenario under the name given."""
    scenario = get_scenario_for(request.user, pk)
    name = SaveAsNewForm(request.POST)
    try:
        if not name.is_valid():
            raise ValueError(" ".join(name.errors["title"]))
        params = reading.scenario_params(scenario=scenario, changes=_changes(scenario, request.POST))
        variant = services.scenario_copy(
            scenario=scenario, owner=request.user, title=name.cleaned_data["title"], params=params
        )
    except ValueError as exc:
        messages.error(request, f"Could not save the new plan: {exc}")
        return redirect(scenario)
    messages.success(request, f"Saved the what-if as “{variant.title}”.")
    return redirect(variant)


@login_required
@require_GET
def scenario_cross_check_json(request, pk: int):
    """The cross-check panel for the what-if values in the query (the saved plan when none differ)."""
    scenario = get_scenario_for(request.user, pk)
    began = time.perf_counter()
    try:
        found = reading.scenario_cross_check(scenario=scenario, changes=_changes(scenario, request.GET))
    except ValueError as exc:
        return JsonResponse({"error": str(exc), "fields": getattr(exc, "fields", {})}, status=400)
    chart = found.kind.check_figure(found.result)
    context = {"scenario": scenario, "reading": found, "check": found.result}
    data = {
        "figure": chart["figure"],
        "summary": chart["summary"],
        "table_html": render_to_string(found.kind.check_template, context, request),
        "changes": list(found.changes),
    }
    response = json_response(data)
    response["Server-Timing"] = f"compute;dur={1000 * (time.perf_counter() - began):.1f}"
    return response


@login_required
@require_GET
def scenario_csv(request, pk: int, table: str):
    scenario = get_scenario_for(request.user, pk)
    kind = get_kind(scenario.kind)
    if table not in kind.tables and table not in kind.check_tables:
        raise Http404("No such table")
    try:
        changes = _changes(scenario, request.GET)
        if table in kind.check_tables:
            found = reading.scenario_cross_check(scenario=scenario, changes=changes)
            rows = kind.check_rows(found.result, table)
        elif changes:
            found = reading.scenario_reading(scenario=scenario, changes=changes)
            rows = kind.table_rows(found.result, table)
        else:
            found = _saved_reading_now(scenario)
            rows = kind.table_rows(found.result, table)
    except ValueError as exc:
        return HttpResponse(str(exc), status=400, content_type="text/plain; charset=utf-8")
    body = table_csv(rows, title=scenario.title, changes=found.changes)
    response = HttpResponse(body, content_type="text/csv; charset=utf-8")
    response["Content-Disposition"] = (
        f'attachment; filename="{file_name(scenario.title, table, whatif=found.is_whatif)}"'
    )
    return response


class StillWorking(ValueError):
    """The saved plan is still being worked out in the background: its tables are not there yet."""


def _saved_reading_now(scenario: Scenario) -> reading.Reading:
    """The saved plan's reading, from a page or a background worker; StillWorking while a worker is on it."""
    found, work = background.saved_reading(scenario=scenario)
    if found is None:
        raise StillWorking(
            f"This plan is too large for one request and is being worked out in the background "
            f"({work.get_status_display().lower()}); {work.message or 'its tables are ready when its results page is.'}"
        )
    return found


def _sharing_page(request, scenario, *, form=None, link_form=None, new_link=None, status=200):
    context = {
        "scenario": scenario,
        "form": form or ShareForm(owner=scenario.owner),
        "link_form": link_form or LinkForm(),
        "shares": scenario.shares.select_related("user", "group"),
        "links": scenario.links.all(),
        "now": timezone.now(),
        "new_link": new_link,
    }
    return render(request, "planner/scenario_sharing.html", context, status=status)


@login_required
@require_http_methods(["GET", "POST"])
def scenario_sharing(request, pk: int):
    """The owner's page of who else may see or edit the plan, and its read-only links; POST adds a share."""
    scenario = get_scenario_for(request.user, pk, OWN)
    form = ShareForm(request.POST or None, owner=scenario.owner)
    if not form.is_valid():
        return _sharing_page(request, scenario, form=form, status=400 if form.errors else 200)
    data = form.cleaned_data
    share = services.share_set(scenario=scenario, user=data["user"], group=data["group_found"], role=data["role"])
    messages.success(
        request, f"“{scenario.title}” is shared with {share.user or share.group}: {share.get_role_display()}."
    )
    return redirect("scenario_sharing", pk=scenario.pk)


@login_required
@require_POST
def scenario_share_change(request, pk: int, share_id: int):
    """The owner changes a share's role or removes it."""
    scenario = get_scenario_for(request.user, pk, OWN)
    share = get_object_or_404(ScenarioShare.objects.select_related("user", "group"), pk=share_id, scenario=scenario)
    form = ShareChangeForm(request.POST)
    who = share.user or share.group
    if not form.is_valid():
        messages.error(request, "Choose “can view”, “can edit” or remove.")
    elif form.cleaned_data["role"] == "remove":
        services.share_remove(share=share)
        messages.success(request, f"{who} no longer has access to “{scenario.title}”.")
    else:
        share = services.share_set(
            scenario=scenario, user=share.user, group=share.group, role=form.cleaned_data["role"]
        )
        messages.success(request, f"{who} now {share.get_role_display()} “{scenario.title}”.")
    return redirect("scenario_sharing", pk=scenario.pk)


@login_required
@require_POST
def scenario_link_create(request, pk: int):
    """A new read-only link; its address is shown on this answer only (the token is not kept)."""
    scenario = get_scenario_for(request.user, pk, OWN)
    form = LinkForm(request.POST)
    if not form.is_valid():
        return _sharing_page(request, scenario, link_form=form, status=400)
    link, token = services.link_create(scenario=scenario, **form.cleaned_data)
    address = request.build_absolute_uri(reverse("link_results", args=[token]))
    return _sharing_page(request, scenario, new_link={"link": link, "address": address}, status=201)


@login_required
@require_POST
def scenario_link_revoke(request, pk: int, link_id: int):
    scenario = get_scenario_for(request.user, pk, OWN)
    link = get_object_or_404(ScenarioLink, pk=link_id, scenario=scenario)
    services.link_revoke(link=link)
    messages.success(request, f"The read-only link “{link.label or 'without a label'}” no longer opens the plan.")
    return redirect("scenario_sharing", pk=scenario.pk)


def _link_response(response):
    # The address is the key: keep it out of caches, search engines and Referer headers.
    response["Cache-Control"] = "no-store"
    response["X-Robots-Tag"] = "noindex, nofollow"
    response["Referrer-Policy"] = "no-referrer"
    return response


@require_GET
def link_results(request, token: str):
    """The plan a read-only link opens: figures, charts and CSV tables of the saved plan, no controls."""
    scenario = get_scenario_by_link(token)
    kind = get_kind(scenario.kind)
    context = {"scenario": scenario, "kind": kind, "token": token}
    try:
        context["params"] = scenario.params
        context |= _saved_context(scenario)
    except ValueError as exc:
        context["error"] = str(exc)
    return _link_response(render(request, "planner/link_results.html", context))


@require_GET
def link_csv(request, token: str, table: str):
    """A CSV table of the saved plan a read-only link opens (what-if values are not taken)."""
    scenario = get_scenario_by_link(token)
    kind = get_kind(scenario.kind)
    if table not in kind.tables:
        raise Http404("No such table")
    try:
        found = _saved_reading_now(scenario)
    except ValueError as exc:
        return _link_response(HttpResponse(str(exc), status=400, content_type="text/plain; charset=utf-8"))
    body = table_csv(kind.table_rows(found.result, table), title=scenario.title)
    response = HttpResponse(body, content_type="text/csv; charset=utf-8")
    response["Content-Disposition"] = f'attachment; filename="{file_name(scenario.title, table)}"'
    return _link_response(response)


HISTORY_SHOWN = 100  # versions listed on the history page, newest first


@login_required
@require_GET
def scenario_history(request, pk: int):
    """Every saved version of the plan: who, when, the headline risk and what each save changed."""
    scenario = get_scenario_for(request.user, pk)
    kind = get_kind(scenario.kind)
    # one more than shown, to tell what the oldest shown one changed
    versions = list(scenario.versions.select_related("saved_by")[: HISTORY_SHOWN + 1])
    entries = version_diff.changes_by_version(kind, versions)[:HISTORY_SHOWN]
    context = {"scenario": scenario, "kind": kind, "entries": entries, "more": scenario.version > HISTORY_SHOWN}
    return render(request, "planner/scenario_history.html", context)


@login_required
@require_GET
def scenario_version(request, pk: int, number: int):
    """One saved version: its values and what bringing it back would change."""
    scenario = get_scenario_for(request.user, pk)
    version = get_object_or_404(scenario.versions.select_related("saved_by"), number=number)
    kind = get_kind(scenario.kind)
    context = {
        "scenario": scenario,
        "version": version,
        "values": version_diff.form_texts(kind, version_diff.snapshot(version)).values(),
        "restoring": version_diff.differences(kind, version_diff.snapshot(scenario), version_diff.snapshot(version)),
    }
    return render(request, "planner/scenario_version.html", context)


@login_required
@require_POST
def scenario_version_restore(request, pk: int, number: int):
    """Bring an earlier version back as the plan's next version (editors and the owner)."""
    scenario = get_scenario_for(request.user, pk, EDIT)
    version = get_object_or_404(scenario.versions, number=number)
    base = EditBaseForm(request.POST)
    based_on = base.cleaned_data["version"] if base.is_valid() else 0
    try:
        services.scenario_restore(scenario=scenario, version=version, editor=request.user, based_on=based_on)
    except services.EditConflict as exc:
        messages.error(
            request,
            f"Nothing was restored: the plan was saved again (it is now version {exc.current.version}) after you "
            "opened this page. Check what restoring would change now, then restore again.",
        )
        return redirect("scenario_version", pk=scenario.pk, number=number)
    except services.PlanGone:
        raise Http404("No such scenario") from None
    except ValueError as exc:
        messages.error(request, f"Nothing was restored: version {number} cannot be worked out now. {exc}")
        return redirect("scenario_version", pk=scenario.pk, number=number)
    messages.success(request, f"Version {number} is back as version {scenario.version} of “{scenario.title}”.")
    return redirect("scenario_history", pk=scenario.pk)


COMPARISON_TABLES = {"key-figures": comparison.figures_csv_rows, "risk-curves": comparison.curves_csv_rows}


def _plans_to_compare(request) -> list[Scenario]:
    """The plans named by ``plan`` in the query, each one the user may see (404 otherwise); ValueError with
    the analyst's message when there are not 2 to 4 different ones."""
    chosen = list(dict.fromkeys(request.GET.getlist("plan")))
    if not all(pk.isdigit() for pk in chosen) or not comparison.MIN_PLANS <= len(chosen) <= comparison.MAX_PLANS:
        raise ValueError(
            f"Choose {comparison.MIN_PLANS} to {comparison.MAX_PLANS} plans to compare (tick them in the list); "
            f"{len(chosen)} {'was' if len(chosen) == 1 else 'were'} chosen."
        )
    return [get_scenario_for(request.user, int(pk)) for pk in chosen]


@login_required
@require_GET
def scenario_compare(request):
    """2 to 4 plans side by side: their risk curves on one chart and key figures in one table."""
    try:
        scenarios = _plans_to_compare(request)
    except ValueError as exc:
        return render(request, "planner/scenario_compare.html", {"error": str(exc)}, status=400)
    compared = comparison.compare(scenarios)
    context = {
        "compared": compared,
        "rows": comparison.figure_rows(compared),
        "figures": {"compare": comparison.figure(compared)},
        "query": request.GET.urlencode(),
    }
    return render(request, "planner/scenario_compare.html", context)


@login_required
@require_GET
def scenario_compare_csv(request, table: str):
    if table not in COMPARISON_TABLES:
        raise Http404("No such table")
    try:
        compared = comparison.compare(_plans_to_compare(request))
    except ValueError as exc:
        return HttpResponse(str(exc), status=400, content_type="text/plain; charset=utf-8")
    response = HttpResponse(rows_csv(COMPARISON_TABLES[table](compared)), content_type="text/csv; charset=utf-8")
    response["Content-Disposition"] = f'attachment; filename="comparison-{table}.csv"'
    return response


@login_required
@require_http_methods(["GET", "POST"])
def api_tokens(request):
    """The user's personal tokens for the JSON API; POST makes one, whose text is shown on this answer only."""
    form = ApiTokenForm(request.POST or None)
    new_token = None
    if form.is_valid():
        new_token = services.api_token_create(user=request.user, label=form.cleaned_data["label"])[1]
        form = ApiTokenForm()
    context = {"form": form, "tokens": request.user.api_tokens.all(), "new_token": new_token}
    return render(request, "planner/api_tokens.html", context, status=201 if new_token else 200)


@login_required
@require_POST
def api_token_revoke(request, token_id: int):
    api_token = get_object_or_404(ApiToken, pk=token_id, user=request.user)
    services.api_token_revoke(api_token=api_token)
    messages.success(request, f"The token “{api_token.label or 'without a label'}” no longer opens the API.")
    return redirect("api_tokens")


@login_required
@require_GET
def kind_preview(request, kind: str):
    """The live preview of the kind's form (contract at the top)."""
    kind = get_kind(kind)
    form = kind.preview_form(request.GET)
    if form is None:
        raise Http404("This kind has no preview")
    if not form.is_valid():
        errors = form.errors.as_data()
        if all(error.code == "required" for field in errors.values() for error in field):
            return JsonResponse({"ready": False, "message": kind.preview_waiting})
        return JsonResponse({"errors": {name: list(errs) for name, errs in form.errors.items()}}, status=400)
    try:
        return JsonResponse(reading.law_preview(kind=kind, form=form))
    except ValueError as exc:
        return JsonResponse({"errors": {"__all__": [str(exc)]}}, status=400)
