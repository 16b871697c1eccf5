"""The audit trail: one line per change to a client's records, written by the services.

Call :func:`record` inside the service's transaction, so the entry and the
change are kept together or not at all.  Entries are append-only
(``AuditEntry`` refuses updates and deletes); only erasing a client for good
blanks the personal parts of the entries that mention that client
(``fittings.services.client_records.erase_client``).
"""

from fittings.models import AuditAction, AuditEntry, Client, MeasurementSession, Photo, Plan, PlanRevision

CREATE = AuditAction.CREATE
CHANGE = AuditAction.CHANGE
DELETE = AuditAction.DELETE
ISSUE = AuditAction.ISSUE
IMPORT = AuditAction.IMPORT
ERASE = AuditAction.ERASE
EXPORT = AuditAction.EXPORT

SUMMARY_MAX = 500

# What an entry calls each kind of row, and how to reach the client whose records the row is part of.
ROW_KINDS = {
    Client: ("client", lambda client: client),
    MeasurementSession: ("session", lambda session: session.client),
    Photo: ("photo", lambda photo: photo.session.client),
    Plan: ("plan", lambda plan: plan.client),
    PlanRevision: ("revision", lambda revision: revision.plan.client),
}


def _who(user, actor):
    """(user to link, name to keep): a signed-in user, or a command's name when there is none."""
    if user is not None and getattr(user, "is_authenticated", False):
        return user, user.get_username()
    return None, actor or ""


def record(
    *,
    user,
    action,
    row=None,
    object_type: str = "",
    object_id="",
    client=None,
    client_reference: str = "",
    summary: str,
    before=None,
    after=None,
    actor: str = "",
) -> AuditEntry:
    """Add one entry.  ``client`` (or ``client_reference``) says whose records these are.

    ``row``, one stored row of a client's records, gives the kind, id and client at once
    (``object_type`` still names the kind where the entry is about part of the row).
    """
    linked, username = _who(user, actor)
    if row is not None:
        kind, owner = ROW_KINDS[type(row)]
        object_type, object_id, client = object_type or kind, row.pk, owner(row)
    if client is not None and not client_reference:
        client_reference = client.reference
    return AuditEntry.objects.create(
        user=linked,
        username=username[:150],
        action=action,
        object_type=object_type,
        object_id="" if object_id is None else str(object_id),
        client_reference=client_reference or "",
        summary=summary[:SUMMARY_MAX],
        before=before,
        after=after,
    )


CLIENT_FIELDS = ("reference", "name", "contact", "notes", "consent_given_on")


def fields_of(row, names) -> dict:
    return {name: getattr(row, name) for name in names}


def session_snapshot(session) -> dict:
    """Everything a fitter entered in a session, read fresh from the database (mm as strings)."""
    return {
        **fields_of(session, MeasurementSession.ENTERED_FIELDS),
        "version": session.version,
        "measurements_mm": {
            code: str(value) for code, value in session.measurements.order_by("code").values_list("code", "value_mm")
        },
        "photos": sorted(session.photos.values_list("view", flat=True)),
    }


def client_snapshot(client) -> dict:
    return {**fields_of(client, CLIENT_FIELDS), "is_deleted": client.is_deleted}
