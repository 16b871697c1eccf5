"""A base pattern from a drawing: DXF or SVG in, a Block with the drawn stitch lines out.

What the file must hold, in the drawing's own unit (millimetres, centimetres
or inches; a DXF says so in ``$INSUNITS``, an SVG by the unit of its
``width`` and ``height`` together with its ``viewBox``):

* **one closed outline per piece**, the stitch line: a closed polyline,
  path, spline, circle or ellipse, or lines, arcs and splines meeting end to
  end.  An outline that holds another (a cutting line drawn round a stitch
  line) is taken for a cutting line and left out.
* **level lines**: horizontal lines on a layer (DXF) or in a group or
  element (SVG, by ``id``, ``class`` or Inkscape label) named after a level
  (``waist``, ``LEVEL_WAIST``, ``Abdomen (high hip)`` ...), or horizontal
  lines with a text naming the level just above or on them.  Each piece must
  cross every level.
* optionally a **grainline** per piece, on a layer or in a group called
  ``grain`` or ``grainline``; and texts inside a piece: the first is its
  name, ``cut 1`` / ``cut 2`` its cut count, ``on fold`` a piece cut on the
  fold.  Layers or groups called ``notch`` or ``label`` are passed over.

Pieces are read from left to right as centre front to centre back.  The
block's coordinates are the pattern's: millimetres, y downwards, the top of
the highest piece at y = 0 and the leftmost point at x = 0.

Each piece keeps its drawn outline (``Panel.curves``): its left and right
sides run from the corner above the top level to the corner below the bottom
level, each as far as the line keeps going downwards without a sharp turn.
Every problem is a :class:`BlockImportError` in plain words.
"""

from __future__ import annotations

import io
import math
import re
from dataclasses import dataclass, field
from xml.etree import ElementTree as ET

import numpy as np
from shapely.geometry import LineString, Polygon
from shapely.geometry import Point as ShapelyPoint

from patterns.core.block import (
    BACK,
    CB_LACED,
    CF_BUSK,
    CF_FOLD,
    FRONT,
    Block,
    Level,
    Panel,
    PanelCurves,
    Point,
    Seam,
    block_errors,
)
from patterns.core.measures import LEVEL_CODES, LEVEL_LABELS
from patterns.core.units import MM_PER_CM, MM_PER_INCH

MAX_FILE_BYTES = 5 * 1024 * 1024
# Ends of lines closer than this meet (mm).
JOIN_TOLERANCE_MM = 0.1
# A curve is replaced by a polyline no further than this from it (mm).
FLATTEN_TOLERANCE_MM = 0.01
# A level line may lean this much over its length (mm) and still be horizontal.
LEVEL_SLOPE_MM = 0.5
# Lines of one level drawn on different pieces may differ by this much in height (mm).
LEVEL_AGREEMENT_MM = 0.5
# A text names the level line it sits on or just above, within this distance (mm).
LEVEL_TEXT_DISTANCE_MM = 15.0
# The kept stitch line may leave the drawn one by this much where it is thinned out (mm).
SIMPLIFY_MM = 0.005
# A side of a piece ends where its line turns by more than this (our choice).
CORNER_DEGREES = 30.0
MAX_PIECES = 20

DXF_UNITS_MM = {4: ("millimetres", 1.0), 5: ("centimetres", float(MM_PER_CM)), 1: ("inches", float(MM_PER_INCH))}
# The other $INSUNITS codes of the DXF reference, named for the message.
DXF_UNIT_NAMES = {
    0: "no unit (unitless)",
    2: "feet",
    3: "miles",
    6: "metres",
    7: "kilometres",
    8: "microinches",
    9: "mils",
    10: "yards",
    11: "ångströms",
    12: "nanometres",
    13: "microns",
    14: "decimetres",
    15: "decametres",
    16: "hectometres",
    17: "gigametres",
    18: "astronomical units",
    19: "light years",
    20: "parsecs",
    21: "US survey feet",
    22: "US survey inches",
    23: "US survey yards",
    24: "US survey miles",
}
SVG_UNITS_MM = {"mm": 1.0, "cm": float(MM_PER_CM), "in": float(MM_PER_INCH)}

_IGNORED_NAMES = {"notch", "notches", "label", "labels", "defpoints", "test-square"}
_GRAIN_NAMES = {"grain", "grainline", "grain line"}


class BlockImportError(ValueError):
    """A drawing that cannot become a block; the message says what to change."""


class UnknownUnitError(BlockImportError):
    pass


class OpenOutlineError(BlockImportError):
    pass


class LevelsError(BlockImportError):
    pass


@dataclass(frozen=True)
class ImportOptions:
    """What a drawing does not say: the block's name and kind, and where the side seam is."""

    name: str = "Imported block"
    size: str = "1"
    garment: str = "other"
    front_panels: int | None = None  # pieces in front of the side seam; None: the first half
    centre_front: str | None = None  # None: fold if the first piece is cut on the fold, else busk
    centre_back: str = CB_LACED
    seam_allowance_mm: float = 15.0
    cap_mm: float = 15.0
    size_order: int = 0


# --- what a file holds -----------------------------------------------------------------


@dataclass
class _Path:
    points: np.ndarray  # mm, y downwards, shape (n, 2)
    closed: bool
    names: tuple[str, ...]  # layer or group names, lower case
    where: str  # for messages


@dataclass
class Drawing:
    """A drawing read into millimetres, y downwards, before it is understood as pieces."""

    paths: list[_Path] = field(default_factory=list)
    texts: list[tuple[str, float, float]] = field(default_factory=list)
    unit: str = "millimetres"
    y_up: bool = False  # the file's own y runs upwards (DXF): messages give y as the file has it

    def where(self, x: float, y: float) -> str:
        return f"x {x:.1f} mm, y {(-y if self.y_up else y):.1f} mm"


_LEVEL_WORDS = {code: code for code in LEVEL_CODES}
_LEVEL_WORDS.update({LEVEL_LABELS[code].lower(): code for code in LEVEL_CODES})
_LEVEL_WORDS.update({"high hip": "abdomen", "hips": "hip", "bustline": "bust", "waistline": "waist"})
_LEVEL_NAME = re.compile(r"^(?:level|line)?[\s_\-.:]*(?P<word>[a-z ()]+?)[\s_\-.:]*(?:level|line)?$")


def level_of(name: str) -> str | None:
    """The level code a layer, group or text names, if any ("LEVEL_WAIST", "Waist line", "hip")."""
    text = " ".join(name.strip().lower().replace("_", " ").split())
    if text in _LEVEL_WORDS:
        return _LEVEL_WORDS[text]
    match = _LEVEL_NAME.match(text)
    if match:
        return _LEVEL_WORDS.get(match.group("word").strip())
    return None


def _is_grain(names) -> bool:
    return any(n in _GRAIN_NAMES for n in names)


def _is_ignored(names) -> bool:
    return any(n in _IGNORED_NAMES for n in names)


def _level_named(names) -> str | None:
    for n in names:
        level = level_of(n)
        if level:
            return level
    return None


def _dedupe(points: np.ndarray) -> np.ndarray:
    if len(points) < 2:
        return points
    keep = np.concatenate([[True], np.hypot(*np.diff(points, axis=0).T) > 1e-6])
    return points[keep]


# --- DXF --------------------------------------------------------------------------------


def read_dxf_drawing(data: bytes) -> Drawing:
    import ezdxf
    from ezdxf import path as dxf_path
    from ezdxf import recover

    _check_size(data)
    try:
        # The plain reader is several times quicker; the recovering one takes binary DXF and damaged files.
        doc = ezdxf.read(io.StringIO(data.decode("utf-8"))) if not data.startswith(b"AutoCAD Binary DXF") else None
    except Exception:
        doc = None
    if doc is None:
        try:
            doc, _auditor = recover.read(io.BytesIO(data))
        except Exception as exc:  # ezdxf raises its own structure errors and plain ones for garbage
            raise BlockImportError(f"This is not a DXF file that can be read ({exc.__class__.__name__}).") from exc
    code = int(doc.header.get("$INSUNITS", 0) or 0)
    if code not in DXF_UNITS_MM:
        unit = DXF_UNIT_NAMES.get(code, f"unit code {code}")
        raise UnknownUnitError(
            f"The DXF file's drawing unit ($INSUNITS) is {unit}. Save the drawing with millimetres, "
            "centimetres or inches as its unit, so its lengths can be read at true size."
        )
    unit, scale = DXF_UNITS_MM[code]
    drawing = Drawing(unit=unit, y_up=True)

    def to_mm(x, y):
        return (float(x) * scale, -float(y) * scale)

    def visit(entity, parent_layer: str | None, depth: int = 0):
        kind = entity.dxftype()
        layer = entity.dxf.get("layer", "0")
        if layer == "0" and parent_layer is not None:
            layer = parent_layer
        if kind == "INSERT":
            if depth > 8:
                raise BlockImportError("The DXF file nests blocks more than eight deep.")
            for sub in entity.virtual_entities():
                visit(sub, layer, depth + 1)
            return
        if kind in ("TEXT", "MTEXT"):
            text = entity.plain_text() if kind == "MTEXT" else entity.dxf.text
            insert = entity.dxf.insert
            drawing.texts.append((" ".join(str(text).split()), *to_mm(insert.x, insert.y)))
            return
        if kind not in ("LINE", "LWPOLYLINE", "POLYLINE", "ARC", "CIRCLE", "ELLIPSE", "SPLINE"):
            return
        try:
            p = dxf_path.make_path(entity)
        except Exception as exc:
            raise BlockImportError(f"A {kind} on layer {layer} cannot be read ({exc}).") from exc
        points = np.array([to_mm(v.x, v.y) for v in p.flattening(FLATTEN_TOLERANCE_MM / scale, segments=4)])
        if len(points) == 0:
            return
        closed = bool(
            getattr(entity, "closed", False)
            or getattr(entity, "is_closed", False)
            or kind in ("CIRCLE",)
            or (kind == "ELLIPSE" and _full_ellipse(entity))
        )
        if kind == "SPLINE":
            closed = closed or bool(entity.closed)
        drawing.paths.append(_Path(_dedupe(points), closed, (layer.lower(),), f"a {kind} on layer {layer}"))

    for entity in doc.modelspace():
        visit(entity, None)
    return drawing


def _full_ellipse(entity) -> bool:
    span = (entity.dxf.end_param - entity.dxf.start_param) % (2 * math.pi)
    return abs(span) < 1e-9 or abs(span - 2 * math.pi) < 1e-9


# --- SVG --------------------------------------------------------------------------------

_SVG_NS = "{http://www.w3.org/2000/svg}"
_INKSCAPE_LABEL = "{http://www.inkscape.org/namespaces/inkscape}label"
_NAMES_ATTR = "data-block-import-names"
_TEXT_ATTR = "data-block-import-text"
_TEXT_ID_ATTR = "data-block-import-text-id"
_LENGTH = re.compile(r"^\s*(?P<value>[+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(?P<unit>[a-zA-Z%]*)\s*$")
_SHAPES = {"path", "line", "polyline", "polygon", "rect", "circle", "ellipse"}


def _svg_length(text: str | None, what: str) -> tuple[float, str]:
    if text is None:
        raise UnknownUnitError(
            f"The SVG file has no {what}, so its true size is unknown. Give the drawing a width and height "
            'in mm, cm or in (for example width="400mm") and a viewBox.'
        )
    match = _LENGTH.match(text)
    if not match:
        raise UnknownUnitError(f"The SVG file's {what} {text!r} is not a length.")
    unit = match.group("unit").lower()
    if unit not in SVG_UNITS_MM:
        shown = f"in {unit}" if unit else "without a unit"
        raise UnknownUnitError(
            f"The SVG file's {what} is {text.strip()!r}, {shown}, so its true size is unknown. "
            "Save it with the width and height in mm, cm or in."
        )
    return float(match.group("value")), unit


def read_svg_drawing(data: bytes) -> Drawing:
    import svgelements as se

    _check_size(data)
    head = data[:4096].lower()
    if b"<!entity" in data.lower() or b"<!doctype" in head and b"[" in head.split(b"<!doctype", 1)[1][:200]:
        raise BlockImportError("The SVG file declares its own entities; save it as plain SVG.")
    try:
        root = ET.fromstring(data)
    except ET.ParseError as exc:
        raise BlockImportError(f"This is not an SVG file that can be read: {exc}.") from exc
    if root.tag not in (f"{_SVG_NS}svg", "svg"):
        raise BlockImportError("This file is XML but not SVG (its first element is not <svg>).")
    width, wunit = _svg_length(root.get("width"), "width")
    height, _ = _svg_length(root.get("height"), "height")
    if width <= 0 or height <= 0:
        raise UnknownUnitError("The SVG file's width and height must be more than nothing.")
    width_mm = width * SVG_UNITS_MM[wunit]

    # Mark each shape and text with the names of its own and its groups' ids, classes and labels.
    def walk(element, names):
        own = [
            element.get("id"),
            element.get(_INKSCAPE_LABEL),
            element.get("data-layer"),
            *(element.get("class") or "").split(),
        ]
        here = names + tuple(n.strip().lower() for n in own if n)
        tag = element.tag.replace(_SVG_NS, "")
        if tag in _SHAPES or tag == "text":
            element.set(_NAMES_ATTR, "|".join(here))
        if tag == "text":
            # The whole text, its <tspan> parts together, read once (svgelements gives each part apart).
            element.set(_TEXT_ATTR, " ".join("".join(element.itertext()).split()))
            element.set(_TEXT_ID_ATTR, str(len(text_ids)))
            text_ids.append(None)
        for child in element:
            walk(child, here)

    text_ids: list = []
    walk(root, ())
    marked = ET.tostring(root)
    try:
        svg = se.SVG.parse(io.BytesIO(marked), reify=True, ppi=se.DEFAULT_PPI)
    except Exception as exc:
        raise BlockImportError(f"The SVG file cannot be read ({exc.__class__.__name__}: {exc}).") from exc
    # svgelements gives pixels at its ppi; its width is the document width in those pixels.
    width_px = se.Length(root.get("width")).value(ppi=se.DEFAULT_PPI)
    scale = width_mm / float(width_px)
    drawing = Drawing(unit={"mm": "millimetres", "cm": "centimetres", "in": "inches"}[wunit])

    texts_seen: set[str] = set()
    for element in svg.elements():
        values = getattr(element, "values", {}) or {}
        names = tuple(n for n in str(values.get(_NAMES_ATTR, "")).split("|") if n)
        if isinstance(element, se.Text):
            text_id = values.get(_TEXT_ID_ATTR)
            if text_id is None or text_id in texts_seen:
                continue
            texts_seen.add(text_id)
            x, y = element.x or 0.0, element.y or 0.0
            at = element.transform.point_in_matrix_space((x, y)) if element.transform else (x, y)
            drawing.texts.append((str(values.get(_TEXT_ATTR, "")), float(at[0]) * scale, float(at[1]) * scale))
            continue
        if not isinstance(element, se.Shape) or isinstance(element, se.Text):
            continue
        if values.get("visibility") == "hidden" or values.get("display") == "none":
            continue
        path = se.Path(element)
        path.reify()
        kind = type(element).__name__.lower().replace("simpleline", "line")
        label = names[-1] if names else ""
        where = f"a {kind}" + (f" ({label})" if label else "")
        for sub in path.as_subpaths():
            points, closed = _sample_svg(list(sub), se, scale)
            if len(points) >= 2:
                drawing.paths.append(_Path(_dedupe(np.array(points) * scale), closed, names, where))
    return drawing


def _sample_svg(segments, se, scale: float) -> tuple[list[tuple[float, float]], bool]:
    points, closed = [], False
    for seg in segments:
        if isinstance(seg, se.Move):
            points.append((float(seg.end.x), float(seg.end.y)))
        elif isinstance(seg, se.Close):
            closed = True
        elif isinstance(seg, se.Line):
            points.append((float(seg.end.x), float(seg.end.y)))
        else:
            rough = np.asarray(seg.npoint(np.linspace(0, 1, 65)), dtype=float)
            length = float(np.hypot(*np.diff(rough, axis=0).T).sum()) * scale
            n = int(min(max(math.ceil(length / 0.5), 8), 4000))
            fine = np.asarray(seg.npoint(np.linspace(0, 1, n + 1)[1:]), dtype=float)
            points.extend(map(tuple, fine.tolist()))
    return points, closed


def _check_size(data: bytes) -> None:
    if not data:
        raise BlockImportError("The file is empty.")
    if len(data) > MAX_FILE_BYTES:
        raise BlockImportError(f"The file is larger than {MAX_FILE_BYTES // (1024 * 1024)} MB.")


# --- understanding the drawing -------------------------------------------------------------


@dataclass(frozen=True)
class _LevelLine:
    level: str
    y: float
    x0: float
    x1: float


def _straight_horizontal(points: np.ndarray) -> bool:
    if len(points) < 2:
        return False
    if abs(points[-1][0] - points[0][0]) < 1.0:
        return False
    return float(np.ptp(points[:, 1])) <= LEVEL_SLOPE_MM


def _join(paths: list[_Path]) -> tuple[list[_Path], list[_Path]]:
    """Chain open paths end to end; return (closed rings, paths left open)."""
    rings = []
    open_paths = []
    for p in paths:
        if p.closed or (len(p.points) > 2 and np.hypot(*(p.points[0] - p.points[-1])) <= JOIN_TOLERANCE_MM):
            pts = p.points
            if np.hypot(*(pts[0] - pts[-1])) <= JOIN_TOLERANCE_MM:
                pts = pts[:-1]
            rings.append(_Path(pts, True, p.names, p.where))
        else:
            open_paths.append(p)
    pool = list(open_paths)
    left_open = []
    while pool:
        chain = pool.pop(0)
        pts = chain.points
        grew = True
        while grew:
            grew = False
            if np.hypot(*(pts[0] - pts[-1])) <= JOIN_TOLERANCE_MM and len(pts) > 2:
                break
            for i, other in enumerate(pool):
                o = other.points
                if np.hypot(*(pts[-1] - o[0])) <= JOIN_TOLERANCE_MM:
                    pts = np.concatenate([pts, o[1:]])
                elif np.hypot(*(pts[-1] - o[-1])) <= JOIN_TOLERANCE_MM:
                    pts = np.concatenate([pts, o[::-1][1:]])
                elif np.hypot(*(pts[0] - o[-1])) <= JOIN_TOLERANCE_MM:
                    pts = np.concatenate([o[:-1], pts])
                elif np.hypot(*(pts[0] - o[0])) <= JOIN_TOLERANCE_MM:
                    pts = np.concatenate([o[::-1][:-1], pts])
                else:
                    continue
                pool.pop(i)
                grew = True
                break
        if len(pts) > 2 and np.hypot(*(pts[0] - pts[-1])) <= JOIN_TOLERANCE_MM:
            rings.append(_Path(_dedupe(pts[:-1]), True, chain.names, chain.where))
        else:
            left_open.append(_Path(pts, False, chain.names, chain.where))
    return rings, left_open


def _ring_polygon(ring: _Path) -> Polygon:
    poly = Polygon(ring.points)
    if not poly.is_valid or poly.area <= 0:
        raise BlockImportError(
            f"The outline drawn as {ring.where} crosses itself; each piece must be one "
            "closed line that does not cross itself."
        )
    return poly


@dataclass
class _Piece:
    ring: np.ndarray
    polygon: Polygon
    where: str
    name: str = ""
    cut_count: int = 2
    on_fold: bool = False
    grain: tuple[tuple[float, float], tuple[float, float]] | None = None
    label_area: Polygon | None = None

    def text_area(self) -> Polygon:
        """Where the piece's texts lie: the cutting line round it once found, else its stitch line."""
        return self.polygon if self.label_area is None else self.label_area


_CUT = re.compile(r"^cut\s+(?P<n>\d+)(?P<fold>\s+on\s+(?:the\s+)?fold)?$", re.IGNORECASE)
_FOLD = re.compile(r"^(?:place\s+)?on\s+(?:the\s+)?fold$", re.IGNORECASE)
_SIZE = re.compile(r"^size\s+\S+$", re.IGNORECASE)


def block_from_drawing(drawing: Drawing, options: ImportOptions = ImportOptions()) -> Block:
    """The pieces, levels and grainlines of a drawing as a Block (see the module's description)."""
    level_lines: list[_LevelLine] = []
    grains: list[np.ndarray] = []
    outline_paths: list[_Path] = []
    for p in drawing.paths:
        if _is_ignored(p.names):
            continue
        if _is_grain(p.names):
            grains.append(p.points)
            continue
        level = _level_named(p.names)
        if level is not None:
            if not _straight_horizontal(p.points):
                raise LevelsError(
                    f"The {LEVEL_LABELS[level].lower()} line ({p.where}) is not a straight horizontal line."
                )
            xs = p.points[:, 0]
            level_lines.append(_LevelLine(level, float(np.mean(p.points[:, 1])), float(xs.min()), float(xs.max())))
            continue
        outline_paths.append(p)

    rings, left_open = _join(outline_paths)
    # Open horizontal lines with a level's name written on or just above them are level lines.
    level_texts = [(text_level, x, y) for t, x, y in drawing.texts if (text_level := level_of(t))]
    still_open = []
    for p in left_open:
        named = None
        if _straight_horizontal(p.points):
            y = float(np.mean(p.points[:, 1]))
            x0, x1 = float(p.points[:, 0].min()), float(p.points[:, 0].max())
            near = [
                (abs(y - ty), lv)
                for lv, tx, ty in level_texts
                if -1.0 <= y - ty <= LEVEL_TEXT_DISTANCE_MM and x0 - LEVEL_TEXT_DISTANCE_MM <= tx <= x1
            ]
            if near:
                named = min(near)[1]
                level_lines.append(_LevelLine(named, y, x0, x1))
        if named is None:
            still_open.append(p)
    if still_open:
        p = still_open[0]
        (ax, ay), (bx, by) = p.points[0], p.points[-1]
        raise OpenOutlineError(
            f"An outline is open: {p.where} ends at {drawing.where(ax, ay)} and at {drawing.where(bx, by)}, "
            f"{math.hypot(bx - ax, by - ay):.1f} mm apart, and nothing joins the ends. Close it in the drawing "
            "program (each piece must be one closed stitch line)."
            + (
                f" ({len(still_open) - 1} more open line{'s' if len(still_open) > 2 else ''}.)"
                if len(still_open) > 1
                else ""
            )
        )
    if not rings:
        raise BlockImportError("The drawing has no closed outline: draw each piece's stitch line as one closed line.")

    polygons = [_ring_polygon(r) for r in rings]
    # An outline holding another is a cutting line round a stitch line: keep the inner one.  Along a
    # bound edge the cutting line is the stitch line itself, so "holding" allows the two to touch
    # (within a hundredth of a millimetre, what a drawing file's numbers keep).
    holders = [poly.buffer(0.01) for poly in polygons]
    inner = [
        i
        for i, poly in enumerate(polygons)
        if not any(
            j != i and holders[i].contains(polygons[j]) and poly.area > polygons[j].area for j in range(len(polygons))
        )
    ]
    pieces = [_Piece(rings[i].points, polygons[i], rings[i].where) for i in inner]
    for pc in pieces:
        # Texts between a stitch line and the cutting line round it belong to the piece too.
        around = [
            poly
            for poly, holder in zip(polygons, holders)
            if poly is not pc.polygon and holder.contains(pc.polygon) and poly.area > pc.polygon.area
        ]
        pc.label_area = min(around, key=lambda poly: poly.area) if around else pc.polygon
    for a in range(len(pieces)):
        for b in range(a + 1, len(pieces)):
            if pieces[a].polygon.intersection(pieces[b].polygon).area > 1.0:
                raise BlockImportError(
                    f"Two outlines overlap ({pieces[a].where} and {pieces[b].where}); draw the pieces side by side."
                )
    if len(pieces) > MAX_PIECES:
        raise BlockImportError(f"The drawing has {len(pieces)} pieces; a block has at most {MAX_PIECES}.")
    pieces.sort(key=lambda pc: (pc.polygon.bounds[0] + pc.polygon.bounds[2]) / 2)
    if options.front_panels is not None and not 0 <= options.front_panels <= len(pieces):
        raise BlockImportError(
            f"{options.front_panels} pieces were said to lie in front of the side seam, "
            f"but the drawing has {len(pieces)}."
        )

    # Pattern coordinates: the top of the highest piece at y 0, the leftmost point at x 0.
    x_origin = min(pc.polygon.bounds[0] for pc in pieces)
    y_origin = min(pc.polygon.bounds[1] for pc in pieces)
    shift = np.array([x_origin, y_origin])

    for pc in pieces:
        _read_labels(pc, drawing.texts)
        inside = [g for g in grains if pc.text_area().contains(ShapelyPoint(*(0.5 * (g[0] + g[-1]))))]
        if inside:
            # The longest line there (a drawn grainline may have arrowheads as short strokes).
            g = max(inside, key=lambda g: float(np.hypot(*(g[-1] - g[0]))))
            a, b = (g[0], g[-1]) if g[0][1] <= g[-1][1] else (g[-1], g[0])
            (ax, ay), (bx, by) = a - shift, b - shift
            pc.grain = ((float(ax), float(ay)), (float(bx), float(by)))
        pc.ring = pc.ring - shift
        pc.polygon = Polygon(pc.ring)
    level_lines = [_LevelLine(ll.level, ll.y - y_origin, ll.x0 - x_origin, ll.x1 - x_origin) for ll in level_lines]
    levels = _levels(level_lines, pieces)
    _name_pieces(pieces)

    panels = tuple(_panel(pc, levels, i, len(pieces), options) for i, pc in enumerate(pieces))
    block = _assemble(panels, levels, options)
    errors = block_errors(block)
    if errors:
        raise BlockImportError("The drawing does not make a usable block: " + " ".join(errors))
    return block


def _read_labels(piece: _Piece, texts) -> None:
    for text, x, y in texts:
        if not text or not piece.text_area().contains(ShapelyPoint(x, y)) or level_of(text):
            continue
        cut = _CUT.match(text)
        if cut:
            piece.cut_count = max(1, int(cut.group("n")))
            piece.on_fold = piece.on_fold or bool(cut.group("fold"))
        elif _FOLD.match(text):
            piece.on_fold = True
        elif _SIZE.match(text) or text.lower() in _GRAIN_NAMES:
            continue
        elif not piece.name:
            piece.name = text[:80]


def _name_pieces(pieces: list[_Piece]) -> None:
    seen: dict[str, int] = {}
    for i, pc in enumerate(pieces, start=1):
        name = pc.name or f"Panel {i}"
        if name in seen:
            seen[name] += 1
            name = f"{name} {seen[name]}"
        else:
            seen[name] = 1
        pc.name = name


def _levels(lines: list[_LevelLine], pieces: list[_Piece]) -> tuple[Level, ...]:
    if not lines:
        raise LevelsError(
            "The drawing has no level lines. Draw a horizontal line across the pieces for each level (bust, "
            "underbust, waist, abdomen, hip) on a layer named after it, or write the level's name on the line."
        )
    by_level: dict[str, list[_LevelLine]] = {}
    for ll in lines:
        by_level.setdefault(ll.level, []).append(ll)
    levels = []
    for code in LEVEL_CODES:
        found = by_level.get(code)
        if not found:
            continue
        ys = [ll.y for ll in found]
        if max(ys) - min(ys) > LEVEL_AGREEMENT_MM:
            raise LevelsError(
                f"The {LEVEL_LABELS[code].lower()} lines are drawn at different heights ({min(ys):.1f} and "
                f"{max(ys):.1f} mm from the top); a level is at one height across the whole block."
            )
        y = float(np.mean(ys))
        for pc in pieces:
            minx, miny, maxx, maxy = pc.polygon.bounds
            if not any(ll.x0 <= maxx and ll.x1 >= minx for ll in found):
                raise LevelsError(
                    f"No {LEVEL_LABELS[code].lower()} line crosses the piece drawn as {pc.where}"
                    f"{' (' + pc.name + ')' if pc.name else ''}; every piece needs every level."
                )
            if not (miny < y < maxy):
                raise LevelsError(
                    f"The piece {pc.name or pc.where} does not reach the {LEVEL_LABELS[code].lower()} line "
                    f"({y:.1f} mm from the top; the piece runs from {miny:.1f} to {maxy:.1f} mm)."
                )
        levels.append(Level(code, y))
    levels.sort(key=lambda lv: lv.y)
    if len(levels) < 2:
        raise LevelsError(
            f"The drawing has only the {levels[0].name} line; draw at least two level lines (for example bust "
            "and waist), so the sides of each piece can be found between them."
        )
    for a, b in zip(levels, levels[1:]):
        if b.y - a.y < 1.0:
            raise LevelsError(f"The {a.name} and {b.name} lines are at the same height.")
    order = [lv.name for lv in levels]
    if order != [c for c in LEVEL_CODES if c in order]:
        raise LevelsError("The level lines are in the wrong order from top to bottom (" + ", ".join(order) + ").")
    return tuple(levels)


# --- one piece -----------------------------------------------------------------------------


def _with_crossing(ring: np.ndarray, y: float) -> tuple[np.ndarray, list[int]]:
    """The ring with its crossings of height y added as vertices, and their indices."""
    out: list[np.ndarray] = []
    crossings: list[int] = []
    n = len(ring)
    for i in range(n):
        a, b = ring[i], ring[(i + 1) % n]
        if abs(a[1] - y) < 1e-9:
            crossings.append(len(out))
            out.append(a)
            continue
        out.append(a)
        if (a[1] - y) * (b[1] - y) < 0:
            t = (y - a[1]) / (b[1] - a[1])
            crossings.append(len(out))
            point = a + t * (b - a)
            point[1] = y
            out.append(point)
    return np.array(out), crossings


def _turn(a, b, c) -> float:
    u, v = b - a, c - b
    return abs(math.degrees(math.atan2(u[0] * v[1] - u[1] * v[0], u[0] * v[0] + u[1] * v[1])))


def _side(ring: np.ndarray, start: int, step: int, stop: int) -> list[int]:
    """Indices from ``start`` walking by ``step`` until ``stop`` (exclusive of nothing: both ends kept)."""
    n = len(ring)
    out = [start]
    i = start
    while i != stop:
        i = (i + step) % n
        out.append(i)
        if len(out) > n + 1:
            raise BlockImportError("A piece's outline could not be followed round.")
    return out


def _extend(ring: np.ndarray, path: list[int], step: int, upwards: bool) -> list[int]:
    """Carry a side on past its end level while the line keeps running the same way without a corner."""
    n = len(ring)
    out = list(path)
    while len(out) < n:
        nxt = (out[-1] + step) % n
        a, b, c = ring[out[-2]], ring[out[-1]], ring[nxt]
        going = c[1] < b[1] if upwards else c[1] > b[1]
        if not going or _turn(a, b, c) > CORNER_DEGREES:
            break
        out.append(nxt)
    return out


def _panel(piece: _Piece, levels: tuple[Level, ...], index: int, count: int, options: ImportOptions) -> Panel:
    ring = piece.ring
    top_y, bottom_y = levels[0].y, levels[-1].y
    for y in {top_y, bottom_y}:
        ring, crossings = _with_crossing(ring, y)
        if len(crossings) != 2:
            level = levels[0] if y == top_y else levels[-1]
            raise BlockImportError(
                f"The outline of {piece.name} crosses the {LEVEL_LABELS[level.name].lower()} line "
                f"{len(crossings)} times; a piece must cross each level line exactly twice, once on each side."
            )
    ring = _dedupe(ring)
    top_cross = [int(i) for i in np.flatnonzero(ring[:, 1] == top_y)]
    bottom_cross = [int(i) for i in np.flatnonzero(ring[:, 1] == bottom_y)]
    if len(top_cross) != 2 or len(bottom_cross) != 2:
        raise BlockImportError(
            f"The outline of {piece.name} runs along a level line; move the level line or the outline a little."
        )
    lt, rt = sorted(top_cross, key=lambda i: ring[i][0])
    lb, rb = sorted(bottom_cross, key=lambda i: ring[i][0])

    def between(a, b, step, avoid):
        path = _side(ring, a, step, b)
        return path if not (set(path[1:-1]) & set(avoid)) else None

    left = between(lt, lb, 1, (rt, rb)) or between(lt, lb, -1, (rt, rb))
    if left is None:
        raise BlockImportError(f"The sides of {piece.name} could not be told apart.")
    step = 1 if left == _side(ring, lt, 1, lb) else -1
    right = _side(ring, rt, -step, rb)
    if set(right[1:-1]) & {lt, lb}:
        raise BlockImportError(f"The sides of {piece.name} could not be told apart.")
    for name, side in (("left", left), ("right", right)):
        ys = ring[side][:, 1]
        if np.any(np.diff(ys) <= 0):
            raise BlockImportError(
                f"The {name} side of {piece.name} turns back up between the {levels[0].name} and "
                f"{levels[-1].name} lines; each side must run downwards between the top and bottom levels."
            )
    left_up = _extend(ring, left[::-1], -step, True)[::-1]
    left = _extend(ring, left_up, step, False)
    right_up = _extend(ring, right[::-1], step, True)[::-1]
    right = _extend(ring, right_up, -step, False)
    tl, bl, tr, br = left[0], left[-1], right[0], right[-1]
    top = _side(ring, tl, -step, tr)
    bottom = _side(ring, bl, step, br)
    if set(top[1:-1]) & (set(left) | set(right)) or set(bottom[1:-1]) & (set(left) | set(right)):
        raise BlockImportError(f"The top and bottom edges of {piece.name} could not be found.")

    def line(indices):
        # Fewer points where the line is nearly straight, none of them further than SIMPLIFY_MM from the drawing.
        thin = LineString(ring[indices]).simplify(SIMPLIFY_MM, preserve_topology=False) if len(indices) > 2 else None
        points = np.asarray(thin.coords) if thin is not None and len(thin.coords) >= 2 else ring[indices]
        return tuple((float(x), float(y)) for x, y in points)

    curves = PanelCurves(left=line(left), right=line(right), top=line(top), bottom=line(bottom), grainline=piece.grain)
    left_line, right_line = ring[left], ring[right]
    at_left = {lv.name: float(np.interp(lv.y, left_line[:, 1], left_line[:, 0])) for lv in levels}
    at_right = {lv.name: float(np.interp(lv.y, right_line[:, 1], right_line[:, 0])) for lv in levels}
    front = options.front_panels if options.front_panels is not None else math.ceil(count / 2)
    return Panel(
        name=piece.name,
        side=FRONT if index < front else BACK,
        left=at_left,
        right=at_right,
        top_left=Point(*curves.left[0]),
        top_right=Point(*curves.right[0]),
        bottom_left=Point(*curves.left[-1]),
        bottom_right=Point(*curves.right[-1]),
        cut_count=piece.cut_count,
        on_fold=piece.on_fold,
        curves=curves,
    )


def _assemble(panels: tuple[Panel, ...], levels: tuple[Level, ...], options: ImportOptions) -> Block:
    names = frozenset(lv.name for lv in levels)
    seams = []
    for a, b in zip(panels, panels[1:]):
        side = a.side == FRONT and b.side == BACK
        seams.append(
            Seam(
                name="Side seam" if side else f"{a.name} to {b.name} seam",
                kind="side" if side else "other",
                front_panel=a.name,
                back_panel=b.name,
                alterable_at=names,
                cap_mm=options.cap_mm,
            )
        )
    centre_front = options.centre_front or (CF_FOLD if panels[0].on_fold else CF_BUSK)
    return Block(
        name=options.name,
        size=options.size,
        garment=options.garment,
        levels=levels,
        panels=panels,
        seams=tuple(seams),
        centre_front=centre_front,
        centre_back=options.centre_back,
        seam_allowance_mm=options.seam_allowance_mm,
        size_order=options.size_order,
    )


# --- one call ------------------------------------------------------------------------------

FORMATS = ("dxf", "svg")


def sniff_format(data: bytes, filename: str = "") -> str:
    """'dxf' or 'svg', from the name's ending or, failing that, the first bytes."""
    name = filename.lower()
    if name.endswith(".dxf"):
        return "dxf"
    if name.endswith(".svg"):
        return "svg"
    head = data[:512].lstrip()
    if head.startswith(b"<"):
        return "svg"
    if head[:1].isdigit() or head.startswith(b"AutoCAD Binary DXF"):
        return "dxf"
    raise BlockImportError("The file is neither DXF nor SVG (name it .dxf or .svg).")


def import_block(data: bytes, filename: str = "", options: ImportOptions = ImportOptions()) -> Block:
    """Read a DXF or SVG file into a Block; BlockImportError says what is wrong."""
    kind = sniff_format(data, filename)
    drawing = read_dxf_drawing(data) if kind == "dxf" else read_svg_drawing(data)
    return block_from_drawing(drawing, options)
