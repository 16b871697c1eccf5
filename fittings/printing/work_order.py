"""The work order: the revision's measurements, levels, shifts per raw edge, cut list and cautions."""

from __future__ import annotations

import io

import qrcode
from django.template.loader import render_to_string

from fittings.fabric import fabric_layout_context
from fittings.previews import preview_markers
from fittings.printing.data import (
    BODICE_LAYERS,
    CORSET_LAYERS,
    SEVERITY_WORDS,
    DocumentData,
    _fmt,
    _header,
    _paper_css,
    altered_pattern,
    cautions,
    document_data,
    shift_words,
)
from fittings.printing.engine import html_to_pdf, png_data_uri, svg_data_uri
from fittings.wording import in_unit
from patterns.core.defaults import is_corset
from patterns.core.findings import CAUTION
from patterns.core.measures import LEVEL_LABELS, MEASURES
from patterns.core.outline import AlteredPattern
from patterns.core.preview import markers_from_findings, preview_svg
from patterns.core.units import format_length, format_with_unit


def qr_png(url: str) -> bytes:
    """The address as a QR code, a small black-and-white PNG (four modules of quiet zone, as the QR standard asks).

    A raster keeps the PDF quick to draw; the template scales it up without smoothing.
    """
    image = qrcode.make(url, box_size=4, border=4, error_correction=qrcode.constants.ERROR_CORRECT_M)
    buffer = io.BytesIO()
    image.save(buffer, format="PNG")
    return buffer.getvalue()


def measurement_rows(data: DocumentData) -> list[dict]:
    unit = data.unit
    return [
        {"label": m.label, "value": format_length(data.measurements[m.code], unit)}
        for m in MEASURES
        if data.measurements.get(m.code) is not None
    ]


def _pairs(rows: list) -> list[list]:
    return [rows[i : i + 2] for i in range(0, len(rows), 2)]


def level_rows(data: DocumentData) -> list[dict]:
    unit = data.unit
    rows = []
    for lv in data.result.levels:
        rows.append(
            {
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
            }
        )
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
                cells.append(
                    {
                        "text": shift_words(edge.shift_mm, unit),
                        "note": note,
                        "kind": "out" if edge.shift_mm > 0 else ("in" if edge.shift_mm < 0 else ""),
                    }
                )
            rows.append({"seam": seam.name, "panel": panel, "cells": cells})
    return rows


def pin_rows(data: DocumentData) -> list[dict]:
    unit = data.unit
    rows = []
    for pin in data.options.pins:
        edges = [s for s in data.result.shifts if s.seam == pin.seam and s.level == pin.level and s.pin_mm]
        rows.append(
            {
                "seam": pin.seam,
                "level": LEVEL_LABELS.get(pin.level, pin.level),
                "amount": shift_words(pin.amount_mm, unit),
                "edges": "; ".join(f"{s.panel}: {shift_words(s.pin_mm, unit)}" for s in edges),
            }
        )
    return rows


def band_rows(data: DocumentData) -> list[str]:
    unit = data.unit
    rows = []
    for b in data.result.bands:
        if format_length(abs(b.change_mm), unit) in ("0.0", "0"):
            continue
        word = "lengthen" if b.change_mm > 0 else "shorten"
        rows.append(
            f"{LEVEL_LABELS.get(b.upper, b.upper)} to {LEVEL_LABELS.get(b.lower, b.lower)}: "
            f"{word} by {format_with_unit(abs(b.change_mm), unit)}"
        )
    return rows


def finding_rows(data: DocumentData, pattern: AlteredPattern) -> list[dict]:
    rows = [
        {"severity": SEVERITY_WORDS.get(f.severity, f.severity), "message": in_unit(f.message, data.unit)}
        for f in data.result.findings
        if f.severity != CAUTION
    ]
    rows += [
        {"severity": SEVERITY_WORDS.get(f.severity, f.severity), "message": in_unit(f.message, data.unit)}
        for f in pattern.findings
    ]
    return rows


def cut_rows(data: DocumentData) -> tuple[tuple[str, ...], list[dict]]:
    layers = CORSET_LAYERS if is_corset(data.block.garment) else BODICE_LAYERS
    rows = []
    for panel in data.block.panels:
        count = (
            f"{panel.cut_count} on the fold"
            if panel.on_fold
            else (f"{panel.cut_count} (a mirrored pair)" if panel.cut_count == 2 else str(panel.cut_count))
        )
        rows.append({"panel": panel.name, "count": count, "layers": [count for _ in layers]})
    return layers, rows


def _preview_data_uri(data: DocumentData, pattern: AlteredPattern) -> str:
    """The plan page's picture in vectors, less its amounts: the tables list them, and each label
    on the picture would cost WeasyPrint as much as a table cell."""
    markers = preview_markers(data.block, data.result) + markers_from_findings(pattern.findings)
    return svg_data_uri(
        preview_svg(
            data.block,
            data.result.alteration(data.block),
            markers=markers,
            unit=data.unit,
            pattern=pattern,
            amounts=False,
        )
    )


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
        "centre_front": (
            shift_words(data.result.centre_front_shift_mm, data.unit) if data.result.centre_front_shift_mm else ""
        ),
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


def work_order_pdf(revision, paper: str, base_url: str) -> bytes:
    return render_work_order(document_data(revision, base_url), paper)
