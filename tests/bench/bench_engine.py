"""Time the allotment engine for a 12-panel, 9-level block (a script, not a test).

    .venv/bin/python tests/bench/bench_engine.py [--runs 500]

Prints the median and p95 per plan, beside the floor of building the same
block's girth table in plain Python (the least any engine must do).
"""

import argparse
import json
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from patterns.core.allot import Body, PlanOptions, allot  # noqa: E402
from patterns.core.block import BACK, FRONT, Block, Level, Panel, Point  # noqa: E402
from patterns.core.policies import SIDES_FIRST  # noqa: E402
from tests.patterns.block_parts import seams_in_a_row  # noqa: E402


def big_block(panels=12, levels=9) -> Block:
    names = [f"level{i}" for i in range(levels)]
    lv = tuple(Level(n, 50.0 * i) for i, n in enumerate(names))
    out, x = [], 0.0
    for i in range(panels):
        w = {n: 40 + (i * 7 + j * 3) % 25 for j, n in enumerate(names)}
        out.append(
            Panel(
                f"Panel {i + 1}",
                FRONT if i < panels // 2 else BACK,
                {n: x for n in names},
                {n: x + w[n] for n in names},
                Point(x, -10),
                Point(x + w[names[0]], -10),
                Point(x, 450),
                Point(x + w[names[-1]], 450),
            )
        )
        x += 100
    seams = seams_in_a_row(out, lambda i: frozenset(names[2:] if i == 0 else names))
    return Block("Bench block", "B", "bench", lv, tuple(out), seams)


def percentile(values, share):
    values = sorted(values)
    return values[min(len(values) - 1, int(round(share * (len(values) - 1))))]


def timed(fn, runs):
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        fn()
        times.append((time.perf_counter() - start) * 1000)
    return statistics.median(times), percentile(times, 0.95)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=500)
    parser.add_argument("--json", action="store_true")
    args = parser.parse_args(argv)
    block = big_block()
    body = Body(girths={n: block.girth(n) + 50 + (i - 4) * 15 for i, n in enumerate(block.level_names)})
    options = PlanOptions(ease={n: -20.0 for n in block.level_names}, policy=SIDES_FIRST)
    allot(block, body, options)
    engine = timed(lambda: allot(block, body, options), args.runs)
    floor = timed(lambda: [block.girth(n) for n in block.level_names], args.runs)
    rows = {
        "engine_12x9_ms": {"median": engine[0], "p95": engine[1]},
        "floor_girths_ms": {"median": floor[0], "p95": floor[1]},
        "ratio_median": engine[0] / floor[0],
    }
    if args.json:
        print(json.dumps(rows, indent=2))
    else:
        print(f"{'what':<34}{'median ms':>12}{'p95 ms':>12}")
        print(f"{'allot(): 12 panels x 9 levels':<34}{engine[0]:>12.3f}{engine[1]:>12.3f}")
        print(f"{'floor: girth table only':<34}{floor[0]:>12.3f}{floor[1]:>12.3f}")
        print(f"ratio (median): {rows['ratio_median']:.1f}x the floor; target: well under 5 ms per plan")
    return rows


if __name__ == "__main__":
    main()
