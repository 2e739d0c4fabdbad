"""The endpoints of a plan's background work: its progress (polled by the results page), cancel and
start again. The results page itself (``planner.views.scenario_results``) shows the bar or the result."""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.http import JsonResponse
from django.shortcuts import redirect
from django.views.decorators.http import require_GET, require_POST

from planner.background import services, tasks
from planner.permissions import EDIT, get_scenario_for

NOT_IN_BACKGROUND = {
    "status": "none",
    "status_text": "Worked out by its page, not in the background",
    "open": False,
    "percent": 100.0,
    "rows": None,
    "seconds_left": None,
    "message": "",
}


@login_required
@require_GET
def plan_work_status(request, pk: int):
    """The progress as JSON for the results page's poll; work whose worker went silent is queued again."""
    work = services.work_for(get_scenario_for(request.user, pk))
    if work is None:
        return JsonResponse(NOT_IN_BACKGROUND)
    if work.open:
        tasks.watch(work)
        work.refresh_from_db()
    return JsonResponse(services.work_progress_view(work))


@login_required
@require_POST
def plan_work_cancel(request, pk: int):
    scenario = get_scenario_for(request.user, pk, EDIT)
    work = services.work_for(scenario)
    if work is not None and services.work_cancel(work=work, by=request.user):
        messages.success(request, "Cancelled: the plan is no longer being worked out.")
    return redirect(scenario)


@login_required
@require_POST
def plan_work_restart(request, pk: int):
    scenario = get_scenario_for(request.user, pk, EDIT)
    work = services.work_for(scenario)
    if work is not None and services.work_restart(work=work):
        messages.success(request, "Queued again: the page fills in when a worker has worked it out.")
    return redirect(scenario)
