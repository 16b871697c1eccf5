"""A block as the atelier types it in: panels, levels, widths or stitch-line places, seams.

Plain data in (a ``BlockDraft``), plain data out (a ``Block`` and findings in
words).  Two ways of entering a block meet here:

- the block form, where each panel's stitch lines are given by where they
  cross each level (x from the block's centre-front line) or simply by the
  panel's width there, and each corner by its height;
- the tape entry (``draft_from_tape``), for a fitter who has only the card
  pattern and a tape: each panel's width between its stitch lines at every
  level, and the lengths down each stitch line between the top edge, the
  levels and the bottom edge.

A panel given by its widths only is laid out on its own: a straight centre
front and centre back, the panels between symmetric about their middle,
each panel beside the last with a gap, so nothing overlaps in the drawing.
Millimetres throughout; x grows towards centre back, y downwards.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from patterns.core.block import (
    BACK,
    CB_LACED,
    CB_SEAMED,
    CF_BUSK,
    CF_FOLD,
    FRONT,
    SEAM_KINDS,
    Block,
    Level,
    Panel,
    Point,
    Seam,
    block_errors,
)
from patterns.core.findings import ERROR, WARNING, Finding
from patterns.core.measures import LEVEL_CODES, LEVEL_LABELS

LAYOUT_GAP_MM = 50.0  # room between panels laid out by width, in the drawing only (our choice)
DEFAULT_CAP_MM = 15.0  # per raw edge: 1-1.5 cm is a working rule (memory/common practice)
# Lengths measured with a tape along two lines between the same two levels can
# differ by the tape's reading; 1/8 in (about 3 mm) is accepted when truing seams
# (Threads magazine no. 200, "10 patternwork skills").
TAPE_TOLERANCE_MM = 25.4 / 8


@dataclass(frozen=True)
class PanelDraft:
    """One panel as typed.  ``lefts`` empty: laid out by ``widths``; else right = left + width."""

    name: str
    side: str
    widths: dict[str, float]
    top: tuple[float, float]  # heights of the top edge at the left and right stitch line
    bottom: tuple[float, float]  # heights of the bottom edge at the left and right stitch line
    lefts: dict[str, float] = field(default_factory=dict)
    cut_count: int = 2
    on_fold: bool = False
    top_bound: bool = False
    bottom_bound: bool = False
    grainline_mm: float | None = None  # from the left stitch line, at the middle level; None: the middle


@dataclass(frozen=True)
class SeamDraft:
    name: str
    kind: str
    moves_at: frozenset[str]
    cap_mm: float = DEFAULT_CAP_MM


@dataclass(frozen=True)
class BlockDraft:
    name: str
    size: str
    garment: str
    levels: tuple[Level, ...]
    panels: tuple[PanelDraft, ...]
    seams: tuple[SeamDraft, ...]
    centre_front: str = CF_BUSK
    centre_back: str = CB_LACED
    seam_allowance_mm: float = 15.0
    size_order: int = 0


@dataclass(frozen=True)
class Drafted:
    block: Block | None  # None when an error stops the block from being drawn or stored
    findings: tuple[Finding, ...]

    @property
    def errors(self) -> tuple[Finding, ...]:
        return tuple(f for f in self.findings if f.severity == ERROR)

    @property
    def ok(self) -> bool:
        return self.block is not None and not self.errors


def _label(level: str) -> str:
    return LEVEL_LABELS.get(level, level).lower()


def _mm(value: float) -> str:
    return f"{value / 10:.1f} cm"


def _input_findings(draft: BlockDraft) -> list[Finding]:
    found = []
    names = [lv.name for lv in draft.levels]
    if not draft.levels:
        found.append(Finding("no_levels", ERROR, "Choose at least one level (bust, waist, ...) and give its height."))
    for level in draft.levels:
        if level.name not in LEVEL_CODES:
            found.append(Finding("unknown_level", ERROR, f"There is no level called {level.name!r}."))
    ordered = sorted(draft.levels, key=lambda lv: LEVEL_CODES.index(lv.name) if lv.name in LEVEL_CODES else 99)
    for upper, lower in zip(ordered, ordered[1:]):
        if lower.y <= upper.y:
            found.append(
                Finding(
                    "levels_out_of_order",
                    ERROR,
                    f"The {_label(lower.name)} ({_mm(lower.y)} from the top) must lie below the {_label(upper.name)} "
                    f"({_mm(upper.y)}).",
                    level=lower.name,
                )
            )
    if not draft.panels:
        found.append(Finding("no_panels", ERROR, "A block needs at least one panel."))
    seen = set()
    for i, p in enumerate(draft.panels):
        if not p.name.strip():
            found.append(Finding("panel_unnamed", ERROR, f"Panel {i + 1} needs a name."))
        elif p.name in seen:
            found.append(
                Finding(
                    "panel_name_twice", ERROR, f"Two panels are called {p.name!r}; name each one apart.", panel=p.name
                )
            )
        seen.add(p.name)
        if p.side not in (FRONT, BACK):
            found.append(
                Finding(
                    "panel_side", ERROR, f"Say whether {p.name} is in front of or behind the side seam.", panel=p.name
                )
            )
        if p.on_fold and i != 0:
            found.append(
                Finding(
                    "fold_not_centre_front",
                    ERROR,
                    f"Only the centre-front panel can be cut on the fold, not {p.name}.",
                    panel=p.name,
                )
            )
        if p.cut_count < 1:
            found.append(Finding("cut_count", ERROR, f"{p.name} must be cut at least once.", panel=p.name))
        for name in names:
            w = p.widths.get(name)
            if w is None:
                found.append(
                    Finding(
                        "width_missing",
                        ERROR,
                        f"Give the width of {p.name} at the {_label(name)}.",
                        panel=p.name,
                        level=name,
                    )
                )
            elif not math.isfinite(w) or w <= 0:
                found.append(
                    Finding(
                        "width_not_positive",
                        ERROR,
                        f"{p.name} is {_mm(w)} wide at the {_label(name)}: a width between stitch lines must be more "
                        "than nothing.",
                        panel=p.name,
                        level=name,
                    )
                )
        for edge, (top, bottom) in (("left", (p.top[0], p.bottom[0])), ("right", (p.top[1], p.bottom[1]))):
            if bottom <= top:
                found.append(
                    Finding(
                        "edges_cross",
                        ERROR,
                        f"The top and bottom edges of {p.name} cross at its {edge} stitch line: the top is "
                        f"{_mm(top)} and the bottom {_mm(bottom)} from the top of the block.",
                        panel=p.name,
                    )
                )
                continue
            for level in draft.levels:
                if not top <= level.y <= bottom:
                    where = "above the top" if level.y < top else "below the bottom"
                    found.append(
                        Finding(
                            "level_outside_panel",
                            WARNING,
                            f"The {_label(level.name)} ({_mm(level.y)} from the top) lies {where} of {p.name} at its "
                            f"{edge} stitch line ({_mm(top)} to {_mm(bottom)}). The width typed there is used for the "
                            "girth, but that stitch line gets no notch at this level: check the heights.",
                            panel=p.name,
                            level=level.name,
                        )
                    )
    for level in draft.levels:
        crossed = [p for p in draft.panels if min(p.top) <= level.y <= max(p.bottom)]
        if draft.panels and not crossed:
            found.append(
                Finding(
                    "level_outside_block",
                    ERROR,
                    f"The {_label(level.name)} ({_mm(level.y)} from the top) crosses none of the panels: it lies outside "
                    "the block. Check its height, or leave the level out.",
                    level=level.name,
                )
            )
    if len(draft.seams) != max(len(draft.panels) - 1, 0):
        found.append(Finding("seam_count", ERROR, "There must be one seam between each pair of neighbouring panels."))
    seam_names = set()
    for s in draft.seams:
        if not s.name.strip():
            found.append(Finding("seam_unnamed", ERROR, "Every seam needs a name."))
        elif s.name in seam_names:
            found.append(Finding("seam_name_twice", ERROR, f"Two seams are called {s.name!r}.", seam=s.name))
        seam_names.add(s.name)
        if s.kind not in SEAM_KINDS:
            found.append(Finding("seam_kind", ERROR, f"Choose what kind of seam {s.name} is.", seam=s.name))
        if not math.isfinite(s.cap_mm) or s.cap_mm < 0:
            found.append(Finding("seam_cap", ERROR, f"The most {s.name} may move cannot be negative.", seam=s.name))
        unknown = s.moves_at - set(names)
        if unknown:
            found.append(
                Finding(
                    "seam_level_unknown",
                    ERROR,
                    f"{s.name} may move at the {', '.join(sorted(_label(u) for u in unknown))}, which the block does not "
                    "have.",
                    seam=s.name,
                )
            )
    if draft.seam_allowance_mm < 0 or not math.isfinite(draft.seam_allowance_mm):
        found.append(Finding("seam_allowance", ERROR, "The seam allowance cannot be negative."))
    if draft.centre_front not in (CF_BUSK, CF_FOLD):
        found.append(Finding("centre_front", ERROR, "Choose how the centre front is closed."))
    if draft.centre_back not in (CB_LACED, CB_SEAMED):
        found.append(Finding("centre_back", ERROR, "Choose how the centre back is closed."))
    if draft.panels and draft.centre_front == CF_FOLD and not draft.panels[0].on_fold:
        found.append(
            Finding(
                "fold_mismatch",
                WARNING,
                f"The centre front is cut on the fold, but {draft.panels[0].name} is not marked “on the fold”.",
                panel=draft.panels[0].name,
            )
        )
    return found


def _lay_out(draft: BlockDraft, levels: tuple[Level, ...]) -> list[tuple[dict[str, float], dict[str, float]]]:
    """Left and right stitch-line x of every panel at every level."""
    out = []
    origin = 0.0
    count = len(draft.panels)
    for i, p in enumerate(draft.panels):
        widths = {lv.name: p.widths[lv.name] for lv in levels}
        if p.lefts and all(lv.name in p.lefts for lv in levels):
            left = {lv.name: p.lefts[lv.name] for lv in levels}
            right = {lv.name: left[lv.name] + widths[lv.name] for lv in levels}
            origin = max(origin, max(right.values()) + LAYOUT_GAP_MM)
            out.append((left, right))
            continue
        widest = max(widths.values())
        if i == 0:
            left = {lv: origin for lv in widths}
            right = {lv: origin + w for lv, w in widths.items()}
        elif i == count - 1:
            right = {lv: origin + widest for lv in widths}
            left = {lv: origin + widest - w for lv, w in widths.items()}
        else:
            centre = origin + widest / 2
            left = {lv: centre - w / 2 for lv, w in widths.items()}
            right = {lv: centre + w / 2 for lv, w in widths.items()}
        origin += widest + LAYOUT_GAP_MM
        out.append((left, right))
    return out


def _overlaps(draft: BlockDraft, placed, levels) -> list[Finding]:
    """Neighbouring panels placed by hand whose stitch lines cross in the drawing."""
    found = []
    for (a, (_, right)), (b, (left, _)) in zip(zip(draft.panels, placed), zip(draft.panels[1:], placed[1:])):
        if not (a.lefts and b.lefts):
            continue
        for level in levels:
            over = right[level.name] - left[level.name]
            if over > 0.05:
                found.append(
                    Finding(
                        "panels_overlap",
                        WARNING,
                        f"At the {_label(level.name)} the centre-back stitch line of {a.name} lies {_mm(over)} beyond the "
                        f"centre-front stitch line of {b.name}: the two cross in the drawing. If that is how the block is "
                        "drafted, trace the panels apart; otherwise check the positions.",
                        panel=b.name,
                        level=level.name,
                    )
                )
    return found


def build_block(draft: BlockDraft) -> Drafted:
    """The Block the draft describes, with every problem found in words.

    Errors (impossible input) leave ``block`` None; warnings come with the
    block.  The unaltered outlines are checked as well, so a drawn stitch
    line that crosses itself or its neighbour is reported.
    """
    findings = _input_findings(draft)
    if any(f.severity == ERROR for f in findings):
        return Drafted(None, tuple(findings))
    levels = tuple(sorted(draft.levels, key=lambda lv: lv.y))
    placed = _lay_out(draft, levels)
    findings += _overlaps(draft, placed, levels)
    first, last = levels[0].name, levels[-1].name
    panels = []
    for p, (left, right) in zip(draft.panels, placed):
        mid = levels[len(levels) // 2].name
        grain = None if p.grainline_mm is None else left[mid] + p.grainline_mm
        panels.append(
            Panel(
                name=p.name.strip(),
                side=p.side,
                left=left,
                right=right,
                top_left=Point(left[first], p.top[0]),
                top_right=Point(right[first], p.top[1]),
                bottom_left=Point(left[last], p.bottom[0]),
                bottom_right=Point(right[last], p.bottom[1]),
                cut_count=p.cut_count,
                on_fold=p.on_fold,
                top_bound=p.top_bound,
                bottom_bound=p.bottom_bound,
                grainline_x=grain,
            )
        )
        if p.grainline_mm is not None and not 0 < p.grainline_mm < p.widths[mid]:
            findings.append(
                Finding(
                    "grainline_outside",
                    ERROR,
                    f"The grainline of {p.name} ({_mm(p.grainline_mm)} from its centre-front stitch line) lies outside "
                    f"the panel, which is {_mm(p.widths[mid])} wide at the {_label(mid)}.",
                    panel=p.name,
                )
            )
    seams = tuple(
        Seam(
            name=s.name.strip(),
            kind=s.kind,
            front_panel=a.name,
            back_panel=b.name,
            alterable_at=frozenset(s.moves_at),
            cap_mm=s.cap_mm,
        )
        for s, a, b in zip(draft.seams, panels, panels[1:])
    )
    block = Block(
        name=draft.name.strip(),
        size=draft.size.strip(),
        garment=draft.garment,
        levels=levels,
        panels=tuple(panels),
        seams=seams,
        centre_front=draft.centre_front,
        centre_back=draft.centre_back,
        seam_allowance_mm=draft.seam_allowance_mm,
        size_order=draft.size_order,
    )
    findings += [Finding("block", ERROR, text) for text in block_errors(block)]
    if not any(f.severity == ERROR for f in findings):
        findings += _outline_findings(block)
    errors = any(f.severity == ERROR for f in findings)
    return Drafted(None if errors else block, tuple(findings))


def _outline_findings(block: Block) -> list[Finding]:
    """The geometry's own checks on the unaltered outlines (a stitch line crossing itself, a panel too narrow)."""
    from patterns.core.block import Alteration
    from patterns.core.outline import alter_pattern

    try:
        pattern = alter_pattern(block, Alteration(shifts={}))
    except ValueError as exc:
        return [Finding("outline", ERROR, str(exc))]
    return [f for f in pattern.findings if f.code != "seam_not_true"]


def draft_from_block(block: Block) -> BlockDraft:
    """The draft that gives ``block`` back (stitch lines by their places), for editing a stored block."""
    levels = block.levels
    mid = levels[len(levels) // 2].name if levels else None
    panels = tuple(
        PanelDraft(
            name=p.name,
            side=p.side,
            widths={lv.name: p.width(lv.name) for lv in levels},
            lefts={lv.name: p.left[lv.name] for lv in levels},
            top=(p.top_left.y, p.top_right.y),
            bottom=(p.bottom_left.y, p.bottom_right.y),
            cut_count=p.cut_count,
            on_fold=p.on_fold,
            top_bound=p.top_bound,
            bottom_bound=p.bottom_bound,
            grainline_mm=None if p.grainline_x is None or mid is None else p.grainline_x - p.left[mid],
        )
        for p in block.panels
    )
    seams = tuple(SeamDraft(s.name, s.kind, frozenset(s.alterable_at), s.cap_mm) for s in block.seams)
    return BlockDraft(
        name=block.name,
        size=block.size,
        garment=block.garment,
        levels=levels,
        panels=panels,
        seams=seams,
        centre_front=block.centre_front,
        centre_back=block.centre_back,
        seam_allowance_mm=block.seam_allowance_mm,
        size_order=block.size_order,
    )


# --- the tape entry ------------------------------------------------------------------------


@dataclass(frozen=True)
class TapePanel:
    name: str
    side: str
    cut_count: int = 2
    on_fold: bool = False
    top_bound: bool = False
    bottom_bound: bool = False


@dataclass(frozen=True)
class TapeReadings:
    """What the fitter reads off the card pattern with a tape.

    ``lines`` are the upright lines of the half pattern from centre front to
    centre back: the centre front, every seam (both raw edges of a seam are
    the same length on a trued pattern), the centre back; ``len(panels) + 1``
    of them.  For each line, ``down`` holds the lengths along it from the top
    edge to the first level, between each pair of levels and from the last
    level to the bottom edge (``len(levels) + 1`` lengths).  ``widths`` holds
    each panel's width between its stitch lines at every level.
    """

    levels: tuple[str, ...]  # top to bottom
    panels: tuple[TapePanel, ...]
    widths: dict[str, tuple[float, ...]]  # level -> one width per panel
    down: tuple[tuple[float, ...], ...]  # line -> lengths, top edge to bottom edge


def line_names(panels, seams) -> list[str]:
    """The names of the upright lines the tape entry asks along: centre front, the seams, centre back."""
    return ["Centre front", *[s.name for s in seams], "Centre back"]


def draft_from_tape(
    readings: TapeReadings,
    *,
    name: str,
    size: str,
    garment: str,
    seams: tuple[SeamDraft, ...],
    centre_front: str = CF_BUSK,
    centre_back: str = CB_LACED,
    seam_allowance_mm: float = 15.0,
    size_order: int = 0,
) -> tuple[BlockDraft, tuple[Finding, ...]]:
    """The block draft the tape readings describe, and what looks wrong in them.

    The levels are straight across the block, so the distance between two
    levels is read along the centre front (straight, along the busk or the
    fold); the heights of the top and bottom edge at each line are read from
    the lengths along that line above the first level and below the last.
    A line is taken as upright between levels: a seam measured shorter
    between two levels than the centre front cannot be, and is reported.
    """
    found: list[Finding] = []
    levels_n, lines_n = len(readings.levels), len(readings.panels) + 1
    if len(readings.down) != lines_n or any(len(d) != levels_n + 1 for d in readings.down):
        return _empty(name, size, garment), (Finding("tape_shape", ERROR, "Some lengths are missing."),)
    for line in readings.down:
        for value in line:
            if not math.isfinite(value) or value < 0:
                found.append(Finding("tape_negative", ERROR, "A length along a line cannot be negative."))
                break
    cf = readings.down[0]
    first_y = max(d[0] for d in readings.down)
    ys = [first_y]
    for k in range(1, levels_n):
        ys.append(ys[-1] + cf[k])
    for k in range(1, levels_n):
        if cf[k] <= 0:
            found.append(
                Finding(
                    "levels_together",
                    ERROR,
                    f"The centre front measures nothing between the {_label(readings.levels[k - 1])} and the "
                    f"{_label(readings.levels[k])}.",
                    level=readings.levels[k],
                )
            )
    names = line_names(readings.panels, seams)
    for j, line in enumerate(readings.down[1:], start=1):
        for k in range(1, levels_n):
            if line[k] < cf[k] - TAPE_TOLERANCE_MM:
                found.append(
                    Finding(
                        "line_shorter_than_centre_front",
                        WARNING,
                        f"Along the {names[j]} the {_label(readings.levels[k - 1])} to {_label(readings.levels[k])} "
                        f"measures {_mm(line[k])}, less than the {_mm(cf[k])} along the centre front. The levels run "
                        "straight across, so no line can be shorter between them: measure both again.",
                        level=readings.levels[k],
                    )
                )
    tops = [first_y - d[0] for d in readings.down]
    bottoms = [ys[-1] + d[-1] for d in readings.down]
    levels = tuple(Level(lv, y) for lv, y in zip(readings.levels, ys))
    panels = tuple(
        PanelDraft(
            name=p.name,
            side=p.side,
            widths={
                lv: readings.widths.get(lv, ())[i] if i < len(readings.widths.get(lv, ())) else float("nan")
                for lv in readings.levels
            },
            top=(tops[i], tops[i + 1]),
            bottom=(bottoms[i], bottoms[i + 1]),
            cut_count=p.cut_count,
            on_fold=p.on_fold,
            top_bound=p.top_bound,
            bottom_bound=p.bottom_bound,
        )
        for i, p in enumerate(readings.panels)
    )
    draft = BlockDraft(
        name=name,
        size=size,
        garment=garment,
        levels=levels,
        panels=panels,
        seams=seams,
        centre_front=centre_front,
        centre_back=centre_back,
        seam_allowance_mm=seam_allowance_mm,
        size_order=size_order,
    )
    return draft, tuple(found)


def _empty(name, size, garment) -> BlockDraft:
    return BlockDraft(name=name, size=size, garment=garment, levels=(), panels=(), seams=())
