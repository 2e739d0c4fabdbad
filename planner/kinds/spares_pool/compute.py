"""Run a spares pool through walkmath and gather every number its page shows.

Reads only; no database. The job builds the pool once; ``parts`` prices every engine call with the
engine's cost model (``SparesPool.cost``) before any of them runs, and ``run`` makes only the calls
the read service allowed. Charts, headline figures and CSV files all read the same
``SparesResult``, so a download always matches what is on screen. The figures every pool shows
(availability, mission curves, units failed over time, risk by start) come from ``planner.pool_job``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import walkmath as wm
from planner.kinds import Part
from planner.kinds.spares_pool import advice
from planner.kinds.spares_pool.params import SparesPoolParams
from planner.pool_job import BY_START_LEFT_OUT, PoolJob
from planner.pool_result import PoolResult
from planner.pool_words import count, duration, per
from walkmath.sparesizing import MOST_EXTRA, PoolSizing

# Spares shown beyond the larger of the pool's own and the smallest meeting the targets.
SPARES_MARGIN = 3
# Most spares the long-run (availability) search tries; cheap, so it can look far.
MOST_SPARES = 1_000
# Most spares the mission-risk search and the charts go to, and most crews the searches try.
MOST_SHOWN_SPARES = 200
MOST_CREWS = 200


@dataclass(frozen=True, eq=False)
class SparesResult(PoolResult):
    pool: wm.SparesPool
    expected_operating: float
    expected_units_short: float
    spares_long_run: dict[int, PoolSizing]  # crews -> long-run figures for spares 0..top
    spares_risk: PoolSizing | None  # mission risk for spares 0.. at the pool's crews
    crews_long_run: PoolSizing | None  # None when left out of this request
    crews_risk: PoolSizing | None
    spares_for_availability: int | None
    crews_for_availability: int | None
    availability_searched_to: int  # the most spares the availability search tried
    left_out: tuple[str, ...] = field(default=())

    @property
    def spares_needed(self) -> int | None:
        """Smallest spares meeting both targets with the pool's crews (None: none found in this request)."""
        risk = self.spares_risk.smallest if self.spares_risk is not None else None
        if self.spares_for_availability is None or risk is None:
            return None
        return max(self.spares_for_availability, risk)

    @property
    def crews_needed(self) -> int | None:
        """Smallest crews meeting both targets with the pool's spares (None: none found in this request)."""
        risk = self.crews_risk.smallest if self.crews_risk is not None else None
        if self.crews_for_availability is None or risk is None:
            return None
        return max(self.crews_for_availability, risk)

    @property
    def spares_note(self) -> str:
        """Why no number of spares is shown, or the pool's own, in a few words."""
        if self.spares_needed is not None:
            return f"now {self.params.spares:,}"
        if self.spares_for_availability is None:
            return f"none up to {self.availability_searched_to:,} spares reaches the availability target"
        risk = self.spares_risk
        if risk is None or risk.budget_reached:
            return "not worked out in this request (too much work)"
        return f"none up to {risk.searched_to:,} spares meets the mission target"

    @property
    def crews_note(self) -> str:
        """Why no number of crews is shown, or the pool's own, in a few words."""
        if self.crews_needed is not None:
            return f"now {self.params.crews:,}"
        if self.crews_long_run is None or (self.crews_for_availability is None and self.crews_long_run.budget_reached):
            return "not worked out in this request (too much work)"
        if self.crews_for_availability is None:
            return f"none up to {self.crews_long_run.searched_to:,} crews reaches the availability target"
        risk = self.crews_risk
        if risk is None or risk.budget_reached:
            return "not worked out in this request (too much work)"
        return f"none up to {risk.searched_to:,} crews meets the mission target"

    @property
    def recommendation(self) -> str:
        return advice.recommendation(self)

    # -- the same in words, for the headline ---------------------------------------------------------

    @property
    def shortage_at(self) -> int:
        """The fewest units failed that make a shortage: one more than the spares."""
        return self.params.spares + 1

    @property
    def shortage_words(self) -> str:
        return f"more than {self.spares_words} failed"

    @property
    def spares_words(self) -> str:
        return count(self.params.spares, "spare")

    @property
    def crews_words(self) -> str:
        return count(self.params.crews, "repair crew")

    @property
    def failure_words(self) -> str:
        params = self.params
        if params.failure_style == "mtbf":
            return f"MTBF {duration(params.failure, self.unit)}"
        return f"{per(params.failure, self.unit, 'failures')} in service"

    @property
    def repair_words(self) -> str:
        params = self.params
        if params.repair_style == "mean":
            return f"mean repair {duration(params.repair, self.unit)}"
        return per(params.repair, self.unit, "repairs") + " for each crew"


class SparesJob(PoolJob):
    """One request's work on one pool: the pool built once, each engine call priced first."""

    def __init__(self, params: SparesPoolParams, risk_target: float, overflow_target: float = 0.05):
        self.pool = params.pool()
        super().__init__(params, risk_target, self.pool.rates)
        self.size_words = f"{params.units + params.spares:,} units and spares"
        self._candidates: dict[tuple, wm.SparesPool] = {}  # (spares, crews) -> pool, for the prices

    def _candidate(self, spares: int | None, crews: int | None) -> wm.SparesPool:
        """A sizing candidate's pool, built once a request (several prices read the same candidate)."""
        key = (spares, crews)
        if key not in self._candidates:
            self._candidates[key] = self.params.pool(spares=spares, crews=crews)
        return self._candidates[key]

    def _probe(self, spares: int | None = None, crews: int | None = None) -> int:
        """Price of one sizing candidate: its long-run figures and its mission risk."""
        pool = self._candidate(spares, crews)
        return pool.cost("long_run").units + pool.cost("shortage_curve", times=self.params.mission).units

    def _long_run(self, spares: int | None = None, crews: int | None = None) -> int:
        """Price of one candidate's long-run figures (no mission)."""
        return self._candidate(spares, crews).cost("long_run").units

    @property
    def most_crews(self) -> int:
        return min(self.params.units + self.params.spares, MOST_CREWS)

    @property
    def shown_spares(self) -> int:
        """Spares the charts show at least: the pool's own and a few more."""
        return min(self.params.spares + SPARES_MARGIN, MOST_SHOWN_SPARES)

    def parts(self) -> list[Part]:
        """Every engine call the page makes, priced by ``SparesPool.cost``.

        The availability search over spares (long-run figures only) is required; the searches that
        work out a mission risk for each candidate, the crews search and the curves for one crew
        fewer and one more stop themselves at their budget. Searches are priced by their bound
        (``_search_bound``).
        """
        params = self.params
        shown = self.shown_spares
        near = min(shown + MOST_EXTRA, MOST_SPARES)
        availability = _search_bound(
            shown + 1, MOST_SPARES - shown, self._long_run(spares=near), self._long_run(spares=MOST_SPARES)
        )
        near = min(shown + MOST_EXTRA, MOST_SHOWN_SPARES)
        risk = _search_bound(
            shown + 1, MOST_SHOWN_SPARES - shown, self._probe(spares=near), self._probe(spares=MOST_SHOWN_SPARES)
        )
        crew = self._long_run(crews=self.most_crews) + self._probe(crews=self.most_crews)
        crews = _search_bound(params.crews + 2, self.most_crews, crew, crew)
        by_crews = 2 * (MOST_SHOWN_SPARES + 1) * self._long_run(spares=MOST_SHOWN_SPARES)
        return [
            *self.shared_parts(),
            Part("availability_search", availability),
            Part("spares_risk", risk, required=False, stops_itself=True),
            Part("crews", crews, required=False, stops_itself=True),
            Part("by_crews", by_crews, required=False, stops_itself=True),
        ]

    def run(self, allowed: dict[str, int]) -> SparesResult:
        """Every figure of the page; optional parts not in ``allowed`` are left out with a note."""
        params, pool = self.params, self.pool
        shared = self.shared_figures(allowed)
        left_out = [BY_START_LEFT_OUT] if shared["by_start"] is None else []
        availability_scan = self._spares_curve(self.shown_spares, params.crews, availability=True)
        self.part_done("availability_search")
        shown = min(max(self.shown_spares, (availability_scan.smallest or 0) + SPARES_MARGIN), MOST_SHOWN_SPARES)
        spares_risk = self._spares_risk(allowed.get("spares_risk", 0), shown)
        self.part_done("spares_risk")
        if spares_risk is None or spares_risk.budget_reached:
            left_out.append("part of the mission risk by number of spares (too much work for one request)")
        if spares_risk is not None and spares_risk.smallest is not None:
            shown = min(max(shown, spares_risk.smallest + SPARES_MARGIN), MOST_SHOWN_SPARES)
        crews_long_run, crews_risk = self._crews(allowed.get("crews", 0))
        self.part_done("crews")
        if crews_risk is None or crews_risk.budget_reached:
            left_out.append("part of the risk by number of repair crews (too much work for one request)")
        spares_long_run = self._spares_by_crews(shown, allowed.get("by_crews", 0))
        self.part_done("by_crews")
        return SparesResult(
            **shared,
            pool=pool,
            expected_operating=pool.expected_operating(),
            expected_units_short=pool.expected_units_short(),
            spares_long_run=spares_long_run,
            spares_risk=spares_risk,
            crews_long_run=crews_long_run,
            crews_risk=crews_risk,
            spares_for_availability=availability_scan.smallest,
            crews_for_availability=crews_long_run.smallest if crews_long_run is not None else None,
            availability_searched_to=availability_scan.searched_to,
            left_out=tuple(left_out),
        )

    def _spares_curve(self, shown: int, crews: int, *, availability: bool) -> PoolSizing:
        """Long-run figures for spares 0..shown (cheap: no mission); with ``availability`` the
        fewest spares up to ``MOST_SPARES`` meeting the availability target too."""
        params = self.params
        return wm.spares_curve(
            params.units,
            params.failure_rate,
            params.repair_rate,
            crews,
            warm_failure_rate=params.warm_failure_rate,
            availability_target=params.availability_target if availability else None,
            shown=shown,
            most=MOST_SPARES if availability else shown,
        )

    def _spares_by_crews(self, shown: int, budget: int) -> dict[int, PoolSizing]:
        """Long-run figures for spares 0..shown with the pool's crews, and with one crew fewer and one
        more as far as ``budget`` allows (a shorter line, or none, beyond it)."""
        params = self.params
        curves = {params.crews: self._spares_curve(shown, params.crews, availability=False)}
        for crews in (params.crews - 1, params.crews + 1):
            if crews < 1:
                continue
            try:
                curves[crews] = wm.spares_curve(
                    params.units,
                    params.failure_rate,
                    params.repair_rate,
                    crews,
                    warm_failure_rate=params.warm_failure_rate,
                    shown=shown,
                    most=shown,
                    cap=budget // 2,
                )
            except wm.ComputeTooLarge:
                continue
        return dict(sorted(curves.items()))

    def _spares_risk(self, budget: int, shown: int) -> PoolSizing | None:
        params = self.params
        try:
            return wm.spares_curve(
                params.units,
                params.failure_rate,
                params.repair_rate,
                params.crews,
                warm_failure_rate=params.warm_failure_rate,
                risk_target=self.risk_target,
                mission_time=params.mission,
                shown=shown,
                most=MOST_SHOWN_SPARES,
                cap=budget,
            )
        except wm.ComputeTooLarge:
            return None

    def _crews(self, budget: int) -> tuple[PoolSizing | None, PoolSizing | None]:
        """Long-run figures by crews with the fewest meeting the availability target, then the mission
        risk by crews, both within ``budget``."""
        params = self.params
        common = {"warm_failure_rate": params.warm_failure_rate, "most": self.most_crews}
        arguments = (params.units, params.spares, params.failure_rate, params.repair_rate)
        try:
            long_run = wm.crews_curve(
                *arguments,
                availability_target=params.availability_target,
                shown=min(self.most_crews, params.crews + 2),
                cap=budget,
                **common,
            )
        except wm.ComputeTooLarge:
            return None, None
        try:
            risk = wm.crews_curve(
                *arguments,
                risk_target=self.risk_target,
                mission_time=params.mission,
                shown=int(long_run.counts[-1]),
                cap=budget - long_run.work,
                **common,
            )
        except wm.ComputeTooLarge:
            risk = None
        return long_run, risk


def _search_bound(curve: int, beyond: int, near: int, far: int) -> int:
    """Most work of a sizing search (``walkmath.sparesizing``): ``curve`` candidates on its curve and
    up to ``MOST_EXTRA`` carried on past it at about ``near`` each, a gallop and a bisection over the
    ``beyond`` past it at most ``far`` each."""
    steps = math.ceil(math.log2(beyond + 1)) if beyond > 0 else 0
    return (curve + min(beyond, MOST_EXTRA)) * near + (2 * steps + 1) * far
