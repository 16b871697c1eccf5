from django.contrib import admin

from atelier.models import AtelierSettings
from atelier.roles import OWNER, role_of


@admin.register(AtelierSettings)
class AtelierSettingsAdmin(admin.ModelAdmin):
    """One row of workroom settings, which only the owner changes."""

    fieldsets = [
        ("Boning and busk", {"fields": ["busk_stock", "bone_clearance_mm", "busk_clearance_mm"]}),
        (
            "Lacing",
            {"fields": ["eyelet_spacing_mm", "waist_pair_mm", "eyelet_margin_mm", "eyelet_inset_mm", "lace_tail_mm"]},
        ),
    ]

    def _owner(self, request):
        return request.user.is_active and (request.user.is_superuser or role_of(request.user) == OWNER)

    def has_module_permission(self, request):
        return self._owner(request)

    def has_view_permission(self, request, obj=None):
        return self._owner(request)

    def has_add_permission(self, request):
        return self._owner(request) and not AtelierSettings.objects.exists()

    def has_change_permission(self, request, obj=None):
        return self._owner(request)

    def has_delete_permission(self, request, obj=None):
        return False
