"""The pattern screens: list, detail, a new block typed in, the live drawing, editing and versions, grading."""

import dataclasses

import pytest
from django.urls import reverse

from fittings.services import plans as plan_services
from patterns import demo
from patterns.core.block import FRONT, Level
from patterns.models import BasePattern, SizeRun
from patterns.selectors import block_for
from patterns.services import save_block
from tests.patterns.block_post import block_post, tape_post

pytestmark = pytest.mark.django_db


def _new_block():
    """An invented four-panel underbust corset, different from the demo's."""
    base = demo.bodice_block()
    return dataclasses.replace(
        base,
        name="Wrenfield underbust, four panels",
        size="38",
        garment="underbust corset",
        centre_front="busk",
        centre_back="laced",
    )


def _counts():
    return (BasePattern.objects.count(), SizeRun.objects.count())


def test_it_lists_patterns_by_size_run_for_every_role(demo_atelier, client, make_user):
    for role in ("workroom", "fitter", "owner"):
        client.force_login(make_user(role))
        page = client.get(reverse("patterns:pattern_list")).content.decode()
        assert "Overbust corset, six panels" in page and "Size 10" in page
        assert ("Type in a new block" in page) == (role != "workroom")


def test_it_shows_a_pattern_with_its_widths_and_drawing(demo_atelier, fitter_client):
    pattern = BasePattern.objects.get(name__startswith="Overbust", size_label="10")
    page = fitter_client.get(reverse("patterns:pattern_detail", args=[pattern.pk])).content.decode()
    block = block_for(pattern)
    assert f"{block.panels[0].width('waist') / 10:.1f}" in page
    assert "bound top bottom" in page
    drawing = fitter_client.get(reverse("patterns:pattern_drawing", args=[pattern.pk]))
    assert drawing["Content-Type"] == "image/svg+xml" and b"<svg" in drawing.content


def test_it_saves_a_block_typed_by_widths(fitter_client, db):
    block = _new_block()
    response = fitter_client.post(reverse("patterns:block_new"), block_post(block, by_widths=True))
    assert response.status_code == 302
    saved = BasePattern.objects.get(name=block.name)
    stored = block_for(saved)
    assert [p.width(lv) for p in stored.panels for lv in stored.level_names] == pytest.approx(
        [p.width(lv) for p in block.panels for lv in block.level_names], abs=1e-4
    )
    assert stored.level_names == block.level_names and stored.seams[0].alterable_at == block.seams[0].alterable_at
    assert saved.version == 1 and saved.previous is None


def test_it_saves_a_block_typed_by_stitch_line_places_exactly(fitter_client, db):
    block = demo.corset_block("12")
    block = dataclasses.replace(block, name="Typed corset")
    assert fitter_client.post(reverse("patterns:block_new"), block_post(block)).status_code == 302
    # As stored (to 1/10 000 mm), the typed block is the demo block itself.
    stored = block_for(save_block(dataclasses.replace(block, name="Stored corset", size_order=0)))
    assert block_for(BasePattern.objects.get(name="Typed corset")) == dataclasses.replace(stored, name="Typed corset")


def test_it_answers_the_live_drawing_with_a_fragment_and_an_svg(fitter_client, db):
    data = block_post(_new_block())
    fragment = fitter_client.post(reverse("patterns:block_draw"), data, HTTP_HX_REQUEST="true")
    assert fragment.status_code == 200
    text = fragment.content.decode()
    assert text.lstrip().startswith('<div id="block-drawing"') and "<html" not in text
    src = text.split('<img src="')[1].split('"')[0]
    svg = fitter_client.get(src)
    assert svg.status_code == 200 and svg["Content-Type"] == "image/svg+xml" and b"Centre front" in svg.content
    page = fitter_client.post(reverse("patterns:block_draw"), data)
    assert page.status_code == 200 and b"<html" in page.content and b'id="block-form"' in page.content
    assert BasePattern.objects.count() == 0


def test_it_says_what_is_still_to_type_while_the_block_is_half_typed(fitter_client, db):
    data = block_post(_new_block(), p2_waist_w="", p3_bust_w="")
    text = fitter_client.post(reverse("patterns:block_draw"), data, HTTP_HX_REQUEST="true").content.decode()
    assert "Still to type before the block can be drawn: 2 values." in text


def test_it_puts_impossible_values_into_words_on_the_drawing(fitter_client, db):
    data = block_post(_new_block(), p2_waist_w="-1.5")
    text = fitter_client.post(reverse("patterns:block_draw"), data, HTTP_HX_REQUEST="true").content.decode()
    assert "Side front is -1.5 cm wide at the waist: a width between stitch lines must be more than nothing." in text
    assert "<img" not in text


@pytest.mark.parametrize(
    "changes, words",
    [
        ({"p2_waist_w": "-1.5"}, "Side front is -1.5 cm wide at the waist"),
        ({"p3_top_l": "60"}, "The top and bottom edges of Side back cross"),
        ({"level_waist": "90"}, "crosses none of the panels"),
        ({"p1_waist_w": "abc"}, "not a length in centimetres"),
        ({"name": ""}, "This field is required"),
        ({"s1_moves": ["hip"]}, "Select a valid choice"),
        ({"p2_grain": "80"}, "lies outside the panel"),
    ],
)
def test_it_refuses_bad_values_with_words_and_saves_nothing(fitter_client, db, changes, words):
    response = fitter_client.post(reverse("patterns:block_new"), block_post(_new_block(), **changes))
    assert response.status_code == 400
    assert words in response.content.decode()
    assert _counts() == (0, 0)


def test_it_refuses_a_second_block_of_the_same_name_and_size(fitter_client, db):
    block = _new_block()
    save_block(block)
    response = fitter_client.post(reverse("patterns:block_new"), block_post(block))
    assert response.status_code == 400 and "There is already a base pattern" in response.content.decode()
    assert BasePattern.objects.count() == 1


def test_it_changes_the_layout_keeping_what_was_typed(fitter_client, db):
    data = block_post(_new_block(), panel_count="5", layout="1")
    page = fitter_client.post(reverse("patterns:block_new"), data).content.decode()
    assert 'name="p5_name"' in page and "Side front" in page
    assert BasePattern.objects.count() == 0


def test_it_lets_the_workroom_read_but_not_edit(demo_atelier, workroom_client):
    pattern = BasePattern.objects.filter(is_active=True).first()
    assert workroom_client.get(reverse("patterns:pattern_detail", args=[pattern.pk])).status_code == 200
    assert workroom_client.get(reverse("patterns:block_edit", args=[pattern.pk])).status_code == 403
    assert workroom_client.post(reverse("patterns:block_new"), block_post(_new_block())).status_code == 403
    assert not BasePattern.objects.filter(name=_new_block().name).exists()


# --- editing and versions -------------------------------------------------------------------


def _plan_on(pattern, client_ref="WF-0101"):
    from django.contrib.auth import get_user_model

    from fittings.models import Client

    client = Client.objects.get(reference=client_ref)
    session = client.sessions.first()
    user = get_user_model().objects.first()
    return plan_services.start_plan(client=client, session=session, pattern=pattern, garment="Test corset", user=user)


def test_it_edits_an_unused_block_in_place(fitter_client, db):
    pattern = save_block(_new_block())
    data = block_post(block_for(pattern), p2_waist_w="9.0")
    assert fitter_client.post(reverse("patterns:block_edit", args=[pattern.pk]), data).status_code == 302
    pattern.refresh_from_db()
    assert pattern.version == 1 and BasePattern.objects.count() == 1
    assert block_for(pattern).panels[1].width("waist") == pytest.approx(90.0)


def test_it_keeps_old_plans_on_the_old_version_when_a_used_block_is_edited(demo_atelier, fitter_client):
    pattern = BasePattern.objects.get(name__startswith="Overbust", size_label="10")
    before = block_for(pattern)
    plan = _plan_on(pattern)
    first_inputs = plan.revisions.get(number=1).inputs["pattern"]
    wider = f"{(before.panels[2].width('waist') + 6) / 10:.2f}"
    response = fitter_client.post(
        reverse("patterns:block_edit", args=[pattern.pk]), block_post(before, p3_waist_w=wider)
    )
    assert response.status_code == 302
    new = BasePattern.objects.get(previous=pattern)
    pattern.refresh_from_db()
    assert (new.version, new.is_active, pattern.is_active) == (2, True, False)
    assert new.size_run_id == pattern.size_run_id
    assert block_for(new).panels[2].width("waist") == pytest.approx(before.panels[2].width("waist") + 6)
    # The plan stays on version 1: its next revision is worked out on the old shapes.
    plan.refresh_from_db()
    assert plan.base_pattern_id == pattern.pk
    revision = plan_services.save_revision(
        plan=plan,
        options=plan_services.revision_inputs(plan.revisions.get(number=1))[2],
        user=None,
        expected_version=plan.version,
    )
    assert type(revision).objects.get(pk=revision.pk).inputs["pattern"] == first_inputs
    assert block_for(pattern) == before
    # New plans are offered the new version only.
    offered = list(BasePattern.objects.filter(is_active=True, name=pattern.name, size_label="10"))
    assert offered == [new]
    assert fitter_client.get(reverse("patterns:pattern_detail", args=[pattern.pk])).status_code == 200


def test_it_makes_no_version_when_nothing_changed(demo_atelier, fitter_client):
    pattern = BasePattern.objects.get(name__startswith="Overbust", size_label="12")
    _plan_on(pattern)
    response = fitter_client.post(reverse("patterns:block_edit", args=[pattern.pk]), block_post(block_for(pattern)))
    assert response.status_code == 302
    assert not BasePattern.objects.filter(previous=pattern).exists()


def test_it_refuses_a_bad_edit_and_leaves_the_block_and_its_plans_alone(demo_atelier, fitter_client):
    pattern = BasePattern.objects.get(name__startswith="Overbust", size_label="10")
    before = block_for(pattern)
    count = BasePattern.objects.count()
    response = fitter_client.post(
        reverse("patterns:block_edit", args=[pattern.pk]), block_post(before, p3_waist_w="-2")
    )
    assert response.status_code == 400
    assert BasePattern.objects.count() == count and block_for(pattern) == before


# --- grading -------------------------------------------------------------------------------


def test_it_grades_a_size_run_and_the_size_suggestion_uses_it(demo_atelier, fitter_client):
    pattern = save_block(_new_block())
    url = reverse("patterns:pattern_grade", args=[pattern.pk])
    data = {
        "run_name": "Underbust run",
        "sizes": "34, 36, 38, 40, 42",
        "unit": "cm",
        **{f"girth_{lv}": "4" for lv in ("bust", "underbust", "waist", "abdomen")},
    }
    runs = SizeRun.objects.count()
    shown = fitter_client.post(url, data)
    assert shown.status_code == 200 and SizeRun.objects.count() == runs
    text = shown.content.decode()
    base = block_for(pattern)
    assert f"{(base.girth('bust') + 80) / 10:.1f}" in text  # size 42: two steps of 4 cm
    saved = fitter_client.post(url, {**data, "save": "1"})
    assert saved.status_code == 302
    run = SizeRun.objects.get(name="Underbust run")
    members = {p.size_label: block_for(p) for p in run.patterns.filter(is_active=True)}
    assert sorted(members) == ["34", "36", "38", "40", "42"]
    for size, steps in (("34", -2), ("40", 1)):
        assert members[size].girth("waist") - base.girth("waist") == pytest.approx(40.0 * steps, abs=0.2)
    # The size suggestion ranks the run's sizes: a client 4 cm bigger than size 38 everywhere is closest to 40.
    from patterns.core.allot import Body, PlanOptions
    from patterns.core.sizing import suggest_size

    body = Body(girths={lv: members["40"].girth(lv) for lv in members["40"].level_names})
    best = suggest_size(list(members.values()), body, PlanOptions(ease={}, lacing_gap_mm=0.0))[0]
    assert best.block.size == "40"


@pytest.mark.parametrize(
    "changes, words",
    [
        ({"sizes": "36, 40"}, "must be one of the sizes"),
        ({"sizes": "38"}, "at least two sizes"),
        ({"sizes": "36, 38, 36"}, "appears twice"),
        ({"girth_waist": "lots"}, "not a length"),
        ({"girth_waist": "-400"}, "girth must be a positive length"),
    ],
)
def test_it_refuses_a_bad_grading_and_saves_nothing(fitter_client, db, changes, words):
    pattern = save_block(_new_block())
    data = {
        "run_name": "R",
        "sizes": "36, 38, 40",
        "unit": "cm",
        **{f"girth_{lv}": "4" for lv in ("bust", "underbust", "waist", "abdomen")},
        "save": "1",
        **changes,
    }
    response = fitter_client.post(reverse("patterns:pattern_grade", args=[pattern.pk]), data)
    assert response.status_code == 400 and words in response.content.decode()
    assert _counts() == (1, 0)


# --- the tape entry ----------------------------------------------------------------------


def _tape_answers(block):
    """What a fitter reads off ``block`` with a tape (upright lines), as the tape form's fields, in cm."""
    from patterns.core.units import format_cm

    levels = block.levels
    ys = [lv.y for lv in levels]
    tops = [block.panels[0].top_left.y] + [p.top_right.y for p in block.panels]
    bottoms = [block.panels[0].bottom_left.y] + [p.bottom_right.y for p in block.panels]
    out = {}
    for k, (top, bottom) in enumerate(zip(tops, bottoms)):
        lengths = [ys[0] - top, *[b - a for a, b in zip(ys, ys[1:])], bottom - ys[-1]]
        for li, length in enumerate(lengths):
            out[f"down{k}_{li}"] = format_cm(length, places=2)
    for lv in levels:
        for i, p in enumerate(block.panels):
            out[f"w_{lv.name}_{i}"] = format_cm(p.width(lv.name), places=2)
    for j, seam in enumerate(block.seams, start=1):
        out[f"s{j}_name"], out[f"s{j}_kind"] = seam.name, seam.kind
        out[f"s{j}_moves"] = [lv.name for lv in levels if lv.name in seam.alterable_at]
    return out


def _card_block():
    """A three-panel card block, tops and bottoms shared at each seam as on a card pattern."""
    from patterns.core.drafting import BlockDraft, PanelDraft, SeamDraft, build_block

    panels = tuple(
        PanelDraft(name, side, {"waist": waist, "hip": hip}, top=top, bottom=bottom, top_bound=True, bottom_bound=True)
        for name, side, waist, hip, top, bottom in (
            ("Front", FRONT, 120.0, 150.0, (0.0, 10.0), (260.0, 255.0)),
            ("Side", FRONT, 100.0, 130.0, (10.0, 25.0), (255.0, 255.0)),
            ("Back", "back", 110.0, 135.0, (25.0, 15.0), (255.0, 265.0)),
        )
    )
    seams = (
        SeamDraft("Front seam", "princess", frozenset({"waist", "hip"})),
        SeamDraft("Side seam", "side", frozenset({"waist", "hip"})),
    )
    draft = BlockDraft(
        name="Card waist cincher",
        size="12",
        garment="underbust corset",
        levels=(Level("waist", 90.0), Level("hip", 230.0)),
        panels=panels,
        seams=seams,
    )
    return build_block(draft).block


def test_it_reads_a_card_pattern_step_by_step_into_the_same_block_as_the_form(fitter_client, db):
    block = _card_block()
    url = reverse("patterns:block_measure")
    assert "Levels marked on the card" in fitter_client.get(url).content.decode()
    answers = _tape_answers(block)
    data = tape_post(
        name=block.name, size_label=block.size, garment=block.garment, panel_names="Front\nSide\nBack (back)"
    )
    titles = []
    for _ in range(6):
        page = fitter_client.post(url, data)
        assert page.status_code == 200, page.content.decode()[:3000]
        text = page.content.decode()
        titles.append(text.split("<strong>")[1].split("</strong>")[0])
        if "Save the block" in text:
            break
        step = int(text.split('name="step" value="')[1].split('"')[0])
        shown = [name for name in answers if f'name="{name}"' in text and f'type="hidden" name="{name}"' not in text]
        data = {**data, **{k: answers[k] for k in shown}, "step": str(step)}
    assert titles == ["The top edge", "At the waist", "At the hip", "The bottom edge", "The seams", "Check and save"]
    assert BasePattern.objects.count() == 0
    saved = fitter_client.post(
        url, {**data, "step": str(int(text.split('name="step" value="')[1].split('"')[0])), "save": "1"}
    )
    assert saved.status_code == 302
    stored = block_for(BasePattern.objects.get(name=block.name))
    # The same block the form makes from the same panels (widths laid out alike), to 1/100 mm as typed.
    assert stored.level_names == block.level_names
    for got, want in zip(stored.panels, block.panels):
        assert got.name == want.name and got.side == want.side and got.top_bound and got.bottom_bound
        for lv in block.level_names:
            assert got.left[lv] == pytest.approx(want.left[lv], abs=0.01)
            assert got.right[lv] == pytest.approx(want.right[lv], abs=0.01)
        for corner in ("top_left", "top_right", "bottom_left", "bottom_right"):
            assert getattr(got, corner).y == pytest.approx(getattr(want, corner).y, abs=0.01)
    assert [s.alterable_at for s in stored.seams] == [s.alterable_at for s in block.seams]


def test_it_asks_a_tape_step_again_when_a_reading_is_wrong(fitter_client, db):
    url = reverse("patterns:block_measure")
    data = tape_post(name="Card", bound=None, step="1", down0_0="2", down1_0="lots", down2_0="3")
    page = fitter_client.post(url, data)
    text = page.content.decode()
    assert page.status_code == 400 and "<strong>The top edge</strong>" in text and "not a length" in text
    assert BasePattern.objects.count() == 0


def test_it_imports_a_fitting_file_made_on_an_older_version_against_that_version(demo_atelier, fitter_user):
    import json

    from fittings.models import Client
    from patterns.services import edit_block

    pattern = BasePattern.objects.get(name__startswith="Overbust", size_label="10")
    plan = _plan_on(pattern)
    text = json.dumps(plan.revisions.get(number=1).inputs)
    before = block_for(pattern)
    wider = dataclasses.replace(
        before,
        panels=tuple(
            dataclasses.replace(p, right={**p.right, "waist": p.right["waist"] + 5}) if i == 2 else p
            for i, p in enumerate(before.panels)
        ),
    )
    new = edit_block(pattern, wider)
    assert new.pk != pattern.pk
    imported = plan_services.import_fitting(client=Client.objects.get(reference="WF-0103"), text=text, user=fitter_user)
    assert imported.base_pattern_id == pattern.pk


def test_it_draws_an_edit_without_javascript_and_keeps_saving_to_the_edit(fitter_client, db):
    pattern = save_block(_new_block())
    data = {**block_post(block_for(pattern)), "editing": str(pattern.pk)}
    page = fitter_client.post(reverse("patterns:block_draw"), data)
    text = page.content.decode()
    assert page.status_code == 200 and "<img" in text
    assert f'action="{reverse("patterns:block_edit", args=[pattern.pk])}"' in text
    bad = fitter_client.post(reverse("patterns:block_draw"), {**data, "editing": "²"})
    assert bad.status_code == 200 and f'action="{reverse("patterns:block_new")}"' in bad.content.decode()


def test_it_offers_the_graded_sizes_to_the_size_suggestion_of_a_plan(demo_atelier, fitter_client):
    from fittings.models import Client
    from patterns.selectors import active_patterns

    pattern = save_block(_new_block())
    data = {
        "run_name": "Underbust run",
        "sizes": "34, 36, 38, 40, 42",
        "unit": "cm",
        "save": "1",
        **{f"girth_{lv}": "4" for lv in ("bust", "underbust", "waist", "abdomen")},
    }
    assert fitter_client.post(reverse("patterns:pattern_grade", args=[pattern.pk]), data).status_code == 302
    session = Client.objects.get(reference="WF-0103").sessions.first()
    from fittings.selectors import suggestions_for_session

    suggestions = suggestions_for_session(session, active_patterns())
    graded = [s for s in suggestions if s.label.startswith(pattern.name)]
    assert len(graded) == 5
    assert "needs the least alteration" in graded[0].reason
    page = fitter_client.get(reverse("fittings:plan_new", args=[session.pk])).content.decode()
    assert f"{pattern.name}, size 42" in page


def test_it_sends_an_edit_of_a_replaced_version_to_the_latest(demo_atelier, fitter_client):
    from patterns.services import edit_block

    pattern = BasePattern.objects.get(name__startswith="Overbust", size_label="14")
    _plan_on(pattern)
    block = block_for(pattern)
    new = edit_block(pattern, dataclasses.replace(block, seam_allowance_mm=12.0))
    response = fitter_client.get(reverse("patterns:block_edit", args=[pattern.pk]))
    assert response.status_code == 302 and response["Location"] == reverse("patterns:block_edit", args=[new.pk])
    page = fitter_client.get(reverse("patterns:pattern_detail", args=[pattern.pk])).content.decode()
    assert "This version was replaced by a later one" in page and "Edit the block" not in page


def test_it_keeps_an_unticked_bound_edge_unticked_when_the_layout_changes(fitter_client, db):
    data = block_post(_new_block(), panel_count="5", layout="1")
    data.pop("p2_top_bound", None)
    page = fitter_client.post(reverse("patterns:block_new"), data).content.decode()
    assert 'name="p2_top_bound" id="id_p2_top_bound" checked' not in page
    assert 'name="p2_top_bound"' in page
    assert 'name="p5_top_bound" id="id_p5_top_bound" checked' in page
