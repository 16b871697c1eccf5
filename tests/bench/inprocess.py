"""The live recompute view called directly, without HTTP or middleware, beside the same two floors.

    ATELIER_DATA_DIR=<seeded folder> .venv/bin/python -m tests.bench.inprocess [--rounds 300]

Prints JSON (tests/bench/run_all.py reads it).  The HTTP figures in run_all.py
include the middleware (session, sign-in, CSRF, security headers), which
every page pays; these show the views' own work.  Each round calls the empty
view, the 10-field form page and the recompute once, in turn.
"""

import argparse
import json
import os
import sys
import time
from pathlib import Path
from urllib.parse import urlencode

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
os.environ.setdefault("DJANGO_SETTINGS_MODULE", "tests.bench.settings")


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=300)
    args = parser.parse_args(argv)

    import django

    django.setup()
    from django.contrib.auth import get_user_model
    from django.test import RequestFactory
    from django_htmx.middleware import HtmxDetails

    from fittings import views_plans
    from fittings.models import Plan
    from tests.bench import urls as floors
    from tests.bench.run_all import recompute_data, summary
    from tests.bench.seed import plan_form_data

    user = get_user_model().objects.get(username="demo")
    factory = RequestFactory(HTTP_HOST="127.0.0.1")
    plans = {
        p.garment: {"pk": p.pk, "form": plan_form_data(p)}
        for p in Plan.objects.filter(garment__in=["Summer wedding corset", "Daily-wear corset"])
    }

    def request(method, path, data=None, htmx=False):
        if method == "POST":
            req = factory.post(
                path,
                urlencode(data),
                content_type="application/x-www-form-urlencoded",
                **({"HTTP_HX_REQUEST": "true"} if htmx else {}),
            )
        else:
            req = factory.get(path)
        req.user = user
        req.htmx = HtmxDetails(req)
        req._dont_enforce_csrf_checks = True
        return req

    cases = {
        "floor_empty": lambda i: floors.empty(request("GET", "/bench/empty/")),
        "floor_form": lambda i: floors.ten_field_form(request("GET", "/bench/form/")),
    }
    for garment, plan in plans.items():
        cases[f"recompute:{garment}"] = lambda i, plan=plan: views_plans.plan_recompute(
            request("POST", f"/plans/{plan['pk']}/recompute/", recompute_data(plan, i), htmx=True), plan["pk"]
        )
    for fn in cases.values():
        for i in range(5):
            assert fn(i).status_code == 200
    wall = {name: [] for name in cases}
    cpu = {name: [] for name in cases}
    for i in range(args.rounds):
        for name, fn in cases.items():
            w, c = time.perf_counter(), time.thread_time()
            fn(i)
            cpu[name].append((time.thread_time() - c) * 1000)
            wall[name].append((time.perf_counter() - w) * 1000)
    print(json.dumps({name: {"server": summary(wall[name]), "cpu": summary(cpu[name])} for name in cases}))


if __name__ == "__main__":
    main()
