"""The audit trail: every change to a client's records leaves one entry, and entries never change."""

import json
from decimal import Decimal

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile
from django.db import transaction
from django.urls import reverse

from fittings import audit
from fittings.models import AuditEntry, AuditLocked, Client, MeasurementSession, Plan
from fittings.services import clients as client_services
from tests.security.conftest import options_post

pytestmark = pytest.mark.django_db


def session_post(**values):
    return {"taken_on": "2026-11-30", "kind": "first", "unit": "cm", "done": "1", **values}


def newest():
    return AuditEntry.objects.order_by("-id").first()


def test_it_records_a_new_client_with_who_and_what(fitter_client, fitter_user):
    fitter_client.post(
        reverse("fittings:client_new"), {"reference": "AU-1", "name": "Rosalind Vey", "contact": "01632 960001"}
    )
    entry = AuditEntry.objects.get()
    client = Client.objects.get(reference="AU-1")
    assert (entry.user, entry.username, entry.action, entry.object_type, entry.object_id, entry.client_reference) == (
        fitter_user,
        fitter_user.username,
        "create",
        "client",
        str(client.pk),
        "AU-1",
    )
    assert entry.after["name"] == "Rosalind Vey" and entry.after["contact"] == "01632 960001"
    assert entry.before is None


def test_it_records_a_soft_delete_and_keeps_the_records(owner_client, owner_user, demo_atelier):
    client = Client.objects.get(reference="WF-0102")
    sessions = client.sessions.count()
    response = owner_client.post(reverse("fittings:client_delete", args=[client.pk]))
    assert response.status_code == 302
    client = Client.all_objects.get(pk=client.pk)
    assert client.is_deleted and client.deleted_at is not None
    assert MeasurementSession.objects.filter(client=client).count() == sessions == 2
    assert Plan.objects.filter(client=client).count() == 1
    assert not Client.objects.filter(pk=client.pk).exists()
    entry = newest()
    assert (entry.action, entry.object_type, entry.client_reference, entry.user) == (
        "delete",
        "client",
        "WF-0102",
        owner_user,
    )


def test_it_records_new_readings(fitter_client, demo_atelier):
    client = Client.objects.get(reference="WF-0101")
    fitter_client.post(
        reverse("fittings:session_new", args=[client.pk]), session_post(bust_girth="95.5", waist_girth="71")
    )
    entry = newest()
    session = MeasurementSession.objects.get(client=client, taken_on="2026-11-30")
    assert (entry.action, entry.object_type, entry.object_id) == ("create", "session", str(session.pk))
    assert entry.after["measurements_mm"] == {"bust_girth": "955.0000", "waist_girth": "710.0000"}


def test_it_keeps_the_readings_a_correction_replaced(fitter_client, demo_atelier):
    session = MeasurementSession.objects.get(client__reference="WF-0101")
    old = {m.code: str(m.value_mm) for m in session.measurements.all()}
    url = reverse("fittings:session_edit", args=[session.pk])
    response = fitter_client.post(url, session_post(bust_girth="99", version=session.version, notes="Re-measured"))
    assert response.status_code == 302
    entry = newest()
    assert (entry.action, entry.object_type, entry.object_id) == ("change", "session", str(session.pk))
    assert entry.before["measurements_mm"] == old
    assert entry.before["version"] == 1 and entry.after["version"] == 2
    assert entry.after["measurements_mm"] == {"bust_girth": "990.0000"}
    assert entry.after["notes"] == "Re-measured"
    # Every reading the first fitter entered can still be read back.
    assert len(entry.before["measurements_mm"]) == len(old) >= 5


def test_it_writes_nothing_for_a_refused_edit(fitter_client, demo_atelier):
    session = MeasurementSession.objects.get(client__reference="WF-0101")
    before = AuditEntry.objects.count()
    url = reverse("fittings:session_edit", args=[session.pk])
    assert fitter_client.post(url, session_post(bust_girth="99", version=session.version + 5)).status_code == 409
    assert fitter_client.post(url, session_post(bust_girth="abc", version=session.version)).status_code == 400
    assert AuditEntry.objects.count() == before


def test_it_records_each_step_of_a_plan(fitter_client, fitter_user, plan):
    start = newest()
    assert (start.action, start.object_type, start.object_id) == ("create", "plan", str(plan.pk))
    assert (
        fitter_client.post(
            reverse("fittings:plan_edit", args=[plan.pk]), options_post(plan, ease_waist="-5")
        ).status_code
        == 302
    )
    saved = newest()
    revision = plan.revisions.get(number=2)
    assert (saved.action, saved.object_type, saved.object_id) == ("create", "revision", str(revision.pk))
    assert saved.before == {"plan_version": 1} and saved.after["plan_version"] == 2
    assert fitter_client.post(reverse("fittings:revision_issue", args=[plan.pk, 2])).status_code == 302
    issued = newest()
    assert (issued.action, issued.object_id, issued.before, issued.after) == (
        "issue",
        str(revision.pk),
        {"status": "draft"},
        {"status": "issued"},
    )
    fitter_client.post(reverse("fittings:revision_issue", args=[plan.pk, 2]))  # again: nothing changes
    assert newest().pk == issued.pk
    pins = fitter_client.post(reverse("fittings:revision_pins", args=[plan.pk, 2]), {"pin-0-waist": "-1/4"})
    assert pins.status_code == 302
    pinned = newest()
    assert (pinned.action, pinned.object_type) == ("create", "pins")
    assert pinned.after["pins"][0]["amount_mm"] == str(Decimal("-6.3500"))
    plan.refresh_from_db()
    applied = fitter_client.post(reverse("fittings:revision_apply_pins", args=[plan.pk, 2]), {"version": plan.version})
    assert applied.status_code == 302
    assert "made from the pins on revision 2" in newest().summary
    assert {e.client_reference for e in AuditEntry.objects.filter(pk__gte=start.pk)} == {"WF-0102"}
    assert {e.user for e in AuditEntry.objects.filter(pk__gte=start.pk)} == {fitter_user}


def test_it_records_an_import(fitter_client, plan):
    exported = fitter_client.get(reverse("fittings:revision_fitting_file", args=[plan.pk, 1])).content
    response = fitter_client.post(
        reverse("fittings:fitting_import", args=[plan.client.pk]),
        {"file": SimpleUploadedFile("f.json", exported), "garment": "Copy"},
    )
    assert response.status_code == 302
    entry = newest()
    copy = Plan.objects.get(garment="Copy")
    assert (entry.action, entry.object_type, entry.object_id) == ("import", "plan", str(copy.pk))
    assert entry.after["session"] == copy.session_id
    assert set(entry.after["measurements_mm"]) == set(json.loads(exported)["measurements"])


def test_it_keeps_the_change_and_its_entry_together(fitter_user, monkeypatch):
    def broken(**kwargs):
        raise RuntimeError("the disk is full")

    monkeypatch.setattr(audit, "record", broken)
    with pytest.raises(RuntimeError):
        client_services.create_client(user=fitter_user, reference="AU-2", name="Ottilie Grange")
    assert not Client.all_objects.filter(reference="AU-2").exists()


def test_it_refuses_to_change_or_delete_an_entry(fitter_user, plan):
    entry = newest()
    entry.summary = "Nothing happened"
    with pytest.raises(AuditLocked):
        entry.save()
    with pytest.raises(AuditLocked):
        entry.delete()
    with pytest.raises(AuditLocked):
        AuditEntry.objects.filter(pk=entry.pk).update(summary="Nothing happened")
    with pytest.raises(AuditLocked):
        AuditEntry.objects.all().delete()
    with pytest.raises(AuditLocked), transaction.atomic():
        AuditEntry.objects.bulk_update([entry], ["summary"])
    assert AuditEntry.objects.get(pk=entry.pk).summary.startswith("Plan “Daily corset” started")


def test_it_names_the_command_when_no_one_is_signed_in(db):
    entry = audit.record(
        user=None,
        actor="manage.py erase_client (run as atelier)",
        action=audit.ERASE,
        object_type="client",
        object_id=7,
        summary="A client was erased on request.",
    )
    assert (entry.user, entry.username, entry.object_id) == (None, "manage.py erase_client (run as atelier)", "7")


# --- the admin writes only through the services --------------------------------------------------


@pytest.fixture
def superuser_client(client, make_user, demo_atelier):
    user = make_user(None, username="owner-admin", is_staff=True, is_superuser=True)
    client.force_login(user)
    return client


def _action(superuser_client, action, *clients):
    return superuser_client.post(
        reverse("admin:fittings_client_changelist"),
        {"action": action, "_selected_action": [str(c.pk) for c in clients], "index": "0"},
    )


def test_it_audits_removing_and_restoring_clients_from_the_admin(superuser_client):
    client = Client.objects.get(reference="WF-0101")
    assert _action(superuser_client, "mark_deleted", client).status_code == 302
    client.refresh_from_db()
    assert client.is_deleted
    assert (newest().action, newest().username, newest().client_reference) == ("delete", "owner-admin", "WF-0101")
    assert _action(superuser_client, "restore", client).status_code == 302
    client.refresh_from_db()
    assert not client.is_deleted
    assert (newest().action, newest().client_reference) == ("change", "WF-0101")
    assert "restored" in newest().summary


def test_it_lets_no_one_change_a_reading_or_a_client_in_the_admin(superuser_client):
    """A change there would pass the audit trail and the sessions' version check; the app does both."""
    session = MeasurementSession.objects.filter(client__reference="WF-0101").first()
    reading = session.measurements.get(code="waist_girth")
    client = session.client
    before = (reading.value_mm, session.version, client.name, AuditEntry.objects.count())
    pages = [
        (
            "admin:fittings_measurement_change",
            reading.pk,
            {"session": session.pk, "code": "waist_girth", "value_mm": "1"},
        ),
        ("admin:fittings_measurementsession_change", session.pk, {"notes": "changed"}),
        ("admin:fittings_client_change", client.pk, {"reference": client.reference, "name": "Someone Else"}),
    ]
    for name, pk, data in pages:
        response = superuser_client.post(reverse(name, args=[pk]), data)
        assert response.status_code == 403, name
        assert superuser_client.get(reverse(name, args=[pk])).status_code == 200  # still readable
    for name in ("admin:fittings_measurement_add", "admin:fittings_client_add", "admin:fittings_plan_add"):
        assert superuser_client.get(reverse(name)).status_code == 403, name
    reading.refresh_from_db(), session.refresh_from_db(), client.refresh_from_db()
    assert (reading.value_mm, session.version, client.name, AuditEntry.objects.count()) == before
