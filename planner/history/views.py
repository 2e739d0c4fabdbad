"""History views: a permission-checked fetch, a form, one call into the fit or a service, then a response."""

from __future__ import annotations

import time
from urllib.parse import urlencode

from django.conf import settings
from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.http import Http404, HttpResponse
from django.shortcuts import redirect, render
from django.urls import reverse
from django.views.decorators.csrf import csrf_exempt, csrf_protect
from django.views.decorators.http import require_GET, require_http_methods, require_POST

from planner.csv_writer import file_name, table_csv
from planner.history import charts, services, tables, upload
from planner.history.fit import FIT_REFUSED, RangeInputs, fit_history
from planner.history.forms import PlanFromFitForm, RangeForm, SaveForm, UploadForm
from planner.history.models import SavedHistory
from planner.history.pages import TableRefused, csv_rows, fit_context, preview_rows, range_initial
from planner.history.permissions import get_history_for
from planner.history_file import MAX_BYTES, HistoryFileError

NEW = "planner/history/new.html"
PREVIEW = "planner/history/preview.html"


@login_required
@require_GET
def history_list(request):
    histories = SavedHistory.objects.filter(owner=request.user).defer("series")
    repair_logs = request.user.repair_logs.defer("rows")  # repair logs (planner.repairlog) are listed here too
    return render(request, "planner/history/list.html", {"histories": histories, "repair_logs": repair_logs})


@csrf_exempt  # the body is not read before the size check below; _history_upload checks the CSRF token
@login_required
@require_http_methods(["GET", "POST"])
def history_new(request):
    refusal = upload.too_large(request) if request.method == "POST" else None
    if refusal:
        return render(request, NEW, _refused(refusal), status=413)
    return _history_upload(request)


@csrf_protect
def _history_upload(request):
    form = UploadForm(request.POST or None, request.FILES or None)
    if request.method == "POST" and form.is_valid():
        data = form.cleaned_data
        try:
            parsed = upload.read_upload(data["file"], period=data["period"])
        except HistoryFileError as error:
            form.add_error("file", str(error))
        else:
            initial = {key: data[key] for key in ("title", "notes", "period")}
            save = SaveForm(initial=initial | {"data": upload.canonical_csv(parsed), "file_name": data["file"].name})
            return render(request, PREVIEW, _preview(parsed, save))
    return render(request, NEW, {"form": form, "max_bytes": MAX_BYTES})


def _refused(refusal: str) -> dict:
    return {"form": UploadForm(), "refusal": refusal, "max_bytes": MAX_BYTES}


def _preview(parsed, save: SaveForm) -> dict:
    chart = charts.series_chart(parsed)
    return {
        "save_form": save,
        "parsed": parsed,
        **preview_rows(parsed),
        "chart": chart,
        "figures": {"series": chart["figure"]},
    }


@login_required
@require_POST
def history_save(request):
    """Save what the preview showed: the history written back by the reader, read again with its checks."""
    save = SaveForm(request.POST)
    if not save.is_valid() and "data" in save.errors:
        return render(request, NEW, _refused("Nothing was saved: upload the file again."))
    try:
        parsed = upload.read_canonical(save.data.get("data", ""), period=save.data.get("period", ""))
    except HistoryFileError as error:
        return render(request, NEW, _refused(f"Nothing was saved. {error}"))
    if not save.is_valid():
        return render(request, PREVIEW, _preview(parsed, save))
    data = save.cleaned_data
    history = services.history_create(
        owner=request.user, title=data["title"], notes=data["notes"], parsed=parsed, file_name=data["file_name"]
    )
    messages.success(request, f"Saved the history “{history.title}”.")
    return redirect(history)


@login_required
@require_GET
def history_detail(request, pk: int):
    history = get_history_for(request.user, pk)
    parsed = history.parsed()
    chart = charts.series_chart(parsed)
    context = {
        "history": history,
        "parsed": parsed,
        **preview_rows(parsed),
        "chart": chart,
        "figures": {"series": chart["figure"]},
        "tables": tables.TABLES,
    }
    return render(request, "planner/history/detail.html", context)


@login_required
@require_GET
def history_fit(request, pk: int):
    """The fit, and the risk with its credible range for the start, capacity and horizon in the query."""
    history = get_history_for(request.user, pk)
    began = time.perf_counter()
    try:
        fit = fit_history(history.parsed())
    except ValueError as refusal:  # counts or changes too large for the engine's laws
        context = {"history": history, "fit_error": f"{FIT_REFUSED} {refusal}."}
        return render(request, "planner/history/fit.html", context)
    form = RangeForm(request.GET or range_initial(fit), period=history.period)
    context = fit_context(history, fit, form, cap=settings.PLANNER_COMPUTE_CAP)
    response = render(request, "planner/history/fit.html", context)
    response["Server-Timing"] = f"compute;dur={1000 * (time.perf_counter() - began):.1f}"
    return response


@login_required
@require_POST
def history_plan_create(request, pk: int, kind: str):
    """Make a ``kind`` plan from the fit with the posted inputs, then show it."""
    history = get_history_for(request.user, pk)
    form = PlanFromFitForm(request.POST, period=history.period)
    back = reverse("history_fit", args=[history.pk])
    if not form.is_valid():
        messages.error(request, "No plan was made: " + " ".join(e for errors in form.errors.values() for e in errors))
        return redirect(back)
    data = form.cleaned_data
    inputs = RangeInputs(data["start"], data["high"], data["horizon"])
    try:
        scenario = services.scenario_create_from_fit(
            owner=request.user, history=history, kind_key=kind, inputs=inputs, weekday_pattern=data["weekday_pattern"]
        )
    except ValueError as refusal:  # ComputeTooLarge included: nothing was written
        messages.error(request, f"No plan was made. {refusal}")
        query = {"start": inputs.start, "horizon": inputs.horizon} | ({"high": inputs.high} if inputs.high else {})
        return redirect(f"{back}?{urlencode(query)}")
    messages.success(request, f"Made the plan “{scenario.title}” from the fit.")
    return redirect(scenario)


@login_required
@require_GET
def history_csv(request, pk: int, table: str):
    history = get_history_for(request.user, pk)
    if table not in tables.TABLES:
        raise Http404("No such table")
    try:
        rows = csv_rows(history, table, request.GET, cap=settings.PLANNER_COMPUTE_CAP)
    except TableRefused as refusal:
        return HttpResponse(str(refusal), status=400, content_type="text/plain; charset=utf-8")
    response = HttpResponse(table_csv(rows, title=history.title), content_type="text/csv; charset=utf-8")
    response["Content-Disposition"] = f'attachment; filename="{file_name(history.title, table)}"'
    return response


@login_required
@require_http_methods(["GET", "POST"])
def history_delete(request, pk: int):
    history = get_history_for(request.user, pk)
    if request.method == "POST":
        services.history_delete(history=history)
        messages.success(request, f"Deleted the history “{history.title}”.")
        return redirect("history_list")
    return render(request, "planner/history/confirm_delete.html", {"history": history})
