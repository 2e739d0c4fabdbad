"""Smallest number of spares, or of repair crews, meeting an availability or mission-risk target.

Both searches work out every candidate up to the number asked for (spares 0, 1, 2, ...; crews 1,
2, ... up to every unit that can fail), so the page can draw the whole curve, then gallop and
bisect past it for the smallest meeting the targets, carrying the curve on to it. A pool with
one more spare, or one more crew, is never worse (coupling: count the units in working order; one
more spare leaves the failure rate at each such count unchanged and can only add repairs, one more
crew only adds repairs), so availability never falls and the shortage risk never rises along the
candidates. Each candidate is computed on its own (``SparesPool``); a running maximum (minimum)
removes rounding ripples of a few ulps, so the curves are monotone by construction and the first
candidate on them meeting the target is the smallest.

A candidate's price and figures are kept (the last ``CANDIDATES_KEPT``, a few floats each): a
what-if that moves the pool's own spares or crews asks again for the same candidates. The price is
charged every time, kept or not, so how far a search reaches never depends on what was kept.

Every probe is priced with the engine's cost model before it runs; the search stops at its budget
(``cap``) and says so (``budget_reached``).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from walkmath import checks
from walkmath.cost import WORK_CAP, ComputeTooLarge
from walkmath.spares import POOL_CAP, SparesPool

# Most spares a search tries unless told otherwise.
MOST_SPARES = 1_000
# Most candidates the curve is carried on past ``shown`` to reach the smallest meeting the targets.
MOST_EXTRA = 100
# Candidates whose price and figures are kept between searches (a few floats each).
CANDIDATES_KEPT = 4096


@dataclass(frozen=True, eq=False)
class PoolSizing:
    """Figures for each candidate number of spares (or crews) in ``counts``, monotone along them.

    ``shortage_risk`` (with ``no_shortage_risk``, each from its own side) is P(a shortage within
    ``mission_time`` starting with every unit in working order); None when no mission was given.
    ``smallest`` is the first count meeting every target given (None: none up to ``searched_to``
    does, or no target was given); it may lie past ``counts`` when the curve could not be carried
    that far. ``budget_reached`` says the search stopped at its budget before settling.
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
    searched_to: int  # the largest count whose figures were worked out

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
    """Figures for spares 0..``shown``, and the fewest spares up to ``most`` meeting every target given
    (the curve carried on to it when at most ``MOST_EXTRA`` further).

    Cost: the long-run figures are O(units + spares)
    a candidate; a mission risk is one uniformization per candidate, about gamma x mission_time
    steps of spares + 2 levels. Each probe is priced first; ComputeTooLarge when not even the
    first fits ``cap``.
    """
    most = checks.whole("most", most, minimum=0, maximum=POOL_CAP)
    shown = checks.whole("shown", shown, minimum=0, maximum=most)

    def pool(count: int) -> tuple:
        return (units, count, failure_rate, repair_rate, crews, warm_failure_rate)

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
    most: int | None = None,
    cap: int = WORK_CAP,
) -> PoolSizing:
    """Figures for crews 1..``shown``, and the fewest crews up to ``most`` meeting every target given
    (by default every unit has its own crew: units + spares, more than ever work at once)."""
    units = checks.whole("units", units, minimum=1, maximum=POOL_CAP)
    spares = checks.whole("spares", spares, minimum=0, maximum=POOL_CAP)
    most = units + spares if most is None else checks.whole("most", most, minimum=1, maximum=units + spares)
    shown = checks.whole("shown", shown, minimum=1, maximum=most)

    def pool(count: int) -> tuple:
        return (units, spares, failure_rate, repair_rate, count, warm_failure_rate)

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


class _Prober:
    """Figures of one candidate at a time, each priced before it runs (``pool(count)`` gives the
    candidate's ``SparesPool`` arguments)."""

    def __init__(self, knob, pool, mission_time, cap):
        self.knob, self.pool, self.mission_time, self.cap = knob, pool, mission_time, cap
        self.rows: dict[int, tuple[float, ...]] = {}
        self.spent, self.budget_reached = 0, False

    def __call__(self, count: int) -> tuple[float, ...] | None:
        """(availability, unavailability[, shortage risk, no-shortage risk]) of ``count``; None over budget."""
        if count in self.rows:
            return self.rows[count]
        if self.budget_reached:
            return None
        arguments = self.pool(count)
        price = _candidate_price(arguments, self.mission_time)
        if self.spent + price > self.cap:
            if not self.rows:
                raise ComputeTooLarge(
                    f"one {self.knob} candidate needs {price:.3g} units of work; the limit is {self.cap:.3g}. To fit, "
                    "shorten the mission or model fewer units."
                )
            self.budget_reached = True
            return None
        self.spent += price
        self.rows[count] = row = _candidate_row(arguments, self.mission_time)
        return row


@lru_cache(maxsize=CANDIDATES_KEPT)
def _candidate_price(arguments: tuple, mission_time: float | None) -> int:
    candidate = _candidate(arguments)
    price = candidate.cost("long_run").units
    if mission_time is not None:
        price += candidate.cost("shortage_curve", times=mission_time).units
    return price


@lru_cache(maxsize=CANDIDATES_KEPT)
def _candidate_row(arguments: tuple, mission_time: float | None) -> tuple[float, ...]:
    candidate = _candidate(arguments)
    row = candidate.availability_split()
    if mission_time is not None:
        row += candidate.shortage_split(mission_time)
    return row


@lru_cache(maxsize=2)  # the pool just priced, for its figures (pools can be large: keep few)
def _candidate(arguments: tuple) -> SparesPool:
    return SparesPool(*arguments)


def forget_candidates() -> None:
    """Drop every kept candidate (tests start from none)."""
    for kept in (_candidate_price, _candidate_row, _candidate):
        kept.cache_clear()


def _search(knob, pool, candidates, shown, availability_target, risk_target, mission_time, cap) -> PoolSizing:
    """The curve over ``candidates`` up to ``shown``, then, while no candidate on it meets the
    targets, a galloping search (1, 2, 4, ... past the curve) and a bisection for the first that
    does, and the curve carried on to it when that is at most ``MOST_EXTRA`` further.

    The gallop and bisection read each candidate's own figures: monotone to rounding, so they find
    the smallest to within a rounding ripple; the curve is monotone by construction and, where it
    reaches, names the smallest itself.
    """
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
    probe = _Prober(knob, pool, mission_time, cap)
    first, most = candidates.start, candidates.stop - 1

    def meets(row) -> bool:
        return _meets(row, availability_target, risk_target)

    top = first - 1  # the curve covers first..top
    while top < shown and probe(top + 1) is not None:
        top += 1
    table = _one_way(probe.rows, first, top)
    smallest = next((first + i for i, row in enumerate(table) if meets(row)), None) if targets else None
    if targets and smallest is None and top == shown and shown < most:
        found = _gallop(probe, meets, shown, most)
        if found is not None and found - top <= MOST_EXTRA:
            while top < found and probe(top + 1) is not None:
                top += 1
            table = _one_way(probe.rows, first, top)
            on_curve = next((first + i for i, row in enumerate(table) if meets(row)), None)
            found = on_curve if on_curve is not None else found
        smallest = found
    risky = mission_time is not None
    counts = np.arange(first, top + 1)
    return PoolSizing(
        knob=knob,
        counts=counts,
        availability=table[:, 0],
        unavailability=table[:, 1],
        shortage_risk=table[:, 2] if risky else None,
        no_shortage_risk=table[:, 3] if risky else None,
        smallest=smallest,
        availability_target=availability_target,
        risk_target=risk_target,
        mission_time=mission_time,
        budget_reached=probe.budget_reached,
        work=probe.spent,
        searched_to=max(probe.rows),
    )


def _one_way(rows: dict, first: int, top: int) -> np.ndarray:
    """The rows first..top with running extremes (availability and no-shortage never fall, the
    others never rise): each candidate's rounding ripples of a few ulps removed (module notes)."""
    table = np.array([rows[count] for count in range(first, top + 1)], dtype=float)
    for column, rising in enumerate((True, False, False, True)[: table.shape[1]]):
        accumulate = np.maximum.accumulate if rising else np.minimum.accumulate
        table[:, column] = accumulate(table[:, column])
    return table


def _gallop(probe, meets, last_failing: int, most: int) -> int | None:
    """First candidate after ``last_failing`` meeting the targets (each read on its own figures):
    steps of 1, 2, 4, ... up to ``most``, then bisection. None when none does up to ``most`` or the
    budget runs out first."""
    step, candidate = 1, min(last_failing + 1, most)
    while True:
        row = probe(candidate)
        if row is None:
            return None
        if meets(row):
            break
        if candidate == most:
            return None
        last_failing, candidate, step = candidate, min(most, candidate + step), 2 * step
    low, high = last_failing, candidate  # low fails, high meets
    while high - low > 1:
        middle = (low + high) // 2
        row = probe(middle)
        if row is None:
            return None
        low, high = (low, middle) if meets(row) else (middle, high)
    return high


def _meets(row, availability_target, risk_target) -> bool:
    """Each target read on its accurate side: an availability target of 0.5 or more as an
    unavailability of at most 1 - target (exact in floating point, Sterbenz's lemma).
    ``row`` is (availability, unavailability[, shortage risk, no-shortage risk])."""
    if availability_target is not None:
        if availability_target >= 0.5 and row[1] > 1.0 - availability_target:
            return False
        if availability_target < 0.5 and row[0] < availability_target:
            return False
    return risk_target is None or row[2] <= risk_target
