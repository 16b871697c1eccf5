"""The atelier's own workroom settings, kept by the owner in /admin/ (one row)."""

import re
from decimal import Decimal

from django.core.exceptions import ValidationError
from django.db import models

from patterns.core.boning import BONE_CLEARANCE_MM, BoningRules
from patterns.core.lacing import (
    END_MARGIN_MM,
    EYELET_INSET_MM,
    EYELET_SPACING_MM,
    LACE_TAIL_MM,
    WAIST_PAIR_MM,
    LacingRules,
)
from patterns.core.units import LengthError, parse_length, quantize_mm
from patterns.models import mm_field

_STOCK_ITEM = re.compile(r"^\s*(?P<number>[0-9][0-9 ./,]*?)\s*(?P<unit>mm|cm|in|\")?\s*$")


def parse_stock(text: str) -> tuple[Decimal, ...]:
    """'10 in; 11 in; 30 cm; 254' -> millimetres, sorted.  Items apart by ';' or a new line;
    a number alone is millimetres."""
    values = []
    for item in re.split(r"[;\n]+", text or ""):
        if not item.strip():
            continue
        match = _STOCK_ITEM.match(item)
        if not match:
            raise ValidationError(f"{item.strip()!r} is not a length (write 254, 25.4 cm or 10 in).")
        number, unit = match["number"].strip(), match["unit"] or "mm"
        try:
            if unit == "mm":
                mm = quantize_mm(number.replace(",", "."))
            else:
                mm = parse_length(number, "in" if unit in ("in", '"') else "cm")
        except (LengthError, ArithmeticError, ValueError):
            raise ValidationError(f"{item.strip()!r} is not a length (write 254, 25.4 cm or 10 in).") from None
        if not Decimal("50") <= mm <= Decimal("1000"):
            raise ValidationError(f"A busk of {item.strip()} cannot be right: keep lengths between 5 and 100 cm.")
        values.append(mm)
    if len(values) > 30:
        raise ValidationError("Keep at most 30 busk lengths.")
    return tuple(sorted(set(values)))


# The core's default stock (8 to 16 whole inches), as the owner would type it.
DEFAULT_STOCK_TEXT = "; ".join(f"{inches} in" for inches in range(8, 17))


def _positive(value):
    if value is not None and value <= 0:
        raise ValidationError("Must be more than 0 mm.")


class AtelierSettings(models.Model):
    """Boning and lacing as this atelier works: what the workroom's lists are worked out with.

    One row; until the owner saves it, the defaults below apply (common practice).
    """

    busk_stock = models.TextField(
        "Busk lengths in stock",
        default=DEFAULT_STOCK_TEXT,
        help_text="Separated by semicolons or new lines: millimetres, or with cm or in (for example 10 in; 28 cm). "
        "The busk chosen is the longest of these not longer than the centre front less the busk clearance.",
    )
    bone_clearance_mm = mm_field(
        "Bone clearance (mm, both ends together)",
        default=BONE_CLEARANCE_MM,
        help_text="A bone is its channel less this, clear of the bound top and bottom edges (about 12 mm is usual).",
    )
    busk_clearance_mm = mm_field(
        "Busk clearance (mm, both ends together)",
        null=True,
        blank=True,
        help_text="Leave empty to use the bone clearance.",
    )
    eyelet_spacing_mm = mm_field(
        "Eyelet spacing (mm)",
        default=EYELET_SPACING_MM,
        validators=[_positive],
        help_text="No gap between neighbouring eyelets wider than this (about 25 mm is usual).",
    )
    waist_pair_mm = mm_field(
        "Waist pair (mm apart)",
        default=WAIST_PAIR_MM,
        validators=[_positive],
        help_text="The two eyelets either side of the waistline (12-15 mm is usual).",
    )
    eyelet_margin_mm = mm_field("First and last eyelet from the edges (mm)", default=END_MARGIN_MM)
    eyelet_inset_mm = mm_field("Eyelet centres in from the back stitch line (mm)", default=EYELET_INSET_MM)
    lace_tail_mm = mm_field(
        "Each tail of the lace (mm)",
        default=LACE_TAIL_MM,
        help_text="Added twice to the lace's estimate, for tying and for opening the back to dress.",
    )

    class Meta:
        verbose_name = verbose_name_plural = "workroom settings"
        constraints = [
            models.CheckConstraint(condition=models.Q(pk=1), name="atelier_settings_single_row"),
            models.CheckConstraint(
                condition=models.Q(
                    bone_clearance_mm__gte=0,
                    eyelet_spacing_mm__gt=0,
                    waist_pair_mm__gt=0,
                    eyelet_margin_mm__gte=0,
                    eyelet_inset_mm__gte=0,
                    lace_tail_mm__gte=0,
                ),
                name="atelier_settings_lengths_sensible",
            ),
        ]

    def __str__(self):
        return "Workroom settings"

    def clean(self):
        parse_stock(self.busk_stock)
        for name in ("bone_clearance_mm", "busk_clearance_mm", "eyelet_margin_mm", "eyelet_inset_mm", "lace_tail_mm"):
            value = getattr(self, name)
            if value is not None and not (0 <= value <= 2000):
                raise ValidationError({name: "Must be between 0 and 2000 mm."})

    def save(self, *args, **kwargs):
        self.pk = 1
        super().save(*args, **kwargs)

    @classmethod
    def current(cls) -> "AtelierSettings":
        """The saved settings, or the defaults (not saved) when the owner has not set any."""
        return cls.objects.filter(pk=1).first() or cls(pk=1)

    def boning_rules(self) -> BoningRules:
        return BoningRules(
            clearance_mm=float(self.bone_clearance_mm),
            busk_stock_mm=tuple(float(v) for v in parse_stock(self.busk_stock)),
            busk_clearance_mm=None if self.busk_clearance_mm is None else float(self.busk_clearance_mm),
        )

    def lacing_rules(self) -> LacingRules:
        margin = float(self.eyelet_margin_mm)
        return LacingRules(
            spacing_mm=float(self.eyelet_spacing_mm),
            waist_pair_mm=float(self.waist_pair_mm),
            top_margin_mm=margin,
            bottom_margin_mm=margin,
            inset_mm=float(self.eyelet_inset_mm),
            tail_mm=float(self.lace_tail_mm),
        )
