"""Altered panel outlines: stitch lines, cutting lines, notches, grainlines, seam truing, checks.

Plain data in (a Block and an Alteration), plain data out.  Millimetres
throughout; x grows from centre front towards centre back, y downwards from
the top of the block, as in block.py.

Each stitch line is a smooth curve through the panel's corner and level
points.  A shift given at the levels is carried along the line by a monotone
cubic of shift against height, so it never overshoots the values the fitter
chose; above the top level and below the bottom level the nearest level's
shift holds.

A panel imported from a drawing keeps its drawn stitch line
(``Panel.curves``): each side is then the drawn polyline itself, moved
sideways by the same interpolated shift, and the top and bottom edges are the
drawn edges carried along by their corners.  Nothing is redrawn through the
level points.
"""

from __future__ import annotations

import math
import re
import threading
import weakref
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import shapely
from shapely.geometry import LineString, MultiPolygon, Polygon, box

from patterns.core.block import LEFT, MIN_PANEL_WIDTH_MM, RIGHT, Alteration, Block, Panel, Seam
from patterns.core.findings import ERROR, WARNING, Finding
from patterns.core.measures import LEVEL_LABELS

Pt = tuple[float, float]

SAMPLE_STEP_MM = 5.0
# Matching stitch lines may differ by 1/8 in (about 3.2 mm) once trued;
# Threads magazine no. 200, "10 patternwork skills" (1/16 in is the aim,
# 1/8 in widely accepted).  1 in = 25.4 mm exactly.
TRUING_TOLERANCE_MM = 25.4 / 8
# A stitch line bending more than this at a level point shows as a kink in
# the finished garment (our choice).
MAX_TURN_DEGREES = 30.0
# Mitred seam-allowance corners are cut back to a bevel beyond this ratio
# of the allowance, so sharp corners do not grow long spikes.
MITRE_LIMIT = 4.0
# Curves are sampled finely enough that no two sample segments meet at more
# than this, which keeps a mitred offset within about 0.001 mm of its distance.
REFINE_TURN_DEGREES = 1.0

_EPS = 1e-6


@dataclass(frozen=True)
class GeometryFinding(Finding):
    """A finding about the altered outlines, with where and how much.

    ``y`` gives the height (altered pattern, mm) when the place is not a
    level; ``amount_mm`` the size of the problem, for showing in the plan's unit.
    """

    y: float | None = None
    amount_mm: float | None = None


@dataclass(frozen=True)
class Notch:
    """A balance mark on a stitch line, square to it, so two raw edges can be matched."""

    level: str
    edge: str  # LEFT or RIGHT edge of its panel
    point: Pt  # on the stitch line
    direction: Pt  # unit vector pointing out of the panel
    seam: str | None  # None on centre front and centre back


@dataclass(frozen=True)
class PanelOutline:
    """One panel ready to draw or cut.

    ``stitch`` and ``cutting`` are closed polygons (first point not repeated).
    ``left_line`` and ``right_line`` run top to bottom.  ``level_y`` holds the
    height of each level the panel crosses, after band changes.
    """

    name: str
    size: str
    stitch: tuple[Pt, ...]
    cutting: tuple[Pt, ...]
    left_line: tuple[Pt, ...]
    right_line: tuple[Pt, ...]
    level_y: dict[str, float]
    notches: tuple[Notch, ...]
    grainline: tuple[Pt, Pt]
    labels: tuple[str, ...]
    label_at: Pt
    seam_allowance_mm: float
    cut_count: int = 2
    on_fold: bool = False

    def edge_line(self, edge: str) -> tuple[Pt, ...]:
        return self.left_line if edge == LEFT else self.right_line


@dataclass(frozen=True)
class SeamTruing:
    """Stitch-line lengths of the two raw edges of one seam, before and after the alteration."""

    seam: str
    front_panel: str
    back_panel: str
    front_base_mm: float
    back_base_mm: float
    front_after_mm: float
    back_after_mm: float
    end: str  # "top" or "bottom": the end nearer where the lengths drifted apart
    within_tolerance: bool

    @property
    def base_difference_mm(self) -> float:
        """Front edge less back edge, as drafted (a block may ease one edge on purpose)."""
        return self.front_base_mm - self.back_base_mm

    @property
    def after_difference_mm(self) -> float:
        return self.front_after_mm - self.back_after_mm

    @property
    def change_mm(self) -> float:
        return self.after_difference_mm - self.base_difference_mm


@dataclass(frozen=True)
class AlteredPattern:
    """Everything one recompute gives: base and altered outlines, seam truing, findings."""

    block_name: str
    size: str
    base: tuple[PanelOutline, ...]
    altered: tuple[PanelOutline, ...]
    base_level_y: dict[str, float]
    level_y: dict[str, float]
    seams: tuple[SeamTruing, ...]
    findings: tuple[GeometryFinding, ...]


# --- monotone cubic -------------------------------------------------------------


def _pchip_slopes(xk: np.ndarray, yk: np.ndarray) -> np.ndarray:
    """Fritsch-Carlson slopes: zero at local extremes, so the curve never overshoots the knots."""
    n = len(xk)
    h = np.diff(xk)
    delta = np.diff(yk) / h
    if n == 2:
        return np.array([delta[0], delta[0]])
    d = np.zeros(n)
    for k in range(1, n - 1):
        if delta[k - 1] * delta[k] > 0:
            w1 = 2 * h[k] + h[k - 1]
            w2 = h[k] + 2 * h[k - 1]
            d[k] = (w1 + w2) * delta[k - 1] * delta[k] / (w1 * delta[k] + w2 * delta[k - 1])
    d[0] = _pchip_end(h[0], h[1], delta[0], delta[1])
    d[-1] = _pchip_end(h[-1], h[-2], delta[-1], delta[-2])
    return d


def _pchip_end(h0: float, h1: float, m0: float, m1: float) -> float:
    d = ((2 * h0 + h1) * m0 - h0 * m1) / (h0 + h1)
    if np.sign(d) != np.sign(m0):
        return 0.0
    if np.sign(m0) != np.sign(m1) and abs(d) > abs(3 * m0):
        return 3 * m0
    return d


class Pchip:
    """Monotone piecewise cubic through (xk, yk); constant beyond the end knots."""

    def __init__(self, xk, yk):
        self.xk = np.asarray(xk, dtype=float)
        self.yk = np.asarray(yk, dtype=float)
        self.flat = len(self.xk) == 1 or not np.any(self.yk != self.yk[0])
        if not self.flat:
            h = np.diff(self.xk)
            delta = np.diff(self.yk) / h
            d = _pchip_slopes(self.xk, self.yk)
            # Each piece as a cubic in the distance from its left knot.
            self.c1 = d[:-1]
            self.c2 = (3 * delta - 2 * d[:-1] - d[1:]) / h
            self.c3 = (d[:-1] + d[1:] - 2 * delta) / (h * h)

    def __call__(self, xq) -> np.ndarray:
        xq = np.asarray(xq, dtype=float)
        xk = self.xk
        if self.flat:
            return np.full(xq.shape, self.yk[0])
        xc = np.minimum(np.maximum(xq, xk[0]), xk[-1])
        i = np.minimum(np.maximum(np.searchsorted(xk, xc, side="right") - 1, 0), len(xk) - 2)
        s = xc - xk[i]
        return self.yk[i] + s * (self.c1[i] + s * (self.c2[i] + s * self.c3[i]))


def pchip(xk, yk, xq) -> np.ndarray:
    """Monotone piecewise cubic through (xk, yk) evaluated at xq; constant beyond the end knots."""
    return Pchip(xk, yk)(xq)


# --- building outlines -------------------------------------------------------------


def _check_names(block: Block, alteration: Alteration) -> None:
    panels = {p.name for p in block.panels}
    levels = set(block.level_names)
    for panel, per_level in alteration.shifts.items():
        if panel not in panels:
            raise ValueError(f"The alteration names a panel the block does not have: {panel!r}.")
        unknown = set(per_level) - levels
        if unknown:
            raise ValueError(f"The alteration names a level the block does not have: {sorted(unknown)!r}.")
    for upper, lower in alteration.bands:
        if upper not in levels or lower not in levels:
            raise ValueError(f"A band names a level the block does not have: {(upper, lower)!r}.")
        if block.level_y(upper) >= block.level_y(lower):
            raise ValueError(f"A band must run from a higher level to a lower one: {(upper, lower)!r}.")


def band_map(block: Block, alteration: Alteration):
    """Height on the altered pattern for a height on the base pattern.

    Below a band everything moves down by the band's change; inside it, in proportion.
    """
    bands = [(block.level_y(u), block.level_y(lo), change) for (u, lo), change in alteration.bands.items()]

    def to_altered(y):
        y = np.asarray(y, dtype=float)
        out = y.copy()
        for yu, yl, change in bands:
            out = out + change * np.clip((y - yu) / (yl - yu), 0.0, 1.0)
        return out

    return to_altered


@dataclass(frozen=True)
class _Edge:
    points: np.ndarray  # altered, top to bottom, shape (n, 2)
    level_index: dict[str, int]  # sample index of each level on this edge
    knots: np.ndarray  # altered corner and level points, shape (k, 2)
    knot_levels: tuple[str | None, ...]
    base_y: np.ndarray | None = None  # base height of each sample (drawn panels only)
    dx: np.ndarray | None = None  # sideways move of each sample (drawn panels only)

    def dx_at(self, y: float) -> float:
        if self.base_y is None or self.dx is None:
            raise ValueError("Only a drawn panel's edge keeps how far each sample moved sideways.")
        return np.interp(y, self.base_y, self.dx)


def _edge(block: Block, panel: Panel, edge: str, alteration: Alteration, to_altered, step: float) -> _Edge:
    top, bottom = (panel.top_left, panel.bottom_left) if edge == LEFT else (panel.top_right, panel.bottom_right)
    if bottom.y <= top.y:
        raise ValueError(f"Panel {panel.name}: the {edge} edge must run downwards.")
    at_level = panel.left if edge == LEFT else panel.right
    drawn = None
    if panel.curves is not None:
        drawn = np.asarray(panel.curves.left if edge == LEFT else panel.curves.right, dtype=float)
        at_level = {
            name: float(np.interp(y, drawn[:, 1], drawn[:, 0]))
            for name, y in ((lv.name, lv.y) for lv in block.levels)
            if name in at_level
        }
    knot_y, knot_x = [top.y], [top.x]
    knot_levels: list[str | None] = [None]
    for level in block.levels:
        if top.y - _EPS <= level.y <= bottom.y + _EPS:
            if abs(level.y - knot_y[-1]) <= _EPS:
                knot_y.pop(), knot_x.pop(), knot_levels.pop()
            knot_y.append(level.y)
            knot_x.append(at_level[level.name])
            knot_levels.append(level.name)
    if bottom.y - knot_y[-1] > _EPS:
        knot_y.append(bottom.y)
        knot_x.append(bottom.x)
        knot_levels.append(None)

    level_ys = [lv.y for lv in block.levels]
    shifts = [_edge_shift(alteration, panel.name, lv.name, edge) for lv in block.levels]
    sign = -1.0 if edge == LEFT else 1.0

    shift_at = Pchip(level_ys, shifts)
    seam_x: Callable[[np.ndarray], np.ndarray]
    if drawn is None:
        seam_x = Pchip(knot_y, knot_x)
    else:

        def seam_x(ys, _y=drawn[:, 1], _x=drawn[:, 0]):
            return np.interp(ys, _y, _x)

    def place(ys):
        xs = seam_x(ys) + sign * shift_at(ys)
        return np.column_stack([xs, to_altered(ys)])

    grid = np.arange(knot_y[0], knot_y[-1], step)
    grid = grid[np.min(np.abs(grid[:, None] - np.asarray(knot_y)[None, :]), axis=1) > 0.5 * step]
    if drawn is not None:
        # Every drawn vertex stays a sample, so the drawn line is followed exactly.
        inner = drawn[1:-1, 1]
        inner = inner[np.min(np.abs(inner[:, None] - np.asarray(knot_y)[None, :]), axis=1) > 1e-3]
        grid = np.concatenate(
            [
                grid[np.min(np.abs(grid[:, None] - drawn[None, :, 1]), axis=1) > 0.05 * step] if len(grid) else grid,
                inner,
            ]
        )
    ys = np.sort(np.concatenate([grid, knot_y]))
    ys, points = _refine(ys, place)

    index = {name: int(np.searchsorted(ys, y)) for name, y in zip(knot_levels, knot_y) if name}
    knot_points = points[[int(np.searchsorted(ys, y)) for y in knot_y]]
    if drawn is None:
        return _Edge(points, index, knot_points, tuple(knot_levels))
    return _Edge(points, index, knot_points, tuple(knot_levels), base_y=ys, dx=points[:, 0] - seam_x(ys))


def _turning(points: np.ndarray) -> np.ndarray:
    """Angle in radians between consecutive segments, at each interior point."""
    d = np.diff(points, axis=0)
    a, b = d[:-1], d[1:]
    return np.abs(np.arctan2(a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0], np.einsum("ij,ij->i", a, b)))


def _refine(ys: np.ndarray, place, max_turn: float = math.radians(REFINE_TURN_DEGREES), rounds: int = 6):
    """Add samples where the line bends, so an offset of it keeps its distance closely."""
    points = place(ys)
    for _ in range(rounds):
        sharp = np.flatnonzero(_turning(points) > max_turn) + 1
        if len(sharp) == 0:
            break
        gaps = np.unique(np.concatenate([sharp - 1, sharp]))
        new = 0.5 * (ys[gaps] + ys[gaps + 1])
        ys = np.concatenate([ys, new])
        points = np.concatenate([points, place(new)])
        order = np.argsort(ys, kind="stable")
        ys, points = ys[order], points[order]
    return ys, points


def _edge_shift(alteration: Alteration, panel: str, level: str, edge: str) -> float:
    s = alteration.shift(panel, level)
    return s.left if edge == LEFT else s.right


def _outward(points: np.ndarray, i: int, edge: str) -> Pt:
    a = points[max(i - 1, 0)]
    b = points[min(i + 1, len(points) - 1)]
    tx, ty = b - a
    norm = math.hypot(tx, ty)
    tx, ty = tx / norm, ty / norm
    return (float(-ty), float(tx)) if edge == LEFT else (float(ty), float(-tx))


def _as_tuple(points) -> tuple[Pt, ...]:
    return tuple(map(tuple, np.asarray(points, dtype=float).tolist()))


def _largest(geom) -> Polygon:
    if isinstance(geom, MultiPolygon):
        return max(geom.geoms, key=lambda g: g.area)
    return geom


def _cutting(stitch: Polygon, allowance: float, fold_x: float | None, bound: tuple[np.ndarray, ...] = ()) -> Polygon:
    """Stitch polygon grown by the allowance; a fold edge gets none, since the fold is the edge.

    ``bound`` lists the top or bottom edges (each a polyline from its left corner to its
    right corner, straight or drawn) that are finished with binding: the allowance beyond
    each is cut away along the edge itself, so there the cutting line is the stitch line,
    continued along the edge's end directions to meet the side seams' allowances.
    """
    cut = _largest(stitch.buffer(allowance, join_style="mitre", mitre_limit=MITRE_LIMIT))
    if allowance > 0:
        for line in bound:
            beyond = _beyond(stitch, np.asarray(line, dtype=float), allowance)
            if not beyond.is_empty:
                cut = _largest(cut.difference(beyond))
    if fold_x is not None:
        minx, miny, maxx, maxy = cut.bounds
        cut = _largest(cut.intersection(box(fold_x, miny - 1, maxx + 1, maxy + 1)))
    return cut


def _beyond(stitch: Polygon, line: np.ndarray, allowance: float) -> Polygon:
    """The band outside an edge (on the side away from the panel), reaching past the mitred
    corners of the allowance, so cutting it away leaves the edge's own line."""
    keep = np.concatenate([[True], np.hypot(*np.diff(line, axis=0).T) > _EPS])
    line = line[keep]
    if len(line) < 2:
        return Polygon()
    reach = allowance * (MITRE_LIMIT + 1) + 1.0
    if len(line) == 2:
        return _beyond_straight(stitch, line[0], line[1], reach)
    t0 = (line[1] - line[0]) / np.linalg.norm(line[1] - line[0])
    t1 = (line[-1] - line[-2]) / np.linalg.norm(line[-1] - line[-2])
    extended = np.concatenate([[line[0] - t0 * reach], line, [line[-1] + t1 * reach]])
    # Which side is outside: a point just off the middle of the edge, away from the panel.
    i = len(line) // 2
    a, b = (line[i - 1], line[i]) if i > 0 else (line[0], line[1])
    t = (b - a) / np.linalg.norm(b - a)
    normal = np.array([-t[1], t[0]])
    probe = 0.5 * (a + b) + normal * min(0.5, allowance / 4)
    side = 1.0 if not stitch.contains(shapely.Point(*probe)) else -1.0
    offset = LineString(extended).offset_curve(side * reach, join_style="mitre", mitre_limit=MITRE_LIMIT)
    if offset.geom_type != "LineString" or offset.is_empty:
        # A drawn edge too tightly curved to offset this far: cut along its chord instead.
        return _beyond_straight(stitch, line[0], line[-1], reach)
    band = Polygon(np.concatenate([extended, np.asarray(offset.coords)[::-1]]))
    return band if band.is_valid else _largest(band.buffer(0))


def _beyond_straight(stitch: Polygon, a, b, reach: float) -> Polygon:
    """The band of depth ``reach`` outside the straight edge a-b, reaching ``reach`` past both ends."""
    (ax, ay), (bx, by) = a, b
    length = math.hypot(bx - ax, by - ay)
    if length <= _EPS:
        return Polygon()
    tx, ty = (bx - ax) / length, (by - ay) / length
    nx, ny = -ty, tx
    c = stitch.centroid
    if nx * (0.5 * (ax + bx) - c.x) + ny * (0.5 * (ay + by) - c.y) < 0:
        nx, ny = -nx, -ny
    a0 = (ax - tx * reach, ay - ty * reach)
    b0 = (bx + tx * reach, by + ty * reach)
    return Polygon([a0, b0, (b0[0] + nx * reach, b0[1] + ny * reach), (a0[0] + nx * reach, a0[1] + ny * reach)])


def _grainline(stitch: Polygon, x: float) -> tuple[Pt, Pt]:
    """Parallel to centre front, through the middle of the panel, over the middle 70 % of its length."""
    minx, miny, maxx, maxy = stitch.bounds
    cut = LineString([(x, miny - 1), (x, maxy + 1)]).intersection(stitch) if stitch.is_valid else None
    y0, y1 = (cut.bounds[1], cut.bounds[3]) if cut is not None and not cut.is_empty else (miny, maxy)
    margin = 0.15 * (y1 - y0)
    return (x, y0 + margin), (x, y1 - margin)


def _carried(line, move_first, move_last) -> np.ndarray:
    """A drawn top or bottom edge moved with its two corners: each point by the corners'
    moves blended by how far along the edge it lies."""
    pts = np.asarray(line, dtype=float)
    along = _cumulative_length(pts)
    t = (along / along[-1])[:, None] if along[-1] > 0 else np.zeros((len(pts), 1))
    return pts + (1 - t) * np.asarray(move_first, dtype=float) + t * np.asarray(move_last, dtype=float)


def _seam_of(block: Block, panel: str, edge: str) -> str | None:
    for seam in block.seams:
        if (edge == RIGHT and seam.front_panel == panel) or (edge == LEFT and seam.back_panel == panel):
            return seam.name
    return None


def _panel_labels(block: Block, panel: Panel) -> tuple[str, ...]:
    cut = f"cut {panel.cut_count} on fold" if panel.on_fold else f"cut {panel.cut_count}"
    return (panel.name, f"size {block.size}", cut)


def _outline(block, panel, alteration, to_altered, allowance, step) -> tuple[PanelOutline, dict[str, _Edge], Polygon]:
    edges = {edge: _edge(block, panel, edge, alteration, to_altered, step) for edge in (LEFT, RIGHT)}
    left, right = edges[LEFT].points, edges[RIGHT].points
    if panel.curves is None:
        ring = np.concatenate([left, right[::-1]])
    else:
        c = panel.curves
        top = _carried(c.top, left[0] - c.left[0], right[0] - c.right[0])
        bottom = _carried(c.bottom, left[-1] - c.left[-1], right[-1] - c.right[-1])
        ring = np.concatenate([left, bottom[1:-1], right[::-1], top[-2:0:-1]])
    stitch = Polygon(ring)
    fold_x = float(left[:, 0].min()) if panel.on_fold else None
    bound = []
    if panel.top_bound:
        bound.append(np.array([left[0], right[0]]) if panel.curves is None else top)
    if panel.bottom_bound:
        bound.append(np.array([left[-1], right[-1]]) if panel.curves is None else bottom)
    cutting = _cutting(stitch, allowance, fold_x, tuple(bound))

    notches = []
    for edge, e in edges.items():
        if edge == LEFT and panel.on_fold:
            continue
        seam = _seam_of(block, panel.name, edge)
        for level in block.level_names:
            if level in e.level_index:
                i = e.level_index[level]
                notches.append(
                    Notch(
                        level, edge, (float(e.points[i, 0]), float(e.points[i, 1])), _outward(e.points, i, edge), seam
                    )
                )

    levels_here = [lv for lv in block.level_names if lv in edges[LEFT].level_index and lv in edges[RIGHT].level_index]
    if levels_here:
        mid = levels_here[len(levels_here) // 2]
        xl, xr = left[edges[LEFT].level_index[mid], 0], right[edges[RIGHT].level_index[mid], 0]
        x_mid = 0.5 * (xl + xr)
        base_width = panel.width(mid)
        if panel.grainline_x is not None and base_width > 0:
            # The same place between the stitch lines as on the base pattern.
            x_mid = xl + (panel.grainline_x - panel.left[mid]) / base_width * (xr - xl)
    else:
        x_mid = 0.5 * (left[:, 0].mean() + right[:, 0].mean())
    if panel.curves is not None and panel.curves.grainline is not None:

        def moved(x: float, y: float) -> Pt:
            return float(x + 0.5 * (edges[LEFT].dx_at(y) + edges[RIGHT].dx_at(y))), float(to_altered(y))

        start, end = panel.curves.grainline
        grain = (moved(*start), moved(*end))
    else:
        grain = _grainline(stitch, float(x_mid))
    level_y = {}
    for e in edges.values():
        for name, i in e.level_index.items():
            level_y[name] = float(e.points[i, 1])
    level_y = {lv: level_y[lv] for lv in block.level_names if lv in level_y}

    outline = PanelOutline(
        name=panel.name,
        size=block.size,
        stitch=_as_tuple(ring),
        cutting=_as_tuple(shapely.get_coordinates(cutting.exterior)[:-1]),
        left_line=_as_tuple(left),
        right_line=_as_tuple(right),
        level_y=level_y,
        notches=tuple(notches),
        grainline=grain,
        labels=_panel_labels(block, panel),
        label_at=(grain[0][0], 0.5 * (grain[0][1] + grain[1][1])),
        seam_allowance_mm=allowance,
        cut_count=panel.cut_count,
        on_fold=panel.on_fold,
    )
    return outline, edges, stitch


def _build(block: Block, alteration: Alteration, seam_allowance_mm: float | None, step_mm: float):
    _check_names(block, alteration)
    allowance = block.seam_allowance_mm if seam_allowance_mm is None else seam_allowance_mm
    if allowance < 0:
        raise ValueError("A seam allowance cannot be negative.")
    to_altered = band_map(block, alteration)
    built = [_outline(block, p, alteration, to_altered, allowance, step_mm) for p in block.panels]
    return tuple(b[0] for b in built), [b[1] for b in built], to_altered, [b[2] for b in built]


_BASES_KEPT = 32
_bases: dict[tuple, tuple] = {}
_bases_lock = threading.Lock()


def _base(block: Block, seam_allowance_mm: float | None, step_mm: float):
    """The unaltered outlines, the same for every plan on the block: built once per Block object
    (the app keeps decoded blocks and reuses them), held only while the block lives."""
    key = (id(block), seam_allowance_mm, step_mm)
    with _bases_lock:
        found = _bases.get(key)
    if found is not None and found[0]() is block:
        return found[1]
    built = _build(block, Alteration(shifts={}), seam_allowance_mm, step_mm)
    with _bases_lock:
        while len(_bases) >= _BASES_KEPT:
            _bases.pop(next(iter(_bases)))
        _bases[key] = (weakref.ref(block), built)
    return built


def alter_block(
    block: Block, alteration: Alteration, *, seam_allowance_mm: float | None = None, step_mm: float = SAMPLE_STEP_MM
) -> tuple[PanelOutline, ...]:
    """The altered outline of every panel, centre front to centre back."""
    return _build(block, alteration, seam_allowance_mm, step_mm)[0]


def base_outlines(
    block: Block, *, seam_allowance_mm: float | None = None, step_mm: float = SAMPLE_STEP_MM
) -> tuple[PanelOutline, ...]:
    return alter_block(block, Alteration(shifts={}), seam_allowance_mm=seam_allowance_mm, step_mm=step_mm)


# --- seam truing -------------------------------------------------------------------


def _cumulative_length(points: np.ndarray) -> np.ndarray:
    return np.concatenate([[0.0], np.cumsum(np.hypot(*np.diff(points, axis=0).T))])


def line_length(points) -> float:
    return float(_cumulative_length(np.asarray(points, dtype=float))[-1])


def _length_above(points: np.ndarray, y: float) -> float:
    return float(np.interp(y, points[:, 1], _cumulative_length(points)))


def _truing(seam: Seam, base_edges, after_edges, tolerance: float) -> SeamTruing:
    fb, bb = base_edges[seam.front_panel][RIGHT].points, base_edges[seam.back_panel][LEFT].points
    fa, ba = after_edges[seam.front_panel][RIGHT].points, after_edges[seam.back_panel][LEFT].points
    f_base, b_base = line_length(fb), line_length(bb)
    f_after, b_after = line_length(fa), line_length(ba)

    def drift_above(f_pts, b_pts):
        y_mid = 0.25 * (f_pts[0, 1] + b_pts[0, 1] + f_pts[-1, 1] + b_pts[-1, 1])
        return _length_above(f_pts, y_mid) - _length_above(b_pts, y_mid)

    change = (f_after - b_after) - (f_base - b_base)
    upper = drift_above(fa, ba) - drift_above(fb, bb)
    end = "top" if abs(upper) >= abs(change - upper) else "bottom"
    after = f_after - b_after
    within = abs(after) <= tolerance or abs(change) <= tolerance
    return SeamTruing(seam.name, seam.front_panel, seam.back_panel, f_base, b_base, f_after, b_after, end, within)


def _truing_finding(t: SeamTruing, tolerance: float) -> GeometryFinding:
    grew, other = (t.front_panel, t.back_panel) if t.change_mm > 0 else (t.back_panel, t.front_panel)
    amount = abs(t.change_mm)
    far_end = "bottom" if t.end == "top" else "top"
    d = t.base_difference_mm
    before = (
        "as drafted the two edges were equal"
        if abs(d) < 0.05
        else f"as drafted the {t.front_panel} edge was {abs(d):.1f} mm {'longer' if d > 0 else 'shorter'}"
    )
    message = (
        f"{t.seam}: after the alteration the {grew} edge is {amount:.1f} mm longer than it should be "
        f"against the {other} edge ({before}; tolerance {tolerance:.1f} mm). "
        f"Walk the stitch lines from the {far_end}, matching notches, and true the {t.end} end: "
        f"take {amount:.1f} mm off the {grew} edge or add it to the {other} edge."
    )
    return GeometryFinding("seam_not_true", WARNING, message, panel=grew, seam=t.seam, amount_mm=amount)


def seam_truing(
    block: Block, alteration: Alteration, *, tolerance_mm: float = TRUING_TOLERANCE_MM, step_mm: float = SAMPLE_STEP_MM
) -> tuple[SeamTruing, ...]:
    base_edges = _build(block, Alteration(shifts={}), None, step_mm)[1]
    after_edges = _build(block, alteration, None, step_mm)[1]
    return _truings(block, base_edges, after_edges, tolerance_mm)


def _truings(block, base_edges, after_edges, tolerance):
    base = {p.name: e for p, e in zip(block.panels, base_edges)}
    after = {p.name: e for p, e in zip(block.panels, after_edges)}
    return tuple(_truing(seam, base, after, tolerance) for seam in block.seams)


# --- checks --------------------------------------------------------------------------


_LOCATION = re.compile(r"\[\s*([-+0-9.eE]+)\s+([-+0-9.eE]+)\s*\]")


def _nearest_level(level_y: dict[str, float], y: float) -> str | None:
    return min(level_y, key=lambda name: abs(level_y[name] - y)) if level_y else None


def _label(level: str) -> str:
    return LEVEL_LABELS.get(level, level).lower()


def _where(level_y: dict[str, float], y: float) -> str:
    level = _nearest_level(level_y, y)
    if level is None:
        return f"{y:.0f} mm from the top"
    off = y - level_y[level]
    if abs(off) < 0.5:
        return f"at the {_label(level)}"
    return f"{abs(off):.0f} mm {'below' if off > 0 else 'above'} the {_label(level)}"


def _self_intersection(outline: PanelOutline, poly: Polygon) -> list[GeometryFinding]:
    if poly.is_valid and poly.exterior.is_simple:
        return []
    reason = shapely.is_valid_reason(poly)
    match = _LOCATION.search(reason)
    y = float(match.group(2)) if match else None
    place = f" {_where(outline.level_y, y)}" if y is not None else ""
    return [
        GeometryFinding(
            "outline_self_intersects",
            ERROR,
            f"The stitch line of {outline.name} crosses itself{place}. The shifts fold the panel over; "
            "reduce them or spread them over other seams.",
            panel=outline.name,
            level=_nearest_level(outline.level_y, y) if y is not None else None,
            y=y,
        )
    ]


def panel_widths(outline: PanelOutline) -> tuple[np.ndarray, np.ndarray]:
    """Width of the panel between its stitch lines at heights along it (where both lines exist)."""
    left, right = np.asarray(outline.left_line), np.asarray(outline.right_line)
    y0, y1 = max(left[0, 1], right[0, 1]), min(left[-1, 1], right[-1, 1])
    ys = np.unique(np.concatenate([left[:, 1], right[:, 1]]))
    ys = ys[(ys >= y0) & (ys <= y1)]
    return ys, _x_at(right, ys) - _x_at(left, ys)


def _x_at(line: np.ndarray, ys: np.ndarray) -> np.ndarray:
    order = np.argsort(line[:, 1], kind="stable")
    return np.interp(ys, line[order, 1], line[order, 0])


def _narrow(outline: PanelOutline, minimum: float) -> list[GeometryFinding]:
    ys, widths = panel_widths(outline)
    if len(ys) == 0:
        return []
    i = int(np.argmin(widths))
    if widths[i] >= minimum:
        return []
    y, w = float(ys[i]), float(widths[i])
    where = _where(outline.level_y, y)
    if w <= 0:
        severity = ERROR
        problem = f"The stitch lines of {outline.name} cross {where}"
    else:
        severity = WARNING
        problem = f"{outline.name} is only {w:.0f} mm wide {where}"
    return [
        GeometryFinding(
            "panel_too_narrow",
            severity,
            f"{problem} (at least {minimum:.0f} mm is needed to sew the seams and carry a bone). "
            "Take the change from other seams or choose another base size.",
            panel=outline.name,
            level=_nearest_level(outline.level_y, y),
            y=y,
            amount_mm=w,
        )
    ]


def _turns(block: Block, panel: Panel, edges: dict[str, _Edge], limit: float) -> list[GeometryFinding]:
    """Bend of each stitch line at its level points, between the straight runs to the neighbouring
    corner or level points: the smoothed curve has no corner there, but the eye sees the bend."""
    found = []
    for edge, e in edges.items():
        k = e.knots
        for j in range(1, len(k) - 1):
            level = e.knot_levels[j]
            if level is None:
                continue
            a, b = k[j] - k[j - 1], k[j + 1] - k[j]
            turn = abs(math.degrees(math.atan2(a[0] * b[1] - a[1] * b[0], a[0] * b[0] + a[1] * b[1])))
            if turn > limit:
                seam = _seam_of(block, panel.name, edge)
                line = f"the {seam} line" if seam else f"the {edge} edge"
                found.append(
                    GeometryFinding(
                        "seam_turns_sharply",
                        WARNING,
                        f"On {panel.name}, {line} bends by {turn:.1f}° at the {_label(level)} (more than {limit:g}°). "
                        "The seam will show a point there: spread the change over the neighbouring levels.",
                        panel=panel.name,
                        seam=seam,
                        level=level,
                        y=float(k[j][1]),
                        amount_mm=None,
                    )
                )
    return found


def _bands(block: Block, alteration: Alteration) -> list[GeometryFinding]:
    found = []
    for (upper, lower), change in alteration.bands.items():
        length = block.level_y(lower) - block.level_y(upper)
        if length + change <= 0:
            found.append(
                GeometryFinding(
                    "band_too_short",
                    ERROR,
                    f"Shortening the {_label(upper)} to {_label(lower)} band by {-change:.0f} mm leaves nothing of it "
                    f"(it is {length:.0f} mm long).",
                    level=upper,
                    amount_mm=change,
                )
            )
    return found


def _fold(outline: PanelOutline) -> list[GeometryFinding]:
    if not outline.on_fold:
        return []
    xs = [x for x, _ in outline.left_line]
    if max(xs) - min(xs) <= 0.01:
        return []
    return [
        GeometryFinding(
            "fold_not_straight",
            ERROR,
            f"{outline.name} is cut on the fold, but the alteration bends its centre front by "
            f"{max(xs) - min(xs):.1f} mm. Shift the centre front by the same amount at every level.",
            panel=outline.name,
            amount_mm=max(xs) - min(xs),
        )
    ]


def alter_pattern(
    block: Block,
    alteration: Alteration,
    *,
    seam_allowance_mm: float | None = None,
    tolerance_mm: float = TRUING_TOLERANCE_MM,
    min_width_mm: float = MIN_PANEL_WIDTH_MM,
    max_turn_degrees: float = MAX_TURN_DEGREES,
    step_mm: float = SAMPLE_STEP_MM,
) -> AlteredPattern:
    """Base and altered outlines, seam truing and every check, in one pass."""
    base, base_edges, _, _ = _base(block, seam_allowance_mm, step_mm)
    altered, after_edges, to_altered, polygons = _build(block, alteration, seam_allowance_mm, step_mm)
    seams = _truings(block, base_edges, after_edges, tolerance_mm)
    findings: list[GeometryFinding] = _bands(block, alteration)
    # A band shortened to nothing folds every panel: the other checks would only repeat it.
    for panel, outline, edges, polygon in zip(block.panels, altered, after_edges, polygons) if not findings else ():
        findings += _self_intersection(outline, polygon)
        findings += _narrow(outline, min_width_mm)
        findings += _turns(block, panel, edges, max_turn_degrees)
        findings += _fold(outline)
    if not any(f.code == "band_too_short" for f in findings):
        findings += [_truing_finding(t, tolerance_mm) for t in seams if not t.within_tolerance]
    level_y = dict(zip(block.level_names, (float(v) for v in to_altered([lv.y for lv in block.levels]))))
    return AlteredPattern(
        block_name=block.name,
        size=block.size,
        base=base,
        altered=altered,
        base_level_y={lv.name: lv.y for lv in block.levels},
        level_y=level_y,
        seams=seams,
        findings=tuple(findings),
    )


def geometry_findings(block: Block, alteration: Alteration, **options) -> tuple[GeometryFinding, ...]:
    return alter_pattern(block, alteration, **options).findings
