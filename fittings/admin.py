from django.contrib import admin, messages
from django.db.models import Count
from django.urls import reverse
from django.utils.html import format_html, format_html_join

from fittings import models
from fittings.printing.registry import DOCUMENTS
from fittings.services import clients as client_services


class ReadOnlyAdmin(admin.ModelAdmin):
    """For records the app writes and keeps for good: shown, never added, changed or deleted here."""

    def has_add_permission(self, request):
        return False

    def has_change_permission(self, request, obj=None):
        return False

    def has_delete_permission(self, request, obj=None):
        return False


@admin.register(models.Client)
class ClientAdmin(ReadOnlyAdmin):
    """Clients are added and changed in the app, where every change is audited and version-checked;
    here the owner finds them, removed ones included, and removes or restores them through the same
    services.  Erasing a client for good is ``manage.py erase_client``."""

    list_display = ["reference", "name", "contact", "consent_given_on", "session_count", "is_deleted", "created_at"]
    list_filter = ["is_deleted", "consent_given_on"]
    search_fields = ["reference", "name", "contact", "notes"]
    actions = ["mark_deleted", "restore"]
    date_hierarchy = "created_at"

    def get_queryset(self, request):
        # Deleted clients stay visible here so the owner can restore them.
        return models.Client.all_objects.annotate(session_count=Count("sessions"))

    def has_manage_permission(self, request):
        return request.user.is_superuser

    @admin.display(description="Sessions", ordering="session_count")
    def session_count(self, client):
        return client.session_count

    @admin.action(description="Mark the selected clients as deleted", permissions=["manage"])
    def mark_deleted(self, request, queryset):
        self._each(request, queryset.filter(is_deleted=False), client_services.soft_delete_client, "marked as deleted")

    @admin.action(description="Restore the selected clients", permissions=["manage"])
    def restore(self, request, queryset):
        self._each(request, queryset.filter(is_deleted=True), client_services.restore_client, "restored")

    def _each(self, request, queryset, service, done: str):
        """One service call per client, so each change is audited as it is in the app."""
        clients = list(queryset)
        for client in clients:
            service(client=client, user=request.user)
        self.message_user(request, f"{len(clients)} client(s) {done}.", messages.SUCCESS)


class ReadOnlyInline(admin.TabularInline):
    """The rows a record holds, listed under it and never added, changed or deleted there."""

    extra = 0
    can_delete = False

    def has_add_permission(self, request, obj=None):
        return False

    def has_change_permission(self, request, obj=None):
        return False


class MeasurementInline(ReadOnlyInline):
    model = models.Measurement


@admin.register(models.MeasurementSession)
class MeasurementSessionAdmin(ReadOnlyAdmin):
    list_display = ["client", "taken_on", "kind", "unit", "measured_by", "version"]
    list_filter = ["kind", "unit", "taken_on"]
    search_fields = ["client__reference", "client__name", "notes", "posture_notes"]
    list_select_related = ["client", "measured_by"]
    date_hierarchy = "taken_on"
    readonly_fields = ["version", "created_at", "updated_at"]
    autocomplete_fields = ["client"]
    inlines = [MeasurementInline]


class SessionPartAdmin(ReadOnlyAdmin):
    """What a session holds (readings, photos): found by the client's reference or name."""

    search_fields = ["session__client__reference", "session__client__name"]
    list_select_related = ["session", "session__client"]


@admin.register(models.Measurement)
class MeasurementAdmin(SessionPartAdmin):
    list_display = ["session", "code", "value_mm"]
    list_filter = ["code"]


@admin.register(models.Photo)
class PhotoAdmin(SessionPartAdmin):
    list_display = ["session", "view", "taken_at"]
    list_filter = ["view"]

    def get_fields(self, request, obj=None):
        # A photo, once taken, is a record: show it through the private view.
        return ["session", "view", "open_photo", "taken_at"] if obj else ["session", "view", "image", "taken_at"]

    def get_readonly_fields(self, request, obj=None):
        return ["session", "open_photo"] if obj else []

    @admin.display(description="Photo")
    def open_photo(self, photo):
        return format_html('<a href="{}">Open the photo</a>', reverse("fittings:photo_file", args=[photo.pk]))


class PlanRevisionInline(ReadOnlyInline):
    model = models.PlanRevision
    fields = ["number", "status", "based_on", "author", "created_at", "issued_at", "issued_by"]
    readonly_fields = fields
    show_change_link = True


@admin.register(models.Plan)
class PlanAdmin(ReadOnlyAdmin):
    list_display = ["garment", "client", "base_pattern", "session", "created_by", "created_at", "version"]
    list_filter = ["base_pattern__garment", "created_at"]
    search_fields = ["garment", "client__reference", "client__name"]
    list_select_related = ["client", "base_pattern", "session", "created_by"]
    readonly_fields = ["created_by", "created_at", "version"]
    autocomplete_fields = ["client"]
    inlines = [PlanRevisionInline]


@admin.register(models.PlanRevision)
class PlanRevisionAdmin(ReadOnlyAdmin):
    """Read only: revisions are made and issued by the app, never edited."""

    list_display = ["plan", "number", "status", "author", "created_at", "issued_at"]
    list_filter = ["status", "created_at", "issued_at"]
    search_fields = ["plan__garment", "plan__client__reference", "plan__client__name"]
    list_select_related = ["plan", "plan__client", "author"]


@admin.register(models.PinAdjustment)
class PinAdjustmentAdmin(ReadOnlyAdmin):
    list_display = ["revision", "seam", "level", "amount_mm", "created_by", "created_at"]
    list_filter = ["level", "created_at"]
    search_fields = ["seam", "note", "revision__plan__client__reference", "revision__plan__client__name"]
    list_select_related = ["revision", "revision__plan", "revision__plan__client", "created_by"]


@admin.register(models.PrintJob)
class PrintJobAdmin(ReadOnlyAdmin):
    """Read only: jobs are made by printing from the app, and their files are served by the app."""

    list_display = ["revision", "kind", "paper", "status", "created_by", "created_at", "finished_at"]
    list_filter = ["status", "kind", "paper", "created_at"]
    search_fields = ["revision__plan__garment", "revision__plan__client__reference", "revision__plan__client__name"]
    list_select_related = ["revision", "revision__plan", "revision__plan__client", "created_by"]
    fields = [
        "revision",
        "kind",
        "paper",
        "status",
        "step",
        "error",
        "downloads",
        "task_id",
        "created_by",
        "created_at",
        "started_at",
        "finished_at",
    ]
    readonly_fields = fields

    @admin.display(description="Files")
    def downloads(self, job):
        links = [
            format_html('<a href="{}">{}</a>', reverse("fittings:print_download", args=[job.pk, name]), label)
            for name, label in (
                (kept.document, DOCUMENTS[kept.document].label)
                for kept in job.files.all()
                if kept.file and kept.document in DOCUMENTS
            )
        ]
        return format_html_join(" · ", "{}", ((link,) for link in links)) if links else "–"


# --- audit trail (read only) ------------------------------------------------------------


@admin.register(models.AuditEntry)
class AuditEntryAdmin(ReadOnlyAdmin):
    """Read only: entries are written by the app's services and kept as written."""

    list_display = ["at", "username", "action", "object_type", "object_id", "client_reference", "summary"]
    list_filter = ["action", "object_type", "at"]
    search_fields = ["client_reference", "username", "summary"]
    date_hierarchy = "at"
    fields = [
        "at",
        "username",
        "user",
        "action",
        "object_type",
        "object_id",
        "client_reference",
        "summary",
        "before",
        "after",
    ]
    readonly_fields = fields
