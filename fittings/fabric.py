"""Fabric layouts for pages and printouts: reading the stored layouts, and drawing them (SVG).

Reads only; the writes are in ``fittings/services/layouts.py``.  The drawing
is the app's own: one SVG unit to the millimetre, the fabric drawn as it lies
on the cutting table, selvedges left and right and its length running down
the page (the fabric's own coordinates, so a mirrored piece looks mirrored),
each piece's grainline as an arrow along the length.  Colours
are presentation attributes (no style attributes, which the Content
Security Policy refuses); classes let the site's style sheet restyle it on
screen.
"""

from __future__ import annotations

from dataclasses import dataclass
from xml.etree import ElementTree as ET

from shapely.geometry import Polygon

from fittings.models import FabricLayout, LayoutStatus
from patterns.core.layout import (
    DEFAULT_GAP_MM,
    DEFAULT_WIDTH_MM,
    SHELF,
    LayerRequest,
    Layout,
    best_of,
    cut_pieces,
    default_layers,
    layer_label,
    shelf_layers,
)
from patterns.core.units import format_with_unit

PIECE_FILL, MIRRORED_FILL, PIECE_LINE, FABRIC_LINE = "#DCE9F5", "#F5E6D3", "#1A1A1A", "#808080"
LABEL_MM = 22.0
GRAIN_HEAD_MM = 12.0
# The largest a drawing is printed: inside the work order's text width on A4 and letter, and short
# enough to keep a drawing and its heading on one page.
PRINT_BOX_MM = (170.0, 115.0)
METHOD_WORDS = {SHELF: "rows across the fabric", "solver": "nested by the solver"}


def _n(v: float) -> str:
    text = f"{v:.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def layout_svg(
    layout: Layout, title: str = "", cls: str = "fabric-layout", fit_mm: tuple[float, float] | None = None
) -> str:
    """The layout drawn at one unit to the millimetre: across the fabric left to right, its length downwards.

    The drawing says it is as large as the fabric, or, with ``fit_mm`` (width, height), the largest it can
    be within that box (for paper, where no style sheet sizes it).
    """
    w, length = layout.width_mm, max(layout.length_mm, 1.0)
    pad = 10.0
    box_w, box_h = w + 2 * pad, length + 2 * pad
    scale = min(fit_mm[0] / box_w, fit_mm[1] / box_h) if fit_mm else 1.0
    root = ET.Element(
        "svg",
        {
            "xmlns": "http://www.w3.org/2000/svg",
            "class": cls,
            "viewBox": f"{_n(-pad)} {_n(-pad)} {_n(box_w)} {_n(box_h)}",
            "width": f"{_n(box_w * scale)}mm",
            "height": f"{_n(box_h * scale)}mm",
            "role": "img",
        },
    )
    if title:
        ET.SubElement(root, "title").text = title
    ET.SubElement(
        root,
        "rect",
        {
            "class": "fabric",
            "x": "0",
            "y": "0",
            "width": _n(w),
            "height": _n(length),
            "fill": "#FFFFFF",
            "stroke": FABRIC_LINE,
            "stroke-width": "1.5",
            "stroke-dasharray": "8 4",
        },
    )
    for placement, outline in layout.outlines():
        piece = layout.piece(placement.piece)
        g = ET.SubElement(root, "g", {"class": "piece mirrored" if placement.mirrored else "piece"})
        ET.SubElement(g, "title").text = piece.name + (", turned half round" if placement.rotation else "")
        ET.SubElement(
            g,
            "polygon",
            {
                "points": " ".join(f"{_n(x)},{_n(y)}" for x, y in outline),
                "fill": MIRRORED_FILL if placement.mirrored else PIECE_FILL,
                "stroke": PIECE_LINE,
                "stroke-width": "1",
            },
        )
        c = Polygon(outline).representative_point()
        ys = [y for _, y in outline]
        span = max(ys) - min(ys)
        x, y0, y1, h = c.x + 1.3 * LABEL_MM, c.y - 0.3 * span, c.y + 0.3 * span, GRAIN_HEAD_MM
        ET.SubElement(
            g,
            "path",
            {  # the grainline, along the selvedge, arrowheads at both ends
                "class": "grain",
                "fill": "none",
                "stroke": PIECE_LINE,
                "stroke-width": "1",
                "d": (
                    f"M{_n(x)} {_n(y0)}L{_n(x)} {_n(y1)}M{_n(x - h / 2)} {_n(y0 + h)}L{_n(x)} {_n(y0)}"
                    f"L{_n(x + h / 2)} {_n(y0 + h)}M{_n(x - h / 2)} {_n(y1 - h)}L{_n(x)} {_n(y1)}L{_n(x + h / 2)} {_n(y1 - h)}"
                ),
            },
        )
        label = ET.SubElement(
            g,
            "text",
            {
                "x": _n(c.x - 0.2 * LABEL_MM),
                "y": _n(c.y + LABEL_MM / 3),
                "font-size": _n(LABEL_MM),
                "font-family": "DejaVu Sans",
                "text-anchor": "middle",
                "fill": PIECE_LINE,
            },
        )
        label.text = _short(piece.panel, placement.mirrored)
    return ET.tostring(root, encoding="unicode")


def _short(panel: str, mirrored: bool) -> str:
    initials = "".join(word[0].upper() for word in panel.split())
    return initials + ("′" if mirrored else "")


@dataclass(frozen=True)
class LayerLayout:
    """One layer's layout to show: the one taking least fabric, and the rows layout it is measured against."""

    layer: str
    shown: Layout
    shelf: Layout

    @property
    def label(self) -> str:
        return layer_label(self.layer)

    def improvement(self) -> float:
        """Utilisation of the shown layout over the rows layout's, less one."""
        return self.shown.utilisation / self.shelf.utilisation - 1 if self.shelf.utilisation else 0.0


def latest_layout(revision) -> FabricLayout | None:
    return FabricLayout.objects.filter(revision=revision).first()


def _layouts(entries) -> dict[str, Layout]:
    return {e["layer"]: Layout.from_dict(e["layout"]) for e in entries or ()}


def job_layers(job: FabricLayout) -> list[LayerLayout]:
    """Per layer of a request: the solver's layout once done (if it takes less fabric), else the rows."""
    shelf = _layouts(job.shelf)
    solved = _layouts(job.solved) if job.status == LayoutStatus.DONE else {}
    out = []
    for entry in job.layers:
        layer = entry["layer"]
        rows = shelf[layer]
        shown = best_of(rows, solved[layer]) if layer in solved else rows
        out.append(LayerLayout(layer, shown, rows))
    return out


def default_print_layers(block, outlines) -> list[LayerLayout]:
    """Rows layouts on fabric of the default width, for a work order printed before any layout was asked for."""
    pieces = cut_pieces(outlines)
    requests = [LayerRequest(code, DEFAULT_WIDTH_MM) for code in default_layers(block.garment)]
    try:
        results = shelf_layers(pieces, requests, DEFAULT_GAP_MM)
    except ValueError:
        return []
    return [LayerLayout(r.layer, r.shelf, r.shelf) for r in results]


def print_layers(revision) -> tuple[LayerLayout, ...]:
    """The layouts the work order shows: the newest request finished for this revision, else its rows layout."""
    done = FabricLayout.objects.filter(revision=revision, status=LayoutStatus.DONE).first()
    job = done or latest_layout(revision)
    return tuple(job_layers(job)) if job is not None else ()


def layer_rows(layers, unit: str, drawn: bool = True) -> list[dict]:
    """What the page and the work order show per layer, lengths in the plan's unit."""
    rows = []
    for lay in layers:
        shown = lay.shown
        rows.append(
            {
                "layer": lay.layer,
                "label": lay.label,
                "width": format_with_unit(shown.width_mm, unit),
                "gap": format_with_unit(shown.gap_mm, unit),
                "length": format_with_unit(shown.length_mm, unit),
                "utilisation": f"{100 * shown.utilisation:.1f} %",
                "method": METHOD_WORDS.get(shown.method, shown.method),
                "note": shown.note,
                "shelf_length": format_with_unit(lay.shelf.length_mm, unit),
                "shelf_utilisation": f"{100 * lay.shelf.utilisation:.1f} %",
                "improved": shown is not lay.shelf and shown.length_mm < lay.shelf.length_mm,
                "improvement": f"{100 * lay.improvement():.1f} %",
                "pieces": len(shown.placements),
            }
        )
        if drawn:
            rows[-1]["svg"] = layout_svg(
                shown,
                f"{lay.label}: {len(shown.placements)} pieces on fabric {format_with_unit(shown.width_mm, unit)} wide",
            )
    return rows


def fabric_layout_context(data, pattern) -> dict:
    """The work order's fabric layout section (templates/fittings/print/_fabric_layout.html).

    Layers laid out alike (the same width, the same places) share one drawing: each drawing costs
    WeasyPrint about as much as a table, and the default layers all take the same rows layout.
    """
    import base64
    import json

    layers = data.fabric_layouts or tuple(default_print_layers(data.block, pattern.altered))
    rows = layer_rows(layers, data.unit, drawn=False)
    drawings: dict[str, dict] = {}
    for lay, row in zip(layers, rows):
        key = json.dumps([lay.shown.width_mm, [p.to_dict() for p in lay.shown.placements]])
        if key not in drawings:
            svg = layout_svg(lay.shown, cls="fabric-layout print", fit_mm=PRINT_BOX_MM)
            drawings[key] = {
                "labels": [],
                "width": row["width"],
                "length": row["length"],
                "src": "data:image/svg+xml;base64," + base64.b64encode(svg.encode("utf-8")).decode("ascii"),
            }
        drawings[key]["labels"].append(row["label"])
    for drawing in drawings.values():
        names = drawing.pop("labels")
        drawing["layers"] = names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]
    return {
        "fabric_layouts": rows,
        "fabric_drawings": list(drawings.values()),
        "fabric_layout_asked": bool(data.fabric_layouts),
    }
