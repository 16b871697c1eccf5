"""Time altered outlines + preview SVG for a 6-panel and a 12-panel block (a script, not a test).

    .venv/bin/python tests/bench/bench_geometry.py [--runs 30]

Beside each figure it prints the floor measured in the same run: a bare
matplotlib Figure with the same number of lines, points and labels, written
as SVG with the same settings, and the ratio of the medians.
"""

import argparse
import io
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import matplotlib  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.backends.backend_svg import FigureCanvasSVG  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402

from patterns.core.block import BACK, FRONT, Alteration, Block, Panel, PanelShift, Point, Seam  # noqa: E402
from patterns.core.outline import alter_pattern  # noqa: E402
from patterns.core.preview import _RC, build_figure, preview_svg  # noqa: E402
from patterns.demo import corset_block  # noqa: E402


def twelve_panel_block() -> Block:
    """The size 10 corset's levels with twelve narrower panels, laid out 50 mm apart."""
    six = corset_block("10")
    levels = six.levels
    names = six.level_names
    panels, origin = [], 0.0
    for i in range(12):
        widths = {lv: 0.5 * six.panels[i // 2].width(lv) + 4.0 for lv in names}
        widest = max(widths.values())
        centre = origin + widest / 2
        left = {lv: centre - w / 2 for lv, w in widths.items()}
        right = {lv: centre + w / 2 for lv, w in widths.items()}
        top, bottom = 10.0 + 3 * i, levels[-1].y + 15.0
        panels.append(
            Panel(
                f"Panel {i + 1}",
                FRONT if i < 6 else BACK,
                left,
                right,
                Point(left[names[0]], top),
                Point(right[names[0]], top + 3),
                Point(left[names[-1]], bottom),
                Point(right[names[-1]], bottom),
            )
        )
        origin += widest + 50.0
    panels = [
        Panel(
            p.name,
            p.side,
            p.left,
            p.right,
            p.top_left,
            Point(p.top_right.x, nxt.top_left.y),
            p.bottom_left,
            p.bottom_right,
        )
        for p, nxt in zip(panels, panels[1:] + panels[-1:])
    ]
    seams = tuple(
        Seam(f"Seam {i + 1}", "side" if i == 5 else "other", a.name, b.name, frozenset(names))
        for i, (a, b) in enumerate(zip(panels, panels[1:]))
    )
    return Block("Bench block, twelve panels", "10", "bench", levels, tuple(panels), seams)


def waist_alteration(block: Block, amount: float = -4.0) -> Alteration:
    shifts = {p.name: {} for p in block.panels}
    for seam in block.seams:
        front = shifts[seam.front_panel].get("waist", PanelShift())
        shifts[seam.front_panel]["waist"] = PanelShift(front.left, amount)
        back = shifts[seam.back_panel].get("waist", PanelShift())
        shifts[seam.back_panel]["waist"] = PanelShift(amount, back.right)
    return Alteration(shifts=shifts, bands={("waist", "hip"): 8.0})


def figure_counts(block: Block, alteration: Alteration) -> tuple[list[int], int]:
    """Points per drawn line and the number of labels in the preview figure."""
    with matplotlib.rc_context(_RC):
        fig, labels = build_figure(block, alteration)
    ax = fig.axes[0]
    lines = [len(seg) for coll in ax.collections for seg in coll.get_segments()]
    lines += [len(line.get_xydata()) for line in ax.lines]
    return lines, len(ax.texts) + len(labels)


def bare_svg(points_per_line: list[int], labels: int) -> str:
    """The floor: a plain Figure with the same lines, points and labels, as SVG."""
    fig = Figure(figsize=(10, 7))
    ax = fig.add_axes((0, 0, 1, 1))
    for i, n in enumerate(points_per_line):
        t = np.linspace(0, 2 * np.pi, n)
        ax.plot(np.cos(t) + i * 2.5, np.sin(t), color="C0", linewidth=1.2)
    for i in range(labels):
        ax.text(i % 20 * 1.5, i // 20 * 0.3, f"+0.{i % 10}", fontsize=9)
    ax.set_xlim(-1.5, 2.5 * len(points_per_line))
    ax.set_ylim(-1.5, 1.5)
    buf = io.BytesIO()
    FigureCanvasSVG(fig).print_svg(buf, metadata={"Date": None})
    return buf.getvalue().decode()


def timed_together(cases: dict, runs: int) -> dict[str, list[float]]:
    """Each case once per round, in turn, so all of them see the same machine load."""
    for fn in cases.values():
        fn()  # warm caches (fonts, imports) outside the measurement
    times = {name: [] for name in cases}
    for _ in range(runs):
        for name, fn in cases.items():
            start = time.perf_counter()
            fn()
            times[name].append((time.perf_counter() - start) * 1000)
    return times


def p95(values: list[float]) -> float:
    values = sorted(values)
    return values[min(len(values) - 1, int(round(0.95 * (len(values) - 1))))]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=30)
    args = parser.parse_args()

    print(f"matplotlib {matplotlib.__version__}, numpy {np.__version__}, runs {args.runs}; times in ms")
    print(f"{'case':46} {'median':>8} {'p95':>8} {'ratio':>6}")
    for block in (corset_block("10"), twelve_panel_block()):
        alteration = waist_alteration(block)
        lines, labels = figure_counts(block, alteration)
        pattern = alter_pattern(block, alteration)

        def floor(lines=lines, labels=labels):
            with matplotlib.rc_context(_RC):
                bare_svg(lines, labels)

        cases = {
            "floor: bare Figure, same rc, as SVG": floor,
            "floor: bare Figure, default rc": lambda lines=lines, labels=labels: bare_svg(lines, labels),
            "reference: 6 lines x 200 points, 30 labels": lambda: bare_svg([200] * 6, 30),
            "outlines + checks (alter_pattern)": lambda b=block, a=alteration: alter_pattern(b, a),
            "preview SVG from computed outlines": lambda b=block, a=alteration, p=pattern: preview_svg(b, a, pattern=p),
            "outlines + preview SVG": lambda b=block, a=alteration: preview_svg(b, a),
        }
        times = timed_together(cases, args.runs)
        floor_med = statistics.median(times["floor: bare Figure, same rc, as SVG"])
        print(
            f"{len(block.panels)} panels: {len(lines)} lines, {sum(lines)} points, {labels} labels; "
            "ratio = median / floor (same rc) median"
        )
        for name, values in times.items():
            med = statistics.median(values)
            print(f"  {name:44} {med:8.1f} {p95(values):8.1f} {med / floor_med:6.2f}")


if __name__ == "__main__":
    main()
