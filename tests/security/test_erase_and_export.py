"""A client's right to a copy of their records, and to have them erased for good."""

import json
import stat
import zipfile
from decimal import Decimal

import pytest
from django.apps import apps
from django.contrib.admin.models import CHANGE, LogEntry
from django.contrib.contenttypes.models import ContentType
from django.core.management import call_command
from django.core.management.base import CommandError
from django.db import connection

from fittings.models import (
    AuditEntry,
    Client,
    Measurement,
    MeasurementSession,
    Photo,
    PinAdjustment,
    Plan,
    PlanRevision,
    PrintJob,
)
from fittings.services.client_records import ERASED_SUMMARY
from tests.security.conftest import private_files, snapshot, table_rows

pytestmark = pytest.mark.django_db

# Everything that names WF-0102 in the demo (patterns/demo.py): reference, name, telephone, notes.
HER = ("WF-0102", "Odalys", "Brenneman", "7946 0102", "strong waist reduction")


def every_text_in_the_database() -> str:
    return "\n".join(repr(table_rows(m)) for m in apps.get_models(include_auto_created=True))


@pytest.fixture
def her(world, owner_user):
    """WF-0102 with a photo, a printed work order, pins, audit entries and an admin history line."""
    LogEntry.objects.create(
        user=owner_user,
        content_type=ContentType.objects.get_for_model(Client),
        object_id=str(world.client.pk),
        object_repr=str(world.client),
        action_flag=CHANGE,
        change_message="Contact changed",
    )
    assert AuditEntry.objects.filter(client_reference="WF-0102").count() >= 4
    assert PinAdjustment.objects.filter(revision__plan=world.plan).count() == 1
    return world


def test_it_says_what_would_go_and_erases_nothing_without_yes(her):
    before, files = snapshot(), private_files()
    with pytest.raises(CommandError) as refused:
        call_command("erase_client", "WF-0102")
    assert "2 sessions" in str(refused.value) and "2 revisions" in str(refused.value) and "--yes" in str(refused.value)
    assert snapshot() == before and private_files() == files


def test_it_refuses_a_reference_it_does_not_know(db):
    with pytest.raises(CommandError, match="no client with the reference"):
        call_command("erase_client", "XX-9999", "--yes")


def test_it_erases_every_trace_of_the_client_and_nothing_else(her):
    kept_client = her.other_client
    kept_rows = {
        "sessions": list(MeasurementSession.objects.filter(client=kept_client).values()),
        "plans": list(Plan.objects.filter(client=kept_client).values()),
        "revisions": list(PlanRevision.objects.filter(plan__client=kept_client).values()),
    }
    photo_name, pdf_name = her.photo.image.name, her.job.work_order.name
    other_files = {name: data for name, data in private_files().items() if name not in (photo_name, pdf_name)}
    assert photo_name in private_files() and pdf_name in private_files()
    ids = {
        "sessions": list(MeasurementSession.objects.filter(client=her.client).values_list("pk", flat=True)),
        "revisions": list(PlanRevision.objects.filter(plan__client=her.client).values_list("pk", flat=True)),
    }

    call_command("erase_client", "WF-0102", "--yes")

    assert not Client.all_objects.filter(pk=her.client.pk).exists()
    assert not MeasurementSession.objects.filter(pk__in=ids["sessions"]).exists()
    assert not Measurement.objects.filter(session_id__in=ids["sessions"]).exists()
    assert not Photo.objects.filter(session_id__in=ids["sessions"]).exists()
    assert not Plan.objects.filter(pk=her.plan.pk).exists()
    assert not PlanRevision.objects.filter(pk__in=ids["revisions"]).exists()
    assert not PinAdjustment.objects.filter(revision_id__in=ids["revisions"]).exists()
    assert not PrintJob.objects.filter(revision_id__in=ids["revisions"]).exists()
    # Not a word about her anywhere in the database, nor her files in the data folder.
    text = every_text_in_the_database()
    for word in HER:
        assert word not in text, word
    assert photo_name not in private_files() and pdf_name not in private_files()
    # Everyone else's records are untouched.
    assert list(MeasurementSession.objects.filter(client=kept_client).values()) == kept_rows["sessions"]
    assert list(Plan.objects.filter(client=kept_client).values()) == kept_rows["plans"]
    assert list(PlanRevision.objects.filter(plan__client=kept_client).values()) == kept_rows["revisions"]
    assert private_files() == other_files


def test_it_keeps_who_did_what_in_the_audit_trail_without_her_details(her):
    mentions = list(AuditEntry.objects.filter(client_reference="WF-0102").values_list("pk", "action", "username", "at"))
    call_command("erase_client", "WF-0102", "--yes")
    blanked = AuditEntry.objects.filter(pk__in=[pk for pk, *_ in mentions])
    assert list(blanked.values_list("pk", "action", "username", "at")) == mentions
    assert set(blanked.values_list("client_reference", "summary")) == {("", ERASED_SUMMARY)}
    assert not blanked.filter(before__isnull=False).exists() and not blanked.filter(after__isnull=False).exists()
    erased = AuditEntry.objects.get(action="erase")
    assert erased.user is None and erased.username.startswith("manage.py erase_client")
    assert erased.object_id == str(her.client.pk) and "2 sessions" in erased.summary


def test_it_erases_a_client_already_removed_from_the_lists(her, owner_client):
    from django.urls import reverse

    assert owner_client.post(reverse("fittings:client_delete", args=[her.client.pk])).status_code == 302
    call_command("erase_client", "WF-0102", "--yes")
    assert not Client.all_objects.filter(reference="WF-0102").exists()


def test_it_takes_the_revisions_out_in_one_transaction(her, monkeypatch):
    """If anything fails half-way, nothing is erased (the raw delete of revisions included)."""
    from fittings.services import client_records

    def fail(**kwargs):
        raise RuntimeError("power cut")

    monkeypatch.setattr(client_records.audit, "record", fail)
    before, files = snapshot(), private_files()
    with pytest.raises(RuntimeError):
        call_command("erase_client", "WF-0102", "--yes")
    assert snapshot() == before and private_files() == files
    assert connection.in_atomic_block  # the test's own transaction is still usable


# --- export -----------------------------------------------------------------------------------


def test_it_exports_everything_about_the_client_into_a_zip(her, tmp_path):
    out = tmp_path / "exports" / "WF-0102.zip"
    call_command("export_client", "WF-0102", str(out))
    assert stat.S_IMODE(out.stat().st_mode) == 0o600
    with zipfile.ZipFile(out) as archive:
        names = set(archive.namelist())
        data = json.loads(archive.read("client.json"))
        photo_member = next(n for n in names if n.startswith("photos/"))
        photo_bytes = archive.read(photo_member)
        readme = archive.read("README.txt").decode()
    assert names == {"README.txt", "client.json", photo_member}
    with her.photo.image.open("rb") as f:
        assert photo_bytes == f.read()
    assert "WF-0102" in readme
    assert data["client"]["name"] == "Odalys Brenneman" and data["client"]["contact"] == "+44 20 7946 0102"
    stored = {
        s.pk: {m.code: m.value_mm for m in s.measurements.all()}
        for s in MeasurementSession.objects.filter(client=her.client)
    }
    exported = {s["id"]: {m["code"]: Decimal(m["mm"]) for m in s["measurements"]} for s in data["sessions"]}
    assert exported == stored
    assert data["sessions"][0]["photos"][0]["file"] == photo_member
    assert data["sessions"][0]["measurements"][0]["as_read"].endswith(" in")
    [plan] = data["plans"]
    assert [r["number"] for r in plan["revisions"]] == [1, 2]
    assert plan["revisions"][0]["inputs"] == her.issued.inputs and plan["revisions"][0]["result"] == her.issued.result
    assert plan["revisions"][0]["pins"][0] == {
        "seam": "Back princess seam",
        "level": "waist",
        "mm": "-6.3500",
        "note": "Toile gaped at the back waist; pinned out 1/4 in.",
        "by": "demo",
        "at": plan["revisions"][0]["pins"][0]["at"],
    }
    assert "Hester" not in json.dumps(data)  # nobody else's records
    assert {h["action"] for h in data["history"]} >= {"create", "issue"}


def test_it_records_the_export_and_never_overwrites(her, tmp_path):
    out = tmp_path / "WF-0102.zip"
    call_command("export_client", "WF-0102", str(out))
    entry = AuditEntry.objects.get(action="export")
    assert entry.client_reference == "WF-0102" and entry.after["photos"] == 1
    with pytest.raises(CommandError, match="exists already"):
        call_command("export_client", "WF-0102", str(out))
    assert AuditEntry.objects.filter(action="export").count() == 1
