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

# The private helpers aliased to themselves are re-exported for the prices (walkmath/reviewcost.py) and the tests.
from walkmath.reviewcheapest import PRICE_CAP, best_policy
from walkmath.reviewcheapest import _cells as _cells
from walkmath.reviewcheapest import _policy_grid as _policy_grid
from walkmath.reviewcheapest import _price as _price
from walkmath.reviewlevels import GRID_POINTS, LOST_EDGE, smallest_order_up_to, smallest_reorder_level
from walkmath.reviewlevels import _at_gap as _at_gap
from walkmath.reviewlevels import _base_stock_bound as _base_stock_bound
from walkmath.reviewlevels import _inside as _inside
from walkmath.reviewlevels import _lost_solves_work as _lost_solves_work
from walkmath.reviewlevels import _order_up_to_grid as _order_up_to_grid
from walkmath.reviewshared import MEASURES, LevelSearch, PolicyChoice
from walkmath.reviewshared import _search_work as _search_work
from walkmath.reviewshared import _Shared as _Shared

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
