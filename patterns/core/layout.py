"""Fabric layout: where each cut piece goes on a length of fabric, and how much fabric that takes.

Plain data in (the altered panel outlines), plain data out (a
:class:`Layout` per fabric layer).  Millimetres throughout.

Fabric coordinates: x runs across the fabric, from one selvedge (0) to the
other (the fabric's width); y runs along it, from where the cutting starts
(0).  The grainline of every panel runs parallel to its centre front, which
is the pattern's y axis (outline.py), and the grain of a woven fabric runs
along the selvedge, so a piece goes onto the fabric as drafted or turned
half round (0 or 180 degrees), never at any other angle (common practice:
cut with the grainline parallel to the selvedge).

Pieces come from the cut list: a half pattern cut twice is one piece and
its mirror image (the two body halves); a panel cut on the fold is unfolded
into one whole, symmetric piece.

Two ways of placing them:

- :func:`shelf_layout`: rows across the fabric, tallest pieces first,
  bounding boxes side by side with the gap between them.  Instant, always
  valid, and the floor any other layout must beat.
- :func:`solver_layout`: spyrrow (a binding of the sparrow strip-packing
  solver) nests the outlines themselves within a time budget.  Its answer
  is checked here (no overlap, the gap, the grain, inside the width) and
  the shelf layout is returned in its place if the check fails.
"""

from __future__ import annotations

import math
import threading
import time
from dataclasses import dataclass
from typing import Callable, Sequence, TypedDict, Unpack

import numpy as np
from shapely import affinity
from shapely.geometry import LineString, Polygon
from shapely.ops import unary_union

from patterns.core.defaults import is_corset
from patterns.core.units import format_with_unit

Pt = tuple[float, float]

# Fabric layers, once.  The label is what the work order and the page show.
LAYERS = {
    "fashion": "Outer fabric",
    "strength": "Strength layer",
    "lining": "Lining",
    "interlining": "Interlining",
}
# Which layers a garment is cut in unless the plan says otherwise (common
# practice: a corset has an outer fabric, a strength layer and a lining; a
# bodice an outer fabric and a lining).
CORSET_LAYERS = ("fashion", "strength", "lining")
BODICE_LAYERS = ("fashion", "lining")

# Woven fabrics commonly come 112, 140 or 150 cm wide (45, 55, 60 in; from
# memory); 140 cm is the default until the fitter types the real width.
DEFAULT_WIDTH_MM = 1400.0
# Room between two pieces for the shears (our choice; the fitter may change it).
DEFAULT_GAP_MM = 5.0
MAX_GAP_MM = 100.0
# The solver's time for one request; 10 s is the limit of attention beyond
# which progress must show (Nielsen, Usability Engineering, 1993, ch. 5).
DEFAULT_BUDGET_S = 10
MAX_BUDGET_S = 120
MAX_WIDTH_MM = 10_000.0
# The share of the budget the solver is told it has; the rest is room for its overrun (up to
# 2.5 s measured on a two-core machine under a load of 4.5).  On the demo blocks the solver's
# length settles within 4 s, so 7 s of a 10 s budget lose nothing (tests/bench/bench_layout.py).
SOLVER_SHARE = 0.7

# Outlines are thinned for layout and drawing: no point of the thinned
# outline is further than this from the computed cutting line.
THIN_MM = 0.05
# The solver nests stand-ins for the pieces, each grown by half the gap and
# this margin (mitred corners, so the stand-in holds every point within that
# distance of its piece): stand-ins that do not overlap keep the pieces
# themselves at least the gap apart, with room for rounding.
SURROGATE_MARGIN_MM = 0.02
# Checks allow this much for rounding (mm).
TOLERANCE_MM = 0.01
ROTATIONS = (0, 180)

SHELF, SOLVER = "shelf", "solver"
# Reports of the solver that carry a layout keeping every rule.
_FEASIBLE = ("ExplFeas", "CmprFeas", "Final")


class LayoutError(ValueError):
    """A layout that cannot be made (a width too narrow, a gap out of range), in plain words."""


def default_layers(garment: str) -> tuple[str, ...]:
    return CORSET_LAYERS if is_corset(garment) else BODICE_LAYERS


def layer_label(code: str) -> str:
    return LAYERS.get(code, code)


# --- pieces ---------------------------------------------------------------------------


@dataclass(frozen=True)
class Piece:
    """One shape to cut, ``copies`` times, in each layer.

    ``outline`` is in the piece's own place: its bounding box starts at (0, 0).
    """

    name: str
    panel: str
    mirrored: bool
    unfolded: bool
    outline: tuple[Pt, ...]
    copies: int = 1

    @property
    def width_mm(self) -> float:
        return max(x for x, _ in self.outline)

    @property
    def height_mm(self) -> float:
        return max(y for _, y in self.outline)

    @property
    def area_mm2(self) -> float:
        return Polygon(self.outline).area

    def to_dict(self) -> dict:
        return {
            "name": self.name,
            "panel": self.panel,
            "mirrored": self.mirrored,
            "unfolded": self.unfolded,
            "copies": self.copies,
            "outline": [[round(x, 3), round(y, 3)] for x, y in self.outline],
        }

    @classmethod
    def from_dict(cls, d: dict) -> "Piece":
        return cls(
            d["name"],
            d["panel"],
            bool(d["mirrored"]),
            bool(d["unfolded"]),
            tuple((float(x), float(y)) for x, y in d["outline"]),
            int(d["copies"]),
        )


def _normalised(poly: Polygon) -> tuple[Pt, ...]:
    poly = poly.exterior.simplify(THIN_MM, preserve_topology=False)
    poly = Polygon(poly)
    if not poly.is_valid:
        poly = _largest(poly.buffer(0))
    x0, y0, _, _ = poly.bounds
    coords = list(poly.exterior.coords)[:-1]
    # To the micrometre, as stored (Layout.to_dict), so a layout read back is the layout checked.
    return tuple((round(x - x0, 3), round(y - y0, 3)) for x, y in coords)


def _largest(geom) -> Polygon:
    if geom.geom_type == "MultiPolygon":
        return max(geom.geoms, key=lambda g: g.area)
    return geom


def _unfold(poly: Polygon) -> Polygon:
    """The whole piece of a panel cut on the fold: the half and its mirror about the fold line."""
    fold_x = poly.bounds[0]
    mirror = affinity.scale(poly, xfact=-1.0, yfact=1.0, origin=(fold_x, 0.0))
    whole = _largest(unary_union([poly, mirror]).buffer(0))
    return Polygon(whole.exterior.coords)


def cut_pieces(outlines: Sequence) -> tuple[Piece, ...]:
    """The pieces of one layer from the altered outlines (objects with name, cutting, cut_count, on_fold).

    A panel on the fold becomes one whole piece per cut; any other panel cut
    ``n`` times gives ``n // 2`` mirrored pairs and, if ``n`` is odd, one more
    piece as drafted.
    """
    pieces = []
    for o in outlines:
        count = int(o.cut_count)
        if count < 1:
            continue
        poly = Polygon(o.cutting)
        if not poly.is_valid:
            poly = _largest(poly.buffer(0))
        if o.on_fold:
            pieces.append(Piece(f"{o.name}, unfolded", o.name, False, True, _normalised(_unfold(poly)), count))
            continue
        pairs, single = divmod(count, 2)
        pieces.append(Piece(o.name, o.name, False, False, _normalised(poly), pairs + single))
        if pairs:
            mirror = affinity.scale(poly, xfact=-1.0, yfact=1.0, origin=(0.0, 0.0))
            pieces.append(Piece(f"{o.name}, mirrored", o.name, True, False, _normalised(mirror), pairs))
    return tuple(pieces)


# --- layouts --------------------------------------------------------------------------


@dataclass(frozen=True)
class Placement:
    """One copy of a piece on the fabric: its bounding box's corner at (x, y), turned by ``rotation``
    degrees about the box's centre (0 or 180)."""

    piece: str
    x: float
    y: float
    rotation: int
    mirrored: bool

    def to_dict(self) -> dict:
        return {
            "piece": self.piece,
            "x": round(self.x, 3),
            "y": round(self.y, 3),
            "rotation": self.rotation,
            "mirrored": self.mirrored,
        }

    @classmethod
    def from_dict(cls, d: dict) -> "Placement":
        return cls(d["piece"], float(d["x"]), float(d["y"]), int(d["rotation"]), bool(d["mirrored"]))


def placed_outline(piece: Piece, placement: Placement) -> tuple[Pt, ...]:
    w, h = piece.width_mm, piece.height_mm
    if placement.rotation == 180:
        return tuple((placement.x + w - x, placement.y + h - y) for x, y in piece.outline)
    return tuple((placement.x + x, placement.y + y) for x, y in piece.outline)


@dataclass(frozen=True)
class Layout:
    """Every copy of every piece of one layer placed on a fabric ``width_mm`` wide."""

    method: str  # SHELF or SOLVER
    width_mm: float
    gap_mm: float
    length_mm: float
    pieces: tuple[Piece, ...]
    placements: tuple[Placement, ...]
    seconds: float = 0.0
    note: str = ""

    @property
    def pieces_area_mm2(self) -> float:
        by_name = {p.name: p for p in self.pieces}
        return sum(by_name[pl.piece].area_mm2 for pl in self.placements)

    @property
    def utilisation(self) -> float:
        """Pieces' area over the fabric used (width x length)."""
        used = self.width_mm * self.length_mm
        return self.pieces_area_mm2 / used if used > 0 else 0.0

    def piece(self, name: str) -> Piece:
        return next(p for p in self.pieces if p.name == name)

    def outlines(self) -> list[tuple[Placement, tuple[Pt, ...]]]:
        by_name = {p.name: p for p in self.pieces}
        return [(pl, placed_outline(by_name[pl.piece], pl)) for pl in self.placements]

    def to_dict(self) -> dict:
        return {
            "method": self.method,
            "width_mm": self.width_mm,
            "gap_mm": self.gap_mm,
            "length_mm": round(self.length_mm, 3),
            "seconds": round(self.seconds, 3),
            "note": self.note,
            "pieces": [p.to_dict() for p in self.pieces],
            "placements": [p.to_dict() for p in self.placements],
        }

    @classmethod
    def from_dict(cls, d: dict) -> "Layout":
        return cls(
            d["method"],
            float(d["width_mm"]),
            float(d["gap_mm"]),
            float(d["length_mm"]),
            tuple(Piece.from_dict(p) for p in d["pieces"]),
            tuple(Placement.from_dict(p) for p in d["placements"]),
            float(d.get("seconds", 0.0)),
            d.get("note", ""),
        )


def check_request(pieces: Sequence[Piece], width_mm: float, gap_mm: float, unit: str = "cm") -> None:
    """Refuse a width or gap no layout can use, in words (lengths in ``unit``, cm or in)."""
    for value, what in ((width_mm, "fabric width"), (gap_mm, "gap between pieces")):
        if not isinstance(value, (int, float)) or not math.isfinite(value):
            raise LayoutError(f"The {what} must be a number.")
    if width_mm <= 0:
        raise LayoutError("The fabric width must be more than 0.")
    if width_mm > MAX_WIDTH_MM:
        raise LayoutError(f"A fabric width over {format_with_unit(MAX_WIDTH_MM, unit)} is not a fabric width.")
    if gap_mm < 0 or gap_mm > MAX_GAP_MM:
        raise LayoutError(f"The gap between pieces must be between 0 and {format_with_unit(MAX_GAP_MM, unit)}.")
    if not pieces:
        raise LayoutError("There are no pieces to lay out.")
    widest = max(pieces, key=lambda p: p.width_mm)
    if widest.width_mm > width_mm + TOLERANCE_MM:
        raise LayoutError(
            f"{widest.name} is {format_with_unit(widest.width_mm, unit)} wide across the grain, wider than the "
            f"fabric ({format_with_unit(width_mm, unit)}): choose a wider fabric, or the piece cannot keep its "
            "grainline."
        )


def _copies(pieces: Sequence[Piece]) -> list[Piece]:
    return [p for p in pieces for _ in range(p.copies)]


def shelf_layout(pieces: Sequence[Piece], width_mm: float, gap_mm: float = DEFAULT_GAP_MM) -> Layout:
    """Rows across the fabric: the tallest pieces first, left to right, a new row when one is full."""
    started = time.perf_counter()
    check_request(pieces, width_mm, gap_mm)
    order = sorted(_copies(pieces), key=lambda p: (-p.height_mm, -p.width_mm, p.name))
    placements, x, y, row_height, length = [], 0.0, 0.0, 0.0, 0.0
    for p in order:
        if x > 0 and x + p.width_mm > width_mm + 1e-9:
            y += row_height + gap_mm
            x, row_height = 0.0, 0.0
        placements.append(Placement(p.name, x, y, 0, p.mirrored))
        x += p.width_mm + gap_mm
        row_height = max(row_height, p.height_mm)
        length = max(length, y + p.height_mm)
    return Layout(
        SHELF, float(width_mm), float(gap_mm), length, tuple(pieces), tuple(placements), time.perf_counter() - started
    )


# --- checking a layout --------------------------------------------------------------------


def layout_problems(layout: Layout) -> list[str]:
    """What is wrong with a layout, in words; an empty list means every rule is kept."""
    problems = []
    expected = {p.name: p.copies for p in layout.pieces}
    counted: dict[str, int] = {}
    for pl in layout.placements:
        counted[pl.piece] = counted.get(pl.piece, 0) + 1
    if counted != expected:
        problems.append("The layout does not hold every piece of the cut list exactly once per copy.")
    shapes = []
    for pl, outline in layout.outlines():
        if pl.rotation not in ROTATIONS:
            problems.append(
                f"{pl.piece} is turned {pl.rotation} degrees: the grainline would not run along the fabric."
            )
        poly = Polygon(outline)
        x0, y0, x1, y1 = poly.bounds
        if x0 < -TOLERANCE_MM or x1 > layout.width_mm + TOLERANCE_MM:
            problems.append(f"{pl.piece} goes beyond the fabric's width.")
        if y0 < -TOLERANCE_MM or y1 > layout.length_mm + TOLERANCE_MM:
            problems.append(f"{pl.piece} goes beyond the length of fabric given.")
        shapes.append((pl.piece, poly))
    for i, (name_a, a) in enumerate(shapes):
        for name_b, b in shapes[i + 1 :]:
            if a.distance(b) < layout.gap_mm - TOLERANCE_MM:
                problems.append(f"{name_a} and {name_b} are closer than the gap ({a.distance(b):.2f} mm).")
    return problems


# --- how short any layout can be ------------------------------------------------------------

_HEIGHT_STEP_MM = 0.5
_EDGE_MM = 1e-6


def _chords(poly: Polygon) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """How much of the piece a line along the fabric crosses, across its width.

    Between two neighbouring corners' x the crossed length changes linearly, so the stretch
    from ``x[i]`` to ``x[i + 1]`` is given by its two ends, taken just inside it.
    """
    _, y0, _, y1 = poly.bounds
    xs = np.unique(np.array([x for x, _ in poly.exterior.coords]))

    def crossed(x: float) -> float:
        return poly.intersection(LineString([(x, y0 - 1), (x, y1 + 1)])).length

    starts = np.array([crossed(a + _EDGE_MM) for a in xs[:-1]])
    ends = np.array([crossed(b - _EDGE_MM) for b in xs[1:]])
    return np.diff(xs), starts, ends


def _width_crossed_at_least(chords: tuple[np.ndarray, np.ndarray, np.ndarray], height: float) -> float:
    """The width of the piece over which a line along the fabric crosses at least ``height`` of it."""
    spans, starts, ends = chords
    low, high = np.minimum(starts, ends), np.maximum(starts, ends)
    with np.errstate(divide="ignore", invalid="ignore"):
        sloped = np.clip((high - height) / (high - low), 0.0, 1.0)
    share = np.where(high > low, sloped, low >= height)
    return float(np.sum(spans * share))


def length_lower_bound(pieces: Sequence[Piece], width_mm: float, gap_mm: float) -> float:
    """No layout of these pieces on this width, with this gap and 0/180 degree turns only, is shorter.

    The largest of three bounds: the tallest piece; the pieces' area over the width; and stacking.
    A line along the fabric crosses the pieces it meets one after another, a gap apart. Take a
    height ``h`` and, in each piece, the part of its width where such a line crosses at least ``h``
    of it (a turn by 180 degrees or a mirror image moves that part but keeps its width). If those
    widths add up to more than ``m`` fabric widths, some line crosses ``m + 1`` pieces at ``h`` or
    more each, so the fabric is at least ``(m + 1) h + m gap`` long. Every ``h`` is tried, 0.5 mm apart,
    and the tallest piece's height.
    """
    # As loose as the check of a layout (``layout_problems``) is: a hundredth of a millimetre.
    width_mm, gap_mm = width_mm + TOLERANCE_MM, gap_mm - TOLERANCE_MM
    copies = _copies(pieces)
    tallest = max(p.height_mm for p in copies)
    best = max(tallest, sum(p.area_mm2 for p in copies) / width_mm)
    chords = [(p.copies, _chords(Polygon(p.outline))) for p in pieces]
    for height in np.append(np.arange(_HEIGHT_STEP_MM, tallest, _HEIGHT_STEP_MM), tallest):
        total = sum(n * _width_crossed_at_least(c, float(height)) for n, c in chords)
        layers = math.ceil(total / width_mm) - 1 if total > 0 else 0
        if layers >= 1:
            best = max(best, (layers + 1) * float(height) + layers * gap_mm)
    return best


# --- the solver -----------------------------------------------------------------------------


@dataclass
class Progress:
    """What the solver has done so far, for a progress bar."""

    fraction: float
    best_length_mm: float | None = None
    phase: str = ""


ProgressCallback = Callable[[Progress], None]


def _surrogate(piece: Piece, grow: float) -> list[Pt]:
    """The piece grown by ``grow``: what the solver nests, transposed for it
    (the solver's strip runs along its x axis; the fabric's length runs along y)."""
    poly = _largest(Polygon(piece.outline).buffer(grow, join_style="mitre", mitre_limit=4.0))
    return [(y, x) for x, y in list(poly.exterior.coords)[:-1]]


def _snap_rotation(angle: float) -> int:
    turn = round(angle) % 360
    if min(abs(turn - 0), abs(turn - 360)) <= 1e-3:
        return 0
    if abs(turn - 180) <= 1e-3:
        return 180
    return int(turn)


def solver_layout(
    pieces: Sequence[Piece],
    width_mm: float,
    gap_mm: float = DEFAULT_GAP_MM,
    *,
    budget_s: int = DEFAULT_BUDGET_S,
    progress: ProgressCallback | None = None,
    seed: int = 0,
    workers: int | None = None,
    tick_s: float = 0.25,
) -> Layout:
    """The outlines nested by spyrrow within ``budget_s`` seconds, checked; the shelf layout if the
    solver's answer breaks a rule or the solver fails."""
    started = time.perf_counter()
    check_request(pieces, width_mm, gap_mm)
    shelf = shelf_layout(pieces, width_mm, gap_mm)
    if budget_s < 1 or budget_s > MAX_BUDGET_S:
        raise LayoutError(f"The time for the layout must be between 1 and {MAX_BUDGET_S} s.")
    try:
        import spyrrow
    except ImportError:  # pragma: no cover - a dependency of the project
        return _fallback(shelf, started, "The solver is not installed; rows are shown instead.")

    grow = gap_mm / 2 + SURROGATE_MARGIN_MM
    # Each stand-in reaches at least ``grow`` beyond its piece in every direction, so a strip this
    # wide keeps the pieces themselves within the fabric's width.
    reach = grow
    items = [spyrrow.Item(str(i), _surrogate(p, grow), p.copies, [0.0, 180.0]) for i, p in enumerate(pieces)]
    instance = spyrrow.StripPackingInstance("fabric", float(width_mm + 2 * reach), items)
    # The solver overruns its time (setting up, finishing its last step), so it is given a share of the
    # budget (whole seconds, at least one).
    seconds = max(1, int(budget_s * SOLVER_SHARE))
    config = spyrrow.StripPackingConfig(
        early_termination=True, total_computation_time=seconds, seed=int(seed), num_workers=workers
    )
    queue = spyrrow.ProgressQueue()
    answer: dict = {}

    def run():
        try:
            answer["solution"] = instance.solve(config, queue)
        except BaseException as exc:  # noqa: BLE001  (reported in words below)
            answer["error"] = exc

    worker = threading.Thread(target=run, name="fabric-layout", daemon=True)
    worker.start()
    best = None
    while worker.is_alive():
        worker.join(tick_s)
        for kind, solution in queue.drain():
            if any(kind == getattr(spyrrow.ReportType, name) for name in _FEASIBLE):
                # The stand-ins' strip, less their growth at both ends: near enough for a progress line.
                length = solution.width - 2 * grow
                best = length if best is None else min(best, length)
        if progress is not None:
            elapsed = time.perf_counter() - started
            progress(Progress(min(elapsed / seconds, 0.99), best, "searching"))
    if "error" in answer:
        return _fallback(shelf, started, f"The solver stopped ({type(answer['error']).__name__}); rows are shown.")
    layout = _from_solution(answer["solution"], pieces, width_mm, gap_mm, started)
    problems = layout_problems(layout)
    if problems:
        return _fallback(shelf, started, "The solver's layout broke a rule (" + problems[0] + "); rows are shown.")
    if progress is not None:
        progress(Progress(1.0, layout.length_mm, "done"))
    return layout


def _fallback(shelf: Layout, started: float, note: str) -> Layout:
    return Layout(
        SHELF,
        shelf.width_mm,
        shelf.gap_mm,
        shelf.length_mm,
        shelf.pieces,
        shelf.placements,
        time.perf_counter() - started,
        note,
    )


def _from_solution(solution, pieces: Sequence[Piece], width_mm: float, gap_mm: float, started: float) -> Layout:
    placements = []
    for item in solution.placed_items:
        piece = pieces[int(item.id)]
        rotation = _snap_rotation(item.rotation)
        tx, ty = item.translation  # solver: x along the strip, y across it
        if rotation == 180:
            x, y = ty - piece.width_mm, tx - piece.height_mm
        else:
            x, y = ty, tx
        placements.append(Placement(piece.name, x, y, rotation, piece.mirrored))
    # Shift the whole layout (a translation keeps every distance) to start at the selvedge and the cut end.
    by_name = {p.name: p for p in pieces}
    boxes = [Polygon(placed_outline(by_name[pl.piece], pl)).bounds for pl in placements]
    dx, dy = min(b[0] for b in boxes), min(b[1] for b in boxes)
    placements = [Placement(pl.piece, pl.x - dx, pl.y - dy, pl.rotation, pl.mirrored) for pl in placements]
    length = max(b[3] for b in boxes) - dy
    placements.sort(key=lambda pl: (pl.y, pl.x))
    return Layout(
        SOLVER, float(width_mm), float(gap_mm), length, tuple(pieces), tuple(placements), time.perf_counter() - started
    )


def best_of(*layouts: Layout) -> Layout:
    """The layout that takes the least fabric (the shelf layout first on a tie)."""
    return min(layouts, key=lambda lay: (round(lay.length_mm, 3), lay.method != SHELF))


# --- a plan's layers ---------------------------------------------------------------------------


@dataclass(frozen=True)
class LayerRequest:
    layer: str
    width_mm: float


@dataclass
class LayerResult:
    layer: str
    shelf: Layout
    solver: Layout | None = None

    @property
    def best(self) -> Layout:
        return best_of(self.shelf, self.solver) if self.solver is not None else self.shelf


def check_layers(pieces: Sequence[Piece], layers: Sequence[LayerRequest], gap_mm: float, unit: str = "cm") -> None:
    if not layers:
        raise LayoutError("Choose at least one fabric layer.")
    seen = set()
    for req in layers:
        if req.layer not in LAYERS:
            raise LayoutError(f"Unknown fabric layer {req.layer!r}.")
        if req.layer in seen:
            raise LayoutError(f"{layer_label(req.layer)} is listed twice.")
        seen.add(req.layer)
        try:
            check_request(pieces, req.width_mm, gap_mm, unit)
        except LayoutError as exc:
            raise LayoutError(f"{layer_label(req.layer)}: {exc}") from None


def shelf_layers(pieces: Sequence[Piece], layers: Sequence[LayerRequest], gap_mm: float) -> list[LayerResult]:
    check_layers(pieces, layers, gap_mm)
    return [LayerResult(req.layer, shelf_layout(pieces, req.width_mm, gap_mm)) for req in layers]


def solve_layers(
    pieces: Sequence[Piece],
    layers: Sequence[LayerRequest],
    gap_mm: float,
    *,
    budget_s: int = DEFAULT_BUDGET_S,
    progress: ProgressCallback | None = None,
    seed: int = 0,
    workers: int | None = None,
) -> list[LayerResult]:
    """Shelf and solver layouts for every layer.  Every layer is cut from the same pieces, so layers
    of the same width share one solve; the budget is shared between the distinct widths (at least
    1 s each, the solver counts whole seconds)."""
    results = shelf_layers(pieces, layers, gap_mm)
    widths = sorted({req.width_mm for req in layers})
    share = max(1, int(budget_s) // len(widths))
    solved: dict[float, Layout] = {}
    for i, width in enumerate(widths):

        def step(p: Progress, i=i):
            if progress is not None:
                progress(Progress((i + p.fraction) / len(widths), p.best_length_mm, p.phase))

        solved[width] = solver_layout(pieces, width, gap_mm, budget_s=share, progress=step, seed=seed, workers=workers)
    for result, req in zip(results, layers):
        result.solver = solved[req.width_mm]
    return results


class SolverOptions(TypedDict, total=False):
    """What :func:`solve_layers` takes beside the pieces, passed on unchanged by :func:`solve_layers_apart`."""

    budget_s: int
    seed: int
    workers: int | None


def _child_main(conn, pieces, layers, gap_mm, options: SolverOptions) -> None:
    """In a process of its own: solve, sending progress and then the results (or the reason) up the pipe."""
    try:
        results = solve_layers(pieces, layers, gap_mm, progress=lambda p: conn.send(("progress", p)), **options)
        conn.send(("done", results))
    except BaseException as exc:  # noqa: BLE001  (reported to the parent in words)
        conn.send(("error", f"{type(exc).__name__}: {exc}"))
    finally:
        conn.close()


def solve_layers_apart(
    pieces: Sequence[Piece],
    layers: Sequence[LayerRequest],
    gap_mm: float,
    *,
    progress: ProgressCallback | None = None,
    grace_s: float = 60.0,
    **options: Unpack[SolverOptions],
) -> list[LayerResult]:
    """:func:`solve_layers` in a fresh process (spawned, not forked), progress relayed to ``progress`` here.

    The solver starts threads of its own that outlive a solve; in a separate
    process they never share a process that later forks (the task worker
    forks to draw a print), and a crash in the solver cannot take the
    caller down.  The child is stopped if it runs ``grace_s`` past the budget.
    """
    import multiprocessing

    check_layers(pieces, layers, gap_mm)
    context = multiprocessing.get_context("spawn")
    receive, send = context.Pipe(duplex=False)
    child = context.Process(
        target=_child_main,
        name="fabric-layout",
        daemon=True,
        args=(send, tuple(pieces), tuple(layers), float(gap_mm), options),
    )
    child.start()
    send.close()
    deadline = time.monotonic() + options.get("budget_s", DEFAULT_BUDGET_S) + grace_s
    try:
        while True:
            if receive.poll(0.25):
                try:
                    kind, value = receive.recv()
                except EOFError:
                    child.join(5)
                    raise RuntimeError(f"The layout process stopped (exit code {child.exitcode}).") from None
                if kind == "progress":
                    if progress is not None:
                        progress(value)
                elif kind == "done":
                    return value
                else:
                    raise RuntimeError(value)
            elif not child.is_alive() and not receive.poll():
                raise RuntimeError(f"The layout process stopped (exit code {child.exitcode}).")
            if time.monotonic() > deadline:
                raise RuntimeError(f"The layout process ran {grace_s:g} s past its time and was stopped.")
    finally:
        receive.close()
        if child.is_alive():
            child.terminate()
        child.join(5)


__all__ = [
    "LAYERS",
    "CORSET_LAYERS",
    "BODICE_LAYERS",
    "DEFAULT_WIDTH_MM",
    "DEFAULT_GAP_MM",
    "DEFAULT_BUDGET_S",
    "LayoutError",
    "Piece",
    "Placement",
    "Layout",
    "LayerRequest",
    "LayerResult",
    "Progress",
    "cut_pieces",
    "shelf_layout",
    "solver_layout",
    "layout_problems",
    "placed_outline",
    "best_of",
    "default_layers",
    "layer_label",
    "check_request",
    "check_layers",
    "shelf_layers",
    "solve_layers",
    "solve_layers_apart",
]
