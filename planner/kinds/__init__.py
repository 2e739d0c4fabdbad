"""Scenario kinds: each lives in one package under ``planner/kinds/`` and registers itself here.

Shared code (models, services, the read service, views) finds a kind through
``get_kind``; it never imports a kind, and a kind never imports another kind.
``discover()`` runs once from the app config and imports every package here,
so each kind's ``register(...)`` line runs.
"""

from __future__ import annotations

import importlib
import pkgutil
from collections.abc import Callable, Iterator, Mapping
from dataclasses import dataclass
from typing import Any

from django.http import Http404

_KINDS: dict[str, Kind] = {}


@dataclass(frozen=True)
class Part:
    """One engine call a page makes, priced before any of it runs.

    ``required`` parts make the page; optional ones (a mean time) are left out,
    with a note, when the request's budget cannot cover them. A search that
    ``stops_itself`` (the engine's capacity search takes a ``cap``) runs within
    whatever budget is left, and ``units`` is only its bound.
    """

    name: str
    units: int
    required: bool = True
    stops_itself: bool = False


class Job:
    """What every kind's job shares (``Kind.prepare`` makes one): a background worker listens for parts done.

    A job calls ``part_done(name)`` after each priced part it ran (a name from its ``parts()``); the
    worker (``planner.background``) then records the progress and may stop the job by raising from
    ``on_part_done``. ``headline_of(result)`` is the headline stored with the plan, read off a finished
    result where the kind can (the default works it out again with ``headline()``).
    """

    on_part_done: Callable[[str], None] | None = None

    def part_done(self, name: str) -> None:
        if self.on_part_done is not None:
            self.on_part_done(name)

    def headline_of(self, result) -> tuple[float, str]:
        return self.headline()


@dataclass(frozen=True)
class Comparable:
    """What the comparison page shows of one plan: one risk curve over its periods and its key figures.

    ``figures`` are (label, text as the page shows it, machine value for the CSV or None). Plans are
    compared figure by figure under the same label.
    """

    curve: str  # what the curve is, e.g. "chance of at least one stock-out by each day"
    period: str  # the plan's period (its x values count them)
    x: list[int]
    y: list[float]
    figures: list[tuple[str, str, float | None]]


class Kind:
    """What a scenario kind provides to the shared plumbing; subclass it in the kind's package.

    Parameters are a plain frozen object with ``to_json``; results are whatever
    the kind's charts, tables and templates read. A kind answers most calls with its own
    package's functions and classes named as class attributes (``prepare = staticmethod(Job)``),
    and writes methods only where it adds something.
    """

    key: str = ""  # the ScenarioKind value stored on the model
    label: str = ""
    form_template: str = ""  # fields of the create/edit form
    headline_template: str = ""  # the figures above the charts (also sent with each what-if)
    whatif_template: str = ""  # the what-if inputs
    caution_template: str = "planner/_cautions.html"  # the cautions above the results
    preview_waiting: str = "Fill in the inputs to see the preview here."  # the preview's hint while inputs are missing
    tables: Mapping[str, str] = {}  # CSV slug -> what the table holds
    table_builders: Mapping[str, Callable] = {}  # CSV slug -> function(result): header row then data rows
    check_template: str = ""  # the cross-check panel's table ("" when the kind has no cross-check)
    check_tables: Mapping[str, str] = {}  # CSV slug -> what the cross-check's table holds

    def params_from_json(self, data: dict) -> Any:
        """Saved JSON (old shapes included) -> parameters; ValueError naming what is wrong."""
        raise NotImplementedError

    def scenario_form(self, data=None, *, initial=None):
        """The create/edit form; when valid, ``cleaned_data["params"]`` holds the parameters."""
        raise NotImplementedError

    def form_initial(self, params) -> dict:
        raise NotImplementedError

    def changes_form(self, data):
        """The what-if form; when valid, ``.changes()`` is a dict of the values to change."""
        raise NotImplementedError

    def apply_changes(self, params, changes: Mapping) -> Any:
        """``params`` with ``changes``; ValueError naming the input when they do not fit."""
        raise NotImplementedError

    def describe_changes(self, saved, variant) -> list[str]:
        """The inputs that differ, in the analyst's words ('start stock 4 → 2 units')."""
        raise NotImplementedError

    def prepare(self, params, stockout_target: float, overflow_target: float):
        """A job for one request, its laws built once. The read service calls:

        ``parts()`` -> list of ``Part`` (each engine call priced with ``walk.cost``; may raise
        ComputeTooLarge itself), ``refusal(units, cap)`` -> the analyst's message when the
        required parts exceed the cap, ``run(allowed)`` -> the result (parts not in
        ``allowed`` left out with a note) and ``headline()`` -> (stock-out risk, span) stored at save.
        """
        raise NotImplementedError

    def cross_check(self, params, stockout_target: float, overflow_target: float):
        """A job for the cross-check panel (exact figures beside approximations), with the same
        ``parts()``, ``refusal()`` and ``run(allowed)`` as ``prepare``'s; None when the kind has none."""
        return None

    def check_figure(self, check) -> dict:
        """The cross-check's chart, in the shape of one of ``figures``'s values."""
        raise NotImplementedError

    def check_rows(self, check, table: str) -> Iterator[list]:
        """Header row then data rows of one of ``check_tables``."""
        raise NotImplementedError

    def figures(self, result) -> dict[str, dict]:
        """Charts by name: ``{"figure": {"data", "layout"}, "summary": one sentence, "table": CSV slug}``."""
        raise NotImplementedError

    def table_rows(self, result, table: str) -> Iterator[list]:
        """Header row then data rows of one CSV table (plain machine numbers)."""
        return self.table_builders[table](result)

    def sample_changes(self, params) -> list[dict]:
        """A few what-if queries near the saved plan, for the benchmarks and the load test (none by default)."""
        return []

    def params_from_fit(self, fitted, *, start: int, high: int | None, horizon: int) -> Any:
        """Parameters of a new plan made from a history's fit, or None (the default): not made from fits.

        ``fitted`` is a ``planner.history.fit.FittedLaws`` (plain values: the period, the fitted
        count laws as JSON-shaped dicts or the observed change table, a weekday pattern); ``start``,
        ``high`` (None: no capacity) and ``horizon`` are what the analyst gave on the fit page.
        ValueError naming what does not fit; the fit page then shows it beside the button.
        A repair log's fit is a ``planner.repairlog.fit.FittedRates`` (``record == "repair_log"``: units,
        spares, failure and repair rates per time unit); ``horizon`` is then the mission. A kind returns
        None for a record it is not made from.
        """
        return None

    def fit_note(self, fitted) -> str:
        """What a plan made from ``fitted`` assumed beyond the history, for its notes ("" by default)."""
        return ""

    def comparable(self, result) -> Comparable | None:
        """The plan's curve and key figures for the comparison page (None: this kind is not compared yet)."""
        return None

    def preview_form(self, data):
        """The form behind the live preview (None: the kind has no preview)."""
        return None

    def preview_parts(self, form) -> list[Part]:
        """The preview's work, priced before it is built."""
        raise NotImplementedError

    def preview(self, form) -> dict:
        raise NotImplementedError


def register(kind: Kind) -> Kind:
    if kind.key in _KINDS:
        raise ValueError(f"scenario kind {kind.key!r} is registered twice")
    _KINDS[kind.key] = kind
    return kind


def get_kind(key: str) -> Kind:
    """The registered kind ``key``; Http404 for an unknown one (it only arrives from URLs and rows)."""
    try:
        return _KINDS[key]
    except KeyError:
        raise Http404("No such scenario kind") from None


def all_kinds() -> list[Kind]:
    return list(_KINDS.values())


def plan_options(fitted, *, start: int, high: int | None, horizon: int) -> list[dict]:
    """Every kind made from ``fitted`` (a history's or a repair log's fit), each with the reason it cannot take
    this one ("" when it can): ``{"kind", "refusal"}``. Builds parameters only (no law, no computation)."""
    options = []
    for kind in all_kinds():
        try:
            params = kind.params_from_fit(fitted, start=start, high=high, horizon=horizon)
        except ValueError as refusal:
            options.append({"kind": kind, "refusal": str(refusal)})
            continue
        if params is not None:
            options.append({"kind": kind, "refusal": ""})
    return options


def discover() -> None:
    """Import every kind package under planner/kinds (each registers itself once)."""
    for module in pkgutil.iter_modules(__path__):
        importlib.import_module(f"{__name__}.{module.name}")
