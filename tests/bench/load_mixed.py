"""Twenty simulated tablets at once on 127.0.0.1: searching, reading clients and revisions, recomputing.

Called by tests/bench/run_all.py (``run_load``); the saves under load are the
tests/bench/load_tablets.py.  Each tablet is a thread with its
own session and keep-alive connection, and behaves like a fitter: it types a
search a letter at a time (300 ms apart, htmx's delay on the search box),
opens a client or a revision, or types into the plan form (400 ms apart, the
plan form's delay), then pauses 1-3 s before the next thing.  With
``previews`` a recompute is followed, as in the browser, by the preview and
the seam checks for the same values.

Bounded: a run stops at ``seconds`` and no tablet sends more than
MAX_REQUESTS_PER_TABLET requests.
"""

import random
import statistics
import threading
import time
from collections import defaultdict
from urllib.parse import quote, urlencode

from tests.bench.tablet import Tablet

MAX_REQUESTS_PER_TABLET = 5_000
TYPING_PAUSE_S = {"search": 0.3, "recompute": 0.4}
THINK_S = (1.0, 3.0)
SURNAMES = ["thornley", "ashford", "westcombe", "marshfield", "valeby", "goldwick", "rookmere", "fernley"]


def _percentile(values, share):
    values = sorted(values)
    return values[min(len(values) - 1, int(round(share * (len(values) - 1))))] if values else float("nan")


def _ease(unit, i):
    if unit == "in":
        return f"-{1 + i % 3} {1 + 2 * (i % 8)}/16"
    return f"-{4 + (i % 40) / 10:.1f}"


def _tablet(port, session, fixtures, until, seed, previews, record):
    rng = random.Random(seed)
    tablet = Tablet(port, **session)
    plans = fixtures["plans"]
    revisions = [(p["pk"], n) for p in plans for n in p["revisions"]]
    clients = fixtures["clients"]
    sent = 0

    def call(kind, method, path, data=None, htmx=False):
        nonlocal sent
        sent += 1
        try:
            reply = tablet.request(method, path, data, htmx=htmx)
        except Exception as exc:  # noqa: BLE001 - any failure is an error in the figures
            record(kind, None, f"{type(exc).__name__}: {exc}")
            tablet.close()
            return None
        record(kind, reply.ms, None if reply.status < 400 else f"HTTP {reply.status}")
        return reply

    while time.monotonic() < until and sent < MAX_REQUESTS_PER_TABLET:
        action = rng.choices(["search", "client", "revision", "recompute"], weights=[3, 2, 2, 3])[0]
        if action == "search":
            word = rng.choice(SURNAMES + [f"wf-1{rng.randrange(10000, 99999)}"])
            for n in range(1, rng.randint(3, 7) + 1):
                call("client list search", "GET", f"/?q={quote(word[:n])}", htmx=True)
                time.sleep(TYPING_PAUSE_S["search"])
        elif action == "client":
            call("client page", "GET", f"/clients/{rng.choice(clients)}/")
        elif action == "revision":
            call("revision page", "GET", "/plans/{}/revisions/{}/".format(*rng.choice(revisions)))
        else:
            plan = rng.choice(plans)
            data = {k: v for k, v in plan["form"].items() if k != "unit"}
            for _ in range(rng.randint(2, 5)):
                data["ease_waist"] = _ease(plan["form"]["unit"], rng.randrange(1000))
                reply = call("recompute", "POST", f"/plans/{plan['pk']}/recompute/", data, htmx=True)
                if previews and reply is not None and reply.status == 200:
                    query = urlencode({k: v for k, v in data.items() if k != "csrfmiddlewaretoken"})
                    call("preview", "GET", f"/plans/{plan['pk']}/preview.svg?{query}")
                    call("seam checks", "GET", f"/plans/{plan['pk']}/checks/?{query}", htmx=True)
                time.sleep(TYPING_PAUSE_S["recompute"])
        time.sleep(rng.uniform(*THINK_S))
    tablet.close()


def run_load(port, sessions, fixtures, seconds=60, previews=False):
    """Run len(sessions) tablets for ``seconds``; the round trips by kind of request, errors counted."""
    times = defaultdict(list)
    errors = defaultdict(list)
    lock = threading.Lock()

    def record(kind, ms, error):
        with lock:
            if error:
                errors[kind].append(error)
            else:
                times[kind].append(ms)

    started = time.monotonic()
    until = started + seconds
    threads = [
        threading.Thread(target=_tablet, args=(port, session, fixtures, until, i, previews, record), daemon=True)
        for i, session in enumerate(sessions)
    ]
    for thread in threads:
        thread.start()
        time.sleep(0.05)  # tablets come in one after another, not in one burst
    for thread in threads:
        thread.join(timeout=seconds + 120)
    took = time.monotonic() - started
    every = [ms for values in times.values() for ms in values]
    error_count = sum(len(v) for v in errors.values())
    return {
        "tablets": len(sessions),
        "seconds": took,
        "with_previews": previews,
        "requests": len(every) + error_count,
        "errors": error_count,
        "requests_per_s": (len(every) + error_count) / took,
        "all": {"median": statistics.median(every), "p95": _percentile(every, 0.95), "max": max(every)}
        if every
        else {},
        "by_kind": {
            kind: {"n": len(v), "median": statistics.median(v), "p95": _percentile(v, 0.95), "max": max(v)}
            for kind, v in sorted(times.items())
        },
        "error_samples": {kind: v[:3] for kind, v in errors.items()},
        "think_s": THINK_S,
        "typing_pause_s": TYPING_PAUSE_S,
    }
