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
from functools import partial

from patterns.core.block import BACK, CB_LACED, FRONT, Alteration, Block, PanelShift
from patterns.core.checks import input_findings, overshoot_finding, overshoots, shape_findings
from patterns.core.findings import ERROR, WARNING, Finding
from patterns.core.measures import LENGTH_MEASURES, LEVEL_LABELS
from patterns.core.policies import EVEN, distribute
from patterns.core.rounding import EPS, round_to_step, steps_of


@dataclass(frozen=True)
class Body:
    """The client's measurements the engine uses, in mm, keyed by level or measurement code."""

    girths: dict[str, float]
    front_arcs: dict[str, float] = field(default_factory=dict)
    lengths: dict[str, float] = field(default_factory=dict)
    bust_span: float | None = None


@dataclass(frozen=True)
class EdgeAmount:
    """A shift of one raw edge of one seam (the edge on ``panel``) at one level: positive lets out."""

    seam: str
    level: str
    panel: str
    shift_mm: float


@dataclass(frozen=True)
class Override(EdgeAmount):
    """A cell the fitter fixed by hand."""


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
class EdgeShift(EdgeAmount):
    """How far one raw edge moves at one level, everything together (pins included)."""

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
    findings += input_findings(block, body, options, gap)

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
                if key not in shifts and key not in pins and level not in seam.alterable_at:
                    continue
                spread = shifts.get(key, 0.0)
                pinned = pins.get(key, 0.0)
                edge_shifts.append(
                    EdgeShift(
                        seam=seam.name,
                        level=level,
                        panel=panel,
                        shift_mm=_clean(spread + pinned),
                        fixed=key in fixed,
                        pin_mm=_clean(pinned),
                    )
                )

    findings += shape_findings(block, edge_shifts, cf_shift)
    bands = _bands(block, body, step) if options.apply_lengths else ()
    return Allotment(
        block=block.name,
        size=block.size,
        unit=options.unit,
        step_mm=step,
        policy=options.policy,
        levels=tuple(level_results),
        shifts=tuple(edge_shifts),
        centre_front_shift_mm=_clean(cf_shift),
        bands=bands,
        findings=tuple(findings),
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

    level_result = partial(LevelResult, level=level, body=girth, ease=ease, lacing_gap=gap, pattern=pattern)

    if girth is None or girth <= 0 or not math.isfinite(girth):
        unmeasured = level_result(
            target=None,
            difference=None,
            centre_front=2 * cf_shift,
            allotted=2 * sum(fixed_here.values()),
            residual=None,
        )
        return unmeasured, out, findings

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
        if overshoots(fixed_change, need, step):
            findings.append(overshoot_finding(where, level, fixed_change, need, options.unit))
        exact = distribute(level, to_spread / 2, free, options.policy, panels) if free and abs(to_spread) > EPS else {}
        work.append(
            _Part(
                side,
                part_target,
                part_pattern,
                cf_change,
                part_edges,
                free,
                part_difference,
                fixed_change,
                to_spread,
                where,
                exact,
            )
        )

    # The level is rounded once, then shared between front and back, so the level's residual is at
    # most one step however the girth is split.
    steps = _part_steps([sum(w.exact.values()) if w.exact else None for w in work], step)

    parts = {}
    for part, part_steps in zip(work, steps):
        side, part_target, part_pattern, cf_change = part.side, part.target, part.pattern, part.cf_change
        part_edges, free, part_difference, fixed_change = part.edges, part.free, part.difference, part.fixed_change
        to_spread, where, exact = part.to_spread, part.where, part.exact
        spread: dict[tuple[str, str, str], float] = {}
        if exact:
            caps = {(seam.name, level, p): seam.cap_mm for seam, p in free}
            keys = list(exact)
            rounded = round_to_step([exact[k] for k in keys], step, [caps[k] for k in keys], steps=part_steps)
            spread = dict(zip(keys, rounded))
            for key in keys:
                seam_name, _, panel = key
                if abs(spread[key]) > caps[key] + EPS:
                    findings.append(
                        Finding(
                            "edge_over_cap",
                            WARNING,
                            f"{label}: the {panel} edge of the {seam_name} moves {spread[key]:+.1f} mm, beyond its "
                            f"{caps[key]:.0f} mm limit. Another base size may suit this client better.",
                            level=level,
                            seam=seam_name,
                            panel=panel,
                        )
                    )
        elif not free and abs(to_spread) >= step and not part_edges:
            findings.append(
                Finding(
                    "level_locked",
                    ERROR,
                    f"{where}: the pattern is {part_difference - cf_change:+.1f} mm off the target here, but no seam "
                    f"may be altered at this level. Allow a seam here or choose another base size.",
                    level=level,
                )
            )
        out.update(spread)
        allotted = fixed_change + 2 * sum(spread.values())
        residual = part_difference - cf_change - allotted
        parts[side] = PartResult(
            target=part_target,
            pattern=part_pattern,
            difference=part_difference,
            allotted=allotted + cf_change,
            residual=residual,
        )
    level_residual = sum(p.residual for p in parts.values())
    if abs(level_residual) > step + EPS and edges:
        findings.append(
            Finding(
                "residual_over_step",
                WARNING,
                f"{label}: {level_residual:+.1f} mm of girth is left over after the seams, more than one step "
                f"({step:g} mm).",
                level=level,
            )
        )

    if FRONT in parts:
        front, back = parts[FRONT], parts[BACK]
    seam_change = sum(p.allotted for p in parts.values()) - 2 * cf_shift
    result = level_result(
        target=target,
        difference=difference,
        centre_front=_clean(2 * cf_shift),
        allotted=_clean(seam_change),
        residual=_clean(level_residual),
        front=front,
        back=back,
    )
    return result, out, findings


@dataclass(frozen=True)
class _Part:
    """The whole level, or its front or its back, as worked out before rounding."""

    side: str | None
    target: float
    pattern: float
    cf_change: float
    edges: list
    free: list
    difference: float
    fixed_change: float
    to_spread: float
    where: str
    exact: dict


def _part_steps(halves: list[float | None], step: float) -> list[int]:
    """Whole steps for each part's half so that together they are the level's half rounded once.

    A part alone (or beside a part with no free edge, ``None``) keeps its own rounding.  With a
    front and a back, the front takes the rounding of its own half (down or up) that leaves
    neither part further off, and the back the rest.
    """
    if len(halves) == 1 or None in halves:
        return [0 if h is None else steps_of(h, step) for h in halves]
    front_half, back_half = [h for h in halves if h is not None]
    total = steps_of(front_half + back_half, step)
    front = front_half / step
    choices = sorted(
        {math.floor(front), math.ceil(front)},
        key=lambda f: (max(abs(front - f), abs(back_half / step - (total - f))), f != steps_of(front_half, step)),
    )
    return [choices[0], total - choices[0]]


def body_level_positions(lengths: dict[str, float]) -> dict[str, float]:
    """Where each level sits on the body, in mm below the waist (upwards negative), from measured lengths."""
    positions = {"waist": 0.0}
    changed = True
    while changed:
        changed = False
        for m in LENGTH_MEASURES:
            value = lengths.get(m.code)
            if value is None or m.between is None:
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
