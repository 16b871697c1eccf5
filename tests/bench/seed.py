"""Fill a data folder with an invented atelier at scale, for the benchmarks (not for real use).

    ATELIER_DATA_DIR=/tmp/x DJANGO_SETTINGS_MODULE=tests.bench.settings .venv/bin/python -m tests.bench.seed [--scale small]

Full scale: 100,000 clients (1 % of them deleted), 300,000 sessions of five
girths each (1.5 million readings) and plans for a few dozen clients, on top
of the demo atelier (whose login is the benchmark's).  Names, references and
contacts are made up from syllables with a fixed seed, so every run builds
the same data.  Clients and sessions go in with bulk_create in large batches, the
readings with one executemany per batch, all inside one transaction: a
minute or two, not an hour.
"""

import argparse
import json
import os
import random
import sys
import time
from datetime import date, timedelta
from pathlib import Path

from fittings import selectors

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
os.environ.setdefault("DJANGO_SETTINGS_MODULE", "tests.bench.settings")

SCALES = {
    # clients, sessions per client, plans for bench clients
    "full": (100_000, 3, 40),
    "small": (2_000, 3, 10),
}
BATCH = 5_000
LONG_HISTORY_REFERENCE = "WF-099999"  # one client seen for years: 120 sessions and 6 plans
PASSWORD = "bench-tape-and-pins"  # the demo login's password in a benchmark data folder only

# Invented syllables: no real person's name is meant.
_FIRST_START = [
    "Al",
    "Bel",
    "Cor",
    "Da",
    "El",
    "Fen",
    "Gwen",
    "Hal",
    "Is",
    "Jo",
    "Ka",
    "Lin",
    "Mar",
    "Nel",
    "Or",
    "Pen",
    "Ros",
    "Sa",
    "Tam",
    "Ver",
    "Wyn",
    "Ys",
    "Ze",
    "Ama",
    "Bri",
    "Cla",
    "Dor",
    "Eve",
]
_FIRST_END = ["a", "e", "ia", "ette", "ine", "is", "enne", "ora", "elle", "ith"]
_SURNAME_START = [
    "Ash",
    "Brack",
    "Corn",
    "Dun",
    "Elder",
    "Fair",
    "Gold",
    "Hart",
    "Ivy",
    "Kest",
    "Lang",
    "Marsh",
    "North",
    "Oak",
    "Pell",
    "Quill",
    "Rook",
    "Stan",
    "Thorn",
    "Under",
    "Vale",
    "West",
    "Yarrow",
    "Bram",
    "Cres",
    "Dew",
    "Fern",
    "Glen",
    "Holm",
    "Lark",
]
_SURNAME_END = [
    "by",
    "combe",
    "dale",
    "field",
    "ford",
    "ham",
    "hurst",
    "ley",
    "more",
    "ridge",
    "stead",
    "ton",
    "well",
    "wick",
    "worth",
    "gate",
    "bury",
    "mere",
]
# Girths of the five levels in mm, as (centre, spread): an invented spread of clients.
_GIRTHS = {
    "bust_girth": (950, 90),
    "underbust_girth": (800, 70),
    "waist_girth": (740, 90),
    "abdomen_girth": (900, 90),
    "hip_girth": (1010, 90),
}


def client_rows(count: int, rng: random.Random):
    """(reference, name, contact) for ``count`` invented clients."""
    for n in range(count):
        first = rng.choice(_FIRST_START) + rng.choice(_FIRST_END)
        surname = rng.choice(_SURNAME_START) + rng.choice(_SURNAME_END)
        if rng.random() < 0.1:
            surname += "-" + rng.choice(_SURNAME_START) + rng.choice(_SURNAME_END)
        if rng.random() < 0.5:
            contact = f"{first.lower()}.{surname.lower()}{n}@example.org"
        else:
            contact = f"+44 20 7946 {n % 10000:04d}"
        yield f"WF-{100000 + n}", f"{first} {surname}", contact


def seed(scale: str = "full", out=sys.stdout) -> dict:
    import django

    django.setup()
    from django.contrib.auth import get_user_model
    from django.core.management import call_command
    from django.db import connection, transaction
    from django.utils import timezone

    from fittings.models import Client, Measurement, MeasurementSession
    from fittings.services import plans as plan_services
    from fittings.services.demo import atelier_is_empty, load_demo_atelier
    from patterns.models import BasePattern

    clients_n, per_client, plans_n = SCALES[scale]
    started = time.perf_counter()
    call_command("migrate", interactive=False, verbosity=0)
    if not atelier_is_empty():
        out.write("The data folder is not empty; seeding only an empty one.\n")
        return {}
    load_demo_atelier(password=PASSWORD)
    fitter = get_user_model().objects.get(username="demo")
    rng = random.Random(8559)
    today = date(2026, 11, 30)
    now = timezone.now()
    kinds = ["first", "toile", "final", "check"]

    with transaction.atomic():
        rows = list(client_rows(clients_n, rng))
        for start in range(0, len(rows), BATCH):
            Client.objects.bulk_create(
                [
                    Client(
                        reference=ref,
                        name=name,
                        contact=contact,
                        consent_given_on=today,
                        created_by=fitter,
                        is_deleted=(i % 100 == 99),
                        deleted_at=now if i % 100 == 99 else None,
                    )
                    for i, (ref, name, contact) in enumerate(rows[start : start + BATCH], start)
                ]
            )
        client_ids = list(
            Client.all_objects.filter(reference__startswith="WF-1").order_by("id").values_list("id", flat=True)
        )
        out.write(f"  {len(client_ids)} clients in {time.perf_counter() - started:.1f} s\n")

        sessions = []
        for client_id in client_ids:
            day = today - timedelta(days=rng.randrange(60, 1800))
            for k in range(per_client):
                sessions.append(
                    MeasurementSession(
                        client_id=client_id,
                        taken_on=day + timedelta(days=30 * k),
                        measured_by=fitter,
                        kind=kinds[min(k, 3)],
                        unit="cm",
                    )
                )
        for start in range(0, len(sessions), BATCH):
            MeasurementSession.objects.bulk_create(sessions[start : start + BATCH])
        out.write(f"  {len(sessions)} sessions in {time.perf_counter() - started:.1f} s\n")

        # 1.5 million readings: plain executemany, as Django's per-object work would take minutes here.
        table = connection.ops.quote_name(Measurement._meta.db_table)
        insert = f"INSERT INTO {table} (session_id, code, value_mm) VALUES (%s, %s, %s)"
        session_ids = [s.pk for s in sessions]
        readings = 0
        with connection.cursor() as cursor:
            for start in range(0, len(session_ids), BATCH):
                batch = [
                    (session_id, code, f"{centre + rng.randint(-spread, spread)}.0000")
                    for session_id in session_ids[start : start + BATCH]
                    for code, (centre, spread) in _GIRTHS.items()
                ]
                cursor.executemany(insert, batch)
                readings += len(batch)
        out.write(f"  {readings} readings in {time.perf_counter() - started:.1f} s\n")

    corset = BasePattern.objects.get(garment="overbust corset", size_label="10")
    planned = []
    for client in Client.objects.filter(id__in=client_ids[: plans_n * 7 : 7]):
        session = client.sessions.order_by("-taken_on").prefetch_related("measurements").first()
        plan = plan_services.start_plan(
            client=client, session=session, pattern=corset, garment="Bench corset", user=fitter
        )
        planned.append(plan.pk)
    add_long_history(fitter, corset)
    with connection.cursor() as cursor:
        cursor.execute("ANALYZE")  # fresh planner statistics, as after a while in use
    summary = {
        "scale": scale,
        "clients": Client.all_objects.count(),
        "sessions": MeasurementSession.objects.count(),
        "readings": Measurement.objects.count(),
        "bench_plans": len(planned),
        "seconds": round(time.perf_counter() - started, 1),
    }
    out.write(json.dumps(summary) + "\n")
    return summary


def add_long_history(fitter, pattern, sessions: int = 120, plans: int = 6):
    """A client measured every few weeks for years, for the client page at its longest."""
    from fittings.models import Client, Measurement, MeasurementSession
    from fittings.services import plans as plan_services

    client = Client.objects.create(
        reference=LONG_HISTORY_REFERENCE,
        name="Ysette Thornleigh-Bramwick",
        contact="ysette.t@example.org",
        created_by=fitter,
    )
    start = date(2016, 1, 10)
    for k in range(sessions):
        session = MeasurementSession.objects.create(
            client=client, taken_on=start + timedelta(days=30 * k), measured_by=fitter, kind="check", unit="cm"
        )
        Measurement.objects.bulk_create(
            Measurement(session=session, code=code, value_mm=centre + (k % 7) - 3)
            for code, (centre, _) in _GIRTHS.items()
        )
    for session in client.sessions.order_by("-taken_on").prefetch_related("measurements")[:plans]:
        plan_services.start_plan(client=client, session=session, pattern=pattern, garment="Corset", user=fitter)
    return client


def plan_form_data(plan) -> dict:
    """What the plan page's form posts as it stands: every input, empty cells included, as the browser sends it."""
    from fittings.forms import PlanOptionsForm

    values, block, options = selectors.revision_inputs(selectors.latest_revision(plan))
    form = PlanOptionsForm(
        initial={**PlanOptionsForm.initial_for(options, block), "version": plan.version}, block=block, unit=options.unit
    )
    data = {field.html_name: "" if field.value() is None else str(field.value()) for field in form}
    data["unit"] = options.unit  # not a form field: tells the benchmark how to type a new ease
    return data


def fixtures(tablets: int) -> dict:
    """Signed-in sessions for ``tablets`` tablets and the ids the benchmark visits, as JSON-ready data.

    The sessions are made here, not by signing in over HTTP, so the first
    request a fresh server sees can be the one being timed, and so twenty
    password hashes do not load the server during the run.
    """
    import django

    django.setup()
    from django.contrib.auth import BACKEND_SESSION_KEY, HASH_SESSION_KEY, SESSION_KEY, get_user_model
    from django.contrib.sessions.backends.db import SessionStore
    from django.utils.crypto import get_random_string

    from fittings.models import Client, Plan

    user = get_user_model().objects.get(username="demo")
    sessions = []
    for _ in range(tablets):
        store = SessionStore()
        store[SESSION_KEY] = str(user.pk)
        store[BACKEND_SESSION_KEY] = "django.contrib.auth.backends.ModelBackend"
        store[HASH_SESSION_KEY] = user.get_session_auth_hash()
        store.create()
        sessions.append({"session_key": store.session_key, "csrf_token": get_random_string(32)})
    plans = [
        {
            "pk": p.pk,
            "garment": p.garment,
            "client": p.client.reference,
            "revisions": list(p.revisions.order_by("number").values_list("number", flat=True)),
            "form": plan_form_data(p),
        }
        for p in Plan.objects.select_related("client").order_by("pk")
    ]
    clients = list(Client.objects.order_by("pk").values_list("pk", flat=True)[:: max(1, Client.objects.count() // 500)])
    longest = Client.objects.filter(reference=LONG_HISTORY_REFERENCE).values_list("pk", flat=True).first()
    return {"sessions": sessions, "plans": plans, "clients": clients, "long_history_client": longest}


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--scale", choices=sorted(SCALES), default="full")
    parser.add_argument(
        "--fixtures",
        type=int,
        metavar="TABLETS",
        help="Do not seed: print sessions for this many tablets and the ids to visit, as JSON.",
    )
    args = parser.parse_args(argv)
    if not os.environ.get("ATELIER_DATA_DIR"):
        parser.error("Set ATELIER_DATA_DIR to an empty folder first; the benchmark never seeds the real one.")
    if args.fixtures:
        print(json.dumps(fixtures(args.fixtures)))
    else:
        seed(args.scale)


if __name__ == "__main__":
    main()
