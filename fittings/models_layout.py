"""Fabric layouts asked for on a revision: the request (layers, widths, gap, time), its progress and result.

A revision is append-only, so the fabric a layout was made for is kept here,
with the layout, never on the revision.  Layouts are plain JSON made by
``patterns.core.layout`` (``Layout.to_dict``): the shelf layout, stored at
once when the layout is asked for, and the solver's, stored when the
background task finishes.
"""

from django.conf import settings
from django.db import models
from django.db.models import Q
from django.utils import timezone

from patterns.models import mm_field


class LayoutStatus(models.TextChoices):
    QUEUED = "queued", "Waiting to start"
    RUNNING = "running", "Searching"
    DONE = "done", "Done"
    FAILED = "failed", "Failed"


class FabricLayout(models.Model):
    revision = models.ForeignKey("fittings.PlanRevision", models.PROTECT, related_name="fabric_layouts")
    layers = models.JSONField(help_text='The fabric layers and their widths: [{"layer": "fashion", "width_mm": 1400.0}].')
    gap_mm = mm_field(help_text="The least room between two pieces.")
    budget_s = models.PositiveSmallIntegerField(help_text="How long the solver may search, in seconds.")
    status = models.CharField(max_length=10, choices=LayoutStatus.choices, default=LayoutStatus.QUEUED)
    progress = models.PositiveSmallIntegerField(default=0, help_text="Per cent of the time used.")
    best_length_mm = models.FloatField(null=True, blank=True, help_text="The shortest length found so far.")
    shelf = models.JSONField(help_text="The row layout per layer, made at once.")
    solved = models.JSONField(null=True, blank=True, help_text="The solver's layout per layer, when done.")
    task_id = models.CharField(max_length=64, blank=True)
    created_by = models.ForeignKey(settings.AUTH_USER_MODEL, models.PROTECT, null=True, blank=True, related_name="+")
    created_at = models.DateTimeField(default=timezone.now)
    started_at = models.DateTimeField(null=True, blank=True)
    finished_at = models.DateTimeField(null=True, blank=True)
    error = models.TextField(blank=True)

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
