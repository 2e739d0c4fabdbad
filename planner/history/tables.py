"""CSV tables of a history and its fit: a header row, then rows of plain machine numbers.

``planner.csv_writer.table_csv`` fills the first column with the history's
name (neutralised against spreadsheet formulas) and adds the shared columns.
"""

from __future__ import annotations

import math
from collections.abc import Iterator

from planner.csv_writer import number
from planner.history.fit import CHOICE_WORDS, CREDIBLE, SIDE_WORDS, HistoryFit, RangeResult
from planner.history_file import History
from walkmath.profile import WEEKDAYS

TABLES = {
    "history": "the history as read",
    "laws": "the fitted laws and their tests",
    "frequencies": "observed and fitted frequencies",
    "range": "the risk and its credible range",
}
FIT_TABLES = ("laws", "frequencies")


def _plain(value) -> str:
    """A number for the CSV; empty for None, 'inf' for an unbounded interval end."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return ""
    return number(value)


def history_rows(history: History) -> Iterator[list]:
    if history.shape == "levels":
        yield ["history", "date", "level", "change"]
        changes = [None, *history.changes().tolist()]
        for day, level, change in zip(history.dates, history.levels.tolist(), changes, strict=True):
            yield ["", str(day), level, "" if change is None else change]
        return
    yield ["history", "date", "in", "out", "change"]
    for day, units_in, units_out in zip(history.dates, history.arrivals.tolist(), history.demand.tolist(), strict=True):
        yield ["", str(day), units_in, units_out, units_in - units_out]


def law_rows(fit: HistoryFit) -> Iterator[list]:
    """Every fitted parameter with its interval, the chi-square tests and the weekday test."""
    yield [
        "history",
        "series",
        "law",
        "recommended",
        "quantity",
        "value",
        "standard error",
        "interval low",
        "interval high",
        "interval",
    ]
    for side in fit.sides:
        series = SIDE_WORDS[side.what]
        found = side.recommendation
        for count_fit in side.count_fits:
            family = count_fit.family
            mark = "yes" if found.choice == family else "no"
            for estimate in count_fit.estimates:
                yield [
                    "",
                    series,
                    CHOICE_WORDS[family],
                    mark,
                    estimate.name,
                    _plain(estimate.value),
                    _plain(estimate.standard_error),
                    _plain(estimate.low),
                    _plain(estimate.high),
                    f"{100 * count_fit.confidence:g} % {estimate.method}",
                ]
            yield ["", series, CHOICE_WORDS[family], mark, "log-likelihood", _plain(count_fit.loglik), "", "", "", ""]
            check = found.goodness[family]
            for name, value in (
                ("chi-square", check.statistic),
                ("degrees of freedom", check.degrees_of_freedom),
                ("chi-square p-value", check.p_value),
            ):
                yield ["", series, CHOICE_WORDS[family], mark, name, _plain(value), "", "", "", ""]
        empirical = found.empirical
        mark = "yes" if found.choice == "empirical" else "no"
        label = CHOICE_WORDS["empirical"]
        yield [
            "",
            series,
            label,
            mark,
            "mean",
            _plain(empirical.mean),
            _plain(empirical.mean_standard_error),
            "",
            "",
            f"smoothing {empirical.smoothing:g} a value",
        ]
        for step, chance in zip(empirical.law.steps.tolist(), empirical.law.probs.tolist(), strict=True):
            yield ["", series, label, mark, f"chance of {step}", _plain(chance), "", "", "", ""]
        if found.spread_p_value is not None:
            yield [
                "",
                series,
                "Poisson law against negative binomial",
                "",
                "likelihood-ratio p-value",
                _plain(found.spread_p_value),
                "",
                "",
                "",
                "",
            ]
    if fit.profile is not None:
        profile = fit.profile
        series = SIDE_WORDS["demand"]
        yield [
            "",
            series,
            "weekday pattern",
            "yes" if profile.supported else "no",
            "likelihood-ratio statistic",
            _plain(profile.statistic),
            "",
            "",
            "",
            f"{profile.degrees_of_freedom} degrees of freedom",
        ]
        yield [
            "",
            series,
            "weekday pattern",
            "yes" if profile.supported else "no",
            "p-value",
            _plain(profile.p_value),
            "",
            "",
            "",
            "",
        ]
        for day, mean in zip(WEEKDAYS, profile.means, strict=True):
            yield ["", series, "weekday pattern", "", f"mean on {day}", _plain(mean), "", "", "", ""]


def frequency_rows(fit: HistoryFit) -> Iterator[list]:
    """Periods seen with each amount and the number each fitted law expects (the chi-square's table)."""
    yield [
        "history",
        "series",
        "amount",
        "and above",
        "periods seen",
        "expected, Poisson",
        "expected, negative binomial",
        "expected, observed law",
    ]
    for side in fit.sides:
        series = SIDE_WORDS[side.what]
        goodness = side.recommendation.goodness
        empirical = side.recommendation.empirical
        smoothed = dict(
            zip(empirical.law.steps.tolist(), (empirical.law.probs * empirical.periods).tolist(), strict=True)
        )
        if not goodness:
            for step, seen in zip(empirical.steps.tolist(), empirical.observed.tolist(), strict=True):
                yield ["", series, step, "no", seen, "", "", _plain(smoothed[step])]
            continue
        tables = {family: check.table for family, check in goodness.items()}
        first = next(iter(tables.values()))
        for index, row in enumerate(first):
            expected = [
                _plain(tables[f][index].fitted) if f in tables else "" for f in ("poisson", "negative_binomial")
            ]
            yield [
                "",
                series,
                row.count,
                "yes" if row.and_above else "no",
                row.observed,
                *expected,
                _plain(smoothed.get(row.count, 0.0)),
            ]


def range_rows(result: RangeResult) -> Iterator[list]:
    """Period by period: the risk from the fitted laws and the credible range's edges, median and mean."""
    band = result.band
    share = f"{100 * CREDIBLE:g} %"
    yield [
        "history",
        "period",
        "stock-out, fitted laws",
        f"stock-out, {share} low",
        "stock-out, median",
        f"stock-out, {share} high",
        "stock-out, mean over draws",
        "overflow, fitted laws",
        f"overflow, {share} low",
        "overflow, median",
        f"overflow, {share} high",
        "overflow, mean over draws",
        "start stock",
        "capacity",
        "draws",
        "seed",
    ]
    inputs = result.inputs
    bounded = inputs.high is not None
    for n in range(inputs.horizon + 1):
        stockout = [_plain(result.outlook.stockout[n])]
        overflow = [_plain(result.outlook.overflow[n]) if bounded else ""]
        if band is not None:
            stockout += [
                _plain(a[n]) for a in (band.stockout_low, band.stockout_median, band.stockout_high, band.stockout_mean)
            ]
            overflow += [
                _plain(a[n]) if bounded else ""
                for a in (band.overflow_low, band.overflow_median, band.overflow_high, band.overflow_mean)
            ]
        else:
            stockout += [""] * 4
            overflow += [""] * 4
        yield [
            "",
            n,
            *stockout,
            *overflow,
            inputs.start,
            "" if not bounded else inputs.high,
            band.draws if band else 0,
            band.seed if band else "",
        ]
