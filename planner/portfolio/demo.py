"""The demo portfolio (fixtures/demo_portfolio_store.csv), loaded for the demo account and started.

Loading stores the rows and queues the run; the worker that ``make run`` starts beside the web server
works it out in the background (about half a minute on one core), so loading stays quick. A run already
loaded is left as it is.
"""

from __future__ import annotations

from pathlib import Path

from django.conf import settings

from planner.portfolio import services
from planner.portfolio.items_file import read_items
from planner.portfolio.models import PortfolioRun

DEMO_FILE = Path(settings.BASE_DIR) / "fixtures" / "demo_portfolio_store.csv"
TITLE = "Store and spares shelf"


def load_demo_portfolio(user) -> PortfolioRun:
    """The demo run of ``user``: created and queued when missing, otherwise the one already there."""
    existing = PortfolioRun.objects.filter(owner=user, title=TITLE).first()
    if existing is not None:
        return existing
    with DEMO_FILE.open("rb") as file:
        parsed = read_items(file, name=DEMO_FILE.name)
    run = services.run_create(owner=user, title=TITLE, parsed=parsed, file_name=DEMO_FILE.name)
    return services.run_start(run=run)
