"""Base patterns as stored: the Django side of patterns.core.block.

All lengths are millimetres as Decimal with four places (see
patterns/core/units.py).  Coordinates follow the block's convention: x grows
from centre front towards centre back, y grows downwards from the top.
"""

from django.db import models
from django.db.models import F, Q

from patterns.core import block as core
from patterns.core.defaults import is_corset
from patterns.core.measures import LEVEL_CODES, LEVEL_LABELS
from patterns.core.units import STORE_PLACES

MM_PLACES = -STORE_PLACES.as_tuple().exponent


def mm_field(*args, **kwargs):
    """A length in millimetres, as stored everywhere in the app."""
    return models.DecimalField(*args, max_digits=9, decimal_places=MM_PLACES, **kwargs)


LEVEL_CHOICES = [(code, LEVEL_LABELS[code]) for code in LEVEL_CODES]


class GarmentKind(models.TextChoices):
    # The values are the garment names the core's Block carries.
    OVERBUST_CORSET = "overbust corset", "Overbust corset"
    UNDERBUST_CORSET = "underbust corset", "Underbust corset"
    BODICE = "bodice", "Bodice"
    OTHER = "other", "Other"


class CentreFront(models.TextChoices):
    FOLD = core.CF_FOLD, "Cut on the fold"
    BUSK = core.CF_BUSK, "Busk opening"


class CentreBack(models.TextChoices):
    LACED = core.CB_LACED, "Laced"
    SEAMED = core.CB_SEAMED, "Seamed (or zip)"


class PanelSide(models.TextChoices):
    FRONT = core.FRONT, "Front of the side seam"
    BACK = core.BACK, "Back of the side seam"


SEAM_KIND_CHOICES = [(kind, f"{kind.capitalize()} seam") for kind in core.SEAM_KINDS]


class SizeRun(models.Model):
    """A family of base patterns graded from one draft, one per size."""

    name = models.CharField(max_length=200, unique=True)
    garment = models.CharField(max_length=40, choices=GarmentKind.choices)

    class Meta:
        ordering = ["name"]

    def __str__(self):
        return self.name


class BasePattern(models.Model):
    """One size of one block: its levels, panels (half pattern) and seams."""

    name = models.CharField(max_length=200)
    garment = models.CharField(max_length=40, choices=GarmentKind.choices)
    size_label = models.CharField(max_length=20, help_text="As the atelier names the size, e.g. 10 or M.")
    size_run = models.ForeignKey(
        SizeRun,
        models.SET_NULL,
        null=True,
        blank=True,
        related_name="patterns",
    )
    size_order = models.PositiveSmallIntegerField(default=0, help_text="Position within the size run, smallest first.")
    centre_front = models.CharField(max_length=10, choices=CentreFront.choices, default=CentreFront.BUSK)
    centre_back = models.CharField(max_length=10, choices=CentreBack.choices, default=CentreBack.LACED)
    seam_allowance_mm = mm_field(default=15)
    notes = models.TextField(blank=True)
    channels = models.JSONField(
        default=list,
        blank=True,
        help_text="Boning channels marked inside panels, besides the one on every seam (patterns.core.fitting.channels_to_list).",
    )
    is_active = models.BooleanField(
        default=True,
        help_text="Inactive patterns stay for the plans made from them but are not offered for new ones.",
    )
    created_at = models.DateTimeField(auto_now_add=True)
    # Editing a block that plans use makes a new version; the plans keep the one they were made from.
    version = models.PositiveIntegerField(
        default=1, help_text="1 for a new block, one more at every edit that plans already used."
    )
    previous = models.ForeignKey(
        "self",
        models.PROTECT,
        null=True,
        blank=True,
        related_name="later_versions",
        help_text="The version this one was edited from.",
    )

    class Meta:
        ordering = ["name", "size_order", "size_label"]
        constraints = [
            models.UniqueConstraint(
                fields=["name", "size_label"],
                condition=Q(is_active=True),
                name="pattern_active_name_size_unique",
            ),
            models.UniqueConstraint(
                fields=["size_run", "size_label"],
                condition=Q(is_active=True),
                name="pattern_active_size_in_run_unique",
            ),
            models.CheckConstraint(condition=Q(version__gte=1), name="pattern_version_from_one"),
            models.CheckConstraint(condition=Q(seam_allowance_mm__gte=0), name="pattern_seam_allowance_not_negative"),
            models.CheckConstraint(condition=Q(garment__in=GarmentKind.values), name="pattern_garment_known"),
            models.CheckConstraint(condition=Q(centre_front__in=CentreFront.values), name="pattern_centre_front_known"),
            models.CheckConstraint(condition=Q(centre_back__in=CentreBack.values), name="pattern_centre_back_known"),
        ]

    def __str__(self):
        return f"{self.name}, size {self.size_label}"

    @property
    def is_corset(self) -> bool:
        return is_corset(self.garment)


def numbered_in_pattern(part: str) -> list[models.BaseConstraint]:
    """A pattern's panels and seams count 1, 2, ... from centre front, each number and name once per pattern."""
    return [
        models.UniqueConstraint(fields=["pattern", "order"], name=f"{part}_order_unique"),
        models.UniqueConstraint(fields=["pattern", "name"], name=f"{part}_name_unique"),
        models.CheckConstraint(condition=Q(order__gte=1), name=f"{part}_order_from_one"),
    ]


class PatternLevel(models.Model):
    """A horizontal level of the block (bust, waist, ...) at its height."""

    pattern = models.ForeignKey(BasePattern, models.CASCADE, related_name="levels")
    name = models.CharField(max_length=20, choices=LEVEL_CHOICES)
    y_mm = mm_field(help_text="Distance down from the top of the block.")

    class Meta:
        ordering = ["pattern", "y_mm"]
        constraints = [
            models.UniqueConstraint(fields=["pattern", "name"], name="level_once_per_pattern"),
            models.UniqueConstraint(fields=["pattern", "y_mm"], name="level_height_once_per_pattern"),
            models.CheckConstraint(condition=Q(name__in=LEVEL_CODES), name="level_name_known"),
        ]

    def __str__(self):
        return f"{self.get_name_display()} at {self.y_mm} mm"


class PatternPanel(models.Model):
    """One panel of the half pattern; order 1 is at centre front."""

    pattern = models.ForeignKey(BasePattern, models.CASCADE, related_name="panels")
    order = models.PositiveSmallIntegerField(help_text="1 at centre front, counting towards centre back.")
    name = models.CharField(max_length=100)
    side = models.CharField(max_length=10, choices=PanelSide.choices)
    cut_count = models.PositiveSmallIntegerField(default=2, help_text="Pieces to cut per garment.")
    on_fold = models.BooleanField(default=False)
    top_bound = models.BooleanField(default=False, help_text="The top edge is bound: no seam allowance there.")
    bottom_bound = models.BooleanField(default=False, help_text="The bottom edge is bound: no seam allowance there.")
    grainline_x = mm_field(
        null=True, blank=True, help_text="Where the grainline runs; empty for the middle of the panel."
    )
    top_left_x = mm_field()
    top_left_y = mm_field()
    top_right_x = mm_field()
    top_right_y = mm_field()
    bottom_left_x = mm_field()
    bottom_left_y = mm_field()
    bottom_right_x = mm_field()
    bottom_right_y = mm_field()
    curves = models.JSONField(
        null=True,
        blank=True,
        help_text="The drawn stitch lines of a panel imported from a drawing (patterns.core.fitting.curves_to_dict).",
    )

    class Meta:
        ordering = ["pattern", "order"]
        constraints = [
            *numbered_in_pattern("panel"),
            models.CheckConstraint(condition=Q(cut_count__gte=1), name="panel_cut_at_least_once"),
            models.CheckConstraint(condition=Q(side__in=PanelSide.values), name="panel_side_known"),
        ]

    def __str__(self):
        return f"{self.order}. {self.name}"


class PanelLine(models.Model):
    """Where a panel's two stitch lines cross one level of the block."""

    panel = models.ForeignKey(PatternPanel, models.CASCADE, related_name="lines")
    level = models.CharField(max_length=20, choices=LEVEL_CHOICES)
    left_x = mm_field(help_text="Stitch line on the centre-front side.")
    right_x = mm_field(help_text="Stitch line on the centre-back side.")

    class Meta:
        ordering = ["panel", "left_x"]
        constraints = [
            models.UniqueConstraint(fields=["panel", "level"], name="panel_line_once_per_level"),
            models.CheckConstraint(condition=Q(right_x__gt=F("left_x")), name="panel_line_has_width"),
            models.CheckConstraint(condition=Q(level__in=LEVEL_CODES), name="panel_line_level_known"),
        ]

    def __str__(self):
        return f"{self.panel.name} at {self.get_level_display()}"


class PatternSeam(models.Model):
    """The seam joining panel ``order`` to panel ``order + 1``."""

    pattern = models.ForeignKey(BasePattern, models.CASCADE, related_name="seams")
    order = models.PositiveSmallIntegerField(help_text="Seam 1 joins panels 1 and 2, and so on.")
    name = models.CharField(max_length=100)
    kind = models.CharField(max_length=10, choices=SEAM_KIND_CHOICES)
    alterable_levels = models.JSONField(default=list, blank=True, help_text="Level codes where this seam may move.")
    cap_mm = mm_field(default=15, help_text="Most one raw edge may move, in mm.")

    class Meta:
        ordering = ["pattern", "order"]
        constraints = [
            *numbered_in_pattern("seam"),
            models.CheckConstraint(condition=Q(cap_mm__gte=0), name="seam_cap_not_negative"),
            models.CheckConstraint(condition=Q(kind__in=core.SEAM_KINDS), name="seam_kind_known"),
        ]

    def __str__(self):
        return self.name
