"""Keeping the atelier's data safe: backup, restore, a client's export, and erasing a client for good.

Run from management commands (``backup``, ``restore``, ``export_client``,
``erase_client``), never from a web page.

Backup archive (``.tar.gz``)::

    manifest.json          what is inside, the database engine, migrations, a SHA-256 of every file
    database.sqlite3       SQLite: a consistent copy made with SQLite's online backup API
    database.json          PostgreSQL, or SQLite with ``--portable``: every row with its id, read in
                           one snapshot; restores into either database (moving from SQLite to PostgreSQL)
    private/...            the private files (photos, printed documents)

The database is copied first and the files second, so every photo the
copied database names is in the archive (a photo saved in between only adds
a spare file).  The secret key is not in the archive.
"""

import hashlib
import io
import json
import os
import shutil
import sqlite3
import tarfile
import tempfile
import zipfile
from dataclasses import dataclass, field
from datetime import datetime, time
from pathlib import Path, PurePosixPath

from django.apps import apps
from django.conf import settings
from django.contrib.admin.models import LogEntry
from django.core import serializers
from django.contrib.contenttypes.models import ContentType
from django.core.management import call_command
from django.core.serializers.json import DjangoJSONEncoder
from django.db import connection, models, router, transaction
from django.db.migrations.loader import MigrationLoader
from django.db.migrations.recorder import MigrationRecorder
from django.utils import timezone

from atelier.storage import private_storage
from fittings import audit
from fittings.models import (
    AuditEntry, Client, Measurement, MeasurementSession, Photo, PinAdjustment, Plan, PlanRevision, PrintJob,
)
from patterns.core.measures import MEASURE_BY_CODE
from patterns.core.units import format_length

BACKUP_FORMAT = "atelier-backup"
EXPORT_FORMAT = "atelier-client-export"
FORMAT_VERSION = 1
SQLITE_MEMBER = "database.sqlite3"
JSON_MEMBER = "database.json"
PRIVATE_PREFIX = "private/"


class SafetyError(Exception):
    """The operation was refused or cannot go on; the message says why in plain words."""


def _sha256(path: Path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as f:
        for block in iter(lambda: f.read(1024 * 1024), b""):
            digest.update(block)
    return digest.hexdigest()


def _private_root() -> Path:
    return Path(private_storage().location)


def _private_files() -> list[Path]:
    root = _private_root()
    if not root.exists():
        return []
    return sorted(p for p in root.rglob("*") if p.is_file() and not p.is_symlink())


def _new_file(out: Path) -> Path:
    """A temporary file beside ``out``, to be renamed into place when complete."""
    out = Path(out)
    if out.exists():
        raise SafetyError(f"{out} exists already; choose another name (nothing is overwritten).")
    out.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=out.parent, prefix=f".{out.name}.", suffix=".part")
    os.close(fd)
    os.chmod(tmp, 0o600)  # personal data: readable by the atelier's account only
    return Path(tmp)


def _finish(tmp: Path, out: Path) -> None:
    # os.link refuses to replace a file made meanwhile; the temporary name goes either way.
    try:
        os.link(tmp, out)
    except FileExistsError:
        raise SafetyError(f"{out} appeared while writing; nothing is overwritten.") from None
    finally:
        tmp.unlink(missing_ok=True)


# --- backup and restore -------------------------------------------------------------------


@dataclass
class BackupReceipt:
    path: Path
    engine: str
    files: int
    bytes: int


def applied_migrations() -> dict[str, list[str]]:
    applied: dict[str, list[str]] = {}
    for app, name in sorted(MigrationRecorder(connection).applied_migrations()):
        applied.setdefault(app, []).append(name)
    return applied


def _copy_sqlite(dest: Path) -> None:
    """A consistent copy of the live SQLite database, made while others may be writing."""
    connection.ensure_connection()
    target = sqlite3.connect(dest)
    try:
        with target:
            connection.connection.backup(target)
    finally:
        target.close()


class _ExactJSONEncoder(DjangoJSONEncoder):
    """Django's encoder, but times keep their microseconds (``dumpdata`` cuts them to milliseconds)."""

    def default(self, o):
        if isinstance(o, (datetime, time)):
            return o.isoformat()
        return super().default(o)


def _dumped_models():
    """The models ``dumpdata`` would write, in an order ``loaddata`` can read back."""
    app_list = [(config, None) for config in apps.get_app_configs()]
    return [
        model for model in serializers.sort_dependencies(app_list, allow_cycles=True)
        if not model._meta.proxy and model._meta.managed and router.allow_migrate_model(connection.alias, model)
    ]


def _dump_json(dest: Path) -> None:
    """Every table, read in one snapshot so the tables agree with each other.

    The format of ``dumpdata`` (``loaddata`` reads it), with exact times, content types and
    permissions included, so every id comes back as it was.
    """
    with transaction.atomic(), open(dest, "w", encoding="utf-8") as out:
        if connection.vendor == "postgresql":
            with connection.cursor() as cursor:
                cursor.execute("SET TRANSACTION ISOLATION LEVEL REPEATABLE READ READ ONLY")
        out.write("[")
        first = True
        for model in _dumped_models():
            rows = model._base_manager.using(connection.alias).order_by(model._meta.pk.name)
            for item in serializers.serialize("python", rows.iterator()):
                out.write(("" if first else ",\n") + json.dumps(item, cls=_ExactJSONEncoder, ensure_ascii=False))
                first = False
        out.write("]\n")


def backup(out, portable: bool = False) -> BackupReceipt:
    """Write the database and the private files into one archive at ``out`` (a new file).

    ``portable`` writes the database as JSON even from SQLite, to restore into PostgreSQL.
    """
    out = Path(out)
    tmp = _new_file(out)
    files = 0
    try:
        # Beside the archive, not in /tmp: the copy holds personal data and may be large.
        with tempfile.TemporaryDirectory(prefix=".atelier-backup-", dir=out.parent) as work:
            work = Path(work)
            if connection.vendor == "sqlite" and not portable:
                db_member, db_path = SQLITE_MEMBER, work / SQLITE_MEMBER
                _copy_sqlite(db_path)
            else:
                db_member, db_path = JSON_MEMBER, work / JSON_MEMBER
                _dump_json(db_path)
            root = _private_root()
            private = [(PRIVATE_PREFIX + p.relative_to(root).as_posix(), p) for p in _private_files()]
            manifest = {
                "format": BACKUP_FORMAT, "version": FORMAT_VERSION, "created_at": timezone.now().isoformat(),
                "engine": connection.vendor, "database": db_member, "migrations": applied_migrations(),
                "files": {db_member: _sha256(db_path), **{name: _sha256(path) for name, path in private}},
            }
            with tarfile.open(tmp, "w:gz") as archive:
                data = json.dumps(manifest, indent=2).encode()
                info = tarfile.TarInfo("manifest.json")
                info.size, info.mtime, info.mode = len(data), int(timezone.now().timestamp()), 0o600
                archive.addfile(info, io.BytesIO(data))
                archive.add(db_path, arcname=db_member, recursive=False)
                for name, path in private:
                    archive.add(path, arcname=name, recursive=False)
                    files += 1
        _finish(tmp, out)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    return BackupReceipt(path=out, engine=connection.vendor, files=files, bytes=out.stat().st_size)


@dataclass
class RestoreReceipt:
    engine: str
    files: int
    created_at: str


def read_manifest(archive_path) -> dict:
    try:
        with tarfile.open(archive_path, "r:gz") as archive:
            member = archive.extractfile("manifest.json")
            manifest = json.loads(member.read())
    except (OSError, KeyError, tarfile.TarError, json.JSONDecodeError, AttributeError) as exc:
        raise SafetyError(f"{archive_path} is not a backup made by this app ({exc}).") from None
    if manifest.get("format") != BACKUP_FORMAT or manifest.get("version") != FORMAT_VERSION:
        raise SafetyError(f"{archive_path} is not a backup this version of the app can read.")
    return manifest


def _check_migrations(manifest) -> None:
    known = MigrationLoader(None, ignore_no_migrations=True).disk_migrations
    unknown = [f"{app}.{name}" for app, names in manifest["migrations"].items() for name in names
               if (app, name) not in known]
    if unknown:
        raise SafetyError(
            "The backup was made by a newer version of the app (it has migrations this one does not know: "
            f"{', '.join(unknown[:5])}). Update the app first."
        )


def _extract(archive_path, manifest, into: Path) -> None:
    """Unpack and check every file against the manifest before anything is replaced."""
    expected = manifest["files"]
    with tarfile.open(archive_path, "r:gz") as archive:
        for member in archive.getmembers():
            name = member.name
            if name == "manifest.json" or member.isdir():
                continue
            if name not in expected or not member.isfile():
                raise SafetyError(f"The backup holds an unexpected entry {name!r}; nothing was restored.")
            path = PurePosixPath(name)
            if path.is_absolute() or ".." in path.parts:
                raise SafetyError(f"The backup holds an unsafe path {name!r}; nothing was restored.")
        archive.extractall(into, filter="data")
    for name, digest in expected.items():
        path = into / name
        if not path.is_file() or _sha256(path) != digest:
            raise SafetyError(f"{name} in the backup is missing or damaged; nothing was restored.")


def _restore_sqlite(db_file: Path) -> None:
    connection.close()
    connection.ensure_connection()
    source = sqlite3.connect(db_file)
    try:
        source.backup(connection.connection)
    finally:
        source.close()
    connection.close()  # the next connection applies the settings' PRAGMAs to the restored database


def _restore_json(db_file: Path) -> None:
    from django.contrib.auth.models import Permission

    call_command("migrate", interactive=False, verbosity=0)
    call_command("flush", interactive=False, verbosity=0)
    with transaction.atomic():
        # flush makes content types and permissions afresh, numbered in another order; the backup's own go in.
        Permission.objects.all().delete()
        ContentType.objects.all().delete()
        ContentType.objects.clear_cache()
        call_command("loaddata", str(db_file), verbosity=0)
    ContentType.objects.clear_cache()
    call_command("migrate", interactive=False, verbosity=0)  # types and permissions of newer models, if any


def _replace_private_files(unpacked: Path) -> None:
    root = _private_root()
    new = unpacked / PRIVATE_PREFIX.rstrip("/")
    new.mkdir(exist_ok=True)
    old = None
    if root.exists():
        old = root.with_name(f".{root.name}-before-restore-{datetime.now():%Y%m%d%H%M%S}")
        root.rename(old)
    root.parent.mkdir(parents=True, exist_ok=True)
    shutil.move(str(new), str(root))
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)


def restore(archive_path) -> RestoreReceipt:
    """Replace the whole database and the private files with the backup's.  Stop the server first."""
    manifest = read_manifest(archive_path)
    _check_migrations(manifest)
    member = manifest["database"]
    if member == SQLITE_MEMBER and connection.vendor != "sqlite":
        raise SafetyError("This backup is of a SQLite database; restore it with SQLite (no DATABASE_URL).")
    if member not in (SQLITE_MEMBER, JSON_MEMBER):
        raise SafetyError(f"The backup's database entry {member!r} is not one this app writes.")
    root = _private_root()
    root.parent.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory(prefix=".restore-", dir=root.parent) as work:
        work = Path(work)
        _extract(archive_path, manifest, work)
        if member == SQLITE_MEMBER:
            _restore_sqlite(work / SQLITE_MEMBER)
            call_command("migrate", interactive=False, verbosity=0)  # a backup from an older version catches up
        else:
            _restore_json(work / JSON_MEMBER)
        _replace_private_files(work)
    files = sum(1 for name in manifest["files"] if name.startswith(PRIVATE_PREFIX))
    return RestoreReceipt(engine=connection.vendor, files=files, created_at=manifest["created_at"])


def database_summary() -> dict[str, int]:
    """Row counts of the main tables, to say what a restore would replace."""
    return {
        "clients": Client.all_objects.count(), "sessions": MeasurementSession.objects.count(),
        "plans": Plan.objects.count(), "revisions": PlanRevision.objects.count(),
        "private files": len(_private_files()),
    }


# --- a client's records -------------------------------------------------------------------


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
            "sessions": self.sessions.count(), "measurements": self.measurements.count(),
            "photos": self.photos.count(), "plans": self.plans.count(), "revisions": len(self.revision_ids),
            "pins": self.pins.count(), "print jobs": self.print_jobs.count(),
            "audit entries": self.audit_entries.count(), "files": len(self.files),
        }


def client_records(reference: str) -> ClientRecords:
    client = _client(reference)
    sessions = MeasurementSession.objects.filter(client=client)
    plans = Plan.objects.filter(client=client)
    revision_ids = list(PlanRevision.objects.filter(plan__client=client).values_list("pk", flat=True))
    photos = Photo.objects.filter(session__client=client)
    jobs = PrintJob.objects.filter(revision_id__in=revision_ids)
    files = [name for name in photos.values_list("image", flat=True) if name]
    for work_order, cutting_sheet in jobs.values_list("work_order", "cutting_sheet"):
        files += [name for name in (work_order, cutting_sheet) if name]
    return ClientRecords(
        client=client, sessions=sessions, measurements=Measurement.objects.filter(session__client=client),
        photos=photos, plans=plans, revision_ids=revision_ids,
        pins=PinAdjustment.objects.filter(revision_id__in=revision_ids), print_jobs=jobs,
        audit_entries=AuditEntry.objects.filter(client_reference=client.reference), files=files,
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
        (Client, [records.client.pk]), (MeasurementSession, records.sessions.values_list("pk", flat=True)),
        (Measurement, records.measurements.values_list("pk", flat=True)), (Photo, records.photos.values_list("pk", flat=True)),
        (Plan, records.plans.values_list("pk", flat=True)), (PlanRevision, records.revision_ids),
        (PinAdjustment, records.pins.values_list("pk", flat=True)), (PrintJob, records.print_jobs.values_list("pk", flat=True)),
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
            client_reference="", summary=ERASED_SUMMARY, before=None, after=None,
        )
        summary = ", ".join(f"{count} {name}" for name, count in counts.items() if name != "audit entries")
        audit.record(user=None, actor=actor, action=audit.ERASE, object_type="client", object_id=client_pk,
                     summary=f"A client was erased on request: {summary}.")
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
    for session in records.sessions.select_related("measured_by").prefetch_related("measurements", "photos").order_by(
            "taken_on", "id"):
        sessions.append({
            "id": session.pk, "taken_on": session.taken_on, "kind": session.kind, "unit": session.unit,
            "measured_by": _user_name(session.measured_by), "posture_notes": session.posture_notes,
            "notes": session.notes, "created_at": session.created_at, "updated_at": session.updated_at,
            "measurements": [
                {"code": m.code, "name": MEASURE_BY_CODE[m.code].label if m.code in MEASURE_BY_CODE else m.code,
                 "mm": m.value_mm, "as_read": f"{format_length(m.value_mm, session.unit)} {session.unit}"}
                for m in session.measurements.all()
            ],
            "photos": [{"view": p.view, "taken_at": p.taken_at, "file": photo_names[p.pk]} for p in session.photos.all()],
        })
    plans = []
    revisions = PlanRevision.objects.filter(pk__in=records.revision_ids).select_related("author", "issued_by")
    pins_by_revision: dict[int, list] = {}
    for pin in records.pins.select_related("created_by").order_by("revision_id", "created_at", "id"):
        pins_by_revision.setdefault(pin.revision_id, []).append({
            "seam": pin.seam, "level": pin.level, "mm": pin.amount_mm, "note": pin.note,
            "by": _user_name(pin.created_by), "at": pin.created_at,
        })
    by_plan: dict[int, list] = {}
    for r in revisions.order_by("plan_id", "number"):
        by_plan.setdefault(r.plan_id, []).append({
            "number": r.number, "status": r.status, "based_on": r.based_on_id, "author": _user_name(r.author),
            "created_at": r.created_at, "issued_at": r.issued_at, "issued_by": _user_name(r.issued_by),
            "inputs": r.inputs, "result": r.result, "pins": pins_by_revision.get(r.pk, []),
        })
    for plan in records.plans.select_related("base_pattern", "created_by").order_by("created_at", "id"):
        plans.append({
            "id": plan.pk, "garment": plan.garment, "session": plan.session_id,
            "base_pattern": {"name": plan.base_pattern.name, "size": plan.base_pattern.size_label},
            "created_by": _user_name(plan.created_by), "created_at": plan.created_at,
            "revisions": by_plan.get(plan.pk, []),
        })
    history = [
        {"at": e.at, "by": e.username, "action": e.action, "object": e.object_type, "object_id": e.object_id,
         "summary": e.summary}
        for e in records.audit_entries.order_by("at", "id")
    ]
    return {
        "format": EXPORT_FORMAT, "version": FORMAT_VERSION, "exported_at": timezone.now(),
        "client": {
            "reference": client.reference, "name": client.name, "contact": client.contact, "notes": client.notes,
            "consent_given_on": client.consent_given_on, "created_at": client.created_at,
            "removed_from_lists": client.is_deleted,
        },
        "sessions": sessions, "plans": plans, "history": history,
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
    tmp = _new_file(out)
    try:
        with zipfile.ZipFile(tmp, "w", compression=zipfile.ZIP_DEFLATED) as archive:
            archive.writestr("README.txt", EXPORT_README.format(
                atelier=settings.ATELIER_NAME, reference=records.client.reference, date=timezone.localdate()))
            archive.writestr("client.json", json.dumps(data, indent=2, ensure_ascii=False, cls=DjangoJSONEncoder))
            for photo in photos:
                with storage.open(photo.image.name, "rb") as f:
                    archive.writestr(photo_names[photo.pk], f.read(), compress_type=zipfile.ZIP_STORED)
        _finish(tmp, out)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    counts = {"sessions": len(data["sessions"]), "plans": len(data["plans"]), "photos": len(photos),
              "revisions": sum(len(p["revisions"]) for p in data["plans"])}
    with transaction.atomic():
        audit.record(user=None, actor=actor, action=audit.EXPORT, object_type="client", object_id=records.client.pk,
                     client=records.client, summary=f"Records exported for the client ({out.name}).", after=counts)
    return ExportReceipt(path=out, counts=counts)
