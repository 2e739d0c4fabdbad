"""Portfolio views: a permission-checked fetch, a form, one service call, then a response."""

from __future__ import annotations

from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.http import HttpResponse, JsonResponse
from django.shortcuts import redirect, render
from django.views.decorators.csrf import csrf_exempt, csrf_protect
from django.views.decorators.http import require_GET, require_http_methods, require_POST

from planner.csv_writer import file_name, rows_csv
from planner.portfolio import charts, services, tables, tasks, upload
from planner.portfolio.forms import ShareForm, UploadForm
from planner.portfolio.items_file import COLUMNS, MAX_BYTES, ItemsFileError
from planner.portfolio.models import OPEN_STATUSES, RunStatus
from planner.portfolio.permissions import OWN, get_run_for, runs_visible_to

NEW = "portfolio/new.html"


@login_required
@require_GET
def portfolio_list(request):
    runs = runs_visible_to(request.user).select_related("owner")
    return render(request, "portfolio/list.html", {"runs": runs})


@csrf_exempt  # the body is not read before the size check; _portfolio_upload checks the CSRF token
@login_required
@require_http_methods(["GET", "POST"])
def portfolio_new(request):
    refusal = upload.too_large(request) if request.method == "POST" else None
    if refusal:
        context = {"form": UploadForm(), "refusal": refusal, "max_bytes": MAX_BYTES, "columns": COLUMNS}
        return render(request, NEW, context, status=413)
    return _portfolio_upload(request)


@csrf_protect
def _portfolio_upload(request):
    form = UploadForm(request.POST or None, request.FILES or None)
    if request.method == "POST" and form.is_valid():
        try:
            parsed = upload.read_upload(form.cleaned_data["file"])
        except ItemsFileError as error:
            form.add_error("file", str(error))
        else:
            run = services.run_create(
                owner=request.user, title=form.cleaned_data["title"], parsed=parsed,
                file_name=form.cleaned_data["file"].name,
            )  # fmt: skip
            return redirect(run)
    return render(request, NEW, {"form": form, "max_bytes": MAX_BYTES, "columns": COLUMNS})


@login_required
@require_GET
def portfolio_detail(request, pk: int):
    run = get_run_for(request.user, pk)
    table = tables.ResultsFilter(request.GET or None)
    rows = tables.page(table.rows(run), request.GET.get("page"))
    for item in rows:
        item.cells = tables.page_cells(item)
    chart = charts.risk_chart(run) if run.status != RunStatus.READY else None
    context = {
        "run": run,
        "progress": services.run_progress(run),
        "table": table,
        "rows": rows,
        "query": _query_without_page(request),
        "bad": run.items.exclude(refusal="").order_by("row")[:200] if run.status == RunStatus.READY else (),
        "chart": chart,
        "figures": {"risk": chart["figure"]} if chart else {},
        "share_form": ShareForm() if run.access.is_owner else None,
    }
    return render(request, "portfolio/detail.html", context)


def _query_without_page(request) -> str:
    query = request.GET.copy()
    query.pop("page", None)
    return query.urlencode()


@login_required
@require_GET
def portfolio_status(request, pk: int):
    """The progress as JSON, for the page's poll; chunks whose worker went silent are handed out again."""
    run = get_run_for(request.user, pk)
    if run.status in OPEN_STATUSES:
        tasks.requeue_stale(run)
        run.refresh_from_db()
    return JsonResponse(services.run_progress(run))


@login_required
@require_POST
def portfolio_start(request, pk: int):
    run = services.run_start(run=get_run_for(request.user, pk, OWN))
    messages.success(request, f"Started “{run.title}”: {run.queued:,} items handed to the workers.")
    return redirect(run)


@login_required
@require_POST
def portfolio_cancel(request, pk: int):
    run = services.run_cancel(run=get_run_for(request.user, pk, OWN))
    messages.success(request, f"Cancelled “{run.title}”; the rows worked out so far are kept.")
    return redirect(run)


@login_required
@require_POST
def portfolio_share(request, pk: int):
    run = get_run_for(request.user, pk, OWN)
    form = ShareForm(request.POST)
    if form.is_valid():
        services.run_share(run=run, user=form.cleaned_data["username"])
        messages.success(request, f"{form.cleaned_data['username'].username} may now see this run.")
    else:
        messages.error(request, "Not shared: " + " ".join(form.errors.get("username", [])))
    return redirect(run)


@login_required
@require_GET
def portfolio_csv(request, pk: int):
    run = get_run_for(request.user, pk)
    table = tables.ResultsFilter(request.GET or None)
    response = HttpResponse(rows_csv(tables.csv_rows(table.rows(run))), content_type="text/csv; charset=utf-8")
    response["Content-Disposition"] = f'attachment; filename="{file_name(run.title, "results")}"'
    return response


@login_required
@require_http_methods(["GET", "POST"])
def portfolio_delete(request, pk: int):
    run = get_run_for(request.user, pk, OWN)
    if request.method == "POST":
        services.run_delete(run=run)
        messages.success(request, f"Deleted the run “{run.title}”.")
        return redirect("portfolio_list")
    return render(request, "portfolio/confirm_delete.html", {"run": run})
