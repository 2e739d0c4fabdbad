"""get_history_for: the owner gets the history; an outsider, an anonymous visitor or a missing one get 404."""

import pytest
from django.contrib.auth.models import AnonymousUser
from django.http import Http404

from planner.history.permissions import get_history_for

pytestmark = pytest.mark.django_db


def test_owner_gets_the_history(history, owner):
    assert get_history_for(owner, history.pk) == history


@pytest.mark.parametrize("who", ["outsider", "anonymous", "missing"])
def test_everyone_else_gets_404(history, outsider, who):
    user = {"outsider": outsider, "anonymous": AnonymousUser(), "missing": history.owner}[who]
    pk = history.pk + 1000 if who == "missing" else history.pk
    with pytest.raises(Http404):
        get_history_for(user, pk)
