"""The allotment table as the page shows it: rows of raw edges, a column per level, in the plan's unit.

Everything the template prints is worked out here as plain strings: the
table is redrawn at every keystroke, and looking up form fields and their
errors from the template costs far more than building the strings once.
"""

from dataclasses import dataclass, field
from functools import lru_cache
from html import escape

from django.utils.formats import date_format
from django.utils.safestring import mark_safe

from fittings.forms import cell_name
from fittings.selectors import revision_result, session_values
from fittings.wording import findings_for_screen
from patterns.core.allot import Allotment
from patterns.core.block import Block
from patterns.core.measures import LEVEL_LABELS, MEASURES
from patterns.core.report import direction
from patterns.core.units import DEFAULT_STEP_MM, format_length


@dataclass
class CellInput:
    """The form's input for fixing one cell by hand: its attributes escaped and joined, and its first error."""

    attrs: str
    error: str = ""


@dataclass
class Cell:
    level: str
    shift: float | None  # None: the seam is not altered at this level
    text: str
    words: str
    fixed: bool = False
    pinned: bool = False
    input: CellInput | None = None  # only on the plan being edited, and only where the edge may move
    css: str = ""


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
    gap: str = ""
    pinned: str = ""


@lru_cache(maxsize=4096)
def _length(value: float, unit: str, signed: bool) -> str:
    # Shifts are whole steps, so the same few values come back at every keystroke.
    return format_length(value, unit, signed=signed)


def _f(value, unit, signed=False):
    return "" if value is None else _length(value, unit, signed)


def _input(form, name: str, placeholder: str, label: str) -> CellInput:
    bound = form[name]
    value = bound.value()
    errors = form.errors.get(name) if form.is_bound else None
    return CellInput(
        attrs=_attrs(
            {
                "id": bound.auto_id,
                "name": bound.html_name,
                "value": "" if value is None else str(value),
                "placeholder": placeholder,
                "inputmode": "decimal",
                "autocomplete": "off",
                "class": "cell",
                "aria-label": label,
                **({"aria-invalid": "true"} if errors else {}),
            }
        ),
        error=errors[0] if errors else "",
    )


def _attrs(attrs: dict) -> str:
    """' name="value" ...', escaped as Django's escape() does (it calls html.escape), marked safe once.

    Django's flatatt() gives the same text but goes through format_html()
    per attribute, about forty times slower for the 400 attributes of a table.
    """
    return mark_safe("".join(f' {name}="{escape(str(value), quote=True)}"' for name, value in attrs.items()))


def locked_reason(block: Block, seam, level: str) -> str:
    """Why a seam's edge does not move at a level, in words: the base pattern keeps it as drafted there."""
    where = LEVEL_LABELS.get(level, level).lower()
    movable = [LEVEL_LABELS.get(lv, lv).lower() for lv in block.level_names if lv in seam.alterable_at]
    text = f"Locked: the base pattern keeps the {seam.name} as drafted at the {where}"
    if not movable:
        return text + "; it is never moved."
    return text + f"; it may move at the {', '.join(movable)}."


def plan_table(block: Block, result: Allotment, form=None):
    unit = result.unit
    levels = [
        LevelRow(
            level=lv.level,
            label=LEVEL_LABELS.get(lv.level, lv.level),
            body=_f(lv.body, unit),
            ease=_f(lv.ease, unit, True),
            target=_f(lv.target, unit),
            pattern=_f(lv.pattern, unit),
            difference=_f(lv.difference, unit, True),
            seams=_f(lv.allotted + lv.centre_front, unit, True),
            residual=_f(lv.residual, unit, True),
            gap=_f(lv.lacing_gap, unit) if lv.lacing_gap else "",
            pinned=_f(lv.pinned, unit, True) if lv.pinned else "",
            front_back=(
                f"front {_f(lv.front.difference, unit, True)}, back {_f(lv.back.difference, unit, True)}"
                if lv.front
                else ""
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
                text = "" if s is None else _length(s.shift_mm, unit, True)
                words = locked_reason(block, seam, level) if s is None else direction(s.shift_mm)
                fixed, pinned = bool(s and s.fixed), bool(s and s.pin_mm)
                cell = Cell(
                    level=level,
                    shift=None if s is None else s.shift_mm,
                    text=text,
                    words=words,
                    fixed=fixed,
                    pinned=pinned,
                    css=("fixed" if fixed else "") + (" pinned" if pinned else "") + (" locked" if s is None else ""),
                )
                if form is not None and s is not None:
                    cell.input = _input(
                        form, cell_name(i, level, edge), text, f"{seam.name}, {panel} edge, {level}: {words} {text}"
                    )
                row.cells.append(cell)
            rows.append(row)
    return {
        "levels": levels,
        "level_labels": [LEVEL_LABELS.get(lv, lv) for lv in block.level_names],
        "rows": rows,
        "centre_front": (
            f"{direction(result.centre_front_shift_mm)} {_length(abs(result.centre_front_shift_mm), unit, False)} {unit}"
            if result.centre_front_shift_mm
            else ""
        ),
        "bands": [
            {
                "label": f"{LEVEL_LABELS[b.upper]} to {LEVEL_LABELS[b.lower]}",
                "change": _length(abs(b.change_mm), unit, False),
                "words": "lengthen" if b.change_mm > 0 else ("shorten" if b.change_mm < 0 else "no change"),
            }
            for b in result.bands
        ],
        "findings": findings_for_screen(result.findings, unit),
        "laced": any(lv.lacing_gap for lv in result.levels),
        "pinned": any(lv.pinned for lv in result.levels),
        "unit": unit,
        "editable": form is not None,
    }


# --- two fittings side by side -----------------------------------------------------------------


@dataclass
class CompareRow:
    label: str
    a: str
    b: str
    change: str
    differs: bool


@dataclass
class Comparison:
    kind: str  # "sessions" or "revisions"
    a_title: str
    b_title: str
    unit: str
    sections: list[tuple[str, list[CompareRow]]] = field(default_factory=list)


def _on_tape(mm: float, unit: str) -> float:
    """The reading to the tape's step (1 mm, or 1/16 in): what the fitter can tell apart."""
    step = DEFAULT_STEP_MM[unit]
    return round(mm / step) * step


def _row(label, a, b, unit):
    """A changed row is one whose readings differ on the tape: below its step (1 mm, 1/16 in) is no change."""
    text_a = "–" if a is None else format_length(a, unit)
    text_b = "–" if b is None else format_length(b, unit)
    differs = (a is None) != (b is None) or (a is not None and _on_tape(a, unit) != _on_tape(b, unit))
    change = ""
    if a is not None and b is not None and differs:
        change = format_length(_on_tape(b, unit) - _on_tape(a, unit), unit, signed=True)
    return CompareRow(label, text_a, text_b, change, differs)


def _day(value) -> str:
    """A date as every page writes it (the locale's, e.g. 2 Dec 2026), never ISO."""
    return date_format(value)


def comparison(kind: str, first, second) -> Comparison:
    """Two sessions or two revisions (``selectors.comparison_pair``) side by side, row by row."""
    if kind == "sessions":
        unit = second.unit
        va, vb = session_values(first), session_values(second)
        rows = [_row(m.label, va.get(m.code), vb.get(m.code), unit) for m in MEASURES if m.code in va or m.code in vb]
        return Comparison(
            "sessions",
            f"{first.get_kind_display()}, {_day(first.taken_on)}",
            f"{second.get_kind_display()}, {_day(second.taken_on)}",
            unit,
            [("Measurements", rows)],
        )
    ra, rb = revision_result(first), revision_result(second)
    unit = rb.unit
    ma, mb = first.inputs["measurements"], second.inputs["measurements"]
    measurements = [
        _row(m.label, ma.get(m.code), mb.get(m.code), unit) for m in MEASURES if m.code in ma or m.code in mb
    ]
    la = {lv.level: lv for lv in ra.levels}
    lb = {lv.level: lv for lv in rb.levels}
    levels = [lv for lv in LEVEL_LABELS if lv in la or lv in lb]
    targets = []
    for lv in levels:
        x, y = la.get(lv), lb.get(lv)
        targets.append(_row(f"{LEVEL_LABELS[lv]} ease", x and x.ease, y and y.ease, unit))
        targets.append(_row(f"{LEVEL_LABELS[lv]} target", x and x.target, y and y.target, unit))
    sa = {(s.seam, s.level, s.panel): s.shift_mm for s in ra.shifts}
    sb = {(s.seam, s.level, s.panel): s.shift_mm for s in rb.shifts}
    keys = list(dict.fromkeys([*sa, *sb]))
    shifts = [
        _row(
            f"{seam}, {panel} edge, {LEVEL_LABELS.get(level, level).lower()}",
            sa.get((seam, level, panel)),
            sb.get((seam, level, panel)),
            unit,
        )
        for seam, level, panel in keys
    ]
    return Comparison(
        "revisions",
        f"{first.plan.garment}, revision {first.number}",
        f"{second.plan.garment}, revision {second.number}",
        unit,
        [("Measurements", measurements), ("Ease and targets", targets), ("Raw edges", shifts)],
    )
