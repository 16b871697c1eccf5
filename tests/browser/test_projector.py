"""The projector page in a real browser: calibrate the square on the mat, then the pieces are drawn to that scale.

The starting scale is the CSS reference, 96 px to the inch (W3C CSS Values and Units Level 3, 5.2),
with 25.4 mm to the inch (1959 agreement).
"""

import re

import pytest
from django.contrib.auth import get_user_model

from fittings.models import Client
from fittings.services import plans as plan_services
from patterns.models import BasePattern
from tests.browser.conftest import sign_in

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

CSS_PX_PER_MM = 96 / 25.4


def square_side(page) -> float:
    return page.evaluate("document.getElementById('calibration-square').getBoundingClientRect().width")


def test_it_calibrates_the_projector_and_draws_the_pieces_to_that_scale(tablet, live_server, demo_atelier):
    client = Client.objects.get(reference="WF-0101")
    plan = plan_services.start_plan(
        client=client,
        session=client.sessions.first(),
        pattern=BasePattern.objects.get(garment="overbust corset", size_label="10"),
        garment="Summer corset",
        user=get_user_model().objects.get(username="demo"),
    )
    page = tablet
    errors = []  # script errors and anything the Content Security Policy refused
    page.on("pageerror", lambda error: errors.append(str(error)))
    page.on(
        "console",
        lambda message: (
            errors.append(message.text)
            if "Content Security Policy" in message.text or "Refused" in message.text
            else None
        ),
    )
    sign_in(page, live_server)
    page.goto(f"{live_server.url}/plans/{plan.pk}/revisions/1/projector/")
    page.wait_for_selector("#scale-text:has-text('not calibrated')")
    # Uncalibrated: the 10 cm square is 100 CSS millimetres.
    assert square_side(page) == pytest.approx(100 * CSS_PX_PER_MM, abs=0.5)
    page.snap("uncalibrated")

    # On the mat the square measured 12.5 cm: everything is drawn 100/125 as large from now on.
    page.fill("#measured", "12.5")
    page.tap("#apply-measured")
    calibrated = 100 * CSS_PX_PER_MM * 100 / 125
    assert square_side(page) == pytest.approx(calibrated, abs=0.5)
    stored = float(page.evaluate("window.localStorage.getItem('atelier.projector.pxPerMm')"))
    assert stored == pytest.approx(CSS_PX_PER_MM * 0.8, rel=1e-6)
    page.snap("calibrated")

    # Kept in the browser: a reload draws the square at the calibrated size.
    page.reload()
    page.wait_for_selector("#scale-text:has-text('Scale')")
    assert square_side(page) == pytest.approx(calibrated, abs=0.5)

    # Something the page cannot read changes nothing and says so.
    page.fill("#measured", "twelve")
    page.tap("#apply-measured")
    page.wait_for_selector("#scale-text:has-text('Enter what the square measures')")
    assert square_side(page) == pytest.approx(calibrated, abs=0.5)

    # Dragging the corner until the square measures 10 cm on the mat: here to 400 px.
    page.locator("#calibration-square").scroll_into_view_if_needed()
    page.evaluate("window.scrollBy(0, 200)")
    box = page.locator("#calibration-square").bounding_box()
    handle = page.locator("#calibration-handle").bounding_box()
    page.mouse.move(handle["x"] + handle["width"] / 2, handle["y"] + handle["height"] / 2)
    page.mouse.down()
    page.mouse.move(box["x"] + 400, box["y"] + 400, steps=5)
    page.mouse.up()
    assert square_side(page) == pytest.approx(400, abs=1)
    scale = float(page.evaluate("window.localStorage.getItem('atelier.projector.pxPerMm')"))
    assert scale == pytest.approx(4.0, abs=0.01)

    # The pieces: an SVG in millimetres drawn at the calibrated pixels per millimetre.
    page.tap("#show-pieces")
    page.wait_for_selector("#projection-frame svg.projected")
    width_mm = float(re.match(r"([0-9.]+)mm", page.get_attribute("#projection-frame svg", "width")).group(1))
    drawn = page.evaluate("document.querySelector('#projection-frame svg').getBoundingClientRect().width")
    assert drawn == pytest.approx(width_mm * scale, abs=1)
    page.snap("pieces")

    # Mirror, turn and line weight.
    page.check("#mirror")
    assert "scale(-1, 1)" in page.evaluate("document.querySelector('#projection-frame svg').style.transform")
    page.select_option("#rotation", "90")
    turned = page.evaluate(
        "(() => { const r = document.querySelector('#projection-frame svg').getBoundingClientRect();"
        " return [r.width, r.height]; })()"
    )
    assert turned[1] == pytest.approx(width_mm * scale, abs=1)  # now as tall as it was wide
    page.evaluate(
        "(() => { const w = document.getElementById('line-weight'); w.value = '2';"
        " w.dispatchEvent(new Event('input')); })()"
    )
    assert page.get_attribute("#projection-frame path.cut", "stroke-width") == "2"
    page.snap("mirrored-turned")
    assert errors == []
