"""Clients, their measurements and the alteration plans made for them.

Lengths are millimetres (Decimal, four places); the unit a session was
entered in is kept only to show it back the same way.  Plan revisions are
append-only: once saved, a revision's inputs and result never change, and an
issued revision never changes at all.
"""

import json
import uuid
from pathlib import PurePath

from django.conf import settings
from django.core.exceptions import ValidationError
from django.core.serializers.json import DjangoJSONEncoder
from django.db import models
from django.db.models import Q
from django.utils import timezone

from atelier.storage import private_storage
from fittings.search import search_expressions
from patterns.core.measures import LEVEL_CODES, MEASURE_BY_CODE, MEASURES
from patterns.core.tiling import PAPER_CHOICES, PAPER_SIZES
from patterns.core.units import UNIT_CHOICES, UNITS
from patterns.models import LEVEL_CHOICES, BasePattern, mm_field


def user_link():
    """Who entered or changed a row: optional; a user named in a client's records cannot be deleted."""
    return models.ForeignKey(settings.AUTH_USER_MODEL, models.PROTECT, null=True, blank=True, related_name="+")


class ActiveClientManager(models.Manager):
    def get_queryset(self):
        return super().get_queryset().filter(is_deleted=False)


class Client(models.Model):
    reference = models.CharField(max_length=32, unique=True, help_text="The atelier's own client number.")
    name = models.CharField(max_length=200)
    contact = models.CharField(max_length=200, blank=True, help_text="Telephone or e-mail.")
    notes = models.TextField(blank=True)
    consent_given_on = models.DateField(
        null=True,
        blank=True,
        help_text="When the client agreed to their measurements and photos being kept.",
    )
    is_deleted = models.BooleanField(default=False)
    deleted_at = models.DateTimeField(null=True, blank=True)
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)
    created_by = user_link()

    objects = ActiveClientManager()
    all_objects = models.Manager()

    class Meta:
        ordering = ["name", "reference"]
        # Unique checks and the admin must see deleted clients too.
        default_manager_name = "all_objects"
        base_manager_name = "all_objects"
        indexes = [
            # The client list in name order, and its count, without reading the table.  is_deleted
            # comes last so that SQLite does not pick this index for searches (fittings/search.py).
            models.Index(fields=["name", "reference", "is_deleted"], name="client_list_order"),
            # The search: one index per start it matches (fittings/search.py, DEVELOPERS.md "Search").
            *(models.Index(expression, name=f"client_{key}") for key, expression in search_expressions().items()),
        ]
        constraints = [
            models.CheckConstraint(
                condition=Q(is_deleted=False, deleted_at__isnull=True) | Q(is_deleted=True, deleted_at__isnull=False),
                name="client_deleted_at_matches_flag",
            ),
            models.CheckConstraint(condition=~Q(reference=""), name="client_reference_not_blank"),
        ]

    def __str__(self):
        return f"{self.reference} {self.name}"


class SessionKind(models.TextChoices):
    FIRST = "first", "First measurement"
    TOILE = "toile", "Toile fitting"
    FINAL = "final", "Final fitting"
    CHECK = "check", "Check"


class MeasurementSession(models.Model):
    """One sitting with the tape: the readings taken on one day."""

    client = models.ForeignKey(Client, models.CASCADE, related_name="sessions")
    taken_on = models.DateField(default=timezone.localdate)
    measured_by = user_link()
    kind = models.CharField(max_length=10, choices=SessionKind.choices, default=SessionKind.FIRST)
    unit = models.CharField(
        max_length=2, choices=UNIT_CHOICES, default="cm", help_text="The unit the tape was read in."
    )
    posture_notes = models.TextField(blank=True)
    notes = models.TextField(blank=True)
    version = models.PositiveIntegerField(default=1, help_text="Raised on every edit, to catch two edits at once.")
    created_at = models.DateTimeField(auto_now_add=True)
    updated_at = models.DateTimeField(auto_now=True)

    class Meta:
        ordering = ["-taken_on", "-id"]
        get_latest_by = ["taken_on", "id"]
        indexes = [models.Index(fields=["client", "-taken_on", "-id"], name="session_by_client_date")]
        constraints = [
            models.CheckConstraint(condition=Q(kind__in=SessionKind.values), name="session_kind_known"),
            models.CheckConstraint(condition=Q(unit__in=UNITS), name="session_unit_known"),
            models.CheckConstraint(condition=Q(version__gte=1), name="session_version_from_one"),
        ]

    # What the fitter types for a sitting besides the readings: saved, shown back and audited alike.
    ENTERED_FIELDS = ("taken_on", "kind", "unit", "posture_notes", "notes")

    def __str__(self):
        return f"{self.get_kind_display()}, {self.taken_on}"


MEASURE_CHOICES = [(m.code, m.label) for m in MEASURES]


class Measurement(models.Model):
    session = models.ForeignKey(MeasurementSession, models.CASCADE, related_name="measurements")
    code = models.CharField(max_length=40, choices=MEASURE_CHOICES)
    value_mm = mm_field()

    class Meta:
        ordering = ["session", "id"]
        constraints = [
            models.UniqueConstraint(fields=["session", "code"], name="measurement_once_per_session"),
            models.CheckConstraint(condition=Q(value_mm__gt=0), name="measurement_positive"),
        ]

    def __str__(self):
        return f"{self.get_code_display()}: {self.value_mm} mm"

    def clean(self):
        measure = MEASURE_BY_CODE.get(self.code)
        if measure is None or self.value_mm is None:
            return
        low, high = measure.limits
        if not low <= self.value_mm <= high:
            raise ValidationError({"value_mm": f"{measure.label} must be between {low / 10:g} and {high / 10:g} cm."})


class PhotoView(models.TextChoices):
    FRONT = "front", "Front"
    SIDE = "side", "Side"
    BACK = "back", "Back"


def photo_upload_to(photo, filename):
    """A random name, so nothing about the client shows in the file system."""
    suffix = PurePath(filename).suffix.lower()[:8]
    return f"photos/{timezone.now():%Y/%m}/{uuid.uuid4().hex}{suffix}"


class Photo(models.Model):
    session = models.ForeignKey(MeasurementSession, models.CASCADE, related_name="photos")
    view = models.CharField(max_length=10, choices=PhotoView.choices)
    image = models.ImageField(upload_to=photo_upload_to, storage=private_storage)
    taken_at = models.DateTimeField(default=timezone.now)

    class Meta:
        ordering = ["session", "taken_at"]
        indexes = [models.Index(fields=["session", "taken_at"], name="photo_by_session")]
        constraints = [
            models.CheckConstraint(condition=Q(view__in=PhotoView.values), name="photo_view_known"),
        ]

    def __str__(self):
        return f"{self.get_view_display()} photo, {self.taken_at:%Y-%m-%d}"


class Plan(models.Model):
    """One garment for one client, from one base pattern and one session's readings."""

    client = models.ForeignKey(Client, models.PROTECT, related_name="plans")
    garment = models.CharField(max_length=200, help_text="What is being made, e.g. 'Wedding corset'.")
    base_pattern = models.ForeignKey(BasePattern, models.PROTECT, related_name="plans")
    session = models.ForeignKey(
        MeasurementSession,
        models.PROTECT,
        related_name="plans",
        help_text="The readings this plan answers.",
    )
    created_by = user_link()
    created_at = models.DateTimeField(auto_now_add=True)
    version = models.PositiveIntegerField(default=1, help_text="Raised on every edit, to catch two edits at once.")

    class Meta:
        ordering = ["-created_at", "-id"]
        indexes = [models.Index(fields=["client", "-created_at", "-id"], name="plan_by_client_date")]
        constraints = [
            models.CheckConstraint(condition=Q(version__gte=1), name="plan_version_from_one"),
        ]

    def __str__(self):
        return f"{self.garment} for {self.client}"

    def clean(self):
        if self.client_id and self.session_id and self.session.client_id != self.client_id:
            raise ValidationError({"session": "The session must be one of this client's."})


class RevisionLocked(Exception):
    """A saved plan revision was about to change or disappear."""


class RevisionStatus(models.TextChoices):
    DRAFT = "draft", "Draft"
    ISSUED = "issued", "Issued to the workroom"


class KeptForGoodQuerySet(models.QuerySet):
    """Rows that are only ever added: deleting or updating many at once is refused with ``refusal``."""

    refusal: type[Exception]
    on_delete: str
    on_update: str

    def delete(self):
        raise self.refusal(self.on_delete)

    def update(self, **kwargs):
        raise self.refusal(self.on_update)


class PlanRevisionQuerySet(KeptForGoodQuerySet):
    refusal = RevisionLocked
    on_delete = "Plan revisions are kept for good; they cannot be deleted."
    on_update = "Plan revisions cannot be changed in bulk; save each revision instead."


# Fields fixed once a revision is saved, draft or issued.
_REVISION_FIXED = ("plan_id", "number", "based_on_id", "inputs", "result", "author_id", "created_at")
_REVISION_ISSUE = ("status", "issued_at", "issued_by_id")


def _json_normal(value):
    return json.loads(json.dumps(value))


class PlanRevision(models.Model):
    """One worked-out alteration of a plan, kept exactly as computed.

    ``inputs`` is the whole fitting file (measurements, pattern, options)
    and ``result`` the engine's answer, both plain JSON.  Editing means
    adding a revision based on an earlier one.  The one change allowed is
    issuing a draft, once.
    """

    plan = models.ForeignKey(Plan, models.PROTECT, related_name="revisions")
    number = models.PositiveIntegerField()
    based_on = models.ForeignKey("self", models.PROTECT, null=True, blank=True, related_name="followed_by")
    inputs = models.JSONField()
    result = models.JSONField()
    author = user_link()
    created_at = models.DateTimeField(default=timezone.now)
    status = models.CharField(max_length=10, choices=RevisionStatus.choices, default=RevisionStatus.DRAFT)
    issued_at = models.DateTimeField(null=True, blank=True)
    issued_by = user_link()

    objects = PlanRevisionQuerySet.as_manager()

    class Meta:
        ordering = ["plan", "number"]
        constraints = [
            models.UniqueConstraint(fields=["plan", "number"], name="revision_number_once_per_plan"),
            models.CheckConstraint(condition=Q(number__gte=1), name="revision_number_from_one"),
            models.CheckConstraint(
                condition=(
                    Q(status=RevisionStatus.DRAFT, issued_at__isnull=True, issued_by__isnull=True)
                    | Q(status=RevisionStatus.ISSUED, issued_at__isnull=False)
                ),
                name="revision_issued_has_issued_at",
            ),
        ]

    def __str__(self):
        return f"{self.plan}, revision {self.number}"

    @property
    def is_issued(self):
        return self.status == RevisionStatus.ISSUED

    def save(self, *args, **kwargs):
        if self._state.adding:
            return super().save(*args, **kwargs)
        stored = type(self)._base_manager.filter(pk=self.pk).values(*_REVISION_FIXED, *_REVISION_ISSUE).first()
        if stored is None:
            raise RevisionLocked(f"Revision {self.number} no longer exists and cannot be saved again.")
        changed = [
            name.removesuffix("_id")
            for name in _REVISION_FIXED
            if (_json_normal(getattr(self, name)) if name in ("inputs", "result") else getattr(self, name))
            != stored[name]
        ]
        if changed:
            raise RevisionLocked(
                f"Revision {stored['number']} is saved for good; its {', '.join(changed)} cannot change. "
                "Start a new revision based on it instead."
            )
        issue_changed = any(getattr(self, name) != stored[name] for name in _REVISION_ISSUE)
        if not issue_changed:
            return None
        if stored["status"] == RevisionStatus.ISSUED:
            raise RevisionLocked(
                f"Revision {stored['number']} was issued on {stored['issued_at']:%Y-%m-%d} and cannot change. "
                "Start a new revision based on it instead."
            )
        if self.status != RevisionStatus.ISSUED:
            raise RevisionLocked("A draft revision can only be issued; nothing else about it can change.")
        if self.issued_at is None:
            self.issued_at = timezone.now()
        kwargs["update_fields"] = list(_REVISION_ISSUE)
        return super().save(*args, **kwargs)

    def delete(self, *args, **kwargs):
        raise RevisionLocked(f"Revision {self.number} is kept for good; it cannot be deleted.")


class PinAdjustment(models.Model):
    """A change pinned at a toile fitting, on one seam at one level.

    ``amount_mm`` is the change to the seam on one body half, both raw edges
    together: positive lets the seam out, negative takes it in.
    """

    revision = models.ForeignKey(PlanRevision, models.PROTECT, related_name="pins", help_text="The revision tried on.")
    seam = models.CharField(max_length=100, help_text="Seam name, as in the base pattern.")
    level = models.CharField(max_length=20, choices=LEVEL_CHOICES)
    amount_mm = mm_field(help_text="Positive lets the seam out, negative takes it in (one body half).")
    note = models.TextField(blank=True)
    created_by = user_link()
    created_at = models.DateTimeField(default=timezone.now)

    class Meta:
        ordering = ["revision", "created_at", "id"]
        indexes = [models.Index(fields=["revision", "created_at", "id"], name="pin_by_revision")]
        constraints = [
            models.CheckConstraint(condition=Q(level__in=LEVEL_CODES), name="pin_level_known"),
        ]

    def __str__(self):
        return f"{self.seam} at {self.get_level_display()}: {self.amount_mm:+} mm"


# --- printing ----------------------------------------------------------------------------


class PrintKind(models.TextChoices):
    BOTH = "both", "Work order and cutting sheet"
    WORK_ORDER = "work_order", "Work order"
    CUTTING_SHEET = "cutting_sheet", "Cutting sheet"


# The documents each kind of print draws (slugs of fittings.printing.registry.DOCUMENTS).
KIND_DOCUMENTS = {
    PrintKind.BOTH: ("work-order", "cutting-sheet"),
    PrintKind.WORK_ORDER: ("work-order",),
    PrintKind.CUTTING_SHEET: ("cutting-sheet",),
}


class PrintStatus(models.TextChoices):
    QUEUED = "queued", "Waiting to start"
    RUNNING = "running", "Drawing"
    DONE = "done", "Ready"
    FAILED = "failed", "Failed"


def print_upload_to(job, filename):
    """A random name, so nothing about the client shows in the file system."""
    return f"print/{timezone.now():%Y/%m}/{uuid.uuid4().hex}.pdf"


class BackgroundJob(models.Model):
    """What every piece of background work records: its task, who asked, when it ran, why it failed."""

    task_id = models.CharField(max_length=64, blank=True)
    created_by = user_link()
    created_at = models.DateTimeField(default=timezone.now)
    started_at = models.DateTimeField(null=True, blank=True)
    finished_at = models.DateTimeField(null=True, blank=True)
    error = models.TextField(blank=True)

    class Meta:
        abstract = True


class PrintJob(BackgroundJob):
    """One request to print a revision: drawn in the background, kept privately."""

    revision = models.ForeignKey(PlanRevision, models.PROTECT, related_name="print_jobs")
    paper = models.CharField(max_length=10, choices=PAPER_CHOICES, default="a4")
    kind = models.CharField(max_length=20, choices=PrintKind.choices, default=PrintKind.BOTH)
    status = models.CharField(max_length=10, choices=PrintStatus.choices, default=PrintStatus.QUEUED)
    step = models.CharField(max_length=100, blank=True, help_text="What the job is drawing now, in words.")
    site_url = models.CharField(
        max_length=200,
        blank=True,
        help_text="The app's address when printing was asked for (for the QR code).",
    )

    class Meta:
        ordering = ["-created_at", "-id"]
        indexes = [models.Index(fields=["revision", "-created_at"], name="print_job_by_revision")]
        constraints = [
            models.CheckConstraint(condition=Q(paper__in=list(PAPER_SIZES)), name="print_paper_known"),
            models.CheckConstraint(condition=Q(kind__in=PrintKind.values), name="print_kind_known"),
            models.CheckConstraint(condition=Q(status__in=PrintStatus.values), name="print_status_known"),
        ]

    def __str__(self):
        return f"{self.get_kind_display()} for {self.revision}, {self.get_paper_display()}"

    @property
    def is_finished(self):
        return self.status in (PrintStatus.DONE, PrintStatus.FAILED)

    @property
    def documents(self) -> tuple[str, ...]:
        """The slugs of the documents this job draws (fittings.printing.registry.DOCUMENTS), in order."""
        return KIND_DOCUMENTS[self.kind]

    @property
    def wants_work_order(self):
        return "work-order" in self.documents

    @property
    def wants_cutting_sheet(self):
        return "cutting-sheet" in self.documents

    def file_of(self, document: str):
        """The stored file of one document of this job, or None."""
        kept = next((f for f in self.files.all() if f.document == document), None)
        return kept.file if kept is not None and kept.file else None

    @property
    def work_order(self):
        return self.file_of("work-order")

    @property
    def cutting_sheet(self):
        return self.file_of("cutting-sheet")


class PrintFile(models.Model):
    """One drawn document of a print job, kept privately; a job keeps one file per document."""

    job = models.ForeignKey(PrintJob, models.CASCADE, related_name="files")
    document = models.SlugField(max_length=40, help_text="Which document (fittings.printing.registry.DOCUMENTS).")
    file = models.FileField(upload_to=print_upload_to, storage=private_storage)

    class Meta:
        ordering = ["job", "id"]
        constraints = [models.UniqueConstraint(fields=["job", "document"], name="print_file_one_per_document")]

    def __str__(self):
        return f"{self.document} of print job {self.job_id}"

    @property
    def label(self) -> str:
        from fittings.printing.registry import DOCUMENTS

        known = DOCUMENTS.get(self.document)
        return known.label if known else self.document


# --- audit trail (security and data safety) ---------------------------------------------


class AuditLocked(Exception):
    """An audit entry was about to change or disappear."""


class AuditAction(models.TextChoices):
    CREATE = "create", "Created"
    CHANGE = "change", "Changed"
    DELETE = "delete", "Deleted"
    ISSUE = "issue", "Issued"
    IMPORT = "import", "Imported"
    ERASE = "erase", "Erased"
    EXPORT = "export", "Exported"


class AuditEntryQuerySet(KeptForGoodQuerySet):
    refusal = AuditLocked
    on_delete = "The audit trail is kept for good; entries cannot be deleted."
    on_update = "The audit trail cannot be changed."


class AuditEntry(models.Model):
    """Who did what to a client's records, and when; written by the services (fittings/audit.py).

    Append-only like plan revisions.  The one exception is erasing a client
    for good (fittings/services/client_records.py), which blanks the personal parts
    of the entries that mention that client.
    """

    at = models.DateTimeField(default=timezone.now, db_index=True)
    user = user_link()
    username = models.CharField(max_length=150, blank=True, help_text="Kept as written, or the command that did it.")
    action = models.CharField(max_length=10, choices=AuditAction.choices)
    object_type = models.CharField(max_length=40)
    object_id = models.CharField(max_length=40, blank=True)
    client_reference = models.CharField(max_length=32, blank=True, db_index=True)
    summary = models.CharField(max_length=500)
    before = models.JSONField(null=True, blank=True, encoder=DjangoJSONEncoder)
    after = models.JSONField(null=True, blank=True, encoder=DjangoJSONEncoder)

    objects = AuditEntryQuerySet.as_manager()

    class Meta:
        ordering = ["-at", "-id"]
        verbose_name_plural = "audit entries"
        indexes = [
            models.Index(fields=["object_type", "object_id", "-at"], name="audit_by_object"),
            models.Index(fields=["client_reference", "-at"], name="audit_by_client"),
        ]
        constraints = [
            models.CheckConstraint(condition=Q(action__in=AuditAction.values), name="audit_action_known"),
        ]

    def __str__(self):
        return f"{self.at:%Y-%m-%d %H:%M} {self.username or '-'} {self.get_action_display().lower()} {self.object_type}"

    def save(self, *args, **kwargs):
        if not self._state.adding:
            raise AuditLocked("Audit entries are kept as written; they cannot be changed.")
        return super().save(*args, **kwargs)

    def delete(self, *args, **kwargs):
        raise AuditLocked("Audit entries are kept for good; they cannot be deleted.")


# --- fabric layouts ------------------------------------------------------------------------------
# A revision is append-only, so the fabric a layout was made for is kept with the layout, never on the
# revision.  Layouts are plain JSON made by ``patterns.core.layout`` (``Layout.to_dict``): the rows
# layout, stored at once when the layout is asked for, and the solver's, stored when the task finishes.


class LayoutStatus(models.TextChoices):
    QUEUED = "queued", "Waiting to start"
    RUNNING = "running", "Searching"
    DONE = "done", "Done"
    FAILED = "failed", "Failed"


class FabricLayout(BackgroundJob):
    revision = models.ForeignKey("fittings.PlanRevision", models.PROTECT, related_name="fabric_layouts")
    layers = models.JSONField(
        help_text='The fabric layers and their widths: [{"layer": "fashion", "width_mm": 1400.0}].'
    )
    gap_mm = mm_field(help_text="The least room between two pieces.")
    budget_s = models.PositiveSmallIntegerField(help_text="How long the solver may search, in seconds.")
    status = models.CharField(max_length=10, choices=LayoutStatus.choices, default=LayoutStatus.QUEUED)
    progress = models.PositiveSmallIntegerField(default=0, help_text="Per cent of the time used.")
    best_length_mm = models.FloatField(null=True, blank=True, help_text="The shortest length found so far.")
    shelf = models.JSONField(help_text="The row layout per layer, made at once.")
    solved = models.JSONField(null=True, blank=True, help_text="The solver's layout per layer, when done.")

    class Meta:
        ordering = ["-created_at", "-id"]
        indexes = [models.Index(fields=["revision", "-created_at"], name="fabric_layout_by_revision")]
        constraints = [
            models.CheckConstraint(condition=Q(status__in=LayoutStatus.values), name="fabric_layout_status_known"),
            models.CheckConstraint(condition=Q(progress__lte=100), name="fabric_layout_progress_at_most_100"),
            models.CheckConstraint(condition=Q(gap_mm__gte=0), name="fabric_layout_gap_not_negative"),
        ]

    def __str__(self):
        return f"Fabric layout for {self.revision}, {self.created_at:%Y-%m-%d %H:%M}"

    @property
    def is_finished(self):
        return self.status in (LayoutStatus.DONE, LayoutStatus.FAILED)
