"""Fabric layout: the solver against the rows layout, on the demo blocks (a script, not a test).

    .venv/bin/python tests/bench/bench_layout.py [--budget 10] [--widths 900,1120,1400] [--json FILE]

For each demo block (the corset run's sizes 10 and 14, the bodice, the drawn underbust) and each
fabric width, in the same run: the rows layout (the floor) and the solver's
layout within the time budget, their lengths and utilisation (pieces' area
over width x length used), the solver's relative improvement in
utilisation (solver / rows - 1, which equals rows length / solver length - 1
for the same pieces and width), the wall time of the whole call measured
from outside it, and the one-minute load average after it (the machine is
shared, and a loaded machine lengthens the solver's overrun).  Every layout is
checked for overlaps, the gap, the grain and the width before it is counted.
The target: at least 10 % better within a 10 s budget.

Where the rows layout already fits every piece in one row, no layout can be
shorter than the tallest piece (the grain forbids turning pieces across),
so both are equal; such rows are marked "one row" and left out of the
target.  Beside each row stands a lower bound on the length of any layout
(``length_lower_bound``: the tallest piece, the area, and pieces that must
stand one above another); where the rows layout is less than
10 % longer than it, no layout can meet the target, and the row says so.
"""

import argparse
import json
import os
import platform
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from patterns.core.block import Alteration  # noqa: E402
from patterns.core.layout import (  # noqa: E402
    DEFAULT_GAP_MM,
    SOLVER,
    cut_pieces,
    layout_problems,
    length_lower_bound,
    shelf_layout,
    solver_layout,
)
from patterns.core.outline import alter_block  # noqa: E402
from patterns.demo import bodice_block, corset_block, drawn_underbust_block  # noqa: E402

TARGET = 0.10


def blocks():
    return {
        "corset size 10 (6 panels)": corset_block("10"),
        "corset size 14 (6 panels)": corset_block("14"),
        "bodice (4 panels, centre front on the fold)": bodice_block(),
        "underbust, drawn (4 panels)": drawn_underbust_block(),
    }


def run(budget: int, widths: list[float], gap: float, seed: int) -> list[dict]:
    rows = []
    for name, block in blocks().items():
        pieces = cut_pieces(alter_block(block, Alteration(shifts={})))
        tallest = max(p.height_mm for p in pieces)
        for width in widths:
            started = time.perf_counter()
            shelf = shelf_layout(pieces, width, gap)
            shelf_s = time.perf_counter() - started
            started = time.perf_counter()
            solved = solver_layout(pieces, width, gap, budget_s=budget, seed=seed)
            wall_s = time.perf_counter() - started
            load = os.getloadavg()[0]
            bound = length_lower_bound(pieces, width, gap)
            assert not layout_problems(shelf) and not layout_problems(solved), name
            one_row = shelf.length_mm <= tallest + 1e-6
            rows.append(
                {
                    "block": name,
                    "width_mm": width,
                    "pieces": len(shelf.placements),
                    "shelf_length_mm": round(shelf.length_mm, 1),
                    "shelf_utilisation": round(shelf.utilisation, 4),
                    "shelf_seconds": round(shelf_s, 4),
                    "solver_method": solved.method,
                    "solver_note": solved.note,
                    "solver_length_mm": round(solved.length_mm, 1),
                    "solver_utilisation": round(solved.utilisation, 4),
                    "solver_seconds": round(solved.seconds, 2),
                    "solver_wall_seconds": round(wall_s, 2),
                    "load_average": round(load, 2),
                    "within_budget": wall_s <= budget,
                    "improvement": round(solved.utilisation / shelf.utilisation - 1, 4),
                    # No layout is shorter (patterns.core.layout.length_lower_bound says why), so none
                    # can beat the rows by more than rows length / bound - 1.
                    "bound_mm": round(bound, 1),
                    "most_possible": round(shelf.length_mm / bound - 1, 4),
                    "one_row": one_row,
                    "met": (not one_row)
                    and solved.method == SOLVER
                    and solved.utilisation >= (1 + TARGET) * shelf.utilisation,
                }
            )
            r = rows[-1]
            print(
                f"{name:44} {width / 10:6.0f} cm  {r['pieces']:3}  rows {r['shelf_length_mm'] / 10:6.1f} cm "
                f"{100 * r['shelf_utilisation']:5.1f} %  solver {r['solver_length_mm'] / 10:6.1f} cm "
                f"{100 * r['solver_utilisation']:5.1f} %  {100 * r['improvement']:+6.1f} %  "
                f"{r['solver_wall_seconds']:5.2f} s  load {load:4.2f}  bound {r['bound_mm'] / 10:5.1f} cm  {verdict(r)}",
                flush=True,
            )
    return rows


def verdict(r: dict) -> str:
    if r["one_row"]:
        return "one row"
    if r["met"]:
        return "met"
    if r["most_possible"] < TARGET:
        return f"not met; no layout can (at most {100 * r['most_possible']:+.2f} %)"
    return "not met"


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--budget", type=int, default=10, help="solver seconds per layout (default 10)")
    parser.add_argument("--widths", default="900,1120,1400", help="fabric widths in mm, comma separated")
    parser.add_argument("--gap", type=float, default=DEFAULT_GAP_MM)
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--json", help="also write the figures to this file")
    args = parser.parse_args(argv)
    widths = [float(w) for w in args.widths.split(",")]
    print(
        f"{os.cpu_count()} cores, {platform.machine()}, Python {platform.python_version()}; "
        f"gap {args.gap:g} mm, budget {args.budget} s per layout, seed {args.seed}; "
        f"load average {' '.join(f'{x:.2f}' for x in os.getloadavg())}"
    )
    print(
        f"{'block':44} {'width':>9}  {'n':>3}  {'rows: length, used':>23}  {'solver: length, used':>25}  "
        f"{'better':>7}  {'wall':>7}"
    )
    rows = run(args.budget, widths, args.gap, args.seed)
    counted = [r for r in rows if not r["one_row"]]
    met = [r for r in counted if r["met"]]
    if counted:
        mean = sum(r["improvement"] for r in counted) / len(counted)
        print(
            f"\nWhere the rows need more than one row: solver better by {100 * min(r['improvement'] for r in counted):+.1f} % "
            f"to {100 * max(r['improvement'] for r in counted):+.1f} % (mean {100 * mean:+.1f} %); "
            f"target +{100 * TARGET:.0f} % met in {len(met)} of {len(counted)}."
        )
        beyond = [r for r in counted if r["most_possible"] < TARGET]
        open_rows = [r for r in counted if r["most_possible"] >= TARGET]
        print(
            f"In {len(beyond)} of them no layout at all can be {100 * TARGET:.0f} % better (the lower bound); "
            f"met in {len([r for r in open_rows if r['met']])} of the {len(open_rows)} where one might. "
            f"Total length, rows {sum(r['shelf_length_mm'] for r in counted) / 10:.1f} cm, "
            f"solver {sum(r['solver_length_mm'] for r in counted) / 10:.1f} cm, "
            f"bound {sum(r['bound_mm'] for r in counted) / 10:.1f} cm."
        )
    late = [r for r in rows if not r["within_budget"]]
    print(
        f"Wall time {min(r['solver_wall_seconds'] for r in rows):.2f}-{max(r['solver_wall_seconds'] for r in rows):.2f} s "
        f"against a budget of {args.budget} s ({len(late)} over); load average "
        f"{min(r['load_average'] for r in rows):.2f}-{max(r['load_average'] for r in rows):.2f}."
    )
    if args.json:
        Path(args.json).write_text(json.dumps({"budget_s": args.budget, "gap_mm": args.gap, "rows": rows}, indent=1))


if __name__ == "__main__":
    main()
