"""walkmath: exact probabilities for integer random walks in a band.

Pure numerics (numpy and scipy); no web framework. The names exported here are
the stable public surface described in the project's design notes.
"""

from walkmath.banded import COMPUTE_CAP, BandedWalk, ComputeTooLarge, Outlook, StartRisk
from walkmath.distribution import LevelDistribution, law_power, level_distribution
from walkmath.longrun import LongOutlook
from walkmath.passage import first_stockout_times
from walkmath.ruin import expected_duration, ruin_probability
from walkmath.steplaw import StepLaw

__all__ = [
    "COMPUTE_CAP",
    "BandedWalk",
    "ComputeTooLarge",
    "LevelDistribution",
    "LongOutlook",
    "Outlook",
    "StartRisk",
    "StepLaw",
    "expected_duration",
    "first_stockout_times",
    "law_power",
    "level_distribution",
    "ruin_probability",
]
