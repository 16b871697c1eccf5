"""Base patterns in the database: Block -> rows -> Block, and the rows' own rules."""

import dataclasses
from decimal import Decimal

import pytest
from django.db import IntegrityError, transaction

from patterns import demo
from patterns.core.block import Block, Point
from patterns.models import BasePattern, PanelLine, PatternLevel, PatternPanel, PatternSeam, SizeRun
from patterns.selectors import block_for
from patterns.services import BlockInvalid, save_block

pytestmark = pytest.mark.django_db

# Stored to 1/10 000 mm (patterns/core/units.py): a round trip moves a value by at most half of that.
STORE_TOLERANCE = 0.00005


def quantized(block: Block) -> Block:
    """The block with every length rounded as the database keeps it."""
    q = lambda v: float(Decimal(repr(v)).quantize(Decimal("0.0001")))  # noqa: E731
    return dataclasses.replace(
        block,
        levels=tuple(dataclasses.replace(level, y=q(level.y)) for level in block.levels),
        panels=tuple(
            dataclasses.replace(
                panel,
                left={k: q(v) for k, v in panel.left.items()},
                right={k: q(v) for k, v in panel.right.items()},
                top_left=Point(q(panel.top_left.x), q(panel.top_left.y)),
                top_right=Point(q(panel.top_right.x), q(panel.top_right.y)),
                bottom_left=Point(q(panel.bottom_left.x), q(panel.bottom_left.y)),
                bottom_right=Point(q(panel.bottom_right.x), q(panel.bottom_right.y)),
            )
            for panel in block.panels
        ),
        seams=tuple(dataclasses.replace(seam, cap_mm=q(seam.cap_mm)) for seam in block.seams),
        seam_allowance_mm=q(block.seam_allowance_mm),
    )


def all_lengths(block):
    for level in block.levels:
        yield level.y
    for panel in block.panels:
        yield from panel.left.values()
        yield from panel.right.values()
        for point in (panel.top_left, panel.top_right, panel.bottom_left, panel.bottom_right):
            yield point.x
            yield point.y


@pytest.mark.parametrize("block", [*demo.corset_run(), demo.bodice_block()], ids=lambda b: f"{b.garment} {b.size}")
def test_it_gives_back_the_block_it_stored(block):
    loaded = block_for(save_block(block))
    assert loaded == quantized(block)
    assert max(abs(a - b) for a, b in zip(all_lengths(loaded), all_lengths(block))) <= STORE_TOLERANCE
    assert [level.name for level in loaded.levels] == [level.name for level in block.levels]
    assert [panel.name for panel in loaded.panels] == [panel.name for panel in block.panels]
    assert [(s.front_panel, s.back_panel) for s in loaded.seams] == [(s.front_panel, s.back_panel) for s in block.seams]


def test_it_round_trips_exactly_once_stored():
    once = block_for(save_block(demo.corset_block("12")))
    twice = block_for(save_block(dataclasses.replace(once, name="Copy")))
    assert dataclasses.replace(twice, name=once.name) == once


def test_it_builds_a_block_in_four_queries(django_assert_num_queries):
    pattern = save_block(demo.corset_block("10"))
    pattern = BasePattern.objects.get(pk=pattern.pk)
    with django_assert_num_queries(4):  # levels, panels, panel lines, seams
        block = block_for(pattern)
    assert len(block.panels) == 6
    with django_assert_num_queries(5):  # and the pattern itself
        block_for(pattern.pk)


def test_it_refuses_a_broken_block_and_saves_nothing():
    block = demo.corset_block("10")
    broken = dataclasses.replace(block, seams=block.seams[:-1])
    with pytest.raises(BlockInvalid, match="one seam between each pair"):
        save_block(broken)
    assert BasePattern.objects.count() == 0


def test_it_refuses_an_unknown_garment_or_level():
    block = demo.bodice_block()
    with pytest.raises(BlockInvalid, match="Unknown garment 'cape'"):
        save_block(dataclasses.replace(block, garment="cape"))
    assert BasePattern.objects.count() == 0


def test_it_refuses_a_size_run_of_another_garment():
    run = SizeRun.objects.create(name="Bodices", garment="bodice")
    with pytest.raises(BlockInvalid, match="is for a bodice"):
        save_block(demo.corset_block("10"), size_run=run)


def test_it_keeps_one_active_pattern_per_name_and_size(bodice_pattern):
    # The service says so in words before the database would refuse it ...
    with pytest.raises(BlockInvalid, match="already a base pattern"):
        save_block(demo.bodice_block())
    # ... and the database refuses it too.
    with pytest.raises(IntegrityError), transaction.atomic():
        BasePattern.objects.create(
            name=bodice_pattern.name, size_label=bodice_pattern.size_label, garment=bodice_pattern.garment
        )
    BasePattern.objects.filter(pk=bodice_pattern.pk).update(is_active=False)
    assert save_block(demo.bodice_block()).is_active


def test_it_refuses_a_panel_without_width_at_a_level(bodice_pattern):
    line = PanelLine.objects.filter(panel__pattern=bodice_pattern).first()
    line.right_x = line.left_x
    with pytest.raises(IntegrityError), transaction.atomic():
        line.save()


def test_it_refuses_a_level_twice(bodice_pattern):
    with pytest.raises(IntegrityError), transaction.atomic():
        PatternLevel.objects.create(pattern=bodice_pattern, name="waist", y_mm=999)


def test_it_refuses_negative_seam_allowance_and_cap(bodice_pattern):
    with pytest.raises(IntegrityError), transaction.atomic():
        BasePattern.objects.filter(pk=bodice_pattern.pk).update(seam_allowance_mm=-1)
    with pytest.raises(IntegrityError), transaction.atomic():
        PatternSeam.objects.filter(pattern=bodice_pattern).update(cap_mm=-1)


def test_it_refuses_a_panel_cut_zero_times(bodice_pattern):
    with pytest.raises(IntegrityError), transaction.atomic():
        PatternPanel.objects.filter(pattern=bodice_pattern).update(cut_count=0)


def test_it_keeps_a_drawn_blocks_curves_once_stored():
    """An imported block's altered outline follows its drawn stitch lines, so the stored pattern must keep them."""
    from patterns.demo import drawn_underbust_block

    block = drawn_underbust_block()
    assert all(p.curves is not None for p in block.panels)
    stored = block_for(save_block(block))
    assert [p.curves for p in stored.panels] == [p.curves for p in block.panels]  # kept as drawn (JSON floats)


def test_it_keeps_boning_channels_marked_inside_panels():
    from dataclasses import replace

    from patterns.core.block import ChannelMark

    block = demo.corset_block("10")
    marked = replace(
        block,
        name="Marked corset",
        channels=(
            ChannelMark(panel="Front", fraction=0.5, name="middle bone"),
            ChannelMark(panel="Centre back", edge="right", offset_mm=12.0),
        ),
    )
    assert block_for(save_block(marked)).channels == marked.channels
