"""Grading a size run from one block, through the allotment engine.

The arithmetic checked here: a girth change is worked on half patterns, so it
is halved for one body half, and a seam's share splits between its two raw
edges ([book] industry grading texts; common practice).  Size steps: EN
13402-3 women's bust girth intervals, 4 cm steps from 74 to 102 cm ([std] EN
13402-3, as cited in the team's reference facts).
"""

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from patterns.core import allot as allot_module
from patterns.core.block import block_errors
from patterns.core.grading import (
    EN13402_BUST_CM,
    EN13402_BUST_STEP_MM,
    GRADING_STEP_MM,
    GradingTable,
    grade_block,
    grade_run,
)
from patterns.core.outline import base_outlines
from patterns.demo import bodice_block, corset_block
from tests.patterns.geometry_helpers import width_at


def _table(block, girth=EN13402_BUST_STEP_MM, **extra):
    return GradingTable(girth_mm={lv: girth for lv in block.level_names}, **extra)


def test_it_takes_the_bust_step_from_en_13402_3():
    # EN 13402-3: 74, 78, ... 102 cm in 4 cm steps.
    steps = {b - a for a, b in zip(EN13402_BUST_CM, EN13402_BUST_CM[1:]) if b <= 102}
    assert steps == {4}
    assert EN13402_BUST_STEP_MM == 40.0


def test_it_halves_the_girth_step_and_splits_each_seams_share_between_its_two_raw_edges():
    block = corset_block("10")
    graded = grade_block(block, _table(block), 1, "12")
    shifts = graded.allotment.shifts
    # Bust: four seams may move there (the front princess seam only from the waist down), so eight raw edges
    # share half of 40 mm: 40 / 2 / 8 = 2.5 mm each.
    assert sorted({s.shift_mm for s in shifts if s.level == "bust"}) == [2.5]
    assert len([s for s in shifts if s.level == "bust"]) == 8
    # Waist: five seams, ten raw edges: 40 / 2 / 10 = 2.0 mm each.
    assert sorted({s.shift_mm for s in shifts if s.level == "waist"}) == [2.0]
    for level in block.level_names:
        assert graded.block.girth(level) - block.girth(level) == pytest.approx(40.0, abs=1e-9)


def test_it_calls_the_allotment_engine_rather_than_its_own_arithmetic(monkeypatch):
    calls = []
    real = allot_module.allot

    def spy(*args, **kwargs):
        calls.append(args)
        return real(*args, **kwargs)

    monkeypatch.setattr("patterns.core.grading.allot", spy)
    block = bodice_block()
    grade_block(block, _table(block), -1, "10")
    assert len(calls) == 1
    body = calls[0][1]
    assert body.girths["bust"] == pytest.approx(block.girth("bust") - 40.0)


def test_it_grades_a_run_to_the_en_13402_3_bust_intervals():
    block = corset_block("10")
    base_bust_cm = 86  # a base pattern of bust 86 cm graded over 82 .. 94 cm
    start = block.girth("bust")
    run = grade_run(block, _table(block), ["S1", "S2", "S3", "S4"], "S2")
    for graded, bust in zip(run, (82, 86, 90, 94)):
        assert graded.block.girth("bust") - start == pytest.approx((bust - base_bust_cm) * 10.0, abs=1e-9)
        assert not [f for f in graded.findings if f.severity == "error"]
        assert block_errors(graded.block) == []
    assert [g.block.size_order for g in run] == [0, 1, 2, 3]
    assert run[1].block.panels == block.panels


def test_it_measures_the_graded_outline_wider_by_the_step():
    block = bodice_block()
    graded = grade_block(block, _table(block), 2, "16").block
    y = graded.level_y("waist")
    before = sum(width_at(o, block.level_y("waist")) for o in base_outlines(block))
    after = sum(width_at(o, y) for o in base_outlines(graded))
    # Two steps of 4 cm of whole girth: 4 cm more on the half pattern, measured on the drawn outlines.
    assert after - before == pytest.approx(40.0, abs=0.05)


def test_it_lengthens_the_bands_it_is_told_to():
    block = corset_block("10")
    graded = grade_block(
        block, _table(block, band_mm={("waist", "abdomen"): 3.0, ("abdomen", "hip"): 2.0}), 2, "14"
    ).block
    assert graded.level_y("waist") == block.level_y("waist")
    assert graded.level_y("abdomen") == pytest.approx(block.level_y("abdomen") + 6.0)
    assert graded.level_y("hip") == pytest.approx(block.level_y("hip") + 10.0)
    assert graded.panels[0].bottom_left.y == pytest.approx(block.panels[0].bottom_left.y + 10.0)


def test_it_keeps_a_fold_straight_and_the_bound_edges():
    block = bodice_block()
    graded = grade_block(block, _table(block), 1, "14").block
    cf = graded.panels[0]
    assert len(set(cf.left.values())) == 1
    corset = grade_block(corset_block("10"), _table(corset_block("10")), -1, "8").block
    assert all(p.top_bound and p.bottom_bound for p in corset.panels)


def test_it_refuses_a_step_for_a_level_the_block_lacks():
    block = bodice_block()  # no hip level
    graded = grade_block(block, GradingTable(girth_mm={"hip": 40.0}), 1, "14")
    assert [f.code for f in graded.findings] == ["grading_level"]


def test_it_finds_a_panel_graded_to_nothing():
    block = bodice_block()
    graded = grade_block(block, _table(block, girth=400.0), -3, "tiny")
    assert any(f.severity == "error" for f in graded.findings)


@settings(max_examples=25, deadline=None)
@given(steps=st.integers(min_value=-3, max_value=3), girth=st.floats(min_value=0, max_value=60))
def test_it_meets_every_girth_to_the_rounding_step(steps, girth):
    block = corset_block("10")
    graded = grade_block(block, _table(block, girth=girth), steps, "x")
    for level in block.level_names:
        change = graded.block.girth(level) - block.girth(level)
        # Rounded edges: at most one step of 0.1 mm per raw edge away on each half, so 2 x 0.1 mm per level.
        assert change == pytest.approx(steps * girth, abs=2 * GRADING_STEP_MM + 1e-9)
