"""Typing a block in: the draft, its findings in words, and the tape entry giving the same block."""

import dataclasses

import pytest

from patterns.core.block import BACK, FRONT, Level
from patterns.core.drafting import (
    BlockDraft,
    PanelDraft,
    SeamDraft,
    TapePanel,
    TapeReadings,
    build_block,
    draft_from_block,
    draft_from_tape,
)
from patterns.demo import bodice_block, corset_block

LEVELS = (Level("bust", 80.0), Level("waist", 260.0), Level("hip", 420.0))


def _draft(**changes):
    panels = (
        PanelDraft(
            "Front",
            FRONT,
            {"bust": 110.0, "waist": 80.0, "hip": 115.0},
            top=(0.0, 20.0),
            bottom=(440.0, 440.0),
            top_bound=True,
            bottom_bound=True,
        ),
        PanelDraft(
            "Side", FRONT, {"bust": 100.0, "waist": 75.0, "hip": 110.0}, top=(20.0, 40.0), bottom=(440.0, 440.0)
        ),
        PanelDraft("Back", BACK, {"bust": 105.0, "waist": 85.0, "hip": 120.0}, top=(40.0, 30.0), bottom=(440.0, 450.0)),
    )
    seams = (
        SeamDraft("Front seam", "princess", frozenset({"waist", "hip"})),
        SeamDraft("Side seam", "side", frozenset({"bust", "waist", "hip"}), cap_mm=12.0),
    )
    base = dict(name="Test block", size="M", garment="underbust corset", levels=LEVELS, panels=panels, seams=seams)
    base.update(changes)
    return BlockDraft(**base)


def test_it_builds_a_block_from_widths_laid_out_without_overlap():
    drafted = build_block(_draft())
    assert drafted.ok, drafted.findings
    block = drafted.block
    assert [p.width("waist") for p in block.panels] == pytest.approx([80.0, 75.0, 85.0])
    assert block.half_girth("hip") == pytest.approx(345.0)
    for a, b in zip(block.panels, block.panels[1:]):
        assert max(a.right.values()) < min(b.left.values())
    # Straight centre front and centre back.
    assert len(set(block.panels[0].left.values())) == 1
    assert len(set(block.panels[-1].right.values())) == 1
    assert block.panels[0].top_bound and not block.panels[1].top_bound
    assert block.seams[1].cap_mm == 12.0 and block.seams[0].alterable_at == {"waist", "hip"}


@pytest.mark.parametrize("block", [corset_block("10"), bodice_block()], ids=["corset", "bodice"])
def test_it_gives_back_a_stored_block_from_its_draft(block):
    assert build_block(draft_from_block(block)).block == block


def test_it_says_a_negative_width_in_words():
    draft = _draft()
    bad = dataclasses.replace(draft.panels[1], widths={**draft.panels[1].widths, "waist": -5.0})
    drafted = build_block(dataclasses.replace(draft, panels=(draft.panels[0], bad, draft.panels[2])))
    assert drafted.block is None
    assert [f.code for f in drafted.errors] == ["width_not_positive"]
    assert "Side is -0.5 cm wide at the waist" in drafted.errors[0].message


def test_it_finds_crossing_top_and_bottom_edges():
    draft = _draft()
    bad = dataclasses.replace(draft.panels[2], top=(40.0, 460.0))
    drafted = build_block(dataclasses.replace(draft, panels=(*draft.panels[:2], bad)))
    assert "edges_cross" in [f.code for f in drafted.errors]
    assert "cross at its right stitch line" in next(f.message for f in drafted.errors if f.code == "edges_cross")


def test_it_finds_a_level_outside_a_panel_and_outside_the_block():
    draft = _draft()
    short = dataclasses.replace(draft.panels[1], bottom=(400.0, 400.0))
    drafted = build_block(dataclasses.replace(draft, panels=(draft.panels[0], short, draft.panels[2])))
    outside = [f for f in drafted.findings if f.code == "level_outside_panel"]
    assert drafted.ok and len(outside) == 2
    assert "The hip (42.0 cm from the top) lies below the bottom of Side" in outside[0].message
    far = dataclasses.replace(draft, levels=(*LEVELS[:2], Level("hip", 900.0)))
    drafted = build_block(far)
    assert drafted.block is None and "level_outside_block" in [f.code for f in drafted.errors]


def test_it_finds_stitch_lines_placed_by_hand_that_cross_a_neighbour():
    draft = _draft()
    placed = tuple(
        dataclasses.replace(p, lefts={lv.name: x for lv in LEVELS}) for p, x in zip(draft.panels, (0.0, 100.0, 250.0))
    )
    drafted = build_block(dataclasses.replace(draft, panels=placed))
    overlaps = [f for f in drafted.findings if f.code == "panels_overlap"]
    # Front is 110 mm wide at the bust but Side starts at 100 mm: they cross by 1 cm there, and at the hip by 1.5 cm.
    assert {f.level for f in overlaps} == {"bust", "hip"}
    assert "lies 1.0 cm beyond the centre-front stitch line of Side" in overlaps[0].message


def test_it_refuses_a_seam_moving_at_a_level_the_block_lacks():
    draft = _draft(
        seams=(
            SeamDraft("Front seam", "princess", frozenset({"underbust"})),
            SeamDraft("Side seam", "side", frozenset({"waist"})),
        )
    )
    drafted = build_block(draft)
    assert [f.code for f in drafted.errors] == ["seam_level_unknown"]


def _tape_of(draft):
    """What a fitter reads with a tape off the block the draft describes (upright lines)."""
    ys = [lv.y for lv in draft.levels]
    tops = [draft.panels[0].top[0]] + [p.top[1] for p in draft.panels]
    bottoms = [draft.panels[0].bottom[0]] + [p.bottom[1] for p in draft.panels]
    down = tuple(
        (ys[0] - top, *[b - a for a, b in zip(ys, ys[1:])], bottom - ys[-1]) for top, bottom in zip(tops, bottoms)
    )
    return TapeReadings(
        levels=tuple(lv.name for lv in draft.levels),
        panels=tuple(
            TapePanel(p.name, p.side, p.cut_count, p.on_fold, p.top_bound, p.bottom_bound) for p in draft.panels
        ),
        widths={lv.name: tuple(p.widths[lv.name] for p in draft.panels) for lv in draft.levels},
        down=down,
    )


def test_it_makes_the_same_block_from_tape_readings_as_from_the_form():
    # Shared corners between neighbours, as on a card pattern: each seam has one top and one bottom height.
    draft = _draft()
    readings = _tape_of(draft)
    from_tape, findings = draft_from_tape(
        readings, name=draft.name, size=draft.size, garment=draft.garment, seams=draft.seams
    )
    assert findings == ()
    assert build_block(from_tape).block == build_block(draft).block


def test_it_warns_when_a_seam_measures_shorter_than_the_centre_front_between_levels():
    draft = _draft()
    readings = _tape_of(draft)
    down = list(readings.down)
    down[2] = (down[2][0], down[2][1] - 10.0, *down[2][2:])
    _, findings = draft_from_tape(
        dataclasses.replace(readings, down=tuple(down)), name="x", size="1", garment="bodice", seams=draft.seams
    )
    assert [f.code for f in findings] == ["line_shorter_than_centre_front"]
    assert "Along the Side seam the bust to waist measures 17.0 cm, less than the 18.0 cm" in findings[0].message
