"""The cutting sheet as a PDF: the tiles drawn by patterns.core.sheets, set in the page template.

WeasyPrint writes the SVG millimetres as vector paths in PDF points of
1/72 in (ISO 32000-1, 8.3.2.3), so the pieces print at true size.
"""

from __future__ import annotations

import re

from django.template.loader import render_to_string

from fittings.printing.data import DocumentData, _header, _paper_css, altered_pattern, cautions
from fittings.printing.engine import html_to_pdf, svg_data_uri
from patterns.core.export import _n
from patterns.core.outline import AlteredPattern
from patterns.core.sheets import (
    SQUARE_PAD_MM,
    TEST_SQUARES,
    map_svg,
    neighbours,
    piece_labels,
    sheet_grid,
    square_svg,
    tile_svg,
)
from patterns.core.tiling import row_label
from patterns.core.units import format_with_unit


def cutting_sheet_html(data: DocumentData, paper: str, pattern: AlteredPattern | None = None) -> str:
    pattern = pattern or altered_pattern(data)
    sheet, grid = sheet_grid(pattern, paper)
    tag = f"{data.client_label.split()[0]} rev. {data.revision_number}" if data.client_label else ""
    tiles = [
        {
            "label": t.label,
            "row": row_label(t.row),
            "column": t.column + 1,
            "neighbours": neighbours(grid, t.row, t.column),
            "src": svg_data_uri(tile_svg(sheet, grid, t.row, t.column)),
            "labels": [
                {
                    "text": label.text,
                    "bold": label.bold,
                    "rule": f"l{i}-{j}",
                    "left": _n(label.left_mm),
                    "top": _n(label.top_mm),
                    "size": _n(label.size_mm),
                }
                for j, label in enumerate(piece_labels(sheet, grid, t, tag))
            ],
        }
        for i, t in enumerate(grid.tiles())
    ]
    map_text = map_svg(sheet, grid)
    map_size = re.search(r'width="([0-9.]+)mm" height="([0-9.]+)mm"', map_text)
    context = {
        **_header(data),
        "paper": _paper_css(paper),
        "paper_label": grid.paper.label,
        "orientation": grid.orientation,
        "margin_mm": _n(grid.margin_mm),
        "title": f"Cutting sheet, {data.garment}, revision {data.revision_number}",
        "squares": [
            {"name": name, "src": svg_data_uri(square_svg(side, name, divisions)), "size": _n(side + 2 * SQUARE_PAD_MM)}
            for _, side, name, divisions in TEST_SQUARES
        ],
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
