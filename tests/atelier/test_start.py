"""`manage.py start`: set up, then hand over to gunicorn."""

import sys

import pytest
from django.core.management import CommandError, call_command

from atelier.management.commands import start
from fittings.models import Client

pytestmark = pytest.mark.django_db


@pytest.fixture
def started(monkeypatch, settings, tmp_path):
    """Run `start` up to the point where it would become gunicorn; return what it would run."""
    settings.STATIC_ROOT = tmp_path / "static"
    calls = {}
    monkeypatch.setattr(start.Command, "exec_server", lambda self, argv, env: calls.update(argv=argv, env=env))
    monkeypatch.setattr(start, "warm_up", lambda: calls.setdefault("warmed", True))
    monkeypatch.setattr(start.Command, "start_task_worker", lambda self, argv, env: calls.update(worker=argv))
    monkeypatch.delenv("ATELIER_TASKS", raising=False)
    return calls


def test_it_sets_up_and_hands_over_to_gunicorn(started, settings, capsys):
    call_command("start", "--bind", "0.0.0.0:8123", "--workers", "3")
    argv, env = started["argv"], started["env"]
    assert argv[:4] == [sys.executable, "-m", "gunicorn", "atelier.wsgi:application"]
    assert argv[argv.index("--bind") + 1] == "0.0.0.0:8123"
    assert argv[argv.index("--workers") + 1] == "3"
    assert argv[argv.index("--threads") + 1] == "4"
    assert env["ATELIER_BIND_HOSTS"]
    assert env["ATELIER_WARM_UP"] == "1"
    assert started["warmed"]
    assert Client.objects.count() == 3
    assert (settings.STATIC_ROOT / "atelier" / "site.css").exists()
    out = capsys.readouterr().out
    assert "Demo login: user 'demo'" in out
    assert "Open http://127.0.0.1:8123/" in out
    assert "Cleared the files of 0 prints older than 30 days" in out  # old PDFs go at every start


def test_it_serves_on_the_local_machine_by_default(started):
    call_command("start", "--no-demo")
    argv, env = started["argv"], started["env"]
    assert argv[argv.index("--bind") + 1] == "127.0.0.1:8000"
    assert argv[argv.index("--workers") + 1] == "2"
    assert env["ATELIER_BIND_HOSTS"] == "127.0.0.1"
    assert Client.objects.count() == 0


def test_it_loads_the_demo_only_into_an_empty_atelier(started, capsys):
    call_command("start")
    capsys.readouterr()
    call_command("start")
    assert Client.objects.count() == 3
    assert "Demo login" not in capsys.readouterr().out


@pytest.mark.parametrize("bind", ["8000", "localhost:http", "0.0.0.0:70000", "a b:80"])
def test_it_refuses_a_bad_bind_address(started, bind):
    with pytest.raises(CommandError, match="not"):
        call_command("start", "--bind", bind)
    assert "argv" not in started


def test_it_refuses_zero_workers(started):
    with pytest.raises(CommandError, match="at least 1"):
        call_command("start", "--workers", "0")


def test_it_collects_static_files_with_hashed_names(started, settings):
    settings.STORAGES = {
        **settings.STORAGES,
        "staticfiles": {"BACKEND": "django.contrib.staticfiles.storage.ManifestStaticFilesStorage"},
    }
    call_command("start", "--no-demo")
    assert (settings.STATIC_ROOT / "staticfiles.json").exists()
    assert list((settings.STATIC_ROOT / "atelier").glob("site.*.css"))


def test_it_renders_documents_in_a_worker_of_their_own(started):
    call_command("start")
    assert started["env"]["ATELIER_TASKS"] == "db"
    assert started["worker"][-1] == "task_worker"


def test_it_can_render_documents_in_the_web_workers(started):
    call_command("start", "--inline-tasks")
    assert "ATELIER_TASKS" not in started["env"] and "worker" not in started


def test_it_warms_the_task_worker_up_before_it_takes_jobs(monkeypatch):
    from atelier.management.commands import task_worker

    done = []
    monkeypatch.setattr(task_worker, "warm_up", lambda: done.append("warm-up"))
    monkeypatch.setattr(
        task_worker,
        "call_command",
        lambda name, **options: done.append((name, options["interval"], options["startup_delay"])),
    )
    call_command("task_worker")
    assert done == ["warm-up", ("db_worker", 0.25, False)]
