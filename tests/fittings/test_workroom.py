"""The workroom's side of a print: boning and lacing on the work order, one-sheet large formats, the projector.

Outside references used here:
- A0 = 841 x 1189 mm: ISO 216.
- 1 pt = 1/72 in: ISO 32000-1 (PDF 1.7), 8.3.2.3; 1 in = 25.4 mm exactly (1959 agreement).
- Plotter rolls 914 mm (36 in) and 610 mm (24 in) wide: common practice.
- A 10 cm test square checked with a ruler before cutting: common practice for printed patterns.
- Bones 12 mm in all shorter than their channels; eyelets about 2.5 cm apart: common practice.
"""

import io
import re
from dataclasses import replace

import pdfplumber
import pypdf
import pytest
from django.core.exceptions import ValidationError
from django.urls import reverse

from atelier.models import AtelierSettings, parse_stock
from fittings import workroom
from fittings.models import PrintJob
from fittings.printing.data import altered_pattern, document_data
from fittings.printing.work_order import render_work_order
from fittings.services import plans as plan_services
from fittings.tasks import run_print_job
from patterns.core.boning import BoningRules, boning_list
from patterns.core.lacing import LacingRules
from patterns.core.tiling import LARGE_FORMATS, TilingError, large_sheet, shelf_rows
from patterns.core.units import format_with_unit
from tests.fittings.print_data import MM_PER_PT

A0_MM = (841.0, 1189.0)  # ISO 216


@pytest.fixture(scope="module")
def sheets(strong):
    return {fmt: workroom.render_large_sheet(strong, fmt) for fmt in LARGE_FORMATS}


def page_mm(pdf: bytes) -> tuple[float, float]:
    reader = pypdf.PdfReader(io.BytesIO(pdf))
    assert len(reader.pages) == 1
    box = reader.pages[0].mediabox
    return float(box.width) * MM_PER_PT, float(box.height) * MM_PER_PT


def text_of(pdf: bytes) -> str:
    with pdfplumber.open(io.BytesIO(pdf)) as doc:
        return re.sub(r"\s+", " ", "\n".join(page.extract_text() or "" for page in doc.pages))


# --- large formats -------------------------------------------------------------------------------


def test_it_prints_one_a0_sheet(sheets):
    w, h = page_mm(sheets["a0"])
    # A0 (ISO 216), portrait or landscape, to 0.1 mm.
    assert sorted((w, h)) == pytest.approx(A0_MM, abs=0.1)


@pytest.mark.parametrize(("fmt", "width"), [("roll-914", 914.0), ("roll-610", 610.0)])
def test_it_prints_a_roll_as_wide_as_the_roll_and_as_long_as_needed(sheets, strong, fmt, width):
    w, h = page_mm(sheets[fmt])
    assert w == pytest.approx(width, abs=0.1)
    _, layout = workroom.large_layout(altered_pattern(strong), fmt)
    assert h == pytest.approx(layout.page_height_mm, abs=0.1)
    # Long enough for the lowest piece and the margin, and no more than a millimetre over.
    sheet, _ = workroom.large_layout(altered_pattern(strong), fmt)
    lowest = max(p.bounds[3] for p in sheet.pieces)
    assert lowest + 2 * layout.margin_mm <= h + 0.1 <= lowest + 2 * layout.margin_mm + 1.1
    # The narrower roll needs more rows, so more length.
    if fmt == "roll-610":
        assert h > page_mm(sheets["roll-914"])[1]


@pytest.mark.parametrize("fmt", list(LARGE_FORMATS))
def test_it_draws_the_test_square_and_the_pieces_at_true_size(sheets, strong, fmt):
    with pdfplumber.open(io.BytesIO(sheets[fmt])) as doc:
        page = doc.pages[0]
        squares = [
            (r["width"] * MM_PER_PT, r["height"] * MM_PER_PT)
            for r in page.rects
            if abs(r["width"] - r["height"]) * MM_PER_PT < 0.2 and 90 < r["width"] * MM_PER_PT < 110
        ]
        curves = [c for c in page.curves if len(c["pts"]) > 8 and abs(c["linewidth"] - 0.4 / MM_PER_PT) < 0.01]
        text = re.sub(r"\s+", " ", page.extract_text())
    # The 10 cm square measures 100 mm each way, the 4 in square 101.6 mm, to 0.1 mm.
    assert sorted(round(w, 1) for w, _ in squares) == [100.0, 101.6]
    assert all(abs(w - h) < 0.1 for w, h in squares)
    # Every piece's cutting line is as wide and as tall as the computed outline, to 0.1 mm.
    drawn = sorted(
        (
            (max(x for x, _ in c["pts"]) - min(x for x, _ in c["pts"])) * MM_PER_PT,
            (max(y for _, y in c["pts"]) - min(y for _, y in c["pts"])) * MM_PER_PT,
        )
        for c in curves
    )
    expected = sorted(
        (
            max(x for x, _ in o.cutting) - min(x for x, _ in o.cutting),
            max(y for _, y in o.cutting) - min(y for _, y in o.cutting),
        )
        for o in altered_pattern(strong).altered
    )
    assert len(drawn) == len(expected)
    for ew, eh in expected:
        nearest = min(drawn, key=lambda d: max(abs(d[0] - ew), abs(d[1] - eh)))
        assert nearest == pytest.approx((ew, eh), abs=0.1)
        drawn.remove(nearest)
    assert "Print at 100 % (actual size)" in text and "10 cm test square" in text
    # Piece labels read upwards along the grainline, so the text extracts back to front.
    assert "Centre front"[::-1] in text and "WF-0102 rev. 3"[::-1] in text


def test_it_keeps_pieces_apart_and_inside_the_sheet(strong):
    for fmt in LARGE_FORMATS:
        sheet, layout = workroom.large_layout(altered_pattern(strong), fmt)
        boxes = [p.bounds for p in sheet.pieces]
        for x0, y0, x1, y1 in boxes:
            assert x0 >= -1e-6 and x1 <= layout.printable_width_mm + 1e-6
            assert y0 >= workroom.LARGE_HEADER_MM and y1 <= layout.printable_height_mm + 1e-6
        for i, a in enumerate(boxes):
            for b in boxes[i + 1 :]:
                apart = max(b[0] - a[2], a[0] - b[2], b[1] - a[3], a[1] - b[3])
                assert apart >= workroom.LARGE_GAP_MM - 1e-6


def test_it_lays_rows_in_order_and_refuses_what_cannot_fit():
    offsets, w, h = shelf_rows([(300, 100), (300, 150), (300, 50)], 620, 10)
    assert offsets == [(0, 0), (310, 0), (0, 160)]
    assert (w, h) == (610, 210)
    with pytest.raises(TilingError):
        shelf_rows([(700, 10)], 600, 10)
    # A0 takes landscape when portrait is too short; refuses when neither holds the pieces.
    tall = [(400, 500)] * 4
    sheet = large_sheet("a0", tall, header_mm=100)
    assert sheet.orientation == "portrait"
    wide = [(1100, 300)]
    assert large_sheet("a0", wide, header_mm=100).orientation == "landscape"
    with pytest.raises(TilingError, match="plotter roll"):
        large_sheet("a0", [(800, 1100)] * 3, header_mm=100)
    roll = large_sheet("roll-610", [(500, 1100)] * 3, header_mm=100, gap_mm=10, margin_mm=10)
    # Header, gap, three rows with two gaps between them, two margins.
    assert roll.page_height_mm == 100 + 10 + 3 * 1100 + 2 * 10 + 2 * 10


# --- boning and lacing on the work order ------------------------------------------------------------


def test_it_puts_boning_and_lacing_on_the_work_order_in_the_plans_unit(strong):
    pdf = render_work_order(strong, "letter")
    text = text_of(pdf)
    pattern = altered_pattern(strong)
    bones = boning_list(strong.block, pattern.altered, replace(strong.boning_rules, cut_step_mm=25.4 / 16))
    assert "Boning and busk (in)" in text and "Lacing (in)" in text
    for channel in bones.channels:
        # Inches to 1/16, the bone rounded down to a whole 1/16 in.
        assert (
            f"{channel.name} {format_with_unit(channel.channel_mm, 'in')} "
            f"{format_with_unit(channel.cut_mm, 'in')}" in text
        )
        assert channel.cut_mm <= channel.channel_mm - 12 + 1e-9
    assert (
        f"Busk: {format_with_unit(bones.busk.length_mm, 'in')} ({format_with_unit(bones.busk.length_mm, 'cm')})" in text
    )
    assert "eyelets on each back edge" in text and "Lace: about" in text


def test_it_shows_the_lacing_count_and_lace_in_centimetres(gentle):
    text = text_of(render_work_order(gentle, "a4"))
    context = workroom.lacing_context(gentle, altered_pattern(gentle))
    assert f"{context['count']} eyelets on each back edge, {2 * context['count']} in all" in text
    assert f"Lace: about {context['lace']}" in text and context["lace"].endswith(" cm")
    assert "(waist):" in text
    first = workroom.lacing_context(gentle, altered_pattern(gentle))["eyelets"][0][0]
    assert f"1: {first['from_top']}" in text


def test_it_has_no_busk_or_lacing_for_a_bodice_on_the_fold_with_a_seamed_back(bodice):
    text = text_of(render_work_order(bodice, "a4"))
    assert "Boning and busk (cm)" in text and "Busk:" not in text
    assert "Lacing (cm)" not in text


def test_it_follows_the_atelier_settings(gentle):
    pattern = altered_pattern(gentle)
    usual = workroom.lacing_context(gentle, pattern)["count"]
    closer = replace(gentle, lacing_rules=LacingRules(spacing_mm=15.0))
    assert workroom.lacing_context(closer, pattern)["count"] > usual
    no_stock = replace(gentle, boning_rules=BoningRules(busk_stock_mm=(900.0,)))
    assert "none in stock fits" in text_of(render_work_order(no_stock, "a4"))


# --- settings kept by the owner -------------------------------------------------------------------


def test_it_reads_busk_stock_as_the_owner_types_it():
    assert [float(v) for v in parse_stock("10 in; 11 1/2 in\n28 cm; 254")] == [254.0, 280.0, 292.1]
    for bad in ("ten inches", "10 in; -3", "5", "4000 mm", "; ".join(["300"] * 2 + [str(100 + i) for i in range(40)])):
        with pytest.raises(ValidationError):
            parse_stock(bad)


@pytest.mark.django_db
def test_it_defaults_until_the_owner_saves_settings():
    current = AtelierSettings.current()
    assert current.pk == 1 and not AtelierSettings.objects.exists()
    assert current.boning_rules() == BoningRules()
    assert current.lacing_rules() == LacingRules()
    current.eyelet_spacing_mm = 20
    current.busk_stock = "12 in"
    current.save()
    again = AtelierSettings.current()
    assert again.lacing_rules().spacing_mm == 20.0 and again.boning_rules().busk_stock_mm == (304.8,)
    AtelierSettings(eyelet_spacing_mm=22).save()  # always the one row
    assert AtelierSettings.objects.count() == 1


@pytest.mark.django_db
def test_it_lets_only_the_owner_change_the_settings(make_user, client):
    url = "/admin/atelier/ateliersettings/add/"
    # The owner keeps the settings in /admin/ as a staff account; a fitter with staff access may not.
    client.force_login(make_user("owner", is_staff=True))
    response = client.post(
        url,
        {
            "busk_stock": "10 in; 12 in",
            "bone_clearance_mm": "10",
            "busk_clearance_mm": "",
            "eyelet_spacing_mm": "22",
            "waist_pair_mm": "13",
            "eyelet_margin_mm": "20",
            "eyelet_inset_mm": "12",
            "lace_tail_mm": "500",
        },
    )
    assert response.status_code == 302, response.content.decode()[:2000]
    assert AtelierSettings.current().boning_rules().clearance_mm == 10.0
    bad = client.post(
        "/admin/atelier/ateliersettings/1/change/",
        {
            "busk_stock": "ten inches",
            "bone_clearance_mm": "10",
            "eyelet_spacing_mm": "22",
            "waist_pair_mm": "13",
            "eyelet_margin_mm": "20",
            "eyelet_inset_mm": "12",
            "lace_tail_mm": "500",
        },
    )
    assert bad.status_code == 200 and "is not a length" in bad.content.decode()
    assert AtelierSettings.current().busk_stock == "10 in; 12 in"
    client.force_login(make_user("fitter", is_staff=True))
    assert client.get("/admin/atelier/ateliersettings/1/change/").status_code == 403
    assert client.post("/admin/atelier/ateliersettings/1/change/", {"busk_stock": "9 in"}).status_code == 403
    assert AtelierSettings.current().busk_stock == "10 in; 12 in"


# --- from the print flow ------------------------------------------------------------------------------


@pytest.fixture
def done_job(plan):
    revision = plan_services.issue_revision(revision=plan_services.latest_revision(plan), user=None)
    job = PrintJob.objects.create(revision=revision, paper="letter", kind="work_order")
    return job


@pytest.mark.django_db
def test_it_offers_the_large_sheets_and_the_projector_once_a_print_is_ready(workroom_client, done_job, monkeypatch):
    monkeypatch.setattr(
        "fittings.printing.work_order.render_work_order", lambda data, paper, pattern=None: b"%PDF-1.7\n"
    )
    assert run_print_job(done_job.pk) == "done"
    page = workroom_client.get(reverse("fittings:print_status", args=[done_job.pk])).content.decode()
    for fmt in LARGE_FORMATS:
        assert reverse("fittings:print_large", args=[done_job.pk, fmt]) in page
    revision = done_job.revision
    assert reverse("fittings:projector", args=[revision.plan_id, revision.number]) in page
    response = workroom_client.get(reverse("fittings:print_large", args=[done_job.pk, "a0"]))
    assert response.status_code == 200 and response["Content-Type"] == "application/pdf"
    assert response["Content-Disposition"].startswith("attachment;") and "pieces-a0" in response["Content-Disposition"]
    assert sorted(page_mm(response.content)) == pytest.approx(A0_MM, abs=0.1)
    # Drawn from the stored revision: the same pages as from its plain data.
    assert response.content == workroom.render_large_sheet(document_data(revision, done_job.site_url), "a0")


@pytest.mark.django_db
def test_it_refuses_unknown_sizes_and_unfinished_prints(workroom_client, done_job):
    assert workroom_client.get(reverse("fittings:print_large", args=[done_job.pk, "a1"])).status_code == 404
    assert workroom_client.get(reverse("fittings:print_large", args=[done_job.pk, "a0"])).status_code == 404  # queued
    assert workroom_client.get(reverse("fittings:print_large", args=[999999, "a0"])).status_code == 404


@pytest.mark.django_db
def test_it_serves_the_pieces_for_the_projector_at_one_unit_to_the_millimetre(fitter_client, plan):
    revision = plan_services.latest_revision(plan)
    page = fitter_client.get(reverse("fittings:projector", args=[plan.pk, revision.number]))
    html = page.content.decode()
    assert page.status_code == 200 and "projector.js" in html and "<script>" not in html and "style=" not in html
    assert "Draft" in html  # not issued yet
    assert "restricts breathing" in html  # the corset caution, as on the revision page
    svg = fitter_client.get(reverse("fittings:projector_pieces", args=[plan.pk, revision.number]))
    assert svg.status_code == 200 and svg["Content-Type"].startswith("image/svg+xml")
    text = svg.content.decode()
    width, height = (float(v) for v in re.search(r'width="([0-9.]+)mm" height="([0-9.]+)mm"', text).groups())
    view = [float(v) for v in re.search(r'viewBox="([^"]+)"', text).group(1).split()]
    assert view == pytest.approx([0, 0, width, height])  # one user unit is one millimetre
    assert text.count('class="cut"') == len(revision.inputs["pattern"]["panels"])
    assert 'class="eyelet"' in text
    assert fitter_client.get(reverse("fittings:projector", args=[plan.pk, 99])).status_code == 404


@pytest.mark.django_db
def test_it_projects_only_issued_revisions_for_the_workroom(workroom_client, plan):
    draft = plan_services.latest_revision(plan)
    for name in ("fittings:projector", "fittings:projector_pieces"):
        assert workroom_client.get(reverse(name, args=[plan.pk, draft.number])).status_code == 403
    plan_services.issue_revision(revision=draft, user=None)
    for name in ("fittings:projector", "fittings:projector_pieces"):
        assert workroom_client.get(reverse(name, args=[plan.pk, draft.number])).status_code == 200


@pytest.mark.django_db
def test_it_says_plainly_when_the_pieces_do_not_fit_one_a0_sheet(workroom_client, done_job, monkeypatch):
    monkeypatch.setattr(
        "fittings.printing.work_order.render_work_order", lambda data, paper, pattern=None: b"%PDF-1.7\n"
    )
    assert run_print_job(done_job.pk) == "done"

    def too_large(*args, **kwargs):
        raise TilingError("The pieces do not fit on one A0 sheet; print them on a plotter roll.")

    monkeypatch.setattr("fittings.workroom.large_sheet", too_large)
    response = workroom_client.get(reverse("fittings:print_large", args=[done_job.pk, "a0"]))
    assert response.status_code == 409 and "plotter roll" in response.content.decode()
