"""Blocks imported from DXF and SVG files written here by hand (raw XML, ezdxf primitives),
never by the app's exporter, except where a round trip through the exporter is the point.

Widths are checked against values worked out by hand from the drawn geometry:
the circle equation for arcs, the Bezier polynomial for curves.  1 in = 25.4 mm
exactly (1959 international yard and pound agreement; NIST SP 811, B.8).
"""

import io
import json
import math

import ezdxf
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from patterns.core.block import Alteration, PanelShift, block_errors
from patterns.core.export import dxf_bytes, svg_text
from patterns.core.fitting import block_to_dict, read_fitting
from patterns.core.importing import (
    BlockImportError,
    ImportOptions,
    LevelsError,
    OpenOutlineError,
    UnknownUnitError,
    import_block,
    level_of,
)
from patterns.core.outline import alter_block, alter_pattern, base_outlines
from patterns.demo import bodice_block, corset_block
from tests.patterns.geometry_helpers import width_at

TOL = 0.1  # mm, the accuracy the import must keep
MM_PER_IN = 25.4

# A piece 400 mm long: straight left side at x = 0, right side a circular arc of radius R
# from (100, 0) to (100, 400), bulging outwards; its centre lies on y = 200.
R = 500.0
CX = 100.0 - math.sqrt(R * R - 200.0**2)


def arc_x(y: float) -> float:
    """The circle equation (x - cx)^2 + (y - 200)^2 = R^2, solved for the right-hand x."""
    return CX + math.sqrt(R * R - (y - 200.0) ** 2)


def bezier_x(t: float) -> float:
    """x of the cubic Bezier (100,0) (140,133.3) (140,266.7) (100,400); its y is 400 t exactly."""
    return 100 * (1 - t) ** 3 + 3 * 140 * (1 - t) ** 2 * t + 3 * 140 * (1 - t) * t**2 + 100 * t**3


SVG_ARC = b"""<?xml version="1.0"?>
<svg xmlns="http://www.w3.org/2000/svg" width="400mm" height="500mm" viewBox="0 0 400 500">
  <g id="pieces">
    <path d="M 0 0 L 100 0 A 500 500 0 0 1 100 400 L 0 400 Z"/>
    <text x="30" y="60">Front</text>
    <path d="M 200 0 L 300 0 C 340 133.33333333 340 266.66666667 300 400 L 200 400 Z"/>
    <text x="230" y="60">Back</text>
    <text x="230" y="80">cut 2</text>
  </g>
  <g id="bust"><line x1="-10" y1="80" x2="360" y2="80"/></g>
  <line class="level level-waist" x1="-10" y1="200" x2="360" y2="200"/>
  <line x1="-10" y1="350" x2="360" y2="350"/>
  <text x="-5" y="345">Hip</text>
  <g id="grainline"><line x1="50" y1="40" x2="50" y2="360"/></g>
</svg>
"""


def test_it_reads_an_svg_arc_and_bezier_at_the_widths_worked_out_by_hand():
    block = import_block(SVG_ARC, "block.svg")
    assert block.level_names == ("bust", "waist", "hip")
    assert [lv.y for lv in block.levels] == pytest.approx([80.0, 200.0, 350.0], abs=1e-6)
    front, back = block.panels
    assert (front.name, back.name) == ("Front", "Back")
    assert (front.side, back.side) == ("front", "back")
    assert back.cut_count == 2
    for level in block.levels:
        # Straight left side at x = 0; the arc gives the width by the circle equation.
        assert front.width(level.name) == pytest.approx(arc_x(level.y), abs=TOL)
        # The back is the Bezier piece moved 200 mm right; y = 400 t on it, so t = y / 400.
        assert back.width(level.name) == pytest.approx(bezier_x(level.y / 400.0), abs=TOL)
    assert front.width("waist") == pytest.approx(R + CX, abs=TOL)  # 141.74 mm, widest at the centre
    assert back.width("waist") == pytest.approx(130.0, abs=TOL)  # t = 1/2: (100 + 3 * 140 + 3 * 140 + 100) / 8
    assert np.array(front.curves.grainline) == pytest.approx(np.array([(50.0, 40.0), (50.0, 360.0)]))
    assert block.seams[0].kind == "side"
    assert block_errors(block) == []


def test_it_measures_the_imported_outline_itself_at_heights_between_levels():
    block = import_block(SVG_ARC, "block.svg")
    front = base_outlines(block)[0]
    for y in (10.0, 123.0, 200.0, 287.5, 399.0):
        assert width_at(front, y) == pytest.approx(arc_x(y), abs=TOL)


def test_it_moves_the_drawn_curve_by_the_shift_instead_of_redrawing_it():
    block = import_block(SVG_ARC, "block.svg")
    # The same 8 mm out at every level: the whole arc moves 8 mm, between the levels too.
    same = Alteration(shifts={"Front": {lv: PanelShift(0.0, 8.0) for lv in block.level_names}})
    front = alter_block(block, same)[0]
    for y in (5.0, 80.0, 140.0, 260.0, 395.0):
        assert width_at(front, y) == pytest.approx(arc_x(y) + 8.0, abs=TOL)
    # Different shifts: at each level the width changes by exactly that level's shift.
    shifts = {"bust": 4.0, "waist": -10.0, "hip": 6.0}
    varied = Alteration(shifts={"Front": {lv: PanelShift(0.0, s) for lv, s in shifts.items()}})
    front = alter_block(block, varied)[0]
    for lv in block.levels:
        assert width_at(front, lv.y) == pytest.approx(arc_x(lv.y) + shifts[lv.name], abs=TOL)
    # Between levels the change stays between the two levels' shifts (no overshoot), on the drawn arc.
    for y in np.linspace(81, 199, 7):
        change = width_at(front, y) - arc_x(y)
        assert -10.0 - TOL <= change <= 4.0 + TOL


def test_it_keeps_blocks_without_drawn_lines_as_they_were():
    block = bodice_block()
    assert all(p.curves is None for p in block.panels)
    assert "curves" not in json.dumps(block_to_dict(block))


def test_it_carries_the_drawn_lines_through_the_fitting_file():
    block = import_block(SVG_ARC, "block.svg")
    data = {
        "format": "atelier-fitting",
        "version": 1,
        "measurements": {"waist_girth": 700.0},
        "pattern": json.loads(json.dumps(block_to_dict(block))),
    }
    _, read, _ = read_fitting(data)
    assert np.array(read.panels[0].curves.right) == pytest.approx(np.array(block.panels[0].curves.right))
    assert read == block


def test_it_reads_svg_in_inches_with_a_scaled_viewbox_and_group_transform():
    # 10 in wide drawn in a viewBox of 1000 units: one unit is 0.01 in.  The group moves 100 units.
    svg = b"""<svg xmlns="http://www.w3.org/2000/svg" width="10in" height="20in" viewBox="0 0 1000 2000">
      <g transform="translate(100 0)">
        <rect x="0" y="0" width="400" height="1600"/>
        <line id="waist" x1="-50" y1="800" x2="450" y2="800"/>
        <line id="LEVEL_HIP" x1="-50" y1="1400" x2="450" y2="1400"/>
      </g></svg>"""
    block = import_block(svg, "inches.svg")
    (panel,) = block.panels
    assert panel.width("waist") == pytest.approx(4.0 * MM_PER_IN, abs=TOL)  # 400 units = 4 in
    assert block.level_y("hip") - block.level_y("waist") == pytest.approx(6.0 * MM_PER_IN, abs=TOL)
    assert panel.name == "Panel 1"


def _dxf_doc(units: int = 1):
    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = units
    return doc


def _dxf(doc) -> bytes:
    stream = io.StringIO()
    doc.write(stream)
    return stream.getvalue().encode()


def test_it_reads_dxf_lines_arcs_and_splines_in_inches_joined_end_to_end():
    """Piece A: separate LINEs and an ARC (radius 10 in, centre 6 in left of the chord) meeting end to end.
    Piece B: a closed LWPOLYLINE whose right side is a clamped cubic SPLINE (a Bezier)."""
    doc = _dxf_doc(units=1)  # inches
    msp = doc.modelspace()
    # DXF y grows upwards: the top of the piece is y = 0, the bottom y = -8 in.
    r, half = 10.0, 4.0
    cx = 4.0 - math.sqrt(r * r - half * half)
    msp.add_line((0, 0), (4, 0))
    start = math.degrees(math.atan2(-half, 4.0 - cx))
    msp.add_arc((cx, -4.0), r, start, -start)  # counter-clockwise from (4, -8) up to (4, 0)
    msp.add_line((4, -8), (0, -8))
    msp.add_line((0, -8), (0, 0))
    msp.add_text("Centre front", dxfattribs={"insert": (1, -1), "height": 0.2})
    msp.add_text("cut 1 on fold", dxfattribs={"insert": (1, -1.5), "height": 0.2})
    # Piece B from x = 6 in: left side straight, right side the spline from (10, 0) to (10, -8).
    msp.add_line((6, 0), (10, 0))
    msp.add_open_spline([(10, 0), (11, -8 / 3), (11, -16 / 3), (10, -8)], degree=3)
    msp.add_line((10, -8), (6, -8))
    msp.add_line((6, -8), (6, 0))
    doc.layers.add("Bust")
    msp.add_line((-1, -1.5), (12, -1.5), dxfattribs={"layer": "Bust"})
    msp.add_line((-1, -4), (12, -4))
    msp.add_text("waist", dxfattribs={"insert": (-1, -3.9), "height": 0.2})
    doc.layers.add("LEVEL_HIP")
    msp.add_line((-1, -7), (12, -7), dxfattribs={"layer": "LEVEL_HIP"})

    block = import_block(_dxf(doc), "block.dxf", ImportOptions(name="Test", front_panels=1))
    assert block.level_names == ("bust", "waist", "hip")
    assert block.level_y("waist") - block.level_y("bust") == pytest.approx(2.5 * MM_PER_IN, abs=TOL)
    front, back = block.panels
    assert front.name == "Centre front" and front.on_fold and front.cut_count == 1
    assert block.centre_front == "fold"
    for lv in block.levels:
        y_in = lv.y / MM_PER_IN  # inches down from the top
        x_arc = cx + math.sqrt(r * r - (y_in - 4.0) ** 2)
        assert front.width(lv.name) == pytest.approx(x_arc * MM_PER_IN, abs=TOL)
        t = y_in / 8.0  # the spline's control points are evenly spaced in y, so y = 8 t
        x_spline = 10 * (1 - t) ** 3 + 33 * (1 - t) ** 2 * t + 33 * (1 - t) * t**2 + 10 * t**3
        assert back.width(lv.name) == pytest.approx((x_spline - 6) * MM_PER_IN, abs=TOL)


def test_it_reads_a_dxf_written_as_raw_text_in_millimetres():
    entities = []

    def line(x0, y0, x1, y1, layer="0"):
        entities.append(f"0\nLINE\n8\n{layer}\n10\n{x0}\n20\n{y0}\n30\n0\n11\n{x1}\n21\n{y1}\n31\n0\n")

    for a, b in (((0, 0), (120, 0)), ((120, 0), (110, -300)), ((110, -300), (0, -300)), ((0, -300), (0, 0))):
        line(*a, *b)
    line(-5, -50, 130, -50, "underbust")
    line(-5, -250, 130, -250, "abdomen")
    text = (
        "0\nSECTION\n2\nHEADER\n9\n$INSUNITS\n70\n4\n0\nENDSEC\n"
        "0\nSECTION\n2\nENTITIES\n" + "".join(entities) + "0\nENDSEC\n0\nEOF\n"
    )
    block = import_block(text.encode(), "raw.dxf")
    (panel,) = block.panels
    # Right side from (120, 0) to (110, 300): x = 120 - y / 30.
    assert panel.width("underbust") == pytest.approx(120 - 50 / 30, abs=TOL)
    assert panel.width("abdomen") == pytest.approx(120 - 250 / 30, abs=TOL)


def test_it_round_trips_a_dxf_export_to_the_same_block():
    for block in (corset_block("10"), bodice_block(), import_block(SVG_ARC, "block.svg")):
        front_count = sum(p.side == "front" for p in block.panels)
        data = dxf_bytes(base_outlines(block), level_lines=True)
        back = import_block(data, "export.dxf", ImportOptions(front_panels=front_count))
        assert back.level_names == block.level_names
        assert [lv.y for lv in back.levels] == pytest.approx([lv.y for lv in block.levels], abs=TOL)
        for before, after in zip(block.panels, back.panels, strict=True):
            # The sheet places each piece by a translation of its own.
            dx = after.top_left.x - before.top_left.x
            assert after.top_left.y == pytest.approx(before.top_left.y, abs=TOL)
            assert (after.name, after.side, after.cut_count, after.on_fold) == (
                before.name,
                before.side,
                before.cut_count,
                before.on_fold,
            )
            for lv in block.level_names:
                assert after.left[lv] - dx == pytest.approx(before.left[lv], abs=TOL)
                assert after.right[lv] - dx == pytest.approx(before.right[lv], abs=TOL)
            for corner in ("top_right", "bottom_left", "bottom_right"):
                a, b = getattr(after, corner), getattr(before, corner)
                assert (a.x - dx, a.y) == pytest.approx((b.x, b.y), abs=TOL)


def test_it_round_trips_an_svg_export_too():
    block = import_block(SVG_ARC, "block.svg")
    back = import_block(svg_text(base_outlines(block), level_lines=True).encode(), "export.svg")
    for before, after in zip(block.panels, back.panels, strict=True):
        for lv in block.level_names:
            assert after.width(lv) == pytest.approx(before.width(lv), abs=TOL)


def test_it_checks_that_an_altered_export_reads_back_with_the_altered_widths():
    block = import_block(SVG_ARC, "block.svg")
    alteration = Alteration(shifts={"Back": {"waist": PanelShift(-5.0, -7.0)}})
    altered = alter_pattern(block, alteration).altered
    back = import_block(dxf_bytes(altered, level_lines=True), "altered.dxf")
    assert back.panels[1].width("waist") == pytest.approx(block.panels[1].width("waist") - 12.0, abs=TOL)
    assert back.panels[1].width("bust") == pytest.approx(block.panels[1].width("bust"), abs=TOL)


# --- refusals -----------------------------------------------------------------------------


def _svg(body: str, size='width="300mm" height="500mm" viewBox="0 0 300 500"') -> bytes:
    return f'<svg xmlns="http://www.w3.org/2000/svg" {size}>{body}</svg>'.encode()


LEVELS = '<line id="bust" x1="0" y1="50" x2="300" y2="50"/><line id="waist" x1="0" y1="200" x2="300" y2="200"/>'


def test_it_refuses_an_open_outline_and_says_where_the_gap_is():
    with pytest.raises(OpenOutlineError, match=r"open.*x 12\.0 mm, y 300\.0 mm, 300\.2 mm apart"):
        import_block(_svg('<path d="M 0 0 L 100 0 L 100 300 L 12 300"/>' + LEVELS), "open.svg")


@pytest.mark.parametrize(
    "size",
    [
        'width="300" height="500" viewBox="0 0 300 500"',
        'width="300px" height="500px"',
        'width="30em" height="50em"',
        'viewBox="0 0 300 500"',
        'width="100%" height="100%" viewBox="0 0 300 500"',
    ],
)
def test_it_refuses_an_svg_without_a_unit_of_length(size):
    with pytest.raises(UnknownUnitError, match="mm, cm or in"):
        import_block(_svg('<rect x="0" y="0" width="100" height="300"/>' + LEVELS, size), "x.svg")


@pytest.mark.parametrize("code, named", [(0, "unitless"), (2, "feet"), (6, "metres"), (99, "unit code 99")])
def test_it_refuses_a_dxf_in_an_unknown_or_unusable_unit(code, named):
    doc = _dxf_doc(units=code)
    doc.modelspace().add_lwpolyline([(0, 0), (100, 0), (100, -300), (0, -300)], close=True)
    with pytest.raises(UnknownUnitError, match=named):
        import_block(_dxf(doc), "x.dxf")


def test_it_refuses_pieces_without_levels():
    with pytest.raises(LevelsError, match="no level lines"):
        import_block(_svg('<rect x="0" y="0" width="100" height="300"/>'), "x.svg")
    # A second piece that the level lines do not cross.
    body = (
        '<rect x="0" y="0" width="100" height="300"/><rect x="200" y="0" width="80" height="300"/>'
        '<line id="bust" x1="0" y1="50" x2="150" y2="50"/><line id="waist" x1="0" y1="200" x2="150" y2="200"/>'
    )
    with pytest.raises(LevelsError, match="No bust line crosses"):
        import_block(_svg(body), "x.svg")
    # A piece too short to reach the waist.
    body = '<rect x="0" y="0" width="100" height="300"/><rect x="150" y="0" width="80" height="150"/>' + LEVELS
    with pytest.raises(LevelsError, match="does not reach the waist"):
        import_block(_svg(body), "x.svg")


def test_it_refuses_level_lines_at_different_heights_and_files_that_are_not_drawings():
    body = (
        '<rect x="0" y="0" width="100" height="300"/><rect x="150" y="0" width="80" height="300"/>'
        '<line id="bust" x1="0" y1="50" x2="300" y2="50"/><line id="waist" x1="0" y1="200" x2="120" y2="200"/>'
        '<line class="waist" x1="140" y1="210" x2="300" y2="210"/>'
    )
    with pytest.raises(LevelsError, match="different heights"):
        import_block(_svg(body), "x.svg")
    for data, name in (
        (b"", "x.svg"),
        (b"not a drawing at all", "x.dxf"),
        (b"<svg", "x.svg"),
        (b"<html></html>", "x.svg"),
        (b"\x00\x01binary", "x.bin"),
    ):
        with pytest.raises(BlockImportError):
            import_block(data, name)
    bomb = b'<?xml version="1.0"?><!DOCTYPE svg [<!ENTITY a "aaaa">]><svg xmlns="http://www.w3.org/2000/svg">&a;</svg>'
    with pytest.raises(BlockImportError, match="entities"):
        import_block(bomb, "x.svg")


def test_it_names_levels_by_code_label_or_layer_style():
    assert level_of("waist") == "waist"
    assert level_of("LEVEL_WAIST") == "waist"
    assert level_of("Abdomen (high hip)") == "abdomen"
    assert level_of("hip line") == "hip"
    assert level_of("Underbust") == "underbust"
    assert level_of("Side back") is None
    assert level_of("line") is None


# --- property: straight-sided pieces of any shape read back at the widths of their corners ---------


@settings(max_examples=40, deadline=None)
@given(
    pieces=st.lists(
        st.tuples(st.floats(40, 160), st.floats(40, 160), st.floats(-20, 20), st.floats(-20, 20)),
        min_size=1,
        max_size=4,
    ),
    levels=st.tuples(st.floats(20, 120), st.floats(160, 260), st.floats(300, 380)),
)
def test_it_reads_straight_sided_pieces_at_the_widths_worked_out_from_their_corners(pieces, levels):
    """Each piece: top width a, bottom width b, left side leaning by d1, right side by d2 over 400 mm."""
    paths, origin = [], 0.0
    for a, b, d1, d2 in pieces:
        tl, tr = (origin + 20, 0.0), (origin + 20 + a, 0.0)
        bl, br = (origin + 20 + d1, 400.0), (origin + 20 + d1 + b + d2, 400.0)
        paths.append(f'<path d="M {tl[0]} 0 L {tr[0]} 0 L {br[0]} 400 L {bl[0]} 400 Z"/>')
        origin += 20 + max(a, b + d1 + d2) + 40 + 25
    names = ("bust", "waist", "hip")
    lines = "".join(f'<line id="{n}" x1="-50" y1="{y}" x2="{origin + 50}" y2="{y}"/>' for n, y in zip(names, levels))
    svg = (
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{origin + 100}mm" height="500mm" '
        f'viewBox="0 0 {origin + 100} 500">{"".join(paths)}{lines}</svg>'
    ).encode()
    block = import_block(svg, "x.svg")
    assert len(block.panels) == len(pieces)
    for panel, (a, b, d1, d2) in zip(block.panels, pieces):
        for name, y in zip(names, levels):
            t = y / 400.0  # the sides are straight: x moves in proportion to the height
            expected = a + t * ((b + d1 + d2) - a) - t * d1
            assert panel.width(name) == pytest.approx(expected, abs=TOL)


def test_it_reads_a_drawing_laid_out_in_named_layers_with_text_parts():
    """Layers as groups with a label (as Inkscape writes them), names split over <tspan> parts, a cutting
    line drawn round the stitch line, and a frame round the whole sheet: the stitch line is the piece."""
    svg = b"""<svg xmlns="http://www.w3.org/2000/svg" xmlns:inkscape="http://www.inkscape.org/namespaces/inkscape"
         width="30cm" height="50cm" viewBox="0 0 300 500">
      <rect x="1" y="1" width="298" height="498"/>
      <g inkscape:groupmode="layer" inkscape:label="Pieces" id="layer1">
        <rect x="50" y="20" width="120" height="400"/>
        <rect x="35" y="5" width="150" height="430"/>
        <text x="60" y="60"><tspan x="60" y="60">Side</tspan> <tspan>back</tspan></text>
        <text x="60" y="70"><tspan>cut 2</tspan></text>
      </g>
      <g inkscape:groupmode="layer" inkscape:label="Underbust" id="layer2"><path d="M 10 120 H 290"/></g>
      <g inkscape:groupmode="layer" inkscape:label="Hip" id="layer3"><path d="M 10 380 H 290"/></g>
    </svg>"""
    block = import_block(svg, "layers.svg")
    (panel,) = block.panels
    assert panel.name == "Side back" and panel.cut_count == 2
    assert block.level_names == ("underbust", "hip")
    assert panel.width("underbust") == pytest.approx(120.0, abs=TOL)
    assert block.level_y("underbust") == pytest.approx(100.0, abs=TOL)  # the stitch line's top is y = 0


def test_it_says_where_a_dxf_outline_is_open_in_the_files_own_coordinates():
    doc = _dxf_doc(units=4)
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (100, 0), (100, -300), (5, -300)])  # open: the last side is missing
    msp.add_line((-5, -50), (120, -50), dxfattribs={"layer": "BUST"})
    msp.add_line((-5, -250), (120, -250), dxfattribs={"layer": "WAIST"})
    with pytest.raises(
        OpenOutlineError,
        match=r"LWPOLYLINE on layer 0 ends at x 0\.0 mm, y 0\.0 mm and at "
        r"x 5\.0 mm, y -300\.0 mm, 300\.0 mm apart",
    ):
        import_block(_dxf(doc), "open.dxf")
