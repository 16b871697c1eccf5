"""The 1:1 cutting sheet drawn as SVG: the altered panels laid out, cut into page tiles, the map.

Pure drawing beside the exporter (patterns.core.export), whose number
format, paths, grainline arrows, notches and layout it shares.  Each tile is
an SVG sized in CSS millimetres, which are absolute units (W3C CSS Values
and Units Level 3, 5.2), with one SVG user unit to the millimetre.
"""

from __future__ import annotations

from dataclasses import dataclass
from xml.etree import ElementTree as ET

from shapely.geometry import Polygon

from patterns.core.export import _grain_path, _n, _path, notch_segments, sheet_layout
from patterns.core.outline import AlteredPattern, PanelOutline
from patterns.core.tiling import PAGE_MARGIN_MM, TileGrid, tile_grid, tile_label

# Panels on the cutting sheet: this far apart, and this far in from the
# sheet's edge (mm).
PANEL_GAP_MM = 10.0
SHEET_MARGIN_MM = 5.0
# Test squares: 10 cm, and 4 in = 101.6 mm (1 in = 25.4 mm exactly, 1959
# international yard and pound agreement).  Checking one with a ruler before
# cutting is common practice for printed patterns.
TEST_SQUARES = (("cm", 100.0, "10 cm", 10), ("in", 101.6, "4 in", 8))  # ticks: every 1 cm, every 1/2 in
SQUARE_PAD_MM = 1.0
# Room on the cutting sheet's first page for the assembly map (mm).
MAP_WIDTH_MM = 80.0
MAP_HEIGHT_MM = 95.0
# Colours of the drawn lines; black prints on every printer, the stitch
# line is told apart by its dashes as well as its colour.
CUT_COLOUR, STITCH_COLOUR, MARK_COLOUR, FRAME_COLOUR, OVERLAP_FILL = (
    "#000000",
    "#0072B2",
    "#000000",
    "#808080",
    "#EBEBEB",
)
CUT_WIDTH_MM, STITCH_WIDTH_MM, FRAME_WIDTH_MM = 0.4, 0.3, 0.2
STITCH_DASH = "3 1.5"
NOTCH_WIDTH_MM = 0.4
LABEL_HEIGHT_MM = 5.0
MARK_RADIUS_MM = 2.5
# A label keeps this far from the overlap strips, so it prints whole on one tile.
LABEL_CLEARANCE_MM = 2.0
# Drawn lines keep within this of the computed outline (far finer than the pen).
DRAW_TOLERANCE_MM = 0.05
FONT_FAMILY = "DejaVu Sans"


def _bounds(points) -> tuple[float, float, float, float]:
    xs, ys = [p[0] for p in points], [p[1] for p in points]
    return min(xs), min(ys), max(xs), max(ys)


@dataclass(frozen=True)
class SheetPiece:
    """One panel placed on the sheet: its lines (thinned for drawing) and where it sits (a translation)."""

    outline: PanelOutline
    dx: float
    dy: float
    cutting: tuple
    stitch: tuple

    @property
    def bounds(self) -> tuple[float, float, float, float]:
        x0, y0, x1, y1 = _bounds(self.outline.cutting)
        return x0 + self.dx, y0 + self.dy, x1 + self.dx, y1 + self.dy


@dataclass(frozen=True)
class Sheet:
    pieces: tuple[SheetPiece, ...]
    width_mm: float
    height_mm: float


def _thin(points, tolerance_mm: float = DRAW_TOLERANCE_MM) -> tuple:
    """A closed outline with the points that add nothing at ``tolerance_mm`` dropped (Douglas-Peucker)."""
    ring = Polygon(points).exterior.simplify(tolerance_mm, preserve_topology=False)
    return tuple(ring.coords)[:-1]


def lay_out(pattern: AlteredPattern) -> Sheet:
    """The altered panels side by side, centre front first, tops level."""
    layout = sheet_layout(pattern.altered, gap_mm=PANEL_GAP_MM, margin_mm=SHEET_MARGIN_MM)
    pieces = tuple(
        SheetPiece(o, dx, dy, _thin(o.cutting), _thin(o.stitch)) for o, (dx, dy) in zip(pattern.altered, layout.offsets)
    )
    return Sheet(pieces, layout.width_mm, layout.height_mm)


def _line(parent, d: str, colour: str, width: float, **extra) -> ET.Element:
    attrs = {
        "d": d,
        "fill": "none",
        "stroke": colour,
        "stroke-width": _n(width),
        "stroke-linejoin": "round",
        "stroke-linecap": "round",
    }
    attrs.update({k.replace("_", "-"): v for k, v in extra.items()})
    return ET.SubElement(parent, "path", attrs)


def _text(parent, x, y, text, size, *, anchor="start", weight="normal", colour="#000000", rotate=None, cls=None):
    attrs = {
        "x": _n(x),
        "y": _n(y),
        "font-size": _n(size),
        "font-family": FONT_FAMILY,
        "fill": colour,
        "text-anchor": anchor,
    }
    if weight != "normal":
        attrs["font-weight"] = weight
    if rotate is not None:
        attrs["transform"] = f"rotate({_n(rotate)} {_n(x)} {_n(y)})"
    if cls:
        attrs["class"] = cls
    el = ET.SubElement(parent, "text", attrs)
    el.text = text
    return el


def _draw_piece(parent, piece: SheetPiece) -> None:
    o = piece.outline
    g = ET.SubElement(parent, "g", {"class": "panel", "transform": f"translate({_n(piece.dx)} {_n(piece.dy)})"})
    _line(g, _path(piece.cutting, True), CUT_COLOUR, CUT_WIDTH_MM, **{"class": "cut"})
    _line(
        g,
        _path(piece.stitch, True),
        STITCH_COLOUR,
        STITCH_WIDTH_MM,
        stroke_dasharray=STITCH_DASH,
        **{"class": "stitch"},
    )
    notches = "".join(_path(segment, False) for segment in notch_segments(o))
    if notches:
        _line(g, notches, MARK_COLOUR, NOTCH_WIDTH_MM, **{"class": "notch"})
    _line(g, _grain_path(o.grainline), MARK_COLOUR, 0.3, **{"class": "grain"})


@dataclass(frozen=True)
class PieceLabel:
    """A line of a panel's label, written along its grainline; where it starts on a tile (mm)."""

    left_mm: float
    top_mm: float
    text: str
    size_mm: float
    bold: bool


def _label_centre(y: float, half: float, grid: TileGrid, low: float, high: float) -> float:
    """The height nearest ``y`` where a label ``2 * half`` long lies on one tile, clear of the
    overlap strips and within ``low``-``high`` (the grainline); ``y`` itself when none is."""
    candidates = []
    for row in range(grid.rows):
        top = row * grid.step_y_mm + (grid.overlap_mm if row else 0.0) + half + LABEL_CLEARANCE_MM
        bottom = (
            row * grid.step_y_mm
            + grid.printable_height_mm
            - (grid.overlap_mm if row < grid.rows - 1 else 0.0)
            - half
            - LABEL_CLEARANCE_MM
        )
        top, bottom = max(top, low + half), min(bottom, high - half)
        if top <= bottom:
            candidates.append(min(max(y, top), bottom))
    return min(candidates, key=lambda c: abs(c - y), default=y)


def piece_labels(sheet: Sheet, grid: TileGrid, tile, tag: str = "") -> list[PieceLabel]:
    """The labels that show on ``tile``: the panel's name, then its size, cut count and revision.

    They are set as HTML text over the tile's picture (WeasyPrint lays SVG text
    out letter by letter, which is slow), reading upwards beside the grainline,
    on one tile where the panel allows.
    """
    area = (tile.x_mm, tile.y_mm, tile.x_mm + tile.width_mm, tile.y_mm + tile.height_mm)
    labels = []
    for piece in sheet.pieces:
        o = piece.outline
        name, *rest = o.labels
        rest = [*rest, *(["place on fold"] if o.on_fold else []), *([tag] if tag else [])]
        lines = [(name, LABEL_HEIGHT_MM, True), (" · ".join(rest), 0.8 * LABEL_HEIGHT_MM, False)]
        half = 0.35 * LABEL_HEIGHT_MM * max(len(text) for text, _, _ in lines)
        (_, g0), (_, g1) = o.grainline
        x = o.label_at[0] + piece.dx + 2
        y = _label_centre(o.label_at[1] + piece.dy, half, grid, min(g0, g1) + piece.dy, max(g0, g1) + piece.dy)
        if not _overlaps((x, y - half, x + 3 * LABEL_HEIGHT_MM, y + half), area):
            continue
        for text, size, bold in lines:
            if text:
                labels.append(PieceLabel(x - tile.x_mm, y - tile.y_mm, text, size, bold))
                x += 1.4 * size
    return labels


def _alignment_marks(parent, grid: TileGrid, area=None) -> None:
    """A circle with a cross in the middle of the overlap strips, twice along every shared edge.

    Marks are drawn in sheet coordinates, so the same mark prints on every
    tile that shares it; laying one tile over the other until the marks
    coincide puts the pages together.
    """
    marks = []
    for x in grid.column_joins():
        for row in range(grid.rows):
            marks += [(x, row * grid.step_y_mm + share * grid.printable_height_mm) for share in (0.3, 0.7)]
    for y in grid.row_joins():
        for col in range(grid.columns):
            marks += [(col * grid.step_x_mm + share * grid.printable_width_mm, y) for share in (0.3, 0.7)]
    if area is not None:
        x0, y0, x1, y1 = area
        marks = [
            (x, y)
            for x, y in marks
            if x0 - MARK_RADIUS_MM <= x <= x1 + MARK_RADIUS_MM and y0 - MARK_RADIUS_MM <= y <= y1 + MARK_RADIUS_MM
        ]
    arm = MARK_RADIUS_MM + 1
    d = "".join(
        f"M{_n(x - arm)} {_n(y)}L{_n(x + arm)} {_n(y)}M{_n(x)} {_n(y - arm)}L{_n(x)} {_n(y + arm)}" for x, y in marks
    )
    if d:
        _line(parent, d, MARK_COLOUR, 0.25, **{"class": "align"})
    for x, y in marks:
        ET.SubElement(
            parent,
            "circle",
            {
                "cx": _n(x),
                "cy": _n(y),
                "r": _n(MARK_RADIUS_MM),
                "fill": "none",
                "stroke": MARK_COLOUR,
                "stroke-width": "0.25",
            },
        )


def neighbours(grid: TileGrid, row: int, column: int) -> str:
    """'left A1, right A3, below B2': the tiles that share an edge with this one."""
    found = []
    for word, r, c in (
        ("above", row - 1, column),
        ("left", row, column - 1),
        ("right", row, column + 1),
        ("below", row + 1, column),
    ):
        if 0 <= r < grid.rows and 0 <= c < grid.columns:
            found.append(f"{word} {tile_label(r, c)}")
    return ", ".join(found)


def _overlap_strips(parent, grid: TileGrid) -> None:
    height = grid.rows * grid.step_y_mm + grid.overlap_mm
    width = grid.columns * grid.step_x_mm + grid.overlap_mm
    for x in grid.column_joins():
        ET.SubElement(
            parent,
            "rect",
            {
                "class": "overlap",
                "x": _n(x - grid.overlap_mm / 2),
                "y": "0",
                "width": _n(grid.overlap_mm),
                "height": _n(height),
                "fill": OVERLAP_FILL,
                "stroke": "none",
            },
        )
    for y in grid.row_joins():
        ET.SubElement(
            parent,
            "rect",
            {
                "class": "overlap",
                "x": "0",
                "y": _n(y - grid.overlap_mm / 2),
                "width": _n(width),
                "height": _n(grid.overlap_mm),
                "fill": OVERLAP_FILL,
                "stroke": "none",
            },
        )


def _overlaps(a, b) -> bool:
    ax0, ay0, ax1, ay1 = a
    bx0, by0, bx1, by1 = b
    return ax0 <= bx1 and bx0 <= ax1 and ay0 <= by1 and by0 <= ay1


def _svg_root(width_mm: float, height_mm: float, viewbox: tuple[float, float, float, float], cls: str) -> ET.Element:
    return ET.Element(
        "svg",
        {
            "xmlns": "http://www.w3.org/2000/svg",
            "class": cls,
            "width": f"{_n(width_mm)}mm",
            "height": f"{_n(height_mm)}mm",
            "viewBox": " ".join(_n(v) for v in viewbox),
        },
    )


def tile_svg(sheet: Sheet, grid: TileGrid, row: int, column: int) -> str:
    """One page's share of the sheet, at true size: one SVG unit = 1 mm."""
    tile = grid.tile(row, column)
    w, h = tile.width_mm, tile.height_mm
    root = _svg_root(w, h, (tile.x_mm, tile.y_mm, w, h), "tile")
    _overlap_strips(root, grid)
    area = (tile.x_mm, tile.y_mm, tile.x_mm + w, tile.y_mm + h)
    for piece in sheet.pieces:
        if _overlaps(piece.bounds, area):
            _draw_piece(root, piece)
    _alignment_marks(root, grid, area)
    ET.SubElement(
        root,
        "rect",
        {
            "class": "frame",
            "x": _n(tile.x_mm),
            "y": _n(tile.y_mm),
            "width": _n(w),
            "height": _n(h),
            "fill": "none",
            "stroke": FRAME_COLOUR,
            "stroke-width": _n(FRAME_WIDTH_MM),
        },
    )
    return ET.tostring(root, encoding="unicode")


def square_svg(side_mm: float, name: str, divisions: int = 10) -> str:
    """A test square of ``side_mm``, labelled, with ticks along its top edge at each of ``divisions``."""
    pad = SQUARE_PAD_MM
    root = _svg_root(
        side_mm + 2 * pad, side_mm + 2 * pad, (-pad, -pad, side_mm + 2 * pad, side_mm + 2 * pad), "test-square"
    )
    ET.SubElement(
        root,
        "rect",
        {
            "class": "square",
            "x": "0",
            "y": "0",
            "width": _n(side_mm),
            "height": _n(side_mm),
            "fill": "none",
            "stroke": "#000000",
            "stroke-width": "0.3",
        },
    )
    ticks = "".join(
        f"M{_n(side_mm * i / divisions)} 0L{_n(side_mm * i / divisions)} {5 if 2 * i == divisions else 3}"
        for i in range(1, divisions)
    )
    _line(root, ticks, "#000000", 0.2)
    _text(root, side_mm / 2, side_mm / 2 - 3, f"{name} test square", 5, anchor="middle", weight="bold")
    _text(root, side_mm / 2, side_mm / 2 + 5, f"must measure {name} each way", 3.5, anchor="middle")
    return ET.tostring(root, encoding="unicode")


def map_svg(
    sheet: Sheet, grid: TileGrid, max_width_mm: float = MAP_WIDTH_MM, max_height_mm: float = MAP_HEIGHT_MM
) -> str:
    """The assembly map: the whole sheet small, with every tile's place and name."""
    total_w = grid.columns * grid.step_x_mm + grid.overlap_mm
    total_h = grid.rows * grid.step_y_mm + grid.overlap_mm
    scale = min(max_width_mm / total_w, max_height_mm / total_h)
    root = _svg_root(total_w * scale, total_h * scale, (0, 0, total_w, total_h), "assembly-map")
    for piece in sheet.pieces:
        g = ET.SubElement(root, "g", {"transform": f"translate({_n(piece.dx)} {_n(piece.dy)})"})
        _line(g, _path(_thin(piece.cutting, 0.5), True), "#606060", 0.3 / scale)
    for tile in grid.tiles():
        ET.SubElement(
            root,
            "rect",
            {
                "x": _n(tile.x_mm),
                "y": _n(tile.y_mm),
                "width": _n(tile.width_mm),
                "height": _n(tile.height_mm),
                "fill": "none",
                "stroke": "#000000",
                "stroke-width": _n(0.3 / scale),
            },
        )
        _text(
            root,
            tile.x_mm + tile.width_mm / 2,
            tile.y_mm + tile.height_mm / 2 + 1.5 / scale,
            tile.label,
            4.5 / scale,
            anchor="middle",
            weight="bold",
        )
    return ET.tostring(root, encoding="unicode")


def sheet_grid(pattern: AlteredPattern, paper: str) -> tuple[Sheet, TileGrid]:
    sheet = lay_out(pattern)
    return sheet, tile_grid(sheet.width_mm, sheet.height_mm, paper, margin_mm=PAGE_MARGIN_MM)
