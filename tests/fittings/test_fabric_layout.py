"""The fabric layout of a revision: asking for it, the background search, the page and the work order."""

import re
from datetime import timedelta

import pytest
from django.test import override_settings
from django.urls import reverse

from fittings import fabric
from fittings.models import Client, FabricLayout, LayoutStatus, Plan, PlanRevision
from fittings.previews import altered_for
from fittings.printing.data import document_data
from fittings.printing.work_order import work_order_html
from fittings.services import layouts as layout_services
from patterns.core.layout import SHELF, SOLVER, LayerRequest, Layout, LayoutError, layout_problems
from patterns.core.units import format_with_unit
from tests.patterns.test_layout import assert_valid

pytestmark = pytest.mark.django_db

DUMMY_TASKS = {"default": {"BACKEND": "django.tasks.backends.dummy.DummyBackend"}}


@pytest.fixture
def cm_revision(demo_atelier):
    """WF-0101's issued corset plan, kept in centimetres."""
    return Plan.objects.get(client__reference="WF-0101").revisions.get(number=1)


@pytest.fixture
def inch_revision(demo_atelier):
    """WF-0102's first, issued corset revision, kept in inches."""
    return Plan.objects.get(client__reference="WF-0102").revisions.get(number=1)


def url(revision, name="fittings:fabric_layout"):
    return reverse(name, args=[revision.plan_id, revision.number])


def post(client, revision, **changes):
    data = {
        "use_fashion": "on",
        "width_fashion": "112",
        "use_lining": "on",
        "width_lining": "140",
        "gap": "0.5",
        "seconds": "1",
        **changes,
    }
    return client.post(url(revision, "fittings:fabric_layout_start"), data)


def stored(entries):
    return {e["layer"]: Layout.from_dict(e["layout"]) for e in entries}


def test_it_offers_the_garments_layers_at_the_default_width_in_the_plans_unit(fitter_client, inch_revision):
    page = fitter_client.get(url(inch_revision)).content.decode()
    assert "No layout asked for yet" in page
    for code in ("fashion", "strength", "lining"):  # a corset's layers (common practice)
        assert re.search(rf'name="use_{code}"[^>]*checked', page), code
    assert not re.search(r'name="use_interlining"[^>]*checked', page)
    assert 'value="55 1/8"' in page  # 140 cm in inches, to 1/16
    assert 'value="3/16"' in page  # the 5 mm gap, to 1/16 in


def test_it_lays_out_each_layer_and_shows_length_and_utilisation_in_centimetres(fitter_client, cm_revision):
    inputs, result = dict(cm_revision.inputs), dict(cm_revision.result)
    response = post(fitter_client, cm_revision)
    assert response.status_code == 302 and response["Location"] == url(cm_revision)
    job = FabricLayout.objects.get(revision=cm_revision)
    # The immediate task backend (tests, runserver) has run the search already.
    assert job.status == LayoutStatus.DONE and job.progress == 100
    assert [e["layer"] for e in job.layers] == ["fashion", "lining"]
    assert [e["width_mm"] for e in job.layers] == [1120.0, 1400.0]
    assert float(job.gap_mm) == 5.0
    shelf, solved = stored(job.shelf), stored(job.solved)
    for layer in ("fashion", "lining"):
        assert shelf[layer].method == SHELF
        assert_valid(shelf[layer])
        assert_valid(solved[layer])
        assert sum(p.copies for p in solved[layer].pieces) == 12  # six panels, mirrored pairs
    page = fitter_client.get(url(cm_revision)).content.decode()
    best = fabric.best_of(shelf["fashion"], solved["fashion"])
    assert f"<strong>{format_with_unit(best.length_mm, 'cm')}</strong>" in page
    assert f"{100 * best.utilisation:.1f} %" in page
    assert page.count('class="fabric-layout"') == 2
    assert " style=" not in page and "<script>" not in page
    assert 'hx-trigger="every 1s"' not in page  # finished: no more polling
    # The revision itself is untouched: the fabric belongs to the request.
    cm_revision.refresh_from_db()
    assert cm_revision.inputs == inputs and cm_revision.result == result
    assert PlanRevision.objects.filter(plan=cm_revision.plan).count() == 1


def test_it_shows_the_rows_layout_at_once_and_polls_while_the_solver_runs(workroom_client, inch_revision):
    with override_settings(TASKS=DUMMY_TASKS):
        response = post(workroom_client, inch_revision, width_fashion="44", width_lining="55")
    assert response.status_code == 302
    job = FabricLayout.objects.get(revision=inch_revision)
    assert job.status == LayoutStatus.QUEUED and job.solved is None
    fragment = workroom_client.get(url(inch_revision), headers={"HX-Request": "true"}).content.decode()
    assert fragment.lstrip().startswith('<section id="fabric-layout"')
    assert 'hx-trigger="every 1s"' in fragment and "<progress" in fragment
    assert "rows across the fabric" in fragment and fragment.count('class="fabric-layout"') == 2
    shelf = stored(job.shelf)["fashion"]
    assert format_with_unit(shelf.length_mm, "in") in fragment  # in the plan's unit, inches to 1/16

    assert "No worker has taken this search yet" not in fragment
    assert "Shortest found so far" not in fragment
    FabricLayout.objects.filter(pk=job.pk).update(best_length_mm=812.8)
    fragment = workroom_client.get(url(inch_revision), headers={"HX-Request": "true"}).content.decode()
    assert "Shortest found so far: about 32 in" in fragment  # 812.8 mm = 32 in exactly
    FabricLayout.objects.filter(pk=job.pk).update(created_at=job.created_at - timedelta(minutes=3))
    late = workroom_client.get(url(inch_revision), headers={"HX-Request": "true"}).content.decode()
    assert "No worker has taken this search yet" in late and 'hx-trigger="every 1s"' in late

    seen = []
    real = layout_services.solve_layers_apart

    def spying(*args, progress, **kwargs):
        def record(p):
            progress(p)
            seen.append(FabricLayout.objects.get(pk=job.pk).progress)

        return real(*args, progress=record, **kwargs)

    layout_services.PROGRESS_EVERY_S, saved = 0.0, layout_services.PROGRESS_EVERY_S
    try:
        layout_services.solve_layers_apart = spying
        assert layout_services.run_layout_job(job.pk, workers=1) == "done"
    finally:
        layout_services.solve_layers_apart, layout_services.PROGRESS_EVERY_S = real, saved
    assert seen and all(0 <= v <= 99 for v in seen[:-1]) and seen == sorted(seen)
    job.refresh_from_db()
    assert job.status == LayoutStatus.DONE and job.progress == 100 and job.best_length_mm > 0
    assert layout_services.run_layout_job(job.pk) == "skipped"  # taken once only
    fragment = workroom_client.get(url(inch_revision), headers={"HX-Request": "true"}).content.decode()
    assert 'hx-trigger="every 1s"' not in fragment
    assert "Laid out" in fragment


def test_it_keeps_the_rows_layout_and_says_why_when_the_search_fails(fitter_client, inch_revision, monkeypatch):
    with override_settings(TASKS=DUMMY_TASKS):
        post(fitter_client, inch_revision, width_fashion="55", width_lining="55")
    job = FabricLayout.objects.get(revision=inch_revision)

    def broken(*args, **kwargs):
        raise RuntimeError("no memory left")

    monkeypatch.setattr(layout_services, "solve_layers_apart", broken)
    with pytest.raises(RuntimeError):
        layout_services.run_layout_job(job.pk)
    job.refresh_from_db()
    assert job.status == LayoutStatus.FAILED and "no memory left" in job.error
    page = fitter_client.get(url(inch_revision)).content.decode()
    assert "no memory left" in page and "rows across the fabric" in page


@pytest.mark.parametrize(
    "changes, words",
    [
        ({"width_fashion": "0"}, "The fabric width must be more than 0."),
        ({"width_lining": "wide"}, "is not a length in centimetres"),
        ({"width_fashion": "10"}, "wider than the fabric (10.0 cm)"),
        ({"gap": "-1"}, "is not a length in centimetres"),
        ({"use_fashion": "", "use_lining": ""}, "Choose at least one fabric layer."),
    ],
)
def test_it_refuses_a_bad_request_plainly_and_saves_nothing(fitter_client, cm_revision, changes, words):
    response = post(fitter_client, cm_revision, **changes)
    assert response.status_code == 400
    assert words in response.content.decode()
    assert not FabricLayout.objects.exists()


def test_it_refuses_a_time_out_of_range_in_the_service(cm_revision, fitter_user):
    with pytest.raises(LayoutError, match="whole number of seconds"):
        layout_services.request_layout(
            revision=cm_revision, user=fitter_user, layers=[LayerRequest("fashion", 1400.0)], gap_mm=5.0, budget_s=0
        )
    assert not FabricLayout.objects.exists()


def test_it_loads_the_layout_card_on_the_revision_page(fitter_client, cm_revision):
    page = fitter_client.get(reverse("fittings:revision_detail", args=[cm_revision.plan_id, 1])).content.decode()
    assert f'hx-get="{url(cm_revision)}" hx-trigger="load"' in page
    assert f'<a href="{url(cm_revision)}">' in page  # without JavaScript, a link to the same page


def test_it_prints_default_rows_on_the_work_order_before_any_layout_was_asked_for(cm_revision):
    data = document_data(cm_revision)
    html = work_order_html(data, "a4")
    assert "<h2>Fabric layout</h2>" in html
    assert "no layout was asked for in the app" in html
    for label in ("Outer fabric", "Strength layer", "Lining"):
        assert f"<td>{label}</td>" in html
    rows = fabric.default_print_layers(data.block, altered_for(data.block, data.result).altered)
    assert rows and all(not layout_problems(r.shown) for r in rows)
    assert format_with_unit(rows[0].shown.length_mm, "cm") in html
    # The three layers take the same rows layout: one drawing for all three, and the pattern's preview.
    assert html.count('src="data:image/svg+xml;base64,') == 1 + 1
    assert f"<h3>Outer fabric, Strength layer and Lining: {format_with_unit(rows[0].shown.length_mm, 'cm')}" in html
    # Sized for the page: within the text width of A4 and letter (less 12 mm margins each side) and 115 mm tall.
    import base64

    drawing = re.search(r'<img class="fabric-drawing" src="data:image/svg\+xml;base64,([^"]+)"', html)[1]
    svg = base64.b64decode(drawing).decode()
    width, height = (float(v) for v in re.search(r'width="([0-9.]+)mm" height="([0-9.]+)mm"', svg).groups())
    assert width <= 170.0 + 1e-6 and height <= 115.0 + 1e-6 and max(width / 170.0, height / 115.0) > 0.999


def test_it_prints_the_layout_asked_for_with_length_and_utilisation(fitter_client, cm_revision):
    post(fitter_client, cm_revision)
    job = FabricLayout.objects.get(revision=cm_revision)
    html = work_order_html(document_data(cm_revision), "a4")
    assert "As laid out in the app" in html
    for layer, label in (("fashion", "Outer fabric"), ("lining", "Lining")):
        best = fabric.best_of(stored(job.shelf)[layer], stored(job.solved)[layer])
        assert re.search(
            rf"<td>{label}</td><td class=\"num\">[^<]+</td><td class=\"num\">"
            rf"{re.escape(format_with_unit(best.length_mm, 'cm'))}</td><td class=\"num\">"
            rf"{100 * best.utilisation:.1f} %</td>",
            html,
        ), label
    assert "<td>Strength layer</td>" not in html.split("<h2>Fabric layout</h2>")[1]
    assert html.count('src="data:image/svg+xml;base64,') == 2 + 1  # two widths, two drawings; the preview


def test_it_erases_a_clients_layouts_with_the_client(fitter_client, cm_revision):
    from fittings.services.client_records import erase_client

    post(fitter_client, cm_revision)
    assert FabricLayout.objects.count() == 1
    erase_client(reference="WF-0101", actor="test")
    assert FabricLayout.objects.count() == 0
    assert not Client.all_objects.filter(reference="WF-0101").exists()


def test_it_shows_the_solver_only_where_it_takes_less_fabric(cm_revision, fitter_user):
    job = layout_services.request_layout(
        revision=cm_revision, user=fitter_user, layers=[LayerRequest("fashion", 1400.0)], gap_mm=5.0, budget_s=1
    )
    (lay,) = fabric.job_layers(job)
    assert lay.shown.length_mm <= lay.shelf.length_mm
    # At 140 cm the twelve corset pieces fit in one row: the rows layout is already as short as the tallest piece.
    tallest = max(p.height_mm for p in lay.shelf.pieces)
    assert lay.shelf.length_mm == pytest.approx(tallest)
    assert lay.shown.method in (SHELF, SOLVER)


def test_it_keeps_the_workroom_to_issued_revisions(workroom_client, demo_atelier, fitter_user):
    from django.test import Client as BrowserClient

    draft = Plan.objects.get(client__reference="WF-0102").revisions.get(number=2)
    assert not draft.is_issued
    assert workroom_client.get(url(draft)).status_code == 403
    assert post(workroom_client, draft, width_fashion="55", width_lining="55").status_code == 403
    assert not FabricLayout.objects.exists()
    fitter = BrowserClient()
    fitter.force_login(fitter_user)
    assert fitter.get(url(draft)).status_code == 200
