"""Every speed figure of the app in one run, each beside a floor measured in the same run.

    .venv/bin/python tests/bench/run_all.py [--scale small] [--data DIR] [--quick] [--skip pdf,load]
    .venv/bin/python -m tests.bench  (the same)

Seeds an invented atelier at scale (tests/bench/seed.py) into a temporary data
folder, serves it with ``manage.py start`` (gunicorn, the same workers,
threads and warm-up as production) on 127.0.0.1 only, and measures:

- the live recompute (htmx POST -> the allotment table) against an empty
  Django view and a template with a 10-field form, over HTTP (with every
  middleware) and called directly (tests/bench/inprocess.py);
- the panel preview, drawn (a cache miss) and again (a hit), against a bare
  matplotlib Figure with the same artists written as SVG in this process;
- the client list search and the client and revision pages at scale;
- the work order + cutting sheet (tests/bench/bench_pdf.py, in its own process);
- 20 simulated tablets for 60 s (tests/bench/load_mixed.py);
- the first request after a fresh start against the warm median.

Prints a table (median, p95, floor, ratio, target) and writes it with the
machine's details to tests/bench/results/latest.json.  Every loop is bounded in
requests and in time; nothing leaves the machine.
"""

import argparse
import io
import json
import os
import platform
import shutil
import signal
import socket
import statistics
import subprocess
import sys
import tempfile
import time
from datetime import datetime, timezone
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from tests.bench.tablet import LOOPBACK, Tablet  # noqa: E402

PYTHON = sys.executable
RESULTS = ROOT / "tests" / "bench" / "results"

# --- small helpers ----------------------------------------------------------------------


def percentile(values, share):
    values = sorted(values)
    if not values:
        return float("nan")
    return values[min(len(values) - 1, int(round(share * (len(values) - 1))))]


def summary(values):
    return (
        {"n": len(values), "median": statistics.median(values), "p95": percentile(values, 0.95), "max": max(values)}
        if values
        else {"n": 0}
    )


def free_port():
    with socket.socket() as probe:
        probe.bind((LOOPBACK, 0))
        return probe.getsockname()[1]


def machine():
    model = ""
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                model = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    return {
        "date": datetime.now(timezone.utc).astimezone().isoformat(timespec="seconds"),
        "nproc": os.cpu_count(),
        "arch": platform.machine(),
        "cpu": model,
        "python": platform.python_version(),
        "system": platform.platform(),
    }


def run_json(argv, env, timeout):
    done = subprocess.run(argv, env=env, cwd=ROOT, capture_output=True, text=True, timeout=timeout)
    if done.returncode != 0:
        raise RuntimeError(f"{' '.join(map(str, argv))} failed:\n{done.stdout}\n{done.stderr}")
    text = done.stdout.strip()
    try:
        return json.loads(text)
    except json.JSONDecodeError:
        return json.loads(text.splitlines()[-1])  # a script that printed progress before its JSON line


# --- the server ----------------------------------------------------------------------


class Server:
    """``manage.py start`` on 127.0.0.1 with the benchmark settings; stopped by its own process group."""

    def __init__(self, env, port, log_path, warm_up=True):
        self.env, self.port, self.log_path, self.warm_up = env, port, log_path, warm_up
        self.process = None
        self.listening_after_s = None

    def start(self, timeout=120.0):
        log = open(self.log_path, "ab")
        if self.warm_up:
            argv = [PYTHON, "manage.py", "start", "--bind", f"{LOOPBACK}:{self.port}", "--no-demo"]
        else:
            # The same gunicorn command as `manage.py start`, without its warm-up (for comparison only).
            argv = [
                PYTHON,
                "-m",
                "gunicorn",
                "atelier.wsgi:application",
                "--bind",
                f"{LOOPBACK}:{self.port}",
                "--workers",
                "2",
                "--threads",
                "4",
                "--chdir",
                str(ROOT),
                "--timeout",
                "120",
                "--preload",
                "--access-logfile",
                "-",
            ]
        env = dict(self.env)
        if not self.warm_up:
            env.pop("ATELIER_WARM_UP", None)
        started = time.perf_counter()
        self.process = subprocess.Popen(
            argv, cwd=ROOT, env=env, stdout=log, stderr=subprocess.STDOUT, start_new_session=True
        )
        deadline = started + timeout
        while time.perf_counter() < deadline:
            if self.process.poll() is not None:
                raise RuntimeError(f"The server stopped while starting; see {self.log_path}")
            try:
                with socket.create_connection((LOOPBACK, self.port), timeout=0.2):
                    self.listening_after_s = time.perf_counter() - started
                    return self
            except OSError:
                time.sleep(0.02)
        self.stop()
        raise RuntimeError(f"The server did not listen within {timeout:.0f} s; see {self.log_path}")

    def stop(self):
        if self.process is None or self.process.poll() is not None:
            return
        os.killpg(self.process.pid, signal.SIGTERM)
        try:
            self.process.wait(timeout=30)
        except subprocess.TimeoutExpired:
            os.killpg(self.process.pid, signal.SIGKILL)
            self.process.wait(timeout=10)


# --- what a fitter types -------------------------------------------------------------


def ease_values(unit, count):
    """Waist ease as a fitter would type it, ``count`` different values in the plan's unit."""
    if unit == "in":
        return [f"-{1 + i // 8} {1 + 2 * (i % 8)}/16" for i in range(count)]
    return [f"-{4 + i / 10:.1f}" for i in range(count)]


def recompute_data(plan, i):
    data = {k: v for k, v in plan["form"].items() if k != "unit"}
    data["ease_waist"] = ease_values(plan["form"]["unit"], 64)[i % 64]
    return data


def preview_query(plan, i):
    """The plan form with a waist ease that is new for every ``i`` and far enough from the others to move
    the seams (values a rounding step apart can give the same allotment, and so the same picture)."""
    from urllib.parse import urlencode

    data = recompute_data(plan, 0)
    data.pop("csrfmiddlewaretoken", None)
    quarters = 4 + 2 * i  # half an inch, or 1.25 cm, apart
    data["ease_waist"] = (
        f"-{quarters // 4} {quarters % 4}/4" if plan["form"]["unit"] == "in" else f"-{1.25 * quarters / 2:.2f}"
    )
    return urlencode(data)


SEARCHES = [
    # A surname typed letter by letter, as htmx sends it (each after a 300 ms pause).
    "t",
    "th",
    "tho",
    "thor",
    "thorn",
    "thornl",
    "thornle",
    "thornley",
    # A first name, a reference and part of one, a double-barrelled surname, a telephone number, nothing.
    "mar",
    "marin",
    "wf-1",
    "wf-1234",
    "wf-123456",
    "123456",
    "vale",
    "west-",
    "7946",
    "zzq",
]


# --- measuring ------------------------------------------------------------------------


def timed_rounds(cases, rounds, time_limit_s, keep=()):
    """Each case once per round, in turn, so floors and the measured page see the same load.

    Server times of the cases named in ``keep`` are also returned whole, under "samples".
    """
    got = {name: {"ms": [], "server_ms": [], "cpu_ms": [], "errors": 0} for name in cases}
    stop_at = time.perf_counter() + time_limit_s
    for i in range(rounds):
        if time.perf_counter() > stop_at:
            break
        for name, fn in cases.items():
            reply = fn(i)
            entry = got[name]
            if reply.status >= 400:
                entry["errors"] += 1
                entry.setdefault("first_error", f"{reply.status}: {reply.text[:300]}")
                continue
            entry["ms"].append(reply.ms)
            if reply.server_ms is not None:
                entry["server_ms"].append(reply.server_ms)
            if reply.cpu_ms is not None:
                entry["cpu_ms"].append(reply.cpu_ms)
    return {
        name: {
            "client": summary(v["ms"]),
            "server": summary(v["server_ms"]),
            "cpu": summary(v["cpu_ms"]),
            "errors": v["errors"],
            **({"first_error": v["first_error"]} if "first_error" in v else {}),
            **({"samples": v["server_ms"], "cpu_samples": v["cpu_ms"]} if name in keep else {}),
        }
        for name, v in got.items()
    }


def measure_cold_start(env, port, log, plan, sessions, warm_up, starts=3):
    """The first recompute after each of ``starts`` fresh starts, and the ten after it."""
    firsts = []
    for n in range(starts):
        server = Server(env, port, log, warm_up=warm_up).start()
        try:
            tablet = Tablet(port, **sessions[n])
            url = f"/plans/{plan['pk']}/recompute/"
            first = tablet.post(url, recompute_data(plan, 1), htmx=True)
            following = [tablet.post(url, recompute_data(plan, i), htmx=True) for i in range(2, 12)]
            tablet.close()
            firsts.append(
                {
                    "listening_after_s": server.listening_after_s,
                    "first_ms": first.ms,
                    "first_server_ms": first.server_ms,
                    "first_status": first.status,
                    "next_10_median_ms": statistics.median(r.ms for r in following),
                    "next_10_max_ms": max(r.ms for r in following),
                }
            )
        finally:
            server.stop()
    return {
        "starts": firsts,
        "first_ms": statistics.median(f["first_ms"] for f in firsts),
        "first_max_ms": max(f["first_ms"] for f in firsts),
    }


def measure_recompute(tablet, plans, rounds, limit):
    cases = {
        "floor_empty": lambda i: tablet.get("/bench/empty/"),
        "floor_form": lambda i: tablet.get("/bench/form/"),
    }
    for plan in plans:
        url = f"/plans/{plan['pk']}/recompute/"
        cases[f"recompute:{plan['garment']}"] = lambda i, url=url, plan=plan: tablet.post(
            url, recompute_data(plan, i), htmx=True
        )
    return timed_rounds(cases, rounds, limit)


def preview_floor(lines, labels, size):
    """A bare matplotlib Figure with the preview's artists (axis off, same rc), written as SVG."""
    import matplotlib
    import numpy as np
    from matplotlib.backends.backend_svg import FigureCanvasSVG
    from matplotlib.figure import Figure

    from patterns.core.preview import _RC

    with matplotlib.rc_context(_RC):
        fig = Figure(figsize=size)
        ax = fig.add_axes((0, 0, 1, 1))
        ax.set_axis_off()
        for k, n in enumerate(lines):
            t = np.linspace(0, 2 * np.pi, n)
            ax.plot(np.cos(t) + k * 2.5, np.sin(t), linewidth=1.2)
        for k in range(labels):
            ax.text(k % 10 * 1.5, k // 10 * 0.3, f"+0.{k % 10}", fontsize=9)
        ax.set_xlim(-1.5, 2.5 * max(1, len(lines)))
        ax.set_ylim(-1.5, 1.5)
        buf = io.BytesIO()
        FigureCanvasSVG(fig).print_svg(buf, metadata={"Date": None})
    return buf.getvalue()


def svg_artists(svg: bytes):
    """Lines (with their points), labels and size of a preview, read back from its SVG."""
    import re

    text = svg.decode()
    width = float(re.search(r'width="([0-9.]+)pt"', text).group(1)) / 72
    height = float(re.search(r'height="([0-9.]+)pt"', text).group(1)) / 72
    paths = re.findall(r'<path d="([^"]+)"', text)
    lines = [len(re.findall(r"\bL ", d)) + 1 for d in paths if re.search(r"\bL ", d)]
    labels = text.count("<text ")
    return lines, labels, (width, height)


def measure_preview(tablet, plan, rounds, limit):
    url = f"/plans/{plan['pk']}/preview.svg"
    checks = f"/plans/{plan['pk']}/checks/"
    sample = tablet.get(f"{url}?{preview_query(plan, 999)}")
    lines, labels, size = svg_artists(sample.body)
    for _ in range(3):
        preview_floor(lines, labels, size)
        preview_floor([200] * 6, 30, (10, 7))
    got = {
        k: []
        for k in (
            "floor_same_artists",
            "floor_6x200_30",
            "miss",
            "miss_server",
            "miss_cpu",
            "hit",
            "hit_server",
            "hit_cpu",
            "checks_after",
            "checks_after_server",
            "checks_after_cpu",
        )
    }
    hits, errors, redrawn, not_new = 0, 0, 0, 0
    stop_at = time.perf_counter() + limit
    for i in range(rounds):
        if time.perf_counter() > stop_at:
            break
        start = time.perf_counter()
        preview_floor(lines, labels, size)
        got["floor_same_artists"].append((time.perf_counter() - start) * 1000)
        start = time.perf_counter()
        preview_floor([200] * 6, 30, (10, 7))
        got["floor_6x200_30"].append((time.perf_counter() - start) * 1000)
        query = preview_query(plan, i)
        miss = tablet.get(f"{url}?{query}")
        hit = tablet.get(f"{url}?{query}")
        after = tablet.get(f"{checks}?{query}", htmx=True)
        if miss.status != 200 or hit.status != 200 or after.status != 200:
            errors += 1
            continue
        assert hit.body == miss.body
        first, second = miss.headers.get("Server-Timing", ""), hit.headers.get("Server-Timing", "")
        if "preview;desc=" in first and "desc=miss" not in first:
            not_new += 1  # the same picture as an earlier input: not a drawing, so not counted as one
            continue
        hits += "desc=hit" in second
        redrawn += "desc=miss" in second
        for name, reply in (("miss", miss), ("hit", hit), ("checks_after", after)):
            got[name].append(reply.ms)
            got[f"{name}_server"].append(reply.server_ms)
            got[f"{name}_cpu"].append(reply.cpu_ms)
    out = {k: summary(v) for k, v in got.items()}
    out.update(
        {
            "lines": len(lines),
            "points": sum(lines),
            "labels": labels,
            "size_in": size,
            "rounds": len(got["miss"]),
            "second_request_hit": hits,
            "second_request_drawn_again": redrawn,
            "first_request_not_new": not_new,
            "errors": errors,
        }
    )
    return out


def measure_pages(tablet, fixtures, rounds, limit):
    clients = fixtures["clients"]
    revisions = [(p["pk"], n) for p in fixtures["plans"] for n in p["revisions"]]
    from urllib.parse import quote

    cases = {"floor_empty": lambda i: tablet.get("/bench/empty/"), "floor_form": lambda i: tablet.get("/bench/form/")}
    for q in SEARCHES:
        cases[f"search:{q}"] = lambda i, q=q: tablet.get(f"/?q={quote(q)}", htmx=True)
    cases["client list, full page"] = lambda i: tablet.get("/")
    cases["client list, page 2000"] = lambda i: tablet.get("/?page=2000", htmx=True)
    cases["client page"] = lambda i: tablet.get(f"/clients/{clients[i % len(clients)]}/")
    if fixtures.get("long_history_client"):
        cases["client page, 120 sessions"] = lambda i: tablet.get(f"/clients/{fixtures['long_history_client']}/")
    cases["revision page"] = lambda i: tablet.get("/plans/{}/revisions/{}/".format(*revisions[i % len(revisions)]))
    searches = [f"search:{q}" for q in SEARCHES]
    pages = timed_rounds(cases, rounds, limit, keep=searches)
    every = [ms for name in searches for ms in pages[name].pop("samples")]
    cpu = [ms for name in searches for ms in pages[name].pop("cpu_samples")]
    pages["every search"] = {
        "server": summary(every),
        "cpu": summary(cpu),
        "client": summary([]),
        "errors": sum(pages[n]["errors"] for n in searches),
    }
    return pages


def measure_pdf(env, quick):
    script = ROOT / "tests" / "bench" / "bench_pdf.py"
    if not script.exists():
        return {"skipped": "bench/bench_pdf.py does not exist yet"}
    runs = "3" if quick else "7"
    started = time.perf_counter()
    try:
        rows = run_json([PYTHON, str(script), "--json", "--runs", runs], env, timeout=900)
    except (RuntimeError, subprocess.TimeoutExpired, json.JSONDecodeError) as exc:
        return {"error": str(exc)[:2000]}
    rows["took_s"] = time.perf_counter() - started
    return rows


# --- the table -----------------------------------------------------------------------


def fmt(value, digits=1):
    return "" if value is None or value != value else f"{value:.{digits}f}"


def table_rows(results):
    """(what, median, p95, cpu median, floor, ratio, target, met) for every figure of a run.

    ``met`` compares the p95 with ``limit`` and the ratio of the medians with ``max_ratio``.
    """
    rows = []

    def add(what, stats, cpu=None, floor=None, floor_name="", target="", limit=None, max_ratio=None):
        med, p95 = stats.get("median"), stats.get("p95")
        ratio = med / floor if med is not None and floor else None
        met = ""
        if limit is not None or max_ratio is not None:
            ok = (limit is None or (p95 is not None and p95 <= limit)) and (
                max_ratio is None or (ratio is not None and ratio <= max_ratio)
            )
            met = "yes" if ok else "NO"
        rows.append(
            (
                what,
                fmt(med),
                fmt(p95),
                fmt((cpu or {}).get("median")),
                f"{fmt(floor)} {floor_name}".strip(),
                fmt(ratio, 2) + "x" if ratio else "",
                target,
                met,
            )
        )

    cold = results.get("cold_start", {})

    def recompute_runs(key, empty_label, form_label):
        """The rows of a recompute measurement's two floors, then each recompute with those floors."""
        block = results.get(key, {})
        if not block:
            return
        empty, form = block["floor_empty"], block["floor_form"]
        add(empty_label, empty["server"], empty["cpu"])
        add(form_label, form["server"], form["cpu"])
        for name, r in block.items():
            if name.startswith("recompute:"):
                yield name, r, empty, form

    for name, r, empty, form in recompute_runs(
        "recompute", "floor: empty view (server ms)", "floor: template with a 10-field form (server ms)"
    ):
        add(f"{name} (server ms)", r["server"], r["cpu"], form["server"]["median"], "form", "p95 <= 50 ms", limit=50)
        add(f"{name} (round trip ms)", r["client"], None, empty["client"]["median"], "empty")
    for name, r, empty, form in recompute_runs(
        "recompute_in_process",
        "in-process floor: empty view, no middleware (ms)",
        "in-process floor: 10-field form fragment, no middleware (ms)",
    ):
        label = f"in-process {name}, no middleware (ms)"
        add(label, r["server"], r["cpu"], form["server"]["median"], "form")
        add(label, r["server"], r["cpu"], empty["server"]["median"], "empty")
    pv = results.get("preview", {})
    if "miss" in pv:
        floor = pv["floor_same_artists"]["median"]
        add(
            f"floor: bare Figure, {pv['lines']} lines/{pv['points']} pts/{pv['labels']} labels, SVG (ms)",
            pv["floor_same_artists"],
        )
        add("reference: bare Figure, 6 x 200 pts, 30 labels, SVG (ms)", pv["floor_6x200_30"])
        add(
            "preview, new input (server ms)",
            pv["miss_server"],
            pv["miss_cpu"],
            floor,
            "bare",
            "p95 <= 200 ms, <= 1.3x",
            limit=200,
            max_ratio=1.3,
        )
        add("preview, new input (round trip ms)", pv["miss"], None, floor, "bare")
        add(
            f"preview, same input again (server ms; {pv['second_request_hit']}/{pv['rounds']} cache hits)",
            pv["hit_server"],
            pv["hit_cpu"],
            floor,
            "bare",
        )
        add("seam checks after the preview (server ms)", pv["checks_after_server"], pv["checks_after_cpu"])
    pg = results.get("pages", {})
    if pg:
        form = pg["floor_form"]["server"]["median"]
        for name, r in pg.items():
            if not name.startswith("floor") and r["server"].get("n"):
                add(
                    f"{name} (server ms)",
                    r["server"],
                    r.get("cpu"),
                    form,
                    "form",
                    *(("p95 <= 30 ms", 30) if name == "every search" else ()),
                )

    def wall_and_cpu_ms(r):
        """A print benchmark row's figures (in seconds) as the wall and CPU statistics of a table row."""
        return (
            {"median": r["wall_median_s"] * 1000, "p95": r["wall_p95_s"] * 1000},
            {"median": r["cpu_median_s"] * 1000},
        )

    pdf = results.get("pdf", {})
    if "six_panel" in pdf:
        six, minimal = pdf["six_panel"], pdf["minimal_page"]
        add("floor: minimal one-page PDF (ms)", *wall_and_cpu_ms(minimal))
        add(
            f"work order + cutting sheet, 6 panels (ms; peak {six.get('peak_python_mib', 0):.0f} MiB Python, "
            f"{pdf.get('max_rss_mib', 0):.0f} MiB resident)",
            *wall_and_cpu_ms(six),
            minimal["wall_median_s"] * 1000,
            "minimal",
            "median <= 1500 ms, <= 3x",
            max_ratio=3.0,
        )
        rows[-1] = (*rows[-1][:7], "yes" if six["wall_median_s"] <= 1.5 and rows[-1][7] == "yes" else "NO")
        plain = pdf.get("minimal_page_default_call")
        if plain:
            add("floor: minimal one-page PDF, WeasyPrint's plain call (ms)", *wall_and_cpu_ms(plain))
            add(
                "work order + cutting sheet, 6 panels, against the plain call (ms)",
                *wall_and_cpu_ms(six),
                plain["wall_median_s"] * 1000,
                "plain call",
                "<= 3x",
                max_ratio=3.0,
            )
    for key, label in (("load", "20 tablets"), ("load_with_previews", "20 tablets + previews")):
        load = results.get(key, {})
        if "all" not in load:
            continue
        for name, r in load["by_kind"].items():
            add(f"{label}, {name} (round trip ms)", r)
        add(
            f"{label}, all {load['requests']} requests ({load['requests_per_s']:.0f}/s), {load['errors']} errors",
            load["all"],
            target="p95 <= 250 ms, 0 errors" if key == "load" else "",
            limit=250 if key == "load" else None,
        )
        if key == "load" and load["errors"]:
            rows[-1] = (*rows[-1][:7], "NO")
    rc = results.get("recompute", {})
    warm = next((r["client"] for n, r in rc.items() if n.startswith("recompute:")), {})
    for name, c in cold.items():
        if "first_ms" in c:
            add(
                f"first recompute after start, {name}, {len(c['starts'])} starts (round trip ms; max in p95)",
                {"median": c["first_ms"], "p95": c["first_max_ms"]},
                None,
                warm.get("median"),
                "warm p50",
            )
    return rows


def print_table(results, out=sys.stdout):
    header = ("what", "median", "p95", "cpu med", "floor", "ratio", "target", "met")
    rows = table_rows(results)
    widths = [max(len(str(r[i])) for r in [header, *rows]) for i in range(len(header))]
    left = {0, 4, 6, 7}

    def line(r):
        return "  ".join(str(c).ljust(w) if i in left else str(c).rjust(w) for i, (c, w) in enumerate(zip(r, widths)))

    out.write(line(header) + "\n" + "-" * len(line(header)) + "\n")
    for r in rows:
        out.write(line(r) + "\n")


# --- the run -------------------------------------------------------------------------


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--scale", choices=["full", "small"], default="full")
    parser.add_argument("--data", help="A data folder seeded by an earlier run (kept); default: a new temporary one.")
    parser.add_argument("--quick", action="store_true", help="Fewer rounds and a 20 s load: a quick try, not a figure.")
    parser.add_argument(
        "--skip", default="", help="Comma-separated parts to leave out: cold,recompute,preview,pages,pdf,load"
    )
    parser.add_argument("--out", default=str(RESULTS / "latest.json"))
    args = parser.parse_args(argv)
    skip = {s.strip() for s in args.skip.split(",") if s.strip()}
    rounds = 40 if args.quick else 200

    results = {"machine": machine(), "scale": args.scale, "quick": args.quick, "load_average_start": os.getloadavg()}
    temporary = args.data is None
    data_dir = Path(args.data or tempfile.mkdtemp(prefix="atelier-bench-")).resolve()
    data_dir.mkdir(parents=True, exist_ok=True)
    env = {
        **os.environ,
        "ATELIER_DATA_DIR": str(data_dir),
        "DJANGO_SETTINGS_MODULE": "tests.bench.settings",
        "ATELIER_STATIC_ROOT": str(data_dir / "static"),
        "ATELIER_LOG_LEVEL": "WARNING",
        "PYTHONPATH": str(ROOT),
    }
    env.pop("ATELIER_DEBUG", None)
    env.pop("DATABASE_URL", None)
    log = data_dir / "server.log"
    print(f"data folder {data_dir}; server log {log}", flush=True)
    try:
        if not (data_dir / "seeded.json").exists():
            print(f"seeding ({args.scale})...", flush=True)
            started = time.perf_counter()
            done = subprocess.run(
                [PYTHON, "-m", "tests.bench.seed", "--scale", args.scale],
                env=env,
                cwd=ROOT,
                capture_output=True,
                text=True,
                timeout=3600,
            )
            if done.returncode != 0:
                raise RuntimeError(done.stdout + done.stderr)
            (data_dir / "seeded.json").write_text(done.stdout.strip().splitlines()[-1])
            print(f"  seeded in {time.perf_counter() - started:.0f} s", flush=True)
        results["data"] = json.loads((data_dir / "seeded.json").read_text())
        fixtures = run_json([PYTHON, "-m", "tests.bench.seed", "--fixtures", "30"], env, timeout=600)
        sessions = fixtures["sessions"]
        plans = fixtures["plans"]
        demo_plans = [p for p in plans if p["garment"] in ("Daily-wear corset", "Summer wedding corset")]
        port = free_port()

        if "cold" not in skip:
            print("cold start...", flush=True)
            results["cold_start"] = {
                "with warm-up (manage.py start)": measure_cold_start(
                    env, port, log, demo_plans[0], sessions[0:3], True
                ),
                "without warm-up (gunicorn alone)": measure_cold_start(
                    env, port, log, demo_plans[0], sessions[3:6], False
                ),
            }

        if "recompute" not in skip:
            print("recompute in-process, no middleware...", flush=True)
            results["recompute_in_process"] = run_json(
                [PYTHON, "-m", "tests.bench.inprocess", "--rounds", "60" if args.quick else "300"], env, timeout=900
            )

        server = Server(env, port, log).start()
        try:
            tablet = Tablet(port, **sessions[6])
            for _ in range(5):  # both workers past their first request
                tablet.get("/bench/empty/")
                tablet.get("/bench/form/")
            if "recompute" not in skip:
                print("recompute...", flush=True)
                results["recompute"] = measure_recompute(tablet, demo_plans, rounds, 240)
            if "preview" not in skip:
                print("preview...", flush=True)
                results["preview"] = measure_preview(tablet, demo_plans[-1], 10 if args.quick else 40, 240)
            if "pages" not in skip:
                print("search and pages...", flush=True)
                results["pages"] = measure_pages(tablet, fixtures, 10 if args.quick else 40, 300)
            tablet.close()
            if "load" not in skip:
                from tests.bench.load_mixed import run_load

                print("20 tablets...", flush=True)
                results["load"] = run_load(port, sessions[7:27], fixtures, seconds=20 if args.quick else 60)
                print("20 tablets, each recompute followed by its preview and checks...", flush=True)
                results["load_with_previews"] = run_load(
                    port, sessions[7:27], fixtures, seconds=10 if args.quick else 30, previews=True
                )
        finally:
            server.stop()
        if "pdf" not in skip:
            print("printing (tests/bench/bench_pdf.py)...", flush=True)
            results["pdf"] = measure_pdf(env, args.quick)
    finally:
        if temporary:
            shutil.rmtree(data_dir, ignore_errors=True)
    results["load_average_end"] = os.getloadavg()
    out = Path(args.out)
    out.parent.mkdir(parents=True, exist_ok=True)
    results["table"] = [
        dict(zip(("what", "median", "p95", "cpu_median", "floor", "ratio", "target", "met"), row))
        for row in table_rows(results)
    ]
    out.write_text(json.dumps(results, indent=2, default=str) + "\n")
    print()
    m = results["machine"]
    print(
        f"{m['date']}  {m['nproc']} cores {m['arch']} {m['cpu']}  load average {results['load_average_start'][0]:.2f}"
        f" -> {results['load_average_end'][0]:.2f}  scale {args.scale}{' (quick)' if args.quick else ''}"
    )
    print_table(results)
    print(f"\nwritten to {out}")
    return results


if __name__ == "__main__":
    main()
