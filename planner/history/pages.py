"""What the history pages show, gathered for the templates: rows to preview, fit tables in words, defaults.

No maths here: every number comes from the engine through ``planner.history.fit``;
this module only picks, formats and labels them (with ``planner.formatting``).
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from dataclasses import dataclass
from urllib.parse import urlencode

import walkmath as wm
from planner import kinds
from planner.formatting import number, period_name
from planner.history import charts, tables
from planner.history.fit import (
    CHOICE_WORDS,
    CREDIBLE,
    FIT_REFUSED,
    MAX_DRAWS,
    MIN_DRAWS,
    SIDE_WORDS,
    HistoryFit,
    RangeInputs,
    RangeJob,
    fit_history,
    fitted_laws,
)
from planner.history.forms import RangeForm
from planner.history_file import History

# Rows shown at each end of a preview (the CSV download has them all).
PREVIEW_HEAD, PREVIEW_TAIL = 10, 5
# Default start stock: this many periods of mean demand; default horizon in periods.
COVER = {"day": 7, "week": 2}
HORIZON = {"day": 28, "week": 13}
ESTIMATE_WORDS = {"mean": "mean", "size": "clumping (size)", "variance": "variance"}


def preview_rows(history: History) -> dict:
    """The first and last rows as the table shows them ([date, values..., change], None between the ends)
    and how many rows are left out between them."""
    rows = [row[1:] for row in list(tables.history_rows(history))[1:]]
    if len(rows) <= PREVIEW_HEAD + PREVIEW_TAIL:
        return {"rows": rows, "hidden_rows": 0}
    shown = rows[:PREVIEW_HEAD] + [None] + rows[-PREVIEW_TAIL:]
    return {"rows": shown, "hidden_rows": len(rows) - PREVIEW_HEAD - PREVIEW_TAIL}


def range_initial(fit: HistoryFit) -> dict:
    """Start stock, capacity and horizon before the analyst gives any: the last level seen, or about a week
    (two weeks of weekly rows) of mean demand; no capacity; four weeks (thirteen weeks)."""
    history = fit.history
    if history.shape == "levels":
        start = max(int(history.levels[-1]), 0)
    else:
        start = math.ceil(float(history.demand.mean()) * COVER[history.period])
    return {"start": start, "horizon": HORIZON[history.period]}


@dataclass(frozen=True)
class EstimateRow:
    law: str
    quantity: str
    value: str
    interval: str
    method: str


def estimate_rows(side) -> list[EstimateRow]:
    """The Poisson and negative-binomial parameters with their intervals, in words."""
    rows = []
    for fit in side.count_fits:
        law = CHOICE_WORDS[fit.family]
        if fit.at_boundary:
            rows.append(EstimateRow(law, "clumping (size)", "none", "", "no more spread than a Poisson law"))
        for estimate in fit.estimates:
            if fit.at_boundary and estimate.name == "size":
                continue
            rows.append(
                EstimateRow(
                    law,
                    ESTIMATE_WORDS.get(estimate.name, estimate.name),
                    number(estimate.value),
                    _interval(estimate.low, estimate.high),
                    f"{100 * fit.confidence:g} % {estimate.method}",
                )
            )
    return rows


def _interval(low: float, high: float) -> str:
    if math.isnan(low) or math.isnan(high):
        return "—"
    return f"{number(low)} to {'no upper end' if math.isinf(high) else number(high)}"


def goodness_rows(side) -> list[dict]:
    rows = []
    for family, check in (side.recommendation.goodness or {}).items():
        p_value = "too few to test" if check.p_value is None else f"{check.p_value:.2g}"
        rows.append(
            {
                "law": CHOICE_WORDS[family],
                "statistic": number(check.statistic),
                "freedom": check.degrees_of_freedom,
                "cells": len(check.cells),
                "p_value": p_value,
                "chosen": side.choice == family,
            }
        )
    return rows


def posterior_words(side, period: str) -> str:
    """How sure the chosen law is, in words: the prior and what the history leaves uncertain."""
    posterior = side.posterior
    per = f"a {period_name(period)}"
    if isinstance(posterior, wm.RatePosterior):
        low, high = posterior.interval(CREDIBLE)
        return (
            f"{posterior.prior_text}. After the history the mean is {number(posterior.mean)} {per}, "
            f"{100 * CREDIBLE:g} % credible interval {number(low)} to {number(high)} (gamma, shape "
            f"{number(posterior.shape, 6)}, rate {number(posterior.rate, 6)} {period_name(period, 2)})."
        )
    if isinstance(posterior, wm.SpreadPosterior):
        return (
            f"{posterior.prior_text.capitalize()}. The mean ({number(math.exp(posterior.log_mean))} {per}) is known "
            f"to about ±{100 * posterior.log_mean_sd:.2g} % and the clumping (size "
            f"{number(math.exp(posterior.log_size))}) to about ±{100 * posterior.log_size_sd:.2g} % (one standard "
            "deviation)."
        )
    return (
        f"{posterior.prior_text}; each possible amount's chance is drawn around how often it was seen in "
        f"{side.recommendation.empirical.periods:,} {period_name(period, 2)}."
    )


def side_views(fit: HistoryFit, fit_charts: dict) -> list[dict]:
    period = fit.history.period
    return [
        {
            "what": side.what,
            "label": SIDE_WORDS[side.what],
            "choice": CHOICE_WORDS[side.choice],
            "reason": side.recommendation.reason,
            "estimates": estimate_rows(side),
            "goodness": goodness_rows(side),
            "posterior": posterior_words(side, period),
            "chart_name": f"freq-{side.what}",
            "chart_summary": fit_charts[f"freq-{side.what}"]["summary"],
        }
        for side in fit.sides
    ]


def plan_options(history, fit: HistoryFit, inputs: RangeInputs | None) -> list[dict]:
    """Every kind made from fits, each with the reason it cannot take this one ("" when it can); none
    before the inputs are valid. Builds parameters only (no law, no computation)."""
    if inputs is None:
        return []
    laws = fitted_laws(fit, source=history.title)
    return kinds.plan_options(laws, start=inputs.start, high=inputs.high, horizon=inputs.horizon)


def fit_context(history, fit: HistoryFit, form, *, cap: int) -> dict:
    """Everything the fit page shows; runs the priced range job when the form is valid."""
    fit_charts = charts.fit_charts(fit)
    context = {
        "history": history,
        "fit": fit,
        "form": form,
        "sides": side_views(fit, fit_charts),
        "charts": fit_charts,
        "cap": cap,
        "min_draws": MIN_DRAWS,
        "max_draws": MAX_DRAWS,
        "credible": CREDIBLE,
        "profile_supported": fit.profile is not None and fit.profile.supported,
    }
    inputs = None
    if form.is_valid():
        data = form.cleaned_data
        inputs = RangeInputs(data["start"], data["high"], data["horizon"])
        try:
            result = RangeJob(fit, inputs).run(cap)
        except ValueError as refusal:  # ComputeTooLarge included
            context["error"] = str(refusal)
        else:
            context["result"] = result
            context["risk_chart"] = charts.risk_chart(result, history.period)
            context["query"] = urlencode({key: value for key, value in data.items() if value is not None})
    context["plan_options"] = plan_options(history, fit, inputs)
    figures = {name: chart["figure"] for name, chart in fit_charts.items()}
    if "risk_chart" in context:
        figures["risk"] = context["risk_chart"]["figure"]
    context["figures"] = figures
    return context


class TableRefused(ValueError):
    """A CSV table cannot be made: the history cannot be fitted, or the range's query is out of range or too costly."""


def csv_rows(history, table: str, query, *, cap: int) -> Iterator[list]:
    """Rows of one of ``tables.TABLES``; TableRefused naming the input when the table cannot be given."""
    parsed = history.parsed()
    if table == "history":
        return tables.history_rows(parsed)
    try:
        fit = fit_history(parsed)
    except ValueError as refusal:
        raise TableRefused(f"{FIT_REFUSED} {refusal}.") from None
    if table == "laws":
        return tables.law_rows(fit)
    if table == "frequencies":
        return tables.frequency_rows(fit)
    form = RangeForm(query or range_initial(fit), period=history.period)
    if not form.is_valid():
        raise TableRefused("; ".join(f"{name}: {' '.join(errors)}" for name, errors in form.errors.items()))
    data = form.cleaned_data
    try:
        result = RangeJob(fit, RangeInputs(data["start"], data["high"], data["horizon"])).run(cap)
    except ValueError as refusal:
        raise TableRefused(str(refusal)) from None
    return tables.range_rows(result)
