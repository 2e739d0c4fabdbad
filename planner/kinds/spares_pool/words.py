"""The spares pool's own words: its standby kinds (time units and durations are shared: ``planner.pool_words``)."""

from __future__ import annotations

STANDBY_KINDS = {
    "cold": "Cold: spares on the shelf do not fail while they wait",
    "warm": "Warm: spares fail while they wait, less often than in service",
    "hot": "Hot: spares run alongside and fail as often as units in service",
}
