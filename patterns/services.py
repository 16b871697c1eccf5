"""Writing base patterns."""

from django.db import transaction

from patterns.core.block import Block, block_errors
from patterns.core.fitting import block_to_dict, channels_to_list, curves_to_dict
from patterns.core.measures import LEVEL_CODES
from patterns.core.units import quantize_mm
from patterns.models import (
    BasePattern,
    GarmentKind,
    PanelLine,
    PatternLevel,
    PatternPanel,
    PatternSeam,
    SizeRun,
)
from patterns.selectors import block_for


class BlockInvalid(ValueError):
    """A block that cannot be stored; ``errors`` lists every problem in plain words."""

    def __init__(self, errors):
        self.errors = list(errors)
        super().__init__(" ".join(self.errors))


def _problems(block: Block, size_run: SizeRun | None) -> list[str]:
    errors = block_errors(block)
    if block.garment not in GarmentKind.values:
        errors.append(f"Unknown garment {block.garment!r}; use one of: {', '.join(GarmentKind.values)}.")
    unknown = [name for name in block.level_names if name not in LEVEL_CODES]
    if unknown:
        errors.append(f"Unknown level {', '.join(unknown)}; use one of: {', '.join(LEVEL_CODES)}.")
    if size_run is not None and size_run.garment != block.garment:
        errors.append(f"The size run {size_run.name!r} is for a {size_run.garment}, not a {block.garment}.")
    return errors


def _taken(block: Block, size_run: SizeRun | None, but=None) -> list[str]:
    errors = []
    same = BasePattern.objects.filter(is_active=True, name=block.name, size_label=block.size)
    if but is not None:
        same = same.exclude(pk=but.pk)
    if same.exists():
        errors.append(
            f"There is already a base pattern “{block.name}”, size {block.size}. Give this one another name or size."
        )
    if size_run is not None:
        in_run = BasePattern.objects.filter(is_active=True, size_run=size_run, size_label=block.size)
        if but is not None:
            in_run = in_run.exclude(pk=but.pk)
        if in_run.exists():
            errors.append(f"The size run {size_run.name!r} has a size {block.size} already.")
    return errors


def save_block(block: Block, size_run: SizeRun | None = None, *, previous: BasePattern | None = None) -> BasePattern:
    """Store a core Block as a new BasePattern with its levels, panels and seams.

    The inverse of patterns.selectors.block_for, to 1/10 000 mm.  Nothing is
    saved when the block has any problem (BlockInvalid lists them all).
    """
    with transaction.atomic():
        errors = _problems(block, size_run) + _taken(block, size_run, but=previous)
        if errors:
            raise BlockInvalid(errors)
        if previous is not None:
            # The old version stays for the plans made from it, but is no longer offered.
            BasePattern.objects.filter(pk=previous.pk).update(is_active=False)
        pattern = BasePattern.objects.create(
            name=block.name,
            garment=block.garment,
            size_label=block.size,
            size_run=size_run,
            size_order=block.size_order,
            centre_front=block.centre_front,
            centre_back=block.centre_back,
            seam_allowance_mm=quantize_mm(block.seam_allowance_mm),
            version=previous.version + 1 if previous is not None else 1,
            previous=previous,
            notes=previous.notes if previous is not None else "",
            channels=channels_to_list(block.channels),
        )
        _store_parts(pattern, block)
    return pattern


def _store_parts(pattern: BasePattern, block: Block) -> None:
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
            top_bound=panel.top_bound,
            bottom_bound=panel.bottom_bound,
            grainline_x=None if panel.grainline_x is None else quantize_mm(panel.grainline_x),
            curves=None if panel.curves is None else curves_to_dict(panel.curves),
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


def _rounded(block: Block):
    """The block as it would be stored (lengths to 1/10 000 mm), for telling an edit from no change."""

    def walk(value):
        if isinstance(value, float):
            return quantize_mm(value)
        if isinstance(value, dict):
            return {k: walk(v) for k, v in value.items()}
        if isinstance(value, (list, tuple)):
            return [walk(v) for v in value]
        return value

    return walk(block_to_dict(block))


def is_used(pattern: BasePattern) -> bool:
    """Whether any plan was made from this version (its revisions hold the block as it was)."""
    return pattern.plans.exists()


def edit_block(pattern: BasePattern, block: Block) -> BasePattern:
    """Store an edited block.

    A block no plan uses yet is rewritten in place.  A block that plans use
    becomes a new version (one more, pointing back to it) that takes its
    place in its size run and in the list of patterns offered; the plans keep
    the version they were made from, so their next revision is worked out on
    the same shapes as the last.  Nothing is saved when the block has any
    problem.
    """
    with transaction.atomic():
        pattern = BasePattern.objects.select_for_update().get(pk=pattern.pk)
        if not pattern.is_active:
            raise BlockInvalid(["This version was replaced by a later one; edit the latest version instead."])
        if _rounded(block) == _rounded(block_for(pattern)):
            return pattern  # nothing changed: no new version
        if is_used(pattern):
            return save_block(block, pattern.size_run, previous=pattern)
        errors = _problems(block, pattern.size_run) + _taken(block, pattern.size_run, but=pattern)
        if errors:
            raise BlockInvalid(errors)
        for field, value in (
            ("name", block.name),
            ("garment", block.garment),
            ("size_label", block.size),
            ("size_order", block.size_order),
            ("centre_front", block.centre_front),
            ("centre_back", block.centre_back),
            ("seam_allowance_mm", quantize_mm(block.seam_allowance_mm)),
        ):
            setattr(pattern, field, value)
        pattern.save()
        pattern.levels.all().delete()
        pattern.panels.all().delete()
        pattern.seams.all().delete()
        _store_parts(pattern, block)
    return pattern


def save_graded_run(*, pattern: BasePattern, run_name: str, graded) -> SizeRun:
    """A new size run holding ``pattern`` itself and the sizes graded from it (``GradedSize`` list).

    All or nothing: any size with an error, a run name in use, or a pattern
    that belongs to a run already, and nothing is saved.
    """
    errors = []
    for size in graded:
        errors += [f.message for f in size.findings if f.severity == "error"]
    if pattern.size_run_id is not None:
        errors.append(f"{pattern} belongs to the size run {pattern.size_run.name!r} already.")
    if not pattern.is_active:
        errors.append("This version was replaced by a later one; grade the latest version.")
    if SizeRun.objects.filter(name=run_name).exists():
        errors.append(f"There is already a size run called {run_name!r}.")
    if errors:
        raise BlockInvalid(errors)
    with transaction.atomic():
        run = SizeRun.objects.create(name=run_name, garment=pattern.garment)
        for size in graded:
            if size.steps == 0:
                # A pattern plans use keeps its size order: it is part of the block their revisions hold.
                order = pattern.size_order if is_used(pattern) else size.block.size_order
                BasePattern.objects.filter(pk=pattern.pk).update(size_run=run, size_order=order)
            else:
                save_block(size.block, run)
    return run
