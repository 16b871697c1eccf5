"""Shared helpers for the geometry tests: measuring outlines with shapely, and small constructed blocks."""

import numpy as np
from shapely.geometry import LineString, Polygon
from shapely.geometry import Point as ShapelyPoint

from patterns.core.block import BACK, FRONT, Alteration, Block, Level, Panel, PanelShift, Point, Seam
from tests.patterns.block_parts import level_panel, small_block

ALL_LEVELS = ("bust", "underbust", "waist", "abdomen", "hip")


def width_at(outline, y: float) -> float:
    """Width of the stitch polygon along the horizontal line at ``y``, measured by intersection."""
    poly = Polygon(outline.stitch)
    minx, _, maxx, _ = poly.bounds
    return poly.intersection(LineString([(minx - 10, y), (maxx + 10, y)])).length


def levels_on_both_edges(block: Block, outline) -> list[str]:
    """Levels strictly inside the panel's height on both its stitch lines (where a width exists)."""
    top = max(outline.left_line[0][1], outline.right_line[0][1])
    bottom = min(outline.left_line[-1][1], outline.right_line[-1][1])
    return [lv for lv, y in outline.level_y.items() if top < y < bottom]


def allowance_distances(outline, clearance: float) -> np.ndarray:
    """Distance from points along the cutting line to the stitch line, away from the four corners.

    Vertices and points a quarter, half and three quarters along each edge of
    the cutting polygon; points nearer than ``clearance`` to a corner (where
    the allowance is mitred) and, on a fold, points on the fold are left out.
    """
    stitch = Polygon(outline.stitch).exterior
    corners = np.array([outline.left_line[0], outline.left_line[-1], outline.right_line[0], outline.right_line[-1]])
    ring = np.array(outline.cutting + outline.cutting[:1])
    a, b = ring[:-1], ring[1:]
    points = np.concatenate([a, 0.75 * a + 0.25 * b, 0.5 * (a + b), 0.25 * a + 0.75 * b])
    near_corner = np.min(np.linalg.norm(points[:, None, :] - corners[None, :, :], axis=2), axis=1) < clearance
    keep = ~near_corner
    if outline.on_fold:
        fold_x = min(x for x, _ in outline.left_line)
        keep &= points[:, 0] > fold_x + 1e-6
    return np.array([stitch.distance(ShapelyPoint(x, y)) for x, y in points[keep]])


def uniform_alteration(block: Block, left: float, right: float) -> Alteration:
    return Alteration(shifts={p.name: {lv: PanelShift(left, right) for lv in block.level_names} for p in block.panels})


def mirrored_pair_block(offsets: dict[str, float]) -> Block:
    """Two panels whose shared seam lines mirror each other about x = 200.

    ``offsets`` bends the seam: at each level the front panel's right line
    sits at 150 + offset and the back panel's left line at 250 - offset.
    """
    ys = {"bust": 60.0, "underbust": 150.0, "waist": 250.0, "abdomen": 340.0, "hip": 440.0}
    levels = tuple(Level(lv, ys[lv]) for lv in ALL_LEVELS)
    front = level_panel(
        "Front",
        FRONT,
        {lv: 80.0 for lv in ALL_LEVELS},
        {lv: 150.0 + offsets[lv] for lv in ALL_LEVELS},
        20.0,
        470.0,
        levels,
    )
    back = level_panel(
        "Back",
        BACK,
        {lv: 250.0 - offsets[lv] for lv in ALL_LEVELS},
        {lv: 320.0 for lv in ALL_LEVELS},
        20.0,
        470.0,
        levels,
    )
    seam = Seam("Side seam", "side", "Front", "Back", frozenset(ALL_LEVELS))
    return small_block("Mirrored pair", levels, (front, back), (seam,))


def s_bend_block() -> Block:
    """One panel at least 22 mm wide at every level but narrower between two of them.

    Its left line is flat at the waist and the abdomen, so the monotone cubic
    gives it zero slope at the waist and a quick rise just below the
    underbust, while the right line runs straight: between underbust and
    waist the gap closes to about 16 mm.
    """
    ys = {"underbust": 150.0, "waist": 250.0, "abdomen": 350.0}
    levels = tuple(Level(lv, y) for lv, y in ys.items())
    left = {"underbust": 0.0, "waist": 40.0, "abdomen": 40.0}
    right = {"underbust": 22.0, "waist": 62.0, "abdomen": 102.0}
    panel = Panel(
        name="Slant",
        side=FRONT,
        left=left,
        right=right,
        top_left=Point(-12.0, 130.0),
        top_right=Point(14.0, 130.0),
        bottom_left=Point(40.0, 370.0),
        bottom_right=Point(110.0, 370.0),
    )
    return small_block("S bend", levels, (panel,), ())
