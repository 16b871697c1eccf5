"""Settings for the atelier, read from the environment with safe defaults.

Every variable is listed, with its default, in README.md ("Configuration").
Nothing here needs editing for an ordinary install: set environment
variables instead.
"""

import os
import secrets
import tempfile
from datetime import timedelta
from pathlib import Path

import dj_database_url
from django.core.exceptions import ImproperlyConfigured
from django.utils.csp import CSP

from patterns import demo

BASE_DIR = Path(__file__).resolve().parent.parent

_TRUE = {"1", "true", "yes", "on"}
_FALSE = {"", "0", "false", "no", "off"}


def env_bool(name, default=False):
    value = os.environ.get(name)
    if value is None:
        return default
    value = value.strip().lower()
    if value in _TRUE:
        return True
    if value in _FALSE:
        return False
    raise ImproperlyConfigured(f"{name} must be 1 or 0 (or true/false), not {value!r}.")


def env_list(name, default=""):
    return [item.strip() for item in os.environ.get(name, default).split(",") if item.strip()]


def env_int(name, default):
    value = os.environ.get(name)
    if value is None or not value.strip():
        return default
    try:
        return int(value)
    except ValueError:
        raise ImproperlyConfigured(f"{name} must be a whole number, not {value!r}.") from None


def read_or_create_secret_key(path):
    """The key kept in ``path``; made once (mode 0600) if the file does not exist.

    The new key is written to a temporary file and linked into place, so two
    processes starting together end up with the same key.
    """
    try:
        key = path.read_text().strip()
    except FileNotFoundError:
        fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=".secret_key.")
        try:
            with os.fdopen(fd, "w") as f:
                f.write(secrets.token_urlsafe(50) + "\n")
            os.chmod(tmp, 0o600)
            try:
                os.link(tmp, path)
            except FileExistsError:
                pass
        finally:
            os.unlink(tmp)
        key = path.read_text().strip()
    if len(key) < 50:
        raise ImproperlyConfigured(f"The secret key in {path} is too short; delete the file to make a new one.")
    return key


# Data folder: the database (SQLite), the secret key and private files.
DATA_DIR = Path(os.environ.get("ATELIER_DATA_DIR") or BASE_DIR / "data").expanduser().resolve()
DATA_DIR.mkdir(parents=True, exist_ok=True)

SECRET_KEY = os.environ.get("ATELIER_SECRET_KEY") or read_or_create_secret_key(DATA_DIR / "secret_key")

DEBUG = env_bool("ATELIER_DEBUG")
PRODUCTION = env_bool("ATELIER_PRODUCTION")
if DEBUG and PRODUCTION:
    raise ImproperlyConfigured("ATELIER_DEBUG=1 cannot be combined with ATELIER_PRODUCTION=1.")
# HTTPS-only cookies, redirects and HSTS: in production, or when the site is
# served over HTTPS (ATELIER_HTTPS=1) and not in debug mode.
HTTPS = PRODUCTION or (env_bool("ATELIER_HTTPS") and not DEBUG)

ALLOWED_HOSTS = env_list("ATELIER_ALLOWED_HOSTS", "localhost,127.0.0.1,[::1]")
# The `start` command adds the addresses it binds to.
ALLOWED_HOSTS += [host for host in env_list("ATELIER_BIND_HOSTS") if host not in ALLOWED_HOSTS]
CSRF_TRUSTED_ORIGINS = env_list("ATELIER_CSRF_TRUSTED_ORIGINS")

ATELIER_NAME = os.environ.get("ATELIER_NAME") or demo.ATELIER_NAME
# Printed work orders name the client by reference only, unless the atelier chooses otherwise.
ATELIER_PRINT_CLIENT_NAME = os.environ.get("ATELIER_PRINT_CLIENT_NAME", "0") == "1"
# Processes one print may use: with 2, the worker draws the cutting sheet in a
# forked copy of itself while it draws the work order.
ATELIER_PRINT_PROCESSES = env_int("ATELIER_PRINT_PROCESSES", 2)
# Printed PDFs are kept this many days (the jobs stay on record; a reprint draws the same pages).
ATELIER_KEEP_PRINTS_DAYS = env_int("ATELIER_KEEP_PRINTS_DAYS", 30)

INSTALLED_APPS = [
    "django.contrib.admin",
    "django.contrib.auth",
    "django.contrib.contenttypes",
    "django.contrib.sessions",
    "django.contrib.messages",
    "whitenoise.runserver_nostatic",
    "django.contrib.staticfiles",
    "django_htmx",
    "axes",
    "django_tasks_db",
    "atelier",
    "patterns",
    "fittings",
]

MIDDLEWARE = [
    "django.middleware.security.SecurityMiddleware",
    "atelier.security.RequestSizeLimitMiddleware",
    "whitenoise.middleware.WhiteNoiseMiddleware",
    "django.contrib.sessions.middleware.SessionMiddleware",
    "django.middleware.common.CommonMiddleware",
    "django.middleware.csrf.CsrfViewMiddleware",
    "django.contrib.auth.middleware.AuthenticationMiddleware",
    "django.contrib.auth.middleware.LoginRequiredMiddleware",
    "django.contrib.messages.middleware.MessageMiddleware",
    "django.middleware.clickjacking.XFrameOptionsMiddleware",
    "django.middleware.csp.ContentSecurityPolicyMiddleware",
    "django_htmx.middleware.HtmxMiddleware",
    # django-axes asks to be last.
    "axes.middleware.AxesMiddleware",
]

ROOT_URLCONF = "atelier.urls"
WSGI_APPLICATION = "atelier.wsgi.application"

TEMPLATES = [
    {
        "BACKEND": "django.template.backends.django.DjangoTemplates",
        "DIRS": [BASE_DIR / "templates"],
        "APP_DIRS": True,
        "OPTIONS": {
            "context_processors": [
                "django.template.context_processors.request",
                "django.contrib.auth.context_processors.auth",
                "django.contrib.messages.context_processors.messages",
                "atelier.context_processors.atelier",
            ],
        },
    },
]

# Database: SQLite in the data folder unless DATABASE_URL names another one.
if os.environ.get("DATABASE_URL"):
    DATABASES = {
        "default": dj_database_url.parse(
            os.environ["DATABASE_URL"],
            conn_max_age=600,
            conn_health_checks=True,
        ),
    }
else:
    DATABASES = {
        "default": {
            "ENGINE": "django.db.backends.sqlite3",
            "NAME": DATA_DIR / "atelier.sqlite3",
            "OPTIONS": {
                "transaction_mode": "IMMEDIATE",
                "init_command": "PRAGMA journal_mode=WAL; PRAGMA synchronous=NORMAL; PRAGMA busy_timeout=5000;",
            },
        },
    }
if DATABASES["default"]["ENGINE"].endswith("postgresql"):
    # Its operator classes in index expressions (fittings migration 0005).
    INSTALLED_APPS.append("django.contrib.postgres")
DEFAULT_AUTO_FIELD = "django.db.models.BigAutoField"

# Caches.  "previews" holds drawn panel previews in the data folder, shared by
# every server process, so a plan is drawn once whichever process is asked.
# The key prefix is new at every start (gunicorn's --preload makes the
# workers share it), so drawings made by an older version of the app are
# never served after an upgrade.
CACHES = {
    "default": {"BACKEND": "django.core.cache.backends.locmem.LocMemCache"},
    "previews": {
        "BACKEND": "django.core.cache.backends.filebased.FileBasedCache",
        "LOCATION": DATA_DIR / "cache" / "previews",
        "TIMEOUT": 24 * 3600,
        "KEY_PREFIX": secrets.token_hex(4),
        "OPTIONS": {"MAX_ENTRIES": 2000},
    },
}

# Background work (rendering work orders): run at once unless ATELIER_TASKS=db,
# which queues tasks in the database for `manage.py task_worker` (db_worker after a warm-up).
_TASKS = os.environ.get("ATELIER_TASKS", "immediate").strip().lower() or "immediate"
if _TASKS == "immediate":
    TASKS = {"default": {"BACKEND": "django.tasks.backends.immediate.ImmediateBackend"}}
elif _TASKS == "db":
    TASKS = {"default": {"BACKEND": "django_tasks_db.DatabaseBackend"}}
else:
    raise ImproperlyConfigured(f"ATELIER_TASKS must be 'immediate' or 'db', not {_TASKS!r}.")

# Logins.
AUTHENTICATION_BACKENDS = [
    "axes.backends.AxesStandaloneBackend",
    "django.contrib.auth.backends.ModelBackend",
]
AUTH_PASSWORD_VALIDATORS = [
    {"NAME": "django.contrib.auth.password_validation.UserAttributeSimilarityValidator"},
    {"NAME": "django.contrib.auth.password_validation.MinimumLengthValidator"},
    {"NAME": "django.contrib.auth.password_validation.CommonPasswordValidator"},
    {"NAME": "django.contrib.auth.password_validation.NumericPasswordValidator"},
]
LOGIN_URL = "login"
LOGIN_REDIRECT_URL = "fittings:client_list"
LOGOUT_REDIRECT_URL = "login"
# A working day; a shared tablet should not stay signed in for weeks.
SESSION_COOKIE_AGE = env_int("ATELIER_SESSION_HOURS", 12) * 3600

# Login throttling: 5 failures for one username from one address lock that
# pair out for 15 minutes (a whole workroom shares one address).
AXES_FAILURE_LIMIT = 5
AXES_COOLOFF_TIME = timedelta(minutes=15)
AXES_LOCKOUT_PARAMETERS = [["username", "ip_address"]]
AXES_RESET_ON_SUCCESS = True
AXES_LOCKOUT_TEMPLATE = "registration/locked_out.html"

# Internationalisation.
LANGUAGE_CODE = "en-gb"
TIME_ZONE = os.environ.get("ATELIER_TIME_ZONE") or "Europe/London"
USE_I18N = True
USE_TZ = True

# Static files: collected by `manage.py start` and served by WhiteNoise.
STATIC_URL = "static/"
STATIC_ROOT = Path(os.environ.get("ATELIER_STATIC_ROOT") or BASE_DIR / "var" / "static")
# Client photos and rendered documents: never served as plain files.
MEDIA_ROOT = DATA_DIR / "private"
STORAGES = {
    "default": {"BACKEND": "atelier.storage.PrivateFileStorage"},
    "private": {"BACKEND": "atelier.storage.PrivateFileStorage"},
    "staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.ManifestStaticFilesStorage"},
}

# Content Security Policy: only this site's own files; no inline scripts or styles.
SECURE_CSP = {
    "default-src": [CSP.SELF],
    "script-src": [CSP.SELF],
    "style-src": [CSP.SELF],
    "img-src": [CSP.SELF, "data:"],
    "object-src": [CSP.NONE],
    "base-uri": [CSP.NONE],
    "form-action": [CSP.SELF],
    "frame-ancestors": [CSP.NONE],
}
X_FRAME_OPTIONS = "DENY"

# Requests larger than this are refused before they are read (atelier/security.py):
# a session form with three 8 MB photos fits.
ATELIER_MAX_REQUEST_BYTES = env_int("ATELIER_MAX_REQUEST_MB", 30) * 1024 * 1024
# htmx sends the token from the page (base.html), so no script needs to read the cookie.
CSRF_COOKIE_HTTPONLY = True
SESSION_COOKIE_HTTPONLY = True

if env_bool("ATELIER_BEHIND_PROXY"):
    # The proxy in front terminates HTTPS and says so in this header.
    SECURE_PROXY_SSL_HEADER = ("HTTP_X_FORWARDED_PROTO", "https")

if HTTPS:
    SECURE_SSL_REDIRECT = True
    SESSION_COOKIE_SECURE = True
    CSRF_COOKIE_SECURE = True
    SECURE_HSTS_SECONDS = env_int("ATELIER_HSTS_SECONDS", 365 * 24 * 3600)
    SECURE_HSTS_INCLUDE_SUBDOMAINS = True
    SECURE_HSTS_PRELOAD = True

LOGGING = {
    "version": 1,
    "disable_existing_loggers": False,
    "handlers": {"console": {"class": "logging.StreamHandler"}},
    "root": {"handlers": ["console"], "level": "WARNING"},
    "loggers": {
        name: {"handlers": ["console"], "level": os.environ.get("ATELIER_LOG_LEVEL", "INFO"), "propagate": False}
        for name in ("django", "atelier", "fittings", "patterns")
    },
}
