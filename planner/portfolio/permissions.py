"""The one way views fetch a portfolio run, by the same rules as plans (``planner.permissions``).

The owner starts, cancels, shares and deletes it; a viewer (shared with them,
or with a group they are in) sees it and downloads its results; anyone else
gets 404, never a hint that it exists, and a viewer asking to change it 403.
"""

from __future__ import annotations

from django.core.exceptions import PermissionDenied
from django.db.models import Q
from django.http import Http404

from planner.permissions import OWN, VIEW, Access
from planner.portfolio.models import PortfolioRun

__all__ = ["OWN", "VIEW", "get_run_for", "runs_visible_to"]


def runs_visible_to(user):
    """Runs ``user`` owns or that are shared with them or one of their groups (a queryset)."""
    reach = Q(owner=user) | Q(viewers=user) | Q(viewer_groups__in=user.groups.all())
    return PortfolioRun.objects.filter(reach).distinct()


def get_run_for(user, pk: int, need: str = VIEW) -> PortfolioRun:
    """The run ``pk`` with ``.access`` set; Http404 when ``user`` may not see it, PermissionDenied when
    their role is below ``need``."""
    run = runs_visible_to(user).filter(pk=pk).select_related("owner").first() if user.is_authenticated else None
    if run is None:
        raise Http404("No such portfolio run")
    run.access = Access(OWN if run.owner_id == user.pk else VIEW)
    if not run.access.allows(need):
        raise PermissionDenied("only the run's owner may do this")
    return run
