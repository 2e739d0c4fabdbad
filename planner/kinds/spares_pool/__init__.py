"""The spares pool: units needed in service, spares on standby, repair crews, over a mission.

Everything this kind needs lives in this package: ``params`` (parameters and the walkmath pool),
``forms`` (parse and validate), ``compute`` (walkmath calls, priced first), ``advice`` (the sizing
sentence), ``whatif`` (changes on a saved pool), ``charts``, ``tables`` and ``words``. The last
line registers it.
"""

from __future__ import annotations

import numpy as np

import walkmath as wm
from planner.formatting import number, probability
from planner.kinds import Kind, Part, register
from planner.kinds.spares_pool import charts, from_fit, tables
from planner.kinds.spares_pool.compute import SparesJob
from planner.kinds.spares_pool.forms import PoolFields, SparesPoolForm, WhatIfForm, form_initial
from planner.kinds.spares_pool.params import SparesPoolParams
from planner.kinds.spares_pool.whatif import apply_changes, describe_changes
from planner.pool_words import share
from walkmath.pools import LONG_RUN_FIXED, LONG_RUN_UNITS

# The preview charts the numbers failed that can be seen (>= 1e-6 of the most likely one).
PREVIEW_FLOOR = 1e-6


class SparesPoolKind(Kind):
    key = "spares_pool"
    label = "Spares pool"
    form_template = "planner/kinds/spares_pool/form_fields.html"
    headline_template = "planner/kinds/spares_pool/headline.html"
    whatif_template = "planner/kinds/spares_pool/whatif.html"
    caution_template = "planner/kinds/spares_pool/cautions.html"
    preview_waiting = "Fill in the units, spares, failures and repairs to see how many are typically failed."
    table_builders = tables.ROWS  # before ``tables`` below takes the module's name in this class
    tables = tables.TABLES

    # The shared plumbing's calls, answered by this package's own functions and classes.
    params_from_json = staticmethod(SparesPoolParams.from_json)
    scenario_form = staticmethod(SparesPoolForm)
    form_initial = staticmethod(form_initial)
    changes_form = staticmethod(WhatIfForm)
    apply_changes = staticmethod(apply_changes)
    describe_changes = staticmethod(describe_changes)
    prepare = staticmethod(SparesJob)
    figures = staticmethod(charts.charts_for)
    params_from_fit = staticmethod(from_fit.params_from_fit)
    fit_note = staticmethod(from_fit.fit_note)
    preview_form = staticmethod(PoolFields)

    def sample_changes(self, params) -> list[dict]:
        """One spare fewer, as saved and one more, for the benchmarks and the load test."""
        return [{"spares": value} for value in sorted({max(0, params.spares - 1), params.spares, params.spares + 1})]

    def preview_parts(self, form) -> list[Part]:
        """The preview is the long-run law of the number failed: priced as the pool's long-run figures."""
        params = form.cleaned_data["params"]
        levels = params.units + params.spares + 1
        return [Part("preview", wm.Work("long_run", levels, 1, LONG_RUN_UNITS, dense=LONG_RUN_FIXED).units)]

    def preview(self, form) -> dict:
        """The long-run law of the number failed, with the availability it gives."""
        pool = form.cleaned_data["params"].pool()
        law = pool.chain.steady_state()
        visible = np.flatnonzero(law >= PREVIEW_FLOOR * law.max())
        shown = slice(0, int(visible[-1]) + 1)
        return {
            "ready": True,
            "steps": pool.rates.failed[shown].tolist(),
            "probs": law[shown].tolist(),
            "x_title": "units failed, in the long run",
            "x_name": "failed",
            "summary": (
                f"In the long run the pool is short {probability(pool.unavailability())} of the time "
                f"(availability {share(pool.availability())}); {number(pool.expected_operating())} of "
                f"{number(pool.units)} needed units are in service on average."
            ),
        }


register(SparesPoolKind())
