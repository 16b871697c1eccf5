"""The fitting-screen preview: renders cleanly, is repeatable, shows levels, shifts and markers."""

import io
import threading
import warnings
from xml.etree import ElementTree as ET

import pytest
from matplotlib.backends.backend_svg import FigureCanvasSVG

from patterns.core.block import Alteration, PanelShift
from patterns.core.measures import LEVEL_LABELS
from patterns.core.outline import alter_pattern
from patterns.core.preview import (
    MINUS,
    OKABE_ITO,
    build_figure,
    markers_from_findings,
    preview_svg,
    shift_formatter,
)
from patterns.demo import bodice_block, corset_block

SVG = "{http://www.w3.org/2000/svg}"


def _alteration(block):
    return Alteration(
        shifts={
            "Front": {"waist": PanelShift(-4.0, -3.0), "bust": PanelShift(2.0, 0.0)},
            "Side back": {"waist": PanelShift(3.0, 0.0)},
        },
        bands={("waist", "hip"): 10.0},
    )


def _texts(svg: str) -> list[str]:
    root = ET.fromstring(svg)
    return ["".join(el.itertext()).strip() for el in root.iter(f"{SVG}text")]


def test_it_checks_that_demo_preview_renders_without_any_warning():
    block = corset_block("10")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        svg = preview_svg(block, _alteration(block), markers=[("Front", "waist", "seam not true")])
    assert ET.fromstring(svg).tag == f"{SVG}svg"


def test_it_checks_that_same_input_gives_byte_identical_svg():
    block = corset_block("10")
    first = preview_svg(block, _alteration(block), markers=[("Back", "hip", "check")])
    second = preview_svg(block, _alteration(block), markers=[("Back", "hip", "check")])
    assert first.encode() == second.encode()
    assert "<dc:date>" not in first


def test_it_renders_in_threads_give_the_same_svg():
    block = corset_block("10")
    expected = preview_svg(block, _alteration(block))
    results = []

    def render():
        results.append(preview_svg(block, _alteration(block)))

    threads = [threading.Thread(target=render) for _ in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert results == [expected] * 4


def test_it_checks_that_svg_names_every_level_and_writes_shifts_in_the_plan_unit():
    block = corset_block("10")
    texts = _texts(preview_svg(block, _alteration(block), unit="cm"))
    for level in block.level_names:
        assert LEVEL_LABELS[level] in texts
    # Front waist: left edge taken in 4 mm, right edge 3 mm; shown in cm with a true minus sign.
    assert f"{MINUS}0.4" in texts and f"{MINUS}0.3" in texts and "+0.2" in texts and "+0.3" in texts
    assert "moved +1.0" in texts  # the hip, 10 mm lower
    assert not [t for t in texts if t in ("0.0", "+0.0", f"{MINUS}0.0")]


def test_it_checks_that_the_printed_picture_leaves_the_amounts_to_the_tables():
    block = corset_block("10")
    with_amounts = _texts(preview_svg(block, _alteration(block), unit="cm"))
    without = _texts(
        preview_svg(block, _alteration(block), unit="cm", amounts=False, markers=[("Front", "waist", "seam not true")])
    )
    assert f"{MINUS}0.4" in with_amounts
    assert not [t for t in without if t[:1] in ("+", MINUS) or t.startswith("moved")]
    assert set(LEVEL_LABELS[lv] for lv in block.level_names) <= set(without)
    assert {p.name for p in block.panels} <= set(without) and "seam not true" in without


def test_it_checks_that_shift_labels_in_inches_and_with_a_formatter():
    block = corset_block("10")
    # 1/8 in and 1/4 in: 1 in = 25.4 mm exactly (international yard and pound agreement, 1959).
    alteration = Alteration(shifts={"Front": {"waist": PanelShift(3.175, -6.35)}})
    assert "+1/8" in _texts(preview_svg(block, alteration, unit="in"))
    assert f"{MINUS}1/4" in _texts(preview_svg(block, alteration, unit="in"))
    custom = _texts(preview_svg(block, alteration, formatter=lambda mm: f"{mm / 25.4:+.3f} in"))
    assert "+0.125 in" in custom and f"{MINUS}0.250 in" in custom
    assert not [t for t in custom if t.startswith("moved")]


def test_it_checks_that_markers_appear_where_asked():
    block = bodice_block()
    alteration = Alteration(shifts={"Side front": {"waist": PanelShift(-45.0, -45.0)}})
    pattern = alter_pattern(block, alteration)
    markers = markers_from_findings(pattern.findings)
    assert ("Side front", "waist", "too narrow") in markers
    texts = _texts(preview_svg(block, alteration, markers=markers, pattern=pattern))
    assert "too narrow" in texts


def test_it_checks_that_drawing_keeps_true_proportion():
    block = bodice_block()
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        fig, _ = build_figure(block, Alteration(shifts={}))
    FigureCanvasSVG(fig).print_svg(io.BytesIO())
    ax = fig.axes[0]
    # The figure is sized to the drawing, so equal aspect needs no shrinking of the axes.
    assert tuple(ax.get_position().bounds) == pytest.approx((0, 0, 1, 1), abs=1e-3)
    (x0, y0), (x1, y1) = ax.transData.transform([(0, 0), (100, 100)])
    assert abs(x1 - x0) == pytest.approx(abs(y1 - y0), rel=1e-6)
    assert y1 < y0  # y grows downwards on the pattern, upwards on screen


def test_it_uses_colour_blind_safe_colours():
    block = corset_block("10")
    svg = preview_svg(block, _alteration(block)).upper()
    assert OKABE_ITO["blue"].upper() in svg and OKABE_ITO["orange"].upper() in svg
    assert "#FF0000" not in svg and "#00FF00" not in svg


def test_it_checks_that_unknown_unit_is_refused():
    with pytest.raises(ValueError):
        shift_formatter("furlong")
