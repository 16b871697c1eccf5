"""Set the atelier up and serve it: the one command a fresh install needs."""

import ctypes
import os
import signal
import socket
import subprocess
import sys

from django.conf import settings
from django.core.management import call_command
from django.core.management.base import BaseCommand, CommandError

from atelier.warmup import warm_up
from fittings.services.demo import atelier_is_empty

DEFAULT_BIND = "127.0.0.1:8000"
WILDCARDS = {"0.0.0.0", "::", ""}


def split_bind(bind):
    """('host', port) from '127.0.0.1:8000', '[::]:8000' or '0.0.0.0:8000'."""
    host, sep, port = bind.rpartition(":")
    if not sep or not port.isdigit() or not 0 < int(port) < 65536:
        raise CommandError(f"--bind wants an address and a port, such as 0.0.0.0:8000, not {bind!r}.")
    host = host.removeprefix("[").removesuffix("]")
    if any(c in host for c in "/ []"):
        raise CommandError(f"{host!r} is not an address to listen on.")
    return host, int(port)


def local_addresses():
    """This machine's name and the address other machines on the network reach it by."""
    names = {socket.gethostname()}
    try:
        with socket.socket(socket.AF_INET, socket.SOCK_DGRAM) as probe:
            # No packet is sent: this only asks which local address would be used.
            probe.connect(("192.0.2.1", 9))
            names.add(probe.getsockname()[0])
    except OSError:
        pass
    return sorted(name for name in names if name)


def hosts_for(host):
    """The names a browser may use to reach a server bound to ``host``."""
    if host in WILDCARDS:
        return local_addresses()
    return [f"[{host}]" if ":" in host else host]


def gunicorn_has_setting(name):
    from gunicorn.config import KNOWN_SETTINGS

    return any(setting.name == name for setting in KNOWN_SETTINGS)


class Command(BaseCommand):
    help = (
        "Migrate the database, load the demo atelier into an empty one, collect static files "
        "and serve the app with gunicorn."
    )
    requires_system_checks = []

    def add_arguments(self, parser):
        parser.add_argument(
            "--bind",
            default=DEFAULT_BIND,
            help="Address and port to serve on (default 127.0.0.1:8000; 0.0.0.0:8000 lets tablets on the network in).",
        )
        parser.add_argument("--workers", type=int, default=2, help="Worker processes (default 2).")
        parser.add_argument("--threads", type=int, default=4, help="Threads per worker (default 4).")
        parser.add_argument(
            "--no-demo", action="store_true", help="Do not load the demo atelier into an empty database."
        )
        parser.add_argument(
            "--inline-tasks",
            action="store_true",
            help="Render documents inside the web workers instead of a background worker process.",
        )

    def handle(self, *args, bind, workers, threads, no_demo, inline_tasks=False, **options):
        if workers < 1 or threads < 1:
            raise CommandError("--workers and --threads must be at least 1.")
        host, port = split_bind(bind)
        call_command("check")
        call_command("migrate", interactive=False, verbosity=1)
        if not no_demo and atelier_is_empty():
            call_command("load_demo", stdout=self.stdout, stderr=self.stderr)
        call_command("collectstatic", interactive=False, verbosity=0)
        call_command("clear_old_prints")
        self.stdout.write("Warming up (the first start builds a font cache and takes longer)...")
        warm_up()

        extra_hosts = hosts_for(host)
        env = dict(os.environ)
        env["ATELIER_BIND_HOSTS"] = ",".join(extra_hosts)
        env["ATELIER_WARM_UP"] = "1"
        env.setdefault("DJANGO_SETTINGS_MODULE", "atelier.settings")
        if not inline_tasks and "ATELIER_TASKS" not in os.environ:
            # Documents render in a worker of their own, so no web worker is held for a whole render.
            env["ATELIER_TASKS"] = "db"
        if env.get("ATELIER_TASKS") == "db":
            self.start_task_worker([sys.executable, str(settings.BASE_DIR / "manage.py"), "task_worker"], env)
        argv = [
            sys.executable,
            "-m",
            "gunicorn",
            "atelier.wsgi:application",
            "--bind",
            bind,
            "--workers",
            str(workers),
            "--threads",
            str(threads),
            "--chdir",
            str(settings.BASE_DIR),
            "--timeout",
            "120",
            "--preload",
            "--access-logfile",
            "-",
        ]
        if gunicorn_has_setting("control_socket_disable"):
            # Newer gunicorn opens a control socket in the home folder; this app does not use it.
            argv.append("--no-control-socket")
        for name in ["127.0.0.1", *extra_hosts] if host in WILDCARDS else extra_hosts:
            self.stdout.write(self.style.SUCCESS(f"Open http://{name}:{port}/"))
        if not settings.HTTPS and host not in ("127.0.0.1", "localhost", "::1"):
            self.stdout.write(
                self.style.WARNING(
                    "Passwords and client data cross the network unencrypted. Put an HTTPS proxy in front "
                    "and set ATELIER_PRODUCTION=1 before using this beyond a trusted home network."
                )
            )
        sys.stdout.flush()
        sys.stderr.flush()
        self.exec_server(argv, env)

    def start_task_worker(self, argv, env):
        """The background worker for queued tasks; it stops when the server (its parent) stops."""
        subprocess.Popen(argv, env=env, cwd=settings.BASE_DIR, preexec_fn=_die_with_parent)

    def exec_server(self, argv, env):
        """Replace this process by gunicorn (a separate method so tests can stand in for it)."""
        os.execve(argv[0], argv, env)


def _die_with_parent():
    """Ask Linux to stop this child when its parent ends (PR_SET_PDEATHSIG); elsewhere do nothing."""
    try:
        ctypes.CDLL("libc.so.6", use_errno=True).prctl(1, signal.SIGTERM)
    except OSError:
        pass
