"""The rate-table pool: any pool of repairable units, stated by its failure and repair rates at each number failed.

For pools that do not fit the spares template (a repair contractor who slows down when several units
wait, units that wear faster while others are out). Everything this kind needs lives in this package:
``params`` (parameters and the walkmath pool), ``forms`` (parse and validate the table), ``compute``
(walkmath calls, priced first), ``advice`` (the one-sentence reading), ``whatif`` (changes on a saved
pool), ``charts`` and ``tables``; the charts and tables every pool shares are in ``planner.pool_charts``
and ``planner.pool_tables``. The last line registers it.
"""

from __future__ import annotations

import numpy as np

import walkmath as wm
from planner.formatting import number, probability
from planner.kinds import Kind, Part, register
from planner.kinds.rate_table import charts
from planner.kinds.rate_table.compute import RateTableJob
from planner.kinds.rate_table.forms import RateTableForm, TableFields, WhatIfForm, form_initial
from planner.kinds.rate_table.params import RateTableParams
from planner.kinds.rate_table.tables import ROWS, TABLES
from planner.kinds.rate_table.whatif import apply_changes, describe_changes
from planner.pool_words import share
from walkmath.pools import LONG_RUN_FIXED, LONG_RUN_UNITS

# The preview charts the numbers failed that can be seen (>= 1e-6 of the most likely one).
PREVIEW_FLOOR = 1e-6


class RateTableKind(Kind):
    key = "rate_table"
    label = "Rate-table pool"
    form_template = "planner/kinds/rate_table/form_fields.html"
    headline_template = "planner/kinds/rate_table/headline.html"
    whatif_template = "planner/kinds/rate_table/whatif.html"
    caution_template = "planner/kinds/rate_table/cautions.html"
    preview_waiting = "Fill in the table and the shortage level to see how many units are typically failed."
    tables = TABLES
    table_builders = ROWS

    # The shared plumbing's calls, answered by this package's own functions and classes.
    params_from_json = staticmethod(RateTableParams.from_json)
    scenario_form = staticmethod(RateTableForm)
    form_initial = staticmethod(form_initial)
    changes_form = staticmethod(WhatIfForm)
    apply_changes = staticmethod(apply_changes)
    describe_changes = staticmethod(describe_changes)
    prepare = staticmethod(RateTableJob)
    figures = staticmethod(charts.charts_for)
    preview_form = staticmethod(TableFields)

    def sample_changes(self, params) -> list[dict]:
        """One unit fewer failed at the start, as saved and one more (below the shortage level)."""
        start = params.start_failed
        values = {max(0, start - 1), start, min(start + 1, params.shortage_at - 1)}
        return [{"start_failed": value} for value in sorted(values)]

    def preview_parts(self, form) -> list[Part]:
        """The preview is the long-run law of the number failed: priced as the pool's long-run figures."""
        levels = form.cleaned_data["params"].top + 1
        return [Part("preview", wm.Work("long_run", levels, 1, LONG_RUN_UNITS, dense=LONG_RUN_FIXED).units)]

    def preview(self, form) -> dict:
        """The long-run law of the number failed, with the availability it gives."""
        pool = form.cleaned_data["params"].pool()
        law = pool.long_run_law()
        visible = np.flatnonzero(law >= PREVIEW_FLOOR * law.max())
        shown = slice(0, int(visible[-1]) + 1)
        available, short = pool.availability_split()
        return {
            "ready": True,
            "steps": pool.failed[shown].tolist(),
            "probs": law[shown].tolist(),
            "x_title": "units failed, in the long run",
            "x_name": "failed",
            "summary": (
                f"In the long run the pool is short {probability(short)} of the time "
                f"(availability {share(available)}); "
                f"{number(pool.expected_failed())} units are failed on average."
            ),
        }


register(RateTableKind())
