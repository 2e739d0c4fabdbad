"""walkmath: exact probabilities for integer random walks in a band.

Pure numerics (numpy and scipy); no web framework. The names exported here are
the stable public surface described in the project's design notes.
"""

from walkmath.banded import COMPUTE_CAP, BandedWalk, ComputeTooLarge, Outlook, StartRisk
from walkmath.distribution import LevelDistribution, level_distribution
from walkmath.steplaw import StepLaw

__all__ = [
    "COMPUTE_CAP",
    "BandedWalk",
    "ComputeTooLarge",
    "LevelDistribution",
    "Outlook",
    "StartRisk",
    "StepLaw",
    "level_distribution",
]
