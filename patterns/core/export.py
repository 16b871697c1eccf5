"""Panel outlines out of the app: SVG at true size (1:1, millimetres) and DXF.

Both files keep each panel in its own coordinates (those of the outlines)
and place it on the sheet by a translation, so a panel read back is the
panel written.  Output is deterministic for the same outlines.
"""

from __future__ import annotations

import io
import math
import re
from dataclasses import dataclass
from xml.etree import ElementTree as ET

import ezdxf
import numpy as np
from ezdxf import units as dxf_units
from ezdxf.entities import LWPolyline

from patterns.core.outline import PanelOutline, Pt

SHEET_MARGIN_MM = 10.0
PANEL_GAP_MM = 10.0
# A notch is cut this far into the seam allowance, never past half of it
# (about 1/4 in; common practice).
NOTCH_DEPTH_MM = 6.0
LABEL_HEIGHT_MM = 5.0
TEST_SQUARE_MM = {"cm": 100.0, "in": 101.6}  # 10 cm, or 4 in (1 in = 25.4 mm exactly, 1959 agreement)
TEST_SQUARE_TEXT = {"cm": "10 cm test square", "in": "4 in test square"}

LAYER_CUT, LAYER_STITCH, LAYER_NOTCH, LAYER_GRAIN, LAYER_LABEL = "CUT", "STITCH", "NOTCH", "GRAIN", "LABEL"
# AutoCAD colour index: 7 black/white, 5 blue, 1 red, 3 green, 8 grey.
_LAYERS = (
    (LAYER_CUT, 7, "CONTINUOUS"),
    (LAYER_STITCH, 5, "DASHED"),
    (LAYER_NOTCH, 1, "CONTINUOUS"),
    (LAYER_GRAIN, 3, "CONTINUOUS"),
    (LAYER_LABEL, 8, "CONTINUOUS"),
)
INSUNITS_MILLIMETRES = 4
# Level lines (when asked for) sit on a layer per level, LEVEL_BUST, LEVEL_WAIST ..., and reach this
# far into the seam allowance on each side, so a drawing read back finds its levels (patterns.core.importing).
LEVEL_LAYER_PREFIX = "LEVEL_"
LEVEL_LINE_COLOUR = 8
LEVEL_OVERHANG_MM = 5.0


def level_layer(level: str) -> str:
    return f"{LEVEL_LAYER_PREFIX}{level.upper()}"


def level_segments(outline: PanelOutline) -> tuple[tuple[str, Pt, Pt], ...]:
    """Each level the panel crosses as a horizontal line from stitch line to stitch line, a little beyond."""
    left, right = np.asarray(outline.left_line), np.asarray(outline.right_line)
    reach = min(LEVEL_OVERHANG_MM, 0.5 * outline.seam_allowance_mm) if outline.seam_allowance_mm > 0 else 0.0
    segments = []
    for level, y in outline.level_y.items():
        x0 = float(np.interp(y, left[:, 1], left[:, 0]))
        x1 = float(np.interp(y, right[:, 1], right[:, 0]))
        segments.append((level, (x0 - reach, y), (x1 + reach, y)))
    return tuple(segments)


@dataclass(frozen=True)
class SheetLayout:
    """Where each panel sits on the sheet: a translation per panel, and the sheet's size in mm."""

    offsets: tuple[Pt, ...]
    width_mm: float
    height_mm: float
    test_square_at: Pt | None
    test_square_mm: float


def sheet_layout(
    outlines: tuple[PanelOutline, ...],
    *,
    gap_mm: float = PANEL_GAP_MM,
    margin_mm: float = SHEET_MARGIN_MM,
    test_square: str | None = None,
) -> SheetLayout:
    """Panels side by side in order, cutting lines ``gap_mm`` apart, tops level."""
    top = min(y for o in outlines for _, y in o.cutting)
    bottom = max(y for o in outlines for _, y in o.cutting)
    cursor = margin_mm
    offsets = []
    for o in outlines:
        xs = [x for x, _ in o.cutting]
        offsets.append((cursor - min(xs), margin_mm - top))
        cursor += max(xs) - min(xs) + gap_mm
    height = bottom - top + 2 * margin_mm
    side = 0.0
    square_at = None
    if test_square is not None:
        side = TEST_SQUARE_MM[test_square]
        square_at = (cursor, margin_mm)
        cursor += side + gap_mm
        label_room = (len(_test_square_lines(test_square)) * 1.4 + 0.5) * LABEL_HEIGHT_MM
        height = max(height, side + 2 * margin_mm + label_room)
    width = cursor - gap_mm + margin_mm
    return SheetLayout(tuple(offsets), width, height, square_at, side)


def _test_square_lines(unit: str) -> tuple[str, ...]:
    return (TEST_SQUARE_TEXT[unit], "print at 100 %,", "check with a ruler")


def notch_segments(outline: PanelOutline) -> tuple[tuple[Pt, Pt], ...]:
    """Each notch as a short cut from the cutting line into the allowance (a drawn tick when there is none)."""
    sa = outline.seam_allowance_mm
    segments = []
    for n in outline.notches:
        (px, py), (dx, dy) = n.point, n.direction
        if sa > 0:
            depth = min(NOTCH_DEPTH_MM, 0.5 * sa)
            a, b = sa, sa - depth
        else:
            a, b = 0.0, 3.0
        segments.append(((px + a * dx, py + a * dy), (px + b * dx, py + b * dy)))
    return tuple(segments)


def _label_lines(outline: PanelOutline) -> tuple[tuple[str, Pt, float], ...]:
    """Label text, its anchor and its rotation (degrees, counter-clockwise as read on paper)."""
    x, y = outline.label_at
    step = 1.4 * LABEL_HEIGHT_MM
    lines = [(text, (x + 2 + LABEL_HEIGHT_MM + i * step, y), 90.0) for i, text in enumerate(outline.labels)]
    if outline.on_fold:
        fx = min(px for px, _ in outline.left_line)
        lines.append(("place on fold", (fx + 2 + LABEL_HEIGHT_MM, y), 90.0))
    return tuple(lines)


# --- SVG -----------------------------------------------------------------------------

_NUM_TRIM = re.compile(r"\.?0+$")


def _n(value: float) -> str:
    """A number for SVG: three decimals (a micrometre), no trailing zeros."""
    text = f"{value:.3f}"
    text = _NUM_TRIM.sub("", text) if "." in text else text
    return "0" if text in ("-0", "") else text


def _path(points, closed: bool) -> str:
    head, *rest = points
    d = f"M{_n(head[0])} {_n(head[1])}" + "".join(f"L{_n(x)} {_n(y)}" for x, y in rest)
    return d + ("Z" if closed else "")


def _grain_path(grain: tuple[Pt, Pt]) -> str:
    """The grainline with an arrowhead at each end."""
    (x0, y0), (x1, y1) = grain
    length = math.hypot(x1 - x0, y1 - y0) or 1.0
    ux, uy = (x1 - x0) / length, (y1 - y0) / length
    head, spread = 6.0, math.radians(25)

    def barb(px, py, dx, dy, sign):
        c, s = math.cos(sign * spread), math.sin(sign * spread)
        return px + head * (c * dx - s * dy), py + head * (s * dx + c * dy)

    parts = [_path([(x0, y0), (x1, y1)], False)]
    for px, py, dx, dy in ((x0, y0, ux, uy), (x1, y1, -ux, -uy)):
        parts.append(_path([barb(px, py, dx, dy, 1), (px, py), barb(px, py, dx, dy, -1)], False))
    return "".join(parts)


def svg_text(
    outlines: tuple[PanelOutline, ...],
    *,
    title: str = "",
    gap_mm: float = PANEL_GAP_MM,
    margin_mm: float = SHEET_MARGIN_MM,
    test_square: str | None = "cm",
    level_lines: bool = False,
) -> str:
    """The panels at true size: width and height in mm, one user unit = 1 mm.

    With ``level_lines`` each panel also carries its levels as thin grey lines of class
    ``level level-<name>``, which the importer reads back as the block's levels."""
    layout = sheet_layout(outlines, gap_mm=gap_mm, margin_mm=margin_mm, test_square=test_square)
    root = ET.Element(
        "svg",
        {
            "xmlns": "http://www.w3.org/2000/svg",
            "width": f"{_n(layout.width_mm)}mm",
            "height": f"{_n(layout.height_mm)}mm",
            "viewBox": f"0 0 {_n(layout.width_mm)} {_n(layout.height_mm)}",
        },
    )
    ET.SubElement(root, "title").text = title or "Pattern pieces at true size"
    line = {"fill": "none", "stroke-linejoin": "round", "stroke-linecap": "round"}
    for i, (o, (dx, dy)) in enumerate(zip(outlines, layout.offsets), start=1):
        g = ET.SubElement(
            root, "g", {"id": f"panel-{i}", "data-panel": o.name, "transform": f"translate({_n(dx)} {_n(dy)})"}
        )
        ET.SubElement(
            g, "path", {"class": "cut", "d": _path(o.cutting, True), "stroke": "#000000", "stroke-width": "0.4", **line}
        )
        ET.SubElement(
            g,
            "path",
            {
                "class": "stitch",
                "d": _path(o.stitch, True),
                "stroke": "#0072B2",
                "stroke-width": "0.25",
                "stroke-dasharray": "3 1.5",
                **line,
            },
        )
        notches = "".join(_path(seg, False) for seg in notch_segments(o))
        if notches:
            ET.SubElement(
                g, "path", {"class": "notch", "d": notches, "stroke": "#000000", "stroke-width": "0.4", **line}
            )
        ET.SubElement(
            g,
            "path",
            {"class": "grain", "d": _grain_path(o.grainline), "stroke": "#000000", "stroke-width": "0.3", **line},
        )
        if level_lines:
            for level, a, b in level_segments(o):
                ET.SubElement(
                    g,
                    "path",
                    {
                        "class": f"level level-{level}",
                        "d": _path([a, b], False),
                        "stroke": "#777777",
                        "stroke-width": "0.2",
                        **line,
                    },
                )
        for text, (x, y), angle in _label_lines(o):
            el = ET.SubElement(
                g,
                "text",
                {
                    "class": "label",
                    "x": _n(x),
                    "y": _n(y),
                    "font-size": _n(LABEL_HEIGHT_MM),
                    "font-family": "DejaVu Sans, Arial, sans-serif",
                    "text-anchor": "middle",
                    "transform": f"rotate({_n(-angle)} {_n(x)} {_n(y)})",
                },
            )
            el.text = text
    if layout.test_square_at is not None and test_square is not None:
        x, y = layout.test_square_at
        side = layout.test_square_mm
        ET.SubElement(
            root,
            "rect",
            {
                "class": "test-square",
                "x": _n(x),
                "y": _n(y),
                "width": _n(side),
                "height": _n(side),
                "fill": "none",
                "stroke": "#000000",
                "stroke-width": "0.3",
            },
        )
        for i, text in enumerate(_test_square_lines(test_square), start=1):
            el = ET.SubElement(
                root,
                "text",
                {
                    "class": "label",
                    "x": _n(x),
                    "y": _n(y + side + i * 1.4 * LABEL_HEIGHT_MM),
                    "font-size": _n(LABEL_HEIGHT_MM),
                    "font-family": "DejaVu Sans, Arial, sans-serif",
                },
            )
            el.text = text
    ET.indent(root, space=" ")
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"


# --- DXF -----------------------------------------------------------------------------


def _block_name(i: int) -> str:
    return f"PANEL_{i:02d}"


def _flip(p: Pt) -> tuple[float, float]:
    """DXF y grows upwards; the pattern's y grows downwards."""
    return (p[0], -p[1])


def dxf_bytes(outlines: tuple[PanelOutline, ...], *, gap_mm: float = PANEL_GAP_MM, level_lines: bool = False) -> bytes:
    """One DXF block per panel, on the layers CUT, STITCH, NOTCH, GRAIN, LABEL; units millimetres.

    With ``level_lines`` each block also holds a horizontal line per level on the layer
    LEVEL_<NAME>, so the file reads back into the same block (patterns.core.importing)."""
    doc = ezdxf.new("R2010", setup=["linetypes"])
    doc.units = dxf_units.MM
    doc.header["$INSUNITS"] = INSUNITS_MILLIMETRES
    doc.header["$MEASUREMENT"] = 1
    for name, colour, linetype in _LAYERS:
        doc.layers.add(name, color=colour, linetype=linetype)
    if level_lines:
        for level in dict.fromkeys(lv for o in outlines for lv in o.level_y):
            doc.layers.add(level_layer(level), color=LEVEL_LINE_COLOUR, linetype="DASHED")
    layout = sheet_layout(outlines, gap_mm=gap_mm, margin_mm=0.0)
    msp = doc.modelspace()
    for i, (o, (dx, dy)) in enumerate(zip(outlines, layout.offsets), start=1):
        blk = doc.blocks.new(name=_block_name(i))
        blk.add_lwpolyline([_flip(p) for p in o.cutting], close=True, dxfattribs={"layer": LAYER_CUT})
        blk.add_lwpolyline([_flip(p) for p in o.stitch], close=True, dxfattribs={"layer": LAYER_STITCH})
        for a, b in notch_segments(o):
            blk.add_line(_flip(a), _flip(b), dxfattribs={"layer": LAYER_NOTCH})
        blk.add_line(_flip(o.grainline[0]), _flip(o.grainline[1]), dxfattribs={"layer": LAYER_GRAIN})
        if level_lines:
            for level, a, b in level_segments(o):
                blk.add_line(_flip(a), _flip(b), dxfattribs={"layer": level_layer(level)})
        for text, at, angle in _label_lines(o):
            blk.add_text(
                text, height=LABEL_HEIGHT_MM, rotation=angle, dxfattribs={"layer": LAYER_LABEL, "insert": _flip(at)}
            )
        msp.add_blockref(_block_name(i), _flip((dx, dy)))
    stream = io.StringIO()
    doc.write(stream)
    return stream.getvalue().encode("utf-8")


@dataclass(frozen=True)
class DxfPanel:
    """One panel as read back from a DXF file, in the pattern's coordinates (y downwards)."""

    block: str
    labels: tuple[str, ...]
    cutting: tuple[Pt, ...]
    stitch: tuple[Pt, ...]
    notches: tuple[tuple[Pt, Pt], ...]
    grainline: tuple[Pt, Pt] | None
    insert: Pt


def _unflip(x: float, y: float) -> Pt:
    return (float(x), float(-y))


def read_dxf(data: bytes) -> tuple[DxfPanel, ...]:
    """Panels of a file written by :func:`dxf_bytes`, in sheet order."""
    doc = ezdxf.read(io.StringIO(data.decode("utf-8")))
    panels = []
    for ref in doc.modelspace().query("INSERT"):
        blk = doc.blocks.get(ref.dxf.name)
        cutting = stitch = grain = None
        notches, labels = [], []
        for e in blk:
            layer = e.dxf.layer
            if isinstance(e, LWPolyline):
                points = tuple(_unflip(x, y) for x, y in e.get_points("xy"))
                if layer == LAYER_CUT:
                    cutting = points
                elif layer == LAYER_STITCH:
                    stitch = points
            elif e.dxftype() == "LINE":
                segment = (_unflip(e.dxf.start.x, e.dxf.start.y), _unflip(e.dxf.end.x, e.dxf.end.y))
                if layer == LAYER_NOTCH:
                    notches.append(segment)
                elif layer == LAYER_GRAIN:
                    grain = segment
            elif e.dxftype() == "TEXT" and layer == LAYER_LABEL:
                labels.append(e.dxf.text)
        panels.append(
            DxfPanel(
                ref.dxf.name,
                tuple(labels),
                cutting or (),
                stitch or (),
                tuple(notches),
                grain,
                _unflip(ref.dxf.insert.x, ref.dxf.insert.y),
            )
        )
    return tuple(panels)
