"""Twenty tablets saving at once: does any save get lost or overwritten?

    .venv/bin/python tests/bench/load_tablets.py [--seconds 60] [--tablets 20] [--max-requests 20000]
                                           [--think 0.2] [--shared-rounds 5] [--keep]

Makes a fresh data folder in /tmp with the demo atelier, a fitter login,
a client, a session and a plan per tablet, and one plan they all share; serves
it with ``manage.py start`` (gunicorn, as in production) on 127.0.0.1 only;
then each tablet (a thread with its own signed-in session) signs in and, until
``--seconds`` pass or ``--max-requests`` are sent, saves:

- a new measurement session for its client (the session form, as posted by the page),
- a correction of its own "edit" session (reads the page for the version, then posts),
- a new revision of its own plan (reads the plan page for the version, then posts).

Every tablet has its own client and plan, so none of these should be refused.
Then a short shared phase: all tablets open the shared plan together and save
at once; exactly one save per round may win, the others must be refused with
409 (counted as correct refusals, not errors).

At the end the server is stopped and every save a tablet was told succeeded
is read back from the database: the session with its readings, the last
correction (and every earlier one in the audit trail), each plan revision with
the ease that tablet sent.  Prints requests, errors, p50/p95 latency and lost
or overwritten saves (which must be 0).  Speed figures only; nothing here is a
unit test.  Everything stays on 127.0.0.1.
"""

import argparse
import http.client
import json
import os
import random
import re
import shutil
import signal
import socket
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from collections import Counter, defaultdict
from pathlib import Path
from urllib.parse import urlencode

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from tests.bench.tablet import LOOPBACK, Tablet, form_fields  # noqa: E402

PASSWORD = "load-tablets-pass-7"  # every login made in the throwaway data folder
# Girths in cm a tablet types, each drawn from a range a body can measure.
READINGS = {
    "bust_girth": (80, 120),
    "underbust_girth": (65, 100),
    "waist_girth": (55, 100),
    "abdomen_girth": (75, 115),
    "hip_girth": (85, 130),
}

SETUP = r"""
import json, os, sys
os.environ["DJANGO_SETTINGS_MODULE"] = "atelier.settings"
import django
django.setup()
from django.contrib.auth.models import Group, User
from django.core.management import call_command
from fittings.services import clients as client_services
from fittings.services import plans as plan_services
from fittings.services.demo import load_demo_atelier
from patterns.models import BasePattern

tablets, password = int(sys.argv[1]), sys.argv[2]
call_command("migrate", verbosity=0)
load_demo_atelier(password=password)
pattern = BasePattern.objects.get(garment="overbust corset", size_label="12")
fitter = Group.objects.get(name="fitter")
values = {"bust_girth": 920, "underbust_girth": 760, "waist_girth": 700, "abdomen_girth": 860, "hip_girth": 980}
form = {"taken_on": "2026-11-30", "kind": "first", "unit": "cm"}
out = {"tablets": []}
for n in range(1, tablets + 1):
    user = User.objects.create_user(f"tablet{n:02}", password=password)
    user.groups.add(fitter)
    client = client_services.create_client(user=user, reference=f"LT-{n:03}", name=f"Load client {n}")
    session = client_services.record_session(client=client, user=user, form_data=form, values=values)
    edited = client_services.record_session(client=client, user=user, form_data={**form, "kind": "check"}, values=values)
    plan = plan_services.start_plan(client=client, session=session, pattern=pattern, garment="Load corset", user=user)
    out["tablets"].append({"username": user.username, "client": client.pk, "edit_session": edited.pk, "plan": plan.pk})
owner = out["tablets"][0]
shared_client = client_services.create_client(user=None, reference="LT-SHARED", name="Shared load client")
session = client_services.record_session(client=shared_client, user=None, form_data=form, values=values)
out["shared_plan"] = plan_services.start_plan(client=shared_client, session=session, pattern=pattern,
                                              garment="Shared corset", user=None).pk
print(json.dumps(out))
"""

VERIFY = r"""
import json, os, sys
os.environ["DJANGO_SETTINGS_MODULE"] = "atelier.settings"
import django
django.setup()
from collections import Counter
from fittings.models import AuditEntry, MeasurementSession, PlanRevision

claims = json.load(open(sys.argv[1]))
lost, overwritten, checked = [], [], Counter()
for t in claims["tablets"]:
    for tag, readings in t["sessions"]:
        found = MeasurementSession.objects.filter(client_id=t["client"], notes=tag).prefetch_related("measurements")
        if len(found) != 1:
            lost.append(f"session {tag}: {len(found)} found")
            continue
        stored = {m.code: str(m.value_mm) for m in found[0].measurements.all()}
        if stored != readings:
            overwritten.append(f"session {tag}: {stored} != {readings}")
        checked["sessions"] += 1
    # The edit session: the last acknowledged correction is stored, each earlier one is in the audit trail.
    if t["edits"]:
        session = MeasurementSession.objects.prefetch_related("measurements").get(pk=t["edit_session"])
        stored = {m.code: str(m.value_mm) for m in session.measurements.all()}
        if stored != t["edits"][-1]:
            overwritten.append(f"edit session {session.pk}: {stored} != {t['edits'][-1]}")
        befores = [e.before["measurements_mm"] for e in
                   AuditEntry.objects.filter(object_type="session", action="change", object_id=str(session.pk)).order_by("id")]
        for i, readings in enumerate(t["edits"][:-1]):
            if i + 1 >= len(befores) or befores[i + 1] != readings:
                lost.append(f"edit {i} of session {session.pk} not in the audit trail")
        if session.version != 1 + len(t["edits"]):
            overwritten.append(f"edit session {session.pk}: version {session.version}, {len(t['edits'])} edits")
        checked["session edits"] += len(t["edits"])
    for number, ease_mm in t["revisions"]:
        revision = PlanRevision.objects.filter(plan_id=t["plan"], number=number).first()
        if revision is None:
            lost.append(f"plan {t['plan']} revision {number}")
            continue
        if abs(revision.inputs["plan"]["ease"]["waist"] - ease_mm) > 1e-6 or revision.author.username != t["username"]:
            overwritten.append(f"plan {t['plan']} revision {number}")
        checked["plan revisions"] += 1
    numbers = list(PlanRevision.objects.filter(plan_id=t["plan"]).order_by("number").values_list("number", flat=True))
    if numbers != list(range(1, 2 + len(t["revisions"]))):
        overwritten.append(f"plan {t['plan']}: revisions {numbers[:5]}... for {len(t['revisions'])} saves")
shared = claims["shared"]
numbers = list(PlanRevision.objects.filter(plan_id=shared["plan"]).order_by("number").values_list("number", flat=True))
if numbers != list(range(1, 2 + len(shared["won"]))):
    overwritten.append(f"shared plan: revisions {numbers} for {len(shared['won'])} winning saves")
for number, username, ease_mm in shared["won"]:
    revision = PlanRevision.objects.get(plan_id=shared["plan"], number=number)
    if revision.author.username != username or abs(revision.inputs["plan"]["ease"]["waist"] - ease_mm) > 1e-6:
        overwritten.append(f"shared plan revision {number}")
    checked["shared revisions"] += 1
print(json.dumps({"lost": lost, "overwritten": overwritten, "checked": checked}))
"""


def percentile(values, share):
    values = sorted(values)
    return values[min(len(values) - 1, int(round(share * (len(values) - 1))))] if values else float("nan")


def free_port():
    with socket.socket() as probe:
        probe.bind((LOOPBACK, 0))
        return probe.getsockname()[1]


def sign_in(port, username, password):
    """(session key, CSRF secret) after signing in through the login page, like a browser."""
    connection = http.client.HTTPConnection(LOOPBACK, port, timeout=30)
    try:
        connection.request("GET", "/login/", headers={"Host": f"{LOOPBACK}:{port}"})
        page = connection.getresponse()
        html = page.read().decode()
        csrf = re.search(r"csrftoken=([^;]+)", page.getheader("Set-Cookie", ""))[1]
        token = re.search(r'name="csrfmiddlewaretoken" value="([^"]+)"', html)[1]
        body = urlencode({"username": username, "password": password, "csrfmiddlewaretoken": token})
        connection.request(
            "POST",
            "/login/",
            body=body,
            headers={
                "Host": f"{LOOPBACK}:{port}",
                "Cookie": f"csrftoken={csrf}",
                "Content-Type": "application/x-www-form-urlencoded",
            },
        )
        reply = connection.getresponse()
        reply.read()
        cookies = dict(
            re.findall(
                r"(sessionid|csrftoken)=([^;]+)",
                ", ".join(value for name, value in reply.getheaders() if name.lower() == "set-cookie"),
            )
        )
        if reply.status != 302 or "sessionid" not in cookies:
            raise RuntimeError(f"{username} could not sign in (HTTP {reply.status}).")
        return cookies["sessionid"], cookies.get("csrftoken", csrf)
    finally:
        connection.close()


class Figures:
    """Latency per kind of request, errors, and the shared request budget (thread-safe)."""

    def __init__(self, max_requests):
        self.lock = threading.Lock()
        self.ms = defaultdict(list)
        self.errors = Counter()
        self.refusals = 0
        self.sent = 0
        self.max_requests = max_requests

    def take(self):
        with self.lock:
            if self.sent >= self.max_requests:
                return False
            self.sent += 1
            return True

    def add(self, kind, ms, error=None):
        with self.lock:
            self.ms[kind].append(ms)
            if error:
                self.errors[f"{kind}: {error}"] += 1


class Budget(Exception):
    """The run's request or time budget is spent."""


class Run:
    def __init__(self, port, fixture, figures, until, think, seed):
        self.port, self.fixture, self.figures, self.until = port, fixture, figures, until
        self.think, self.rng = think, random.Random(seed)
        self.claims = {
            "username": fixture["username"],
            "client": fixture["client"],
            "plan": fixture["plan"],
            "edit_session": fixture["edit_session"],
            "sessions": [],
            "edits": [],
            "revisions": [],
        }
        self.tablet = None

    def call(self, kind, method, path, data=None, expect=(200,)):
        if time.monotonic() >= self.until or not self.figures.take():
            raise Budget
        try:
            reply = self.tablet.request(method, path, data)
        except Exception as exc:  # noqa: BLE001 - any failure counts as an error
            self.figures.add(kind, 0.0, f"{type(exc).__name__}")
            self.tablet.close()
            return None
        self.figures.add(kind, reply.ms, None if reply.status in expect else f"HTTP {reply.status}")
        return reply if reply.status in expect else None

    def readings(self):
        return {
            code: f"{self.rng.randint(low, high - 1)}.{self.rng.randint(0, 9)}"
            for code, (low, high) in READINGS.items()
        }

    @staticmethod
    def mm(readings):
        return {code: f"{float(value) * 10:.4f}" for code, value in readings.items()}

    def new_session(self, i):
        readings = self.readings()
        tag = f"{self.fixture['username']} #{i}"
        data = {"taken_on": "2026-11-30", "kind": "check", "unit": "cm", "notes": tag, "done": "1", **readings}
        if self.call("save session", "POST", f"/clients/{self.fixture['client']}/sessions/new/", data, expect=(302,)):
            self.claims["sessions"].append((tag, self.mm(readings)))

    def edit_session(self):
        path = f"/sessions/{self.fixture['edit_session']}/"
        page = self.call("open session", "GET", path)
        if page is None:
            return
        # The version the page was read at, as the hidden field sends it.
        version = re.search(r'name="version" value="(\d+)"', page.text)[1]
        sent = self.readings()
        data = {"taken_on": "2026-11-30", "kind": "check", "unit": "cm", "version": version, "done": "1", **sent}
        if self.call("correct session", "POST", path, data, expect=(302,)):
            self.claims["edits"].append(self.mm(sent))

    def save_plan(self, plan, kind="save plan", expect=(302,)):
        page = self.call("open plan", "GET", f"/plans/{plan}/")
        if page is None:
            return None, None
        data = form_fields(page.text, "plan-form")
        ease_cm = -round(self.rng.uniform(2.0, 8.0), 1)
        data["ease_waist"] = f"{ease_cm}"
        reply = self.call(kind, "POST", f"/plans/{plan}/", data, expect=expect)
        return reply, ease_cm * 10

    def main_phase(self):
        session_key, csrf = sign_in(self.port, self.fixture["username"], PASSWORD)
        self.tablet = Tablet(self.port, session_key=session_key, csrf_token=csrf)
        i = 0
        try:
            while True:
                i += 1
                self.new_session(i)
                if i % 3 == 0:
                    self.edit_session()
                reply, ease_mm = self.save_plan(self.fixture["plan"])
                if reply is not None:
                    number = int(re.search(r"/revisions/(\d+)/", reply.headers.get("Location", ""))[1])
                    self.claims["revisions"].append((number, ease_mm))
                if self.think:
                    time.sleep(self.rng.uniform(0, 2 * self.think))
        except Budget:
            pass


def shared_phase(runs, plan, rounds, figures):
    """All tablets open the shared plan, then save at once: one wins each round, the rest get 409."""
    won, refused, wrong = [], 0, []
    for _ in range(rounds):
        pages = {}
        barrier = threading.Barrier(len(runs))
        results = {}

        def one(run):
            page = run.tablet.request("GET", f"/plans/{plan}/")
            figures.add("open shared plan", page.ms, None if page.status == 200 else f"HTTP {page.status}")
            data = form_fields(page.text, "plan-form")
            ease_cm = -round(run.rng.uniform(2.0, 8.0), 1)
            data["ease_waist"] = f"{ease_cm}"
            pages[run] = data
            barrier.wait(timeout=60)
            reply = run.tablet.request("POST", f"/plans/{plan}/", data)
            results[run] = (reply, ease_cm)

        threads = [threading.Thread(target=one, args=(run,)) for run in runs]
        for t in threads:
            t.start()
        for t in threads:
            t.join(timeout=120)
        for run, (reply, ease_cm) in results.items():
            if reply.status == 302:
                number = int(re.search(r"/revisions/(\d+)/", reply.headers.get("Location", ""))[1])
                won.append((number, run.fixture["username"], ease_cm * 10))
                figures.add("save shared plan", reply.ms)
            elif reply.status == 409:
                refused += 1
                figures.add("save shared plan (refused)", reply.ms)
                # The refused values must be shown back, with the reason.
                if "Someone saved this plan" not in reply.text or f'value="{ease_cm}"' not in reply.text:
                    wrong.append(run.fixture["username"])
            else:
                figures.add("save shared plan", reply.ms, f"HTTP {reply.status}")
    return {"plan": plan, "won": won, "refused": refused, "refusals_without_values": wrong}


def start_server(env, port, workers, threads, log_path):
    log = open(log_path, "ab")
    argv = [
        sys.executable,
        "manage.py",
        "start",
        "--bind",
        f"{LOOPBACK}:{port}",
        "--no-demo",
        "--workers",
        str(workers),
        "--threads",
        str(threads),
    ]
    process = subprocess.Popen(argv, cwd=ROOT, env=env, stdout=log, stderr=subprocess.STDOUT, start_new_session=True)
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline:
        if process.poll() is not None:
            raise RuntimeError(f"The server stopped while starting; see {log_path}")
        try:
            with socket.create_connection((LOOPBACK, port), timeout=0.2):
                return process
        except OSError:
            time.sleep(0.05)
    stop_server(process)
    raise RuntimeError(f"The server did not listen within 120 s; see {log_path}")


def stop_server(process):
    if process.poll() is not None:
        return
    os.killpg(process.pid, signal.SIGTERM)
    try:
        process.wait(timeout=30)
    except subprocess.TimeoutExpired:
        os.killpg(process.pid, signal.SIGKILL)
        process.wait(timeout=10)


def run_json(argv, env, timeout):
    done = subprocess.run(argv, cwd=ROOT, env=env, capture_output=True, text=True, timeout=timeout)
    if done.returncode != 0:
        raise RuntimeError(f"A helper process failed:\n{done.stderr[-3000:]}")
    return json.loads(done.stdout.strip().splitlines()[-1])


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument(
        "--seconds", type=float, default=60.0, help="Length of the main phase (default 60, at most 600)."
    )
    parser.add_argument("--tablets", type=int, default=20, help="Simulated tablets (default 20, at most 100).")
    parser.add_argument("--max-requests", type=int, default=20_000, help="Requests in the main phase at most.")
    parser.add_argument("--think", type=float, default=0.2, help="Mean pause between a tablet's saves, in seconds.")
    parser.add_argument("--shared-rounds", type=int, default=5, help="Rounds of the shared-plan phase (default 5).")
    parser.add_argument("--workers", type=int, default=2, help="gunicorn workers (default 2, as `manage.py start`).")
    parser.add_argument("--threads", type=int, default=4, help="Threads per worker (default 4, as `manage.py start`).")
    parser.add_argument("--keep", action="store_true", help="Keep the temporary data folder and the server log.")
    args = parser.parse_args(argv)
    seconds, tablets = min(args.seconds, 600.0), max(2, min(args.tablets, 100))
    max_requests = max(1, min(args.max_requests, 200_000))

    data_dir = Path(tempfile.mkdtemp(prefix="atelier-load-"))
    env = {
        k: v
        for k, v in os.environ.items()
        if not k.startswith("ATELIER_") and k not in ("DATABASE_URL", "DJANGO_SETTINGS_MODULE")
    }
    env.update(
        {
            "ATELIER_DATA_DIR": str(data_dir),
            "ATELIER_STATIC_ROOT": str(data_dir / "static"),
            "ATELIER_LOG_LEVEL": "WARNING",
            "PYTHONPATH": str(ROOT),
        }
    )
    log_path = data_dir / "server.log"
    process = None
    try:
        print(f"Setting up {tablets} tablets in {data_dir} ...", flush=True)
        fixture = run_json([sys.executable, "-c", SETUP, str(tablets), PASSWORD], env, timeout=600)
        port = free_port()
        process = start_server(env, port, args.workers, args.threads, log_path)
        print(
            f"Serving on http://{LOOPBACK}:{port}/ (gunicorn, {args.workers} workers x {args.threads} threads); "
            f"{seconds:.0f} s, at most {max_requests} requests.",
            flush=True,
        )

        figures = Figures(max_requests)
        started = time.monotonic()
        until = started + seconds
        runs = [Run(port, f, figures, until, args.think, seed=n) for n, f in enumerate(fixture["tablets"])]
        threads = [threading.Thread(target=run.main_phase, name=run.fixture["username"]) for run in runs]
        for t in threads:
            t.start()
        for t in threads:
            t.join(timeout=seconds + 120)
        main_s = time.monotonic() - started
        main_requests = figures.sent
        shared = shared_phase(runs, fixture["shared_plan"], args.shared_rounds, figures)
    finally:
        if process is not None:
            stop_server(process)

    claims = {"tablets": [run.claims for run in runs], "shared": shared}
    claims_path = data_dir / "claims.json"
    claims_path.write_text(json.dumps(claims))
    verified = run_json([sys.executable, "-c", VERIFY, str(claims_path)], env, timeout=600)

    every = [ms for kind, values in figures.ms.items() for ms in values]
    saves = {k: sum(len(r.claims[k]) for r in runs) for k in ("sessions", "edits", "revisions")}
    errors = sum(figures.errors.values())
    print()
    print(
        f"main phase: {main_requests} requests in {main_s:.1f} s ({main_requests / main_s:.1f}/s) from {tablets} tablets"
    )
    print(f"all requests, shared phase included: {len(every)}")
    print(
        f"saves acknowledged: {saves['sessions']} new sessions, {saves['edits']} corrections, {saves['revisions']} plan revisions"
    )
    print(
        f"latency, all requests: p50 {statistics.median(every):.1f} ms, p95 {percentile(every, 0.95):.1f} ms, "
        f"max {max(every):.1f} ms"
    )
    for kind in sorted(figures.ms):
        values = figures.ms[kind]
        print(
            f"  {kind:28} n={len(values):6}  p50 {statistics.median(values):7.1f} ms  "
            f"p95 {percentile(values, 0.95):7.1f} ms  max {max(values):8.1f} ms"
        )
    print(f"errors: {errors}" + (f"  {dict(figures.errors)}" if errors else ""))
    print(
        f"shared plan: {len(shared['won'])} saves won, {shared['refused']} refused with 409 (correct), "
        f"{len(shared['refusals_without_values'])} refusals without the tablet's values shown back"
    )
    print(f"read back: {dict(verified['checked'])}")
    print(f"lost saves: {len(verified['lost'])}, overwritten saves: {len(verified['overwritten'])}")
    for problem in (verified["lost"] + verified["overwritten"])[:20]:
        print(f"  {problem}")
    if args.keep:
        print(f"Data folder and server log kept in {data_dir}")
    else:
        shutil.rmtree(data_dir, ignore_errors=True)
    bad = errors or verified["lost"] or verified["overwritten"] or shared["refusals_without_values"]
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
