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
from walkmath.distribution import LevelDistribution, law_power, law_power_work, level_distribution
from walkmath.fitting import ChangeFit, CountFit, Estimate, empirical_change_law, fit_count_law
from walkmath.goodness import FrequencyRow, GoodnessOfFit, PooledCell, Recommendation, goodness_of_fit, recommend_law
from walkmath.leadtime import lead_time_demand, reorder_point, safety_stock
from walkmath.longrun import LongOutlook
from walkmath.meantime import MeanTime
from walkmath.passage import first_stockout_times
from walkmath.policy import PeriodicReview, PolicyMeasures, StockoutRisk
from walkmath.pools import FailedLaw, RatePool, TimeSplit
from walkmath.posterior import ChangePosterior, RatePosterior, SpreadPosterior, law_posterior
from walkmath.profile import WeekdayProfile, weekday_profile
from walkmath.repairlog import (
    AvailabilityBand,
    RateEstimate,
    RepairLogFit,
    availability_band,
    availability_band_work,
    fit_repair_log,
    poisson_rate,
)
from walkmath.reviewcost import best_policy_work, order_up_to_work
from walkmath.reviewdesign import LevelSearch, PolicyChoice, best_policy, smallest_order_up_to, smallest_reorder_level
from walkmath.ruin import expected_duration, ruin_probability
from walkmath.service import (
    ReorderPointPlan,
    expected_shortage,
    fill_rate,
    normal_loss,
    normal_reorder_point,
    protection_demand,
    reorder_point_plan,
    reorder_point_plan_work,
    unfilled_share,
)
from walkmath.sizing import CapacityRisk
from walkmath.skellam import continuous_level_distribution
from walkmath.spares import SparesPool
from walkmath.sparesizing import PoolSizing, crews_curve, smallest_crews, smallest_spares, spares_curve
from walkmath.steplaw import StepLaw
from walkmath.uncertainty import RiskBand, risk_band, risk_band_work

__all__ = [
    "AvailabilityBand",
    "RateEstimate",
    "RepairLogFit",
    "availability_band",
    "availability_band_work",
    "fit_repair_log",
    "poisson_rate",
    "BandedWalk",
    "BirthDeath",
    "COMPUTE_CAP",
    "CapacityRisk",
    "ChangeFit",
    "ChangePosterior",
    "ComputeTooLarge",
    "CountFit",
    "Estimate",
    "FailedLaw",
    "FrequencyRow",
    "GoodnessOfFit",
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
    "PooledCell",
    "RatePool",
    "RatePosterior",
    "Recommendation",
    "ReorderPointPlan",
    "RiskBand",
    "SparesPool",
    "SpreadPosterior",
    "StartRisk",
    "StepLaw",
    "StockoutRisk",
    "TimeSplit",
    "TransientLaw",
    "WORK_CAP",
    "WeekdayProfile",
    "Work",
    "best_policy",
    "best_policy_work",
    "brownian_first_passage",
    "checks",
    "continuous_level_distribution",
    "crews_curve",
    "empirical_change_law",
    "expected_duration",
    "expected_shortage",
    "fill_rate",
    "first_stockout_times",
    "fit_count_law",
    "goodness_of_fit",
    "law_posterior",
    "law_power",
    "law_power_work",
    "lead_time_demand",
    "level_distribution",
    "monte_carlo_outlook",
    "normal_level_distribution",
    "normal_loss",
    "normal_stockout_curve",
    "order_up_to_work",
    "protection_demand",
    "recommend_law",
    "reorder_point",
    "normal_reorder_point",
    "reorder_point_plan",
    "reorder_point_plan_work",
    "risk_band",
    "risk_band_work",
    "ruin_probability",
    "safety_stock",
    "smallest_crews",
    "smallest_order_up_to",
    "smallest_reorder_level",
    "smallest_spares",
    "spares_curve",
    "unfilled_share",
    "weekday_profile",
    "wilson_interval",
]
