"""Writes for clients and their measurement sessions.

A session is saved whole or not at all.  Two tablets editing one session
are told apart by its ``version``: the second save is refused, and the
first one's readings stay as they were.
"""

import io

from django.core.files.base import ContentFile
from django.db import transaction
from django.db.models import F
from django.utils import timezone
from PIL import Image, ImageOps

from fittings import audit
from fittings.models import Client, Measurement, MeasurementSession, Photo, PhotoView
from fittings.services import ConcurrentEdit
from patterns.core.measures import MEASURES


def today():
    return timezone.localdate()


@transaction.atomic
def create_client(*, user, reference, name, contact="", notes="", consent_given_on=None) -> Client:
    client = Client.objects.create(
        reference=reference,
        name=name,
        contact=contact,
        notes=notes,
        consent_given_on=consent_given_on,
        created_by=user,
    )
    audit.record(
        row=client,
        user=user,
        action=audit.CREATE,
        summary=f"Client {client.reference} added.",
        after=audit.client_snapshot(client),
    )
    return client


@transaction.atomic
def update_client(*, client: Client, user, reference, name, contact="", notes="", consent_given_on=None) -> Client:
    """Correct a client's details; the details as they were go into the audit trail."""
    before = audit.client_snapshot(client)
    client.reference, client.name, client.contact = reference, name, contact
    client.notes, client.consent_given_on = notes, consent_given_on
    client.save()
    summary = f"Details of client {client.reference} changed."
    audit.record(
        row=client, user=user, action=audit.CHANGE, summary=summary, before=before, after=audit.client_snapshot(client)
    )
    return client


def soft_delete_client(*, client: Client, user) -> None:
    _set_listed(client, user, listed=False)


def restore_client(*, client: Client, user) -> None:
    _set_listed(client, user, listed=True)


@transaction.atomic
def _set_listed(client: Client, user, *, listed: bool) -> None:
    """Take a client off the lists or back on; the records stay either way."""
    client.is_deleted = not listed
    client.deleted_at = None if listed else timezone.now()
    client.save(update_fields=["is_deleted", "deleted_at", "updated_at"])
    if listed:
        action, summary = audit.CHANGE, f"Client {client.reference} restored to the lists."
    else:
        action, summary = audit.DELETE, f"Client {client.reference} removed from the lists (records kept)."
    audit.record(row=client, user=user, action=action, summary=summary)


def clean_photo(upload) -> ContentFile:
    """The picture re-encoded from its pixels: upright, and without EXIF (so no location) or other metadata."""
    upload.seek(0)
    with Image.open(upload) as image:
        image = ImageOps.exif_transpose(image)
        if image.mode not in ("RGB", "L"):
            image = image.convert("RGB")
        out = io.BytesIO()
        image.save(out, format="JPEG", quality=88)
    return ContentFile(out.getvalue(), name="photo.jpg")


def _save_photos(session, form_data):
    for view in PhotoView:
        upload = form_data.get(f"photo_{view.value}")
        if upload:
            Photo.objects.create(session=session, view=view.value, image=clean_photo(upload))


def _session_fields(form_data):
    return {
        "taken_on": form_data["taken_on"],
        "kind": form_data["kind"],
        "unit": form_data["unit"],
        "posture_notes": form_data.get("posture_notes", ""),
        "notes": form_data.get("notes", ""),
    }


@transaction.atomic
def record_session(*, client: Client, user, form_data: dict, values: dict) -> MeasurementSession:
    session = MeasurementSession.objects.create(client=client, measured_by=user, **_session_fields(form_data))
    Measurement.objects.bulk_create(
        [Measurement(session=session, code=code, value_mm=mm) for code, mm in values.items()]
    )
    _save_photos(session, form_data)
    summary = f"Measurements of {session.taken_on} recorded ({len(values)} readings)."
    audit.record(row=session, user=user, action=audit.CREATE, summary=summary, after=audit.session_snapshot(session))
    return session


@transaction.atomic
def update_session(*, session: MeasurementSession, user, form_data: dict, values: dict, expected_version: int):
    """Replace the session's readings, if nobody saved it since ``expected_version``.

    The readings as they were go into the audit trail, so nothing a fitter
    entered is lost when another fitter corrects it.
    """
    stored = MeasurementSession.objects.select_for_update().filter(pk=session.pk, version=expected_version).first()
    before = audit.session_snapshot(stored) if stored is not None else None
    updated = MeasurementSession.objects.filter(pk=session.pk, version=expected_version).update(
        version=F("version") + 1,
        updated_at=timezone.now(),
        **_session_fields(form_data),
    )
    if not updated:
        raise ConcurrentEdit(
            "Someone else saved these measurements while you were editing them. Your readings were not saved; "
            "theirs are kept. Reload to see them, then enter yours again."
        )
    session.refresh_from_db()
    codes = {m.code for m in MEASURES}
    session.measurements.filter(code__in=codes - set(values)).delete()
    for code, mm in values.items():
        Measurement.objects.update_or_create(session=session, code=code, defaults={"value_mm": mm})
    _save_photos(session, form_data)
    summary = f"Measurements of {session.taken_on} changed (version {expected_version} to {session.version})."
    after = audit.session_snapshot(session)
    audit.record(row=session, user=user, action=audit.CHANGE, summary=summary, before=before, after=after)
    return session


@transaction.atomic
def delete_photo(*, photo: Photo, user) -> None:
    """Remove one photo of a session (the file too); the audit trail says which and when."""
    summary = f"{photo.get_view_display()} photo of the readings of {photo.session.taken_on} deleted."
    audit.record(row=photo, user=user, action=audit.DELETE, summary=summary)
    _delete_with_file(photo)


@transaction.atomic
def replace_photo(*, photo: Photo, upload, user) -> Photo:
    """A new picture for the same view of the same session, in place of ``photo``."""
    new = Photo.objects.create(session=photo.session, view=photo.view, image=clean_photo(upload))
    summary = f"{photo.get_view_display()} photo of the readings of {photo.session.taken_on} replaced."
    audit.record(
        row=new, user=user, action=audit.CHANGE, summary=summary, before={"photo": photo.pk}, after={"photo": new.pk}
    )
    _delete_with_file(photo)
    return new


def _delete_with_file(photo: Photo) -> None:
    """The row at once, the picture's file once the transaction is kept (a rolled-back delete keeps it)."""
    name, storage = photo.image.name, photo.image.storage
    photo.delete()
    transaction.on_commit(lambda: storage.delete(name))
