"""Pattern pieces as drawing files: a revision's altered panels and a base pattern's own, as SVG or DXF.

Reads only.  Both files are written by patterns.core.export at true size in
millimetres, with the level lines on, so a file read back by the block
importer gives the pieces it came from.
"""

import re
from dataclasses import dataclass

from fittings import previews, selectors
from patterns.core.export import dxf_bytes, svg_text
from patterns.core.outline import base_outlines
from patterns.selectors import block_for

FORMATS = {"svg": "image/svg+xml", "dxf": "application/dxf"}


@dataclass(frozen=True)
class PieceFile:
    content: bytes
    filename: str
    content_type: str


def _safe(text: str) -> str:
    return re.sub(r"[^A-Za-z0-9]+", "-", text).strip("-").lower() or "pieces"


def _file(outlines, fmt: str, title: str, stem: str, unit: str) -> PieceFile:
    if fmt not in FORMATS:
        raise ValueError(f"Unknown drawing format {fmt!r}; use svg or dxf.")
    if fmt == "svg":
        content = svg_text(outlines, title=title, test_square=unit, level_lines=True).encode("utf-8")
    else:
        content = dxf_bytes(outlines, level_lines=True)
    return PieceFile(content, f"{stem}.{fmt}", FORMATS[fmt])


def revision_pieces(revision, fmt: str) -> PieceFile:
    """The altered panels of a saved revision, from its stored result (never recomputed)."""
    plan = revision.plan
    _, block, options = selectors.revision_inputs(revision)
    result = selectors.revision_result(revision)
    outlines = previews.altered_for(block, result).altered
    title = f"{plan.client.reference} {plan.garment}, revision {revision.number}: {block.name}, size {block.size}"
    stem = f"{plan.client.reference}-plan{plan.pk}-rev{revision.number}-pieces"
    return _file(outlines, fmt, title, stem, options.unit)


def pattern_pieces(pattern, fmt: str) -> PieceFile:
    """A base pattern's panels as drafted (no alteration)."""
    block = block_for(pattern)
    title = f"{block.name}, size {block.size} (base pattern)"
    return _file(base_outlines(block), fmt, title, f"{_safe(block.name)}-size-{_safe(block.size)}", "cm")
