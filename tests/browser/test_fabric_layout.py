"""The fabric layout in a real browser: the card loads on the revision page, a request draws the layout."""

import pytest
from django.urls import reverse

from fittings.models import FabricLayout, Plan
from tests.browser.conftest import sign_in

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


def test_it_lays_out_the_fabric_from_the_revision_page(tablet, live_server, demo_atelier):
    page = tablet
    refused = []
    page.on("console", lambda m: refused.append(m.text) if "Content Security Policy" in m.text else None)
    sign_in(page, live_server)
    plan = Plan.objects.get(client__reference="WF-0101")
    page.goto(live_server.url + reverse("fittings:revision_detail", args=[plan.pk, 1]))
    # The card arrives by htmx after the page.
    card = page.wait_for_selector("#fabric-layout >> text=No layout asked for yet")
    assert card is not None
    page.fill("#id_width_fashion", "112")
    page.uncheck("#id_use_strength")
    page.fill("#id_seconds", "1")
    page.snap("layout-form")
    page.locator("#fabric-layout button[type=submit]").tap()
    page.wait_for_selector("text=Fabric needed")
    page.snap("layout-done")
    job = FabricLayout.objects.get(revision__plan=plan)
    assert [e["layer"] for e in job.layers] == ["fashion", "lining"]
    assert page.locator("svg.fabric-layout").count() == 2
    assert page.locator("svg.fabric-layout .piece").count() == 2 * 12
    assert refused == []
