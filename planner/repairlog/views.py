"""Repair-log views: a permission-checked fetch, a form, one call into the fit or a service, then a response."""

from __future__ import annotations

from django.conf import settings
from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.http import Http404, HttpResponse
from django.shortcuts import redirect, render
from django.urls import reverse
from django.views.decorators.csrf import csrf_exempt, csrf_protect
from django.views.decorators.http import require_GET, require_http_methods, require_POST

from planner.csv_writer import file_name, rows_csv
from planner.history import upload
from planner.history_file import MAX_BYTES
from planner.repairlog import services, tables
from planner.repairlog.fit import MISSION, AvailabilityJob, fit_log
from planner.repairlog.forms import LogUploadForm, MissionForm
from planner.repairlog.pages import log_context, log_rows
from planner.repairlog.permissions import get_repairlog_for
from planner.repairlog_file import RepairLogError, read_repair_log

NEW = "planner/repairlog/new.html"
FRAME = ("time_unit", "units", "spares", "record_start", "record_end")


@csrf_exempt  # the body is not read before the size check below; _repairlog_upload checks the CSRF token
@login_required
@require_http_methods(["GET", "POST"])
def repairlog_new(request):
    refusal = upload.too_large(request, "a repair log") if request.method == "POST" else None
    if refusal:
        return render(request, NEW, {"form": LogUploadForm(), "refusal": refusal, "max_bytes": MAX_BYTES}, status=413)
    return _repairlog_upload(request)


@csrf_protect
def _repairlog_upload(request):
    """Read the log with the form's frame; save it only when every row reads, then show its fit."""
    form = LogUploadForm(request.POST or None, request.FILES or None)
    if request.method == "POST" and form.is_valid():
        data = form.cleaned_data
        try:
            log = read_repair_log(data["file"], name=data["file"].name, **{key: data[key] for key in FRAME})
        except RepairLogError as error:
            form.add_error(error.field or "file", str(error))
        else:
            saved = services.repairlog_create(
                owner=request.user, title=data["title"], notes=data["notes"], log=log, file_name=data["file"].name
            )
            messages.success(request, f"Saved the repair log “{saved.title}” ({log.failures} failures).")
            return redirect(saved)
    return render(request, NEW, {"form": form, "max_bytes": MAX_BYTES})


@login_required
@require_GET
def repairlog_detail(request, pk: int):
    """The rows, the fitted rates and the pool's availability; the mission in the query for a plan."""
    saved = get_repairlog_for(request.user, pk)
    log = saved.parsed()
    form = MissionForm(request.GET or {"mission": MISSION[log.time_unit]}, time_unit=log.time_unit)
    try:
        fit = fit_log(log)
    except ValueError as refusal:
        context = {"saved": saved, "log": log, "fit_error": str(refusal), **log_rows(log)}
        return render(request, "planner/repairlog/detail.html", context)
    context = log_context(saved, log, fit, form, cap=settings.PLANNER_COMPUTE_CAP)
    return render(request, "planner/repairlog/detail.html", context)


@login_required
@require_POST
def repairlog_plan_create(request, pk: int, kind: str):
    """Make a ``kind`` plan (a spares pool) from the log's fit with the posted mission, then show it."""
    saved = get_repairlog_for(request.user, pk)
    form = MissionForm(request.POST, time_unit=saved.time_unit)
    back = reverse("repairlog_detail", args=[saved.pk])
    if not form.is_valid():
        messages.error(request, "No plan was made: " + " ".join(e for errors in form.errors.values() for e in errors))
        return redirect(back)
    try:
        scenario = services.scenario_create_from_log(
            owner=request.user, saved=saved, kind_key=kind, mission=form.cleaned_data["mission"]
        )
    except ValueError as refusal:  # ComputeTooLarge included: nothing was written
        messages.error(request, f"No plan was made. {refusal}")
        return redirect(back)
    messages.success(request, f"Made the plan “{scenario.title}” from the repair log.")
    return redirect(scenario)


@login_required
@require_http_methods(["GET", "POST"])
def repairlog_delete(request, pk: int):
    saved = get_repairlog_for(request.user, pk)
    if request.method == "POST":
        services.repairlog_delete(saved=saved)
        messages.success(request, f"Deleted the repair log “{saved.title}”.")
        return redirect("history_list")
    return render(request, "planner/repairlog/confirm_delete.html", {"saved": saved})


@login_required
@require_GET
def repairlog_csv(request, pk: int, table: str):
    """One of ``tables.TABLES`` as CSV; 400 with the reason when the log cannot be fitted."""
    saved = get_repairlog_for(request.user, pk)
    if table not in tables.TABLES:
        raise Http404("No such table")
    log = saved.parsed()
    if table == "rows":
        rows = tables.log_rows(saved.title, log)
    else:
        try:
            fit = fit_log(log)
        except ValueError as refusal:
            return HttpResponse(f"This record cannot be fitted: {refusal}.", status=400, content_type="text/plain")
        if table == "rates":
            rows = tables.rate_rows(saved.title, fit, log.time_unit)
        else:
            result = AvailabilityJob(fit).run(settings.PLANNER_COMPUTE_CAP)
            rows = tables.availability_rows(saved.title, result, log.time_unit)
    response = HttpResponse(rows_csv(rows), content_type="text/csv; charset=utf-8")
    response["Content-Disposition"] = f'attachment; filename="{file_name(saved.title, table)}"'
    return response
