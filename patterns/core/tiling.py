"""Paper sizes and the grid of tiles that prints a large sheet on a home or office printer.

Plain data, millimetres throughout.  A sheet ``width_mm`` by ``height_mm`` is
cut into equal tiles, each the printable area of one page.  Neighbouring
tiles share a strip ``overlap_mm`` wide, so the printed pages can be laid
over each other and taped with their alignment marks matching.

Tile (row, column) shows the sheet from ``column * step_x`` to
``column * step_x + printable_width`` across, where ``step_x`` is the
printable width less the overlap; likewise down.  Rows are lettered from
the top (A, B, ...), columns numbered from the left (1, 2, ...): tile "B3"
is the second row, third column.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

PORTRAIT, LANDSCAPE = "portrait", "landscape"


@dataclass(frozen=True)
class PaperSize:
    code: str
    label: str
    width_mm: float  # portrait
    height_mm: float
    size_text: str = ""  # as the paper is sold
    css_name: str = ""  # CSS Paged Media's name for the page size


# ISO 216: A4 is 210 x 297 mm.  ANSI/ASME Y14.1: US Letter is 8.5 x 11 in,
# which is 215.9 x 279.4 mm at 25.4 mm to the inch (exact, 1959 agreement).
PAPER_SIZES = {
    "a4": PaperSize("a4", "A4", 210.0, 297.0, "210 × 297 mm", "A4"),
    "letter": PaperSize("letter", "US Letter", 215.9, 279.4, "8.5 × 11 in", "letter"),
}
PAPER_CHOICES = [(paper.code, f"{paper.label} ({paper.size_text})") for paper in PAPER_SIZES.values()]

# Most desktop printers cannot print the outer 4-6 mm of a page (common
# practice, from memory); 10 mm keeps every mark on the paper.
PAGE_MARGIN_MM = 10.0
# Each tile repeats this much of its neighbour, for laying pages over each
# other (common practice for tiled patterns).
OVERLAP_MM = 10.0


class TilingError(ValueError):
    """A sheet or a page that cannot be tiled."""


def paper_size(code: str) -> PaperSize:
    try:
        return PAPER_SIZES[code]
    except KeyError:
        raise TilingError(f"Unknown paper size {code!r}; use {' or '.join(PAPER_SIZES)}.") from None


def page_size(paper: PaperSize, orientation: str) -> tuple[float, float]:
    """Width and height of the page in mm, as it lies in ``orientation``."""
    if orientation == PORTRAIT:
        return paper.width_mm, paper.height_mm
    if orientation == LANDSCAPE:
        return paper.height_mm, paper.width_mm
    raise TilingError(f"Unknown orientation {orientation!r}; use {PORTRAIT} or {LANDSCAPE}.")


def tiles_needed(extent_mm: float, printable_mm: float, overlap_mm: float) -> int:
    """How many tiles of ``printable_mm``, overlapping by ``overlap_mm``, cover ``extent_mm``."""
    if printable_mm <= overlap_mm:
        raise TilingError("The printable area must be larger than the overlap.")
    if extent_mm <= printable_mm:
        return 1
    return 1 + math.ceil((extent_mm - printable_mm) / (printable_mm - overlap_mm) - 1e-9)


def row_label(row: int) -> str:
    """0 -> "A", 25 -> "Z", 26 -> "AA": spreadsheet-style letters."""
    if row < 0:
        raise TilingError("A row number cannot be negative.")
    letters = ""
    row += 1
    while row:
        row, rest = divmod(row - 1, 26)
        letters = chr(ord("A") + rest) + letters
    return letters


def tile_label(row: int, column: int) -> str:
    """Row letter then column number, both from the top left: (1, 2) -> "B3"."""
    return f"{row_label(row)}{column + 1}"


@dataclass(frozen=True)
class Tile:
    row: int
    column: int
    label: str
    x_mm: float  # left edge of the part of the sheet this tile shows
    y_mm: float  # top edge
    width_mm: float
    height_mm: float


@dataclass(frozen=True, kw_only=True)
class PrintedPage:
    """A page as it is printed: its size in its orientation, and the area inside its margins."""

    orientation: str
    page_width_mm: float
    page_height_mm: float
    margin_mm: float

    @property
    def printable_width_mm(self) -> float:
        return self.page_width_mm - 2 * self.margin_mm

    @property
    def printable_height_mm(self) -> float:
        return self.page_height_mm - 2 * self.margin_mm


@dataclass(frozen=True, kw_only=True)
class TileGrid(PrintedPage):
    paper: PaperSize
    overlap_mm: float
    sheet_width_mm: float
    sheet_height_mm: float
    rows: int
    columns: int

    @property
    def step_x_mm(self) -> float:
        return self.printable_width_mm - self.overlap_mm

    @property
    def step_y_mm(self) -> float:
        return self.printable_height_mm - self.overlap_mm

    @property
    def count(self) -> int:
        return self.rows * self.columns

    def tile(self, row: int, column: int) -> Tile:
        if not (0 <= row < self.rows and 0 <= column < self.columns):
            raise TilingError(f"There is no tile at row {row}, column {column}.")
        return Tile(
            row,
            column,
            tile_label(row, column),
            column * self.step_x_mm,
            row * self.step_y_mm,
            self.printable_width_mm,
            self.printable_height_mm,
        )

    def tiles(self) -> tuple[Tile, ...]:
        """Row by row from the top, each row from the left: the order the pages print in."""
        return tuple(self.tile(r, c) for r in range(self.rows) for c in range(self.columns))

    def column_joins(self) -> tuple[float, ...]:
        """x of the middle of each overlap strip between neighbouring columns."""
        return tuple((c + 1) * self.step_x_mm + self.overlap_mm / 2 for c in range(self.columns - 1))

    def row_joins(self) -> tuple[float, ...]:
        """y of the middle of each overlap strip between neighbouring rows."""
        return tuple((r + 1) * self.step_y_mm + self.overlap_mm / 2 for r in range(self.rows - 1))


def grid_for(
    width_mm: float,
    height_mm: float,
    paper: PaperSize,
    orientation: str,
    *,
    margin_mm: float = PAGE_MARGIN_MM,
    overlap_mm: float = OVERLAP_MM,
) -> TileGrid:
    """The grid for one orientation of the page."""
    if not (width_mm > 0 and height_mm > 0) or not (math.isfinite(width_mm) and math.isfinite(height_mm)):
        raise TilingError("A sheet to tile must have a positive, finite width and height.")
    if margin_mm < 0 or overlap_mm < 0:
        raise TilingError("Margins and overlaps cannot be negative.")
    page_w, page_h = page_size(paper, orientation)
    printable_w, printable_h = page_w - 2 * margin_mm, page_h - 2 * margin_mm
    return TileGrid(
        paper=paper,
        orientation=orientation,
        page_width_mm=page_w,
        page_height_mm=page_h,
        margin_mm=margin_mm,
        overlap_mm=overlap_mm,
        sheet_width_mm=width_mm,
        sheet_height_mm=height_mm,
        rows=tiles_needed(height_mm, printable_h, overlap_mm),
        columns=tiles_needed(width_mm, printable_w, overlap_mm),
    )


def tile_grid(
    width_mm: float,
    height_mm: float,
    paper: PaperSize | str,
    *,
    margin_mm: float = PAGE_MARGIN_MM,
    overlap_mm: float = OVERLAP_MM,
) -> TileGrid:
    """The grid that needs fewer pages: portrait or landscape (portrait when equal)."""
    if isinstance(paper, str):
        paper = paper_size(paper)
    grids = [
        grid_for(width_mm, height_mm, paper, o, margin_mm=margin_mm, overlap_mm=overlap_mm)
        for o in (PORTRAIT, LANDSCAPE)
    ]
    return min(grids, key=lambda g: g.count)


# --- one sheet for large-format printing ------------------------------------------------

# ISO 216: A0 is 841 x 1189 mm.
A0 = PaperSize("a0", "A0", 841.0, 1189.0, "841 × 1189 mm", "A0")


@dataclass(frozen=True)
class LargeFormat:
    """A sheet printed whole: a fixed sheet (A0, at a copy shop) or a plotter roll cut to length."""

    code: str
    label: str
    width_mm: float
    height_mm: float | None  # None: a roll, as long as the pieces need


LARGE_FORMATS = {
    "a0": LargeFormat("a0", "A0 sheet, 841 × 1189 mm (copy shop)", A0.width_mm, A0.height_mm),
    # Plotter rolls commonly come 914 mm (36 in) and 610 mm (24 in) wide (common practice).
    "roll-914": LargeFormat("roll-914", "Plotter roll, 914 mm wide", 914.0, None),
    "roll-610": LargeFormat("roll-610", "Plotter roll, 610 mm wide", 610.0, None),
}


def large_format(code: str) -> LargeFormat:
    try:
        return LARGE_FORMATS[code]
    except KeyError:
        raise TilingError(f"Unknown large format {code!r}; use {', '.join(LARGE_FORMATS)}.") from None


def shelf_rows(
    sizes: list[tuple[float, float]], width_mm: float, gap_mm: float
) -> tuple[list[tuple[float, float]], float, float]:
    """Boxes in order, left to right in rows no wider than ``width_mm``, rows ``gap_mm`` apart.

    Returns the top-left corner of each box and the width and height used.
    """
    offsets, x, y, row_h, used_w = [], 0.0, 0.0, 0.0, 0.0
    for w, h in sizes:
        if w > width_mm + 1e-9:
            raise TilingError(f"A piece {w:.0f} mm wide does not fit across {width_mm:.0f} mm.")
        if x > 0 and x + w > width_mm + 1e-9:
            x, y, row_h = 0.0, y + row_h + gap_mm, 0.0
        offsets.append((x, y))
        used_w = max(used_w, x + w)
        row_h = max(row_h, h)
        x += w + gap_mm
    return offsets, used_w, (y + row_h if sizes else 0.0)


@dataclass(frozen=True, kw_only=True)
class LargeSheet(PrintedPage):
    format: LargeFormat
    header_mm: float  # room at the top of the printable area for the title and test squares
    offsets: tuple[tuple[float, float], ...]  # each box's top-left, in the printable area


def large_sheet(
    fmt: LargeFormat | str,
    sizes: list[tuple[float, float]],
    *,
    header_mm: float,
    gap_mm: float = 10.0,
    margin_mm: float = PAGE_MARGIN_MM,
) -> LargeSheet:
    """Where each box goes on one large sheet, below a header.

    A fixed sheet lies portrait when everything fits so, else landscape, else
    it is refused (the roll takes any length).  A roll is as long as the
    boxes need, to the next whole millimetre.
    """
    if isinstance(fmt, str):
        fmt = large_format(fmt)

    def sheet(orientation: str, page_w: float, page_h: float, offsets: list[tuple[float, float]]) -> LargeSheet:
        return LargeSheet(
            format=fmt,
            orientation=orientation,
            page_width_mm=page_w,
            page_height_mm=page_h,
            margin_mm=margin_mm,
            header_mm=header_mm,
            offsets=tuple((x, header_mm + gap_mm + y) for x, y in offsets),
        )

    if fmt.height_mm is None:
        offsets, _, used_h = shelf_rows(sizes, fmt.width_mm - 2 * margin_mm, gap_mm)
        length = math.ceil(header_mm + gap_mm + used_h + 2 * margin_mm - 1e-9)
        return sheet(PORTRAIT, fmt.width_mm, float(length), offsets)
    for orientation in (PORTRAIT, LANDSCAPE):
        page_w, page_h = page_size(PaperSize(fmt.code, fmt.label, fmt.width_mm, fmt.height_mm), orientation)
        try:
            offsets, _, used_h = shelf_rows(sizes, page_w - 2 * margin_mm, gap_mm)
        except TilingError:
            continue
        if header_mm + gap_mm + used_h <= page_h - 2 * margin_mm + 1e-9:
            return sheet(orientation, page_w, page_h, offsets)
    raise TilingError(f"The pieces do not fit on one {fmt.label.split(',')[0]} sheet; print them on a plotter roll.")
