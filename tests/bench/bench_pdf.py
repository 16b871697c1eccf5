"""Time the printed documents: work order + cutting sheet (a script, not a test).

    .venv/bin/python tests/bench/bench_pdf.py [--runs 7] [--paper a4] [--json]

Renders from plain data (fittings.printing.registry.render_documents, as the print
worker does), so no database is needed; Django is set up only for its
templates.  For the demo's six-panel corset (size 10) and an invented
twelve-panel block it prints the median and p95 wall time and CPU time
(this process and the child that draws the cutting sheet) of one print of a
plan no screen has drawn yet (outlines and picture included), beside a
minimal one-page WeasyPrint document rendered warm in the same run, twice:
with the app's shared font configuration and fetcher, and with WeasyPrint's
plain call that builds both each time.  Peak memory is measured in a
separate pass under tracemalloc (Python allocations, this process) and as
the process's peak resident size.

The floor the print is held to: the same HTML strings the print renders
(work order and cutting sheet, made once per case before timing), rendered
one after the other by a bare ``weasyprint.HTML(string=...).write_pdf()`` in
this same process and run, which is WeasyPrint's own cost for the same
content.  The floor and the print take turns run by run, so a load that comes
and goes on a shared machine falls on both alike.

Targets (issue 15): the six-panel corset's work order + cutting sheet at most
1.3x that floor, and the twelve-panel block under 1.5 s.
"""

import argparse
import io
import json
import os
import resource
import statistics
import sys
import time
import tracemalloc
from dataclasses import replace
from datetime import date
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
os.environ.setdefault("DJANGO_SETTINGS_MODULE", "atelier.settings")

import django  # noqa: E402
import pypdf  # noqa: E402  (only to count the pages; installed with the test extras)

django.setup()

from fittings import previews  # noqa: E402
from fittings.printing.cutting_sheet import cutting_sheet_html  # noqa: E402
from fittings.printing.data import DocumentData, altered_pattern  # noqa: E402
from fittings.printing.engine import html_to_pdf  # noqa: E402
from fittings.printing.registry import render_documents  # noqa: E402
from fittings.printing.work_order import work_order_html  # noqa: E402
from patterns import demo  # noqa: E402
from patterns.core.block import BACK, FRONT, Block  # noqa: E402
from patterns.core.defaults import default_options  # noqa: E402
from tests.fittings.print_data import document  # noqa: E402
from tests.patterns.block_parts import level_panel, seams_in_a_row  # noqa: E402

MINIMAL_HTML = "<!doctype html><title>x</title><p style='font-family: DejaVu Sans'>One line on one page.</p>"


def minimal_default_call() -> bytes:
    """The minimal document as WeasyPrint's plain call makes it: its own font configuration and
    fetcher every time (the app builds both once per process)."""
    from weasyprint import HTML

    return HTML(string=MINIMAL_HTML).write_pdf()


def same_html(data: DocumentData, paper: str) -> tuple[str, str]:
    """The work order's and the cutting sheet's HTML, exactly as the print renders them."""
    pattern = altered_pattern(data)
    return work_order_html(data, paper, pattern), cutting_sheet_html(data, paper, pattern)


def bare_weasyprint(pages: tuple[str, str]) -> tuple[bytes, bytes]:
    """The floor: the same HTML strings by WeasyPrint's plain call, one after the other, nothing else."""
    from weasyprint import HTML

    return tuple(HTML(string=html).write_pdf() for html in pages)


def twelve_panel_block() -> Block:
    """The demo's size 10 overbust corset re-cut in twelve panels per half (an invented block)."""
    base = demo.corset_block("10")
    count = 12
    half = {lv.name: base.half_girth(lv.name) for lv in base.levels}
    last = base.levels[-1].name
    panels, x = [], 0.0
    for i in range(count):
        share = (1 + 0.04 * ((i % 3) - 1)) / count
        widths = {lv: round(half[lv] * share, 1) for lv in half}
        widest = max(widths.values())
        centre = x + widest / 2
        left = {lv: centre - w / 2 for lv, w in widths.items()}
        right = {lv: centre + w / 2 for lv, w in widths.items()}
        top, bottom = 10.0 * (i % 4), base.level_y(last) + 20 - 5 * (i % 3)
        side = FRONT if i < count // 2 else BACK
        panels.append(level_panel(f"Panel {i + 1}", side, left, right, top, bottom, base.levels))
        x += widest + 50
    levels = frozenset(base.level_names)
    seams = seams_in_a_row(panels, lambda i: levels)
    return replace(base, name="Bench corset, twelve panels", panels=tuple(panels), seams=seams)


def data_for(block: Block) -> DocumentData:
    values = {k: float(v) for k, v in demo.DEMO_CLIENTS[0]["sessions"][0]["values"].items()}
    return document(
        values,
        block,
        default_options(block, "cm"),
        client_label="WF-0101",
        garment="Bench corset",
        fitting_date=date(2025, 1, 1),
        measured_by="Bench",
        revision_number=1,
        based_on=None,
        revision_url="https://atelier.example/plans/1/revisions/1/",
    )


def print_both(data: DocumentData, paper: str) -> tuple[bytes, bytes]:
    """What one print job does, for a plan no screen has worked out yet: the outlines (dropped from
    the store the plan page fills, where an earlier run left them), then both documents."""
    previews._patterns.items.pop(previews.inputs_key(data.block, data.result), None)
    files = render_documents(data, paper)
    return files["work_order"], files["cutting_sheet"]


def percentile(values, share):
    values = sorted(values)
    return values[min(len(values) - 1, int(round(share * (len(values) - 1))))]


def cpu_seconds() -> float:
    """CPU time of this process and of the children it has waited for (the forked cutting sheet)."""
    children = resource.getrusage(resource.RUSAGE_CHILDREN)
    return time.process_time() + children.ru_utime + children.ru_stime


def timed(fn, runs):
    wall, cpu = [], []
    for _ in range(runs):
        w, c = time.perf_counter(), cpu_seconds()
        fn()
        wall.append(time.perf_counter() - w)
        cpu.append(cpu_seconds() - c)
    return {
        "wall_median_s": statistics.median(wall),
        "wall_p95_s": percentile(wall, 0.95),
        "cpu_median_s": statistics.median(cpu),
        "cpu_p95_s": percentile(cpu, 0.95),
    }


def timed_alternately(fns: dict, runs):
    """Time several functions taking turns, run by run, so a load that comes and goes on a shared
    machine falls on each of them alike; returns the same figures as ``timed`` for each."""
    samples = {name: ([], []) for name in fns}
    for _ in range(runs):
        for name, fn in fns.items():
            w, c = time.perf_counter(), cpu_seconds()
            fn()
            samples[name][0].append(time.perf_counter() - w)
            samples[name][1].append(cpu_seconds() - c)
    return {
        name: {
            "wall_median_s": statistics.median(wall),
            "wall_p95_s": percentile(wall, 0.95),
            "cpu_median_s": statistics.median(cpu),
            "cpu_p95_s": percentile(cpu, 0.95),
        }
        for name, (wall, cpu) in samples.items()
    }


def peak_mib(fn):
    tracemalloc.start()
    fn()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    return peak / 2**20


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7)
    parser.add_argument("--paper", choices=["a4", "letter"], default="a4")
    parser.add_argument("--json", action="store_true")
    args = parser.parse_args(argv)

    cases = {"six_panel": data_for(demo.corset_block("10")), "twelve_panel": data_for(twelve_panel_block())}
    # Warm up: fonts, templates, the first WeasyPrint run.
    html_to_pdf(MINIMAL_HTML)
    for data in cases.values():
        print_both(data, args.paper)

    minimal_default_call()
    rows = {
        "minimal_page": timed(lambda: html_to_pdf(MINIMAL_HTML), max(20, args.runs)),
        "minimal_page_default_call": timed(minimal_default_call, max(20, args.runs)),
    }
    for name, data in cases.items():
        work_order, cutting_sheet = print_both(data, args.paper)
        pages = same_html(data, args.paper)
        bare_weasyprint(pages)  # warm
        # The floor and the print take turns, run by run.
        both = timed_alternately(
            {
                "floor": lambda pages=pages: bare_weasyprint(pages),
                "print": lambda data=data: print_both(data, args.paper),
            },
            args.runs,
        )
        floor = rows[f"{name}_same_html_bare"] = both["floor"]
        floor["pages"] = sum(len(pypdf.PdfReader(io.BytesIO(pdf)).pages) for pdf in bare_weasyprint(pages))
        rows[name] = both["print"]
        for key in ("wall", "cpu"):
            rows[name][f"ratio_{key}_median_same_html"] = rows[name][f"{key}_median_s"] / floor[f"{key}_median_s"]
        rows[name]["pages"] = sum(len(pypdf.PdfReader(io.BytesIO(pdf)).pages) for pdf in (work_order, cutting_sheet))
        rows[name]["peak_python_mib"] = peak_mib(lambda data=data: print_both(data, args.paper))
        for key in ("wall", "cpu"):
            rows[name][f"ratio_{key}_median"] = rows[name][f"{key}_median_s"] / rows["minimal_page"][f"{key}_median_s"]
            rows[name][f"ratio_{key}_median_default_call"] = (
                rows[name][f"{key}_median_s"] / rows["minimal_page_default_call"][f"{key}_median_s"]
            )
    # One-sheet large formats of the six-panel corset, drawn when a print's page asks for them.
    from fittings.workroom import render_large_sheet
    from patterns.core.tiling import LARGE_FORMATS

    for fmt in LARGE_FORMATS:
        render_large_sheet(cases["six_panel"], fmt)
        rows[f"large_{fmt}"] = timed(lambda fmt=fmt: render_large_sheet(cases["six_panel"], fmt), args.runs)
    rows["max_rss_mib"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    rows["max_rss_children_mib"] = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024
    rows["load_average"] = os.getloadavg()[0]

    if args.json:
        print(json.dumps(rows, indent=2))
        return rows
    print(f"paper {args.paper}, {args.runs} runs, load average {rows['load_average']:.2f} on {os.cpu_count()} cores")
    print(
        f"{'what':<44}{'pages':>6}{'wall med':>10}{'wall p95':>10}{'cpu med':>10}{'cpu p95':>10}"
        f"{'x same':>8}{'x same cpu':>11}{'x minimal':>11}{'peak MiB':>10}"
    )
    for name, label in (
        ("minimal_page", "minimal one-page document"),
        ("minimal_page_default_call", "the same, WeasyPrint's plain call"),
        ("six_panel_same_html_bare", "6-panel: same HTML, bare WeasyPrint (floor)"),
        ("six_panel", "6-panel corset: both documents, the app"),
        ("twelve_panel_same_html_bare", "12-panel: same HTML, bare WeasyPrint (floor)"),
        ("twelve_panel", "12-panel block: both documents, the app"),
    ):
        r = rows[name]
        same = f"{r['ratio_wall_median_same_html']:.2f}x" if "ratio_wall_median_same_html" in r else ""
        same_cpu = f"{r['ratio_cpu_median_same_html']:.2f}x" if "ratio_cpu_median_same_html" in r else ""
        ratio = f"{r['ratio_wall_median']:.1f}x" if "ratio_wall_median" in r else ""
        peak = f"{r['peak_python_mib']:.1f}" if "peak_python_mib" in r else ""
        print(
            f"{label:<44}{r.get('pages', 1):>6}{r['wall_median_s']:>10.3f}{r['wall_p95_s']:>10.3f}"
            f"{r['cpu_median_s']:>10.3f}{r['cpu_p95_s']:>10.3f}{same:>8}{same_cpu:>11}{ratio:>11}{peak:>10}"
        )
    for fmt in ("a0", "roll-914", "roll-610"):
        r = rows[f"large_{fmt}"]
        print(
            f"{'6-panel, all pieces on one sheet, ' + fmt:<44}{1:>6}{r['wall_median_s']:>10.3f}{r['wall_p95_s']:>10.3f}"
            f"{r['cpu_median_s']:>10.3f}{r['cpu_p95_s']:>10.3f}"
        )
    print(
        f"peak resident size of the process: {rows['max_rss_mib']:.0f} MiB; of the largest child drawing a "
        f"cutting sheet: {rows['max_rss_children_mib']:.0f} MiB (mostly pages shared with the parent)"
    )
    six, twelve = rows["six_panel"], rows["twelve_panel"]
    print(
        f"targets: 6-panel <= 1.3x the same HTML by bare WeasyPrint: {six['ratio_wall_median_same_html']:.2f}x wall "
        f"({six['wall_median_s']:.3f} s against {rows['six_panel_same_html_bare']['wall_median_s']:.3f} s), "
        f"{six['ratio_cpu_median_same_html']:.2f}x CPU; 12-panel < 1.5 s: {twelve['wall_median_s']:.3f} s wall"
    )
    return rows


if __name__ == "__main__":
    main()
