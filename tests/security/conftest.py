"""Fixtures for the security and data-safety tests: a populated atelier and database snapshots."""

import io
from dataclasses import dataclass

import pytest
from django.apps import apps
from django.conf import settings
from django.core.files.base import ContentFile
from django.utils import timezone
from PIL import Image

from fittings.models import Client, Photo, Plan, PlanRevision, PrintJob, PrintStatus

# The tables a bad request must leave exactly as they were.
MAIN_APPS = ("fittings", "patterns")


def jpeg_bytes(size=(40, 30), colour=(200, 120, 90), exif=None) -> bytes:
    out = io.BytesIO()
    Image.new("RGB", size, colour).save(out, format="JPEG", **({"exif": exif} if exif is not None else {}))
    return out.getvalue()


def table_rows(model) -> list[tuple]:
    """Every row of one table, every column, in primary-key order."""
    columns = [f.attname for f in model._meta.concrete_fields]
    return list(model._base_manager.order_by("pk").values_list(*columns))


def snapshot(app_labels=MAIN_APPS) -> dict[str, list[tuple]]:
    """The contents of every table of ``app_labels`` (many-to-many tables included), comparable with ==."""
    models = [m for m in apps.get_models(include_auto_created=True) if m._meta.app_label in app_labels]
    return {m._meta.label: table_rows(m) for m in models}


def private_files() -> dict[str, bytes]:
    root = settings.MEDIA_ROOT
    if not root.exists():
        return {}
    return {p.relative_to(root).as_posix(): p.read_bytes() for p in sorted(root.rglob("*")) if p.is_file()}


@dataclass
class World:
    """The demo atelier with a photo and a finished print job, named for the URLs that need them."""

    client: Client  # WF-0102: two sessions, a plan with revision 1 issued and pinned, revision 2 a draft
    other_client: Client  # WF-0101: an issued plan of her own
    session: object
    plan: Plan
    issued: PlanRevision
    draft: PlanRevision
    other_plan: Plan
    photo: Photo
    job: PrintJob


@pytest.fixture
def world(demo_atelier):
    client = Client.objects.get(reference="WF-0102")
    other = Client.objects.get(reference="WF-0101")
    plan = Plan.objects.get(client=client)
    session = client.sessions.order_by("taken_on").first()
    photo = Photo.objects.create(session=session, view="front", image=ContentFile(jpeg_bytes(), name="p.jpg"))
    issued = plan.revisions.get(number=1)
    job = PrintJob.objects.create(revision=issued, status=PrintStatus.DONE, finished_at=timezone.now())
    job.work_order.save("w.pdf", ContentFile(b"%PDF-1.4 test\n%%EOF\n"), save=True)
    return World(
        client=client, other_client=other, session=session, plan=plan, issued=issued,
        draft=plan.revisions.get(number=2), other_plan=Plan.objects.get(client=other), photo=photo, job=job,
    )
