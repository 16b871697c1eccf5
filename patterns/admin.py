from django.contrib import admin
from django.db.models import Count

from patterns.models import BasePattern, PanelLine, PatternLevel, PatternPanel, PatternSeam, SizeRun


class PartInline(admin.TabularInline):
    """The rows of a pattern or a panel, shown in its page with no empty rows to fill."""

    extra = 0


class PatternLevelInline(PartInline):
    model = PatternLevel


class PatternPanelInline(PartInline):
    model = PatternPanel
    show_change_link = True
    fields = ["order", "name", "side", "cut_count", "on_fold"]


class PatternSeamInline(PartInline):
    model = PatternSeam


class PanelLineInline(PartInline):
    model = PanelLine


@admin.register(SizeRun)
class SizeRunAdmin(admin.ModelAdmin):
    list_display = ["name", "garment", "pattern_count"]
    list_filter = ["garment"]
    search_fields = ["name"]

    def get_queryset(self, request):
        return super().get_queryset(request).annotate(pattern_count=Count("patterns"))

    @admin.display(description="Sizes", ordering="pattern_count")
    def pattern_count(self, run):
        return run.pattern_count


@admin.register(BasePattern)
class BasePatternAdmin(admin.ModelAdmin):
    list_display = ["name", "size_label", "garment", "size_run", "centre_front", "centre_back", "is_active"]
    list_filter = ["garment", "is_active", "size_run", "centre_front", "centre_back"]
    search_fields = ["name", "size_label", "notes"]
    list_select_related = ["size_run"]
    inlines = [PatternLevelInline, PatternPanelInline, PatternSeamInline]


@admin.register(PatternPanel)
class PatternPanelAdmin(admin.ModelAdmin):
    list_display = ["name", "pattern", "order", "side", "cut_count", "on_fold"]
    list_filter = ["side", "on_fold", "pattern__garment"]
    search_fields = ["name", "pattern__name"]
    list_select_related = ["pattern"]
    inlines = [PanelLineInline]


@admin.register(PatternLevel)
class PatternLevelAdmin(admin.ModelAdmin):
    list_display = ["pattern", "name", "y_mm"]
    list_filter = ["name"]
    search_fields = ["pattern__name"]
    list_select_related = ["pattern"]


@admin.register(PanelLine)
class PanelLineAdmin(admin.ModelAdmin):
    list_display = ["panel", "level", "left_x", "right_x"]
    list_filter = ["level"]
    search_fields = ["panel__name", "panel__pattern__name"]
    list_select_related = ["panel", "panel__pattern"]


@admin.register(PatternSeam)
class PatternSeamAdmin(admin.ModelAdmin):
    list_display = ["name", "pattern", "order", "kind", "cap_mm"]
    list_filter = ["kind"]
    search_fields = ["name", "pattern__name"]
    list_select_related = ["pattern"]
