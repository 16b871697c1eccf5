"""Time reading a drawn block (SVG and DXF) and altering it (a script, not a test).

    .venv/bin/python tests/bench/bench_import.py [--runs 20]

The demo's drawn underbust block (patterns/examples/) is read from its SVG
and from a DXF of its pieces, then altered; beside each figure the floor
measured in the same run: parsing the same bytes with svgelements alone (SVG)
or ezdxf alone (DXF), and altering the same block with its drawn lines left out
(the outline drawn through the level points, as for a block typed in).
"""

import argparse
import dataclasses
import io
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

import ezdxf  # noqa: E402
import svgelements  # noqa: E402

from patterns.core.block import Alteration, PanelShift  # noqa: E402
from patterns.core.export import dxf_bytes  # noqa: E402
from patterns.core.importing import ImportOptions, import_block  # noqa: E402
from patterns.core.outline import alter_pattern, base_outlines  # noqa: E402
from patterns.demo import DRAWN_BLOCK_FILE, drawn_underbust_block  # noqa: E402


def median_ms(fn, runs):
    fn()
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return 1000 * statistics.median(times)


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("--runs", type=int, default=20)
    runs = parser.parse_args().runs
    svg = DRAWN_BLOCK_FILE.read_bytes()
    block = drawn_underbust_block()
    dxf = dxf_bytes(base_outlines(block), level_lines=True)
    plain = dataclasses.replace(block, panels=tuple(dataclasses.replace(p, curves=None) for p in block.panels))
    alteration = Alteration({p.name: {lv: PanelShift(-3.0, -4.0) for lv in block.level_names} for p in block.panels})
    rows = [
        (
            "read SVG",
            lambda: import_block(svg, "x.svg", ImportOptions(front_panels=2)),
            "svgelements parse alone",
            lambda: list(svgelements.SVG.parse(io.BytesIO(svg)).elements()),
        ),
        (
            "read DXF",
            lambda: import_block(dxf, "x.dxf", ImportOptions(front_panels=2)),
            "ezdxf read alone",
            lambda: ezdxf.read(io.StringIO(dxf.decode())),
        ),
        (
            "alter drawn block",
            lambda: alter_pattern(block, alteration),
            "same block, no drawn lines",
            lambda: alter_pattern(plain, alteration),
        ),
    ]
    print(f"{'what':<20}{'ms':>9}   {'floor':<28}{'ms':>9}{'ratio':>8}")
    for name, fn, floor_name, floor in rows:
        a, b = median_ms(fn, runs), median_ms(floor, runs)
        print(f"{name:<20}{a:>9.1f}   {floor_name:<28}{b:>9.1f}{a / b:>8.1f}")


if __name__ == "__main__":
    main()
