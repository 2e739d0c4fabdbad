"""The one-sentence reading of a rate-table pool, in the planner's words: how it stands against its two
targets and, from the figures by repair speed, how much faster (or slower) repairs could be."""

from __future__ import annotations

from typing import TYPE_CHECKING

from planner.formatting import number, probability
from planner.pool_words import share

if TYPE_CHECKING:
    from planner.kinds.rate_table.compute import RateTableResult


def _times(speed: float) -> str:
    return f"{number(speed)} times as fast"


def _shortfalls(result: RateTableResult) -> str:
    """'is available 98.2 % of the time, below the 99.5 % target, and has ...' for each target missed."""
    missed = []
    if not result.meets_availability:
        missed.append(
            f"is available {share(result.availability)} of the time, below the {share(result.availability_target)} "
            "target"
        )
    if not result.meets_risk:
        missed.append(
            f"has a {probability(result.mission_risk)} chance of a shortage during a mission of {result.span}, "
            f"above the {probability(result.risk_target)} target"
        )
    return ", and ".join(missed)


def recommendation(result: RateTableResult) -> str:
    """One sentence: where the pool stands against both targets and what repair speed would meet them."""
    needed, curve = result.speed_needed, result.speeds
    if result.meets_availability and result.meets_risk:
        standing = (
            f"The pool as tabled meets both targets: available {share(result.availability)} of the time (target "
            f"{share(result.availability_target)}) and a {probability(result.mission_risk)} chance of a shortage "
            f"during a mission of {result.span} (target {probability(result.risk_target)})"
        )
        if needed is not None and needed < 1:
            return f"{standing}; repairs at {number(needed)} of their tabled speed would still meet both."
        return f"{standing}."
    standing = f"As tabled the pool {_shortfalls(result)}"
    if needed is not None:
        index = curve.at(needed)
        return (
            f"{standing}; repairs {_times(needed)} at every number failed would meet both targets (available "
            f"{share(curve.availability[index])}, a {probability(curve.risk[index])} chance of a shortage)."
        )
    if curve is None or not curve.complete:
        return f"{standing}; how much faster repairs would need to be was too much work for one request."
    return (
        f"{standing}, and even repairs {_times(float(curve.speeds[-1]))} would not meet both targets: fewer failures "
        "(sturdier units, or more of them sharing the load) or a relaxed target is needed."
    )
