"""A spares pool made from a repair log's fit (``Kind.params_from_fit``).

The units in service and the spares held as stated with the log; the fitted
failure rate as the MTTF of one unit (1 / rate) and the fitted repair rate as
the mean repair time, in the log's time unit; one repair crew per unit, so a
repair never waits (the time in the shop the log records already includes any
wait); cold spares, as the exposure was counted; the mission from the fit
page. A stock history's fit makes no spares pool.
"""

from __future__ import annotations

from planner.kinds.spares_pool.params import SparesPoolParams


def params_from_fit(fitted, *, start: int, high: int | None, horizon: int) -> SparesPoolParams | None:
    """``start`` and ``high`` do not enter a pool; ``horizon`` is the mission, in the log's time unit."""
    if getattr(fitted, "record", "history") != "repair_log":
        return None
    if fitted.failures == 0 or fitted.repairs == 0:
        raise ValueError(
            "A spares pool needs at least one failure and one completed repair in the record to fit both rates."
        )
    try:
        return SparesPoolParams(
            units=fitted.units,
            spares=fitted.spares,
            failure=1.0 / fitted.failure_rate,
            repair=1.0 / fitted.repair_rate,
            mission=float(horizon),
            time_unit=fitted.time_unit,
            crews=fitted.units + fitted.spares,
            standby="cold",
            failure_style="mtbf",
            repair_style="mean",
        )
    except ValueError as refusal:
        raise ValueError(f"A spares pool cannot hold this fit as it stands: {refusal}.") from None


def fit_note(fitted) -> str:
    return (
        f"One repair crew per unit ({fitted.units + fitted.spares}), so repairs never wait: the time in the shop "
        "the log records already includes any wait for a crew. Spares are cold (they do not fail while waiting), "
        "as the time in service was counted. Set fewer crews or warm spares with Edit if yours differ."
    )
