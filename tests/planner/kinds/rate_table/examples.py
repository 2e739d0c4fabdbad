"""Rate-table pools the tests share."""

from planner.kinds.rate_table.params import RateTableParams

# The demo's dough mixers (fixtures/demo_scenarios.json): four mixers, three needed, a contractor
# who slows down when two or more wait; a week's mission from all working.
MIXERS = RateTableParams(
    failure_rates=(0.006, 0.006, 0.006, 0.004, 0.0),
    repair_rates=(0.0, 0.08, 0.05, 0.04, 0.04),
    shortage_at=2,
    mission=168.0,
    availability_target=0.995,
)
