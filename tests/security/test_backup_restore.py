"""Backup, wipe, restore: every row of every table and every private file comes back as it was."""

import io
import shutil
import stat
import tarfile

import pytest
from django.apps import apps
from django.conf import settings
from django.core.files.uploadedfile import SimpleUploadedFile
from django.core.management import call_command
from django.core.management.base import CommandError

from fittings import selectors
from fittings.models import Client, Photo, Plan, PlanRevision
from fittings.services import backups
from fittings.services import clients as client_services
from fittings.services import plans as plan_services
from patterns.models import BasePattern
from tests.security.conftest import jpeg_bytes, private_files, table_rows

# Restoring replaces the whole database, so these tests commit for real (the database is emptied afterwards).
pytestmark = pytest.mark.django_db(transaction=True)


def every_table():
    """Every row of every table; many-to-many link rows by what they link (their own ids mean nothing)."""
    tables = {}
    for model in apps.get_models(include_auto_created=True):
        if model._meta.auto_created:
            columns = [f.attname for f in model._meta.concrete_fields if not f.primary_key]
            tables[model._meta.label] = sorted(model._base_manager.values_list(*columns))
        else:
            tables[model._meta.label] = table_rows(model)
    return tables


@pytest.fixture
def busy_atelier(demo_atelier, fitter_user):
    """The demo, a plan saved three times and issued, and sessions with photos."""
    odalys = Client.objects.get(reference="WF-0102")
    pattern = BasePattern.objects.get(garment="overbust corset", size_label="12")
    session = client_services.record_session(
        client=odalys,
        user=fitter_user,
        values={"bust_girth": 1000, "waist_girth": 800, "hip_girth": 1050},
        form_data={
            "taken_on": "2026-11-30",
            "kind": "toile",
            "unit": "cm",
            "photo_front": SimpleUploadedFile("f.jpg", jpeg_bytes(colour=(1, 2, 3))),
            "photo_back": SimpleUploadedFile("b.jpg", jpeg_bytes(colour=(4, 5, 6))),
        },
    )
    plan = plan_services.start_plan(
        client=odalys, session=session, pattern=pattern, garment="Evening corset", user=fitter_user
    )
    for version in (1, 2):
        options = selectors.revision_inputs(selectors.latest_revision(plan))[2]
        plan_services.save_revision(plan=plan, options=options, user=fitter_user, expected_version=version)
    plan_services.issue_revision(revision=selectors.latest_revision(plan), user=fitter_user)
    return plan


@pytest.mark.parametrize("portable", [False, True], ids=["native", "portable"])
def test_it_restores_every_row_and_every_photo_after_a_wipe(busy_atelier, tmp_path, portable):
    archive = tmp_path / "backups" / "atelier.tar.gz"
    call_command("backup", str(archive), portable=portable)
    member = (
        "database.json"
        if portable or settings.DATABASES["default"]["ENGINE"].endswith("postgresql")
        else "database.sqlite3"
    )
    assert backups.read_manifest(archive)["database"] == member
    before, files = every_table(), private_files()
    assert Photo.objects.count() == 2 and len(files) == 2
    assert PlanRevision.objects.filter(plan=busy_atelier).count() == 3
    assert stat.S_IMODE(archive.stat().st_mode) == 0o600

    call_command("flush", interactive=False, verbosity=0)
    shutil.rmtree(settings.MEDIA_ROOT)
    assert Client.all_objects.count() == 0 and private_files() == {}

    call_command("restore", str(archive), yes=True)
    assert every_table() == before
    assert private_files() == files
    assert Plan.objects.get(garment="Evening corset").revisions.filter(status="issued").count() == 1


def test_it_writes_what_the_manifest_says(busy_atelier, tmp_path):
    archive = tmp_path / "atelier.tar.gz"
    call_command("backup", str(archive))
    manifest = backups.read_manifest(archive)
    with tarfile.open(archive) as tar:
        names = set(tar.getnames())
    assert names == {"manifest.json", *manifest["files"]}
    assert manifest["engine"] == (
        "sqlite" if settings.DATABASES["default"]["ENGINE"].endswith("sqlite3") else "postgresql"
    )
    assert manifest["database"] in manifest["files"]
    assert sorted(n for n in names if n.startswith("private/")) == sorted(
        "private/" + name for name in Photo.objects.values_list("image", flat=True)
    )
    assert "fittings" in manifest["migrations"] and "0001_initial" in manifest["migrations"]["fittings"]
    assert not any("secret_key" in name for name in names)


def test_it_refuses_to_restore_without_yes_and_changes_nothing(busy_atelier, tmp_path):
    archive = tmp_path / "atelier.tar.gz"
    call_command("backup", str(archive))
    Client.objects.create(reference="NEW-1", name="Added after the backup")
    with pytest.raises(CommandError, match="run again with --yes"):
        call_command("restore", str(archive))
    assert Client.objects.filter(reference="NEW-1").exists()


def test_it_never_overwrites_an_archive(busy_atelier, tmp_path):
    folder = tmp_path / "backups"
    folder.mkdir()
    archive = folder / "atelier.tar.gz"
    archive.write_bytes(b"an older backup")
    with pytest.raises(CommandError, match="exists already"):
        call_command("backup", str(archive))
    assert archive.read_bytes() == b"an older backup"
    assert [p.name for p in folder.iterdir()] == ["atelier.tar.gz"]  # no half-written file left


def _rewrite(archive, out, change):
    """A copy of the archive with one member's bytes changed by ``change(name, data)``."""
    with tarfile.open(archive) as src, tarfile.open(out, "w:gz") as dst:
        for member in src.getmembers():
            data = src.extractfile(member).read()
            data = change(member.name, data)
            member.size = len(data)
            dst.addfile(member, io.BytesIO(data))


def test_it_refuses_a_damaged_archive_before_touching_anything(busy_atelier, tmp_path):
    archive = tmp_path / "atelier.tar.gz"
    call_command("backup", str(archive))
    damaged = tmp_path / "damaged.tar.gz"
    _rewrite(archive, damaged, lambda name, data: data[:-10] + b"0" * 10 if name.startswith("private/") else data)
    before, files = every_table(), private_files()
    with pytest.raises(CommandError, match="missing or damaged"):
        call_command("restore", str(damaged), yes=True)
    assert every_table() == before and private_files() == files


def test_it_refuses_an_archive_with_an_unsafe_path(busy_atelier, tmp_path):
    archive = tmp_path / "evil.tar.gz"
    with tarfile.open(archive, "w:gz") as tar:
        manifest = (
            b'{"format": "atelier-backup", "version": 1, "created_at": "x", "engine": "sqlite",'
            b' "database": "database.json", "migrations": {}, "files": {"../../escape.txt": "0"}}'
        )
        for name, data in (("manifest.json", manifest), ("../../escape.txt", b"x")):
            info = tarfile.TarInfo(name)
            info.size = len(data)
            tar.addfile(info, io.BytesIO(data))
    with pytest.raises(CommandError, match="unsafe path"):
        call_command("restore", str(archive), yes=True)
    assert not (tmp_path.parent / "escape.txt").exists()
    assert Client.objects.count() == 3


def test_it_refuses_a_file_that_is_not_a_backup(tmp_path, db):
    junk = tmp_path / "holiday.tar.gz"
    junk.write_bytes(b"not an archive")
    with pytest.raises(CommandError, match="not a backup made by this app"):
        call_command("restore", str(junk), yes=True)


def test_it_refuses_a_backup_from_a_newer_version(busy_atelier, tmp_path):
    import json

    archive = tmp_path / "atelier.tar.gz"
    call_command("backup", str(archive))
    newer = tmp_path / "newer.tar.gz"

    def add_migration(name, data):
        if name != "manifest.json":
            return data
        manifest = json.loads(data)
        manifest["migrations"]["fittings"].append("0099_from_the_future")
        return json.dumps(manifest).encode()

    _rewrite(archive, newer, add_migration)
    with pytest.raises(CommandError, match="newer version of the app"):
        call_command("restore", str(newer), yes=True)
    assert Client.objects.filter(reference="WF-0102").exists()
