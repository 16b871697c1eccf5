"""The fitting as a fitter finds it on the tablet: every refusal seen, every length in her unit, every step a tap."""

import re

import pytest
from django.urls import reverse

from fittings import selectors
from fittings.forms import cell_name
from fittings.services import plans as plan_services
from patterns.core.fitting import allot_measurements
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

    _, block, _ = selectors.revision_inputs(selectors.latest_revision(plan))
    side = next(i for i, s in enumerate(block.seams) if s.kind == "side")
    data = options_post(plan, ease_waist="-2 1/", **{cell_name(side, "waist", 0): "abc"})
    fragment = fitter_client.post(
        reverse("fittings:plan_recompute", args=[plan.pk]), data, headers={"HX-Request": "true"}
    )
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
    revision = selectors.latest_revision(plan)
    url = reverse("fittings:revision_pins", args=[plan.pk, revision.number])
    html = fitter_client.get(url).content.decode()
    head = re.search(r"<thead>(.*?)</thead>", html, re.S).group(1)
    assert re.findall(r'<th scope="col">([^<]+)</th>', head) == [
        "Seam",
        *(LEVEL_LABELS[lv] for lv in ("bust", "underbust", "waist", "abdomen", "hip")),
    ]
    _, block, _ = selectors.revision_inputs(revision)
    assert f'aria-label="{block.seams[0].name}, waist: pin, in"' in html
    assert "pin-0-waist" not in re.findall(r'aria-label="([^"]*)"', html)[0]


def test_it_lists_recorded_pins_in_the_plan_unit(fitter_client, plan):
    revision = selectors.latest_revision(plan)
    url = reverse("fittings:revision_pins", args=[plan.pk, revision.number])
    assert fitter_client.post(url, {"pin-0-waist": "-3/8", "note": "", "version": plan.version}).status_code == 302
    html = fitter_client.get(url).content.decode()
    assert "take in -3/8 in" in html and " mm" not in re.search(r"Recorded so far(.*?)</ul>", html, re.S).group(1)


def _inch_plan_with_a_heavy_fixed_cell(plan):
    _, block, _ = selectors.revision_inputs(selectors.latest_revision(plan))
    side = next(i for i, s in enumerate(block.seams) if s.kind == "side")
    # 3 in taken in at one edge: 6 in of girth, more than the waist's need the same way.
    return options_post(plan, ease_waist="-6", **{cell_name(side, "waist", 0): "-3"})


def test_it_writes_every_length_of_an_inch_plan_in_inches(fitter_client, plan):
    """Findings (the hand-fix warning, the reduction caution) on screen in the plan's unit."""
    html = fitter_client.post(
        reverse("fittings:plan_recompute", args=[plan.pk]),
        _inch_plan_with_a_heavy_fixed_cell(plan),
        headers={"HX-Request": "true"},
    ).content.decode()
    read = re.search(r'id="findings-heading">.*?</section>', html, re.S).group(0)
    assert "set by hand" in read and "waist reduction of 6 in" in read
    assert not re.search(r"\d\s?(mm|cm)\b", read), read


def test_it_prints_the_findings_of_an_inch_plan_in_inches(fitter_client, plan):
    from fittings.printing import data as printed
    from fittings.printing import work_order

    assert (
        fitter_client.post(
            reverse("fittings:plan_edit", args=[plan.pk]), _inch_plan_with_a_heavy_fixed_cell(plan)
        ).status_code
        == 302
    )
    data = printed.document_data(selectors.latest_revision(plan))
    pattern = printed.altered_pattern(data)
    texts = [row["message"] for row in work_order.finding_rows(data, pattern)] + printed.cautions(data)
    assert any("set by hand" in t for t in texts) and any("6 in" in t for t in texts)
    assert not [t for t in texts if re.search(r"\d\s?(mm|cm)\b", t)]


def test_it_suggests_a_size_in_the_session_unit_and_in_order_within_the_garment(fitter_client, reducing_client):
    session = reducing_client.sessions.order_by("-taken_on").first()
    assert session.unit == "in"
    response = fitter_client.get(reverse("fittings:plan_new", args=[session.pk]))
    html = response.content.decode()
    suggestions = response.context["suggestions"]
    card = re.search(r"Suggested base size.*?</section>", html, re.S).group(0)
    table = re.search(r"All sizes, least alteration first.*?</table>", html, re.S).group(0)
    assert not re.search(r"\d\s?(mm|cm)\b", card + table), card
    garments = [s.garment for s in suggestions]
    first = garments[0]
    assert garments == sorted(garments, key=lambda g: g != first)  # the plan's garment first, the others after
    same = [s for s in suggestions if s.garment == first]
    ranks = [(s.errors, s.over_cap, s.largest_edge_mm, s.total_edges_mm) for s in same]
    assert ranks == sorted(ranks) and len(same) > 1
    rows = re.findall(r"<tr><td>([^<]+)</td>", table)
    assert rows[: len(same)] == [s.label for s in same]
    assert "Other garments" in table or len(set(garments)) == 1


def test_it_names_the_measurement_and_puts_the_advice_beside_it(fitter_client, reducing_client):
    url = reverse("fittings:session_check", args=[reducing_client.pk])
    html = fitter_client.post(
        url,
        {"unit": "in", "bust_girth": "30", "underbust_girth": "33", "waist_girth": "90"},
        headers={"HX-Request": "true"},
    ).content.decode()
    assert re.search(
        r'<p class="note" data-for="bust_girth"><a href="#id_bust_girth">Bust girth</a>: Bust is smaller', html
    )
    beside = re.search(r'id="advice-waist_girth" hx-swap-oob="true">(.*?)</span></span>', html, re.S).group(1)
    assert "Unusual value" in beside and " in here" in beside and " cm" not in beside
    assert re.search(r'id="advice-hip_girth" hx-swap-oob="true"></span>', html)  # cleared where nothing is to say


def test_it_starts_an_inch_plan_from_the_trades_inch_values(fitter_client, plan):
    """5/8 in seam allowance and a 2 in lacing gap (common practice), not 1.5 cm and 5 cm converted."""
    from fittings.printing import data as printed
    from fittings.printing import work_order

    revision = selectors.latest_revision(plan)
    values, block, options = selectors.revision_inputs(revision)
    assert options.unit == "in"
    assert block.seam_allowance_mm == pytest.approx(15.875)  # 5/8 in = 15.875 mm
    if block.centre_back == "laced":
        assert options.lacing_gap_mm == pytest.approx(50.8)  # 2 in = 50.8 mm
        page = fitter_client.get(reverse("fittings:plan_edit", args=[plan.pk])).content.decode()
        assert re.search(r'name="lacing_gap"[^>]*value="2"', page) or re.search(
            r'value="2"[^>]*name="lacing_gap"', page
        )
    html = work_order.work_order_html(printed.document_data(revision), "a4")
    assert "5/8 in" in re.search(r"Seam allowance</th><td>([^<]*)", html).group(1)


def test_it_shows_pins_and_lacing_gap_so_the_girth_table_adds_up(fitter_client, plan):
    revision = selectors.latest_revision(plan)
    pins_url = reverse("fittings:revision_pins", args=[plan.pk, revision.number])
    fitter_client.post(pins_url, {"pin-0-waist": "-1/2", "note": "", "version": plan.version})
    fitter_client.post(
        reverse("fittings:revision_apply_pins", args=[plan.pk, revision.number]), {"version": plan.version}
    )
    pinned = selectors.latest_revision(plan)
    assert pinned.number == 2
    response = fitter_client.get(reverse("fittings:revision_detail", args=[plan.pk, 2]))
    html = response.content.decode()
    head = re.search(r'id="levels-heading".*?</thead>', html, re.S).group(0)
    assert re.findall(r'<th scope="col">([^<]+)</th>', head) == [
        "Level",
        "Body",
        "Ease",
        "Lacing gap",
        "Target",
        "Pattern",
        "Difference",
        "Seams give",
        "Pins",
        "Left over",
    ]
    result = selectors.revision_result(pinned)
    waist = next(lv for lv in result.levels if lv.level == "waist")
    row = re.search(r"<tr><th scope=\"row\">Waist.*?</tr>", html, re.S).group(0)
    cells = re.findall(r"<td>([^<]*)</td>", row)
    # The 2 in gap; 1/2 in pinned on one body half is 1 in of the whole girth.
    assert cells[2] == "2" and cells[7] == "-1"
    edges = sum(s.shift_mm for s in result.shifts if s.level == "waist")
    assert 2 * edges == pytest.approx(waist.allotted + waist.centre_front + waist.pinned, abs=1e-6)


def test_it_words_the_seam_checks_with_both_edges_before_and_after(fitter_client, plan):
    revision = selectors.latest_revision(plan)
    html = fitter_client.get(reverse("fittings:revision_checks", args=[plan.pk, revision.number])).content.decode()
    head = re.search(r"<thead>(.*?)</thead>", html, re.S).group(1)
    headings = re.findall(r'<th scope="col">([^<]*)</th>', head)
    assert all(h.strip() for h in headings) and "Changed by" not in headings
    assert ">true<" not in html
    from fittings import previews

    values, block, _ = selectors.revision_inputs(revision)
    t = previews.altered_for(block, selectors.revision_result(revision)).seams[0]
    from patterns.core.units import format_length as fl

    row = re.search(rf'<th scope="row">{re.escape(t.seam)}</th>(.*?)</tr>', html, re.S).group(1)
    assert f"{t.front_panel}: {fl(t.front_base_mm, 'in')} → {fl(t.front_after_mm, 'in')}" in row
    assert f"{t.back_panel}: {fl(t.back_base_mm, 'in')} → {fl(t.back_after_mm, 'in')}" in row
    assert re.search(r"Now the .* edge is .* in (longer|shorter) than|Now the two edges are the same length", row)
    assert "mm" not in html


def test_it_does_not_call_a_change_below_the_tapes_step_a_change(fitter_client, fitter_user, reducing_client):
    from decimal import Decimal

    from fittings.services import clients as client_services

    first = reducing_client.sessions.order_by("taken_on").first()
    values = {m.code: m.value_mm for m in first.measurements.all()}
    nudged = {**values, "waist_girth": values["waist_girth"] + Decimal("0.4")}  # 0.4 mm: under 1/16 in (1.5875 mm)
    second = client_services.record_session(
        client=reducing_client,
        user=fitter_user,
        values=nudged,
        form_data={"taken_on": first.taken_on, "kind": "check", "unit": "in", "posture_notes": "", "notes": ""},
    )
    html = fitter_client.get(
        reverse("fittings:compare", args=[reducing_client.pk]), {"a": f"s{first.pk}", "b": f"s{second.pk}"}
    ).content.decode()
    assert '<tr class=""><th scope="row">Waist girth</th>' in html
    assert 'class="differs"' not in html
    day = first.taken_on
    assert f"{day.day} {day:%b %Y}" in html and day.isoformat() not in html  # 2 Dec 2026, as everywhere else


def test_it_opens_the_compare_chooser_with_two_different_choices_and_no_error(fitter_client, reducing_client):
    page = fitter_client.get(reverse("fittings:client_detail", args=[reducing_client.pk])).content.decode()
    chooser = reverse("fittings:compare", args=[reducing_client.pk])
    assert f'href="{chooser}">Compare any two' in page
    response = fitter_client.get(chooser)
    html = response.content.decode()
    assert response.status_code == 200 and "error-box" not in html
    first = re.search(r'<select name="a".*?</select>', html, re.S).group(0)
    second = re.search(r'<select name="b".*?</select>', html, re.S).group(0)
    picked = [re.search(r'value="([^"]+)" selected', part).group(1) for part in (first, second)]
    assert picked[0] != picked[1]
    response = fitter_client.get(chooser, {"a": picked[0], "b": picked[1]})
    assert response.status_code == 200 and "Measurements" in response.content.decode()


def test_it_serves_the_preview_so_it_renders_opened_alone(fitter_client, plan):
    revision = selectors.latest_revision(plan)
    for url in (
        reverse("fittings:revision_preview", args=[plan.pk, revision.number]),
        reverse("fittings:plan_preview", args=[plan.pk]),
    ):
        response = fitter_client.get(url)
        assert response.status_code == 200 and response["Content-Type"] == "image/svg+xml"
        svg = response.content.decode()
        assert "<style" in svg or 'style="' in svg  # the drawing is styled inline
        policy = dict(
            part.strip().split(" ", 1) for part in response["Content-Security-Policy"].split(";") if part.strip()
        )
        assert "'unsafe-inline'" in policy["style-src"]
        assert policy["script-src"] == "'none'" and policy["default-src"] == "'none'"
    page = fitter_client.get(reverse("fittings:plan_edit", args=[plan.pk]))
    assert "'unsafe-inline'" not in page["Content-Security-Policy"]  # only the picture's own response


def _jpeg(size=(640, 960)):
    from tests.security.conftest import jpeg_bytes

    return jpeg_bytes(size)


def test_it_says_which_photos_to_choose_again_when_the_session_form_comes_back(fitter_client, reducing_client):
    from django.core.files.uploadedfile import SimpleUploadedFile

    data = {
        "taken_on": "2026-11-30",
        "kind": "first",
        "unit": "in",
        "bust_girth": "abc",
        "done": "1",
        "photo_back": SimpleUploadedFile("back.jpg", _jpeg()),
    }
    response = fitter_client.post(reverse("fittings:session_new", args=[reducing_client.pk]), data)
    assert response.status_code == 400
    html = response.content.decode()
    assert re.search(r'id="photos-lost">The back photo you chose was not kept, because nothing was saved', html)


def test_it_shows_the_photos_large_on_the_plan_page_with_delete_and_replace(fitter_client, plan):
    from django.core.files.base import ContentFile
    from django.core.files.uploadedfile import SimpleUploadedFile

    from fittings.models import Photo

    photo = Photo.objects.create(session=plan.session, view="back", image=ContentFile(_jpeg(), name="b.jpg"))
    url = reverse("fittings:plan_edit", args=[plan.pk])
    html = fitter_client.get(url).content.decode()
    card = re.search(r'<section class="card photos-card".*?</section>', html, re.S).group(0)
    assert f'src="{reverse("fittings:photo_file", args=[photo.pk])}"' in card and 'width="120"' not in card
    assert (
        reverse("fittings:photo_replace", args=[photo.pk]) in card
        and reverse("fittings:photo_delete", args=[photo.pk]) in card
    )
    assert (
        "<form" not in re.search(r'id="plan-form".*?</form>', html, re.S).group(0)[10:]
    )  # no form inside the plan form

    replaced = fitter_client.post(
        reverse("fittings:photo_replace", args=[photo.pk]),
        {"image": SimpleUploadedFile("new.jpg", _jpeg((500, 700))), "next": url},
    )
    assert replaced.status_code == 302 and replaced["Location"] == url
    new = Photo.objects.get(session=plan.session, view="back")
    assert new.pk != photo.pk
    deleted = fitter_client.post(
        reverse("fittings:photo_delete", args=[new.pk]), {"next": "https://elsewhere.example/"}
    )
    assert deleted.status_code == 302 and deleted["Location"] == reverse(
        "fittings:session_edit", args=[plan.session.pk]
    )
    assert not Photo.objects.filter(session=plan.session).exists()


def test_it_marks_a_hand_fixed_cell_on_its_own_panel_in_words_below_the_edge_labels(plan):
    from fittings import previews
    from fittings.forms import PlanOptionsForm
    from patterns.core.preview import SHIFT_FONT_PT, build_figure

    revision = selectors.latest_revision(plan)
    values, block, options = selectors.revision_inputs(revision)
    side = next(i for i, s in enumerate(block.seams) if s.kind == "side")
    form = PlanOptionsForm(_inch_plan_with_a_heavy_fixed_cell(plan), block=block, unit="in")
    assert form.is_valid(), form.errors
    result = allot_measurements(block, values, form.options())
    assert any(f.code == "override_exceeds_difference" for f in result.findings)
    markers = [m for m in previews.preview_markers(block, result) if m[1] == "waist"]
    fixed_panel = block.seams[side].front_panel
    assert (fixed_panel, "waist", "fixed by hand") in markers
    assert not [m for m in markers if "_" in m[2]]  # words, never codes

    pattern = previews.altered_for(block, result)
    fig, labels = build_figure(block, result.alteration(block), markers, "in", pattern=pattern)
    words = [t for t in fig.axes[0].texts if (t.get_gid() or "").startswith("finding-marker-label")]
    waist_y = pattern.level_y["waist"]
    label_height = SHIFT_FONT_PT / 72 * 80.0  # 9 pt at 80 mm of pattern to the figure inch
    hanging = [lb for lb in labels if lb.va == "top" and abs(lb.y - (waist_y + 1.5)) < 1e-6]
    assert hanging and words
    for text in words:
        assert text.get_position()[1] >= max(lb.y for lb in hanging) + label_height  # below, not over, the amounts


def test_it_warns_before_importing_another_clients_fitting_file(fitter_client, plan, demo_atelier):
    from django.core.files.uploadedfile import SimpleUploadedFile

    from fittings.models import Client, Plan

    exported = fitter_client.get(reverse("fittings:revision_fitting_file", args=[plan.pk, 1])).content
    other = Client.objects.get(reference="WF-0101")
    url = reverse("fittings:fitting_import", args=[other.pk])
    before = Plan.objects.count()
    refused = fitter_client.post(url, {"file": SimpleUploadedFile("f.json", exported), "garment": "Copy"})
    html = refused.content.decode()
    assert refused.status_code == 400 and Plan.objects.count() == before
    assert f"This fitting file was made for client {plan.client.reference}, not WF-0101" in html
    assert 'name="other_client"' in html and 'value="Copy"' in html
    taken = fitter_client.post(
        url, {"file": SimpleUploadedFile("f.json", exported), "garment": "Copy", "other_client": "1"}
    )
    assert taken.status_code == 302 and Plan.objects.get(garment="Copy").client == other


@pytest.mark.parametrize(
    "content", [b'{"format": "atelier-fitting",', b"[" * 5000 + b"]" * 5000, b'{"measurements": 3}']
)
def test_it_says_plainly_that_a_broken_file_cannot_be_read(fitter_client, plan, content):
    from django.core.files.uploadedfile import SimpleUploadedFile

    response = fitter_client.post(
        reverse("fittings:fitting_import", args=[plan.client.pk]), {"file": SimpleUploadedFile("f.json", content)}
    )
    error = re.search(r'id="import-error">(.*?)</div>', response.content.decode(), re.S).group(1)
    assert response.status_code == 400
    assert "Export the fitting file again" in error
    for raw in ("Expecting", "char ", "line 1 column", "JSON:", "is not of type", "required property", "'"):
        assert raw not in error.replace("&#x27;", "'"), error


def test_it_gives_the_workroom_a_queue_of_issued_revisions_and_no_contacts_or_drafts(
    workroom_client, fitter_user, plan
):
    issued = plan_services.issue_revision(revision=selectors.latest_revision(plan), user=fitter_user)
    draft = plan_services.save_revision(
        plan=plan, options=selectors.revision_inputs(issued)[2], user=fitter_user, expected_version=plan.version
    )
    assert workroom_client.get(reverse("fittings:client_list"))["Location"] == reverse("fittings:workroom_queue")
    html = workroom_client.get(reverse("fittings:workroom_queue")).content.decode()
    assert f'href="{reverse("fittings:revision_detail", args=[plan.pk, issued.number])}"' in html
    assert f"revisions/{draft.number}/" not in html
    assert plan.client.contact not in html and "To cut" in html
    assert workroom_client.get(reverse("fittings:client_detail", args=[plan.client.pk])).status_code == 403
    refused = workroom_client.get(reverse("fittings:revision_detail", args=[plan.pk, draft.number]))
    assert refused.status_code == 403 and "is a draft" in refused.content.decode()
    printing = workroom_client.get(reverse("fittings:print_start", args=[plan.pk, draft.number]))
    assert printing.status_code == 403 and "once it is issued" in printing.content.decode()
    assert reverse("fittings:workroom_queue") in printing.content.decode()  # not a dead end
    # The live plan page (editable cells) sends the workroom to the issued revision, read-only.
    sent = workroom_client.get(reverse("fittings:plan_edit", args=[plan.pk]))
    assert sent.status_code == 302 and sent["Location"] == reverse(
        "fittings:revision_detail", args=[plan.pk, issued.number]
    )
    page = workroom_client.get(sent["Location"]).content.decode()
    assert "<input" not in re.search(r'id="edges-heading".*?</section>', page, re.S).group(0)
    assert plan.client.contact not in page


def test_it_reaches_admin_client_details_removal_and_the_way_back_by_tap(fitter_client, make_user, plan):
    from django.test import Client as BrowserClient

    owner_client = BrowserClient()
    # The admin is Django's: it opens for owners with staff rights (a superuser counts as owner).
    owner_client.force_login(make_user("owner", is_staff=True, is_superuser=True))
    client = plan.client
    owner_page = owner_client.get(reverse("fittings:client_detail", args=[client.pk])).content.decode()
    assert f'href="{reverse("admin:index")}"' in owner_page
    assert f'action="{reverse("fittings:client_delete", args=[client.pk])}"' in owner_page
    fitter_page = fitter_client.get(reverse("fittings:client_detail", args=[client.pk])).content.decode()
    assert f'href="{reverse("admin:index")}"' not in fitter_page and "client_delete" not in fitter_page
    edit = reverse("fittings:client_edit", args=[client.pk])
    assert f'href="{edit}"' in fitter_page
    saved = fitter_client.post(
        edit, {"reference": client.reference, "name": "Odalys Brenneman-Vey", "contact": "07700 900123"}
    )
    assert saved.status_code == 302
    client.refresh_from_db()
    assert (client.name, client.contact) == ("Odalys Brenneman-Vey", "07700 900123")
    from fittings.models import AuditEntry

    entry = AuditEntry.objects.filter(object_type="client", object_id=str(client.pk)).order_by("-id").first()
    assert entry.before["name"] != "Odalys Brenneman-Vey" and entry.after["name"] == "Odalys Brenneman-Vey"
    status = reverse("fittings:print_start", args=[plan.pk, 1])
    assert (
        f'href="{reverse("fittings:revision_detail", args=[plan.pk, 1])}"' in fitter_client.get(status).content.decode()
    )


def test_it_proofs_a_draft_without_issuing_it_with_draft_on_every_page(fitter_client, plan):
    import io

    import pypdf

    revision = selectors.latest_revision(plan)
    assert revision.status == "draft"
    page = fitter_client.get(reverse("fittings:revision_detail", args=[plan.pk, revision.number])).content.decode()
    url = reverse("fittings:revision_proof", args=[plan.pk, revision.number, "work-order"])
    assert f'href="{url}"' in page
    for document in ("work-order", "cutting-sheet"):
        response = fitter_client.get(reverse("fittings:revision_proof", args=[plan.pk, revision.number, document]))
        assert response.status_code == 200 and response["Content-Type"] == "application/pdf"
        pages = pypdf.PdfReader(io.BytesIO(response.content)).pages
        assert len(pages) >= 2 if document == "cutting-sheet" else len(pages) >= 1
        for number, sheet in enumerate(pages, 1):
            assert "DRAFT: not issued" in sheet.extract_text(), (document, number)
    revision.refresh_from_db()
    assert revision.status == "draft" and not revision.issued_at


def test_it_offers_a_reset_to_the_saved_revision_on_the_plan_page(fitter_client, plan):
    url = reverse("fittings:plan_edit", args=[plan.pk])
    html = fitter_client.get(url).content.decode()
    assert re.search(
        rf'<a class="button button-quiet" href="{url}" id="reset-to-saved">Reset to saved revision 1</a>', html
    )


def test_it_says_at_the_dot_why_a_seam_is_locked_at_a_level(fitter_client, plan):
    revision = selectors.latest_revision(plan)
    _, block, _ = selectors.revision_inputs(revision)
    seam, level = next((s, lv) for s in block.seams for lv in block.level_names if lv not in s.alterable_at)
    html = fitter_client.get(reverse("fittings:plan_edit", args=[plan.pk])).content.decode()
    where = LEVEL_LABELS[level].lower()
    assert re.search(
        rf'<details class="why"><summary aria-label="Not altered here. Why\?">·</summary><span class="why-text">'
        rf"Locked: the base pattern keeps the {re.escape(seam.name)} as drafted at the {re.escape(where)}; "
        rf"it (may move at the [^<]+|is never moved)\.</span></details>",
        html,
    )


def test_it_writes_the_measuring_hints_in_the_tapes_unit(fitter_client, reducing_client):
    html = fitter_client.get(reverse("fittings:session_new", args=[reducing_client.pk])).content.decode()
    hints = re.findall(r'<small class="how">([^<]*)</small>', html)
    assert hints and not [h for h in hints if re.search(r"\d\s?(mm|cm)\b", h)]  # the last session was in inches
    converted = fitter_client.post(
        reverse("fittings:session_convert", args=[reducing_client.pk]),
        {"typed_unit": "in", "unit": "cm"},
        headers={"HX-Request": "true"},
    ).content.decode()
    assert "10 cm below the waist" in converted
