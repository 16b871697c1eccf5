"""The workroom's side of a print: boning and lacing lists, one-sheet large-format PDFs, the projector's SVG.

Plain data in (fittings.printing.data.DocumentData and the altered outlines),
strings and bytes out; the lists themselves are worked out by
patterns/core/boning.py and patterns/core/lacing.py.  Lengths are shown in
the plan's unit (cm to 1 mm, inches to 1/16 in).  Bones are cut to the
plan's step rounded down (1 mm, or 1/16 in for a plan kept in inches), so
the length printed is never longer than the channel allows.
"""

from __future__ import annotations

from dataclasses import replace
from xml.etree import ElementTree as ET

from django.template.loader import render_to_string

from fittings.printing.data import DocumentData, _header, altered_pattern, cautions
from fittings.printing.engine import html_to_pdf, svg_data_uri
from patterns.core.boning import BoningList, boning_list
from patterns.core.export import _n, _path
from patterns.core.lacing import Lacing, lacing
from patterns.core.outline import AlteredPattern
from patterns.core.sheets import (
    CUT_COLOUR,
    FONT_FAMILY,
    SQUARE_PAD_MM,
    TEST_SQUARES,
    Sheet,
    SheetPiece,
    _draw_piece,
    _line,
    _svg_root,
    _text,
    _thin,
    lay_out,
    piece_labels,
    square_svg,
)
from patterns.core.tiling import PORTRAIT, LargeSheet, PaperSize, TileGrid, large_format, large_sheet
from patterns.core.units import DEFAULT_STEP_MM, format_with_unit

CHANNEL_COLOUR = "#D55E00"
CHANNEL_WIDTH_MM = 0.3
CHANNEL_DASH = "6 2 1 2"
EYELET_RADIUS_MM = 2.5
# The large sheet's header: title lines and the two test squares (mm).
LARGE_HEADER_MM = 125.0
LARGE_GAP_MM = 10.0


# --- the lists -------------------------------------------------------------------------------


def workroom_lists(data: DocumentData, pattern: AlteredPattern) -> tuple[BoningList, Lacing | None]:
    rules = replace(data.boning_rules, cut_step_mm=DEFAULT_STEP_MM[data.unit])
    bones = boning_list(data.block, pattern.altered, rules)
    laces = lacing(data.block, pattern.altered, data.options.lacing_gap_mm, data.lacing_rules)
    return bones, laces


def _len(mm, unit) -> str:
    return format_with_unit(mm, unit)


def boning_context(data: DocumentData, pattern: AlteredPattern, bones: BoningList | None = None) -> dict:
    bones = bones or workroom_lists(data, pattern)[0]
    unit = data.unit
    rows = [
        {
            "name": c.name,
            "where": "seam" if c.kind == "seam" else "marked",
            "channel": _len(c.channel_mm, unit),
            "bone": _len(c.cut_mm, unit) if c.cut_mm > 0 else "none",
            "count": c.count,
        }
        for c in bones.channels
    ]
    busk = None
    if bones.busk is not None:
        b = bones.busk
        busk = {
            "centre_front": _len(b.centre_front_mm, unit),
            "room": _len(b.room_mm, unit),
            "length": _len(b.length_mm, unit) if b.length_mm is not None else "",
            # The same busk in the other unit, as suppliers sell in either.
            "length_other": format_with_unit(b.length_mm, "cm" if unit == "in" else "in")
            if b.length_mm is not None
            else "",
            "short_by": _len(b.short_by_mm, unit) if b.short_by_mm is not None else "",
            "clearance": _len(bones.rules.busk_clearance, unit),
        }
    return {
        # Columns that would say the same on every row are left out (each cell costs drawing time).
        "any_marked": any(c.kind != "seam" for c in bones.channels),
        "all_pairs": all(c.count == 2 for c in bones.channels),
        "rows": rows,
        "busk": busk,
        "count": bones.bone_count,
        "total": _len(bones.total_bone_mm, unit),
        "clearance": _len(bones.rules.clearance_mm, unit),
        "stock": ", ".join(format_with_unit(v, unit) for v in sorted(bones.rules.busk_stock_mm)) or "none",
        "step": "1/16 in" if unit == "in" else "1 mm",
        # The core's findings in the plan's unit: a busk far short of the room, channels too short for a bone.
        "busk_short": any(f.code == "busk_short" for f in bones.findings),
        "short_channels": [c.name for c in bones.channels if c.cut_mm <= 0],
    }


def lacing_context(data: DocumentData, pattern: AlteredPattern, laces: Lacing | None = None) -> dict | None:
    if laces is None:
        _, laces = workroom_lists(data, pattern)
    if laces is None:
        return None
    unit = data.unit
    r = laces.rules
    eyelets = [{"number": e.number, "from_top": _len(e.from_top_mm, unit), "waist": e.at_waist} for e in laces.eyelets]
    spacings = laces.spacings_mm
    usual = max(spacings) if spacings else 0.0
    return {
        "panel": laces.panel,
        "count": laces.count,
        "total": laces.total_count,
        "edge": _len(laces.edge_mm, unit),
        # Four to a row, one cell each: WeasyPrint's time goes by the box.
        "eyelets": [(eyelets[i : i + 4] + [None] * 3)[:4] for i in range(0, len(eyelets), 4)],
        "spacing": _len(r.spacing_mm, unit),
        "widest": _len(usual, unit),
        "pair": _len(min(r.waist_pair_mm, r.spacing_mm), unit),
        "margin": _len(r.top_margin_mm, unit),
        "inset": _len(r.inset_mm, unit),
        "gap": _len(laces.lacing_gap_mm, unit),
        "columns": _len(laces.column_gap_mm, unit),
        "tail": _len(r.tail_mm, unit),
        "lace": _len(laces.lace_mm, unit),
        "lace_m": f"{laces.lace_mm / 1000:.1f} m",
    }


# --- marks on the drawn pieces ------------------------------------------------------------------


def workroom_sections(data: DocumentData, pattern: AlteredPattern) -> dict:
    """Both sections of the work order, from one working-out of the lists."""
    bones, laces = workroom_lists(data, pattern)
    return {
        "boning": boning_context(data, pattern, bones),
        "lacing": lacing_context(data, pattern, laces) if laces is not None else None,
    }


def _workroom_marks(
    parent, data: DocumentData, pattern: AlteredPattern, offsets: dict[str, tuple[float, float]]
) -> None:
    """Boning channels (dash-dot) and eyelet centres (small circles) over the pieces placed at ``offsets``."""
    bones, laces = workroom_lists(data, pattern)
    for c in bones.channels:
        dx, dy = offsets.get(c.panel, (0.0, 0.0))
        if c.kind == "seam":
            continue  # on the stitch line, already drawn
        g = ET.SubElement(parent, "g", {"transform": f"translate({_n(dx)} {_n(dy)})"})
        _line(
            g,
            _path(c.line, False),
            CHANNEL_COLOUR,
            CHANNEL_WIDTH_MM,
            stroke_dasharray=CHANNEL_DASH,
            **{"class": "channel"},
        )
    if laces is not None and laces.eyelets:
        dx, dy = offsets.get(laces.panel, (0.0, 0.0))
        g = ET.SubElement(parent, "g", {"transform": f"translate({_n(dx)} {_n(dy)})", "class": "eyelets"})
        for e in laces.eyelets:
            ET.SubElement(
                g,
                "circle",
                {
                    "class": "eyelet",
                    "cx": _n(e.point[0]),
                    "cy": _n(e.point[1]),
                    "r": _n(EYELET_RADIUS_MM),
                    "fill": "none",
                    "stroke": CUT_COLOUR,
                    "stroke-width": "0.3",
                },
            )


# --- one sheet, large format ---------------------------------------------------------------------


def large_layout(pattern: AlteredPattern, fmt: str) -> tuple[Sheet, LargeSheet]:
    """The altered pieces in rows across the sheet, below the header, each at 1:1."""
    outlines = pattern.altered
    boxes = []
    for o in outlines:
        xs, ys = [x for x, _ in o.cutting], [y for _, y in o.cutting]
        boxes.append((min(xs), min(ys), max(xs) - min(xs), max(ys) - min(ys)))
    sheet = large_sheet(fmt, [(w, h) for _, _, w, h in boxes], header_mm=LARGE_HEADER_MM, gap_mm=LARGE_GAP_MM)
    pieces = tuple(
        SheetPiece(o, ox - x0, oy - y0, _thin(o.cutting), _thin(o.stitch))
        for o, (x0, y0, _, _), (ox, oy) in zip(outlines, boxes, sheet.offsets)
    )
    return Sheet(pieces, sheet.printable_width_mm, sheet.printable_height_mm), sheet


def _one_tile_grid(sheet: LargeSheet) -> TileGrid:
    paper = PaperSize(sheet.format.code, sheet.format.label, sheet.page_width_mm, sheet.page_height_mm)
    return TileGrid(
        paper=paper,
        orientation=PORTRAIT,
        page_width_mm=sheet.page_width_mm,
        page_height_mm=sheet.page_height_mm,
        margin_mm=sheet.margin_mm,
        overlap_mm=0.0,
        sheet_width_mm=sheet.printable_width_mm,
        sheet_height_mm=sheet.printable_height_mm,
        rows=1,
        columns=1,
    )


def large_sheet_svg(data: DocumentData, pattern: AlteredPattern, sheet: Sheet, layout: LargeSheet) -> str:
    w, h = layout.printable_width_mm, layout.printable_height_mm
    root = _svg_root(w, h, (0, 0, w, h), "large-sheet")
    for piece in sheet.pieces:
        _draw_piece(root, piece)
    _workroom_marks(root, data, pattern, {p.outline.name: (p.dx, p.dy) for p in sheet.pieces})
    return ET.tostring(root, encoding="unicode")


def large_sheet_html(data: DocumentData, fmt: str, pattern: AlteredPattern | None = None) -> str:
    pattern = pattern or altered_pattern(data)
    sheet, layout = large_layout(pattern, fmt)
    grid = _one_tile_grid(layout)
    tag = f"{data.client_label.split()[0]} rev. {data.revision_number}" if data.client_label else ""
    labels = [
        {
            "text": label.text,
            "bold": label.bold,
            "rule": f"l{j}",
            "left": _n(label.left_mm),
            "top": _n(label.top_mm),
            "size": _n(label.size_mm),
        }
        for j, label in enumerate(piece_labels(sheet, grid, grid.tile(0, 0), tag))
    ]
    context = {
        **_header(data),
        "title": f"Large sheet, {data.garment}, revision {data.revision_number}",
        "format_label": layout.format.label,
        "page_width": _n(layout.page_width_mm),
        "page_height": _n(layout.page_height_mm),
        "page_size": f"{_n(layout.page_width_mm)} × {_n(layout.page_height_mm)} mm",
        "orientation": layout.orientation,
        "margin": _n(layout.margin_mm),
        "area_width": _n(layout.printable_width_mm),
        "area_height": _n(layout.printable_height_mm),
        "header_height": _n(LARGE_HEADER_MM),
        "sheet": svg_data_uri(large_sheet_svg(data, pattern, sheet, layout)),
        "labels": labels,
        "squares": [
            {"name": name, "src": svg_data_uri(square_svg(side, name, divisions)), "size": _n(side + 2 * SQUARE_PAD_MM)}
            for _, side, name, divisions in TEST_SQUARES
        ],
        "seam_allowance": format_with_unit(data.block.seam_allowance_mm, data.unit),
        "cautions": cautions(data),
    }
    return render_to_string("fittings/print/large_sheet.html", context)


def render_large_sheet(data: DocumentData, fmt: str) -> bytes:
    large_format(fmt)  # refuses an unknown format before any drawing
    return html_to_pdf(large_sheet_html(data, fmt))


# --- the projector ---------------------------------------------------------------------------------


def projector_svg(data: DocumentData, pattern: AlteredPattern | None = None) -> str:
    """The altered pieces side by side at one SVG unit to the millimetre, labelled, for the projector page."""
    pattern = pattern or altered_pattern(data)
    sheet = lay_out(pattern)
    root = _svg_root(sheet.width_mm, sheet.height_mm, (0, 0, sheet.width_mm, sheet.height_mm), "projected")
    for piece in sheet.pieces:
        _draw_piece(root, piece)
    _workroom_marks(root, data, pattern, {p.outline.name: (p.dx, p.dy) for p in sheet.pieces})
    for piece in sheet.pieces:
        o = piece.outline
        x, y = o.label_at[0] + piece.dx + 2, o.label_at[1] + piece.dy
        _text(root, x, y, o.name, 6, weight="bold", rotate=-90, anchor="middle", cls="piece-name")
        _text(root, x + 8, y, " · ".join(o.labels[1:]), 4.5, rotate=-90, anchor="middle", cls="piece-note")
    root.set("font-family", FONT_FAMILY)
    return ET.tostring(root, encoding="unicode")
