"""A real Chromium (Debian's /usr/bin/chromium) driven by Playwright, at a tablet's size with touch.

Locally the browser tests skip when Chromium is absent; in CI (CI=true) they fail instead,
because .ci/run installs it.
"""

import os
import shutil
from pathlib import Path

import pytest

from tests.conftest import DEMO_PASSWORD

CHROMIUM = os.environ.get("ATELIER_CHROMIUM", "/usr/bin/chromium")
ARTIFACTS = Path(__file__).resolve().parents[2] / "test-artifacts" / "browser"
# A 10-inch tablet held upright (CSS pixels).
TABLET = {"width": 800, "height": 1280}


def _chromium_missing():
    return not (Path(CHROMIUM).exists() or shutil.which(CHROMIUM))


@pytest.fixture(scope="module")
def browser():
    if _chromium_missing():
        if os.environ.get("CI"):
            pytest.fail(f"Chromium is required in CI but {CHROMIUM} is missing; .ci/run should install it.")
        pytest.skip(f"Chromium not found at {CHROMIUM}; install Debian's chromium to run the browser tests.")
    from playwright.sync_api import sync_playwright

    # Playwright's sync API runs an event loop in this thread; Django's ORM must be told it is safe here.
    before = os.environ.get("DJANGO_ALLOW_ASYNC_UNSAFE")
    os.environ["DJANGO_ALLOW_ASYNC_UNSAFE"] = "true"
    try:
        yield from _launch(sync_playwright)
    finally:
        if before is None:
            os.environ.pop("DJANGO_ALLOW_ASYNC_UNSAFE", None)
        else:
            os.environ["DJANGO_ALLOW_ASYNC_UNSAFE"] = before


def _launch(sync_playwright):
    with sync_playwright() as playwright:
        browser = playwright.chromium.launch(
            executable_path=CHROMIUM,
            args=[
                "--no-sandbox",
                "--disable-gpu",
                "--disable-quic",
                "--no-first-run",
                "--disable-background-networking",
                "--disable-component-update",
                "--disable-sync",
            ],
        )
        yield browser
        browser.close()


@pytest.fixture
def tablet(browser, request):
    context = browser.new_context(viewport=TABLET, has_touch=True, is_mobile=True, device_scale_factor=1)
    page = context.new_page()
    page.set_default_timeout(30_000)
    shots = ARTIFACTS / request.node.name
    shots.mkdir(parents=True, exist_ok=True)
    counter = iter(range(1, 100))

    def snap(name):
        page.screenshot(path=str(shots / f"{next(counter):02d}-{name}.png"), full_page=True)

    page.snap = snap
    yield page
    context.close()


def sign_in(page, live_server, username="demo", password=DEMO_PASSWORD, lands_on="/"):
    """Sign in on the login page, as a fitter would, and wait for the page it leads to."""
    page.goto(f"{live_server.url}/login/")
    page.fill("input[name=username]", username)
    page.fill("input[name=password]", password)
    page.tap("button[type=submit]")
    page.wait_for_url(f"{live_server.url}{lands_on}")


def fill_in(page, **fields):
    """Type each value into the form field of that name (Django's ``#id_<name>``)."""
    for name, text in fields.items():
        page.fill(f"#id_{name}", text)
