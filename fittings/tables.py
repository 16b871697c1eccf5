"""The allotment table as the page shows it: rows of raw edges, a column per level, in the plan's unit."""

from dataclasses import dataclass, field

from fittings.forms import cell_name
from patterns.core.allot import Allotment
from patterns.core.block import Block
from patterns.core.measures import LEVEL_LABELS
from patterns.core.report import direction
from patterns.core.units import format_length


@dataclass
class Cell:
    level: str
    shift: float | None  # None: the seam is not altered at this level
    text: str
    words: str
    fixed: bool = False
    pinned: bool = False
    field: object = None  # the form's input for fixing this cell by hand


@dataclass
class EdgeRow:
    seam: str
    panel: str
    first_of_seam: bool
    cells: list[Cell] = field(default_factory=list)


@dataclass
class LevelRow:
    level: str
    label: str
    body: str
    ease: str
    target: str
    pattern: str
    difference: str
    seams: str
    residual: str
    front_back: str = ""


def _f(value, unit, signed=False):
    return "" if value is None else format_length(value, unit, signed=signed)


def plan_table(block: Block, result: Allotment, form=None):
    unit = result.unit
    levels = [
        LevelRow(
            level=lv.level, label=LEVEL_LABELS.get(lv.level, lv.level), body=_f(lv.body, unit),
            ease=_f(lv.ease, unit, True), target=_f(lv.target, unit), pattern=_f(lv.pattern, unit),
            difference=_f(lv.difference, unit, True), seams=_f(lv.allotted + lv.centre_front, unit, True),
            residual=_f(lv.residual, unit, True),
            front_back=(
                f"front {_f(lv.front.difference, unit, True)}, back {_f(lv.back.difference, unit, True)}"
                if lv.front else ""
            ),
        )
        for lv in result.levels
    ]
    shifts = {(s.seam, s.level, s.panel): s for s in result.shifts}
    rows = []
    for i, seam in enumerate(block.seams):
        for edge, panel in enumerate((seam.front_panel, seam.back_panel)):
            row = EdgeRow(seam=seam.name, panel=panel, first_of_seam=edge == 0)
            for level in block.level_names:
                s = shifts.get((seam.name, level, panel))
                cell = Cell(
                    level=level, shift=None if s is None else s.shift_mm,
                    text="" if s is None else format_length(s.shift_mm, unit, signed=True),
                    words="not altered here" if s is None else direction(s.shift_mm),
                    fixed=bool(s and s.fixed), pinned=bool(s and s.pin_mm),
                    field=form[cell_name(i, level, edge)] if form is not None else None,
                )
                row.cells.append(cell)
            rows.append(row)
    return {
        "levels": levels,
        "level_labels": [LEVEL_LABELS.get(lv, lv) for lv in block.level_names],
        "rows": rows,
        "centre_front": (
            f"{direction(result.centre_front_shift_mm)} {format_length(abs(result.centre_front_shift_mm), unit)} {unit}"
            if result.centre_front_shift_mm else ""
        ),
        "bands": [
            {"label": f"{LEVEL_LABELS[b.upper]} to {LEVEL_LABELS[b.lower]}",
             "change": format_length(abs(b.change_mm), unit),
             "words": "lengthen" if b.change_mm > 0 else ("shorten" if b.change_mm < 0 else "no change")}
            for b in result.bands
        ],
        "findings": result.findings,
        "unit": unit,
    }
