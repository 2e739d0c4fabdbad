"""Design of a periodic-review (s, S) policy: the smallest levels meeting a service target, the cheapest pair.

The public names live here; the work is in three modules, each read on its own:

* walkmath/reviewshared.py: the result types (``LevelSearch``, ``PolicyChoice``), the pieces every
  search shares (renewal weights, lead-time demand, drop laws, stacked chains) and a search's price;
* walkmath/reviewlevels.py: the smallest order-up-to level and the smallest reorder level, with the
  proof (facts 1 and 2) behind the bisection for lost sales with a lead time;
* walkmath/reviewcheapest.py: the cheapest (s, S) on a grid, with an optional service target.

Their prices before they run: walkmath/reviewcost.py.
"""

from __future__ import annotations

from walkmath.reviewcheapest import PRICE_CAP, best_policy
from walkmath.reviewlevels import GRID_POINTS, LOST_EDGE, smallest_order_up_to, smallest_reorder_level
from walkmath.reviewshared import MEASURES, LevelSearch, PolicyChoice

__all__ = [
    "GRID_POINTS",
    "LOST_EDGE",
    "MEASURES",
    "PRICE_CAP",
    "LevelSearch",
    "PolicyChoice",
    "best_policy",
    "smallest_order_up_to",
    "smallest_reorder_level",
]
