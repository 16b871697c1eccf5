"""Several processes writing to one SQLite file at once, through the services, as gunicorn's workers do.

WAL mode, BEGIN IMMEDIATE and the busy timeout (atelier/settings.py) must make
writers queue: no "database is locked", no row lost.
"""

import json
import os
import sqlite3
import subprocess
import sys
import time

from django.conf import settings

WORKERS = 4
SESSIONS_EACH = 50
SAVES_EACH = 10

SETUP = r"""
import os
os.environ["DJANGO_SETTINGS_MODULE"] = "atelier.settings"
import django
django.setup()
from django.core.management import call_command
call_command("migrate", verbosity=0)
from fittings.services.demo import load_demo_atelier
load_demo_atelier(password="not-used-here-1")
"""

WORKER = r"""
import json, os, sys, time
from pathlib import Path
os.environ["DJANGO_SETTINGS_MODULE"] = "atelier.settings"
import django
django.setup()
from django.contrib.auth import get_user_model
from fittings.models import Client
from fittings.services import clients as client_services
from fittings.services import plans as plan_services
from patterns.models import BasePattern
from fittings import selectors

number, sessions, saves, go = int(sys.argv[1]), int(sys.argv[2]), int(sys.argv[3]), Path(sys.argv[4])
user = get_user_model().objects.get(username="demo")
client = client_services.create_client(user=user, reference=f"LOAD-{number}", name=f"Writer {number}")
while not go.exists():  # start together
    time.sleep(0.01)
saved, errors = [], []
pattern = BasePattern.objects.get(garment="overbust corset", size_label="12")
plan = None
for i in range(sessions):
    try:
        session = client_services.record_session(
            client=client, user=user,
            form_data={"taken_on": "2026-11-30", "kind": "check", "unit": "cm", "notes": f"writer {number} #{i}"},
            values={"bust_girth": 900 + i, "underbust_girth": 780, "waist_girth": 700 + number,
                    "abdomen_girth": 860, "hip_girth": 980},
        )
        saved.append(session.pk)
        if plan is None:
            plan = plan_services.start_plan(client=client, session=session, pattern=pattern, garment="Load", user=user)
        elif i <= saves:
            options = selectors.revision_inputs(selectors.latest_revision(plan))[2]
            plan_services.save_revision(plan=plan, options=options, user=user, expected_version=plan.version)
            plan.refresh_from_db()
    except Exception as exc:
        errors.append(f"{type(exc).__name__}: {exc}")
print(json.dumps({"saved": saved, "errors": errors, "plan": plan.pk if plan else None}))
"""


def env_for(data_dir):
    base = {
        k: v
        for k, v in os.environ.items()
        if not k.startswith("ATELIER_") and k not in ("DATABASE_URL", "DJANGO_SETTINGS_MODULE")
    }
    return {**base, "ATELIER_DATA_DIR": str(data_dir)}  # SQLite, even when the suite runs on PostgreSQL


def test_it_queues_concurrent_writers_without_locking_errors_or_lost_rows(tmp_path):
    env = env_for(tmp_path)
    setup = subprocess.run(
        [sys.executable, "-c", SETUP], cwd=settings.BASE_DIR, env=env, capture_output=True, text=True, timeout=180
    )
    assert setup.returncode == 0, setup.stderr
    go = tmp_path / "go"
    workers = [
        subprocess.Popen(
            [sys.executable, "-c", WORKER, str(n), str(SESSIONS_EACH), str(SAVES_EACH), str(go)],
            cwd=settings.BASE_DIR,
            env=env,
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
        )
        for n in range(WORKERS)
    ]
    # Let every worker start Django and make its client, then release them together.
    time.sleep(0.5)
    deadline = time.monotonic() + 60
    db_path = tmp_path / "atelier.sqlite3"
    while time.monotonic() < deadline:
        with sqlite3.connect(db_path) as db:
            ready = db.execute("SELECT COUNT(*) FROM fittings_client WHERE reference LIKE 'LOAD-%'").fetchone()[0]
        if ready == WORKERS:
            break
        time.sleep(0.1)
    go.touch()
    results = []
    for worker in workers:
        out, err = worker.communicate(timeout=300)
        assert worker.returncode == 0, err
        results.append(json.loads(out.strip().splitlines()[-1]))

    errors = [e for r in results for e in r["errors"]]
    assert errors == []
    saved = [pk for r in results for pk in r["saved"]]
    assert len(saved) == len(set(saved)) == WORKERS * SESSIONS_EACH
    with sqlite3.connect(db_path) as db:
        found = db.execute(
            f"SELECT COUNT(*) FROM fittings_measurementsession WHERE id IN ({','.join(map(str, saved))})"
        ).fetchone()[0]
        readings = db.execute(
            f"SELECT COUNT(*) FROM fittings_measurement WHERE session_id IN ({','.join(map(str, saved))})"
        ).fetchone()[0]
        revisions = dict(
            db.execute(
                "SELECT plan_id, COUNT(*) FROM fittings_planrevision WHERE plan_id IN (%s) GROUP BY plan_id"
                % ",".join(str(r["plan"]) for r in results)
            ).fetchall()
        )
        audit = db.execute(
            "SELECT COUNT(*) FROM fittings_auditentry WHERE object_type = 'session' AND action = 'create' "
            f"AND object_id IN ({','.join(repr(str(pk)) for pk in saved)})"
        ).fetchone()[0]
        mode = db.execute("PRAGMA journal_mode").fetchone()[0]
    assert found == WORKERS * SESSIONS_EACH
    assert readings == WORKERS * SESSIONS_EACH * 5
    assert audit == WORKERS * SESSIONS_EACH
    assert sorted(revisions.values()) == [1 + SAVES_EACH] * WORKERS  # each plan: its first revision and every save
    assert mode == "wal"
