"""Our own error pages: plain words, a way back, never the framework's debug page."""

import pytest
from django.contrib.auth.models import AnonymousUser
from django.core.exceptions import PermissionDenied
from django.template.loader import get_template
from django.test import RequestFactory
from django.urls import reverse
from django.views import defaults
from django.views.csrf import csrf_failure

pytestmark = pytest.mark.django_db


def test_unknown_address_gets_our_404_with_a_way_back(client, owner):
    client.force_login(owner)
    response = client.get("/no/such/page/")
    body = response.content.decode()
    assert response.status_code == 404
    assert 'data-error-page="404"' in body
    assert f'href="{reverse("scenario_list")}"' in body
    assert "URLconf" not in body  # the debug page lists every URL pattern


def test_403_page_extends_the_site_layout(rf_user):
    response = defaults.permission_denied(rf_user, PermissionDenied("read-only member"))
    body = response.content.decode()
    assert response.status_code == 403
    assert 'data-error-page="403"' in body and 'class="masthead"' in body
    assert "read-only member" not in body  # the exception text is for the log, not the page


def test_500_page_renders_without_any_request_context():
    # Django renders 500.html with an empty context: no request, no user, no context processors.
    body = get_template("500.html").render()
    assert 'data-error-page="500"' in body and 'href="/"' in body


def test_server_error_view_uses_our_page(rf_user):
    response = defaults.server_error(rf_user)
    assert response.status_code == 500
    assert 'data-error-page="500"' in response.content.decode()


def test_expired_form_gets_our_page(rf_user):
    response = csrf_failure(rf_user, reason="CSRF token missing.")
    body = response.content.decode()
    assert response.status_code == 403 and 'data-error-page="403"' in body and 'href="/"' in body


@pytest.fixture
def rf_user():
    request = RequestFactory().get("/somewhere/")
    request.user = AnonymousUser()
    return request
