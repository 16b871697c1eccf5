"""Writing base patterns."""

from django.db import transaction

from patterns.core.block import Block, block_errors
from patterns.core.measures import LEVEL_CODES
from patterns.core.units import quantize_mm
from patterns.models import (
    BasePattern, GarmentKind, PanelLine, PatternLevel, PatternPanel, PatternSeam, SizeRun,
)


class BlockInvalid(ValueError):
    """A block that cannot be stored; ``errors`` lists every problem in plain words."""

    def __init__(self, errors):
        self.errors = list(errors)
        super().__init__(" ".join(self.errors))


def save_block(block: Block, size_run: SizeRun | None = None) -> BasePattern:
    """Store a core Block as a new BasePattern with its levels, panels and seams.

    The inverse of patterns.selectors.block_for, to 1/10 000 mm.  Nothing is
    saved when the block has any problem (BlockInvalid lists them all).
    """
    errors = block_errors(block)
    if block.garment not in GarmentKind.values:
        errors.append(
            f"Unknown garment {block.garment!r}; use one of: {', '.join(GarmentKind.values)}."
        )
    unknown = [name for name in block.level_names if name not in LEVEL_CODES]
    if unknown:
        errors.append(f"Unknown level {', '.join(unknown)}; use one of: {', '.join(LEVEL_CODES)}.")
    if size_run is not None and size_run.garment != block.garment:
        errors.append(f"The size run {size_run.name!r} is for a {size_run.garment}, not a {block.garment}.")
    if errors:
        raise BlockInvalid(errors)

    with transaction.atomic():
        pattern = BasePattern.objects.create(
            name=block.name,
            garment=block.garment,
            size_label=block.size,
            size_run=size_run,
            size_order=block.size_order,
            centre_front=block.centre_front,
            centre_back=block.centre_back,
            seam_allowance_mm=quantize_mm(block.seam_allowance_mm),
        )
        PatternLevel.objects.bulk_create(
            PatternLevel(pattern=pattern, name=level.name, y_mm=quantize_mm(level.y)) for level in block.levels
        )
        panels = PatternPanel.objects.bulk_create(
            PatternPanel(
                pattern=pattern,
                order=order,
                name=panel.name,
                side=panel.side,
                cut_count=panel.cut_count,
                on_fold=panel.on_fold,
                top_left_x=quantize_mm(panel.top_left.x),
                top_left_y=quantize_mm(panel.top_left.y),
                top_right_x=quantize_mm(panel.top_right.x),
                top_right_y=quantize_mm(panel.top_right.y),
                bottom_left_x=quantize_mm(panel.bottom_left.x),
                bottom_left_y=quantize_mm(panel.bottom_left.y),
                bottom_right_x=quantize_mm(panel.bottom_right.x),
                bottom_right_y=quantize_mm(panel.bottom_right.y),
            )
            for order, panel in enumerate(block.panels, start=1)
        )
        PanelLine.objects.bulk_create(
            PanelLine(
                panel=row,
                level=level.name,
                left_x=quantize_mm(panel.left[level.name]),
                right_x=quantize_mm(panel.right[level.name]),
            )
            for row, panel in zip(panels, block.panels)
            for level in block.levels
        )
        PatternSeam.objects.bulk_create(
            PatternSeam(
                pattern=pattern,
                order=order,
                name=seam.name,
                kind=seam.kind,
                alterable_levels=[name for name in block.level_names if name in seam.alterable_at],
                cap_mm=quantize_mm(seam.cap_mm),
            )
            for order, seam in enumerate(block.seams, start=1)
        )
    return pattern
