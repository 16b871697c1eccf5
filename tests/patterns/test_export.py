"""SVG at true size and DXF: sizes in millimetres, outlines read back as written, named layers."""

import io
import re
from xml.etree import ElementTree as ET

import ezdxf
import numpy as np
import pytest
from shapely.geometry import LineString, Polygon
from shapely.geometry import Point as ShapelyPoint

from patterns.core.block import Alteration, PanelShift
from patterns.core.export import (
    INSUNITS_MILLIMETRES,
    NOTCH_DEPTH_MM,
    SHEET_MARGIN_MM,
    TEST_SQUARE_MM,
    dxf_bytes,
    notch_segments,
    read_dxf,
    sheet_layout,
    svg_text,
)
from patterns.core.outline import alter_block, base_outlines
from patterns.demo import bodice_block, corset_block

SVG = "{http://www.w3.org/2000/svg}"
LAYERS = {"CUT", "STITCH", "NOTCH", "GRAIN", "LABEL"}


def _outlines(block=None):
    block = block or corset_block("10")
    second, last_but_one = block.panels[1].name, block.panels[-2].name
    alteration = Alteration(
        shifts={second: {"waist": PanelShift(-6.0, -4.0)}, last_but_one: {"bust": PanelShift(5.0, 5.0)}},
        bands={("waist", block.levels[-1].name): 8.0},
    )
    return alter_block(block, alteration)


def _mm(value: str) -> float:
    assert value.endswith("mm")
    return float(value[:-2])


def _path_points(d: str) -> list[tuple[float, float]]:
    numbers = [float(v) for v in re.findall(r"-?\d+(?:\.\d+)?", d)]
    return list(zip(numbers[0::2], numbers[1::2]))


def _translate(transform: str) -> tuple[float, float]:
    dx, dy = (float(v) for v in re.fullmatch(r"translate\((\S+) (\S+)\)", transform).groups())
    return dx, dy


def _drawn_extent(root) -> tuple[float, float, float, float]:
    """Bounding box of every cutting line and the test square, in sheet millimetres."""
    xs, ys = [], []
    for g in root.iter(f"{SVG}g"):
        dx, dy = _translate(g.get("transform"))
        for path in g.iter(f"{SVG}path"):
            if path.get("class") == "cut":
                for x, y in _path_points(path.get("d")):
                    xs.append(x + dx)
                    ys.append(y + dy)
    for rect in root.iter(f"{SVG}rect"):
        x, y, w, h = (float(rect.get(k)) for k in ("x", "y", "width", "height"))
        xs += [x, x + w]
        ys += [y, y + h]
    return min(xs), min(ys), max(xs), max(ys)


# --- SVG -----------------------------------------------------------------------------------


@pytest.mark.parametrize("test_square", ["cm", "in", None])
def test_it_checks_that_svg_size_in_mm_is_the_drawings_true_size(test_square):
    outlines = _outlines()
    root = ET.fromstring(svg_text(outlines, test_square=test_square))
    width, height = _mm(root.get("width")), _mm(root.get("height"))
    assert root.get("viewBox").split() == ["0", "0", root.get("width")[:-2], root.get("height")[:-2]]
    minx, miny, maxx, maxy = _drawn_extent(root)
    assert minx == pytest.approx(SHEET_MARGIN_MM, abs=0.002)
    assert miny == pytest.approx(SHEET_MARGIN_MM, abs=0.002)
    assert width == pytest.approx(maxx + SHEET_MARGIN_MM, abs=0.002)
    if test_square is None:
        assert height == pytest.approx(maxy + SHEET_MARGIN_MM, abs=0.002)
    else:
        assert height >= maxy + SHEET_MARGIN_MM - 0.002


def test_it_checks_that_test_square_is_ten_centimetres_or_four_inches():
    # 4 in = 101.6 mm: 1 in = 25.4 mm exactly (international yard and pound agreement, 1959).
    # A labelled test square checked with a ruler before cutting: common practice for home printing.
    assert TEST_SQUARE_MM == {"cm": 100.0, "in": 101.6}
    root = ET.fromstring(svg_text(_outlines(), test_square="in"))
    (rect,) = root.iter(f"{SVG}rect")
    assert float(rect.get("width")) == float(rect.get("height")) == 101.6
    assert any("4 in test square" in (t.text or "") for t in root.iter(f"{SVG}text"))


def test_it_checks_that_svg_paths_are_the_outlines_at_one_to_one():
    outlines = _outlines(bodice_block())
    root = ET.fromstring(svg_text(outlines))
    groups = list(root.iter(f"{SVG}g"))
    assert [g.get("data-panel") for g in groups] == [o.name for o in outlines]
    for g, outline in zip(groups, outlines):
        paths = {p.get("class"): p.get("d") for p in g.iter(f"{SVG}path")}
        assert np.array(_path_points(paths["cut"])) == pytest.approx(np.array(outline.cutting), abs=0.001)
        assert np.array(_path_points(paths["stitch"])) == pytest.approx(np.array(outline.stitch), abs=0.001)
        texts = [t.text for t in g.iter(f"{SVG}text")]
        assert outline.name in texts and f"size {outline.size}" in texts


def test_it_checks_that_cut_outlines_do_not_overlap_on_the_sheet():
    outlines = _outlines()
    layout = sheet_layout(outlines)
    placed = [Polygon([(x + dx, y + dy) for x, y in o.cutting]) for o, (dx, dy) in zip(outlines, layout.offsets)]
    for a, b in zip(placed, placed[1:]):
        assert b.bounds[0] - a.bounds[2] == pytest.approx(10.0, abs=0.01)
        assert a.distance(b) >= 10.0 - 0.01


def test_it_checks_that_svg_is_deterministic():
    assert svg_text(_outlines()) == svg_text(_outlines())


def test_it_checks_that_notches_cut_into_the_allowance_but_not_past_the_stitch_line():
    # A notch about 1/4 in deep, within the seam allowance (common practice).
    for outline in _outlines():
        stitch = Polygon(outline.stitch)
        sa = outline.seam_allowance_mm
        segments = notch_segments(outline)
        assert len(segments) == len(outline.notches) > 0
        for a, b in segments:
            assert stitch.exterior.distance(ShapelyPoint(a)) == pytest.approx(sa, abs=0.01)
            depth = min(NOTCH_DEPTH_MM, sa / 2)
            assert stitch.exterior.distance(ShapelyPoint(b)) == pytest.approx(sa - depth, abs=0.01)
            assert not LineString([a, b]).intersects(stitch)


# --- DXF ------------------------------------------------------------------------------------


def _doc(data: bytes):
    return ezdxf.read(io.StringIO(data.decode("utf-8")))


@pytest.mark.parametrize("block", [corset_block("14"), bodice_block()], ids=["corset", "bodice"])
def test_it_checks_that_dxf_reads_back_the_same_outlines(block):
    outlines = _outlines(block)
    panels = read_dxf(dxf_bytes(outlines))
    assert len(panels) == len(outlines)
    for panel, outline in zip(panels, outlines):
        assert panel.labels[: len(outline.labels)] == outline.labels
        assert np.array(panel.cutting) == pytest.approx(np.array(outline.cutting), abs=0.01)
        assert np.array(panel.stitch) == pytest.approx(np.array(outline.stitch), abs=0.01)
        assert np.array(panel.grainline) == pytest.approx(np.array(outline.grainline), abs=0.01)
        assert np.array(panel.notches) == pytest.approx(np.array(notch_segments(outline)), abs=0.01)


def test_it_checks_that_dxf_units_are_millimetres_and_entities_sit_on_named_layers():
    data = dxf_bytes(_outlines())
    doc = _doc(data)
    assert doc.header["$INSUNITS"] == INSUNITS_MILLIMETRES == 4
    assert LAYERS <= {layer.dxf.name for layer in doc.layers}
    inserts = list(doc.modelspace().query("INSERT"))
    assert len(inserts) == 6
    for ref in inserts:
        layers = [e.dxf.layer for e in doc.blocks.get(ref.dxf.name)]
        assert set(layers) == LAYERS
        assert layers.count("CUT") == 1 and layers.count("STITCH") == 1 and layers.count("GRAIN") == 1


def test_it_checks_that_dxf_pieces_sit_apart_on_the_sheet():
    outlines = base_outlines(corset_block("10"))
    panels = read_dxf(dxf_bytes(outlines))
    placed = [
        Polygon([(x + ix, y + iy) for x, y in p.cutting])
        for p, (ix, iy) in ((p, (p.insert[0], p.insert[1])) for p in panels)
    ]
    for a, b in zip(placed, placed[1:]):
        assert b.bounds[0] - a.bounds[2] == pytest.approx(10.0, abs=0.01)
        assert a.distance(b) >= 10.0 - 0.01
