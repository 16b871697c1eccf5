"""Nothing a fitter enters is lost: two tablets editing at once, append-only revisions, soft deletes."""

import re
from decimal import Decimal

import pytest
from django.db import transaction
from django.db.models import ProtectedError
from django.test import Client as BrowserClient
from django.urls import reverse

from fittings import selectors
from fittings.models import AuditEntry, Client, MeasurementSession, PlanRevision, RevisionLocked
from tests.security.conftest import form_fields

pytestmark = pytest.mark.django_db


@pytest.fixture
def two_tablets(make_user):
    a, b = BrowserClient(), BrowserClient()
    a.force_login(make_user("fitter", username="ada"))
    b.force_login(make_user("fitter", username="bea"))
    return a, b


def input_value(html, name):
    match = re.search(rf'<input[^>]*name="{re.escape(name)}"[^>]*value="([^"]*)"', html) or re.search(
        rf'<input[^>]*value="([^"]*)"[^>]*name="{re.escape(name)}"', html
    )
    return match and match[1]


def test_it_refuses_the_later_of_two_session_edits_and_shows_its_readings_back(two_tablets, demo_atelier):
    a, b = two_tablets
    session = MeasurementSession.objects.get(client__reference="WF-0101")
    original = {m.code: m.value_mm for m in session.measurements.all()}
    url = reverse("fittings:session_edit", args=[session.pk])
    form_a = form_fields(a.get(url).text, "session-form")
    form_b = form_fields(b.get(url).text, "session-form")
    assert form_a["version"] == form_b["version"] == "1"

    saved = a.post(url, {**form_a, "bust_girth": "96", "done": ""})
    assert saved.status_code == 302
    refused = b.post(url, {**form_b, "bust_girth": "97.5", "waist_girth": "70.5", "done": ""})
    assert refused.status_code == 409
    assert "Someone else saved these measurements" in refused.text
    # The refused readings are in the form again, to be entered once more after a reload.
    assert input_value(refused.text, "bust_girth") == "97.5"
    assert input_value(refused.text, "waist_girth") == "70.5"
    # The first save is what is stored; the readings it replaced are in the audit trail.
    session.refresh_from_db()
    stored = {m.code: m.value_mm for m in session.measurements.all()}
    assert stored["bust_girth"] == Decimal("960.0000") and session.version == 2
    assert stored["waist_girth"] == original["waist_girth"]
    change = AuditEntry.objects.get(action="change", object_id=str(session.pk))
    assert change.username == "ada"
    assert change.before["measurements_mm"] == {code: str(mm) for code, mm in original.items()}

    # Bea reloads, sees Ada's readings, and enters hers again: both versions are kept.
    again = form_fields(b.get(url).text, "session-form")
    assert again["version"] == "2" and again["bust_girth"] == "96"  # as Ada typed it
    assert b.post(url, {**again, "bust_girth": "97.5", "done": ""}).status_code == 302
    changes = AuditEntry.objects.filter(action="change", object_id=str(session.pk)).order_by("id")
    assert [(c.username, c.before["measurements_mm"]["bust_girth"]) for c in changes] == [
        ("ada", str(original["bust_girth"])),
        ("bea", "960.0000"),
    ]


def test_it_refuses_the_later_of_two_plan_saves_and_keeps_both_sets_of_values(two_tablets, plan):
    a, b = two_tablets
    url = reverse("fittings:plan_edit", args=[plan.pk])
    form_a = form_fields(a.get(url).text, "plan-form")
    form_b = form_fields(b.get(url).text, "plan-form")
    assert form_a["version"] == form_b["version"] == str(plan.version)

    assert a.post(url, {**form_a, "ease_waist": "-5"}).status_code == 302
    refused = b.post(url, {**form_b, "ease_waist": "-3", "lacing_gap": "2"})
    assert refused.status_code == 409
    assert "Someone saved this plan while you were working on it" in refused.text
    assert "See their revision 2" in refused.text
    assert input_value(refused.text, "ease_waist") == "-3"
    assert input_value(refused.text, "lacing_gap") == "2"

    revisions = list(plan.revisions.order_by("number"))
    assert [(r.number, r.author.username if r.author else None) for r in revisions] == [
        (1, revisions[0].author.username),
        (2, "ada"),
    ]
    assert revisions[1].inputs["plan"]["ease"]["waist"] == pytest.approx(-127.0)  # -5 in: this plan is in inches

    # Bea reloads and saves her values on top: a third revision, Ada's second stays as it was.
    again = form_fields(b.get(url).text, "plan-form")
    assert b.post(url, {**again, "ease_waist": "-3", "lacing_gap": "2"}).status_code == 302
    third = plan.revisions.get(number=3)
    assert third.based_on.number == 2 and third.author.username == "bea"
    assert third.inputs["plan"]["ease"]["waist"] == pytest.approx(-76.2)
    assert plan.revisions.get(number=2).inputs == revisions[1].inputs


def test_it_refuses_pins_applied_from_a_stale_page(two_tablets, plan):
    a, b = two_tablets
    pins_url = reverse("fittings:revision_pins", args=[plan.pk, 1])
    assert a.post(pins_url, {"pin-0-waist": "-1/4"}).status_code == 302
    apply_url = reverse("fittings:revision_apply_pins", args=[plan.pk, 1])
    version = plan.version
    assert a.post(apply_url, {"version": version}).status_code == 302
    stale = b.post(apply_url, {"version": version}, follow=True)
    assert "Someone saved this plan while you were recording pins" in stale.text
    assert plan.revisions.count() == 2


def test_it_refuses_every_way_of_changing_a_saved_revision(plan):
    revision = plan.revisions.get()
    revision.inputs = {**revision.inputs, "unit": "cm"}
    with pytest.raises(RevisionLocked), transaction.atomic():
        PlanRevision.objects.bulk_update([revision], ["inputs"])
    with pytest.raises(RevisionLocked), transaction.atomic():
        PlanRevision.objects.update_or_create(pk=revision.pk, defaults={"result": {}})
    with pytest.raises(RevisionLocked):
        PlanRevision.objects.all().delete()
    assert PlanRevision.objects.get(pk=revision.pk).inputs["unit"] == "in"


def test_it_keeps_a_client_with_plans_from_being_deleted_outright(plan):
    with pytest.raises(ProtectedError), transaction.atomic():
        Client.all_objects.get(pk=plan.client_id).delete()
    assert Client.objects.filter(pk=plan.client_id).exists()
    assert plan.revisions.count() == 1


def test_it_deletes_a_client_softly_for_the_owner_only(client, make_user, demo_atelier):
    hester = Client.objects.get(reference="WF-0101")
    url = reverse("fittings:client_delete", args=[hester.pk])
    client.force_login(make_user("fitter"))
    assert client.post(url).status_code == 403
    client.force_login(make_user("owner"))
    assert client.post(url).status_code == 302
    listing = client.get(reverse("fittings:client_list")).text
    assert ">WF-0101</a>" not in listing and ">WF-0102</a>" in listing
    assert client.get(reverse("fittings:client_detail", args=[hester.pk])).status_code == 404
    kept = Client.all_objects.get(pk=hester.pk)
    assert kept.is_deleted and kept.sessions.count() == 1 and kept.plans.get().revisions.count() == 1


def test_it_can_still_reach_every_revision_after_many_saves(fitter_client, plan):
    from tests.security.conftest import options_post

    for ease in ("-1", "-2", "-3"):
        plan.refresh_from_db()
        assert (
            fitter_client.post(
                reverse("fittings:plan_edit", args=[plan.pk]), options_post(plan, ease_waist=ease)
            ).status_code
            == 302
        )
    numbers = list(plan.revisions.order_by("number").values_list("number", flat=True))
    assert numbers == [1, 2, 3, 4]
    for number in numbers:
        assert fitter_client.get(reverse("fittings:revision_detail", args=[plan.pk, number])).status_code == 200
    waists = [r.inputs["plan"]["ease"]["waist"] for r in plan.revisions.order_by("number")[1:]]
    assert waists == pytest.approx([-25.4, -50.8, -76.2])  # 1, 2 and 3 in: the plan is kept in inches
    assert selectors.latest_revision(plan).number == 4
