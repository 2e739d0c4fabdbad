"""The one way views fetch a saved repair log: outsiders get 404, as for histories and plans."""

from django.http import Http404
from django.shortcuts import get_object_or_404

from planner.repairlog.models import SavedRepairLog


def get_repairlog_for(user, pk: int) -> SavedRepairLog:
    """The repair log ``pk`` if ``user`` owns it; Http404 otherwise (one query)."""
    if not user.is_authenticated:
        raise Http404("No such repair log")
    return get_object_or_404(SavedRepairLog, pk=pk, owner=user)
