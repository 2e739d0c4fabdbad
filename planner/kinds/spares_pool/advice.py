"""The one-sentence sizing recommendation of a spares pool, in the planner's words."""

from __future__ import annotations

from typing import TYPE_CHECKING

from planner.formatting import probability
from planner.pool_words import count, share

if TYPE_CHECKING:
    from planner.kinds.spares_pool.compute import SparesResult


def _spares(value: int) -> str:
    return count(value, "spare")


def _crews(value: int) -> str:
    return count(value, "repair crew")


def _figures_at(result: SparesResult, spares: int) -> str:
    """'availability 99.95 %, mission risk 0.4 %' at ``spares`` with the pool's crews (from the curves)."""
    long_run = result.spares_long_run[result.params.crews]
    risk = result.spares_risk
    parts = []
    index = long_run.at(spares)
    if index is not None:
        parts.append(f"availability {share(long_run.availability[index])}")
    index = risk.at(spares) if risk is not None else None
    if index is not None:
        parts.append(f"a {probability(risk.shortage_risk[index])} chance of a shortage during the mission")
    return ", ".join(parts)


def recommendation(result: SparesResult) -> str:
    """One sentence: what to keep, or what else would meet both targets, or why nothing does here."""
    params = result.params
    spares, crews = params.spares, params.crews
    needed, crews_needed = result.spares_needed, result.crews_needed
    targets = (
        f"availability of at least {share(params.availability_target)} and at most "
        f"{probability(result.risk_target)} risk of a shortage during a mission of {result.span}"
    )
    if result.meets_availability and result.meets_risk:
        if needed is not None and needed < spares:
            return (
                f"The {_spares(spares)} planned meet both targets ({targets}); with {_crews(crews)}, "
                f"{_spares(needed)} would already do ({_figures_at(result, needed)})."
            )
        fewer = " and no fewer spares would" if needed == spares else ""
        return f"The {_spares(spares)} and {_crews(crews)} planned meet both targets ({targets}){fewer}."
    if needed is not None:
        return (
            f"Keep {_spares(needed)} ({needed - spares} more than planned) with {_crews(crews)}: the fewest "
            f"that meet both targets, with {_figures_at(result, needed)}."
        )
    risk = result.spares_risk
    if result.spares_for_availability is None:
        reach = f"No number of spares up to {result.availability_searched_to:,}"
    elif risk is not None and not risk.budget_reached:
        reach = f"No number of spares up to {risk.searched_to:,}"
    else:
        reach = "No number of spares this request could work out"
    if crews_needed is not None:
        return (
            f"{reach} meets both targets ({targets}) with {_crews(crews)}; {_crews(crews_needed)} with the "
            f"{_spares(spares)} planned would."
        )
    return (
        f"{reach} meets both targets ({targets}) with {_crews(crews)}, nor do more repair crews: shorten repairs, "
        "choose more reliable units or relax a target."
    )
