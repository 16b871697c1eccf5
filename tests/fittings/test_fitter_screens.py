"""The fitting as a fitter finds it on the tablet: every refusal seen, every length in her unit, every step a tap."""

import re

import pytest
from django.urls import reverse

from fittings.forms import cell_name
from fittings.services import plans as plan_services
from patterns.core.measures import LEVEL_LABELS
from tests.fittings.test_views_plans import options_post

pytestmark = pytest.mark.django_db


def test_it_lets_htmx_swap_a_refused_recompute_and_says_why(fitter_client, plan):
    """422 is swapped (base.html's htmx config) and carries the message, the red field and the named cell."""
    page = fitter_client.get(reverse("fittings:plan_edit", args=[plan.pk])).content.decode()
    config = re.search(r'name="htmx-config" content=\'([^\']*)\'', page).group(1)
    import json

    handling = json.loads(config)["responseHandling"]
    first = next(rule for rule in handling if re.fullmatch(rule["code"].replace(".", r"\d"), "422"))
    assert first["swap"] is True and not first.get("error")
    assert "atelier/live" in page and "<script>" not in page  # the static file, no inline script

    _, block, _ = plan_services.revision_inputs(plan_services.latest_revision(plan))
    side = next(i for i, s in enumerate(block.seams) if s.kind == "side")
    data = options_post(plan, ease_waist="-2 1/", **{cell_name(side, "waist", 0): "abc"})
    fragment = fitter_client.post(reverse("fittings:plan_recompute", args=[plan.pk]), data, headers={"HX-Request": "true"})
    assert fragment.status_code == 422
    html = fragment.content.decode()
    assert "Some values cannot be read" in html
    assert re.search(r'id="id_ease_waist-error" hx-swap-oob="true">[^<]*not a length in inches', html)
    seam = block.seams[side]
    assert f"{seam.name}, {seam.front_panel} edge, waist: " in html
    cell = re.search(rf'<input[^>]*name="{cell_name(side, "waist", 0)}"[^>]*>', html).group(0)
    assert 'aria-invalid="true"' in cell and 'value="abc"' in cell  # the typed value stays, marked
    assert "<table" in html  # the table is still there to look at


def test_it_heads_the_pin_form_with_the_levels_and_names_each_cell(fitter_client, plan):
    revision = plan_services.latest_revision(plan)
    url = reverse("fittings:revision_pins", args=[plan.pk, revision.number])
    html = fitter_client.get(url).content.decode()
    head = re.search(r"<thead>(.*?)</thead>", html, re.S).group(1)
    assert re.findall(r'<th scope="col">([^<]+)</th>', head) == ["Seam", *(LEVEL_LABELS[lv] for lv in ("bust", "underbust", "waist", "abdomen", "hip"))]
    _, block, _ = plan_services.revision_inputs(revision)
    assert f'aria-label="{block.seams[0].name}, waist: pin, in"' in html
    assert "pin-0-waist" not in re.findall(r'aria-label="([^"]*)"', html)[0]


def test_it_lists_recorded_pins_in_the_plan_unit(fitter_client, plan):
    revision = plan_services.latest_revision(plan)
    url = reverse("fittings:revision_pins", args=[plan.pk, revision.number])
    assert fitter_client.post(url, {"pin-0-waist": "-3/8", "note": "", "version": plan.version}).status_code == 302
    html = fitter_client.get(url).content.decode()
    assert "take in -3/8 in" in html and " mm" not in re.search(r"Recorded so far(.*?)</ul>", html, re.S).group(1)
