"""Bound top and bottom edges: no seam allowance there, the cutting line is the stitch line.

Common practice (no single source): seam allowance 12-15 mm in corsetry, and
bound top and bottom edges need none, the binding finishes the raw edge.
"""

import dataclasses
import json

import numpy as np
import pytest
from shapely.geometry import LineString, Polygon
from shapely.geometry import Point as ShapelyPoint

from patterns.core.fitting import block_from_dict, block_to_dict, read_fitting
from patterns.core.outline import alter_block, base_outlines
from patterns.demo import bodice_block, corset_block
from tests.patterns.geometry_helpers import uniform_alteration


def _bound(block, top, bottom):
    return dataclasses.replace(
        block, panels=tuple(dataclasses.replace(p, top_bound=top, bottom_bound=bottom) for p in block.panels)
    )


def _signed_outside(points, a, b, inside):
    """Signed distance of points from the line a-b, positive on the side away from ``inside``."""
    a, b = np.asarray(a), np.asarray(b)
    t = (b - a) / np.linalg.norm(b - a)
    n = np.array([-t[1], t[0]])
    if np.dot(n, np.asarray(inside) - 0.5 * (a + b)) > 0:
        n = -n
    return (np.asarray(points) - a) @ n


def _cut_top_at(outline, x):
    """Highest point (smallest y) of the cutting polygon on the upright line at x."""
    cut = Polygon(outline.cutting)
    line = LineString([(x, -1000), (x, 5000)]).intersection(cut)
    return line.bounds[1]


def _stitch_top_at(outline, x):
    line = LineString([(x, -1000), (x, 5000)]).intersection(Polygon(outline.stitch))
    return line.bounds[1]


def _stitch_bottom_at(outline, x):
    line = LineString([(x, -1000), (x, 5000)]).intersection(Polygon(outline.stitch))
    return line.bounds[3]


def _cut_bottom_at(outline, x):
    return LineString([(x, -1000), (x, 5000)]).intersection(Polygon(outline.cutting)).bounds[3]


def test_it_binds_the_demo_corset_at_top_and_bottom():
    block = corset_block("10")
    assert all(p.top_bound and p.bottom_bound for p in block.panels)
    assert not any(p.top_bound or p.bottom_bound for p in bodice_block().panels)


@pytest.mark.parametrize("size", ["6", "10", "14"])
def test_it_cuts_a_bound_top_and_bottom_along_the_stitch_line(size):
    block = corset_block(size)
    for outline in alter_block(block, uniform_alteration(block, -4.0, 3.0)):
        cut = np.asarray(outline.cutting)
        left, right = np.asarray(outline.left_line), np.asarray(outline.right_line)
        centre = Polygon(outline.stitch).centroid.coords[0]
        # Nothing of the cutting line lies beyond the top or the bottom stitch line.
        assert _signed_outside(cut, right[0], left[0], centre).max() <= 1e-6
        assert _signed_outside(cut, left[-1], right[-1], centre).max() <= 1e-6
        # The stitch line along the top and the bottom is on the cutting line, all the way.
        boundary = Polygon(outline.cutting).exterior
        for a, b in ((left[0], right[0]), (left[-1], right[-1])):
            for f in np.linspace(0, 1, 11):
                point = ShapelyPoint(*(a + f * (b - a)))
                assert boundary.distance(point) <= 1e-6
        # Measured upright through the middle of the panel: the cut starts and ends where the stitching does.
        x = 0.5 * (left[0, 0] + right[0, 0])
        assert _cut_top_at(outline, x) == pytest.approx(_stitch_top_at(outline, x), abs=1e-6)
        xb = 0.5 * (left[-1, 0] + right[-1, 0])
        assert _cut_bottom_at(outline, xb) == pytest.approx(_stitch_bottom_at(outline, xb), abs=1e-6)


def test_it_keeps_the_side_allowance_beside_a_bound_edge():
    block = corset_block("10")
    sa = block.seam_allowance_mm
    for outline in base_outlines(block):
        left = np.asarray(outline.left_line)
        y = 0.5 * (left[0, 1] + left[-1, 1])
        across = LineString([(-1000, y), (5000, y)])
        cut_w = across.intersection(Polygon(outline.cutting)).length
        stitch_w = across.intersection(Polygon(outline.stitch)).length
        # Upright-ish stitch lines: the cut is about two allowances wider than the stitching (within 1 mm).
        assert cut_w - stitch_w == pytest.approx(2 * sa, abs=1.0)
        # And the cut at the top corner reaches past the stitch corner by the side allowance.
        assert min(x for x, _ in outline.cutting) < left[0, 0] - 0.9 * sa


def test_it_gives_a_free_edge_its_allowance_and_a_bound_one_none():
    block = _bound(corset_block("10"), top=True, bottom=False)
    sa = block.seam_allowance_mm
    for outline in base_outlines(block):
        left, right = np.asarray(outline.left_line), np.asarray(outline.right_line)
        x = 0.5 * (left[0, 0] + right[0, 0])
        assert _cut_top_at(outline, x) == pytest.approx(_stitch_top_at(outline, x), abs=1e-6)
        xb = 0.5 * (left[-1, 0] + right[-1, 0])
        below = _cut_bottom_at(outline, xb) - _stitch_bottom_at(outline, xb)
        # A free bottom edge: the allowance, square to a gently sloping edge, is at least sa upright.
        assert sa - 1e-6 <= below <= sa * 1.1
    unbound = base_outlines(_bound(corset_block("10"), top=False, bottom=False))
    for outline in unbound:
        left, right = np.asarray(outline.left_line), np.asarray(outline.right_line)
        x = 0.5 * (left[0, 0] + right[0, 0])
        assert _stitch_top_at(outline, x) - _cut_top_at(outline, x) >= sa - 1e-6


def test_it_reads_old_files_as_unbound_and_round_trips_the_choice():
    block = corset_block("10")
    data = block_to_dict(block)
    assert data["panels"][0]["top_bound"] is True
    assert block_from_dict(data) == block
    for panel in data["panels"]:
        del panel["top_bound"], panel["bottom_bound"], panel["grainline_x"]
    old = block_from_dict(data)
    assert not any(p.top_bound or p.bottom_bound for p in old.panels)
    assert all(p.grainline_x is None for p in old.panels)


def test_it_checks_the_bound_choice_against_the_schema():
    from patterns.core.fitting import FittingFileError

    block = corset_block("10")
    data = json.loads(
        json.dumps(
            {
                "format": "atelier-fitting",
                "version": 1,
                "measurements": {"waist_girth": 700.0},
                "pattern": block_to_dict(block),
            }
        )
    )
    assert read_fitting(data)[1] == block
    data["pattern"]["panels"][0]["top_bound"] = "yes"
    with pytest.raises(FittingFileError) as exc:
        read_fitting(data)
    assert "top_bound" in exc.value.field


def test_it_puts_a_chosen_grainline_where_it_was_drawn():
    block = bodice_block()
    panel = block.panels[1]
    mid = block.level_names[len(block.level_names) // 2]
    at = panel.left[mid] + 0.25 * panel.width(mid)
    moved = dataclasses.replace(
        block, panels=tuple(dataclasses.replace(p, grainline_x=at) if p is panel else p for p in block.panels)
    )
    outline = base_outlines(moved)[1]
    (x0, _), (x1, _) = outline.grainline
    assert x0 == x1 == pytest.approx(at)
    # Widened evenly by 10 mm each side, the grainline keeps its place between the stitch lines.
    wider = alter_block(moved, uniform_alteration(moved, 10.0, 10.0))[1]
    assert wider.grainline[0][0] == pytest.approx(panel.left[mid] - 10 + 0.25 * (panel.width(mid) + 20))


from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

from patterns.core.block import Alteration, PanelShift  # noqa: E402


@settings(max_examples=30, deadline=None)
@given(
    st.lists(st.tuples(st.floats(-12, 12), st.floats(-12, 12)), min_size=5, max_size=5),
    st.floats(min_value=0, max_value=25),
)
def test_it_never_cuts_beyond_a_bound_edge_whatever_the_shifts(shifts, allowance):
    block = corset_block("10")
    alteration = Alteration(
        shifts={p.name: {lv: PanelShift(*s) for lv, s in zip(block.level_names, shifts)} for p in block.panels}
    )
    for outline in alter_block(block, alteration, seam_allowance_mm=allowance):
        cut = np.asarray(outline.cutting)
        left, right = np.asarray(outline.left_line), np.asarray(outline.right_line)
        centre = Polygon(outline.stitch).centroid.coords[0]
        assert _signed_outside(cut, right[0], left[0], centre).max() <= 1e-6
        assert _signed_outside(cut, left[-1], right[-1], centre).max() <= 1e-6
        assert Polygon(outline.cutting).buffer(1e-6).covers(Polygon(outline.stitch))


def test_it_cuts_a_drawn_curved_top_edge_along_the_drawn_line_when_bound():
    from patterns.demo import drawn_underbust_block

    drawn = drawn_underbust_block()
    block = _bound(drawn, top=True, bottom=False)
    sa = block.seam_allowance_mm
    for outline, panel in zip(base_outlines(block), block.panels):
        top = np.asarray(panel.curves.top)
        assert len(top) > 2  # a drawn curve, not a straight edge
        boundary = Polygon(outline.cutting).exterior
        # Every point of the drawn top edge lies on the cutting line ...
        assert max(boundary.distance(ShapelyPoint(*p)) for p in top) <= 0.01
        # ... and the cut reaches no higher than the drawn edge anywhere along it.
        for x, y in top[1:-1]:
            assert _cut_top_at(outline, x) >= y - 0.01
        # The bottom, not bound, keeps its allowance.
        left, right = np.asarray(outline.left_line), np.asarray(outline.right_line)
        xb = 0.5 * (left[-1, 0] + right[-1, 0])
        assert _cut_bottom_at(outline, xb) - _stitch_bottom_at(outline, xb) >= sa - 0.01
