"""Worked examples of our own, computed by hand, for the allotment engine.

The block in engine_helpers is three 100 mm panels per half (girth 600 mm).
The trade's arithmetic (common practice; grading texts): a girth change is
halved for one body half, then shared between the raw edges, so one edge
moved s mm changes the girth by 2 s mm.
"""

import pytest

from patterns.core.allot import Body, Override, PinAdjustment, PlanOptions, allot
from patterns.core.policies import BY_WIDTH, EVEN, SIDES_FIRST
from patterns.core.units import parse_length
from tests.patterns.engine_helpers import three_panel_block

SIXTEENTH_MM = float(parse_length("1/16", "in"))


def shifts(result):
    return {(s.seam, s.level, s.panel): s.shift_mm for s in result.shifts}


def codes(result):
    return [f.code for f in result.findings]


def test_it_takes_in_a_waist_reduction_evenly():
    # waist: target 600 - 40 - 50 (lacing gap) = 510, pattern 600, difference -90.
    # Four free edges at the waist: -90 / 2 halves / 4 edges = -11.25 each;
    # rounded to 1 mm with the total kept: 45 = 12 + 11 + 11 + 11.
    block = three_panel_block()
    body = Body(girths={"bust": 650, "waist": 600, "hip": 700})
    result = allot(block, body, PlanOptions(ease={"waist": -40}))
    s = shifts(result)
    assert s[("Princess seam", "waist", "Front")] == -12.0
    assert s[("Princess seam", "waist", "Side")] == -11.0
    assert s[("Side seam", "waist", "Side")] == -11.0
    assert s[("Side seam", "waist", "Back")] == -11.0
    waist = result.level("waist")
    assert (waist.target, waist.pattern, waist.difference) == (510.0, 600.0, -90.0)
    assert waist.allotted == -90.0 and waist.residual == 0.0
    # bust: 650 - 50 = 600, no difference, no shift; hip: +50 -> 25 per half -> 7 + 6 + 6 + 6.
    assert all(v == 0 for (seam, lv, p), v in s.items() if lv == "bust")
    assert sorted(v for (seam, lv, p), v in s.items() if lv == "hip") == [6.0, 6.0, 6.0, 7.0]


def test_it_lets_out_side_seams_first_up_to_their_cap():
    # waist difference 700 - 50 - 600 = +50 -> 25 per half.  Side edges take
    # 10 each (their cap), the princess edges share the last 5: 3 + 2.
    block = three_panel_block(side_cap=10.0)
    body = Body(girths={"bust": 650, "waist": 700, "hip": 650})
    result = allot(block, body, PlanOptions(policy=SIDES_FIRST))
    s = shifts(result)
    assert s[("Side seam", "waist", "Side")] == 10.0
    assert s[("Side seam", "waist", "Back")] == 10.0
    assert s[("Princess seam", "waist", "Front")] == 3.0
    assert s[("Princess seam", "waist", "Side")] == 2.0
    assert "edge_over_cap" not in codes(result)


def test_it_splits_front_and_back_where_front_arcs_were_taken():
    # bust: front arc 340 against the front panels' 2 x 200 = 400 -> -60;
    # back 650 - 340 - 50 = 260 against 200 -> +60.  Only the side seam may
    # move at the bust: its front edge takes in 30, its back edge lets out 30,
    # although the whole girth is already right.
    block = three_panel_block(side_cap=40.0)
    body = Body(girths={"bust": 650, "waist": 650, "hip": 650}, front_arcs={"bust": 340})
    result = allot(block, body, PlanOptions())
    s = shifts(result)
    assert s[("Side seam", "bust", "Side")] == -30.0
    assert s[("Side seam", "bust", "Back")] == 30.0
    bust = result.level("bust")
    assert bust.difference == 0.0
    assert (bust.front.difference, bust.back.difference) == (-60.0, 60.0)
    assert bust.front.residual == 0.0 and bust.back.residual == 0.0


def test_it_keeps_a_fixed_cell_and_spreads_only_the_rest():
    # waist difference -90; the fitter fixes the side seam's back edge at -20,
    # leaving -90 + 40 = -50 -> -25 over three free edges -> 9 + 8 + 8.
    block = three_panel_block()
    body = Body(girths={"bust": 650, "waist": 600, "hip": 700})
    options = PlanOptions(ease={"waist": -40}, overrides=(Override("Side seam", "waist", "Back", -20.0),))
    s = shifts(allot(block, body, options))
    assert s[("Side seam", "waist", "Back")] == -20.0
    assert s[("Princess seam", "waist", "Front")] == -9.0
    assert s[("Princess seam", "waist", "Side")] == -8.0
    assert s[("Side seam", "waist", "Side")] == -8.0


def test_it_rounds_to_sixteenths_of_an_inch_keeping_the_total():
    # 1/16 in = 1.5875 mm (1 in = 25.4 mm exactly).  hip: +50 -> 25 per half
    # = 15.75 sixteenths -> 16; 4 edges of 3.94 -> 4 sixteenths (6.35 mm) each.
    # Residual 50 - 8 x 6.35 = -0.8 mm, within one step.
    block = three_panel_block()
    body = Body(girths={"bust": 650, "waist": 600, "hip": 700})
    result = allot(block, body, PlanOptions(ease={"waist": -40}, step_mm=SIXTEENTH_MM, unit="in"))
    hip = [v for (seam, lv, p), v in shifts(result).items() if lv == "hip"]
    assert hip == [pytest.approx(6.35)] * 4
    assert result.level("hip").residual == pytest.approx(-0.8)
    # waist: -45 per half = 28.35 sixteenths -> 28 = 7 per edge (-11.1125 mm).
    waist = [v for (seam, lv, p), v in shifts(result).items() if lv == "waist"]
    assert waist == [pytest.approx(-11.1125)] * 4
    assert result.level("waist").residual == pytest.approx(-1.1)


def test_it_narrows_the_centre_front_first_at_every_level():
    # The centre-front panel is 2 x 100 = 200 mm across; chosen 180 -> each
    # half's centre-front edge takes in 10, the girth 20, at every level.
    # waist: -90 + 20 = -70 -> -35 per half -> 9 + 9 + 9 + 8.
    block = three_panel_block()
    body = Body(girths={"bust": 650, "waist": 600, "hip": 700})
    result = allot(block, body, PlanOptions(ease={"waist": -40}, centre_front_width_mm=180.0))
    assert result.centre_front_shift_mm == -10.0
    assert sorted(v for (seam, lv, p), v in shifts(result).items() if lv == "waist") == [-9.0, -9.0, -9.0, -8.0]
    # bust: only the side seam may move there; it makes up the +20: 10 per half, 5 per edge.
    assert result.level("bust").centre_front == -20.0
    assert sorted(v for (seam, lv, p), v in shifts(result).items() if lv == "bust") == [5.0, 5.0]
    alteration = result.alteration(block)
    assert alteration.shift("Front", "waist").left == -10.0


def test_it_weights_by_panel_width():
    block = three_panel_block()
    wide = block.panels[2]
    from dataclasses import replace

    wide = replace(wide, right={k: v + 100 for k, v in wide.right.items()})  # the back panel 200 wide
    block = replace(block, panels=(*block.panels[:2], wide))
    # girth now 800; waist body 850 - 50 = 800 + 40 ease -> +40 -> 20 per half
    # weights: Front 100, Side 100, Side 100, Back 200 -> 4, 4, 4, 8.
    body = Body(girths={"bust": 850, "waist": 850, "hip": 850})
    s = shifts(allot(block, body, PlanOptions(ease={"waist": 40}, policy=BY_WIDTH)))
    assert s[("Side seam", "waist", "Back")] == 8.0
    assert s[("Princess seam", "waist", "Front")] == 4.0


def test_it_adds_toile_pins_on_top():
    # A pin taking the side seam in 6 mm at the waist: 3 mm on each raw edge.
    block = three_panel_block()
    body = Body(girths={"bust": 650, "waist": 650, "hip": 650})
    result = allot(block, body, PlanOptions(pins=(PinAdjustment("Side seam", "waist", -6.0),)))
    s = {(e.seam, e.level, e.panel): e for e in result.shifts}
    assert s[("Side seam", "waist", "Side")].shift_mm == -3.0
    assert s[("Side seam", "waist", "Back")].pin_mm == -3.0
    assert result.level("waist").pinned == -12.0


def test_it_refuses_a_level_where_nothing_may_move():
    block = three_panel_block(side_at=("waist", "hip"))
    body = Body(girths={"bust": 700, "waist": 650, "hip": 650})
    result = allot(block, body, PlanOptions())
    assert "level_locked" in codes(result)
    assert not result.ok


def test_it_warns_beyond_a_cap_but_still_meets_the_girth():
    block = three_panel_block(side_cap=5.0, princess_cap=5.0)
    body = Body(girths={"bust": 650, "waist": 750, "hip": 650})
    result = allot(block, body, PlanOptions(policy=EVEN))
    waist = result.level("waist")
    assert waist.residual == 0.0
    assert codes(result).count("edge_over_cap") == 4


def test_it_gives_a_breathing_caution_for_strong_reduction():
    # Common practice: a first corset reduces the waist 5-10 cm, about 10 %.
    block = three_panel_block()
    body = Body(girths={"bust": 650, "waist": 700, "hip": 700})
    gentle = allot(block, body, PlanOptions(ease={"waist": -60}))
    strong = allot(block, body, PlanOptions(ease={"waist": -120}))
    assert "strong_waist_reduction" not in codes(gentle)
    caution = next(f for f in strong.findings if f.code == "strong_waist_reduction")
    assert caution.severity == "caution" and "breathing" in caution.message


@pytest.mark.parametrize(
    "girths, code",
    [
        ({"bust": 650, "waist": 600}, "missing_girth"),
        ({"bust": -650, "waist": 600, "hip": 700}, "impossible_girth"),
        ({"bust": 650, "underbust": 800, "waist": 600, "hip": 700}, "underbust_exceeds_bust"),
    ],
)
def test_it_refuses_impossible_inputs(girths, code):
    result = allot(three_panel_block(), Body(girths=girths), PlanOptions())
    assert code in codes(result)
    assert not result.ok


def test_it_warns_when_fixed_cells_exceed_the_difference():
    block = three_panel_block()
    body = Body(girths={"bust": 650, "waist": 640, "hip": 650})  # waist -10
    options = PlanOptions(overrides=(Override("Side seam", "waist", "Back", -20.0),))
    assert "override_exceeds_difference" in codes(allot(block, body, options))


def test_it_lengthens_and_shortens_bands_between_levels():
    # Pattern: bust to waist 200, waist to hip 200.  Body: bust to underbust 90
    # + underbust to waist 105 = 195 -> shorten 5; waist to hip 210 -> lengthen 10.
    block = three_panel_block()
    body = Body(
        girths={"bust": 650, "waist": 650, "hip": 650},
        lengths={"bust_to_underbust": 90, "underbust_to_waist": 105, "waist_to_hip": 210},
    )
    bands = {(b.upper, b.lower): b.change_mm for b in allot(block, body, PlanOptions()).bands}
    assert bands == {("bust", "waist"): -5.0, ("waist", "hip"): 10.0}


def test_it_flags_a_seam_that_jumps_between_levels():
    # The princess seam is locked at the bust: 0 there, -15 at the waist 200 mm below
    # is a slope of 0.075 (smooth); a 60 mm jump over 200 mm (0.3) is not.
    block = three_panel_block(side_cap=100, princess_cap=100)
    body = Body(girths={"bust": 650, "waist": 650, "hip": 650})
    options = PlanOptions(overrides=(Override("Princess seam", "waist", "Front", -60.0),))
    result = allot(block, body, options)
    assert any(f.code == "steep_seam" and f.seam == "Princess seam" for f in result.findings)


def test_it_flags_a_panel_taken_in_too_narrow():
    block = three_panel_block(side_cap=200, princess_cap=200)
    body = Body(girths={"bust": 650, "waist": 650, "hip": 650})
    options = PlanOptions(overrides=(Override("Princess seam", "waist", "Front", -85.0),))
    assert "panel_too_narrow" in codes(allot(block, body, options))


def test_it_rounds_a_level_split_front_and_back_once():
    # Waist 562, front arc 341, no ease, lacing gap 50, 1 mm step.  Front: 341 against the front
    # panels' 400 -> -59, one half -29.5; back: 562 - 341 - 50 = 171 against 200 -> -29, half -14.5.
    # Rounded apart (-30 and -15) the level would be 2 mm off; rounded once, the half is -44
    # exactly: front -30 (girth -60, 1 mm left), back -14 (girth -28, 1 mm over), level 0.
    block = three_panel_block()
    body = Body(girths={"bust": 650, "waist": 562, "hip": 650}, front_arcs={"waist": 341})
    waist = allot(block, body, PlanOptions()).level("waist")
    assert waist.residual == 0.0
    assert (waist.front.allotted, waist.back.allotted) == (-60.0, -28.0)
    assert (waist.front.residual, waist.back.residual) == (1.0, -1.0)


def test_it_says_nothing_when_the_side_seams_are_let_out_by_hand_and_the_princess_seams_take_in():
    # Waist -90 needed; the fitter lets both side-seam edges out 5 mm (girth +20): the free
    # princess edges take in the rest (-110).  Ordinary work, no finding.
    block = three_panel_block()
    body = Body(girths={"bust": 650, "waist": 600, "hip": 700})
    options = PlanOptions(
        ease={"waist": -40},
        overrides=(Override("Side seam", "waist", "Side", 5.0), Override("Side seam", "waist", "Back", 5.0)),
    )
    result = allot(block, body, options)
    assert "override_exceeds_difference" not in codes(result)
    assert result.level("waist").residual == 0.0


def test_it_says_in_words_when_hand_set_cells_take_in_more_than_the_level_needs():
    # Waist -10 needed; the fitter takes the side seam's back edge in 20 mm (girth -40): 30 mm too
    # much, which the free edges let out again.
    block = three_panel_block()
    body = Body(girths={"bust": 650, "waist": 640, "hip": 650})
    options = PlanOptions(overrides=(Override("Side seam", "waist", "Back", -20.0),))
    finding = next(f for f in allot(block, body, options).findings if f.code == "override_exceeds_difference")
    assert finding.message == (
        "Waist: the edges you set by hand take in 4.0 cm of girth, 3.0 cm more than this level needs (1.0 cm). "
        "The edges left free let out 3.0 cm to make up for it; clear a hand-set cell if that is not what you meant."
    )


def test_it_says_when_a_level_lies_below_the_bottom_of_a_panel():
    # The Side panel ends 20 mm above the hip line (y 400): the girth there cannot be cut on it.
    from dataclasses import replace

    from patterns.core.block import Point

    block = three_panel_block()
    side = replace(block.panels[1], bottom_left=Point(150.0, 380.0), bottom_right=Point(250.0, 380.0))
    block = replace(block, panels=(block.panels[0], side, block.panels[2]))
    result = allot(block, Body(girths={"bust": 650, "waist": 650, "hip": 650}), PlanOptions())
    found = [f for f in result.findings if f.code == "level_beyond_panel"]
    assert [(f.level, f.severity) for f in found] == [("hip", "warning")]
    assert found[0].message.startswith("Hip: the hip line lies below the bottom of the Side panel")
    assert "level_beyond_panel" not in codes(
        allot(three_panel_block(), Body(girths={"bust": 650, "waist": 650, "hip": 650}), PlanOptions())
    )
