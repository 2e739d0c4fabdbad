"""walkmath: exact probabilities for integer random walks in a band.

Pure numerics (numpy and scipy); no web framework. The names exported here are
the stable public surface described in the project's design notes.
"""

from walkmath import checks
from walkmath.banded import COMPUTE_CAP, BandedWalk, Outlook, StartRisk
from walkmath.compare import (
    MonteCarloOutlook,
    brownian_first_passage,
    monte_carlo_outlook,
    normal_level_distribution,
    normal_stockout_curve,
    wilson_interval,
)
from walkmath.continuous import BirthDeath, TransientLaw
from walkmath.cost import WORK_CAP, ComputeTooLarge, Work
from walkmath.distribution import LevelDistribution, law_power, level_distribution
from walkmath.leadtime import lead_time_demand, reorder_point, safety_stock
from walkmath.longrun import LongOutlook
from walkmath.meantime import MeanTime
from walkmath.passage import first_stockout_times
from walkmath.policy import PeriodicReview, PolicyMeasures, StockoutRisk
from walkmath.pools import FailedLaw, RatePool, TimeSplit
from walkmath.reviewdesign import LevelSearch, PolicyChoice, best_policy, smallest_order_up_to, smallest_reorder_level
from walkmath.ruin import expected_duration, ruin_probability
from walkmath.service import (
    ReorderPointPlan,
    expected_shortage,
    fill_rate,
    normal_loss,
    protection_demand,
    reorder_point_plan,
    unfilled_share,
)
from walkmath.sizing import CapacityRisk
from walkmath.skellam import continuous_level_distribution
from walkmath.spares import SparesPool
from walkmath.sparesizing import PoolSizing, crews_curve, smallest_crews, smallest_spares, spares_curve
from walkmath.steplaw import StepLaw

__all__ = [
    "BandedWalk",
    "BirthDeath",
    "COMPUTE_CAP",
    "CapacityRisk",
    "ComputeTooLarge",
    "FailedLaw",
    "LevelDistribution",
    "LevelSearch",
    "LongOutlook",
    "MeanTime",
    "MonteCarloOutlook",
    "Outlook",
    "PeriodicReview",
    "PolicyChoice",
    "PolicyMeasures",
    "PoolSizing",
    "RatePool",
    "ReorderPointPlan",
    "SparesPool",
    "StartRisk",
    "StepLaw",
    "StockoutRisk",
    "TimeSplit",
    "TransientLaw",
    "WORK_CAP",
    "Work",
    "best_policy",
    "brownian_first_passage",
    "checks",
    "continuous_level_distribution",
    "crews_curve",
    "expected_duration",
    "expected_shortage",
    "fill_rate",
    "first_stockout_times",
    "law_power",
    "lead_time_demand",
    "level_distribution",
    "monte_carlo_outlook",
    "normal_level_distribution",
    "normal_loss",
    "normal_stockout_curve",
    "protection_demand",
    "reorder_point",
    "reorder_point_plan",
    "ruin_probability",
    "safety_stock",
    "smallest_crews",
    "smallest_order_up_to",
    "smallest_reorder_level",
    "smallest_spares",
    "spares_curve",
    "unfilled_share",
    "wilson_interval",
]
