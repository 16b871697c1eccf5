"""The whole fitting on a tablet, in a real browser: from login to an issued plan, reopened and compared."""

import re

import pytest

from fittings.models import Client, PlanRevision
from tests.browser.conftest import fill_in, sign_in

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


def test_it_takes_a_new_client_from_tape_to_an_issued_plan(tablet, live_server, demo_atelier):
    page = tablet
    sign_in(page, live_server)
    page.snap("clients")

    page.goto(f"{live_server.url}/clients/new/")
    fill_in(page, reference="WF-0300", name="Philippa Orme")
    page.tap("text=Save client")
    page.wait_for_selector("h1:has-text('Philippa Orme')")
    page.snap("client")

    page.tap("text=Take measurements")
    page.fill("#id_bust_girth", "95")  # read in centimetres, then the fitter remembers the tape is in inches
    page.check("input[name=unit][value=in]")
    # 95 cm = 37.40 in, 37 3/8 to the nearest 1/16 (1 in = 25.4 mm exactly).
    page.wait_for_selector("#id_bust_girth[value='37 3/8']")
    readings = {
        "bust_girth": "37 3/8",
        "underbust_girth": "31 1/8",
        "waist_girth": "29 1/4",
        "abdomen_girth": "35 5/8",
        "hip_girth": "39 3/4",
        "bust_span": "7 1/4",
    }
    fill_in(page, **readings)
    page.fill("#id_underbust_girth", "39")  # a slip of the tape: more than the bust
    page.wait_for_selector("#session-notes >> text=Bust is smaller than underbust")
    page.snap("session-advice")
    page.fill("#id_underbust_girth", "31 1/8")
    page.wait_for_selector("#session-notes >> text=Bust is smaller than underbust", state="detached")
    page.tap("button[name=plan]")
    page.wait_for_load_state("networkidle")
    page.snap("after-save")
    page.wait_for_selector("text=Suggested base size")
    suggested = page.inner_text("section.card strong").rstrip(".")
    assert "needs the least alteration" in page.inner_text("section.card")
    assert page.locator("#id_base_pattern option:checked").inner_text() == suggested
    page.snap("choose-pattern")
    page.fill("#id_garment", "Wedding corset")
    page.tap("text=Start the plan")
    page.wait_for_selector("#plan-result")
    page.snap("plan")

    # Change the waist reduction: the table answers without a page load.
    before = page.inner_text("#plan-result")
    page.fill("#id_ease_waist", "-2 1/2")
    page.wait_for_function("(before) => document.querySelector('#plan-result').innerText !== before", arg=before)
    assert "-2 1/2" in page.input_value("#id_ease_waist")

    # Fix one cell by hand: the side seam's front edge at the waist.
    cell = page.locator("input[aria-label^='Side seam, Side front edge, waist']")
    cell.fill("-3/8")
    page.wait_for_selector("td.fixed")
    assert page.locator("input[aria-label^='Side seam, Side front edge, waist']").input_value() == "-3/8"
    page.snap("cell-fixed")
    page.tap("text=Save as a new revision")
    page.wait_for_selector("h1:has-text('revision 2')")
    revision = PlanRevision.objects.get(plan__client__reference="WF-0300", number=2)
    fixed = [s for s in revision.result["shifts"] if s["fixed"]]
    assert [(s["seam"], s["level"], s["panel"], s["shift_mm"]) for s in fixed] == [
        ("Side seam", "waist", "Side front", pytest.approx(-9.525))
    ]  # 3/8 in = 9.525 mm
    page.snap("revision")

    page.tap("text=Issue to the workroom")
    page.wait_for_selector(".status-issued")
    page.snap("issued")

    # Reopen it from the client page.
    page.tap("nav.crumbs >> text=WF-0300")
    page.tap("text=Revision 2")
    page.wait_for_selector("text=Issued to the workroom")
    assert page.locator("text=Issue to the workroom").count() == 0

    # A second session, then the two side by side.
    page.tap("nav.crumbs >> text=WF-0300")
    page.tap("text=Take measurements")
    page.check("input[name=unit][value=in]")
    fill_in(page, **{**readings, "waist_girth": "28 7/8"})
    page.tap("button[name=done]")
    page.wait_for_selector("text=Compare the last two sessions")
    page.tap("text=Compare the last two sessions")
    row = page.locator("tr.differs", has_text="Waist girth")
    assert re.search(r"29 1/4\s+28 7/8\s+-3/8", row.inner_text())
    page.snap("compare")
    client = Client.objects.get(reference="WF-0300")
    assert client.sessions.count() == 2


def test_it_never_lets_a_late_answer_overwrite_a_newer_one(tablet, live_server, demo_atelier):
    """Type fast: every keystroke starts a recompute, and only the last one's table stays."""
    page = tablet
    sign_in(page, live_server)
    client = Client.objects.get(reference="WF-0101")
    page.goto(f"{live_server.url}/clients/{client.pk}/")
    page.tap("text=Plan from these readings")
    page.tap("text=Start the plan")
    page.wait_for_selector("#plan-result")
    for text in ("-1", "-2", "-3", "-4", "-5", "-6"):
        page.fill("#id_ease_waist", text)
        page.wait_for_timeout(120)
    page.wait_for_load_state("networkidle")
    page.wait_for_timeout(800)
    waist_row = page.locator("#plan-result table").first.locator("tr", has_text="Waist")
    assert "-6.0" in waist_row.inner_text()


def test_it_follows_the_readme_route_to_an_issued_plan(tablet, live_server, demo_atelier):
    """The route the README promises a new user: a demo client to an issued plan in a few taps."""
    page = tablet
    sign_in(page, live_server)
    page.tap("text=Marguerite Ashdown-Vale")
    page.tap("text=Plan from these readings")
    page.fill("#id_garment", "Gala bodice")
    page.tap("text=Start the plan")
    page.fill("#id_ease_bust", "3")
    page.wait_for_selector("#plan-result >> text=+3.0")
    page.snap("readme-route-plan")
    page.tap("text=Save as a new revision")
    page.tap("text=Issue to the workroom")
    page.wait_for_selector(".status-issued")
    revision = PlanRevision.objects.get(plan__garment="Gala bodice", number=2)
    assert revision.status == "issued"
    assert revision.inputs["plan"]["ease"]["bust"] == 30.0
