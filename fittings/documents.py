"""Printed documents for a plan revision: the work order and the 1:1 cutting sheet.

Both are drawn by WeasyPrint from HTML templates in templates/fittings/print/
and from the revision's stored inputs and result only, never recomputed
another way, so printing an issued revision again gives the same pages.

Two layers:

- ``document_data(revision, base_url)`` reads the database once and returns
  plain data (:class:`DocumentData`);
- ``render_work_order(data, paper)`` and ``render_cutting_sheet(data, paper)``
  draw from that plain data alone, with no database (the benchmark uses
  them directly); ``render_documents`` draws both for one print job.

``work_order_pdf`` joins the two for a revision.

Scale: each tile of the cutting sheet is an SVG image sized in CSS
millimetres, which are absolute units (W3C CSS Values and Units Level 3,
5.2), with one SVG user unit to the millimetre; WeasyPrint writes it as
vector paths in PDF points of 1/72 in (ISO 32000-1, 8.3.2.3).  The images
go in as data: addresses because WeasyPrint reads those with an XML
parser, far quicker than SVG written inline in the HTML.
"""

from __future__ import annotations

import base64
import functools
import importlib
import io
import math
import os
import pickle
import re
import logging
import threading
import warnings
from dataclasses import dataclass
from datetime import date, datetime
from xml.etree import ElementTree as ET

import qrcode
from django.conf import settings
from django.template.loader import render_to_string
from django.urls import NoReverseMatch, reverse
from django.utils import timezone
from shapely.geometry import Polygon

from fittings.fabric import fabric_layout_context, print_layers
from fittings.previews import altered_for, preview_markers
from patterns.core.allot import Allotment, PlanOptions
from patterns.core import layout as layout_core
from patterns.core.block import Block
from patterns.core.defaults import is_corset
from patterns.core.boning import BoningRules
from patterns.core.lacing import LacingRules
from patterns.core.layout import layer_label
from patterns.core.export import notch_segments, sheet_layout
from fittings.wording import in_unit
from patterns.core.findings import CAUTION, ERROR, WARNING
from patterns.core.measures import LEVEL_LABELS, MEASURES
from patterns.core.outline import AlteredPattern, PanelOutline
from patterns.core.preview import markers_from_findings, preview_svg
from patterns.core.report import direction
from patterns.core.tiling import PAGE_MARGIN_MM, TileGrid, paper_size, row_label, tile_grid, tile_label
from patterns.core.units import UNIT_LABELS, format_length, format_with_unit

logger = logging.getLogger(__name__)

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
    "#000000", "#0072B2", "#000000", "#808080", "#EBEBEB",
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

# Shown whenever a plan reduces the waist; the fitter's and the client's
# judgment come first (common practice).
WAIST_REDUCTION_CAUTION = (
    "Waist reduction: lacing a corset to reduce the waist restricts breathing and can injure. "
    "Plan gradual wear, building up the hours and the reduction over weeks; check the client's comfort "
    "at every fitting; loosen at once on pain, numbness, dizziness or shortness of breath. "
    "The fitter's judgment and local practice come first."
)
SEVERITY_WORDS = {ERROR: "Problem", WARNING: "Check", CAUTION: "Caution"}

# Layers of fabric cut from each panel (common practice: a corset has an
# outer fabric, a strength layer and a lining; a bodice an outer and a lining).
CORSET_LAYERS = tuple(layer_label(code) for code in layout_core.CORSET_LAYERS)
BODICE_LAYERS = tuple(layer_label(code) for code in layout_core.BODICE_LAYERS)


class DocumentError(ValueError):
    """A revision that cannot be printed, with the reason in plain words."""


@dataclass(frozen=True)
class DocumentData:
    """Everything the printed documents show, as plain data."""

    atelier_name: str
    client_label: str
    garment: str
    fitting_date: date | None
    measured_by: str
    revision_number: int
    revision_status: str  # "draft" or "issued"
    issued_at: datetime | None
    issued_by: str
    based_on: int | None
    revision_url: str
    measurements: dict[str, float]
    block: Block
    options: PlanOptions
    result: Allotment
    # How this atelier bones and laces (atelier.models.AtelierSettings), read when printing.
    boning_rules: BoningRules = BoningRules()
    lacing_rules: LacingRules = LacingRules()
    # Per layer, the fabric layout asked for on the revision (fittings.fabric.LayerLayout); empty: rows
    # on fabric of the default width, worked out when the work order is drawn.
    fabric_layouts: tuple = ()

    @property
    def unit(self) -> str:
        return self.result.unit

    @property
    def is_issued(self) -> bool:
        return self.revision_status == "issued"


# --- fonts ------------------------------------------------------------------------

# The date written into the embedded font subsets.  Where Debian's HarfBuzz-Subset
# library is missing (a bare Debian 12), WeasyPrint subsets fonts with fontTools,
# which stamps each subset with the time of the print unless SOURCE_DATE_EPOCH
# (the reproducible-builds convention) says otherwise, so two prints of one
# revision a second apart would differ in their bytes.  A fixed date keeps a
# reprint the very same file on every machine.
FONT_SUBSET_DATE = "1704067200"  # 2024-01-01T00:00:00Z

# What WeasyPrint says about subsetting with fontTools instead of HarfBuzz-Subset:
# advice for whoever installs the machine (README, "System packages"), not for
# the fitter's console on every print.
_FONTTOOLS_NOTES = ("HarfBuzz-Subset will be required", "Using fontTools instead of HarfBuzz-Subset")


class _FontToolsNote(logging.Filter):
    def filter(self, record: logging.LogRecord) -> bool:
        if isinstance(record.msg, str) and record.msg.startswith(_FONTTOOLS_NOTES[1]):
            logger.debug("Fonts are subset with fontTools: libharfbuzz-subset0 is not installed.")
            return False
        return True


@functools.cache
def weasyprint():
    """WeasyPrint, imported once with fixed font dates and without its notes on the font library."""
    os.environ.setdefault("SOURCE_DATE_EPOCH", FONT_SUBSET_DATE)
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message=_FONTTOOLS_NOTES[0], category=DeprecationWarning)
        module = importlib.import_module("weasyprint")
        importlib.import_module("weasyprint.text.fonts")  # loads the font libraries
    logging.getLogger("weasyprint").addFilter(_FontToolsNote())
    return module


@functools.cache
def font_config():
    """WeasyPrint's font configuration, built once per process (it reads the machine's fonts)."""
    return weasyprint().text.fonts.FontConfiguration()


@functools.cache
def url_fetcher():
    """Fetches data: addresses only, never the network or the file system; built once (it sets up TLS)."""
    return weasyprint().urls.URLFetcher(allowed_protocols=("data",))


def html_to_pdf(html: str) -> bytes:
    return weasyprint().HTML(string=html, url_fetcher=url_fetcher()).write_pdf(font_config=font_config())


# --- reading a revision ---------------------------------------------------------------


def _person(user) -> str:
    if user is None:
        return ""
    return user.get_full_name() or user.get_username()


def revision_path(plan_id: int, number: int) -> str:
    """Where the app shows this revision: its page if the app has one, else its print page."""
    for name in ("fittings:revision_detail", "fittings:print_start"):
        try:
            return reverse(name, args=[plan_id, number])
        except NoReverseMatch:
            continue
    return f"/plans/{plan_id}/revisions/{number}/print/"


def client_label(client) -> str:
    """The client's reference; their full name too only where the atelier allows it on paper."""
    if getattr(settings, "ATELIER_PRINT_CLIENT_NAME", False):
        return f"{client.reference} {client.name}"
    return client.reference


def document_data(revision, base_url: str = "") -> DocumentData:
    """Read a revision (with its plan, client and session) into plain data for printing."""
    from fittings.selectors import revision_inputs, revision_result

    plan = revision.plan
    session = plan.session
    from atelier.models import AtelierSettings

    measurements, block, options = revision_inputs(revision)
    result = revision_result(revision)
    workroom = AtelierSettings.current()
    return DocumentData(
        atelier_name=settings.ATELIER_NAME,
        client_label=client_label(plan.client),
        garment=plan.garment,
        fitting_date=session.taken_on if session else None,
        measured_by=_person(session.measured_by) if session else "",
        revision_number=revision.number,
        revision_status=revision.status,
        issued_at=revision.issued_at,
        issued_by=_person(revision.issued_by),
        based_on=revision.based_on.number if revision.based_on_id else None,
        revision_url=base_url.rstrip("/") + revision_path(plan.pk, revision.number),
        measurements=dict(measurements),
        block=block,
        options=options,
        result=result,
        boning_rules=workroom.boning_rules(),
        lacing_rules=workroom.lacing_rules(),
        fabric_layouts=print_layers(revision),
    )


def altered_pattern(data: DocumentData) -> AlteredPattern:
    """The outlines the stored result gives for the stored block (shared with the plan page's preview)."""
    return altered_for(data.block, data.result)


def work_order_pdf(revision, paper: str, base_url: str) -> bytes:
    return render_work_order(document_data(revision, base_url), paper)


# --- shared pieces ------------------------------------------------------------------


def _paper_css(paper: str) -> str:
    """The CSS name of the page size (CSS Paged Media: A4, letter)."""
    return {"a4": "A4", "letter": "letter"}[paper_size(paper).code]


def _header(data: DocumentData) -> dict:
    status = "Issued" if data.is_issued else "Draft, not issued: do not cut from this copy"
    return {
        "atelier_name": data.atelier_name,
        "client_label": data.client_label,
        "garment": data.garment,
        "fitting_date": data.fitting_date,
        "measured_by": data.measured_by,
        "pattern_name": data.block.name,
        "size": data.block.size,
        "revision_number": data.revision_number,
        "revision_status": status,
        "is_issued": data.is_issued,
        "issued_at": timezone.localtime(data.issued_at) if data.issued_at else None,
        "issued_by": data.issued_by,
        "based_on": data.based_on,
        "unit_label": "centimetres (to 1 mm)" if data.unit == "cm" else "inches (to 1/16 in)",
        "unit": UNIT_LABELS[data.unit],
    }


def has_waist_reduction(data: DocumentData) -> bool:
    return data.options.ease.get("waist", 0.0) < 0 or any(
        lv.level == "waist" and lv.ease < 0 for lv in data.result.levels
    )


def cautions(data: DocumentData) -> list[str]:
    """Cautions in words, for the top of both documents."""
    found = [WAIST_REDUCTION_CAUTION] if has_waist_reduction(data) else []
    found += [in_unit(f.message, data.unit) for f in data.result.findings if f.severity == CAUTION]
    return found


# --- work order ---------------------------------------------------------------------


def qr_png(url: str) -> bytes:
    """The address as a QR code, a small black-and-white PNG (four modules of quiet zone, as the QR standard asks).

    A raster keeps the PDF quick to draw; the template scales it up without smoothing.
    """
    image = qrcode.make(url, box_size=4, border=4, error_correction=qrcode.constants.ERROR_CORRECT_M)
    buffer = io.BytesIO()
    image.save(buffer, format="PNG")
    return buffer.getvalue()


def _fmt(mm, unit, signed=False) -> str:
    return "–" if mm is None else format_length(mm, unit, signed=signed)


def shift_words(mm: float, unit: str) -> str:
    """'let out 0.4', 'take in 3/16', 'no change': a shift in the workroom's words."""
    if format_length(abs(mm), unit) in ("0.0", "0"):
        return "no change"
    return f"{direction(mm)} {format_length(abs(mm), unit)}"


def measurement_rows(data: DocumentData) -> list[dict]:
    unit = data.unit
    return [
        {"label": m.label, "value": format_length(data.measurements[m.code], unit)}
        for m in MEASURES if data.measurements.get(m.code) is not None
    ]


def _pairs(rows: list) -> list[list]:
    return [rows[i:i + 2] for i in range(0, len(rows), 2)]


def level_rows(data: DocumentData) -> list[dict]:
    unit = data.unit
    rows = []
    for lv in data.result.levels:
        rows.append({
            "label": LEVEL_LABELS.get(lv.level, lv.level),
            "body": _fmt(lv.body, unit),
            "ease": _fmt(lv.ease, unit, signed=True),
            "gap": _fmt(lv.lacing_gap, unit) if lv.lacing_gap else "–",
            "target": _fmt(lv.target, unit),
            "pattern": _fmt(lv.pattern, unit),
            "difference": _fmt(lv.difference, unit, signed=True),
            "seams": _fmt(lv.allotted + lv.centre_front, unit, signed=True),
            "pinned": _fmt(lv.pinned, unit, signed=True) if lv.pinned else "–",
            "residual": _fmt(lv.residual, unit, signed=True),
        })
    return rows


def shift_rows(data: DocumentData) -> list[dict]:
    """One row per raw edge, one cell per level, in the plan's unit and in words."""
    unit = data.unit
    by_key = {(s.seam, s.level, s.panel): s for s in data.result.shifts}
    rows = []
    for seam in data.block.seams:
        for panel in (seam.front_panel, seam.back_panel):
            cells = []
            for level in data.block.level_names:
                edge = by_key.get((seam.name, level, panel))
                if edge is None:
                    cells.append({"text": "–", "note": ""})
                    continue
                note = "set by hand" if edge.fixed else ("with pins" if edge.pin_mm else "")
                cells.append({"text": shift_words(edge.shift_mm, unit), "note": note,
                              "kind": "out" if edge.shift_mm > 0 else ("in" if edge.shift_mm < 0 else "")})
            rows.append({"seam": seam.name, "panel": panel, "cells": cells})
    return rows


def pin_rows(data: DocumentData) -> list[dict]:
    unit = data.unit
    rows = []
    for pin in data.options.pins:
        edges = [s for s in data.result.shifts if s.seam == pin.seam and s.level == pin.level and s.pin_mm]
        rows.append({
            "seam": pin.seam,
            "level": LEVEL_LABELS.get(pin.level, pin.level),
            "amount": shift_words(pin.amount_mm, unit),
            "edges": "; ".join(f"{s.panel}: {shift_words(s.pin_mm, unit)}" for s in edges),
        })
    return rows


def band_rows(data: DocumentData) -> list[str]:
    unit = data.unit
    rows = []
    for b in data.result.bands:
        if format_length(abs(b.change_mm), unit) in ("0.0", "0"):
            continue
        word = "lengthen" if b.change_mm > 0 else "shorten"
        rows.append(f"{LEVEL_LABELS.get(b.upper, b.upper)} to {LEVEL_LABELS.get(b.lower, b.lower)}: "
                    f"{word} by {format_with_unit(abs(b.change_mm), unit)}")
    return rows


def finding_rows(data: DocumentData, pattern: AlteredPattern) -> list[dict]:
    rows = [{"severity": SEVERITY_WORDS.get(f.severity, f.severity), "message": in_unit(f.message, data.unit)}
            for f in data.result.findings if f.severity != CAUTION]
    rows += [{"severity": SEVERITY_WORDS.get(f.severity, f.severity), "message": in_unit(f.message, data.unit)}
             for f in pattern.findings]
    return rows


def cut_rows(data: DocumentData) -> tuple[tuple[str, ...], list[dict]]:
    layers = CORSET_LAYERS if is_corset(data.block.garment) else BODICE_LAYERS
    rows = []
    for panel in data.block.panels:
        count = f"{panel.cut_count} on the fold" if panel.on_fold else (
            f"{panel.cut_count} (a mirrored pair)" if panel.cut_count == 2 else str(panel.cut_count))
        rows.append({"panel": panel.name, "count": count, "layers": [count for _ in layers]})
    return layers, rows


def _preview_data_uri(data: DocumentData, pattern: AlteredPattern) -> str:
    """The plan page's picture in vectors, less its amounts: the tables list them, and each label
    on the picture would cost WeasyPrint as much as a table cell."""
    markers = preview_markers(data.block, data.result) + markers_from_findings(pattern.findings)
    return svg_data_uri(preview_svg(data.block, data.result.alteration(data.block), markers=markers,
                                    unit=data.unit, pattern=pattern, amounts=False))


def png_data_uri(png: bytes) -> str:
    return "data:image/png;base64," + base64.b64encode(png).decode("ascii")


def work_order_html(data: DocumentData, paper: str, pattern: AlteredPattern | None = None) -> str:
    pattern = pattern or altered_pattern(data)
    layers, cuts = cut_rows(data)
    gap = data.result.levels[0].lacing_gap if data.result.levels else 0.0
    context = {
        **_header(data),
        "paper": _paper_css(paper),
        "title": f"Work order, {data.garment}, revision {data.revision_number}",
        "qr": png_data_uri(qr_png(data.revision_url)) if data.revision_url else "",
        "revision_url": data.revision_url,
        "cautions": cautions(data),
        "measurements": _pairs(measurement_rows(data)),
        "levels": level_rows(data),
        "level_names": [LEVEL_LABELS.get(lv, lv) for lv in data.block.level_names],
        "shifts": shift_rows(data),
        "centre_front": (shift_words(data.result.centre_front_shift_mm, data.unit)
                         if data.result.centre_front_shift_mm else ""),
        "bands": band_rows(data),
        "pins": pin_rows(data),
        "findings": finding_rows(data, pattern),
        "preview": _preview_data_uri(data, pattern),
        "layers": layers,
        "cuts": cuts,
        "lacing_gap": format_with_unit(gap, data.unit) if gap else "",
        "seam_allowance": format_with_unit(data.block.seam_allowance_mm, data.unit),
        **workroom_context(data, pattern),
        **fabric_layout_context(data, pattern),
    }
    return render_to_string("fittings/print/work_order.html", context)


def workroom_context(data: DocumentData, pattern: AlteredPattern) -> dict:
    """The boning and lacing sections (fittings/workroom.py)."""
    from fittings.workroom import workroom_sections

    return workroom_sections(data, pattern)


def render_work_order(data: DocumentData, paper: str, pattern: AlteredPattern | None = None) -> bytes:
    return html_to_pdf(work_order_html(data, paper, pattern))


# --- cutting sheet: drawing -------------------------------------------------------------


_NUM_TRIM = re.compile(r"\.?0+$")


def _n(value: float) -> str:
    """A number for SVG: three decimals (a micrometre), no trailing zeros."""
    text = f"{value:.3f}"
    text = _NUM_TRIM.sub("", text) if "." in text else text
    return "0" if text in ("-0", "") else text


def _d(points, closed: bool) -> str:
    head, *rest = points
    d = f"M{_n(head[0])} {_n(head[1])}" + "".join(f"L{_n(x)} {_n(y)}" for x, y in rest)
    return d + ("Z" if closed else "")


def _grain_d(grain) -> str:
    """The grainline with an arrowhead at each end."""
    (x0, y0), (x1, y1) = grain
    length = math.hypot(x1 - x0, y1 - y0) or 1.0
    ux, uy = (x1 - x0) / length, (y1 - y0) / length
    head, spread = 6.0, math.radians(25)

    def barb(px, py, dx, dy, sign):
        c, s = math.cos(sign * spread), math.sin(sign * spread)
        return px + head * (c * dx - s * dy), py + head * (s * dx + c * dy)

    parts = [_d([(x0, y0), (x1, y1)], False)]
    for px, py, dx, dy in ((x0, y0, ux, uy), (x1, y1, -ux, -uy)):
        parts.append(_d([barb(px, py, dx, dy, 1), (px, py), barb(px, py, dx, dy, -1)], False))
    return "".join(parts)


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
    pieces = tuple(SheetPiece(o, dx, dy, _thin(o.cutting), _thin(o.stitch))
                   for o, (dx, dy) in zip(pattern.altered, layout.offsets))
    return Sheet(pieces, layout.width_mm, layout.height_mm)


def _line(parent, d: str, colour: str, width: float, **extra) -> ET.Element:
    attrs = {"d": d, "fill": "none", "stroke": colour, "stroke-width": _n(width),
             "stroke-linejoin": "round", "stroke-linecap": "round"}
    attrs.update({k.replace("_", "-"): v for k, v in extra.items()})
    return ET.SubElement(parent, "path", attrs)


def _text(parent, x, y, text, size, *, anchor="start", weight="normal", colour="#000000", rotate=None, cls=None):
    attrs = {"x": _n(x), "y": _n(y), "font-size": _n(size), "font-family": FONT_FAMILY, "fill": colour,
             "text-anchor": anchor}
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
    _line(g, _d(piece.cutting, True), CUT_COLOUR, CUT_WIDTH_MM, **{"class": "cut"})
    _line(g, _d(piece.stitch, True), STITCH_COLOUR, STITCH_WIDTH_MM, stroke_dasharray=STITCH_DASH,
          **{"class": "stitch"})
    notches = "".join(_d(segment, False) for segment in notch_segments(o))
    if notches:
        _line(g, notches, MARK_COLOUR, NOTCH_WIDTH_MM, **{"class": "notch"})
    _line(g, _grain_d(o.grainline), MARK_COLOUR, 0.3, **{"class": "grain"})


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
        bottom = row * grid.step_y_mm + grid.printable_height_mm - (
            grid.overlap_mm if row < grid.rows - 1 else 0.0) - half - LABEL_CLEARANCE_MM
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
        marks = [(x, y) for x, y in marks if x0 - MARK_RADIUS_MM <= x <= x1 + MARK_RADIUS_MM
                 and y0 - MARK_RADIUS_MM <= y <= y1 + MARK_RADIUS_MM]
    arm = MARK_RADIUS_MM + 1
    d = "".join(f"M{_n(x - arm)} {_n(y)}L{_n(x + arm)} {_n(y)}M{_n(x)} {_n(y - arm)}L{_n(x)} {_n(y + arm)}"
                for x, y in marks)
    if d:
        _line(parent, d, MARK_COLOUR, 0.25, **{"class": "align"})
    for x, y in marks:
        ET.SubElement(parent, "circle", {"cx": _n(x), "cy": _n(y), "r": _n(MARK_RADIUS_MM), "fill": "none",
                                         "stroke": MARK_COLOUR, "stroke-width": "0.25"})


def neighbours(grid: TileGrid, row: int, column: int) -> str:
    """'left A1, right A3, below B2': the tiles that share an edge with this one."""
    found = []
    for word, r, c in (("above", row - 1, column), ("left", row, column - 1), ("right", row, column + 1),
                       ("below", row + 1, column)):
        if 0 <= r < grid.rows and 0 <= c < grid.columns:
            found.append(f"{word} {tile_label(r, c)}")
    return ", ".join(found)


def _overlap_strips(parent, grid: TileGrid) -> None:
    height = grid.rows * grid.step_y_mm + grid.overlap_mm
    width = grid.columns * grid.step_x_mm + grid.overlap_mm
    for x in grid.column_joins():
        ET.SubElement(parent, "rect", {"class": "overlap", "x": _n(x - grid.overlap_mm / 2), "y": "0",
                                       "width": _n(grid.overlap_mm), "height": _n(height),
                                       "fill": OVERLAP_FILL, "stroke": "none"})
    for y in grid.row_joins():
        ET.SubElement(parent, "rect", {"class": "overlap", "x": "0", "y": _n(y - grid.overlap_mm / 2),
                                       "width": _n(width), "height": _n(grid.overlap_mm),
                                       "fill": OVERLAP_FILL, "stroke": "none"})


def _overlaps(a, b) -> bool:
    ax0, ay0, ax1, ay1 = a
    bx0, by0, bx1, by1 = b
    return ax0 <= bx1 and bx0 <= ax1 and ay0 <= by1 and by0 <= ay1


def svg_data_uri(svg: str) -> str:
    """An SVG as a data: address; WeasyPrint reads it with an XML parser, far quicker than inline in HTML."""
    return "data:image/svg+xml;base64," + base64.b64encode(svg.encode("utf-8")).decode("ascii")


def _svg_root(width_mm: float, height_mm: float, viewbox: tuple[float, float, float, float], cls: str) -> ET.Element:
    return ET.Element("svg", {
        "xmlns": "http://www.w3.org/2000/svg", "class": cls,
        "width": f"{_n(width_mm)}mm", "height": f"{_n(height_mm)}mm",
        "viewBox": " ".join(_n(v) for v in viewbox),
    })


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
    ET.SubElement(root, "rect", {"class": "frame", "x": _n(tile.x_mm), "y": _n(tile.y_mm), "width": _n(w),
                                 "height": _n(h), "fill": "none", "stroke": FRAME_COLOUR,
                                 "stroke-width": _n(FRAME_WIDTH_MM)})
    return ET.tostring(root, encoding="unicode")


def square_svg(side_mm: float, name: str, divisions: int = 10) -> str:
    """A test square of ``side_mm``, labelled, with ticks along its top edge at each of ``divisions``."""
    pad = SQUARE_PAD_MM
    root = _svg_root(side_mm + 2 * pad, side_mm + 2 * pad, (-pad, -pad, side_mm + 2 * pad, side_mm + 2 * pad),
                     "test-square")
    ET.SubElement(root, "rect", {"class": "square", "x": "0", "y": "0", "width": _n(side_mm), "height": _n(side_mm),
                                 "fill": "none", "stroke": "#000000", "stroke-width": "0.3"})
    ticks = "".join(f"M{_n(side_mm * i / divisions)} 0L{_n(side_mm * i / divisions)} {5 if 2 * i == divisions else 3}"
                    for i in range(1, divisions))
    _line(root, ticks, "#000000", 0.2)
    _text(root, side_mm / 2, side_mm / 2 - 3, f"{name} test square", 5, anchor="middle", weight="bold")
    _text(root, side_mm / 2, side_mm / 2 + 5, f"must measure {name} each way", 3.5, anchor="middle")
    return ET.tostring(root, encoding="unicode")


def map_svg(sheet: Sheet, grid: TileGrid, max_width_mm: float = MAP_WIDTH_MM,
            max_height_mm: float = MAP_HEIGHT_MM) -> str:
    """The assembly map: the whole sheet small, with every tile's place and name."""
    total_w = grid.columns * grid.step_x_mm + grid.overlap_mm
    total_h = grid.rows * grid.step_y_mm + grid.overlap_mm
    scale = min(max_width_mm / total_w, max_height_mm / total_h)
    root = _svg_root(total_w * scale, total_h * scale, (0, 0, total_w, total_h), "assembly-map")
    for piece in sheet.pieces:
        g = ET.SubElement(root, "g", {"transform": f"translate({_n(piece.dx)} {_n(piece.dy)})"})
        _line(g, _d(_thin(piece.cutting, 0.5), True), "#606060", 0.3 / scale)
    for tile in grid.tiles():
        ET.SubElement(root, "rect", {"x": _n(tile.x_mm), "y": _n(tile.y_mm), "width": _n(tile.width_mm),
                                     "height": _n(tile.height_mm), "fill": "none", "stroke": "#000000",
                                     "stroke-width": _n(0.3 / scale)})
        _text(root, tile.x_mm + tile.width_mm / 2, tile.y_mm + tile.height_mm / 2 + 1.5 / scale, tile.label,
              4.5 / scale, anchor="middle", weight="bold")
    return ET.tostring(root, encoding="unicode")


def sheet_grid(pattern: AlteredPattern, paper: str) -> tuple[Sheet, TileGrid]:
    sheet = lay_out(pattern)
    return sheet, tile_grid(sheet.width_mm, sheet.height_mm, paper, margin_mm=PAGE_MARGIN_MM)


def cutting_sheet_html(data: DocumentData, paper: str, pattern: AlteredPattern | None = None) -> str:
    pattern = pattern or altered_pattern(data)
    sheet, grid = sheet_grid(pattern, paper)
    tag = f"{data.client_label.split()[0]} rev. {data.revision_number}" if data.client_label else ""
    tiles = [{"label": t.label, "row": row_label(t.row), "column": t.column + 1,
              "neighbours": neighbours(grid, t.row, t.column),
              "src": svg_data_uri(tile_svg(sheet, grid, t.row, t.column)),
              "labels": [{"text": label.text, "bold": label.bold, "rule": f"l{i}-{j}", "left": _n(label.left_mm),
                          "top": _n(label.top_mm), "size": _n(label.size_mm)}
                         for j, label in enumerate(piece_labels(sheet, grid, t, tag))]}
             for i, t in enumerate(grid.tiles())]
    map_text = map_svg(sheet, grid)
    map_size = re.search(r'width="([0-9.]+)mm" height="([0-9.]+)mm"', map_text)
    context = {
        **_header(data),
        "paper": _paper_css(paper),
        "paper_label": grid.paper.label,
        "orientation": grid.orientation,
        "margin_mm": _n(grid.margin_mm),
        "title": f"Cutting sheet, {data.garment}, revision {data.revision_number}",
        "squares": [{"name": name, "src": svg_data_uri(square_svg(side, name, divisions)),
                     "size": _n(side + 2 * SQUARE_PAD_MM)} for _, side, name, divisions in TEST_SQUARES],
        "map": svg_data_uri(map_text),
        "map_width": map_size[1],
        "map_height": map_size[2],
        "rows": grid.rows,
        "columns": grid.columns,
        "tile_count": grid.count,
        "overlap": format_with_unit(grid.overlap_mm, data.unit),
        "seam_allowance": format_with_unit(data.block.seam_allowance_mm, data.unit),
        "tiles": tiles,
        "tile_width": _n(grid.printable_width_mm),
        "tile_height": _n(grid.printable_height_mm),
        "cautions": cautions(data),
    }
    return render_to_string("fittings/print/cutting_sheet.html", context)


def render_cutting_sheet(data: DocumentData, paper: str, pattern: AlteredPattern | None = None) -> bytes:
    return html_to_pdf(cutting_sheet_html(data, paper, pattern))


# --- both documents of one print -------------------------------------------------------


def render_documents(data: DocumentData, paper: str, *, work_order: bool = True,
                     cutting_sheet: bool = True) -> dict[str, bytes]:
    """The documents of one print job, by name.

    Both documents are drawn from the same outlines.  When both are wanted,
    the cutting sheet is drawn in a forked copy of this process while this
    one draws the work order, so a two-core machine answers in the time of
    the longer document instead of the sum.  Forking is only safe in a
    process with a single thread (the task worker); elsewhere, and with
    ATELIER_PRINT_PROCESSES=1, the two are drawn one after the other.
    """
    pattern = altered_pattern(data)
    files: dict[str, bytes] = {}
    pending = None
    if work_order and cutting_sheet and may_fork():
        pending = _in_forked_process(lambda: render_cutting_sheet(data, paper, pattern))
        logger.debug("Drawing the cutting sheet in a second process beside the work order.")
    elif cutting_sheet:
        files["cutting_sheet"] = render_cutting_sheet(data, paper, pattern)
    try:
        if work_order:
            files["work_order"] = render_work_order(data, paper, pattern)
    finally:
        if pending is not None:
            files["cutting_sheet"] = pending()
    return files


def may_fork() -> bool:
    """Whether a print may draw its cutting sheet in a forked copy of this process."""
    return settings.ATELIER_PRINT_PROCESSES > 1 and hasattr(os, "fork") and threading.active_count() == 1


def _in_forked_process(make):
    """Start ``make`` in a child process; returns a function that waits for its bytes (or raises)."""
    read_end, write_end = os.pipe()
    pid = os.fork()
    if pid == 0:  # the child: draw, send the bytes or the reason, and leave without any clean-up
        code = 0
        try:
            os.close(read_end)
            try:
                answer = pickle.dumps((True, make()))
            except BaseException as exc:  # noqa: BLE001  (reported to the parent in words)
                answer, code = pickle.dumps((False, f"{type(exc).__name__}: {exc}")), 1
            with os.fdopen(write_end, "wb") as pipe:
                pipe.write(answer)
        finally:
            os._exit(code)
    os.close(write_end)

    def wait() -> bytes:
        with os.fdopen(read_end, "rb") as pipe:
            answer = pipe.read()
        _, status = os.waitpid(pid, 0)
        if not answer:
            raise RuntimeError(f"The process drawing the cutting sheet stopped (status {status}).")
        ok, value = pickle.loads(answer)
        if not ok:
            raise RuntimeError(f"The cutting sheet could not be drawn ({value}).")
        return value

    return wait


def check_printable(data: DocumentData) -> None:
    """Refuse a plan the engine found errors in: the workroom must not cut from it."""
    errors = [f.message for f in data.result.findings if f.severity == ERROR]
    if errors:
        raise DocumentError("This revision has problems to resolve before it can be printed: " + " ".join(errors))
