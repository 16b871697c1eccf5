"""What the engine says about a plan besides the shifts: impossible readings, cautions, shapes to check.

Every finding has a stable code and plain words; each threshold says where it comes from.
"""

import math

from patterns.core.block import MIN_PANEL_WIDTH_MM
from patterns.core.findings import CAUTION, ERROR, WARNING, Finding
from patterns.core.measures import LEVEL_LABELS
from patterns.core.policies import POLICIES
from patterns.core.rounding import EPS
from patterns.core.units import format_with_unit

STEEP_SLOPE = 0.2  # our choice: 1 mm of shift per 5 mm of seam between levels keeps the line smooth
ABSURD_UNDERBUST_EXCESS_MM = 100.0  # our choice: underbust over bust by more than 10 cm is a mis-reading
FIRST_CORSET_REDUCTION_MM = 100.0  # common practice: a first corset reduces the waist 5-10 cm
FIRST_CORSET_REDUCTION_SHARE = 0.10  # common practice: about 10 % of the natural waist
GAP_WARNING_MM = 80.0  # common practice: about 5 cm is usual; much wider strains the back unevenly


def input_findings(block, body, options, gap) -> list[Finding]:
    findings = []
    for level in block.level_names:
        girth = body.girths.get(level)
        label = LEVEL_LABELS.get(level, level)
        if girth is None:
            findings.append(
                Finding(
                    "missing_girth", ERROR, f"No {label.lower()} girth was measured; the pattern needs it.", level=level
                )
            )
        elif not math.isfinite(girth) or girth <= 0:
            findings.append(
                Finding("impossible_girth", ERROR, f"The {label.lower()} girth must be a positive length.", level=level)
            )
        arc = body.front_arcs.get(level)
        if arc is not None and girth is not None and not (0 < arc < girth):
            findings.append(
                Finding(
                    "impossible_front_arc",
                    ERROR,
                    f"The {label.lower()} front arc must be shorter than the whole girth.",
                    level=level,
                )
            )
    for level in block.levels:
        label = LEVEL_LABELS.get(level.name, level.name)
        above = [p.name for p in block.panels if max(p.top_left.y, p.top_right.y) > level.y]
        below = [p.name for p in block.panels if min(p.bottom_left.y, p.bottom_right.y) < level.y]
        for names, where in ((above, "above the top of"), (below, "below the bottom of")):
            if names:
                findings.append(
                    Finding(
                        "level_beyond_panel",
                        WARNING,
                        f"{label}: the {label.lower()} line lies {where} {_panel_list(names)}, so what is worked out "
                        f"there for {'it' if len(names) == 1 else 'them'} is not cut. Check the pattern's levels, "
                        "and check this level on the toile.",
                        level=level.name,
                    )
                )
    bust, underbust = body.girths.get("bust"), body.girths.get("underbust")
    if bust and underbust and underbust - bust > ABSURD_UNDERBUST_EXCESS_MM:
        findings.append(
            Finding(
                "underbust_exceeds_bust",
                ERROR,
                f"The underbust girth is {(underbust - bust) / 10:.1f} cm larger than the bust girth. One of them is likely misread.",
                level="underbust",
            )
        )
    if options.step_mm <= 0 or not math.isfinite(options.step_mm):
        findings.append(Finding("bad_step", ERROR, "The rounding step must be a positive length."))
    if options.policy not in POLICIES:
        findings.append(Finding("unknown_policy", ERROR, f"Unknown distribution {options.policy!r}."))
    if gap > GAP_WARNING_MM:
        findings.append(
            Finding(
                "wide_lacing_gap",
                WARNING,
                f"A lacing gap of {gap / 10:.1f} cm is wide; about 5 cm is usual, and a much wider gap puts uneven pressure on the back.",
            )
        )
    seams = {s.name: s for s in block.seams}
    for item in (*options.overrides, *options.pins):
        if item.seam not in seams:
            findings.append(Finding("unknown_seam", ERROR, f"There is no seam called {item.seam!r} in this pattern."))
        if item.level not in block.level_names:
            findings.append(Finding("unknown_level", ERROR, f"The pattern has no level {item.level!r}."))
    for o in options.overrides:
        if o.seam in seams and o.panel not in (seams[o.seam].front_panel, seams[o.seam].back_panel):
            findings.append(
                Finding("unknown_edge", ERROR, f"The {o.seam} has no raw edge on panel {o.panel!r}.", seam=o.seam)
            )
    waist = body.girths.get("waist")
    reduction = -options.ease.get("waist", 0.0)
    if (
        waist
        and reduction > 0
        and (reduction > FIRST_CORSET_REDUCTION_MM or reduction > FIRST_CORSET_REDUCTION_SHARE * waist)
    ):
        findings.append(
            Finding(
                "strong_waist_reduction",
                CAUTION,
                f"A waist reduction of {reduction / 10:.1f} cm ({100 * reduction / waist:.0f} % of the natural waist) is more "
                "than is usual for a first corset (5 to 10 cm, about 10 %). Strong reduction restricts breathing and can "
                "injure: plan gradual wear, check the client's comfort at every fitting, and follow the fitter's judgment.",
                level="waist",
            )
        )
    return findings


def _panel_list(names: list[str]) -> str:
    words = names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]
    return f"the {words} panel{'s' if len(names) > 1 else ''}"


def shape_findings(block, edge_shifts, cf_shift) -> list[Finding]:
    findings = []
    by_edge: dict[tuple[str, str], dict[str, float]] = {}
    for s in edge_shifts:
        by_edge.setdefault((s.seam, s.panel), {})[s.level] = s.shift_mm
    levels = block.levels
    for (seam, panel), per_level in by_edge.items():
        for upper, lower in zip(levels, levels[1:]):
            a, b = per_level.get(upper.name, 0.0), per_level.get(lower.name, 0.0)
            slope = abs(b - a) / (lower.y - upper.y)
            if slope > STEEP_SLOPE:
                findings.append(
                    Finding(
                        "steep_seam",
                        WARNING,
                        f"The {panel} edge of the {seam} changes by {abs(b - a):.1f} mm between {LEVEL_LABELS.get(upper.name)} "
                        f"and {LEVEL_LABELS.get(lower.name)}, only {lower.y - upper.y:.0f} mm apart: the seam line will not run smoothly.",
                        seam=seam,
                        panel=panel,
                        level=lower.name,
                    )
                )
    widening: dict[tuple[str, str], float] = {}
    for s in edge_shifts:
        widening[(s.panel, s.level)] = widening.get((s.panel, s.level), 0.0) + s.shift_mm
    for panel in block.panels:
        for level in block.level_names:
            width = panel.width(level) + widening.get((panel.name, level), 0.0)
            if panel is block.panels[0]:
                width += cf_shift
            if width < MIN_PANEL_WIDTH_MM:
                findings.append(
                    Finding(
                        "panel_too_narrow",
                        ERROR,
                        f"The {panel.name} panel would be only {width:.0f} mm wide at {LEVEL_LABELS.get(level, level).lower()} "
                        f"(at least {MIN_PANEL_WIDTH_MM:.0f} mm is needed). Choose another base size or spread the change differently.",
                        level=level,
                        panel=panel.name,
                    )
                )
    return findings


def overshoots(fixed_change: float, need: float, step: float) -> bool:
    """Cells fixed by hand that already change the girth more than the level needs, the same way.

    Fixing some edges one way and letting the free ones go the other (the side seams let out
    by hand, the princess seams taken in) is ordinary work and says nothing.
    """
    return fixed_change * need > 0 and abs(fixed_change) > abs(need) + step + EPS


def overshoot_finding(where: str, level: str, fixed_change: float, need: float, unit: str) -> Finding:
    verb = "let out" if need > 0 else "take in"
    opposite = "take in" if need > 0 else "let out"
    extra = abs(fixed_change) - abs(need)
    return Finding(
        "override_exceeds_difference",
        WARNING,
        f"{where}: the edges you set by hand {verb} {format_with_unit(abs(fixed_change), unit)} of girth, "
        f"{format_with_unit(extra, unit)} more than this level needs ({format_with_unit(abs(need), unit)}). "
        f"The edges left free {opposite} {format_with_unit(extra, unit)} to make up for it; clear a hand-set "
        f"cell if that is not what you meant.",
        level=level,
    )
