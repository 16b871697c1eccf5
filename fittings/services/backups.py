"""Backup and restore of the whole atelier: the database and the private files in one archive.

Run from management commands (``backup``, ``restore``), never from a web page.

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
import shutil
import sqlite3
import tarfile
import tempfile
from dataclasses import dataclass
from datetime import datetime, time
from pathlib import Path, PurePosixPath

from django.apps import apps
from django.contrib.contenttypes.models import ContentType
from django.core import serializers
from django.core.management import call_command
from django.core.serializers.json import DjangoJSONEncoder
from django.db import connection, router, transaction
from django.db.migrations.loader import MigrationLoader
from django.db.migrations.recorder import MigrationRecorder
from django.utils import timezone

from atelier.storage import private_storage
from fittings.models import (
    Client,
    MeasurementSession,
    Plan,
    PlanRevision,
)
from fittings.services.files import FORMAT_VERSION, SafetyError, finish, new_file

BACKUP_FORMAT = "atelier-backup"
SQLITE_MEMBER = "database.sqlite3"
JSON_MEMBER = "database.json"
PRIVATE_PREFIX = "private/"


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
        model
        for model in serializers.sort_dependencies(app_list, allow_cycles=True)
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
    tmp = new_file(out)
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
                "format": BACKUP_FORMAT,
                "version": FORMAT_VERSION,
                "created_at": timezone.now().isoformat(),
                "engine": connection.vendor,
                "database": db_member,
                "migrations": applied_migrations(),
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
        finish(tmp, out)
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
    unknown = [
        f"{app}.{name}" for app, names in manifest["migrations"].items() for name in names if (app, name) not in known
    ]
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
        "clients": Client.all_objects.count(),
        "sessions": MeasurementSession.objects.count(),
        "plans": Plan.objects.count(),
        "revisions": PlanRevision.objects.count(),
        "private files": len(_private_files()),
    }
