"""Smallest number of spares, or of repair crews, meeting an availability or mission-risk target.

Both searches walk the candidates upwards (spares 0, 1, 2, ...; crews 1, 2, ... up to every unit
that can fail) and keep every candidate's figures, so the page can draw the whole curve. A pool with
one more spare, or one more crew, is never worse (coupling: count the units in working order; one
more spare leaves the failure rate at each such count unchanged and can only add repairs, one more
crew only adds repairs), so availability never falls and the shortage risk never rises along the
candidates. Each candidate is computed on its own (``SparesPool``); a running maximum (minimum)
removes rounding ripples of a few ulps, so the curves are monotone by construction and the first
candidate meeting the target is the smallest.

Every probe is priced with the engine's cost model before it runs; the search stops at its budget
(``cap``) and says so (``budget_reached``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from walkmath import checks
from walkmath.cost import WORK_CAP, ComputeTooLarge
from walkmath.spares import POOL_CAP, SparesPool

# Most spares a search tries unless told otherwise.
MOST_SPARES = 1_000


@dataclass(frozen=True, eq=False)
class PoolSizing:
    """Figures for each candidate number of spares (or crews) in ``counts``, monotone along them.

    ``shortage_risk`` (with ``no_shortage_risk``, each from its own side) is P(a shortage within
    ``mission_time`` starting with every unit in working order); None when no mission was given.
    ``smallest`` is the first count meeting every target given (None: none of ``counts`` does, or
    no target was given); ``budget_reached`` says the search stopped at its budget before settling.
    """

    knob: str  # "spares" or "crews"
    counts: np.ndarray
    availability: np.ndarray
    unavailability: np.ndarray
    shortage_risk: np.ndarray | None
    no_shortage_risk: np.ndarray | None
    smallest: int | None
    availability_target: float | None
    risk_target: float | None
    mission_time: float | None
    budget_reached: bool
    work: int  # units of work spent

    def at(self, count: int) -> int | None:
        """Index of ``count`` in ``counts`` (None when it was not reached)."""
        index = count - int(self.counts[0])
        return index if 0 <= index < self.counts.size else None


def spares_curve(
    units: int,
    failure_rate: float,
    repair_rate: float,
    crews: int = 1,
    *,
    warm_failure_rate: float = 0.0,
    availability_target: float | None = None,
    risk_target: float | None = None,
    mission_time: float | None = None,
    shown: int = 0,
    most: int = MOST_SPARES,
    cap: int = WORK_CAP,
) -> PoolSizing:
    """Figures for spares 0, 1, ... until every target is met and ``shown`` is reached, or ``most``.

    Without a target the curve runs to ``shown``. Cost: the long-run figures are O(units + spares)
    a candidate; a mission risk is one uniformization per candidate, about gamma x mission_time
    steps of spares + 2 levels. Each probe is priced first; ComputeTooLarge when not even the
    first fits ``cap``.
    """
    most = checks.whole("most", most, minimum=0, maximum=POOL_CAP)
    shown = checks.whole("shown", shown, minimum=0, maximum=most)

    def pool(count: int) -> SparesPool:
        return SparesPool(units, count, failure_rate, repair_rate, crews, warm_failure_rate)

    return _search("spares", pool, range(0, most + 1), shown, availability_target, risk_target, mission_time, cap)


def crews_curve(
    units: int,
    spares: int,
    failure_rate: float,
    repair_rate: float,
    *,
    warm_failure_rate: float = 0.0,
    availability_target: float | None = None,
    risk_target: float | None = None,
    mission_time: float | None = None,
    shown: int = 1,
    cap: int = WORK_CAP,
) -> PoolSizing:
    """Figures for crews 1, 2, ... until every target is met and ``shown`` is reached, or every unit
    has its own crew (units + spares: more crews than that never work at once)."""
    units = checks.whole("units", units, minimum=1, maximum=POOL_CAP)
    spares = checks.whole("spares", spares, minimum=0, maximum=POOL_CAP)
    most = units + spares
    shown = checks.whole("shown", shown, minimum=1, maximum=most)

    def pool(count: int) -> SparesPool:
        return SparesPool(units, spares, failure_rate, repair_rate, count, warm_failure_rate)

    return _search("crews", pool, range(1, most + 1), shown, availability_target, risk_target, mission_time, cap)


def smallest_spares(
    units: int,
    failure_rate: float,
    repair_rate: float,
    crews: int = 1,
    availability_target: float | None = None,
    warm_failure_rate: float = 0.0,
    *,
    risk_target: float | None = None,
    mission_time: float | None = None,
    most: int = MOST_SPARES,
    cap: int = WORK_CAP,
) -> int | None:
    """Smallest number of spares whose pool meets ``availability_target`` (long-run P(no shortage))
    and/or ``risk_target`` (largest P(a shortage within ``mission_time``) from all good); None when
    no number up to ``most`` does. ComputeTooLarge when the search does not settle within ``cap``.
    """
    _need_target("spares", availability_target, risk_target)
    found = spares_curve(
        units,
        failure_rate,
        repair_rate,
        crews,
        warm_failure_rate=warm_failure_rate,
        availability_target=availability_target,
        risk_target=risk_target,
        mission_time=mission_time,
        most=most,
        cap=cap,
    )
    return _answer(found)


def smallest_crews(
    units: int,
    spares: int,
    failure_rate: float,
    repair_rate: float,
    availability_target: float | None = None,
    warm_failure_rate: float = 0.0,
    *,
    risk_target: float | None = None,
    mission_time: float | None = None,
    cap: int = WORK_CAP,
) -> int | None:
    """Smallest number of repair crews meeting the targets (see ``smallest_spares``); None when even
    a crew per unit does not."""
    _need_target("crews", availability_target, risk_target)
    found = crews_curve(
        units,
        spares,
        failure_rate,
        repair_rate,
        warm_failure_rate=warm_failure_rate,
        availability_target=availability_target,
        risk_target=risk_target,
        mission_time=mission_time,
        cap=cap,
    )
    return _answer(found)


def _answer(found: PoolSizing) -> int | None:
    if found.smallest is None and found.budget_reached:
        raise ComputeTooLarge(
            f"the search for the smallest number of {found.knob} stopped at {int(found.counts[-1])} {found.knob} "
            f"without meeting the target within the work limit ({found.work:.3g} units spent). To fit, shorten "
            "the mission or relax the target."
        )
    return found.smallest


def _need_target(knob: str, availability_target, risk_target) -> None:
    if availability_target is None and risk_target is None:
        raise ValueError(f"give availability_target or risk_target to search for the smallest number of {knob}")


def _search(knob, pool, candidates, shown, availability_target, risk_target, mission_time, cap) -> PoolSizing:
    if availability_target is not None:
        availability_target = checks.open_probability("availability_target", availability_target)
    if risk_target is not None:
        risk_target = checks.open_probability("risk_target", risk_target)
        if mission_time is None:
            raise ValueError("mission_time is required with risk_target (the mission the risk is counted over)")
    if mission_time is not None:
        mission_time = checks.real("mission_time", mission_time, minimum=0.0)
    cap = checks.whole("cap", cap, minimum=0)
    targets = availability_target is not None or risk_target is not None
    rows, spent, smallest, budget_reached = [], 0, None, False
    best_unavailable, best_available, best_risk, best_safe = np.inf, -np.inf, np.inf, -np.inf
    for count in candidates:
        candidate = pool(count)
        price = candidate.cost("long_run").units
        if mission_time is not None:
            price += candidate.cost("shortage_curve", times=mission_time).units
        if spent + price > cap:
            if not rows:
                raise ComputeTooLarge(
                    f"one {knob} candidate needs {price:.3g} units of work; the limit is {cap:.3g}. To fit, "
                    "shorten the mission or model fewer units."
                )
            budget_reached = True
            break
        spent += price
        # running extremes: rounding ripples removed, so the curves move one way (see the module notes)
        best_available = max(best_available, candidate.availability())
        best_unavailable = min(best_unavailable, candidate.unavailability())
        row = [count, best_available, best_unavailable]
        if mission_time is not None:
            risk, safe = candidate.shortage_split(mission_time)
            best_risk, best_safe = min(best_risk, risk), max(best_safe, safe)
            row += [best_risk, best_safe]
        rows.append(row)
        if smallest is None and targets and _meets(row, availability_target, risk_target):
            smallest = count
        if count >= shown and (smallest is not None or not targets):
            break
    table = np.array(rows, dtype=float)
    risky = mission_time is not None
    return PoolSizing(
        knob=knob,
        counts=table[:, 0].astype(int),
        availability=table[:, 1],
        unavailability=table[:, 2],
        shortage_risk=table[:, 3] if risky else None,
        no_shortage_risk=table[:, 4] if risky else None,
        smallest=smallest,
        availability_target=availability_target,
        risk_target=risk_target,
        mission_time=mission_time,
        budget_reached=budget_reached,
        work=spent,
    )


def _meets(row, availability_target, risk_target) -> bool:
    """Each target read on its accurate side: an availability target of 0.5 or more as an
    unavailability of at most 1 - target (exact in floating point, Sterbenz's lemma)."""
    if availability_target is not None:
        if availability_target >= 0.5 and row[2] > 1.0 - availability_target:
            return False
        if availability_target < 0.5 and row[1] < availability_target:
            return False
    return risk_target is None or row[3] <= risk_target
