"""The rest of the cast for shared plans: Olwen's plan shared with people and with a group, in each role."""

import pytest
from django.contrib.auth.models import Group

from planner import services
from tests.conftest import PASSWORD


@pytest.fixture
def cast(scenario, django_user_model, outsider):
    """Everyone who may ask for Olwen's plan, by role (anonymous is None); the plan is shared with:

    Bryn (editor), Cai (viewer), the group "Ovens" as editors (Dilys in it) and the group "Counter" as
    viewers (Efa in it). Ivo is the outsider.
    """
    make = django_user_model.objects.create_user
    people = {
        "owner": scenario.owner,
        "editor": make("bryn", password=PASSWORD),
        "viewer": make("cai", password=PASSWORD),
        "group editor": make("dilys", password=PASSWORD),
        "group viewer": make("efa", password=PASSWORD),
        "outsider": outsider,
        "anonymous": None,
    }
    ovens, counter = Group.objects.create(name="Ovens"), Group.objects.create(name="Counter")
    people["group editor"].groups.add(ovens)
    people["group viewer"].groups.add(counter)
    services.share_set(scenario=scenario, user=people["editor"], role="editor")
    services.share_set(scenario=scenario, user=people["viewer"], role="viewer")
    services.share_set(scenario=scenario, group=ovens, role="editor")
    services.share_set(scenario=scenario, group=counter, role="viewer")
    return people
