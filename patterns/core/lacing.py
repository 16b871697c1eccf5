"""Eyelets along the laced back edge, and an estimate of the lace.

Plain data in (the Block and the altered outline of its centre-back panel),
plain data out.  Millimetres throughout.

Placing (one back edge; the other is its mirror image):

- distances are measured along the centre-back stitch line, from its bound
  top end;
- the first eyelet sits ``top_margin_mm`` below the top, the last
  ``bottom_margin_mm`` above the bottom;
- where the edge crosses the waist, two eyelets sit ``waist_pair_mm`` apart,
  one either side of the waistline (pairs closer at the waist are common
  practice: they take the pull where the lacing is tightened);
- between the first eyelet and the upper waist eyelet, and between the lower
  waist eyelet and the last, eyelets are spaced evenly, as many as it takes
  for no gap to be wider than the atelier's spacing (about 2.5 cm is common
  practice), so a stretch never gapes more than the atelier allows;
- each eyelet's centre is ``inset_mm`` in from the stitch line, square to it.

Lace (criss-cross from the top pair down, both ends tied at the bottom):
the two rows of eyelets stand ``c = lacing gap + 2 * inset`` apart; the lace
crosses once straight between the top pair, then each of its two ends
crosses diagonally at every step between neighbouring eyelets, and each end
leaves a tail::

    lace = c + 2 * sum(sqrt(c^2 + s_i^2) for each spacing s_i) + 2 * tail

An estimate: the lace must also let the back open for dressing, which the
tails allow for.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from patterns.core.block import CB_LACED, Block
from patterns.core.findings import WARNING, Finding
from patterns.core.outline import PanelOutline

# Common practice: eyelets about 2.5 cm apart along a corset's back.
EYELET_SPACING_MM = 25.0
# Two eyelets either side of the waistline, 1.2-1.5 cm apart (common
# practice, from memory).
WAIST_PAIR_MM = 13.0
# First and last eyelet this far from the bound edges (from memory: clear of
# the binding and of the bones' ends).
END_MARGIN_MM = 20.0
# Eyelet centres this far in from the back stitch line, between the two
# lacing bones (from memory: 1-1.5 cm).
EYELET_INSET_MM = 12.0
# Each tail of the lace, for tying and for opening the back to dress (our
# choice, from memory of what laces are sold for a corset).
LACE_TAIL_MM = 600.0


@dataclass(frozen=True)
class LacingRules:
    spacing_mm: float = EYELET_SPACING_MM
    waist_pair_mm: float = WAIST_PAIR_MM
    top_margin_mm: float = END_MARGIN_MM
    bottom_margin_mm: float = END_MARGIN_MM
    inset_mm: float = EYELET_INSET_MM
    tail_mm: float = LACE_TAIL_MM

    def __post_init__(self):
        for name in ("spacing_mm", "waist_pair_mm"):
            value = getattr(self, name)
            if not (math.isfinite(value) and value > 0):
                raise ValueError(f"The eyelets' {name.removesuffix('_mm').replace('_', ' ')} must be more than 0 mm.")
        for name in ("top_margin_mm", "bottom_margin_mm", "inset_mm", "tail_mm"):
            value = getattr(self, name)
            if not (math.isfinite(value) and value >= 0):
                raise ValueError(f"The lacing's {name.removesuffix('_mm').replace('_', ' ')} must be 0 mm or more.")


@dataclass(frozen=True)
class Eyelet:
    number: int  # 1 at the top
    from_top_mm: float  # along the back stitch line
    point: tuple[float, float]  # its centre on the altered pattern
    at_waist: bool


@dataclass(frozen=True)
class Lacing:
    panel: str
    edge_mm: float  # the back stitch line, bound edge to bound edge
    eyelets: tuple[Eyelet, ...]  # one back edge
    lacing_gap_mm: float
    rules: LacingRules
    findings: tuple[Finding, ...]

    @property
    def count(self) -> int:
        """Eyelets on one back edge."""
        return len(self.eyelets)

    @property
    def total_count(self) -> int:
        """Eyelets for the garment (both back edges)."""
        return 2 * len(self.eyelets)

    @property
    def spacings_mm(self) -> tuple[float, ...]:
        return tuple(b.from_top_mm - a.from_top_mm for a, b in zip(self.eyelets, self.eyelets[1:]))

    @property
    def column_gap_mm(self) -> float:
        """How far apart the two rows of eyelets stand when the back is laced to the gap."""
        return self.lacing_gap_mm + 2 * self.rules.inset_mm

    @property
    def lace_mm(self) -> float:
        return lace_length(self.spacings_mm, self.column_gap_mm, self.rules.tail_mm) if self.eyelets else 0.0


def lace_length(spacings_mm, column_gap_mm: float, tail_mm: float) -> float:
    """Criss-cross lace: once across the top pair, two diagonals per step, two tails."""
    c = column_gap_mm
    return c + 2 * sum(math.hypot(c, s) for s in spacings_mm) + 2 * tail_mm


def _even(start: float, end: float, spacing: float) -> list[float]:
    """Points from ``start`` to ``end`` inclusive, evenly, no gap wider than ``spacing``."""
    if end - start <= 1e-9:
        return [start]
    steps = max(1, math.ceil((end - start) / spacing - 1e-9))
    return [start + (end - start) * k / steps for k in range(steps + 1)]


def eyelet_positions(edge_mm: float, waist_mm: float | None, rules: LacingRules) -> tuple[list[float], set[int]]:
    """Distances from the top of the edge; and which of them are the waist pair (indices)."""
    first, last = rules.top_margin_mm, edge_mm - rules.bottom_margin_mm
    if last < first:
        return [], set()
    # The pair is never further apart than the spacing itself.
    half = min(rules.waist_pair_mm, rules.spacing_mm) / 2
    if waist_mm is None or not (first + half <= waist_mm <= last - half):
        return _even(first, last, rules.spacing_mm), set()
    above = _even(first, waist_mm - half, rules.spacing_mm)
    below = _even(waist_mm + half, last, rules.spacing_mm)
    return above + below, {len(above) - 1, len(above)}


def _point_at(line: np.ndarray, cumulative: np.ndarray, s: float, inset: float) -> tuple[float, float]:
    """The point ``s`` along the centre-back line, moved ``inset`` into the panel (towards centre front)."""
    i = int(np.clip(np.searchsorted(cumulative, s, side="right") - 1, 0, len(line) - 2))
    a, b = line[i], line[i + 1]
    seg = cumulative[i + 1] - cumulative[i]
    t = (s - cumulative[i]) / seg if seg > 0 else 0.0
    x, y = a + t * (b - a)
    tx, ty = (b - a) / (np.hypot(*(b - a)) or 1.0)
    # The right edge runs top to bottom; (-ty, tx) points into the panel.
    return float(x - inset * ty), float(y + inset * tx)


def lacing(
    block: Block, altered: tuple[PanelOutline, ...], lacing_gap_mm: float, rules: LacingRules = LacingRules()
) -> Lacing | None:
    """The eyelets of a laced back; None when the centre back is a plain seam."""
    if block.centre_back != CB_LACED:
        return None
    last = block.panels[-1].name
    outline = next((o for o in altered if o.name == last), None)
    if outline is None:
        raise ValueError(f"The outlines lack the centre-back panel {last}.")
    line = np.asarray(outline.right_line, dtype=float)
    cumulative = np.concatenate([[0.0], np.cumsum(np.hypot(*np.diff(line, axis=0).T))])
    edge = float(cumulative[-1])
    waist = None
    if "waist" in outline.level_y:
        y = outline.level_y["waist"]
        order = np.argsort(line[:, 1], kind="stable")
        waist = float(np.interp(y, line[order, 1], cumulative[order]))
    distances, pair = eyelet_positions(edge, waist, rules)
    eyelets = tuple(
        Eyelet(i + 1, float(s), _point_at(line, cumulative, s, rules.inset_mm), i in pair)
        for i, s in enumerate(distances)
    )
    findings = []
    if not eyelets:
        findings.append(
            Finding(
                "back_too_short_for_eyelets",
                WARNING,
                f"The back edge ({edge:.0f} mm) is shorter than the margins from the bound edges "
                f"({rules.top_margin_mm + rules.bottom_margin_mm:.0f} mm): no eyelets placed.",
                panel=last,
            )
        )
    return Lacing(last, edge, eyelets, float(lacing_gap_mm), rules, tuple(findings))
