"""From a client's measurements and a base pattern to seam-by-seam, level-by-level shifts.

The trade's arithmetic (common practice, and in grading texts): the pattern
is a half pattern, so a girth difference is halved for one body half, and a
seam's share splits between its two raw edges.  One raw edge moved by s
therefore changes the girth by 2 s.

Order of work at every level: the centre-front width first (the same at
every level), then the hand-fixed cells, then the rest spread over the free
raw edges by the plan's policy within each edge's cap, then rounding to the
plan's step, then any toile pin adjustments on top.
"""

import math
from dataclasses import asdict, dataclass, field, replace

from patterns.core.block import BACK, CB_LACED, FRONT, MIN_PANEL_WIDTH_MM, Alteration, Block, PanelShift
from patterns.core.findings import CAUTION, ERROR, WARNING, Finding
from patterns.core.measures import LENGTH_MEASURES, LEVEL_LABELS
from patterns.core.rounding import EPS, round_to_step, steps_of
from patterns.core.units import format_with_unit

EVEN, SIDES_FIRST, BY_WIDTH = "even", "sides_first", "by_width"
POLICIES = {
    EVEN: "Evenly over every free raw edge",
    SIDES_FIRST: "Side seams first, then princess seams, then the rest",
    BY_WIDTH: "In proportion to each panel's width",
}

# Thresholds, each with where it comes from.
STEEP_SLOPE = 0.2  # our choice: 1 mm of shift per 5 mm of seam between levels keeps the line smooth
ABSURD_UNDERBUST_EXCESS_MM = 100.0  # our choice: underbust over bust by more than 10 cm is a mis-reading
FIRST_CORSET_REDUCTION_MM = 100.0  # common practice: a first corset reduces the waist 5-10 cm
FIRST_CORSET_REDUCTION_SHARE = 0.10  # common practice: about 10 % of the natural waist
GAP_WARNING_MM = 80.0  # common practice: about 5 cm is usual; much wider strains the back unevenly


@dataclass(frozen=True)
class Body:
    """The client's measurements the engine uses, in mm, keyed by level or measurement code."""

    girths: dict[str, float]
    front_arcs: dict[str, float] = field(default_factory=dict)
    lengths: dict[str, float] = field(default_factory=dict)
    bust_span: float | None = None


@dataclass(frozen=True)
class Override:
    """A cell the fitter fixed by hand: one raw edge of one seam at one level."""

    seam: str
    level: str
    panel: str
    shift_mm: float


@dataclass(frozen=True)
class PinAdjustment:
    """A toile fitting's pin: the change to one seam on one body half (both raw edges together).

    Positive lets the seam out, negative pins it in.
    """

    seam: str
    level: str
    amount_mm: float


@dataclass(frozen=True)
class PlanOptions:
    ease: dict[str, float] = field(default_factory=dict)  # per level; negative is reduction
    lacing_gap_mm: float = 50.0  # common practice: about 5 cm
    centre_front_width_mm: float | None = None  # full width across the body; None keeps the pattern's
    step_mm: float = 1.0
    unit: str = "cm"
    policy: str = EVEN
    overrides: tuple[Override, ...] = ()
    pins: tuple[PinAdjustment, ...] = ()
    apply_lengths: bool = True


@dataclass(frozen=True)
class PartResult:
    """The front or back of one level when front arcs were measured."""

    target: float
    pattern: float
    difference: float
    allotted: float
    residual: float


@dataclass(frozen=True)
class LevelResult:
    level: str
    body: float | None
    ease: float
    lacing_gap: float
    target: float | None
    pattern: float
    difference: float | None
    centre_front: float  # girth change from the centre-front width
    allotted: float  # girth change from seams (fixed and spread), before pins
    residual: float | None  # target minus altered pattern, before pins
    pinned: float = 0.0  # girth change from toile pins
    front: PartResult | None = None
    back: PartResult | None = None


@dataclass(frozen=True)
class EdgeShift:
    """How far one raw edge moves at one level: positive lets out, negative takes in."""

    seam: str
    level: str
    panel: str
    shift_mm: float  # everything together, pins included
    fixed: bool = False
    pin_mm: float = 0.0


@dataclass(frozen=True)
class BandChange:
    upper: str
    lower: str
    pattern_mm: float
    body_mm: float
    change_mm: float


@dataclass(frozen=True)
class Allotment:
    block: str
    size: str
    unit: str
    step_mm: float
    policy: str
    levels: tuple[LevelResult, ...]
    shifts: tuple[EdgeShift, ...]
    centre_front_shift_mm: float  # at the centre-front edge of the first panel, one body half
    bands: tuple[BandChange, ...]
    findings: tuple[Finding, ...]
    inputs: dict = field(default_factory=dict)  # the Body and PlanOptions used; plain dicts in as_dict()

    @property
    def errors(self) -> tuple[Finding, ...]:
        return tuple(f for f in self.findings if f.severity == ERROR)

    @property
    def ok(self) -> bool:
        return not self.errors

    def shift(self, seam: str, level: str, panel: str) -> float:
        for s in self.shifts:
            if (s.seam, s.level, s.panel) == (seam, level, panel):
                return s.shift_mm
        return 0.0

    def level(self, name: str) -> LevelResult:
        return next(lv for lv in self.levels if lv.level == name)

    def largest_edge_mm(self) -> float:
        return max((abs(s.shift_mm) for s in self.shifts), default=0.0)

    def total_edges_mm(self) -> float:
        return sum(abs(s.shift_mm) for s in self.shifts)

    def alteration(self, block: Block) -> Alteration:
        """Per panel, per level, per stitch line: what the geometry applies."""
        shifts: dict[str, dict[str, list[float]]] = {
            p.name: {lv: [0.0, 0.0] for lv in block.level_names} for p in block.panels
        }
        first = block.panels[0].name
        for lv in block.level_names:
            shifts[first][lv][0] += self.centre_front_shift_mm
        seams = {s.name: s for s in block.seams}
        for s in self.shifts:
            seam = seams[s.seam]
            side = 1 if s.panel == seam.front_panel else 0
            shifts[s.panel][s.level][side] += s.shift_mm
        return Alteration(
            shifts={p: {lv: PanelShift(*v) for lv, v in per.items()} for p, per in shifts.items()},
            bands={(b.upper, b.lower): b.change_mm for b in self.bands},
        )

    def as_dict(self) -> dict:
        data = asdict(self)
        data["format"] = "atelier-plan-result"
        data["version"] = 1
        return data


def allot(block: Block, body: Body, options: PlanOptions) -> Allotment:
    """Compute the shifts for every raw edge at every level of ``block``."""
    findings: list[Finding] = []
    step = options.step_mm
    gap = options.lacing_gap_mm if block.centre_back == CB_LACED else 0.0
    findings += _input_findings(block, body, options, gap)

    cf_shift = 0.0
    if options.centre_front_width_mm is not None:
        exact = (options.centre_front_width_mm - block.centre_front_width()) / 2
        cf_shift = round_to_step([exact], step)[0]

    fixed = {(o.seam, o.level, o.panel): o.shift_mm for o in options.overrides}
    panels = {p.name: p for p in block.panels}
    shifts: dict[tuple[str, str, str], float] = {}
    level_results = []
    for level in block.level_names:
        result, level_shifts, level_findings = _allot_level(block, body, options, level, gap, cf_shift, fixed, panels)
        level_results.append(result)
        shifts.update(level_shifts)
        findings += level_findings

    pins: dict[tuple[str, str, str], float] = {}
    seams = {s.name: s for s in block.seams}
    pinned_by_level: dict[str, float] = {}
    for pin in options.pins:
        seam = seams[pin.seam]
        halves = round_to_step([pin.amount_mm / 2, pin.amount_mm / 2], step)
        for panel, half in zip((seam.front_panel, seam.back_panel), halves):
            pins[(pin.seam, pin.level, panel)] = pins.get((pin.seam, pin.level, panel), 0.0) + half
        pinned_by_level[pin.level] = pinned_by_level.get(pin.level, 0.0) + 2 * sum(halves)
    level_results = [replace(r, pinned=_clean(pinned_by_level.get(r.level, 0.0))) for r in level_results]

    edge_shifts = []
    for seam in block.seams:
        for level in block.level_names:
            for panel in (seam.front_panel, seam.back_panel):
                key = (seam.name, level, panel)
                if key not in shifts and key not in pins and not (level in seam.alterable_at):
                    continue
                spread = shifts.get(key, 0.0)
                pin = pins.get(key, 0.0)
                edge_shifts.append(EdgeShift(
                    seam=seam.name, level=level, panel=panel, shift_mm=_clean(spread + pin),
                    fixed=key in fixed, pin_mm=_clean(pin),
                ))

    findings += _shape_findings(block, edge_shifts, cf_shift)
    bands = _bands(block, body, step) if options.apply_lengths else ()
    return Allotment(
        block=block.name, size=block.size, unit=options.unit, step_mm=step, policy=options.policy,
        levels=tuple(level_results), shifts=tuple(edge_shifts), centre_front_shift_mm=_clean(cf_shift),
        bands=bands, findings=tuple(findings),
        inputs={"body": body, "options": options},
    )


def _clean(value: float) -> float:
    """Drop float dust so a shift reads as the step multiple it is."""
    value = round(value, 6)
    return 0.0 if value == 0 else value


def _allot_level(block, body, options, level, gap, cf_shift, fixed, panels):
    findings = []
    step = options.step_mm
    label = LEVEL_LABELS.get(level, level)
    pattern = block.girth(level)
    ease = options.ease.get(level, 0.0)
    girth = body.girths.get(level)
    seams_here = [s for s in block.seams if level in s.alterable_at]
    edges = [(s, p) for s in seams_here for p in (s.front_panel, s.back_panel)]
    fixed_here = {k: v for k, v in fixed.items() if k[1] == level}
    out: dict[tuple[str, str, str], float] = dict(fixed_here)

    if girth is None or girth <= 0 or not math.isfinite(girth):
        result = LevelResult(level=level, body=girth, ease=ease, lacing_gap=gap, target=None, pattern=pattern,
                             difference=None, centre_front=2 * cf_shift, allotted=2 * sum(fixed_here.values()),
                             residual=None)
        return result, out, findings

    target = girth + ease - gap
    difference = target - pattern
    arc = body.front_arcs.get(level)
    groups = []
    front = back = None
    if arc is not None and 0 < arc < girth:
        front_ease = ease * arc / girth
        front_target = arc + front_ease
        back_target = girth - arc + (ease - front_ease) - gap
        groups.append((FRONT, front_target, block.girth(level, FRONT), 2 * cf_shift))
        groups.append((BACK, back_target, block.girth(level, BACK), 0.0))
    else:
        groups.append((None, target, pattern, 2 * cf_shift))

    # First what each part (the whole level, or its front and its back) needs from its free edges.
    work = []
    for side, part_target, part_pattern, cf_change in groups:
        part_edges = [(s, p) for s, p in edges if side is None or panels[p].side == side]
        part_fixed = {k: v for k, v in fixed_here.items() if side is None or panels[k[2]].side == side}
        free = [(s, p) for s, p in part_edges if (s.name, level, p) not in fixed_here]
        part_difference = part_target - part_pattern
        fixed_change = 2 * sum(part_fixed.values())
        to_spread = part_difference - cf_change - fixed_change
        where = f"{label} ({side})" if side else label
        need = part_difference - cf_change
        if _overshoots(fixed_change, need, step):
            findings.append(_overshoot_finding(where, level, fixed_change, need, options.unit))
        exact = _spread(level, to_spread / 2, free, options.policy, panels) if free and abs(to_spread) > EPS else {}
        work.append((side, part_target, part_pattern, cf_change, part_edges, free, part_difference, fixed_change,
                     to_spread, where, exact))

    # The level is rounded once, then shared between front and back, so the level's residual is at
    # most one step however the girth is split.
    steps = _part_steps([sum(w[10].values()) if w[10] else None for w in work], step)

    parts = {}
    for (side, part_target, part_pattern, cf_change, part_edges, free, part_difference, fixed_change,
         to_spread, where, exact), part_steps in zip(work, steps):
        spread: dict[tuple[str, str, str], float] = {}
        if exact:
            caps = {(seam.name, level, p): seam.cap_mm for seam, p in free}
            keys = list(exact)
            rounded = round_to_step([exact[k] for k in keys], step, [caps[k] for k in keys], steps=part_steps)
            spread = dict(zip(keys, rounded))
            for key in keys:
                seam_name, _, panel = key
                if abs(spread[key]) > caps[key] + EPS:
                    findings.append(Finding(
                        "edge_over_cap", WARNING,
                        f"{label}: the {panel} edge of the {seam_name} moves {spread[key]:+.1f} mm, beyond its "
                        f"{caps[key]:.0f} mm limit. Another base size may suit this client better.",
                        level=level, seam=seam_name, panel=panel,
                    ))
        elif not free and abs(to_spread) >= step and not part_edges:
            findings.append(Finding(
                "level_locked", ERROR,
                f"{where}: the pattern is {part_difference - cf_change:+.1f} mm off the target here, but no seam "
                f"may be altered at this level. Allow a seam here or choose another base size.",
                level=level,
            ))
        out.update(spread)
        allotted = fixed_change + 2 * sum(spread.values())
        residual = part_difference - cf_change - allotted
        parts[side] = PartResult(
            target=part_target, pattern=part_pattern, difference=part_difference,
            allotted=allotted + cf_change, residual=residual,
        )
    level_residual = sum(p.residual for p in parts.values())
    if abs(level_residual) > step + EPS and edges:
        findings.append(Finding(
            "residual_over_step", WARNING,
            f"{label}: {level_residual:+.1f} mm of girth is left over after the seams, more than one step "
            f"({step:g} mm).",
            level=level,
        ))

    if FRONT in parts:
        front, back = parts[FRONT], parts[BACK]
    seam_change = sum(p.allotted for p in parts.values()) - 2 * cf_shift
    result = LevelResult(
        level=level, body=girth, ease=ease, lacing_gap=gap, target=target, pattern=pattern,
        difference=difference, centre_front=_clean(2 * cf_shift), allotted=_clean(seam_change),
        residual=_clean(level_residual), front=front, back=back,
    )
    return result, out, findings


def _part_steps(halves: list[float | None], step: float) -> list[int]:
    """Whole steps for each part's half so that together they are the level's half rounded once.

    A part alone (or beside a part with no free edge, ``None``) keeps its own rounding.  With a
    front and a back, the front takes the rounding of its own half (down or up) that leaves
    neither part further off, and the back the rest.
    """
    if len(halves) == 1 or None in halves:
        return [0 if h is None else steps_of(h, step) for h in halves]
    total = steps_of(sum(halves), step)
    front = halves[0] / step
    choices = sorted({math.floor(front), math.ceil(front)}, key=lambda f: (
        max(abs(front - f), abs(halves[1] / step - (total - f))), f != steps_of(halves[0], step)))
    return [choices[0], total - choices[0]]


def _overshoots(fixed_change: float, need: float, step: float) -> bool:
    """Cells fixed by hand that already change the girth more than the level needs, the same way.

    Fixing some edges one way and letting the free ones go the other (the side seams let out
    by hand, the princess seams taken in) is ordinary work and says nothing.
    """
    return fixed_change * need > 0 and abs(fixed_change) > abs(need) + step + EPS


def _overshoot_finding(where: str, level: str, fixed_change: float, need: float, unit: str) -> Finding:
    verb = "let out" if need > 0 else "take in"
    opposite = "take in" if need > 0 else "let out"
    extra = abs(fixed_change) - abs(need)
    return Finding(
        "override_exceeds_difference", WARNING,
        f"{where}: the edges you set by hand {verb} {format_with_unit(abs(fixed_change), unit)} of girth, "
        f"{format_with_unit(extra, unit)} more than this level needs ({format_with_unit(abs(need), unit)}). "
        f"The edges left free {opposite} {format_with_unit(extra, unit)} to make up for it; clear a hand-set "
        f"cell if that is not what you meant.",
        level=level,
    )


def _spread(level, half, free, policy, panels) -> dict[tuple[str, str, str], float]:
    """Spread one body half's share over the free raw edges, within caps where possible."""
    keys = [(s.name, level, p) for s, p in free]
    caps = {k: s.cap_mm for k, (s, p) in zip(keys, free)}
    if policy == BY_WIDTH:
        weights = {k: max(panels[p].width(level), EPS) for k, (s, p) in zip(keys, free)}
    else:
        weights = {k: 1.0 for k in keys}
    if policy == SIDES_FIRST:
        kinds = {k: s.kind for k, (s, p) in zip(keys, free)}
        tiers = [[k for k in keys if kinds[k] == kind] for kind in ("side", "princess", "other")]
    else:
        tiers = [keys]
    result = {k: 0.0 for k in keys}
    remaining = half
    for tier in tiers:
        if abs(remaining) <= EPS:
            break
        remaining = _fill(tier, remaining, weights, caps, result)
    if abs(remaining) > EPS:
        # Every edge is at its cap: go beyond, evenly by weight, and let the warning say so.
        total_weight = sum(weights.values())
        for k in keys:
            result[k] += remaining * weights[k] / total_weight
    return result


def _fill(tier, amount, weights, caps, result) -> float:
    """Water-filling: share ``amount`` by weight, capping edges that would pass their cap."""
    active = [k for k in tier if abs(result[k]) < caps[k] - EPS]
    remaining = amount
    while active and abs(remaining) > EPS:
        total_weight = sum(weights[k] for k in active)
        shares = {k: remaining * weights[k] / total_weight for k in active}
        capped = [k for k in active if abs(result[k] + shares[k]) > caps[k] + EPS]
        if not capped:
            for k in active:
                result[k] += shares[k]
            return 0.0
        for k in capped:
            target = math.copysign(caps[k], remaining)
            remaining -= target - result[k]
            result[k] = target
        active = [k for k in active if k not in capped]
    return remaining


def _input_findings(block, body, options, gap) -> list[Finding]:
    findings = []
    for level in block.level_names:
        girth = body.girths.get(level)
        label = LEVEL_LABELS.get(level, level)
        if girth is None:
            findings.append(Finding("missing_girth", ERROR, f"No {label.lower()} girth was measured; the pattern needs it.", level=level))
        elif not math.isfinite(girth) or girth <= 0:
            findings.append(Finding("impossible_girth", ERROR, f"The {label.lower()} girth must be a positive length.", level=level))
        arc = body.front_arcs.get(level)
        if arc is not None and girth is not None and not (0 < arc < girth):
            findings.append(Finding("impossible_front_arc", ERROR, f"The {label.lower()} front arc must be shorter than the whole girth.", level=level))
    for level in block.levels:
        label = LEVEL_LABELS.get(level.name, level.name)
        above = [p.name for p in block.panels if max(p.top_left.y, p.top_right.y) > level.y]
        below = [p.name for p in block.panels if min(p.bottom_left.y, p.bottom_right.y) < level.y]
        for names, where in ((above, "above the top of"), (below, "below the bottom of")):
            if names:
                findings.append(Finding(
                    "level_beyond_panel", WARNING,
                    f"{label}: the {label.lower()} line lies {where} {_panel_list(names)}, so what is worked out "
                    f"there for {'it' if len(names) == 1 else 'them'} is not cut. Check the pattern's levels, "
                    "and check this level on the toile.",
                    level=level.name,
                ))
    bust, underbust = body.girths.get("bust"), body.girths.get("underbust")
    if bust and underbust and underbust - bust > ABSURD_UNDERBUST_EXCESS_MM:
        findings.append(Finding(
            "underbust_exceeds_bust", ERROR,
            f"The underbust girth is {(underbust - bust) / 10:.1f} cm larger than the bust girth. One of them is likely misread.",
            level="underbust",
        ))
    if options.step_mm <= 0 or not math.isfinite(options.step_mm):
        findings.append(Finding("bad_step", ERROR, "The rounding step must be a positive length."))
    if options.policy not in POLICIES:
        findings.append(Finding("unknown_policy", ERROR, f"Unknown distribution {options.policy!r}."))
    if gap > GAP_WARNING_MM:
        findings.append(Finding(
            "wide_lacing_gap", WARNING,
            f"A lacing gap of {gap / 10:.1f} cm is wide; about 5 cm is usual, and a much wider gap puts uneven pressure on the back.",
        ))
    seams = {s.name: s for s in block.seams}
    for item in (*options.overrides, *options.pins):
        if item.seam not in seams:
            findings.append(Finding("unknown_seam", ERROR, f"There is no seam called {item.seam!r} in this pattern."))
        if item.level not in block.level_names:
            findings.append(Finding("unknown_level", ERROR, f"The pattern has no level {item.level!r}."))
    for o in options.overrides:
        if o.seam in seams and o.panel not in (seams[o.seam].front_panel, seams[o.seam].back_panel):
            findings.append(Finding("unknown_edge", ERROR, f"The {o.seam} has no raw edge on panel {o.panel!r}.", seam=o.seam))
    waist = body.girths.get("waist")
    reduction = -options.ease.get("waist", 0.0)
    if waist and reduction > 0 and (
        reduction > FIRST_CORSET_REDUCTION_MM or reduction > FIRST_CORSET_REDUCTION_SHARE * waist
    ):
        findings.append(Finding(
            "strong_waist_reduction", CAUTION,
            f"A waist reduction of {reduction / 10:.1f} cm ({100 * reduction / waist:.0f} % of the natural waist) is more "
            "than is usual for a first corset (5 to 10 cm, about 10 %). Strong reduction restricts breathing and can "
            "injure: plan gradual wear, check the client's comfort at every fitting, and follow the fitter's judgment.",
            level="waist",
        ))
    return findings


def _panel_list(names: list[str]) -> str:
    words = names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]
    return f"the {words} panel{'s' if len(names) > 1 else ''}"


def _shape_findings(block, edge_shifts, cf_shift) -> list[Finding]:
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
                findings.append(Finding(
                    "steep_seam", WARNING,
                    f"The {panel} edge of the {seam} changes by {abs(b - a):.1f} mm between {LEVEL_LABELS.get(upper.name)} "
                    f"and {LEVEL_LABELS.get(lower.name)}, only {lower.y - upper.y:.0f} mm apart: the seam line will not run smoothly.",
                    seam=seam, panel=panel, level=lower.name,
                ))
    widening: dict[tuple[str, str], float] = {}
    for s in edge_shifts:
        widening[(s.panel, s.level)] = widening.get((s.panel, s.level), 0.0) + s.shift_mm
    for panel in block.panels:
        for level in block.level_names:
            width = panel.width(level) + widening.get((panel.name, level), 0.0)
            if panel is block.panels[0]:
                width += cf_shift
            if width < MIN_PANEL_WIDTH_MM:
                findings.append(Finding(
                    "panel_too_narrow", ERROR,
                    f"The {panel.name} panel would be only {width:.0f} mm wide at {LEVEL_LABELS.get(level, level).lower()} "
                    f"(at least {MIN_PANEL_WIDTH_MM:.0f} mm is needed). Choose another base size or spread the change differently.",
                    level=level, panel=panel.name,
                ))
    return findings


def body_level_positions(lengths: dict[str, float]) -> dict[str, float]:
    """Where each level sits on the body, in mm below the waist (upwards negative), from measured lengths."""
    positions = {"waist": 0.0}
    changed = True
    while changed:
        changed = False
        for m in LENGTH_MEASURES:
            value = lengths.get(m.code)
            if value is None:
                continue
            upper, lower = m.between
            if upper in positions and lower not in positions:
                positions[lower] = positions[upper] + value
                changed = True
            elif lower in positions and upper not in positions:
                positions[upper] = positions[lower] - value
                changed = True
    return positions


def _bands(block, body, step) -> tuple[BandChange, ...]:
    positions = body_level_positions(body.lengths)
    bands = []
    for upper, lower in zip(block.levels, block.levels[1:]):
        if upper.name in positions and lower.name in positions:
            body_mm = positions[lower.name] - positions[upper.name]
            pattern_mm = lower.y - upper.y
            change = round_to_step([body_mm - pattern_mm], step)[0]
            bands.append(BandChange(upper.name, lower.name, pattern_mm, body_mm, _clean(change)))
    return tuple(bands)


@dataclass(frozen=True)
class SizeChoice:
    block: Block
    allotment: Allotment
    errors: int
    over_cap: int
    largest_edge_mm: float
    total_edges_mm: float
    reason: str = ""


def suggest_size(blocks: list[Block], body: Body, options: PlanOptions) -> list[SizeChoice]:
    """Rank the sizes of a run by how little they need altering; the first is the suggestion.

    Hand-fixed cells and pins belong to one size and are left out of the comparison.
    """
    plain = replace(options, overrides=(), pins=(), centre_front_width_mm=options.centre_front_width_mm)
    choices = []
    for block in blocks:
        result = allot(block, body, plain)
        choices.append(SizeChoice(
            block=block, allotment=result, errors=len(result.errors),
            over_cap=sum(1 for f in result.findings if f.code == "edge_over_cap"),
            largest_edge_mm=result.largest_edge_mm(), total_edges_mm=result.total_edges_mm(),
        ))
    choices.sort(key=lambda c: (c.errors, c.over_cap, round(c.largest_edge_mm, 6), round(c.total_edges_mm, 6), c.block.size_order))
    if choices:
        best = choices[0]
        text = (f"Size {best.block.size} needs the least alteration: the largest single raw edge moves "
                f"{best.largest_edge_mm:.0f} mm and all raw edges together {best.total_edges_mm:.0f} mm")
        if best.errors:
            text += f", though it still has {best.errors} problem(s) to resolve"
        elif best.over_cap == 0:
            text += ", with every edge within its limit"
        if len(choices) > 1:
            nxt = choices[1]
            text += (f". Next: size {nxt.block.size} (largest edge {nxt.largest_edge_mm:.0f} mm, "
                     f"all edges {nxt.total_edges_mm:.0f} mm).")
        else:
            text += "."
        choices[0] = replace(best, reason=text)
    return choices
