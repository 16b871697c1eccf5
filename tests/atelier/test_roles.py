"""Staff roles: three groups, one role per person, 403 for the wrong one."""

import pytest
from django.contrib.auth.models import AnonymousUser, Group
from django.core.exceptions import PermissionDenied
from django.http import HttpResponse
from django.test import RequestFactory

from atelier.context_processors import atelier as atelier_context
from atelier.roles import FITTER, OWNER, ROLES, WORKROOM, role_of, role_required

pytestmark = pytest.mark.django_db


@role_required(FITTER, OWNER)
def fitters_only(request):
    return HttpResponse("ok")


def request_by(user):
    request = RequestFactory().get("/somewhere/")
    request.user = user
    return request


def test_it_creates_the_three_groups_in_a_migration():
    assert set(Group.objects.values_list("name", flat=True)) >= {"owner", "fitter", "workroom"}
    assert ROLES == ("owner", "fitter", "workroom")


def test_it_names_each_users_role(owner_user, fitter_user, workroom_user, make_user, django_user_model):
    assert role_of(owner_user) == OWNER
    assert role_of(fitter_user) == FITTER
    assert role_of(workroom_user) == WORKROOM
    assert role_of(make_user(None)) is None
    assert role_of(AnonymousUser()) is None
    assert role_of(django_user_model.objects.create_superuser("root", password="a-long-test-password")) == OWNER


def test_it_gives_the_higher_role_to_someone_in_two_groups(make_user):
    user = make_user(WORKROOM)
    user.groups.add(Group.objects.get(name=FITTER))
    assert role_of(user) == FITTER


def test_it_gives_no_role_to_an_inactive_account(make_user):
    assert role_of(make_user(FITTER, is_active=False)) is None


def test_it_lets_the_right_roles_through(fitter_user, owner_user):
    assert fitters_only(request_by(fitter_user)).status_code == 200
    assert fitters_only(request_by(owner_user)).status_code == 200


def test_it_refuses_the_wrong_role_with_403(workroom_user, make_user):
    with pytest.raises(PermissionDenied):
        fitters_only(request_by(workroom_user))
    with pytest.raises(PermissionDenied):
        fitters_only(request_by(make_user(None)))


def test_it_sends_an_anonymous_visitor_to_the_login():
    response = fitters_only(request_by(AnonymousUser()))
    assert response.status_code == 302
    assert response["Location"].startswith("/login/?next=")


def test_it_refuses_unknown_role_names():
    with pytest.raises(ValueError, match="role names"):
        role_required("tailor")
    with pytest.raises(ValueError):
        role_required()


def test_it_puts_the_name_and_role_in_every_template(fitter_user, settings):
    assert atelier_context(request_by(fitter_user)) == {
        "ATELIER_NAME": settings.ATELIER_NAME,
        "role": FITTER,
        "role_label": "Fitter",
    }
    assert atelier_context(request_by(AnonymousUser()))["role"] is None
