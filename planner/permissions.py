"""The one way views fetch a scenario: outsiders get 404, never a hint that it exists."""

from django.http import Http404
from django.shortcuts import get_object_or_404

from planner.models import Scenario


def get_scenario_for(user, pk: int) -> Scenario:
    """The scenario ``pk`` if ``user`` owns it; Http404 otherwise (one query).

    Only owners see or change a scenario in this version; sharing with read-only
    members will add a 403 for their writes here.
    """
    if not user.is_authenticated:
        raise Http404("No such scenario")
    return get_object_or_404(Scenario, pk=pk, owner=user)
