"""The one way views fetch a saved history: outsiders get 404, never a hint that it exists.

The same rule as ``planner.permissions.get_scenario_for``; when plans are
shared, histories follow the same rule there.
"""

from django.http import Http404
from django.shortcuts import get_object_or_404

from planner.history.models import SavedHistory


def get_history_for(user, pk: int) -> SavedHistory:
    """The history ``pk`` if ``user`` owns it; Http404 otherwise (one query)."""
    if not user.is_authenticated:
        raise Http404("No such history")
    return get_object_or_404(SavedHistory, pk=pk, owner=user)
