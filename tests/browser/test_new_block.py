"""A block typed in on the tablet, drawn as it is typed, a plan made on it and printed."""

import io

import pdfplumber
import pytest

from fittings.models import PlanRevision, PrintJob
from patterns.models import BasePattern
from patterns.selectors import block_for
from tests.browser.conftest import sign_in

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

# An invented four-panel corset, in cm: heights of the levels, and each panel's width at each level.
LEVELS = {"bust": "8", "waist": "25", "hip": "42"}
WIDTHS = {
    1: {"bust": "12", "waist": "9", "hip": "12"},
    2: {"bust": "11.5", "waist": "8.5", "hip": "12.5"},
    3: {"bust": "10.5", "waist": "8", "hip": "12.5"},
    4: {"bust": "11", "waist": "8.5", "hip": "12"},
}


def test_it_types_a_new_block_plans_on_it_and_prints_it(tablet, live_server, demo_atelier):
    page = tablet
    sign_in(page, live_server)
    page.tap("header >> text=Base patterns")
    page.wait_for_selector("h1:has-text('Base patterns')")
    page.tap("text=Type in a new block")
    # Four panels, three levels: the layout is chosen first.
    page.fill("#id_panel_count", "4")
    page.uncheck("input[name=levels][value=underbust]")
    page.uncheck("input[name=levels][value=abdomen]")
    page.tap("text=Change the layout")
    page.wait_for_selector("input[name=p4_name]")
    assert page.locator("input[name=p5_name]").count() == 0
    page.fill("#id_name", "Wrenfield short corset")
    page.fill("#id_size_label", "W1")
    for level, height in LEVELS.items():
        page.fill(f"#id_level_{level}", height)
    for i in range(1, 5):
        for edge in ("top_l", "top_r"):
            page.fill(f"#id_p{i}_{edge}", "0")
        for edge in ("bottom_l", "bottom_r"):
            page.fill(f"#id_p{i}_{edge}", "45")
        for level, width in WIDTHS[i].items():
            page.fill(f"#id_p{i}_{level}_w", width)
    page.wait_for_selector("#block-drawing img")
    page.snap("block-drawn")
    # An impossible width is put into words beside the drawing, and the drawing waits.
    page.fill("#id_p3_waist_w", "-8")
    page.wait_for_selector("#block-drawing >> text=Panel 3 is -8.0 cm wide at the waist")
    assert page.locator("#block-drawing img").count() == 0
    page.snap("block-finding")
    page.fill("#id_p3_waist_w", "8")
    page.wait_for_selector("#block-drawing img")
    src = page.get_attribute("#block-drawing img", "src")
    drawing = page.request.get(f"{live_server.url}{src}")
    assert drawing.ok and drawing.headers["content-type"] == "image/svg+xml"
    page.tap("text=Save the block")
    page.wait_for_selector("h1:has-text('Wrenfield short corset')")
    page.snap("block-saved")
    pattern = BasePattern.objects.get(name="Wrenfield short corset")
    block = block_for(pattern)
    assert [p.width("waist") for p in block.panels] == pytest.approx([90.0, 85.0, 80.0, 85.0])
    assert all(p.top_bound and p.bottom_bound for p in block.panels)

    # A plan on it for a demo client.
    page.goto(f"{live_server.url}/")
    page.tap("text=Hester Quayle")
    page.tap("text=Plan from these readings")
    page.select_option("#id_base_pattern", label="Wrenfield short corset, size W1")
    page.fill("#id_garment", "Short corset")
    page.tap("text=Start the plan")
    page.wait_for_selector("#plan-result")
    page.snap("plan")
    revision = PlanRevision.objects.get(plan__garment="Short corset", number=1)
    assert revision.plan.base_pattern_id == pattern.pk
    assert revision.inputs["pattern"]["name"] == "Wrenfield short corset"

    # Printed: issued and drawn.
    page.goto(f"{live_server.url}/plans/{revision.plan_id}/revisions/1/")
    page.tap("a:has-text('Issue and print')")
    page.tap("button:has-text('Issue and print')")
    page.wait_for_selector("text=Download the cutting sheet (PDF)", timeout=120_000)
    page.snap("printed")
    job = PrintJob.objects.get(revision=revision)
    assert job.status == "done"
    revision.refresh_from_db()
    assert revision.status == "issued"
    href = page.get_attribute("text=Download the cutting sheet (PDF)", "href")
    pdf = page.request.get(f"{live_server.url}{href}")
    assert pdf.ok and pdf.body().startswith(b"%PDF")
    with pdfplumber.open(io.BytesIO(pdf.body())) as doc:
        text = "\n".join(p.extract_text() or "" for p in doc.pages)
    assert "Wrenfield short corset, size W1" in text and "Cutting sheet: Short corset, revision 1" in text
