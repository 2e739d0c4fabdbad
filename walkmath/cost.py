"""The engine's cost model: work in level·period·jump units, checked before any work.

A banded sweep costs, per period and per state copy it carries, one pass over
the levels that can hold mass for every jump of the period's law (one
``np.convolve``, about 5e9 units a second on one core), plus a fixed charge for
the period's bookkeeping (a few dozen numpy calls, about 10 microseconds,
``PERIOD_OVERHEAD`` units). Dense products (operator squaring, elimination)
cost levels³ units each. Every public method prices its work with these rules
and raises ``ComputeTooLarge`` naming the knob to turn when it exceeds the cap;
callers with a tighter budget (a web request) price the same ``Work`` against
their own cap.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

COST_METHODS = (
    "outlook",
    "level_probs",
    "risk_by_start",
    "smallest_start",
    "smallest_capacity",
    "outlook_at",
    "mean_time",
    "first_passage",
)

# Largest work one engine call accepts: about 5 s on one core.
WORK_CAP = 20_000_000_000
# Largest number of levels x state copies one call holds in memory at once (400 MB of floats).
LEVELS_CAP = 50_000_000
# Fixed cost of one period of a sweep, in the same units (about 10 microseconds).
PERIOD_OVERHEAD = 50_000


class ComputeTooLarge(ValueError):
    """The priced work exceeds the cap; the message names what to shorten, narrow or coarsen."""


@dataclass(frozen=True)
class Work:
    """Priced work of one method call: ``units`` in level·period·jump units."""

    method: str
    levels: int
    periods: int
    jumps: int
    copies: int = 1  # state copies carried through the sweep (first-passage copies, stock-out and overflow)
    dense: int = 0  # extra units of dense linear algebra (squarings, eliminations)
    knob: str = "shorten the horizon, narrow the band (capacity) or coarsen the units"

    @property
    def units(self) -> int:
        return self.copies * self.periods * (self.levels * self.jumps + PERIOD_OVERHEAD) + self.dense

    def __add__(self, other: Work) -> Work:
        """The work of both calls: the part with more units, carrying the other's units as dense extra, so
        units add up exactly (never the product of one part's levels and another's periods)."""
        larger, smaller = (self, other) if self.units >= other.units else (other, self)
        return replace(larger, method=f"{self.method} + {other.method}", dense=larger.dense + smaller.units)

    def check(self, cap: int = WORK_CAP) -> Work:
        """Return self, or raise ``ComputeTooLarge`` when ``units`` exceeds ``cap`` or the levels held
        in memory exceed ``LEVELS_CAP``."""
        if self.levels * max(self.copies, 1) > LEVELS_CAP:
            raise ComputeTooLarge(
                f"{self.method} needs {self.levels:,} levels in memory; the limit is "
                f"{LEVELS_CAP // max(self.copies, 1):,} here. To fit, {self.knob}."
            )
        if self.units > cap:
            raise ComputeTooLarge(
                f"{self.method} needs {_short(self.units)} units of work ({self.levels:,} levels x "
                f"{self.periods:,} periods x {self.jumps:,} jumps); the limit is {cap:.3g}. "
                f"To fit, {self.knob}."
            )
        return self


def price(walk, horizon: int, method: str) -> Work:
    """Work of ``method`` on ``walk`` over ``horizon`` periods (each module prices its own method)."""
    return walk._price(horizon, method)


def _short(units: int) -> str:
    """A work figure in three digits, for integers too large for a float as well."""
    return f"{units:.3g}" if units < 1e300 else f"about 10^{len(str(units)) - 1}"
