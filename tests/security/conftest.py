"""Fixtures for the security and data-safety tests: a populated atelier and database snapshots."""

import io
from dataclasses import dataclass
from html.parser import HTMLParser

import pytest
from django.apps import apps
from django.conf import settings
from django.core.files.base import ContentFile
from django.utils import timezone
from PIL import Image

from fittings import selectors
from fittings.models import Client, Photo, Plan, PlanRevision, PrintFile, PrintJob, PrintStatus

# The tables a bad request must leave exactly as they were.
MAIN_APPS = ("fittings", "patterns")


def jpeg_bytes(size=(40, 30), colour=(200, 120, 90), exif=None) -> bytes:
    out = io.BytesIO()
    Image.new("RGB", size, colour).save(out, format="JPEG", **({"exif": exif} if exif is not None else {}))
    return out.getvalue()


def options_post(plan, **changes):
    """The plan page's form as a browser sends it (the saved options, the plan's version), some fields changed."""
    from fittings.forms import PlanOptionsForm

    values, block, options = selectors.revision_inputs(selectors.latest_revision(plan))
    data = dict(PlanOptionsForm.initial_for(options, block))
    data["version"] = plan.version
    data.update(changes)
    return data


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
    kept = PrintFile(job=job, document="work-order")
    kept.file.save("w.pdf", ContentFile(b"%PDF-1.4 test\n%%EOF\n"), save=True)
    return World(
        client=client,
        other_client=other,
        session=session,
        plan=plan,
        issued=issued,
        draft=plan.revisions.get(number=2),
        other_plan=Plan.objects.get(client=other),
        photo=photo,
        job=job,
    )


class _FormReader(HTMLParser):
    """The fields one form would send, read from a page as a browser reads it."""

    def __init__(self, form_id):
        super().__init__(convert_charrefs=True)
        self.form_id, self.inside, self.data = form_id, False, {}
        self._select = self._textarea = None
        self._first_option = None

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if tag == "form":
            self.inside = attrs.get("id") == self.form_id or self.form_id in (attrs.get("class") or "").split()
        if not self.inside:
            return
        name = attrs.get("name")
        if tag == "input" and name:
            kind = attrs.get("type", "text")
            if kind in ("file", "submit", "button"):
                return
            if kind in ("radio", "checkbox") and "checked" not in attrs:
                return
            self.data[name] = attrs.get("value", "")
        elif tag == "select" and name:
            self._select, self._first_option = name, None
        elif tag == "option" and self._select:
            if self._first_option is None:
                self._first_option = attrs.get("value", "")
            if "selected" in attrs:
                self.data[self._select] = attrs.get("value", "")
        elif tag == "textarea" and name:
            self._textarea = name
            self.data[name] = ""

    def handle_endtag(self, tag):
        if tag == "form":
            self.inside = False
        elif tag == "select" and self._select:
            self.data.setdefault(self._select, self._first_option or "")
            self._select = None
        elif tag == "textarea":
            self._textarea = None

    def handle_data(self, data):
        if self._textarea:
            self.data[self._textarea] += data.lstrip("\n") if not self.data[self._textarea] else data


def form_fields(html: str, form_id: str) -> dict[str, str]:
    """What the form with this id (or class) sends when submitted unchanged."""
    reader = _FormReader(form_id)
    reader.feed(html)
    assert reader.data, f"no form {form_id!r} on the page"
    return reader.data
