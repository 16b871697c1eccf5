"""The boning and busk list of an altered pattern: every channel's length, the bone that fits it, the busk.

Plain data in (the Block and the altered panel outlines of
patterns.core.outline), plain data out.  Millimetres throughout.

Channels:

- **one on every seam**, on its stitch line, from the bound top edge to the
  bound bottom edge.  A seam's two stitch lines are sewn together; when
  they differ (a seam not trued yet, or eased on purpose) the channel is
  taken as the *shorter* of the two, so the bone fits whichever edge it
  lies against;
- **where the block marks one** (``Block.channels``): a fraction of the way
  across the panel, or a set distance in from one of its stitch lines.

A bone is the channel less a clearance from the bound edges, so the binding
can be stitched across the channel's ends without striking steel: about
12 mm in all, half at each end, is common practice (configurable).  Bones
are cut to whole millimetres, rounded *down*, so a bone never ends up longer
than its channel allows.

The busk sits on the centre front (blocks with a busk closure).  The rule:
the room for it is the altered centre-front stitch line less the busk
clearance (the same 12 mm unless the atelier sets another), and the busk is
the *longest stocked length not longer than that room*.  A busk a little
short of the front is normal; a longer one would strike the binding.  When
no stocked length fits, no busk is chosen and a finding says so.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from shapely.geometry import LineString, Polygon

from patterns.core.block import CF_BUSK, LEFT, Block, ChannelMark
from patterns.core.findings import WARNING, Finding
from patterns.core.outline import PanelOutline, line_length

# Clearance of a bone from the bound top and bottom edges, both ends
# together: about 12 mm is common practice.
BONE_CLEARANCE_MM = 12.0
# Busks are sold in whole inches, commonly 8 to 16 in (common practice,
# from memory of suppliers' lists; 1 in = 25.4 mm exactly).  The owner keeps
# the atelier's own list in its settings.
DEFAULT_BUSK_STOCK_MM = tuple(round(25.4 * inches, 1) for inches in range(8, 17))
# Bones are cut to this step, rounded down.
BONE_CUT_STEP_MM = 1.0
# A busk shorter than the room by more than this leaves the front unsupported
# at its ends (our choice: about an inch).
BUSK_SHORT_BY_MM = 25.0

SEAM, MARKED = "seam", "marked"


@dataclass(frozen=True)
class BoningRules:
    clearance_mm: float = BONE_CLEARANCE_MM
    busk_stock_mm: tuple[float, ...] = DEFAULT_BUSK_STOCK_MM
    busk_clearance_mm: float | None = None  # None: the same as the bones'
    cut_step_mm: float = BONE_CUT_STEP_MM

    def __post_init__(self):
        if not (math.isfinite(self.clearance_mm) and self.clearance_mm >= 0):
            raise ValueError("The clearance from the bound edges must be 0 mm or more.")
        if self.busk_clearance_mm is not None and not (
            math.isfinite(self.busk_clearance_mm) and self.busk_clearance_mm >= 0
        ):
            raise ValueError("The busk's clearance must be 0 mm or more.")
        if not (math.isfinite(self.cut_step_mm) and self.cut_step_mm > 0):
            raise ValueError("The step bones are cut to must be more than 0 mm.")
        if any(not (math.isfinite(v) and v > 0) for v in self.busk_stock_mm):
            raise ValueError("Every stocked busk length must be more than 0 mm.")

    @property
    def busk_clearance(self) -> float:
        return self.clearance_mm if self.busk_clearance_mm is None else self.busk_clearance_mm


@dataclass(frozen=True)
class Channel:
    """One boning channel of the half pattern; ``count`` bones of this length for the whole garment."""

    name: str
    kind: str  # SEAM or MARKED
    panel: str  # the panel it lies on (a seam's: the centre-front side panel)
    channel_mm: float
    bone_mm: float  # the channel less the clearance (exact)
    cut_mm: float  # bone_mm rounded down to the cutting step
    count: int
    line: tuple[tuple[float, float], ...]  # where it runs on the altered pattern, top to bottom


@dataclass(frozen=True)
class Busk:
    centre_front_mm: float  # the altered centre-front stitch line
    room_mm: float  # that less the busk clearance
    length_mm: float | None  # the stocked length chosen; None when none fits
    short_by_mm: float | None  # room left unused by the chosen busk


@dataclass(frozen=True)
class BoningList:
    channels: tuple[Channel, ...]
    busk: Busk | None
    rules: BoningRules
    findings: tuple[Finding, ...]

    @property
    def bone_count(self) -> int:
        return sum(c.count for c in self.channels)

    @property
    def total_bone_mm(self) -> float:
        """Steel to order: every bone of the garment, end to end."""
        return sum(c.cut_mm * c.count for c in self.channels)


def floor_to(value: float, step: float) -> float:
    """``value`` rounded down to a whole number of ``step`` (a hair's tolerance for float noise)."""
    return math.floor(value / step + 1e-9) * step


def _as_line(points) -> tuple[tuple[float, float], ...]:
    return tuple((float(x), float(y)) for x, y in points)


def _at_heights(line: np.ndarray, s: np.ndarray) -> np.ndarray:
    """Points on a top-to-bottom line at normalised heights ``s`` (0 its top end, 1 its bottom end)."""
    y0, y1 = line[0, 1], line[-1, 1]
    ys = y0 + s * (y1 - y0)
    order = np.argsort(line[:, 1], kind="stable")
    return np.column_stack([np.interp(ys, line[order, 1], line[order, 0]), ys])


def fraction_line(outline: PanelOutline, fraction: float, samples: int = 400) -> np.ndarray:
    """A channel ``fraction`` of the way from the left stitch line to the right one.

    Both stitch lines are walked from their top corner to their bottom corner
    together; the channel's ends fall on the straight top and bottom edges
    between the corners.
    """
    left, right = np.asarray(outline.left_line, dtype=float), np.asarray(outline.right_line, dtype=float)
    s = np.linspace(0.0, 1.0, samples)
    a, b = _at_heights(left, s), _at_heights(right, s)
    return a + fraction * (b - a)


def _extended(line: np.ndarray, by: float) -> np.ndarray:
    """The line carried on straight past both ends by ``by``."""
    head = line[0] - by * _unit(line[1] - line[0])
    tail = line[-1] + by * _unit(line[-1] - line[-2])
    return np.vstack([head, line, tail])


def _unit(v: np.ndarray) -> np.ndarray:
    return v / (np.hypot(*v) or 1.0)


def _parallel(line: np.ndarray, distance: float) -> np.ndarray:
    """Each point of a densely sampled line moved ``distance`` along the line's normal there
    (positive: to the right of the direction of travel, with y growing downwards as on the pattern)."""
    tangent = np.gradient(line, axis=0)
    tangent /= np.maximum(np.hypot(tangent[:, 0], tangent[:, 1]), 1e-12)[:, None]
    normal = np.column_stack([-tangent[:, 1], tangent[:, 0]])
    return line + distance * normal


def offset_line(outline: PanelOutline, edge: str, offset_mm: float) -> np.ndarray:
    """A channel ``offset_mm`` in from the stitch line on ``edge``, square to it, clipped to the panel."""
    line = np.asarray(outline.edge_line(edge), dtype=float)
    if offset_mm <= 0:
        return line
    panel = Polygon(outline.stitch)
    reach = 2 * (panel.bounds[3] - panel.bounds[1]) + 2 * offset_mm
    best = None
    for distance in (offset_mm, -offset_mm):
        inside = LineString(_extended(_parallel(line, distance), reach)).intersection(panel)
        parts = inside.geoms if hasattr(inside, "geoms") else [inside]
        parts = [p for p in parts if isinstance(p, LineString) and not p.is_empty]
        if parts:
            longest = max(parts, key=lambda p: p.length)
            if best is None or longest.length > best.length:
                best = longest
    if best is None:
        raise ValueError(f"A channel {offset_mm:g} mm in from the {edge} edge of {outline.name} lies outside it.")
    points = np.asarray(best.coords, dtype=float)
    return points if points[0, 1] <= points[-1, 1] else points[::-1]


def _seam_channel(block: Block, seam, outlines: dict[str, PanelOutline], rules: BoningRules) -> Channel:
    front, back = outlines[seam.front_panel], outlines[seam.back_panel]
    lines = (np.asarray(front.right_line), np.asarray(back.left_line))
    lengths = [line_length(line) for line in lines]
    shorter = int(np.argmin(lengths))
    return _channel(seam.name, SEAM, seam.front_panel, lengths[shorter], 2, lines[shorter], rules)


def _mark_channel(mark: ChannelMark, outline: PanelOutline, rules: BoningRules) -> Channel:
    if mark.fraction is not None:
        line = fraction_line(outline, mark.fraction)
        where = f"{mark.fraction:.0%} across"
        on_fold = outline.on_fold and mark.fraction == 0
    else:
        line = offset_line(outline, mark.edge, mark.offset_mm)
        where = f"{mark.offset_mm:g} mm from the {mark.edge} edge"
        on_fold = outline.on_fold and mark.edge == LEFT and mark.offset_mm == 0
    name = mark.name or f"{outline.name}, {where}"
    # A panel cut twice (or once on the fold) carries the channel on both body halves,
    # unless the channel is the fold itself.
    count = 1 if on_fold else 2
    return _channel(name, MARKED, outline.name, line_length(line), count, line, rules)


def _channel(name, kind, panel, length, count, line, rules: BoningRules) -> Channel:
    bone = length - rules.clearance_mm
    cut = max(floor_to(bone, rules.cut_step_mm), 0.0)
    return Channel(name, kind, panel, float(length), float(bone), float(cut), count, _as_line(line))


def choose_busk(centre_front_mm: float, rules: BoningRules) -> Busk:
    """The longest stocked busk not longer than the centre front less the busk clearance."""
    room = centre_front_mm - rules.busk_clearance
    fits = [v for v in rules.busk_stock_mm if v <= room + 1e-9]
    length = max(fits) if fits else None
    return Busk(float(centre_front_mm), float(room), length, (room - length) if length is not None else None)


def boning_list(block: Block, altered: tuple[PanelOutline, ...], rules: BoningRules = BoningRules()) -> BoningList:
    """Every boning channel of the altered half pattern, centre front to centre back, and the busk."""
    outlines = {o.name: o for o in altered}
    missing = [p.name for p in block.panels if p.name not in outlines]
    if missing:
        raise ValueError(f"The outlines lack panels of the block: {', '.join(missing)}.")
    findings: list[Finding] = []
    channels = []
    for panel in block.panels:
        for mark in block.channels:
            if mark.panel == panel.name:
                channels.append(_mark_channel(mark, outlines[panel.name], rules))
        seam = next((s for s in block.seams if s.front_panel == panel.name), None)
        if seam is not None:
            channels.append(_seam_channel(block, seam, outlines, rules))
    for c in channels:
        if c.cut_mm <= 0:
            findings.append(
                Finding(
                    "channel_too_short",
                    WARNING,
                    f"The channel {c.name} ({c.channel_mm:.0f} mm) is no longer than the clearance from the bound "
                    f"edges ({rules.clearance_mm:.0f} mm): it can carry no bone.",
                    panel=c.panel,
                )
            )

    busk = None
    if block.centre_front == CF_BUSK:
        busk = choose_busk(line_length(outlines[block.panels[0].name].left_line), rules)
        if busk.length_mm is None:
            shortest = min(rules.busk_stock_mm, default=None)
            stock = f"the shortest in stock is {shortest:.0f} mm" if shortest else "no busk lengths are in stock"
            findings.append(
                Finding(
                    "no_busk_fits",
                    WARNING,
                    f"No stocked busk fits a centre front of {busk.centre_front_mm:.0f} mm "
                    f"(room {busk.room_mm:.0f} mm after the clearance; {stock}). Order one to length.",
                    panel=block.panels[0].name,
                )
            )
        elif busk.short_by_mm is not None and busk.short_by_mm > BUSK_SHORT_BY_MM:
            findings.append(
                Finding(
                    "busk_short",
                    WARNING,
                    f"The longest stocked busk that fits ({busk.length_mm:.0f} mm) is {busk.short_by_mm:.0f} mm "
                    f"shorter than the room on the centre front ({busk.room_mm:.0f} mm); consider a busk to length.",
                    panel=block.panels[0].name,
                )
            )
    return BoningList(tuple(channels), busk, rules, tuple(findings))


__all__ = [
    "BONE_CLEARANCE_MM",
    "DEFAULT_BUSK_STOCK_MM",
    "BoningList",
    "BoningRules",
    "Busk",
    "Channel",
    "MARKED",
    "SEAM",
    "boning_list",
    "choose_busk",
    "floor_to",
    "fraction_line",
    "offset_line",
]
