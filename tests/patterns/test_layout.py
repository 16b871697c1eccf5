"""Fabric layout: pieces from the cut list, the rows layout, the solver's layout.

Every layout is checked with shapely on the placed outlines themselves, not
read back from the code that made it: no two pieces overlap, every pair is
at least the gap apart, every piece keeps its grainline along the fabric
(turned 0 or 180 degrees only) and stays inside the width.  Keeping the
grainline parallel to the selvedge is common practice.
"""

from collections import namedtuple

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from shapely import affinity
from shapely.geometry import Polygon

from patterns.core.block import Alteration
from patterns.core.layout import (
    BODICE_LAYERS,
    CORSET_LAYERS,
    SHELF,
    SOLVER,
    SURROGATE_MARGIN_MM,
    LayerRequest,
    LayoutError,
    Placement,
    Progress,
    _surrogate,
    best_of,
    check_layers,
    cut_pieces,
    default_layers,
    layout_problems,
    length_lower_bound,
    placed_outline,
    shelf_layout,
    solve_layers,
    solve_layers_apart,
    solver_layout,
)
from patterns.core.outline import alter_block
from patterns.demo import bodice_block, corset_block, drawn_underbust_block

GAP = 5.0
TOL = 0.01


# What cut_pieces reads from an altered panel outline.
Outline = namedtuple("Outline", "name cutting cut_count on_fold", defaults=(2, False))


def rect(w, h, x=0.0, y=0.0):
    return ((x, y), (x + w, y), (x + w, y + h), (x, y + h))


def trapezoid(top, bottom, h):
    """Wider at the bottom, symmetric about its middle."""
    off = (bottom - top) / 2
    return ((off, 0.0), (off + top, 0.0), (bottom, h), (0.0, h))


def demo_pieces(block):
    return cut_pieces(alter_block(block, Alteration(shifts={})))


def assert_valid(layout, pieces=None):
    """The four rules, measured with shapely on the placed outlines."""
    placed = layout.outlines()
    by_name = {p.name: p for p in layout.pieces}
    count = sum(p.copies for p in (pieces or layout.pieces))
    assert len(placed) == count
    polys = []
    for placement, outline in placed:
        assert placement.rotation in (0, 180)
        poly = Polygon(outline)
        assert poly.is_valid
        # Grain kept: the placed piece is the piece as drafted, or turned half round, never at another angle.
        piece = Polygon(by_name[placement.piece].outline)
        expected = affinity.rotate(piece, placement.rotation, origin="centroid")
        expected = affinity.translate(
            expected, poly.bounds[0] - expected.bounds[0], poly.bounds[1] - expected.bounds[1]
        )
        assert poly.symmetric_difference(expected).area < 1e-6 * piece.area
        x0, y0, x1, y1 = poly.bounds
        assert x0 >= -TOL and x1 <= layout.width_mm + TOL
        assert y0 >= -TOL and y1 <= layout.length_mm + TOL
        polys.append(poly)
    for i, a in enumerate(polys):
        for b in polys[i + 1 :]:
            assert a.intersection(b).area == 0.0
            assert a.distance(b) >= layout.gap_mm - TOL
    assert layout_problems(layout) == []


# --- pieces ---------------------------------------------------------------------------


def test_it_cuts_a_half_pattern_cut_twice_as_a_piece_and_its_mirror():
    half = ((0.0, 0.0), (80.0, 0.0), (100.0, 300.0), (0.0, 300.0))  # not symmetric
    piece, mirror = cut_pieces([Outline("Side front", half, cut_count=2)])
    assert (piece.name, piece.mirrored, piece.copies) == ("Side front", False, 1)
    assert (mirror.name, mirror.mirrored, mirror.copies) == ("Side front, mirrored", True, 1)
    reflected = affinity.scale(Polygon(piece.outline), xfact=-1, origin=(50.0, 0.0))
    assert Polygon(mirror.outline).symmetric_difference(reflected).area < 1e-6
    # A mirror image is not the piece turned: a half turn does not give it.
    turned = affinity.rotate(Polygon(piece.outline), 180, origin="centroid")
    turned = affinity.translate(turned, -turned.bounds[0], -turned.bounds[1])
    assert Polygon(mirror.outline).symmetric_difference(turned).area > 100


def test_it_unfolds_a_piece_cut_on_the_fold_into_one_whole_symmetric_piece():
    half = ((0.0, 0.0), (60.0, 10.0), (70.0, 300.0), (0.0, 300.0))  # the fold is x = 0
    (piece,) = cut_pieces([Outline("Centre front", half, cut_count=1, on_fold=True)])
    assert piece.unfolded and not piece.mirrored and piece.copies == 1
    assert piece.width_mm == pytest.approx(140.0)
    assert piece.area_mm2 == pytest.approx(2 * Polygon(half).area)
    whole = Polygon(piece.outline)
    mirrored = affinity.scale(whole, xfact=-1, origin=(70.0, 0.0))
    assert whole.symmetric_difference(mirrored).area < 1e-6


def test_it_gives_pairs_and_one_more_for_an_odd_cut_count():
    pieces = cut_pieces([Outline("Gusset", rect(40, 100), cut_count=3)])
    assert [(p.name, p.copies) for p in pieces] == [("Gusset", 2), ("Gusset, mirrored", 1)]


def test_it_cuts_every_demo_panel_in_each_layer_as_the_cut_list_says():
    corset = demo_pieces(corset_block("10"))
    assert sum(p.copies for p in corset) == 12  # six panels, each a mirrored pair
    bodice = demo_pieces(bodice_block())
    assert sum(p.copies for p in bodice) == 7  # centre front on the fold, three pairs
    assert [p.name for p in bodice if p.unfolded] == ["Centre front, unfolded"]


def test_it_chooses_layers_by_garment():
    # Common practice: a corset has an outer fabric, a strength layer and a lining; a bodice an outer and a lining.
    assert default_layers("overbust corset") == CORSET_LAYERS == ("fashion", "strength", "lining")
    assert default_layers("bodice") == BODICE_LAYERS == ("fashion", "lining")


# --- the rows layout -------------------------------------------------------------------


def test_it_puts_two_rectangles_side_by_side_when_they_fit_with_the_gap():
    pieces = cut_pieces([Outline("A", rect(100, 200))])  # 100 x 200, cut twice
    layout = shelf_layout(pieces, width_mm=250, gap_mm=10)
    # 100 + 10 + 100 = 210 <= 250: one row, as long as one piece.
    assert layout.length_mm == pytest.approx(200.0)
    # By hand: 2 x (100 x 200) = 40,000 mm2 over 250 x 200 = 50,000 mm2.
    assert layout.pieces_area_mm2 == pytest.approx(40_000.0)
    assert layout.utilisation == pytest.approx(0.8)
    assert_valid(layout)


def test_it_starts_a_new_row_when_the_next_piece_does_not_fit():
    pieces = cut_pieces([Outline("A", rect(100, 200))])
    layout = shelf_layout(pieces, width_mm=205, gap_mm=10)
    # 210 > 205: two rows, 200 + 10 + 200 = 410 long.
    assert layout.length_mm == pytest.approx(410.0)
    assert layout.utilisation == pytest.approx(40_000 / (205 * 410))
    assert_valid(layout)


def test_it_places_the_tallest_pieces_first():
    pieces = cut_pieces([Outline("Short", rect(50, 100), 1), Outline("Tall", rect(50, 300), 1)])
    layout = shelf_layout(pieces, width_mm=120, gap_mm=5)
    first = layout.placements[0]
    assert (first.piece, first.x, first.y) == ("Tall", 0.0, 0.0)
    assert layout.length_mm == pytest.approx(300.0)


@pytest.mark.parametrize(
    "block",
    [corset_block("10"), corset_block("14"), bodice_block(), drawn_underbust_block()],
    ids=["corset-10", "corset-14", "bodice", "underbust-drawn"],
)
@pytest.mark.parametrize("width", [900.0, 1120.0, 1400.0])
def test_it_lays_the_demo_pieces_in_rows_keeping_every_rule(block, width):
    pieces = demo_pieces(block)
    layout = shelf_layout(pieces, width, GAP)
    assert layout.method == SHELF
    assert_valid(layout, pieces)
    assert 0 < layout.utilisation < 1
    # No layout is shorter than its tallest piece (the grain forbids turning it across).
    assert layout.length_mm >= max(p.height_mm for p in pieces) - TOL


def trapezoid_pieces(most: int):
    """Up to ``most`` trapezoids of any taper, cut 1 to 4 times, as pieces."""
    shape = st.tuples(st.floats(20, 150), st.floats(20, 150), st.floats(30, 400), st.integers(1, 4))
    return st.lists(shape, min_size=1, max_size=most).map(
        lambda shapes: cut_pieces(
            [Outline(f"P{i}", trapezoid(top, bottom, h), count) for i, (top, bottom, h, count) in enumerate(shapes)]
        )
    )


ANY_GAP, ANY_WIDTH = st.floats(0, 20), st.floats(160, 1500)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(trapezoid_pieces(8), ANY_GAP, ANY_WIDTH)
def test_it_never_overlaps_in_rows_whatever_the_pieces(pieces, gap, width):
    layout = shelf_layout(pieces, width, gap)
    assert_valid(layout, pieces)


# --- how short any layout can be ----------------------------------------------------------


def test_it_bounds_three_boxes_on_a_width_for_two_by_the_two_rows_they_need():
    # By hand: 400 + 400 + 400 mm across cannot fit 1000 mm, so two boxes stand one above the other
    # somewhere: 300 + 5 + 300 = 605 mm, which the rows layout reaches.
    pieces = cut_pieces([Outline("A", rect(400, 300), cut_count=3)])
    assert shelf_layout(pieces, 1000.0, GAP).length_mm == pytest.approx(605.0)
    assert length_lower_bound(pieces, 1000.0, GAP) == pytest.approx(605.0, abs=0.1)
    assert length_lower_bound(pieces, 1000.0, GAP) <= 605.0


def test_it_bounds_by_the_tallest_piece_where_no_stacking_is_forced():
    pieces = cut_pieces([Outline("A", rect(100, 300), cut_count=2)])
    assert length_lower_bound(pieces, 1000.0, GAP) == pytest.approx(300.0)


def test_it_counts_how_many_pieces_must_stand_one_above_another():
    # By hand: 8 boxes 200 mm wide take 1600 mm across, more than 6 widths of 250 mm, so some line
    # along the fabric crosses 7 of them: 7 x 100 + 6 x 5 = 730 mm (the area alone says 640).
    pieces = cut_pieces([Outline("B", rect(200, 100), cut_count=8)])
    assert length_lower_bound(pieces, 250.0, GAP) == pytest.approx(730.0, abs=0.3)
    assert length_lower_bound(pieces, 250.0, GAP) <= 730.0


def test_it_bounds_tapered_pieces_by_how_much_of_them_a_line_along_the_fabric_crosses():
    # A trapezoid 100 mm at the top, 300 at the bottom, 400 tall, cut twice: a line along the fabric
    # crosses at least h of it over 300 - h/2 of its width, and two of those exceed 350 mm while
    # h < 250: 2 x 250 + 5 = 505 mm, less the 0.5 mm steps of h and the hundredths allowed.
    pieces = cut_pieces([Outline("T", trapezoid(100, 300, 400))])
    bound = length_lower_bound(pieces, 350.0, GAP)
    assert 503.5 <= bound <= 505.0
    assert bound <= shelf_layout(pieces, 350.0, GAP).length_mm
    # On 500 mm they exceed it only below h = 100 mm (205 mm): the tallest piece, 400, is the bound.
    assert length_lower_bound(pieces, 500.0, GAP) == pytest.approx(400.0)


def test_it_bounds_slanted_pieces_where_no_upright_box_inside_them_would():
    # A parallelogram 100 mm across, slanting 100 mm over its 400 mm height, cut three times on
    # 300 mm: a line along the fabric crosses at least h of it over 200 - h/2 of its width; three of
    # those exceed 300 mm while h < 200, so two stand one above another: 2 x 200 + 5 = 405 mm. An
    # upright box h tall fits only 100 - h/4 wide, and three never exceed 300: boxes would say 400.
    slanted = ((0.0, 0.0), (100.0, 0.0), (200.0, 400.0), (100.0, 400.0))
    pieces = cut_pieces([Outline("S", slanted, cut_count=3)])
    assert 403.5 <= length_lower_bound(pieces, 300.0, GAP) <= 405.0


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(trapezoid_pieces(6), ANY_GAP, ANY_WIDTH)
def test_it_never_bounds_above_a_layout_that_exists(pieces, gap, width):
    assert length_lower_bound(pieces, width, gap) <= shelf_layout(pieces, width, gap).length_mm + 1e-6


# --- bad requests ------------------------------------------------------------------------


@pytest.mark.parametrize(
    "width, gap, words",
    [
        (0.0, 5.0, "more than 0"),
        (-10.0, 5.0, "more than 0"),
        (float("nan"), 5.0, "must be a number"),
        (1400.0, -1.0, "between 0 and"),
        (1400.0, 500.0, "between 0 and"),
        (80.0, 5.0, "wider than the fabric"),
    ],
)
def test_it_refuses_a_width_or_gap_no_layout_can_use(width, gap, words):
    pieces = cut_pieces([Outline("A", rect(100, 200))])
    with pytest.raises(LayoutError, match=words):
        shelf_layout(pieces, width, gap)
    with pytest.raises(LayoutError, match=words):
        solver_layout(pieces, width, gap, budget_s=1)


def test_it_names_the_layer_and_the_piece_too_wide_for_it():
    pieces = demo_pieces(bodice_block())  # the unfolded centre front is about 32 cm across
    with pytest.raises(LayoutError, match=r"Lining: Centre front, unfolded is 3\d\.\d cm wide.*\(30\.0 cm\)"):
        check_layers(pieces, [LayerRequest("fashion", 1400.0), LayerRequest("lining", 300.0)], GAP)
    # In the plan's unit: 12 in = 304.8 mm exactly (1959 international yard and pound agreement).
    with pytest.raises(LayoutError, match=r"is 12 \d+/\d+ in wide.*\(12 in\)"):
        check_layers(pieces, [LayerRequest("lining", 304.8)], GAP, unit="in")
    with pytest.raises(LayoutError, match="Unknown fabric layer"):
        check_layers(pieces, [LayerRequest("velvet", 1400.0)], GAP)
    with pytest.raises(LayoutError, match="at least one"):
        check_layers(pieces, [], GAP)


def test_it_finds_a_layout_breaking_a_rule():
    pieces = cut_pieces([Outline("A", rect(100, 200))])
    good = shelf_layout(pieces, 250, 10)
    close = [good.placements[0], Placement(good.placements[1].piece, 104.0, 0.0, 0, True)]
    bad = type(good)(SHELF, 250, 10, 200, pieces, tuple(close))
    assert any("closer than the gap" in p for p in layout_problems(bad))
    turned = type(good)(SHELF, 250, 10, 200, pieces, (good.placements[0], Placement("A, mirrored", 120, 0, 90, True)))
    assert any("turned 90 degrees" in p for p in layout_problems(turned))
    outside = type(good)(SHELF, 200, 10, 200, pieces, (good.placements[0], Placement("A, mirrored", 110, 0, 0, True)))
    assert any("beyond the fabric's width" in p for p in layout_problems(outside))


def test_it_turns_a_piece_half_round_about_its_box():
    piece = cut_pieces([Outline("T", trapezoid(40, 100, 200), 1)])[0]
    turned = placed_outline(piece, Placement("T", 10.0, 20.0, 180, False))
    poly = Polygon(turned)
    assert poly.bounds == pytest.approx((10.0, 20.0, 110.0, 220.0))
    # Wide end now at the top.
    top_width = max(x for x, y in turned if y == pytest.approx(20.0)) - min(
        x for x, y in turned if y == pytest.approx(20.0)
    )
    assert top_width == pytest.approx(100.0)


# --- the solver ---------------------------------------------------------------------------


def test_it_nests_four_squares_two_by_two():
    pieces = cut_pieces([Outline("A", rect(100, 100)), Outline("B", rect(100, 100))])
    # 100 + 10 + 100 = 210 fits 215 across: by hand the shortest length is two rows, 100 + 10 + 100 = 210.
    layout = solver_layout(pieces, 215, 10, budget_s=1, seed=1)
    assert layout.method == SOLVER, layout.note
    assert_valid(layout, pieces)
    assert layout.length_mm == pytest.approx(210.0, abs=1.0)
    assert layout.utilisation == pytest.approx(40_000 / (215 * layout.length_mm))


def test_it_nests_the_demo_corset_keeping_every_rule_and_no_longer_than_rows():
    pieces = demo_pieces(corset_block("10"))
    seen = []
    layout = solver_layout(pieces, 1120.0, GAP, budget_s=2, seed=3, progress=seen.append)
    shelf = shelf_layout(pieces, 1120.0, GAP)
    assert layout.method == SOLVER, layout.note
    assert_valid(layout, pieces)
    assert best_of(shelf, layout).length_mm <= shelf.length_mm
    assert layout.length_mm < shelf.length_mm  # two rows of strips nest head to toe
    assert layout.pieces_area_mm2 == pytest.approx(shelf.pieces_area_mm2)
    assert seen and all(isinstance(p, Progress) for p in seen)
    fractions = [p.fraction for p in seen]
    assert fractions == sorted(fractions) and fractions[-1] == 1.0


def test_it_solves_each_distinct_width_once_for_all_layers():
    pieces = cut_pieces([Outline("A", rect(100, 100)), Outline("B", rect(100, 100))])
    layers = [LayerRequest("fashion", 215.0), LayerRequest("lining", 215.0), LayerRequest("strength", 450.0)]
    results = solve_layers(pieces, layers, 10.0, budget_s=2, seed=1)
    assert [r.layer for r in results] == ["fashion", "lining", "strength"]
    assert results[0].solver is results[1].solver
    for r in results:
        assert_valid(r.shelf, pieces)
        assert_valid(r.solver, pieces)
        assert r.best.length_mm <= r.shelf.length_mm
    # 450 across holds all four squares in one row: 4 x 100 + 3 x 10 = 430.
    assert results[2].best.length_mm == pytest.approx(100.0, abs=0.5)


def test_it_reads_back_a_stored_layout_unchanged():
    pieces = demo_pieces(bodice_block())
    layout = shelf_layout(pieces, 1400.0, GAP)
    again = type(layout).from_dict(layout.to_dict())
    assert again.length_mm == pytest.approx(layout.length_mm)
    assert again.utilisation == pytest.approx(layout.utilisation, rel=1e-6)
    assert_valid(again, pieces)


def _os_threads():
    import os

    return len(os.listdir("/proc/self/task"))


@pytest.mark.skipif(not __import__("os").path.isdir("/proc/self/task"), reason="counts threads through /proc")
def test_it_solves_in_a_process_of_its_own_leaving_no_threads_behind():
    pieces = cut_pieces([Outline("A", rect(100, 100)), Outline("B", rect(100, 100))])
    before = _os_threads()
    seen = []
    results = solve_layers_apart(
        pieces, [LayerRequest("fashion", 215.0)], 10.0, budget_s=1, seed=1, progress=seen.append
    )
    assert _os_threads() == before  # the solver's own threads lived and died in the child
    (result,) = results
    assert_valid(result.solver, pieces)
    assert result.best.length_mm == pytest.approx(210.0, abs=1.0)
    assert seen and seen[-1].fraction == 1.0


@pytest.mark.parametrize("block", [corset_block("10"), bodice_block()], ids=["corset-10", "bodice"])
def test_it_nests_stand_ins_holding_every_point_within_half_the_gap_of_their_piece(block):
    # Stand-ins that do not overlap then keep the pieces themselves at least the gap apart.
    for piece in demo_pieces(block):
        stand_in = Polygon([(x, y) for y, x in _surrogate(piece, GAP / 2 + SURROGATE_MARGIN_MM)])
        assert stand_in.is_valid
        assert stand_in.contains(Polygon(piece.outline).buffer(GAP / 2, quad_segs=64))
        # Not a needlessly loose fit either: no wider than the piece by more than the gap and a millimetre.
        assert stand_in.bounds[2] - stand_in.bounds[0] <= piece.width_mm + GAP + 1.0
