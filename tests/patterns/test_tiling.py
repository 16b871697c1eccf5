"""Paper sizes and the tile grid of the cutting sheet (pure: no Django)."""

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from patterns.core.tiling import (
    LANDSCAPE,
    OVERLAP_MM,
    PAGE_MARGIN_MM,
    PAPER_SIZES,
    PORTRAIT,
    TilingError,
    grid_for,
    page_size,
    paper_size,
    row_label,
    tile_grid,
    tile_label,
    tiles_needed,
)

MM_PER_INCH = 25.4  # exact: 1959 international yard and pound agreement


def test_it_knows_a4_and_letter():
    # ISO 216: A4 is 210 x 297 mm.
    assert (PAPER_SIZES["a4"].width_mm, PAPER_SIZES["a4"].height_mm) == (210.0, 297.0)
    # ANSI/ASME Y14.1: US Letter is 8.5 x 11 in.
    letter = PAPER_SIZES["letter"]
    assert letter.width_mm == pytest.approx(8.5 * MM_PER_INCH, abs=1e-9)
    assert letter.height_mm == pytest.approx(11 * MM_PER_INCH, abs=1e-9)


def test_it_turns_the_page_for_landscape():
    a4 = paper_size("a4")
    assert page_size(a4, PORTRAIT) == (210.0, 297.0)
    assert page_size(a4, LANDSCAPE) == (297.0, 210.0)


def test_it_refuses_unknown_papers_and_orientations():
    with pytest.raises(TilingError, match="Unknown paper size 'a3'"):
        paper_size("a3")
    with pytest.raises(TilingError, match="orientation"):
        page_size(paper_size("a4"), "sideways")


@pytest.mark.parametrize(
    ("extent", "printable", "overlap", "expected"),
    [
        (100, 190, 10, 1),
        (190, 190, 10, 1),  # exactly one page
        (190.001, 190, 10, 2),
        (370, 190, 10, 2),  # 190 + 180: two pages, the second exactly full
        (370.5, 190, 10, 3),
        (700, 190, 10, 4),  # 190 + 3 x 180 = 730 >= 700 > 550
        (10, 190, 0, 1),
        (1000, 100, 0, 10),
    ],
)
def test_it_counts_the_tiles_a_length_needs(extent, printable, overlap, expected):
    assert tiles_needed(extent, printable, overlap) == expected


def test_it_refuses_an_overlap_as_large_as_the_page():
    with pytest.raises(TilingError, match="larger than the overlap"):
        tiles_needed(500, 10, 10)


@pytest.mark.parametrize(
    ("row", "label"),
    [
        (0, "A"),
        (1, "B"),
        (25, "Z"),
        (26, "AA"),
        (27, "AB"),
        (51, "AZ"),
        (52, "BA"),
        (701, "ZZ"),
        (702, "AAA"),
    ],
)
def test_it_letters_rows_like_a_spreadsheet(row, label):
    assert row_label(row) == label


def test_it_labels_tiles_by_row_letter_and_column_number():
    assert tile_label(0, 0) == "A1"
    assert tile_label(1, 2) == "B3"
    assert tile_label(26, 9) == "AA10"
    with pytest.raises(TilingError):
        row_label(-1)


def test_it_chooses_the_orientation_that_needs_fewer_pages():
    # A wide, low sheet: 700 x 180 mm.  A4 portrait prints 190 x 277 mm per page,
    # landscape 277 x 190 (10 mm margins); overlap 10 mm.
    wide = tile_grid(700, 180, "a4")
    assert (wide.orientation, wide.columns, wide.rows) == (LANDSCAPE, 3, 1)  # 277 + 2 x 267 = 811 >= 700
    # The same sheet turned: portrait wins.
    tall = tile_grid(180, 700, "a4")
    assert (tall.orientation, tall.columns, tall.rows) == (PORTRAIT, 1, 3)


def test_it_keeps_portrait_when_both_need_the_same():
    grid = tile_grid(100, 100, "letter")
    assert (grid.orientation, grid.count) == (PORTRAIT, 1)


def test_it_places_tiles_overlapping_by_the_overlap():
    grid = grid_for(500, 500, paper_size("a4"), PORTRAIT)
    # Printable 190 x 277 mm, so steps of 180 and 267 mm.
    assert (grid.printable_width_mm, grid.printable_height_mm) == (190.0, 277.0)
    assert (grid.step_x_mm, grid.step_y_mm) == (180.0, 267.0)
    b3 = grid.tile(1, 2)
    assert (b3.label, b3.x_mm, b3.y_mm, b3.width_mm, b3.height_mm) == ("B3", 360.0, 267.0, 190.0, 277.0)
    a2 = grid.tile(0, 1)
    a1 = grid.tile(0, 0)
    assert a1.x_mm + a1.width_mm - a2.x_mm == pytest.approx(OVERLAP_MM)
    assert grid.column_joins() == (185.0, 365.0)
    assert grid.row_joins() == (272.0,)
    assert [t.label for t in grid.tiles()] == ["A1", "A2", "A3", "B1", "B2", "B3"]
    with pytest.raises(TilingError):
        grid.tile(2, 0)


@pytest.mark.parametrize(("width", "height"), [(0, 100), (100, -1), (math.inf, 100), (math.nan, 100)])
def test_it_refuses_a_sheet_without_size(width, height):
    with pytest.raises(TilingError, match="positive, finite"):
        tile_grid(width, height, "a4")


@settings(max_examples=200, deadline=None)
@given(
    width=st.floats(1, 3000, allow_nan=False),
    height=st.floats(1, 3000, allow_nan=False),
    paper=st.sampled_from(sorted(PAPER_SIZES)),
)
def test_it_covers_the_whole_sheet_with_the_fewest_tiles(width, height, paper):
    grid = tile_grid(width, height, paper)
    # Every tile is the page less its margins.
    page_w, page_h = page_size(grid.paper, grid.orientation)
    assert grid.printable_width_mm == pytest.approx(page_w - 2 * PAGE_MARGIN_MM)
    # The last row and column reach the sheet's far edges ...
    last = grid.tile(grid.rows - 1, grid.columns - 1)
    assert last.x_mm + last.width_mm >= width - 1e-6
    assert last.y_mm + last.height_mm >= height - 1e-6
    # ... and one fewer would not.
    if grid.columns > 1:
        assert (grid.columns - 2) * grid.step_x_mm + grid.printable_width_mm < width
    if grid.rows > 1:
        assert (grid.rows - 2) * grid.step_y_mm + grid.printable_height_mm < height
    # The other orientation never needs fewer pages.
    other = LANDSCAPE if grid.orientation == PORTRAIT else PORTRAIT
    assert grid.count <= grid_for(width, height, grid.paper, other).count
