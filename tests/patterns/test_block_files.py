"""Blocks in and out of the app as drawing files: the import page, the downloads, the commands."""

import io
import math

import ezdxf
import numpy as np
import pytest
from django.core.files.uploadedfile import SimpleUploadedFile
from django.core.management import call_command
from django.urls import reverse

from fittings import previews, selectors
from fittings.models import Plan
from patterns.core.importing import ImportOptions, import_block
from patterns.models import BasePattern
from patterns.selectors import block_for

pytestmark = pytest.mark.django_db

TOL = 0.1

# Two pieces drawn by hand: a rectangle 100 x 300 mm and a piece whose right side is a circular arc of
# radius 400 mm from (260, 0) to (260, 300), its centre on y = 150 left of the chord.
R = 400.0
CX = 260.0 - math.sqrt(R * R - 150.0**2)
DRAWN = f"""<svg xmlns="http://www.w3.org/2000/svg" width="400mm" height="400mm" viewBox="0 0 400 400">
  <rect x="0" y="0" width="100" height="300"/><text x="20" y="30">Front</text>
  <path d="M 150 0 L 260 0 A {R:g} {R:g} 0 0 1 260 300 L 150 300 Z"/><text x="170" y="30">Back</text>
  <g id="waist"><line x1="-5" y1="100" x2="330" y2="100"/></g>
  <g id="hip"><line x1="-5" y1="250" x2="330" y2="250"/></g>
</svg>""".encode()


def arc_width(y):
    """Width of the back piece: circle equation for the right side, less its straight left side at x 150."""
    return CX + math.sqrt(R * R - (y - 150.0) ** 2) - 150.0


def _post(client, content=DRAWN, name="drawn.svg", **fields):
    data = {
        "name": "Drawn test block",
        "size_label": "S",
        "garment": "underbust corset",
        "front_panels": "1",
        "centre_back": "laced",
        "seam_allowance": "1,5",
        "file": SimpleUploadedFile(name, content),
        **fields,
    }
    return client.post(reverse("patterns:block_import"), data)


def test_it_imports_a_drawing_as_a_new_base_pattern(fitter_client):
    response = _post(fitter_client)
    pattern = BasePattern.objects.get(name="Drawn test block")
    assert response.status_code == 302
    assert response["Location"] == reverse("patterns:pattern_files", args=[pattern.pk])
    block = block_for(pattern)
    assert block.level_names == ("waist", "hip")
    assert [p.name for p in block.panels] == ["Front", "Back"]
    assert [p.side for p in block.panels] == ["front", "back"]
    assert float(pattern.seam_allowance_mm) == 15.0  # typed as 1,5 cm
    assert block.panels[0].width("waist") == pytest.approx(100.0, abs=TOL)
    for lv in block.levels:
        assert block.panels[1].width(lv.name) == pytest.approx(arc_width(lv.y), abs=TOL)
    page = fitter_client.get(response["Location"])
    assert page.status_code == 200
    text = page.content.decode()
    assert "Drawn test block" in text and "Waist" in text and "2 panels, half pattern" in text
    assert '<th scope="col">Back</th>' in text
    assert f"<td>{round(arc_width(block.level_y('waist')), 1)}</td>" in text  # the arc piece's width, in mm
    assert reverse("patterns:pattern_pieces_dxf", args=[pattern.pk]) in text


def test_it_refuses_a_bad_drawing_with_its_reason_and_keeps_nothing(fitter_client):
    response = _post(fitter_client, content=DRAWN.replace(b' Z"', b'"'))
    assert response.status_code == 400
    assert "An outline is open" in response.content.decode()
    assert not BasePattern.objects.filter(name="Drawn test block").exists()


def test_it_offers_the_import_to_fitters_but_not_to_the_workroom(fitter_client, workroom_user, client):
    assert reverse("patterns:block_import") in fitter_client.get(reverse("fittings:client_list")).content.decode()
    client.force_login(workroom_user)
    assert (
        reverse("patterns:block_import")
        not in client.get(reverse("fittings:client_list"), follow=True).content.decode()
    )
    assert client.get(reverse("patterns:block_import")).status_code == 403


def test_it_downloads_a_base_pattern_that_reads_back_to_the_same_widths(fitter_client, bodice_pattern):
    block = block_for(bodice_pattern)
    for fmt in ("dxf", "svg"):
        response = fitter_client.get(reverse(f"patterns:pattern_pieces_{fmt}", args=[bodice_pattern.pk]))
        assert response.status_code == 200
        assert f'.{fmt}"' in response["Content-Disposition"] and "attachment" in response["Content-Disposition"]
        back = import_block(response.content, f"x.{fmt}", ImportOptions(front_panels=2))
        assert back.level_names == block.level_names
        for a, b in zip(block.panels, back.panels, strict=True):
            for lv in block.level_names:
                assert b.width(lv) == pytest.approx(a.width(lv), abs=TOL)


def test_it_downloads_a_revisions_altered_pieces_as_the_plan_shifted_them(
    demo_atelier, client, fitter_user, workroom_user
):
    plan = Plan.objects.get(client__reference="WF-0102")
    # The workroom cuts from an issued revision's pieces, and sees no draft's.
    client.force_login(workroom_user)
    assert client.get(reverse("fittings:revision_pieces_dxf", args=[plan.pk, 1])).status_code == 200
    assert client.get(reverse("fittings:revision_pieces_dxf", args=[plan.pk, 2])).status_code == 403
    client.force_login(fitter_user)
    revision = plan.revisions.get(number=2)
    _, block, _ = selectors.revision_inputs(revision)
    altered = previews.altered_for(block, selectors.revision_result(revision)).altered
    page = client.get(reverse("fittings:revision_detail", args=[plan.pk, 2])).content.decode()
    dxf_url = reverse("fittings:revision_pieces_dxf", args=[plan.pk, 2])
    assert dxf_url in page and reverse("fittings:revision_pieces_svg", args=[plan.pk, 2]) in page
    response = client.get(dxf_url)
    assert response.status_code == 200 and response["Content-Type"] == "application/dxf"
    doc = ezdxf.read(io.StringIO(response.content.decode()))
    assert doc.header["$INSUNITS"] == 4  # millimetres
    layers = {layer.dxf.name for layer in doc.layers}
    assert {"CUT", "STITCH", "NOTCH", "GRAIN", "LABEL", "LEVEL_WAIST", "LEVEL_HIP"} <= layers
    assert len(list(doc.modelspace().query("INSERT"))) == len(block.panels)  # one block per piece
    # Every piece reaches back as drawn: its width at each level it crosses is the altered width.
    for outline in altered:
        left, right = np.asarray(outline.left_line), np.asarray(outline.right_line)
        insert = next(
            b
            for b in doc.blocks
            if b.name.startswith("PANEL_") and any(e.dxftype() == "TEXT" and e.dxf.text == outline.name for e in b)
        )
        for level, y in outline.level_y.items():
            line = next(e for e in insert if e.dxf.layer == f"LEVEL_{level.upper()}")
            width = float(np.interp(y, right[:, 1], right[:, 0]) - np.interp(y, left[:, 1], left[:, 0]))
            assert line.dxf.end.x - line.dxf.start.x == pytest.approx(width + 10.0, abs=0.01)  # 5 mm each side
            assert -line.dxf.start.y == pytest.approx(y, abs=0.01)
    svg = client.get(reverse("fittings:revision_pieces_svg", args=[plan.pk, 2]))
    assert svg.status_code == 200 and svg["Content-Type"] == "image/svg+xml"
    assert b'width="' in svg.content and b'mm"' in svg.content


def test_it_checks_that_the_commands_export_and_import_pieces(demo_atelier, tmp_path):
    plan = Plan.objects.get(client__reference="WF-0101")
    target = tmp_path / "rev1.dxf"
    call_command("export_pieces", "--revision", f"{plan.pk}:1", "--format", "dxf", "-o", str(target))
    assert target.read_bytes().startswith(b"  0\nSECTION")
    pattern = BasePattern.objects.get(garment="bodice")
    drawn = tmp_path / "bodice.dxf"
    call_command("export_pieces", "--pattern", str(pattern.pk), "--format", "dxf", "-o", str(drawn))
    call_command(
        "import_block",
        str(drawn),
        "--name",
        "Bodice again",
        "--size",
        "12",
        "--garment",
        "bodice",
        "--front-panels",
        "2",
        "--centre-back",
        "seamed",
    )
    again = block_for(BasePattern.objects.get(name="Bodice again"))
    original = block_for(pattern)
    for a, b in zip(original.panels, again.panels, strict=True):
        for lv in original.level_names:
            assert b.width(lv) == pytest.approx(a.width(lv), abs=TOL)


def test_it_checks_that_a_plan_can_be_made_on_the_demo_block_imported_from_its_drawing(
    demo_atelier, fitter_client, fitter_user
):
    from fittings.models import Client
    from fittings.services import plans as plan_services

    pattern = BasePattern.objects.get(garment="underbust corset")
    client_ = Client.objects.get(reference="WF-0101")
    plan = plan_services.start_plan(
        client=client_,
        session=client_.sessions.get(),
        pattern=pattern,
        garment="Underbust from the drawn block",
        user=fitter_user,
    )
    revision = plan.revisions.get()
    result = selectors.revision_result(revision)
    assert {lv.level for lv in result.levels} == {"underbust", "waist", "abdomen", "hip"}
    assert fitter_client.get(reverse("fittings:plan_preview", args=[plan.pk])).status_code == 200
    response = fitter_client.get(reverse("fittings:revision_pieces_svg", args=[plan.pk, 1]))
    assert response.status_code == 200
