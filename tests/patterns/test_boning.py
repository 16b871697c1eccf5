"""Boning channels, bones and the busk, against outlines measured by hand (Pythagoras on straight lines).

Facts used:
- A bone is its channel less about 12 mm in all, clear of the bound edges: common practice.
- Busks sold in whole inches, 8-16 in: common practice, from memory; 1 in = 25.4 mm exactly
  (international yard and pound agreement, 1959).
"""

import json
import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from patterns import demo
from patterns.core.allot import PlanOptions
from patterns.core.block import CF_FOLD, Alteration, ChannelMark, PanelShift, block_errors
from patterns.core.boning import (
    DEFAULT_BUSK_STOCK_MM,
    MARKED,
    SEAM,
    BoningRules,
    boning_list,
    choose_busk,
    floor_to,
)
from patterns.core.fitting import block_from_dict, block_to_dict, fitting_to_dict, read_fitting
from patterns.core.outline import alter_block, base_outlines
from tests.patterns.workroom_helpers import MARKS, hand_block


def _by_name(result):
    return {c.name: c for c in result.channels}


def test_it_measures_the_seam_channels_of_a_rectangle_and_a_trapezoid():
    block = hand_block()
    result = boning_list(block, base_outlines(block))
    channels = _by_name(result)
    assert [c.kind for c in result.channels] == [SEAM, SEAM]
    # Rectangle's right edge and the trapezoid's left edge: both straight down, 300 mm.
    assert channels["Front seam"].channel_mm == pytest.approx(300.0, abs=0.01)
    # Side seam: the trapezoid's slanted right edge (30 mm across over 300 down) is shorter
    # than the back's left edge (40 across): the channel is the shorter one.
    assert channels["Side seam"].channel_mm == pytest.approx(math.hypot(300, 30), abs=0.01)
    assert channels["Side seam"].channel_mm < math.hypot(300, 40) - 1
    # Bone = channel - 12 mm (common practice), cut to whole mm, rounded down.
    assert channels["Front seam"].bone_mm == pytest.approx(288.0, abs=0.01)
    assert channels["Side seam"].bone_mm == pytest.approx(math.hypot(300, 30) - 12, abs=0.01)
    assert channels["Side seam"].cut_mm == 289.0  # 289.496 rounded down
    assert all(c.count == 2 for c in result.channels)  # both body halves


def test_it_measures_channels_the_block_marks():
    block = hand_block(MARKS)
    channels = _by_name(boning_list(block, base_outlines(block)))
    middle = channels["Side, 50% across"]
    assert middle.kind == MARKED
    # Half-way across the trapezoid: from x 140 at the top to x 125 at the bottom.
    assert middle.channel_mm == pytest.approx(math.hypot(300, 15), abs=0.01)
    assert middle.line[0] == pytest.approx((140.0, 0.0), abs=0.01)
    assert middle.line[-1] == pytest.approx((125.0, 300.0), abs=0.01)
    lacing_bone = channels["Lacing bone"]
    # 15 mm in from the straight back edge (x 400): x 385 from top to bottom, 300 mm.
    assert lacing_bone.channel_mm == pytest.approx(300.0, abs=0.01)
    assert {round(x, 3) for x, _ in lacing_bone.line} == {385.0}
    assert list(channels) == ["Front seam", "Side, 50% across", "Side seam", "Lacing bone"]


def test_it_offsets_a_channel_square_to_a_slanted_edge():
    block = hand_block((ChannelMark("Back", edge="left", offset_mm=10.0),))
    channel = _by_name(boning_list(block, base_outlines(block)))["Back, 10 mm from the left edge"]
    # The back's left edge slants 40 across over 300 down.  A parallel 10 mm inside is the
    # same slant moved along the normal; clipped by the level top and bottom edges it spans
    # the full 300 mm of height, so its length is that of the edge itself.
    assert channel.channel_mm == pytest.approx(math.hypot(300, 40), abs=0.05)
    top_x = channel.line[0][0]
    assert top_x == pytest.approx(280 + 10 * math.hypot(300, 40) / 300, abs=0.05)


def test_it_follows_the_alteration():
    block = hand_block()
    # Lengthen the waist-to-hip band by 20 mm: every edge below the waist is stretched.
    altered = alter_block(block, Alteration(shifts={}, bands={("waist", "hip"): 20.0}))
    channels = _by_name(boning_list(block, altered))
    assert channels["Front seam"].channel_mm == pytest.approx(320.0, abs=0.01)
    # The trapezoid's right edge in three straight runs: 0-150 (15 across), 150-270 (10), 270-320 (5).
    expected = math.hypot(150, 15) + math.hypot(120, 10) + math.hypot(50, 5)
    assert channels["Side seam"].channel_mm == pytest.approx(expected, abs=0.05)


def test_it_chooses_the_longest_stocked_busk_that_fits():
    block = hand_block()
    busk = boning_list(block, base_outlines(block)).busk
    assert busk.centre_front_mm == pytest.approx(300.0, abs=0.01)
    assert busk.room_mm == pytest.approx(288.0, abs=0.01)
    assert busk.length_mm == pytest.approx(11 * 25.4)  # 279.4 fits; 12 in (304.8) does not
    assert busk.short_by_mm == pytest.approx(288.0 - 279.4, abs=0.01)
    longer = alter_block(block, Alteration(shifts={}, bands={("waist", "hip"): 20.0}))
    assert boning_list(block, longer).busk.length_mm == pytest.approx(12 * 25.4)  # room 308


def test_it_takes_the_atelier_stock_and_its_clearance():
    assert choose_busk(300.0, BoningRules(busk_stock_mm=(250.0, 280.0, 290.0))).length_mm == 280.0
    assert (
        choose_busk(300.0, BoningRules(busk_stock_mm=(250.0, 280.0, 290.0), busk_clearance_mm=10.0)).length_mm == 290.0
    )
    # Exactly the room fits.
    assert choose_busk(300.0, BoningRules(busk_stock_mm=(288.0,))).length_mm == 288.0
    none = choose_busk(200.0, BoningRules(busk_stock_mm=(250.0,)))
    assert none.length_mm is None and none.short_by_mm is None


def test_it_warns_when_no_busk_fits_and_has_no_busk_on_a_fold():
    block = hand_block()
    result = boning_list(block, base_outlines(block), BoningRules(busk_stock_mm=(330.0,)))
    assert result.busk.length_mm is None
    assert [f.code for f in result.findings] == ["no_busk_fits"]
    folded = hand_block(centre_front=CF_FOLD)
    assert boning_list(folded, base_outlines(folded)).busk is None


def test_it_uses_its_clearance_setting():
    block = hand_block()
    channels = _by_name(boning_list(block, base_outlines(block), BoningRules(clearance_mm=20.0)))
    assert channels["Front seam"].bone_mm == pytest.approx(280.0, abs=0.01)
    tiny = boning_list(block, base_outlines(block), BoningRules(clearance_mm=400.0))
    assert {f.code for f in tiny.findings} >= {"channel_too_short"}
    assert all(c.cut_mm == 0 for c in tiny.channels)


def test_it_refuses_rules_that_make_no_sense():
    for bad in (
        {"clearance_mm": -1},
        {"cut_step_mm": 0},
        {"busk_stock_mm": (250.0, -3.0)},
        {"clearance_mm": float("nan")},
    ):
        with pytest.raises(ValueError):
            BoningRules(**bad)


def test_it_rounds_bones_down():
    assert floor_to(289.496, 1.0) == 289.0
    assert floor_to(289.0, 1.0) == 289.0
    assert floor_to(300.0, 25.4 / 16) == pytest.approx(188 * 25.4 / 16)  # 11.75 in


def test_it_counts_bones_for_the_demo_corset():
    block = demo.corset_block("10")
    result = boning_list(block, base_outlines(block))
    assert len(result.channels) == len(block.seams) == 5
    assert result.bone_count == 10
    assert result.total_bone_mm == pytest.approx(sum(2 * c.cut_mm for c in result.channels))
    # The default stock is 8 to 16 whole inches.
    assert DEFAULT_BUSK_STOCK_MM == (203.2, 228.6, 254.0, 279.4, 304.8, 330.2, 355.6, 381.0, 406.4)
    assert result.busk.length_mm in DEFAULT_BUSK_STOCK_MM
    assert result.busk.length_mm <= result.busk.centre_front_mm - 12


def test_it_keeps_marked_channels_through_the_fitting_file():
    block = hand_block(MARKS)
    assert block_errors(block) == []
    data = json.loads(json.dumps(block_to_dict(block)))
    assert data["channels"] == [
        {"panel": "Side", "fraction": 0.5, "edge": "left", "offset_mm": 0.0},
        {"panel": "Back", "edge": "right", "offset_mm": 15.0, "name": "Lacing bone"},
    ]
    assert block_from_dict(data) == block
    # A block without marks writes the file it always did (no "channels" key), and reads back.
    plain = demo.corset_block("10")
    assert "channels" not in block_to_dict(plain)
    values = {k: float(v) for k, v in demo.DEMO_CLIENTS[0]["sessions"][0]["values"].items()}
    _, read, _ = read_fitting(json.loads(json.dumps(fitting_to_dict(values, block, PlanOptions()))))
    assert read.channels == block.channels


def test_it_finds_marks_on_panels_that_do_not_exist():
    block = hand_block((ChannelMark("Nowhere", fraction=0.5), ChannelMark("Side", fraction=1.5)))
    errors = block_errors(block)
    assert any("Nowhere" in e for e in errors) and any("0 to 1" in e for e in errors)


@settings(max_examples=60, deadline=None)
@given(
    band=st.floats(-60, 60), shift=st.floats(-8, 8), clearance=st.floats(0, 40), step=st.sampled_from([1.0, 25.4 / 16])
)
def test_it_never_cuts_a_bone_longer_than_its_channel_allows(band, shift, clearance, step):
    block = hand_block(MARKS)
    shifts = {p.name: {lv: PanelShift(shift, shift) for lv in block.level_names} for p in block.panels}
    altered = alter_block(block, Alteration(shifts=shifts, bands={("waist", "hip"): band}))
    result = boning_list(block, altered, BoningRules(clearance_mm=clearance, cut_step_mm=step))
    for c in result.channels:
        assert c.bone_mm == pytest.approx(c.channel_mm - clearance)
        assert 0 <= c.cut_mm <= max(c.bone_mm, 0) + 1e-9
        assert c.cut_mm == pytest.approx(round(c.cut_mm / step) * step)
        assert c.bone_mm - c.cut_mm < step + 1e-9 or c.cut_mm == 0
    # The centre front stretches with the band: 300 mm plus the band's change.
    assert result.busk.centre_front_mm == pytest.approx(300.0 + band, abs=0.01)
    if result.busk.length_mm is not None:
        assert result.busk.length_mm <= result.busk.room_mm + 1e-9
        assert not any(result.busk.length_mm < v <= result.busk.room_mm for v in result.rules.busk_stock_mm)
