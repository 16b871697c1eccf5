"""A base pattern as plain data: the half pattern, panels from centre front to centre back.

Coordinates are millimetres on the flat pattern: x grows from centre front
towards centre back, y grows downwards from the top of the block.  Every
panel's left stitch line faces centre front, its right one centre back.

A seam joins the right edge of one panel to the left edge of the next.  Each
seam therefore has two raw edges, named by the panel they belong to.  The
left edge of the first panel is the centre front (fold or busk), the right
edge of the last panel the centre back (lacing or a plain seam): neither is
a seam this engine alters, except the centre front width as a whole.
"""

from dataclasses import dataclass, field

FRONT, BACK = "front", "back"
CF_FOLD, CF_BUSK = "fold", "busk"
CB_LACED, CB_SEAMED = "laced", "seamed"
LEFT, RIGHT = "left", "right"

# The narrowest a panel may be anywhere: room for a boning channel and two seam allowances' turn
# (our choice, from memory).  The engine checks it at the levels, the outline along the whole panel.
MIN_PANEL_WIDTH_MM = 20.0

# How a seam is treated by the "side seams first" policy.
SEAM_KINDS = ("side", "princess", "other")


@dataclass(frozen=True)
class Level:
    name: str  # one of measures.LEVEL_CODES
    y: float


@dataclass(frozen=True)
class Point:
    x: float
    y: float


@dataclass(frozen=True)
class PanelCurves:
    """The drawn stitch line of a panel, kept as it was imported (each side a fine polyline).

    ``left`` and ``right`` run top to bottom (from the top corner to the
    bottom corner of that side, y increasing); ``top`` and ``bottom`` run
    from the left corner to the right corner.  The corners are shared by the
    sides that meet there.  ``grainline`` is the drawn grainline, if any.
    """

    left: tuple[tuple[float, float], ...]
    right: tuple[tuple[float, float], ...]
    top: tuple[tuple[float, float], ...]
    bottom: tuple[tuple[float, float], ...]
    grainline: tuple[tuple[float, float], tuple[float, float]] | None = None


@dataclass(frozen=True)
class Panel:
    """One panel of the half pattern, as drafted.

    ``left`` and ``right`` hold the x of each stitch line at every level of
    the block; the four corners give the top and bottom edges.
    """

    name: str
    side: str  # FRONT or BACK of the side seam
    left: dict[str, float]
    right: dict[str, float]
    top_left: Point
    top_right: Point
    bottom_left: Point
    bottom_right: Point
    cut_count: int = 2
    on_fold: bool = False
    # The imported stitch line, when the panel came from a drawing; None for a
    # panel known only by its corners and level points.
    curves: PanelCurves | None = None
    # A bound edge is finished with binding, so its cutting line is its stitch line
    # (no seam allowance there).  Common practice: corsets are usually bound at top and bottom.
    top_bound: bool = False
    bottom_bound: bool = False
    # Where the grainline runs (x on the base pattern, parallel to centre front); None puts
    # it through the middle of the panel at its middle level.
    grainline_x: float | None = None

    def width(self, level: str) -> float:
        return self.right[level] - self.left[level]


@dataclass(frozen=True)
class Seam:
    name: str
    kind: str  # one of SEAM_KINDS
    front_panel: str  # the panel on the centre-front side of the seam
    back_panel: str  # the panel on the centre-back side of the seam
    alterable_at: frozenset[str]
    cap_mm: float = 15.0  # per raw edge; 1-1.5 cm is a working rule (memory/common practice)


@dataclass(frozen=True)
class ChannelMark:
    """A boning channel the block marks inside a panel, running from its top edge to its bottom edge.

    Either ``fraction`` of the way across the panel from its left stitch line
    (0 is the left stitch line, 1 the right one), or ``offset_mm`` in from the
    stitch line on ``edge`` (a bone beside the lacing, say).  Channels along
    the seams need no mark: every seam carries one on its stitch line.
    """

    panel: str
    fraction: float | None = None
    edge: str = LEFT
    offset_mm: float = 0.0
    name: str = ""


@dataclass(frozen=True)
class Block:
    name: str
    size: str
    garment: str
    levels: tuple[Level, ...]  # top to bottom
    panels: tuple[Panel, ...]  # centre front to centre back
    seams: tuple[Seam, ...]  # in order, between neighbouring panels
    centre_front: str = CF_BUSK
    centre_back: str = CB_LACED
    seam_allowance_mm: float = 15.0
    size_order: int = 0
    # Boning channels marked inside panels (besides the one on every seam); none by default.
    channels: tuple[ChannelMark, ...] = ()

    @property
    def level_names(self) -> tuple[str, ...]:
        return tuple(level.name for level in self.levels)

    def level_y(self, name: str) -> float:
        return next(level.y for level in self.levels if level.name == name)

    def panel(self, name: str) -> Panel:
        return next(p for p in self.panels if p.name == name)

    def half_girth(self, level: str, side: str | None = None) -> float:
        return sum(p.width(level) for p in self.panels if side is None or p.side == side)

    def girth(self, level: str, side: str | None = None) -> float:
        """Both body halves, as the pattern is cut (the lacing gap not included)."""
        return 2 * self.half_girth(level, side)

    def centre_front_width(self) -> float:
        """Full width of the centre-front panel across the body, at the top level."""
        first = self.panels[0]
        return 2 * first.width(self.levels[0].name)


@dataclass(frozen=True)
class PanelShift:
    """How far each stitch line of one panel moves at one level (positive widens the panel)."""

    left: float = 0.0
    right: float = 0.0


@dataclass(frozen=True)
class Alteration:
    """What the geometry needs from an allotment: per panel, per level, per edge; and band changes.

    ``bands`` maps (upper level, lower level) to the change in their distance
    (positive lengthens).
    """

    shifts: dict[str, dict[str, PanelShift]]
    bands: dict[tuple[str, str], float] = field(default_factory=dict)

    def shift(self, panel: str, level: str) -> PanelShift:
        return self.shifts.get(panel, {}).get(level, PanelShift())


def block_errors(block: Block) -> list[str]:
    """Structural problems with a block; an empty list means it can be used."""
    errors = []
    names = block.level_names
    if not names:
        errors.append("The block has no levels.")
    if len(set(names)) != len(names):
        errors.append("A level appears twice.")
    ys = [level.y for level in block.levels]
    if ys != sorted(ys) or len(set(ys)) != len(ys):
        errors.append("Levels must run from top to bottom with distinct heights.")
    if not block.panels:
        errors.append("The block has no panels.")
    panel_names = [p.name for p in block.panels]
    if len(set(panel_names)) != len(panel_names):
        errors.append("Two panels share a name.")
    for p in block.panels:
        for lv in names:
            if lv not in p.left or lv not in p.right:
                errors.append(f"Panel {p.name} has no stitch line at {lv}.")
            elif p.width(lv) <= 0:
                errors.append(f"Panel {p.name} has no width at {lv}.")
        if p.side not in (FRONT, BACK):
            errors.append(f"Panel {p.name} must be front or back of the side seam.")
        for edge, top, bottom in ((LEFT, p.top_left, p.bottom_left), (RIGHT, p.top_right, p.bottom_right)):
            if bottom.y <= top.y:
                errors.append(
                    f"Panel {p.name}: the bottom of its {edge} stitch line lies above its top "
                    "(y grows downwards from the top of the block)."
                )
        if p.curves is not None:
            errors += curve_errors(p, {lv.name: lv.y for lv in block.levels})
    if len(block.seams) != max(len(block.panels) - 1, 0):
        errors.append("There must be one seam between each pair of neighbouring panels.")
    for seam, (a, b) in zip(block.seams, zip(block.panels, block.panels[1:])):
        if (seam.front_panel, seam.back_panel) != (a.name, b.name):
            errors.append(f"Seam {seam.name} must join {a.name} and {b.name}.")
        if not seam.alterable_at <= set(names):
            errors.append(f"Seam {seam.name} names a level the block does not have.")
        if seam.kind not in SEAM_KINDS:
            errors.append(f"Seam {seam.name} has an unknown kind.")
        if seam.cap_mm < 0:
            errors.append(f"Seam {seam.name} has a negative cap.")
    for mark in block.channels:
        if mark.panel not in panel_names:
            errors.append(f"A boning channel names a panel the block does not have: {mark.panel}.")
        if mark.fraction is not None and not 0 <= mark.fraction <= 1:
            errors.append(f"A boning channel on {mark.panel} must lie across the panel (0 to 1).")
        if mark.fraction is None and (mark.edge not in (LEFT, RIGHT) or mark.offset_mm < 0):
            errors.append(f"A boning channel on {mark.panel} needs an edge and an offset of 0 or more.")
    return errors


def curve_errors(panel: Panel, level_y: dict[str, float], tolerance: float = 0.05) -> list[str]:
    """Problems with a panel's imported stitch line: sides that do not meet at the corners,
    sides that do not run downwards, level points that are not on the line."""
    c = panel.curves
    if c is None:
        return []
    if min(len(c.left), len(c.right), len(c.top), len(c.bottom)) < 2:
        return [f"Panel {panel.name}: each side of the drawn stitch line needs two points at least."]
    errors = []
    corners = {
        "top left": (panel.top_left, (c.left[0], c.top[0])),
        "top right": (panel.top_right, (c.right[0], c.top[-1])),
        "bottom left": (panel.bottom_left, (c.left[-1], c.bottom[0])),
        "bottom right": (panel.bottom_right, (c.right[-1], c.bottom[-1])),
    }
    for where, (corner, ends) in corners.items():
        if any(abs(e[0] - corner.x) > tolerance or abs(e[1] - corner.y) > tolerance for e in ends):
            errors.append(f"Panel {panel.name}: the drawn stitch line does not meet its {where} corner.")
    for edge, line, at_level in ((LEFT, c.left, panel.left), (RIGHT, c.right, panel.right)):
        ys = [y for _, y in line]
        if any(b <= a for a, b in zip(ys, ys[1:])):
            errors.append(f"Panel {panel.name}: the drawn {edge} side must run downwards all the way.")
            continue
        for level, x in at_level.items():
            found = curve_x_at(line, level_y.get(level))
            if found is not None and abs(found - x) > tolerance:
                errors.append(f"Panel {panel.name}: the {edge} stitch line at {level} is not on the drawn line.")
    return errors


def curve_x_at(line, y: float | None) -> float | None:
    """x of a downward-running polyline at height y (None outside it)."""
    if y is None or not line or y < line[0][1] - 1e-9 or y > line[-1][1] + 1e-9:
        return None
    for (x0, y0), (x1, y1) in zip(line, line[1:]):
        if y0 - 1e-9 <= y <= y1 + 1e-9:
            return x0 if y1 == y0 else x0 + (x1 - x0) * (y - y0) / (y1 - y0)
    return None
