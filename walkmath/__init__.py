"""walkmath: exact probabilities for integer random walks in a band.

Pure numerics (numpy and scipy); no web framework. The names exported here are
the stable public surface described in the project's design notes.
"""

from walkmath.distribution import LevelDistribution, level_distribution
from walkmath.steplaw import StepLaw

__all__ = ["LevelDistribution", "StepLaw", "level_distribution"]
