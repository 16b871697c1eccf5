"""Eyelets along the laced back and the lace they need, worked by hand.

Facts used:
- Eyelets about 2.5 cm apart along a corset's back: common practice.
- Two eyelets closer together either side of the waistline (about 1.2-1.5 cm apart):
  common practice, the distance from memory.
- A back lacing gap of about 5 cm: common practice.
"""

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from patterns import demo
from patterns.core.block import CB_SEAMED
from patterns.core.lacing import (
    EYELET_SPACING_MM,
    WAIST_PAIR_MM,
    LacingRules,
    eyelet_positions,
    lace_length,
    lacing,
)
from patterns.core.outline import base_outlines
from tests.patterns.workroom_helpers import hand_block

RULES = LacingRules(
    spacing_mm=25.0, waist_pair_mm=13.0, top_margin_mm=20.0, bottom_margin_mm=20.0, inset_mm=12.0, tail_mm=600.0
)


def test_it_places_eyelets_on_the_hand_block():
    block = hand_block()
    result = lacing(block, base_outlines(block), 50.0, RULES)
    # The back edge is straight, x = 400 from y 0 to 300; the waist at 150.
    assert result.edge_mm == pytest.approx(300.0, abs=0.01)
    # First eyelet 20 below the top, last 20 above the bottom; the waist pair 143.5 and 156.5.
    # Above: 143.5 - 20 = 123.5 mm in steps of at most 25 mm: 5 steps of 24.7 mm, 6 eyelets.
    # Below: the same.  12 eyelets on each back edge, 24 for the garment.
    assert result.count == 12
    assert result.total_count == 24
    expected = [20 + 24.7 * k for k in range(6)] + [156.5 + 24.7 * k for k in range(6)]
    assert [e.from_top_mm for e in result.eyelets] == pytest.approx(expected, abs=1e-6)
    # Spacing between consecutive eyelets: 24.7, except the waist pair's 13 mm.
    assert result.spacings_mm == pytest.approx([24.7] * 5 + [13.0] + [24.7] * 5, abs=1e-6)
    assert [e.number for e in result.eyelets if e.at_waist] == [6, 7]
    # Centres 12 mm in from the back stitch line (towards centre front).
    assert {round(e.point[0], 6) for e in result.eyelets} == {388.0}
    assert result.eyelets[0].point[1] == pytest.approx(20.0)


def test_it_works_out_the_lace_by_hand():
    block = hand_block()
    result = lacing(block, base_outlines(block), 50.0, RULES)
    # Rows of eyelets 50 + 2 * 12 = 74 mm apart.  Once across the top (74), two diagonals per step:
    # ten steps of 24.7 (sqrt(74^2 + 24.7^2) = 78.0134) and the waist step of 13
    # (sqrt(74^2 + 13^2) = 75.1332); two tails of 600.
    assert result.column_gap_mm == 74.0
    by_hand = 74 + 2 * (10 * 78.0134 + 75.1332) + 2 * 600
    assert result.lace_mm == pytest.approx(by_hand, abs=0.01)
    assert result.lace_mm == pytest.approx(2984.53, abs=0.01)


def test_it_never_leaves_a_gap_wider_than_the_spacing():
    for edge in (150.0, 300.0, 301.0, 333.3, 420.0):
        positions, pair = eyelet_positions(edge, edge / 2, RULES)
        gaps = [b - a for a, b in zip(positions, positions[1:])]
        assert max(gaps) <= 25.0 + 1e-9
        assert positions[0] == 20.0 and positions[-1] == pytest.approx(edge - 20.0)
        i, j = sorted(pair)
        assert positions[j] - positions[i] == pytest.approx(13.0)


@settings(max_examples=200, deadline=None)
@given(edge=st.floats(60, 900), waist_share=st.floats(0.0, 1.0), spacing=st.floats(10, 60), pair=st.floats(8, 20))
def test_it_keeps_its_spacing_rules_for_any_edge(edge, waist_share, spacing, pair):
    rules = LacingRules(spacing_mm=spacing, waist_pair_mm=pair, top_margin_mm=20, bottom_margin_mm=20)
    positions, pairs = eyelet_positions(edge, edge * waist_share, rules)
    assert positions == sorted(positions)
    gaps = [b - a for a, b in zip(positions, positions[1:])]
    assert all(g <= spacing + 1e-6 for g in gaps)
    assert all(g > 0 for g in gaps)
    assert positions[0] == pytest.approx(20) and positions[-1] == pytest.approx(edge - 20)
    if pairs:
        i, j = sorted(pairs)
        assert j == i + 1 and positions[j] - positions[i] == pytest.approx(min(pair, spacing))


def test_it_spaces_evenly_without_a_waist():
    positions, pair = eyelet_positions(120.0, None, RULES)
    # 80 mm from 20 to 100: 4 steps of 20 mm.
    assert positions == pytest.approx([20.0, 40.0, 60.0, 80.0, 100.0])
    assert pair == set()
    assert eyelet_positions(30.0, None, RULES) == ([], set())


def test_it_laces_only_a_laced_back():
    block = hand_block(centre_back=CB_SEAMED)
    assert lacing(block, base_outlines(block), 50.0) is None
    short = lacing(
        hand_block(), base_outlines(hand_block()), 50.0, LacingRules(top_margin_mm=200, bottom_margin_mm=200)
    )
    assert short.count == 0 and short.lace_mm == 0.0
    assert [f.code for f in short.findings] == ["back_too_short_for_eyelets"]


def test_it_lace_formula_for_two_eyelets():
    # One step: across (c), two diagonals, two tails.
    assert lace_length([30.0], 40.0, 100.0) == pytest.approx(40 + 2 * 50 + 200)


def test_it_uses_common_spacings_for_the_demo_corset():
    block = demo.corset_block("10")
    result = lacing(block, base_outlines(block), demo.LACING_GAP_MM)
    assert EYELET_SPACING_MM == 25.0 and 12.0 <= WAIST_PAIR_MM <= 15.0
    assert result.count >= 10
    assert max(result.spacings_mm) <= 25.0 + 1e-9
    assert sum(e.at_waist for e in result.eyelets) == 2


def test_it_refuses_rules_that_make_no_sense():
    for bad in ({"spacing_mm": 0}, {"waist_pair_mm": -1}, {"inset_mm": -2}, {"tail_mm": math.inf}):
        with pytest.raises(ValueError):
            LacingRules(**bad)
