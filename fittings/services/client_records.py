"""One client's records: everything kept about them, exported to hand over or erased for good.

Run from management commands (``export_client``, ``erase_client``), never from a web page.
"""

import json
import zipfile
from dataclasses import dataclass, field
from pathlib import Path, PurePosixPath

from django.conf import settings
from django.contrib.admin.models import LogEntry
from django.contrib.contenttypes.models import ContentType
from django.core.serializers.json import DjangoJSONEncoder
from django.db import connection, models, transaction
from django.utils import timezone

from atelier.storage import private_storage
from fittings import audit
from fittings.models import (
    AuditEntry,
    Client,
    FabricLayout,
    Measurement,
    MeasurementSession,
    Photo,
    PinAdjustment,
    Plan,
    PlanRevision,
    PrintFile,
    PrintJob,
)
from fittings.services.files import FORMAT_VERSION, SafetyError, finish, new_file
from patterns.core.measures import MEASURE_BY_CODE
from patterns.core.units import format_length

EXPORT_FORMAT = "atelier-client-export"


def _client(reference: str) -> Client:
    client = Client.all_objects.filter(reference=reference).first()
    if client is None:
        raise SafetyError(f"There is no client with the reference {reference!r} (deleted clients included).")
    return client


@dataclass
class ClientRecords:
    """Everything stored about one client, as querysets and file names."""

    client: Client
    sessions: models.QuerySet
    measurements: models.QuerySet
    photos: models.QuerySet
    plans: models.QuerySet
    revision_ids: list[int]
    pins: models.QuerySet
    print_jobs: models.QuerySet
    audit_entries: models.QuerySet
    files: list[str] = field(default_factory=list)

    def counts(self) -> dict[str, int]:
        return {
            "sessions": self.sessions.count(),
            "measurements": self.measurements.count(),
            "photos": self.photos.count(),
            "plans": self.plans.count(),
            "revisions": len(self.revision_ids),
            "pins": self.pins.count(),
            "print jobs": self.print_jobs.count(),
            "audit entries": self.audit_entries.count(),
            "files": len(self.files),
        }


def client_records(reference: str) -> ClientRecords:
    client = _client(reference)
    sessions = MeasurementSession.objects.filter(client=client)
    plans = Plan.objects.filter(client=client)
    revision_ids = list(PlanRevision.objects.filter(plan__client=client).values_list("pk", flat=True))
    photos = Photo.objects.filter(session__client=client)
    jobs = PrintJob.objects.filter(revision_id__in=revision_ids)
    files = [name for name in photos.values_list("image", flat=True) if name]
    files += [name for name in PrintFile.objects.filter(job__in=jobs).values_list("file", flat=True) if name]
    return ClientRecords(
        client=client,
        sessions=sessions,
        measurements=Measurement.objects.filter(session__client=client),
        photos=photos,
        plans=plans,
        revision_ids=revision_ids,
        pins=PinAdjustment.objects.filter(revision_id__in=revision_ids),
        print_jobs=jobs,
        audit_entries=AuditEntry.objects.filter(client_reference=client.reference),
        files=files,
    )


@dataclass
class Erasure:
    counts: dict[str, int]
    files_removed: int
    files_missing: list[str]


ERASED_SUMMARY = "Entry about a client who was erased on request."


def _admin_log_entries(records: ClientRecords) -> models.QuerySet:
    """The admin's history lines naming this client's rows (they copy the row's text, e.g. the name)."""
    wanted = models.Q(pk__in=[])
    for model, ids in (
        (Client, [records.client.pk]),
        (MeasurementSession, records.sessions.values_list("pk", flat=True)),
        (Measurement, records.measurements.values_list("pk", flat=True)),
        (Photo, records.photos.values_list("pk", flat=True)),
        (Plan, records.plans.values_list("pk", flat=True)),
        (PlanRevision, records.revision_ids),
        (PinAdjustment, records.pins.values_list("pk", flat=True)),
        (PrintJob, records.print_jobs.values_list("pk", flat=True)),
    ):
        ids = [str(pk) for pk in ids]
        if ids:
            wanted |= models.Q(content_type=ContentType.objects.get_for_model(model), object_id__in=ids)
    return LogEntry.objects.filter(wanted)


def erase_client(*, reference: str, actor: str) -> Erasure:
    """Remove a client and everything recorded about them, for good, in one transaction.

    Rows: the client, sessions, measurements, photos, plans, revisions, pins,
    print jobs and the admin's history lines about them.  Audit entries that
    mention the client keep who did what and when, but lose their reference,
    summary and before/after values.  Files (photos, printed documents) are
    deleted once the transaction has committed.  Backups made earlier still
    hold the client; they age out as old backups are deleted.
    """
    with transaction.atomic():
        records = client_records(reference)
        counts = records.counts()
        client_pk = records.client.pk
        _admin_log_entries(records).delete()
        records.pins.delete()
        records.print_jobs.delete()
        FabricLayout.objects.filter(revision_id__in=records.revision_ids).delete()
        # Plan revisions refuse deletion through the ORM: they are the atelier's permanent record.
        # Erasing a client on request is the one deliberate exception: a plain queryset (not the
        # model's refusing one) and one raw DELETE, in this transaction only.  Revisions of one
        # plan may point at each other; foreign keys are checked at commit, when all are gone.
        models.QuerySet(PlanRevision).filter(pk__in=records.revision_ids)._raw_delete(connection.alias)
        records.plans.delete()
        records.sessions.delete()  # measurements and photo rows go with their session
        records.client.delete()
        # The audit trail is append-only too; the same deliberate exception blanks the personal parts.
        models.QuerySet(AuditEntry).filter(client_reference=reference).update(
            client_reference="",
            summary=ERASED_SUMMARY,
            before=None,
            after=None,
        )
        summary = ", ".join(f"{count} {name}" for name, count in counts.items() if name != "audit entries")
        audit.record(
            user=None,
            actor=actor,
            action=audit.ERASE,
            object_type="client",
            object_id=client_pk,
            summary=f"A client was erased on request: {summary}.",
        )
    removed, missing = 0, []
    storage = private_storage()
    for name in records.files:
        if storage.exists(name):
            storage.delete(name)
            removed += 1
        else:
            missing.append(name)
    return Erasure(counts=counts, files_removed=removed, files_missing=missing)


@dataclass
class ExportReceipt:
    path: Path
    counts: dict[str, int]


def _user_name(user):
    return user.get_username() if user is not None else None


def client_data(records: ClientRecords, photo_names: dict[int, str]) -> dict:
    """Everything about the client as plain JSON data, lengths in millimetres as recorded."""
    client = records.client
    sessions = []
    for session in (
        records.sessions.select_related("measured_by")
        .prefetch_related("measurements", "photos")
        .order_by("taken_on", "id")
    ):
        sessions.append(
            {
                "id": session.pk,
                "taken_on": session.taken_on,
                "kind": session.kind,
                "unit": session.unit,
                "measured_by": _user_name(session.measured_by),
                "posture_notes": session.posture_notes,
                "notes": session.notes,
                "created_at": session.created_at,
                "updated_at": session.updated_at,
                "measurements": [
                    {
                        "code": m.code,
                        "name": MEASURE_BY_CODE[m.code].label if m.code in MEASURE_BY_CODE else m.code,
                        "mm": m.value_mm,
                        "as_read": f"{format_length(m.value_mm, session.unit)} {session.unit}",
                    }
                    for m in session.measurements.all()
                ],
                "photos": [
                    {"view": p.view, "taken_at": p.taken_at, "file": photo_names[p.pk]} for p in session.photos.all()
                ],
            }
        )
    plans = []
    revisions = PlanRevision.objects.filter(pk__in=records.revision_ids).select_related("author", "issued_by")
    pins_by_revision: dict[int, list] = {}
    for pin in records.pins.select_related("created_by").order_by("revision_id", "created_at", "id"):
        pins_by_revision.setdefault(pin.revision_id, []).append(
            {
                "seam": pin.seam,
                "level": pin.level,
                "mm": pin.amount_mm,
                "note": pin.note,
                "by": _user_name(pin.created_by),
                "at": pin.created_at,
            }
        )
    by_plan: dict[int, list] = {}
    for r in revisions.order_by("plan_id", "number"):
        by_plan.setdefault(r.plan_id, []).append(
            {
                "number": r.number,
                "status": r.status,
                "based_on": r.based_on_id,
                "author": _user_name(r.author),
                "created_at": r.created_at,
                "issued_at": r.issued_at,
                "issued_by": _user_name(r.issued_by),
                "inputs": r.inputs,
                "result": r.result,
                "pins": pins_by_revision.get(r.pk, []),
            }
        )
    for plan in records.plans.select_related("base_pattern", "created_by").order_by("created_at", "id"):
        plans.append(
            {
                "id": plan.pk,
                "garment": plan.garment,
                "session": plan.session_id,
                "base_pattern": {"name": plan.base_pattern.name, "size": plan.base_pattern.size_label},
                "created_by": _user_name(plan.created_by),
                "created_at": plan.created_at,
                "revisions": by_plan.get(plan.pk, []),
            }
        )
    history = [
        {
            "at": e.at,
            "by": e.username,
            "action": e.action,
            "object": e.object_type,
            "object_id": e.object_id,
            "summary": e.summary,
        }
        for e in records.audit_entries.order_by("at", "id")
    ]
    return {
        "format": EXPORT_FORMAT,
        "version": FORMAT_VERSION,
        "exported_at": timezone.now(),
        "client": {
            "reference": client.reference,
            "name": client.name,
            "contact": client.contact,
            "notes": client.notes,
            "consent_given_on": client.consent_given_on,
            "created_at": client.created_at,
            "removed_from_lists": client.is_deleted,
        },
        "sessions": sessions,
        "plans": plans,
        "history": history,
    }


EXPORT_README = """\
Records kept by {atelier} about {reference}, exported on {date}.

client.json    your details, every measurement session (each reading in millimetres and as it
               was read off the tape), every alteration plan with all its revisions (the inputs
               and the worked-out result), pins recorded at toile fittings, and a list of who
               changed your records and when.
photos/        the photos taken at your fittings, as stored (location data removed on upload).
"""


def export_client(*, reference: str, out, actor: str) -> ExportReceipt:
    """A zip of everything stored about one client, for that client."""
    out = Path(out)
    records = client_records(reference)
    storage = private_storage()
    photo_names = {}
    photos = list(records.photos.select_related("session").order_by("session__taken_on", "id"))
    for photo in photos:
        suffix = PurePosixPath(photo.image.name).suffix or ".jpg"
        photo_names[photo.pk] = f"photos/{photo.session.taken_on}-{photo.view}-{photo.pk}{suffix}"
    data = client_data(records, photo_names)
    tmp = new_file(out)
    try:
        with zipfile.ZipFile(tmp, "w", compression=zipfile.ZIP_DEFLATED) as archive:
            archive.writestr(
                "README.txt",
                EXPORT_README.format(
                    atelier=settings.ATELIER_NAME, reference=records.client.reference, date=timezone.localdate()
                ),
            )
            archive.writestr("client.json", json.dumps(data, indent=2, ensure_ascii=False, cls=DjangoJSONEncoder))
            for photo in photos:
                with storage.open(photo.image.name, "rb") as f:
                    archive.writestr(photo_names[photo.pk], f.read(), compress_type=zipfile.ZIP_STORED)
        finish(tmp, out)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    counts = {
        "sessions": len(data["sessions"]),
        "plans": len(data["plans"]),
        "photos": len(photos),
        "revisions": sum(len(p["revisions"]) for p in data["plans"]),
    }
    with transaction.atomic():
        audit.record(
            user=None,
            actor=actor,
            action=audit.EXPORT,
            row=records.client,
            summary=f"Records exported for the client ({out.name}).",
            after=counts,
        )
    return ExportReceipt(path=out, counts=counts)
