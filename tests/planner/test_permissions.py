import pytest
from django.contrib.auth.models import AnonymousUser
from django.http import Http404

from planner.permissions import get_scenario_for

pytestmark = pytest.mark.django_db


def test_owner_gets_the_scenario(scenario, owner):
    assert get_scenario_for(owner, scenario.pk) == scenario


@pytest.mark.parametrize("who", ["outsider", "anonymous", "missing"])
def test_everyone_else_gets_404(scenario, outsider, who):
    user = {"outsider": outsider, "anonymous": AnonymousUser(), "missing": scenario.owner}[who]
    pk = scenario.pk + 1000 if who == "missing" else scenario.pk
    with pytest.raises(Http404):
        get_scenario_for(user, pk)
