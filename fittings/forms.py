"""Forms for the fitting: lengths are typed in the session's unit and kept in mm."""

from datetime import timedelta
from decimal import Decimal

from django import forms
from django.core.exceptions import ValidationError
from django.utils import timezone
from PIL import Image

from fittings.models import Client, MeasurementSession, PhotoView, PrintKind, SessionKind
from patterns.core.allot import Override, PlanOptions
from patterns.core.block import Block
from patterns.core.measures import LEVEL_LABELS, MEASURES
from patterns.core.policies import POLICY_CHOICES
from patterns.core.tiling import PAPER_CHOICES
from patterns.core.units import (
    DEFAULT_STEP_MM,
    UNIT_CHOICES,
    UNIT_LABELS,
    UNITS,
    LengthError,
    format_exact,
    format_length,
    parse_length,
    parse_signed_length,
)

# --- upload checks -----------------------------------------------------------------------
MAX_PHOTO_BYTES = 8 * 1024 * 1024
# From memory: tablet cameras take 8-12 million pixels, phones up to about 48 million in
# their full-resolution mode.  Beyond this a file is refused before it is decoded, so a
# small file that claims a huge picture cannot take the server's memory.
MAX_PHOTO_PIXELS = 50_000_000
# What tablet and phone cameras and their browsers send (MPO is a camera's multi-picture JPEG).
PHOTO_FORMATS = {"JPEG", "MPO", "PNG", "WEBP"}


class PhotoField(forms.ImageField):
    """A client photo, checked by its content with Pillow, not by its name.

    The file must be at most 8 MB, decode completely as a JPEG, PNG or WebP
    picture and have no more than MAX_PHOTO_PIXELS pixels.  What is stored
    is re-encoded from the pixels (``services.clients.clean_photo``).
    """

    def to_python(self, data):
        f = forms.FileField.to_python(self, data)
        if f is None:
            return None
        if f.size > MAX_PHOTO_BYTES:
            raise ValidationError(f"The photo is larger than {MAX_PHOTO_BYTES // (1024 * 1024)} MB.", code="too_big")
        not_a_photo = ValidationError(
            "This file is not a photo that can be read (JPEG, PNG or WebP), or it is damaged.",
            code="invalid_image",
        )
        try:
            f.seek(0)
            with Image.open(f) as image:
                if image.format not in PHOTO_FORMATS:
                    raise not_a_photo
                width, height = image.size
                if width * height > MAX_PHOTO_PIXELS:
                    raise ValidationError(
                        f"The photo has too many pixels ({width} × {height}); "
                        "take it again at the camera's normal size.",
                        code="too_many_pixels",
                    )
                image.verify()
            f.seek(0)
            with Image.open(f) as image:
                image.load()  # every pixel decoded: a cut-off or damaged file fails here
                f.image = image
                f.content_type = Image.MIME.get(image.format)
        except ValidationError:
            raise
        except (Image.DecompressionBombError, Image.DecompressionBombWarning):
            raise ValidationError(
                "The photo has too many pixels; take it again at the camera's normal size.", code="too_many_pixels"
            ) from None
        except Exception:  # noqa: BLE001 - Pillow raises many kinds of error for a bad file
            raise not_a_photo from None
        finally:
            if hasattr(f, "seek") and callable(f.seek):
                f.seek(0)
        return f


# ------------------------------------------------------------------------------------------


class LengthInput(forms.TextInput):
    """A numeric keypad on a tablet, fractions still allowed for inches."""

    def __init__(self, attrs=None):
        super().__init__({"inputmode": "decimal", "autocomplete": "off", "spellcheck": "false", **(attrs or {})})


class LengthField(forms.CharField):
    """A length typed in the form's unit, cleaned to Decimal millimetres."""

    widget = LengthInput

    def __init__(self, *, signed=False, limits=None, **kwargs):
        self.signed = signed
        self.limits = limits
        self.unit = "cm"
        super().__init__(**kwargs)
        self.widget.attrs.setdefault("maxlength", "32")

    def to_python(self, value):
        value = super().to_python(value)
        if value in self.empty_values:
            return None
        try:
            mm = (parse_signed_length if self.signed else parse_length)(value, self.unit)
        except LengthError as exc:
            raise ValidationError(str(exc), code="length") from exc
        if self.limits:
            low, high = self.limits
            if not Decimal(low) <= mm <= Decimal(high):
                raise ValidationError(
                    f"Must be between {format_length(low, self.unit)} and {format_length(high, self.unit)} "
                    f"{UNIT_LABELS[self.unit]}.",
                    code="range",
                )
        return mm


class UnitFormMixin:
    """Forms whose lengths are read in the unit chosen on the form (or given)."""

    def set_unit(self, unit):
        self.unit = unit if unit in UNITS else "cm"
        for field in self.fields.values():
            if isinstance(field, LengthField):
                field.unit = self.unit

    def add_level_lengths(self, levels, name: str, label: str, **options):
        """A signed length per level; ``name`` and ``label`` take the level's code and its label at ``{}``."""
        for level in levels:
            self.fields[name.format(level)] = LengthField(
                label=label.format(LEVEL_LABELS[level]), signed=True, **options
            )


class ClientForm(forms.ModelForm):
    class Meta:
        model = Client
        fields = ["reference", "name", "contact", "consent_given_on", "notes"]
        widgets = {
            "consent_given_on": forms.DateInput(attrs={"type": "date"}, format="%Y-%m-%d"),
            "notes": forms.Textarea(attrs={"rows": 3}),
        }
        labels = {"consent_given_on": "Consent to keep measurements and photos, given on"}

    def clean_reference(self):
        return self.cleaned_data["reference"].strip()


class SessionForm(UnitFormMixin, forms.Form):
    """One sitting: a field per measurement with its ISO 8559-1 name and a how-to hint."""

    taken_on = forms.DateField(widget=forms.DateInput(attrs={"type": "date"}, format="%Y-%m-%d"))
    kind = forms.ChoiceField(choices=SessionKind.choices)
    unit = forms.ChoiceField(choices=UNIT_CHOICES, widget=forms.RadioSelect, initial="cm")
    posture_notes = forms.CharField(required=False, max_length=2000, widget=forms.Textarea(attrs={"rows": 2}))
    notes = forms.CharField(required=False, max_length=4000, widget=forms.Textarea(attrs={"rows": 2}))
    version = forms.IntegerField(required=False, widget=forms.HiddenInput, min_value=1)

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        for m in MEASURES:
            self.fields[m.code] = LengthField(label=m.label, help_text=m.hint, required=False, limits=m.limits)
        for view in PhotoView:
            self.fields[f"photo_{view.value}"] = PhotoField(
                label=f"{view.label} photo",
                required=False,
                widget=forms.ClearableFileInput(attrs={"accept": "image/*", "capture": "environment"}),
            )
        unit = self.data.get("unit") if self.is_bound else self.initial.get("unit")
        self.set_unit(unit or "cm")

    def measure_fields(self):
        return [self[m.code] for m in MEASURES]

    def photo_fields(self):
        return [self[f"photo_{view.value}"] for view in PhotoView]

    def clean_taken_on(self):
        # A sitting is recorded on the day or afterwards: refuse dates that cannot be a real sitting.
        taken_on = self.cleaned_data["taken_on"]
        latest = timezone.localdate() + timedelta(days=1)
        if taken_on > latest or taken_on.year < 1900:
            raise ValidationError("The date of the sitting cannot be in the future.", code="date")
        return taken_on

    def clean(self):
        cleaned = super().clean()
        if not any(cleaned.get(m.code) for m in MEASURES):
            raise ValidationError("Enter at least one measurement.")
        return cleaned

    def values_mm(self):
        return {m.code: self.cleaned_data[m.code] for m in MEASURES if self.cleaned_data.get(m.code) is not None}

    @staticmethod
    def readings_in_unit(data, from_unit: str, to_unit: str) -> dict:
        """The readings typed in ``from_unit`` written in ``to_unit`` (to 1 mm in cm, to 1/16 in in inches),
        so switching the tape unit keeps what was measured.  What cannot be read is left as typed."""
        converted = {}
        for m in MEASURES:
            text = (data.get(m.code) or "").strip()
            if not text:
                continue
            try:
                converted[m.code] = format_length(parse_length(text, from_unit), to_unit)
            except LengthError:
                converted[m.code] = text
        return converted

    @classmethod
    def initial_for(cls, session: MeasurementSession):
        initial = {name: getattr(session, name) for name in (*session.ENTERED_FIELDS, "version")}
        for m in session.measurements.all():
            initial[m.code] = format_exact(m.value_mm, session.unit)
        return initial


class NewPlanForm(forms.Form):
    garment = forms.CharField(max_length=200, initial="Corset")
    base_pattern = forms.ModelChoiceField(queryset=None, empty_label=None)

    def __init__(self, *args, patterns=None, **kwargs):
        super().__init__(*args, **kwargs)
        self.fields["base_pattern"].queryset = patterns
        self.fields["base_pattern"].label_from_instance = lambda p: f"{p.name}, size {p.size_label}"


def cell_name(seam_index: int, level: str, edge: int) -> str:
    """The form name of one raw edge at one level: edge 0 is the seam's front panel, 1 its back panel."""
    return f"fix-{seam_index}-{level}-{edge}"


class PlanOptionsForm(UnitFormMixin, forms.Form):
    """The fitter's choices for a plan: ease per level, lacing gap, centre front, spread, rounding, fixed cells."""

    policy = forms.ChoiceField(choices=POLICY_CHOICES, label="Spread the change")
    lacing_gap = LengthField(label="Lacing gap", required=False, limits=(0, 200))
    centre_front_width = LengthField(
        label="Centre-front width",
        required=False,
        limits=(10, 600),
        help_text="Across the whole front panel. Leave empty to keep the pattern's.",
    )
    step = forms.ChoiceField(label="Round to", choices=[])
    version = forms.IntegerField(widget=forms.HiddenInput, required=False)

    def __init__(self, *args, block: Block, unit: str, **kwargs):
        super().__init__(*args, **kwargs)
        self.block = block
        self.add_level_lengths(
            block.level_names,
            "ease_{}",
            "{} ease",
            required=False,
            limits=(-400, 400),
            help_text="Negative reduces (a corset's waist).",
        )
        for i, seam in enumerate(block.seams):
            for level in block.level_names:
                for edge in (0, 1):
                    self.fields[cell_name(i, level, edge)] = LengthField(
                        signed=True, required=False, limits=(-200, 200)
                    )
        self.fields["step"].choices = step_choices(unit)
        self.set_unit(unit)

    def ease_fields(self):
        return [self[f"ease_{level}"] for level in self.block.level_names]

    def clean_step(self):
        value = self.cleaned_data["step"]
        allowed = {key for key, _ in step_choices(self.unit)}
        if value not in allowed:
            raise ValidationError("Choose a rounding step from the list.")
        return float(value)

    def options(self) -> PlanOptions:
        data = self.cleaned_data
        overrides = []
        for i, seam in enumerate(self.block.seams):
            for level in self.block.level_names:
                for edge, panel in enumerate((seam.front_panel, seam.back_panel)):
                    value = data.get(cell_name(i, level, edge))
                    if value is not None:
                        overrides.append(Override(seam.name, level, panel, float(value)))
        return PlanOptions(
            ease={lv: float(data[f"ease_{lv}"] or 0) for lv in self.block.level_names},
            lacing_gap_mm=float(data["lacing_gap"] or 0),
            centre_front_width_mm=None if data.get("centre_front_width") is None else float(data["centre_front_width"]),
            step_mm=data["step"],
            unit=self.unit,
            policy=data["policy"],
            overrides=tuple(overrides),
        )

    @staticmethod
    def initial_for(options: PlanOptions, block: Block) -> dict:
        unit = options.unit
        initial = {
            "policy": options.policy,
            "lacing_gap": format_exact(options.lacing_gap_mm, unit),
            "centre_front_width": (
                "" if options.centre_front_width_mm is None else format_exact(options.centre_front_width_mm, unit)
            ),
            "step": step_key(options.step_mm),
        }
        for level in block.level_names:
            initial[f"ease_{level}"] = format_exact(options.ease.get(level, 0.0), unit, signed=True)
        seams = {s.name: i for i, s in enumerate(block.seams)}
        for o in options.overrides:
            seam = block.seams[seams[o.seam]]
            edge = 0 if o.panel == seam.front_panel else 1
            initial[cell_name(seams[o.seam], o.level, edge)] = format_exact(o.shift_mm, unit, signed=True)
        return initial


def step_key(mm: float) -> str:
    return f"{mm:g}"


def step_choices(unit: str):
    if unit == "in":
        sixteenth = DEFAULT_STEP_MM["in"]
        return [
            (step_key(sixteenth), "1/16 in"),
            (step_key(2 * sixteenth), "1/8 in"),
            (step_key(4 * sixteenth), "1/4 in"),
        ]
    return [(step_key(1.0), "1 mm"), (step_key(2.0), "2 mm"), (step_key(5.0), "5 mm")]


class PinForm(UnitFormMixin, forms.Form):
    """Pins from a toile fitting, one field per seam and level (one body half, both edges together)."""

    version = forms.IntegerField(widget=forms.HiddenInput, required=False)
    note = forms.CharField(required=False, max_length=2000, widget=forms.Textarea(attrs={"rows": 2}))

    def __init__(self, *args, block: Block, unit: str, **kwargs):
        super().__init__(*args, **kwargs)
        self.block = block
        for i, seam in enumerate(block.seams):
            for level in block.level_names:
                self.fields[f"pin-{i}-{level}"] = LengthField(signed=True, required=False, limits=(-200, 200))
        self.set_unit(unit)

    def pins(self):
        out = []
        for i, seam in enumerate(self.block.seams):
            for level in self.block.level_names:
                value = self.cleaned_data.get(f"pin-{i}-{level}")
                if value:
                    out.append((seam.name, level, value))
        return out


MAX_FITTING_FILE_BYTES = 512 * 1024


class FittingImportForm(forms.Form):
    """A fitting file to take into one client's record, read as text (what the engine reads is checked there)."""

    file = forms.FileField(
        allow_empty_file=True, error_messages={"required": "Choose a fitting file (JSON) to import."}
    )
    garment = forms.CharField(
        max_length=200,
        required=False,
        strip=True,
        error_messages={"max_length": "The garment name is too long (200 characters at most)."},
    )
    other_client = forms.BooleanField(required=False)

    def clean_file(self) -> str:
        upload = self.cleaned_data["file"]
        if upload.size > MAX_FITTING_FILE_BYTES:
            raise ValidationError(
                f"The file is larger than {MAX_FITTING_FILE_BYTES // 1024} KB; a fitting file is far smaller."
            )
        try:
            return upload.read().decode("utf-8")
        except UnicodeDecodeError:
            raise ValidationError("The file is not text (UTF-8); a fitting file is JSON.") from None

    def first_error(self) -> str:
        return next(iter(e for errors in self.errors.values() for e in errors), "")


class PrintForm(forms.Form):
    paper = forms.ChoiceField(choices=PAPER_CHOICES, label="Paper")
    kind = forms.ChoiceField(choices=PrintKind.choices, label="Print", initial=PrintKind.BOTH)
