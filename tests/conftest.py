"""Shared fixtures: staff users per role, signed-in test clients, the demo atelier."""

import threading

import pytest
from django.contrib.auth.models import Group
from django.core.servers.basehttp import ThreadedWSGIServer
from django.test.testcases import LiveServerThread

from atelier.roles import FITTER, OWNER, WORKROOM
from fittings.models import Client
from fittings.services import plans as plan_services
from patterns.models import BasePattern

DEMO_PASSWORD = "tape-and-pins-42"


@pytest.fixture(scope="session", autouse=True)
def _static_root_for_the_live_server(tmp_path_factory):
    """The browser tests' live server loads the static-file middleware once, before any test's own
    settings; on a fresh checkout it would find no collected static folder and warn."""
    from django.conf import settings

    settings.STATIC_ROOT = tmp_path_factory.mktemp("static")


@pytest.fixture(autouse=True)
def _test_files(settings, tmp_path):
    """Plain static storage (no collectstatic needed), throwaway folders, quick password hashing."""
    settings.STORAGES = {
        **settings.STORAGES,
        "staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.StaticFilesStorage"},
    }
    settings.MEDIA_ROOT = tmp_path / "private"
    settings.STATIC_ROOT = tmp_path / "static"
    settings.STATIC_ROOT.mkdir()
    # Real hashing takes most of a second per password.
    settings.PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]


@pytest.fixture
def make_user(django_user_model):
    """make_user("fitter") -> a saved user in that role's group (role=None: no group)."""
    counter = iter(range(1, 10_000))

    def make(role=None, username=None, password="a-long-test-password", **fields):
        user = django_user_model.objects.create_user(
            username or f"{role or 'nobody'}{next(counter)}",
            password=password,
            **fields,
        )
        if role:
            user.groups.add(Group.objects.get_or_create(name=role)[0])
        return user

    return make


@pytest.fixture
def owner_user(make_user):
    return make_user(OWNER)


@pytest.fixture
def fitter_user(make_user):
    return make_user(FITTER)


@pytest.fixture
def workroom_user(make_user):
    return make_user(WORKROOM)


@pytest.fixture
def fitter_client(client, fitter_user):
    """The Django test client, signed in as a fitter."""
    client.force_login(fitter_user)
    return client


@pytest.fixture
def owner_client(client, owner_user):
    client.force_login(owner_user)
    return client


@pytest.fixture
def workroom_client(client, workroom_user):
    client.force_login(workroom_user)
    return client


@pytest.fixture
def demo_atelier(db):
    """The invented demo atelier, loaded; the demo login's password is DEMO_PASSWORD."""
    from fittings.services.demo import load_demo_atelier

    loaded = load_demo_atelier(password=DEMO_PASSWORD)
    assert loaded is not None
    return loaded


@pytest.fixture
def bodice_pattern(db):
    """The demo bodice block, stored."""
    from patterns import demo
    from patterns.services import save_block

    return save_block(demo.bodice_block())


# --- the demo's plan to work on (fittings and security tests) ---------------------------------


@pytest.fixture
def reducing_client(demo_atelier):
    """The demo client who asks for a strong reduction (two sessions, read in inches)."""
    return Client.objects.get(reference="WF-0102")


@pytest.fixture
def corset_12(demo_atelier):
    return BasePattern.objects.get(garment="overbust corset", size_label="12")


@pytest.fixture
def plan(reducing_client, corset_12, fitter_user):
    session = reducing_client.sessions.order_by("-taken_on").first()
    return plan_services.start_plan(
        client=reducing_client, session=session, pattern=corset_12, garment="Daily corset", user=fitter_user
    )


# --- the live server answers one request at a time ------------------------------------------------
# Django's live server hands every request thread the test run's one in-memory SQLite connection; a
# page whose htmx requests arrive together (a revision's preview, checks and fabric-layout card) then
# used it from two threads at once (sqlite3.InterfaceError, a 500 the browser tests waited on).


class _OneRequestAtATime(ThreadedWSGIServer):
    _lock = threading.Lock()

    def set_app(self, application):
        def serial(environ, start_response):
            with self._lock:
                result = application(environ, start_response)
                try:
                    return [b"".join(result)]
                finally:
                    close = getattr(result, "close", None)
                    if close is not None:
                        close()

        super().set_app(serial)


LiveServerThread.server_class = _OneRequestAtATime
