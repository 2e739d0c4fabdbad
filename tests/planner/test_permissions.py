"""planner/permissions.py: one helper knows the roles; outsiders 404, lesser roles 403."""

import pytest
from django.contrib.auth.models import AnonymousUser, Group
from django.core.exceptions import PermissionDenied
from django.http import Http404

from planner import services
from planner.permissions import EDIT, OWN, VIEW, get_scenario_for, role_of, shared_with

pytestmark = pytest.mark.django_db

ROLES = {
    "owner": "owner",
    "editor": "editor",
    "viewer": "viewer",
    "group editor": "editor",
    "group viewer": "viewer",
    "outsider": None,
    "anonymous": None,
}
# What each role may do: (view, edit, own)
MAY = {"owner": (1, 1, 1), "editor": (1, 1, 0), "viewer": (1, 0, 0)}


def user_of(cast, who):
    return cast[who] or AnonymousUser()


@pytest.mark.parametrize("who", ROLES)
def test_each_role_is_known(scenario, cast, who):
    assert role_of(user_of(cast, who), scenario) == ROLES[who]


@pytest.mark.parametrize("who", ROLES)
@pytest.mark.parametrize(("need", "index"), [(VIEW, 0), (EDIT, 1), (OWN, 2)])
def test_outsiders_get_404_and_lesser_roles_403(scenario, cast, who, need, index):
    user = user_of(cast, who)
    role = ROLES[who]
    if role is None:
        with pytest.raises(Http404):
            get_scenario_for(user, scenario.pk, need)
    elif MAY[role][index]:
        found = get_scenario_for(user, scenario.pk, need)
        assert found == scenario and found.access.role == role
    else:
        with pytest.raises(PermissionDenied):
            get_scenario_for(user, scenario.pk, need)


def test_a_missing_plan_is_404_for_everyone(scenario, cast):
    for who in ROLES:
        with pytest.raises(Http404):
            get_scenario_for(user_of(cast, who), scenario.pk + 1000)


@pytest.mark.parametrize("pk", [2**63 - 1, 2**63, 10**30])
def test_a_key_past_the_databases_integers_is_a_missing_plan(scenario, cast, client, pk):
    # The address takes any digits; the ORM's own lookup finds no such row (Django 5's integer lookups).
    with pytest.raises(Http404):
        get_scenario_for(cast["owner"], pk)
    client.force_login(cast["owner"])
    assert client.get(f"/scenarios/{pk}/outlook.json").status_code == 404


def test_the_plan_read_by_key_holds_every_saved_field(scenario, cast):
    found = get_scenario_for(cast["owner"], scenario.pk)
    saved = type(scenario).objects.get(pk=scenario.pk)  # the ORM's own lookup (reference)
    assert {f.attname: getattr(found, f.attname) for f in saved._meta.concrete_fields} == {
        f.attname: getattr(saved, f.attname) for f in saved._meta.concrete_fields
    }
    assert found.owner == cast["owner"] and found.access.role == OWN


def test_the_highest_role_wins(scenario, cast):
    viewer = cast["viewer"]
    viewer.groups.add(Group.objects.get(name="Ovens"))  # a viewer in a group of editors
    assert role_of(viewer, scenario) == "editor"
    editor = cast["editor"]
    editor.groups.add(Group.objects.get(name="Counter"))  # an editor in a group of viewers
    assert role_of(editor, scenario) == "editor"


def test_leaving_the_group_or_losing_the_share_ends_access(scenario, cast):
    member = cast["group editor"]
    member.groups.clear()
    assert role_of(member, scenario) is None
    share = scenario.shares.get(user=cast["viewer"])
    services.share_remove(share=share)
    assert role_of(cast["viewer"], scenario) is None


def test_shared_with_lists_each_plan_once_with_the_highest_role(scenario, cast, small_params):
    viewer = cast["viewer"]
    viewer.groups.add(Group.objects.get(name="Ovens"), Group.objects.get(name="Counter"))
    found = shared_with(viewer)
    assert found == [scenario] and found[0].access.role == "editor"
    own = services.scenario_create(owner=viewer, kind="stock_plan", title="Cai's own", params=small_params)
    services.share_set(scenario=own, group=Group.objects.get(name="Ovens"), role="viewer")
    assert shared_with(viewer) == [scenario]  # a plan of one's own is not "shared with me"
    assert shared_with(cast["outsider"]) == []


def test_a_share_names_one_user_or_one_group_and_not_the_owner(scenario, cast):
    from django.core.exceptions import ValidationError

    with pytest.raises(ValidationError):
        services.share_set(scenario=scenario, user=scenario.owner, role="viewer")
    with pytest.raises(ValidationError):
        services.share_set(scenario=scenario, role="viewer")  # neither
    with pytest.raises(ValidationError):
        services.share_set(scenario=scenario, user=cast["outsider"], role="admin")
    again = services.share_set(scenario=scenario, user=cast["viewer"], role="editor")  # a change, not a second share
    assert scenario.shares.filter(user=cast["viewer"]).get() == again and again.role == "editor"
