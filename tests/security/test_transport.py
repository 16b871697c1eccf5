"""Production mode as the app really starts it (a fresh process): HTTPS only, HSTS, secure cookies."""

import json
import os
import subprocess
import sys

from django.conf import settings

CHECK = r"""
import json, os
os.environ["DJANGO_SETTINGS_MODULE"] = "atelier.settings"
import django
django.setup()
from django.core.management import call_command
call_command("migrate", verbosity=0)
call_command("collectstatic", interactive=False, verbosity=0)  # pages name hashed static files, as under `start`
from django.contrib.auth.models import Group, User
from django.test import Client
user = User.objects.create_user("fitter", password="a-long-test-password")
user.groups.add(Group.objects.get(name="fitter"))
host = {"HTTP_HOST": "atelier.example.org"}
client = Client()
plain = client.get("/login/", **host)
page = client.get("/login/", secure=True, **host)
token = page.cookies["csrftoken"].value
signed = client.post("/login/", {"username": "fitter", "password": "a-long-test-password", "csrfmiddlewaretoken": token},
                     secure=True, **host)
print(json.dumps({
    "plain_status": plain.status_code, "plain_location": plain.get("Location"),
    "hsts": page.get("Strict-Transport-Security"),
    "csrf_secure": page.cookies["csrftoken"]["secure"], "csrf_httponly": page.cookies["csrftoken"]["httponly"],
    "signed_status": signed.status_code,
    "session_secure": signed.cookies["sessionid"]["secure"], "session_httponly": signed.cookies["sessionid"]["httponly"],
    "referrer": page.get("Referrer-Policy"), "coop": page.get("Cross-Origin-Opener-Policy"),
}))
"""


def run(env, tmp_path):
    base = {
        k: v
        for k, v in os.environ.items()
        if not k.startswith("ATELIER_") and k not in ("DATABASE_URL", "DJANGO_SETTINGS_MODULE")
    }
    result = subprocess.run(
        [sys.executable, "-c", CHECK],
        cwd=settings.BASE_DIR,
        capture_output=True,
        text=True,
        timeout=120,
        env={
            **base,
            "ATELIER_DATA_DIR": str(tmp_path),
            "ATELIER_STATIC_ROOT": str(tmp_path / "static"),
            "ATELIER_ALLOWED_HOSTS": "atelier.example.org",
            **env,
        },
    )
    assert result.returncode == 0, result.stderr
    return json.loads(result.stdout.strip().splitlines()[-1])


def test_it_serves_production_over_https_only_with_secure_cookies(tmp_path):
    seen = run({"ATELIER_PRODUCTION": "1"}, tmp_path)
    assert seen == {
        "plain_status": 301,
        "plain_location": "https://atelier.example.org/login/",
        "hsts": "max-age=31536000; includeSubDomains; preload",
        "csrf_secure": True,
        "csrf_httponly": True,
        "signed_status": 302,
        "session_secure": True,
        "session_httponly": True,
        "referrer": "same-origin",
        "coop": "same-origin",
    }


def test_it_keeps_plain_http_working_on_a_home_network_without_production_mode(tmp_path):
    seen = run({}, tmp_path)
    assert (seen["plain_status"], seen["hsts"], seen["session_secure"], seen["session_httponly"]) == (
        200,
        None,
        "",
        True,
    )
