"""Altered outlines: widths, band changes, seam allowance, notches, grainlines, truing and checks.

Widths and distances are measured on the polygons with shapely, not read
back from the inputs.
"""

import dataclasses
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from shapely.geometry import LineString, Polygon

from patterns.core.block import LEFT, MIN_PANEL_WIDTH_MM, RIGHT, Alteration, PanelShift
from patterns.core.outline import (
    MAX_TURN_DEGREES,
    TRUING_TOLERANCE_MM,
    alter_block,
    alter_pattern,
    base_outlines,
    pchip,
    seam_truing,
)
from patterns.core.units import MM_PER_INCH
from patterns.demo import bodice_block, corset_block, corset_run
from tests.patterns.geometry_helpers import (
    ALL_LEVELS,
    allowance_distances,
    levels_on_both_edges,
    mirrored_pair_block,
    s_bend_block,
    uniform_alteration,
    width_at,
)

DEMO_BLOCKS = [*corset_run(), bodice_block()]
DEMO_IDS = [f"{b.garment}-{b.size}" for b in DEMO_BLOCKS]


def _at_waist(block, amount):
    """Let out (positive) or take in each seam at the waist by ``amount`` per raw edge."""
    per_panel = {p.name: {"left": 0.0, "right": 0.0} for p in block.panels}
    for seam in block.seams:
        per_panel[seam.front_panel]["right"] = amount
        per_panel[seam.back_panel]["left"] = amount
    return Alteration(shifts={name: {"waist": PanelShift(v["left"], v["right"])} for name, v in per_panel.items()})


FIXED_ALTERATIONS = {
    "none": lambda b: Alteration(shifts={}),
    "uniform widen": lambda b: uniform_alteration(b, 4.0, 6.0),
    "uniform narrow": lambda b: uniform_alteration(b, -3.0, -2.5),
    "waist taken in": lambda b: _at_waist(b, -8.0),
    "waist let out": lambda b: _at_waist(b, 10.0),
    "uneven": lambda b: Alteration(
        shifts={
            b.panels[1].name: {"bust": PanelShift(5, -3), "waist": PanelShift(-7, 2)},
            b.panels[2].name: {b.level_names[-1]: PanelShift(12, 0)},
        }
    ),
}


# --- the monotone cubic ------------------------------------------------------------


def test_it_checks_that_pchip_passes_through_knots_and_holds_beyond_the_ends():
    xk, yk = [0.0, 10.0, 30.0, 45.0], [2.0, 5.0, 5.0, -1.0]
    assert pchip(xk, yk, xk) == pytest.approx(yk, abs=1e-12)
    assert pchip(xk, yk, [-100.0, 1000.0]) == pytest.approx([2.0, -1.0])


@given(st.lists(st.floats(-20, 20, allow_nan=False), min_size=2, max_size=6))
def test_it_checks_that_pchip_never_overshoots_between_knots(values):
    xk = np.cumsum(np.linspace(50, 110, len(values)))
    xq = np.linspace(xk[0], xk[-1], 400)
    yq = pchip(xk, values, xq)
    for i in range(len(xk) - 1):
        seg = yq[(xq >= xk[i]) & (xq <= xk[i + 1])]
        lo, hi = sorted(values[i : i + 2])
        assert seg.min() >= lo - 1e-9 and seg.max() <= hi + 1e-9


# --- widths at levels ------------------------------------------------------------


@pytest.mark.parametrize("block", DEMO_BLOCKS, ids=DEMO_IDS)
@pytest.mark.parametrize("name", list(FIXED_ALTERATIONS))
def test_it_checks_that_width_at_each_level_is_base_width_plus_both_shifts(block, name):
    alteration = FIXED_ALTERATIONS[name](block)
    base = {o.name: o for o in base_outlines(block)}
    checked = 0
    for outline in alter_block(block, alteration):
        for level in levels_on_both_edges(block, outline):
            shift = alteration.shift(outline.name, level)
            expected = width_at(base[outline.name], base[outline.name].level_y[level]) + shift.left + shift.right
            assert width_at(outline, outline.level_y[level]) == pytest.approx(expected, abs=0.01)
            checked += 1
    assert checked >= 3 * len(block.panels)


def test_it_checks_that_base_width_at_levels_is_the_drafted_width():
    block = corset_block("10")
    for outline, panel in zip(base_outlines(block), block.panels):
        for level in levels_on_both_edges(block, outline):
            assert width_at(outline, outline.level_y[level]) == pytest.approx(panel.width(level), abs=0.01)


def test_it_checks_that_the_base_outlines_are_built_once_per_block_and_equal_a_fresh_build():
    block = corset_block("10")
    first = alter_pattern(block, _at_waist(block, -4.0))
    second = alter_pattern(block, _at_waist(block, 3.0))
    assert second.base is first.base
    assert first.altered != second.altered
    copy = dataclasses.replace(block)  # equal, but another object: built again
    fresh = alter_pattern(copy, _at_waist(copy, -4.0))
    assert fresh.base is not first.base
    assert fresh.base == first.base == base_outlines(block)
    assert fresh.seams == first.seams and fresh.findings == first.findings


shift_value = st.floats(-15.0, 15.0, allow_nan=False).map(lambda v: round(v, 1))


@st.composite
def alterations(draw, block):
    shifts = {}
    for panel in block.panels:
        levels = draw(st.lists(st.sampled_from(block.level_names), unique=True, max_size=len(block.levels)))
        shifts[panel.name] = {lv: PanelShift(draw(shift_value), draw(shift_value)) for lv in levels}
    return Alteration(shifts=shifts)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=st.data(), which=st.sampled_from(["10", "6", "14", "bodice"]))
def test_it_checks_that_width_at_levels_for_generated_alterations(data, which):
    block = bodice_block() if which == "bodice" else corset_block(which)
    alteration = data.draw(alterations(block))
    base = {o.name: o for o in base_outlines(block)}
    for outline in alter_block(block, alteration):
        for level in levels_on_both_edges(block, outline):
            shift = alteration.shift(outline.name, level)
            expected = width_at(base[outline.name], base[outline.name].level_y[level]) + shift.left + shift.right
            assert width_at(outline, outline.level_y[level]) == pytest.approx(expected, abs=0.01)


def test_it_checks_that_a_level_below_a_panels_bottom_edge_gets_no_notch_and_no_width():
    from dataclasses import replace

    from patterns.core.block import Point

    block = corset_block("10")
    hip = block.level_y("hip")
    short = [
        replace(p, bottom_left=Point(p.bottom_left.x, hip - 5), bottom_right=Point(p.bottom_right.x, hip - 5))
        if p.name == "Side front"
        else p
        for p in block.panels
    ]
    block = replace(block, panels=tuple(short))  # the side front panel ends 5 mm above the hip line
    side_front = {o.name: o for o in base_outlines(block)}["Side front"]
    assert "hip" not in side_front.level_y
    assert not [n for n in side_front.notches if n.level == "hip"]


# --- vertical bands ------------------------------------------------------------------


def test_it_checks_that_band_change_moves_levels_below_and_inside_the_band():
    block = corset_block("10")
    y = {lv.name: lv.y for lv in block.levels}
    alteration = Alteration(shifts={}, bands={("waist", "hip"): 20.0})
    outlines = alter_block(block, alteration)
    inside = 20.0 * (y["abdomen"] - y["waist"]) / (y["hip"] - y["waist"])
    expected = {
        "bust": y["bust"],
        "underbust": y["underbust"],
        "waist": y["waist"],
        "abdomen": y["abdomen"] + inside,
        "hip": y["hip"] + 20.0,
    }
    for outline in outlines:
        for notch in outline.notches:
            assert notch.point[1] == pytest.approx(expected[notch.level], abs=1e-9)
    for outline, panel in zip(outlines, block.panels):
        bottom = panel.bottom_left.y
        within = min(max((bottom - y["waist"]) / (y["hip"] - y["waist"]), 0.0), 1.0)
        assert outline.left_line[-1][1] == pytest.approx(bottom + 20.0 * within, abs=1e-9)
        assert outline.left_line[0][1] == pytest.approx(panel.top_left.y, abs=1e-9)
    assert outlines[0].left_line[-1][1] == pytest.approx(block.panels[0].bottom_left.y + 20.0)  # below the hip


def test_it_checks_that_bands_add_up_and_shortening_works():
    block = corset_block("10")
    y = {lv.name: lv.y for lv in block.levels}
    pattern = alter_pattern(block, Alteration(shifts={}, bands={("bust", "underbust"): -6.0, ("waist", "hip"): 10.0}))
    assert pattern.level_y["underbust"] == pytest.approx(y["underbust"] - 6.0)
    assert pattern.level_y["waist"] == pytest.approx(y["waist"] - 6.0)
    assert pattern.level_y["hip"] == pytest.approx(y["hip"] + 4.0)
    assert pattern.findings == ()


def test_it_checks_that_widths_follow_the_levels_after_a_band_change():
    block = corset_block("12")
    alteration = Alteration(shifts={"Back": {"waist": PanelShift(5, 5)}}, bands={("underbust", "waist"): 15.0})
    base = {o.name: o for o in base_outlines(block)}
    back = {o.name: o for o in alter_block(block, alteration)}["Back"]
    assert back.level_y["waist"] == pytest.approx(base["Back"].level_y["waist"] + 15.0)
    assert width_at(back, back.level_y["waist"]) == pytest.approx(
        width_at(base["Back"], base["Back"].level_y["waist"]) + 10.0, abs=0.01
    )


# --- seam allowance -------------------------------------------------------------------


def _unbound(block):
    """The block with every edge taking a seam allowance (the demo corset is bound at top and bottom)."""
    return dataclasses.replace(
        block, panels=tuple(dataclasses.replace(p, top_bound=False, bottom_bound=False) for p in block.panels)
    )


@pytest.mark.parametrize(
    "block", [_unbound(corset_block("10")), _unbound(corset_block("6")), bodice_block()], ids=["c10", "c6", "bodice"]
)
@pytest.mark.parametrize("allowance", [None, 10.0])  # block's 15 mm (corsetry, common practice); 1 cm industry
def test_it_checks_that_cutting_line_is_the_allowance_away_from_the_stitch_line(block, allowance):
    alteration = _at_waist(block, -8.0)
    for outline in alter_block(block, alteration, seam_allowance_mm=allowance):
        sa = block.seam_allowance_mm if allowance is None else allowance
        assert outline.seam_allowance_mm == sa
        distances = allowance_distances(outline, clearance=2 * sa)
        assert len(distances) > 100
        assert distances == pytest.approx(np.full(len(distances), sa), abs=0.01)
        cut, stitch = Polygon(outline.cutting), Polygon(outline.stitch)
        assert cut.is_valid and cut.covers(stitch)
        assert cut.area > stitch.area + 0.9 * sa * stitch.exterior.length * (0.5 if outline.on_fold else 1.0) - 1.0


def test_it_checks_that_a_fold_edge_has_no_allowance():
    centre_front = base_outlines(bodice_block())[0]
    assert centre_front.on_fold
    fold_x = min(x for x, _ in centre_front.left_line)
    assert min(x for x, _ in centre_front.cutting) == pytest.approx(fold_x, abs=1e-9)
    assert not [n for n in centre_front.notches if n.edge == LEFT]
    assert "cut 1 on fold" in centre_front.labels


def test_it_checks_that_negative_allowance_is_refused():
    with pytest.raises(ValueError):
        base_outlines(corset_block("10"), seam_allowance_mm=-1)


# --- notches and grainlines ---------------------------------------------------------


@pytest.mark.parametrize("block", DEMO_BLOCKS[:1] + DEMO_BLOCKS[-1:], ids=["c6", "bodice"])
def test_it_checks_that_both_raw_edges_of_every_seam_are_notched_at_the_same_heights(block):
    outlines = {o.name: o for o in alter_block(block, _at_waist(block, 6.0))}
    for seam in block.seams:
        front = {n.level: n for n in outlines[seam.front_panel].notches if n.edge == RIGHT}
        back = {n.level: n for n in outlines[seam.back_panel].notches if n.edge == LEFT}
        assert set(front) == set(back) and len(front) >= 3
        for level in front:
            assert front[level].seam == back[level].seam == seam.name
            assert front[level].point[1] == pytest.approx(back[level].point[1], abs=1e-9)
            assert front[level].direction[0] > 0.9 and back[level].direction[0] < -0.9


def test_it_checks_that_notch_directions_are_unit_and_square_to_the_stitch_line():
    for outline in alter_block(corset_block("10"), _at_waist(corset_block("10"), -10.0)):
        for notch in outline.notches:
            line = np.asarray(outline.edge_line(notch.edge))
            i = int(np.argmin(np.hypot(*(line - notch.point).T)))
            assert np.hypot(*(line[i] - notch.point)) == pytest.approx(0, abs=1e-9)
            tangent = line[min(i + 1, len(line) - 1)] - line[max(i - 1, 0)]
            dx, dy = notch.direction
            assert math.hypot(dx, dy) == pytest.approx(1.0)
            assert abs(np.dot(tangent / np.linalg.norm(tangent), notch.direction)) < 1e-9
            outward = LineString([notch.point, (notch.point[0] + dx, notch.point[1] + dy)])
            assert not Polygon(outline.stitch).contains(outward)


def test_it_checks_that_grainline_is_parallel_to_centre_front_and_inside_the_panel():
    for outline in alter_block(bodice_block(), _at_waist(bodice_block(), 5.0)):
        (x0, y0), (x1, y1) = outline.grainline
        assert x0 == x1 and y1 - y0 > 200
        assert Polygon(outline.stitch).contains(LineString(outline.grainline))


# --- seam truing ------------------------------------------------------------------------
# Tolerance 3.2 mm = 1/8 in (1 in = 25.4 mm exactly, 1959 international yard and pound
# agreement): Threads magazine no. 200, "10 patternwork skills".


def test_it_checks_that_truing_tolerance_is_an_eighth_of_an_inch():
    assert TRUING_TOLERANCE_MM == pytest.approx(float(MM_PER_INCH) / 8, abs=0.01)


@pytest.mark.parametrize("block", DEMO_BLOCKS, ids=DEMO_IDS)
def test_it_checks_that_the_same_shift_at_every_level_on_both_edges_keeps_every_seam_as_it_was(block):
    for t in seam_truing(block, uniform_alteration(block, 7.0, 7.0)):
        assert t.change_mm == pytest.approx(0.0, abs=0.01)
        assert t.front_after_mm == pytest.approx(t.front_base_mm, abs=0.01)
        assert t.within_tolerance


@settings(max_examples=30, deadline=None)
@given(
    bend=st.fixed_dictionaries({lv: st.floats(-20, 20, allow_nan=False) for lv in ALL_LEVELS}),
    shifts=st.fixed_dictionaries({lv: st.floats(-15, 15, allow_nan=False) for lv in ALL_LEVELS}),
)
def test_it_checks_that_mirrored_raw_edges_shifted_alike_keep_their_difference(bend, shifts):
    block = mirrored_pair_block(bend)
    alteration = Alteration(
        shifts={
            "Front": {lv: PanelShift(right=s) for lv, s in shifts.items()},
            "Back": {lv: PanelShift(left=s) for lv, s in shifts.items()},
        }
    )
    pattern = alter_pattern(block, alteration)
    (t,) = pattern.seams
    assert t.base_difference_mm == pytest.approx(0.0, abs=0.01)
    assert t.after_difference_mm == pytest.approx(0.0, abs=0.01)
    assert "seam_not_true" not in {f.code for f in pattern.findings}


def test_it_checks_that_an_uneven_shift_is_flagged_with_the_edge_end_and_amount():
    block = corset_block("10")
    # Let out the side front's right edge at the bust and take it in at the underbust:
    # that edge alone bends into an S near the top.
    alteration = Alteration(
        shifts={"Side front": {"bust": PanelShift(right=15.0), "underbust": PanelShift(right=-15.0)}}
    )
    pattern = alter_pattern(block, alteration)
    side = next(t for t in pattern.seams if t.seam == "Side seam")
    assert side.back_after_mm == pytest.approx(side.back_base_mm, abs=1e-9)
    assert side.change_mm == pytest.approx(side.front_after_mm - side.front_base_mm, abs=1e-9)
    assert abs(side.change_mm) > TRUING_TOLERANCE_MM
    assert not side.within_tolerance and side.end == "top"
    (finding,) = [f for f in pattern.findings if f.code == "seam_not_true"]
    assert finding.seam == "Side seam" and finding.severity == "warning"
    assert finding.panel == ("Side front" if side.change_mm > 0 else "Side back")
    assert finding.amount_mm == pytest.approx(abs(side.change_mm))
    assert "top end" in finding.message and f"{abs(side.change_mm):.1f} mm" in finding.message


def test_it_checks_that_an_uneven_shift_near_the_bottom_points_at_the_bottom_end():
    block = corset_block("10")
    alteration = Alteration(shifts={"Back": {"abdomen": PanelShift(left=15.0), "hip": PanelShift(left=-15.0)}})
    t = next(t for t in seam_truing(block, alteration) if t.seam == "Back princess seam")
    assert t.change_mm < -TRUING_TOLERANCE_MM and t.end == "bottom"
    finding = next(f for f in alter_pattern(block, alteration).findings if f.code == "seam_not_true")
    assert finding.panel == "Back" and "bottom end" in finding.message


def test_it_checks_that_a_seam_uneven_in_the_base_pattern_is_not_flagged_unless_it_grows():
    block = bodice_block()
    base = {t.seam: t for t in seam_truing(block, Alteration(shifts={}))}
    # The demo bodice eases its front princess seam by more than the tolerance as drafted.
    assert abs(base["Front princess seam"].base_difference_mm) > TRUING_TOLERANCE_MM
    assert alter_pattern(block, Alteration(shifts={})).findings == ()


# --- checks ------------------------------------------------------------------------------


@pytest.mark.parametrize("block", DEMO_BLOCKS, ids=DEMO_IDS)
@pytest.mark.parametrize("name", ["none", "uniform widen", "uniform narrow", "waist taken in", "waist let out"])
def test_it_checks_that_checks_are_silent_on_the_demo_blocks(block, name):
    assert alter_pattern(block, FIXED_ALTERATIONS[name](block)).findings == ()


def test_it_checks_that_a_panel_folded_over_itself_is_an_error():
    block = corset_block("10")
    pattern = alter_pattern(block, Alteration(shifts={"Front": {"waist": PanelShift(-40.0, -40.0)}}))
    codes = {(f.code, f.severity, f.panel) for f in pattern.findings}
    assert ("outline_self_intersects", "error", "Front") in codes
    assert ("panel_too_narrow", "error", "Front") in codes
    crossing = next(f for f in pattern.findings if f.code == "outline_self_intersects")
    assert crossing.level == "waist" and abs(crossing.y - pattern.level_y["waist"]) < 60


def test_it_checks_that_a_panel_narrower_than_the_minimum_at_a_level_is_warned():
    block = corset_block("10")
    pattern = alter_pattern(block, Alteration(shifts={"Side front": {"waist": PanelShift(-20.0, -20.0)}}))
    (finding,) = [f for f in pattern.findings if f.code == "panel_too_narrow"]
    outline = {o.name: o for o in pattern.altered}["Side front"]
    assert finding.severity == "warning" and finding.level == "waist"
    assert finding.amount_mm == pytest.approx(width_at(outline, pattern.level_y["waist"]), abs=0.01)
    assert finding.amount_mm < MIN_PANEL_WIDTH_MM  # 20 mm: common practice / our choice


def test_it_checks_that_narrowness_between_levels_is_found():
    block = s_bend_block()
    outline = base_outlines(block)[0]
    for level, y in outline.level_y.items():
        assert width_at(outline, y) >= 22.0 - 0.01
    (finding,) = alter_pattern(block, Alteration(shifts={})).findings
    assert finding.code == "panel_too_narrow"
    assert outline.level_y["underbust"] < finding.y < outline.level_y["waist"]
    ys = np.arange(131.0, 369.0, 0.1)
    narrowest = min(width_at(outline, y) for y in ys)
    assert finding.amount_mm == pytest.approx(narrowest, abs=0.05)


def test_it_checks_that_a_sharp_turn_at_a_level_is_warned():
    block = corset_block("10")
    pattern = alter_pattern(block, Alteration(shifts={"Front": {"waist": PanelShift(left=40.0)}}))
    turns = [f for f in pattern.findings if f.code == "seam_turns_sharply"]
    assert [(f.panel, f.level, f.seam) for f in turns] == [("Front", "waist", "Front princess seam")]
    assert f"more than {MAX_TURN_DEGREES:g}°" in turns[0].message  # 30 degrees: our choice


def test_it_checks_that_a_gentle_turn_is_not_warned():
    block = corset_block("10")
    pattern = alter_pattern(block, Alteration(shifts={"Front": {"waist": PanelShift(left=10.0)}}))
    assert "seam_turns_sharply" not in {f.code for f in pattern.findings}


def test_it_checks_that_a_bent_fold_is_an_error():
    block = bodice_block()
    pattern = alter_pattern(block, Alteration(shifts={"Centre front": {"waist": PanelShift(left=5.0)}}))
    (fold,) = [f for f in pattern.findings if f.code == "fold_not_straight"]
    assert fold.severity == "error" and fold.panel == "Centre front"
    assert fold.amount_mm == pytest.approx(5.0, abs=0.01)


def test_it_checks_that_a_band_shortened_to_nothing_is_the_only_error_reported():
    block = bodice_block()
    pattern = alter_pattern(block, Alteration(shifts={}, bands={("waist", "abdomen"): -95.0}))
    assert [(f.code, f.severity) for f in pattern.findings] == [("band_too_short", "error")]
    assert alter_pattern(block, Alteration(shifts={}, bands={("waist", "abdomen"): -30.0})).findings == ()


def test_it_checks_that_a_centre_front_moved_evenly_stays_on_the_fold():
    block = bodice_block()
    even = {lv: PanelShift(left=5.0) for lv in block.level_names}
    pattern = alter_pattern(block, Alteration(shifts={"Centre front": even}))
    assert pattern.findings == ()


@pytest.mark.parametrize(
    "bad",
    [
        Alteration(shifts={"Sleeve": {}}),
        Alteration(shifts={"Front": {"knee": PanelShift(1, 1)}}),
        Alteration(shifts={}, bands={("hip", "waist"): 5.0}),
    ],
)
def test_it_checks_that_names_the_block_does_not_have_are_refused(bad):
    with pytest.raises(ValueError):
        alter_block(corset_block("10"), bad)


@settings(max_examples=25, deadline=None)
@given(data=st.data())
def test_it_checks_that_wild_shifts_never_fail_and_every_crossed_outline_is_reported(data):
    block = corset_block("8")
    wild = st.floats(-60.0, 60.0, allow_nan=False)
    shifts = {
        p.name: {
            lv: PanelShift(data.draw(wild), data.draw(wild))
            for lv in data.draw(st.lists(st.sampled_from(block.level_names), unique=True))
        }
        for p in block.panels
    }
    pattern = alter_pattern(block, Alteration(shifts=shifts))
    crossed = {o.name for o in pattern.altered if not Polygon(o.stitch).is_valid}
    reported = {f.panel for f in pattern.findings if f.code == "outline_self_intersects"}
    assert crossed == reported
    for outline in pattern.altered:
        assert Polygon(outline.cutting).is_valid


def test_it_checks_that_geometry_findings_are_core_findings():
    from patterns.core.findings import Finding

    (finding,) = alter_pattern(s_bend_block(), Alteration(shifts={})).findings
    assert isinstance(finding, Finding)
    assert finding.as_dict()["code"] == "panel_too_narrow" and finding.as_dict()["amount_mm"] < 20
