"""Grading a size run from one block.

A grading table gives, for every level, how much the whole girth grows from
one size to the next (and, optionally, how much each band between two levels
lengthens).  Each size is graded from the base block directly, by as many
steps as it lies from it, so rounding never accumulates along the run.

The girth change is spread over the seams by the allotment engine itself
(``patterns.core.allot.allot``), exactly as a client's difference is: the
block is a half pattern, so the change is halved, and a seam's share splits
between its two raw edges (the grading arithmetic of the trade's grading
texts; common practice).  The moved stitch lines are then the stitch lines of
the new size.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

from patterns.core.allot import EVEN, Allotment, Body, PlanOptions, allot
from patterns.core.block import Block, Level, Point, block_errors
from patterns.core.findings import ERROR, WARNING, Finding
from patterns.core.measures import LEVEL_LABELS
from patterns.core.outline import Pchip, band_map

# EN 13402-3 women's bust girth intervals, cm: 4 cm steps up to 102, then
# 107 and 6 cm steps.  The grading table's default bust step is the 4 cm one.
EN13402_BUST_CM = (74, 78, 82, 86, 90, 94, 98, 102, 107, 113, 119, 125, 131)
EN13402_BUST_STEP_MM = 40.0
# Graded stitch lines are rounded to a tenth of a millimetre (our choice: far
# below what a pencil draws; the stored precision is 1/10 000 mm).
GRADING_STEP_MM = 0.1


@dataclass(frozen=True)
class GradingTable:
    """Per size step: the whole girth change at each level, and the change of each band's length."""

    girth_mm: dict[str, float]
    band_mm: dict[tuple[str, str], float] = field(default_factory=dict)  # (upper, lower) -> lengthening
    policy: str = EVEN


@dataclass(frozen=True)
class GradedSize:
    size: str
    steps: int  # size steps from the base block (negative: smaller)
    block: Block
    allotment: Allotment | None  # None for the base size itself
    findings: tuple[Finding, ...]


def table_findings(block: Block, table: GradingTable) -> list[Finding]:
    found = []
    for level, value in table.girth_mm.items():
        if level not in block.level_names:
            found.append(
                Finding("grading_level", ERROR, f"The block has no {LEVEL_LABELS.get(level, level).lower()} level.")
            )
        elif not math.isfinite(value):
            found.append(Finding("grading_number", ERROR, "A girth step must be a number.", level=level))
    pairs = set(zip(block.level_names, block.level_names[1:]))
    for band, value in table.band_mm.items():
        if band not in pairs:
            found.append(
                Finding("grading_band", ERROR, f"{band[0]} to {band[1]} is not a band between neighbouring levels.")
            )
        elif not math.isfinite(value):
            found.append(Finding("grading_number", ERROR, "A band step must be a number."))
    return found


def grade_block(block: Block, table: GradingTable, steps: int, size: str, size_order: int | None = None) -> GradedSize:
    """The block ``steps`` sizes away (negative: smaller), called ``size``."""
    order = block.size_order + steps if size_order is None else size_order
    if steps == 0:
        return GradedSize(size, 0, replace(block, size=size, size_order=order), None, ())
    found = table_findings(block, table)
    if any(f.severity == ERROR for f in found):
        return GradedSize(size, steps, block, None, tuple(found))
    # The engine works out a body from its girths: the pattern's own girth plus the steps' change,
    # with no ease and no lacing gap, so the difference it spreads is exactly the grading change.
    body = Body(girths={lv: block.girth(lv) + steps * table.girth_mm.get(lv, 0.0) for lv in block.level_names})
    options = PlanOptions(ease={}, lacing_gap_mm=0.0, step_mm=GRADING_STEP_MM, policy=table.policy, apply_lengths=False)
    result = allot(block, body, options)
    found += [f for f in result.findings if f.severity in (ERROR, WARNING) and f.code != "edge_over_cap"]
    over = [f for f in result.findings if f.code == "edge_over_cap"]
    if over:
        found.append(
            Finding(
                "grading_over_cap",
                WARNING,
                f"Size {size}: {len(over)} raw edge(s) move further than their limit for alterations; a graded size is "
                "a new draft, so this is allowed, but check the shapes.",
            )
        )
    alteration = result.alteration(block)
    bands = {band: steps * change for band, change in table.band_mm.items() if change}
    alteration = replace(alteration, bands=bands)
    graded = _moved_block(block, alteration, size, order)
    problems = block_errors(graded)
    found += [Finding("grading_shape", ERROR, f"Size {size}: {text}") for text in problems]
    return GradedSize(size, steps, graded, result, tuple(found))


def _moved_block(block: Block, alteration, size: str, order: int) -> Block:
    """The block with every stitch line moved by the alteration: levels, corners and grainline too."""
    to_y = band_map(block, alteration)
    level_ys = [lv.y for lv in block.levels]
    levels = tuple(Level(lv.name, float(to_y(lv.y))) for lv in block.levels)
    panels = []
    for p in block.panels:
        sl = [alteration.shift(p.name, lv).left for lv in block.level_names]
        sr = [alteration.shift(p.name, lv).right for lv in block.level_names]
        left_shift, right_shift = Pchip(level_ys, sl), Pchip(level_ys, sr)

        def corner(pt: Point, edge_shift, sign) -> Point:
            return Point(float(pt.x + sign * edge_shift([pt.y])[0]), float(to_y(pt.y)))

        left = {lv: p.left[lv] - s for lv, s in zip(block.level_names, sl)}
        right = {lv: p.right[lv] + s for lv, s in zip(block.level_names, sr)}
        grain = p.grainline_x
        if grain is not None and block.levels:
            mid = block.level_names[len(block.levels) // 2]
            grain = left[mid] + (grain - p.left[mid]) / p.width(mid) * (right[mid] - left[mid])
        panels.append(
            replace(
                p,
                left=left,
                right=right,
                top_left=corner(p.top_left, left_shift, -1),
                top_right=corner(p.top_right, right_shift, 1),
                bottom_left=corner(p.bottom_left, left_shift, -1),
                bottom_right=corner(p.bottom_right, right_shift, 1),
                grainline_x=grain,
            )
        )
    return replace(block, size=size, size_order=order, levels=levels, panels=tuple(panels))


def grade_run(block: Block, table: GradingTable, sizes: list[str], base_size: str) -> list[GradedSize]:
    """Every size of the run, smallest first; ``base_size`` (one of ``sizes``) is the block itself."""
    if base_size not in sizes:
        raise ValueError(f"The base size {base_size!r} must be one of the run's sizes.")
    if len(set(sizes)) != len(sizes):
        raise ValueError("A size appears twice in the run.")
    base = sizes.index(base_size)
    return [grade_block(block, table, i - base, size, size_order=i) for i, size in enumerate(sizes)]
