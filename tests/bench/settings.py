"""Settings for the benchmark server only: the app's own settings plus two floor pages.

Loaded by ``tests/bench/run_all.py`` (DJANGO_SETTINGS_MODULE=tests.bench.settings), never
by the app.  The floor pages and the Server-Timing header exist only here.
"""

from atelier.settings import *  # noqa: F401,F403
from atelier.settings import BASE_DIR, MIDDLEWARE, TEMPLATES

ROOT_URLCONF = "tests.bench.urls"
# First, so the time it reports covers every other middleware and the view.
MIDDLEWARE = ["tests.bench.middleware.server_timing", *MIDDLEWARE]
TEMPLATES = [{**TEMPLATES[0], "DIRS": [*TEMPLATES[0]["DIRS"], BASE_DIR / "tests" / "bench" / "templates"]}]
