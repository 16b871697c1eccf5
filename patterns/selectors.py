"""Reading base patterns: the stored rows as the core's plain Block."""

from django.db.models import Prefetch, prefetch_related_objects

from patterns.core.block import Block, Level, Panel, Point, Seam
from patterns.core.fitting import channels_from_list, curves_from_dict
from patterns.models import BasePattern, PatternPanel


def active_patterns():
    """Patterns offered for new plans, grouped by name, smallest size first."""
    return BasePattern.objects.filter(is_active=True).select_related("size_run")


def pattern(pk) -> BasePattern | None:
    """One base pattern with its size run and the version it was edited from; None where there is none
    (``pk`` as an int, or as typed in a form: digits only)."""
    if isinstance(pk, str):
        if not (pk.isascii() and pk.isdigit() and len(pk) < 19):
            return None
        pk = int(pk)
    return BasePattern.objects.select_related("size_run", "previous").filter(pk=pk).first()


def block_for(pattern) -> Block:
    """The plain Block of a stored pattern (an instance or a primary key).

    Four queries for an instance (levels, panels, their lines, seams), none
    if they were prefetched already, one more for a primary key.
    """
    if not isinstance(pattern, BasePattern):
        pattern = BasePattern.objects.get(pk=pattern)
    prefetch_related_objects(
        [pattern],
        "levels",
        Prefetch("panels", queryset=PatternPanel.objects.prefetch_related("lines")),
        "seams",
    )
    levels = tuple(
        Level(name=level.name, y=float(level.y_mm))
        for level in sorted(pattern.levels.all(), key=lambda level: level.y_mm)
    )
    level_rank = {level.name: i for i, level in enumerate(levels)}
    panel_rows = sorted(pattern.panels.all(), key=lambda panel: panel.order)
    panels = []
    for row in panel_rows:
        lines = sorted(row.lines.all(), key=lambda line: level_rank.get(line.level, len(level_rank)))
        panels.append(
            Panel(
                name=row.name,
                side=row.side,
                left={line.level: float(line.left_x) for line in lines},
                right={line.level: float(line.right_x) for line in lines},
                top_left=Point(float(row.top_left_x), float(row.top_left_y)),
                top_right=Point(float(row.top_right_x), float(row.top_right_y)),
                bottom_left=Point(float(row.bottom_left_x), float(row.bottom_left_y)),
                bottom_right=Point(float(row.bottom_right_x), float(row.bottom_right_y)),
                cut_count=row.cut_count,
                on_fold=row.on_fold,
                top_bound=row.top_bound,
                bottom_bound=row.bottom_bound,
                grainline_x=None if row.grainline_x is None else float(row.grainline_x),
                curves=curves_from_dict(row.curves) if row.curves else None,
            )
        )
    name_at = {row.order: row.name for row in panel_rows}
    seams = tuple(
        Seam(
            name=row.name,
            kind=row.kind,
            front_panel=name_at.get(row.order, ""),
            back_panel=name_at.get(row.order + 1, ""),
            alterable_at=frozenset(row.alterable_levels),
            cap_mm=float(row.cap_mm),
        )
        for row in sorted(pattern.seams.all(), key=lambda seam: seam.order)
    )
    return Block(
        name=pattern.name,
        size=pattern.size_label,
        garment=pattern.garment,
        levels=levels,
        panels=tuple(panels),
        seams=seams,
        centre_front=pattern.centre_front,
        centre_back=pattern.centre_back,
        seam_allowance_mm=float(pattern.seam_allowance_mm),
        size_order=pattern.size_order,
        channels=channels_from_list(pattern.channels or []),
    )


def patterns_by_run():
    """(runs, patterns in no run): each run with its active sizes, smallest first."""
    from patterns.models import SizeRun

    patterns = list(active_patterns().order_by("size_order", "size_label"))
    runs = {run.pk: {"run": run, "patterns": []} for run in SizeRun.objects.order_by("name")}
    singles = []
    for pattern in patterns:
        if pattern.size_run_id in runs:
            runs[pattern.size_run_id]["patterns"].append(pattern)
        else:
            singles.append(pattern)
    singles.sort(key=lambda p: (p.name, p.size_order, p.size_label))
    return [r for r in runs.values() if r["patterns"]], singles


def versions_of(pattern):
    """Every version of this block, oldest first (following the links both ways)."""
    first = pattern
    while first.previous_id is not None:
        first = BasePattern.objects.get(pk=first.previous_id)
    chain = [first]
    while True:
        later = BasePattern.objects.filter(previous=chain[-1]).order_by("version").first()
        if later is None or len(chain) > 200:
            break
        chain.append(later)
    return chain


def width_rows(block, unit):
    """Per level: its height and each panel's width, as text in ``unit``, and the half girth."""
    from patterns.core.measures import LEVEL_LABELS
    from patterns.core.units import format_length

    return [
        {
            "level": LEVEL_LABELS.get(lv.name, lv.name),
            "y": format_length(lv.y, unit),
            "widths": [format_length(p.width(lv.name), unit) for p in block.panels],
            "girth": format_length(block.girth(lv.name), unit),
        }
        for lv in block.levels
    ]


def graded_rows(block, graded, unit):
    """Per graded size: its girth at every level, as text, and its findings."""
    from patterns.core.units import format_length

    return [
        {
            "size": g.size,
            "steps": g.steps,
            "girths": [format_length(g.block.girth(lv), unit) for lv in block.level_names],
            "findings": g.findings,
        }
        for g in graded
    ]


def seam_rows(block, unit):
    """Per seam: its name, kind, the levels where it may move (in words) and its cap, as text."""
    from patterns.core.measures import LEVEL_LABELS
    from patterns.core.units import format_with_unit

    return [
        {
            "name": s.name,
            "kind": s.kind,
            "moves": ", ".join(LEVEL_LABELS.get(lv, lv).lower() for lv in block.level_names if lv in s.alterable_at)
            or "nowhere",
            "cap": format_with_unit(s.cap_mm, unit),
        }
        for s in block.seams
    ]
