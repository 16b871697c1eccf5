"""Forms for the atelier's own blocks: typed in, read off a card pattern with a tape, graded.

Lengths are typed in the form's unit (cm, or inches with tape fractions) and
read into millimetres by ``fittings.forms.LengthField``, the one place that
reads a typed length.  The forms only read values; what they describe is
checked, in words, by ``patterns.core.drafting``.
"""

from decimal import Decimal

from django import forms
from django.core.exceptions import ValidationError

from fittings.forms import LengthField, UnitFormMixin
from patterns.core.block import BACK, CB_LACED, FRONT, SEAM_KINDS, Level
from patterns.core.drafting import DEFAULT_CAP_MM, BlockDraft, PanelDraft, SeamDraft, TapePanel, TapeReadings
from patterns.core.grading import EN13402_BUST_STEP_MM, GradingTable
from patterns.core.importing import MAX_FILE_BYTES, BlockImportError, ImportOptions, import_block
from patterns.core.measures import LEVEL_CODES, LEVEL_LABELS
from patterns.core.units import UNIT_CHOICES, UNITS, format_length, quantize_mm
from patterns.models import BasePattern, CentreBack, CentreFront, GarmentKind, PanelSide

MAX_PANELS = 12
MAX_LENGTH_MM = 3000  # nothing on a bodice block is 3 m long (our choice: refuses slips of the finger)
LEVEL_CHOICES = [(code, LEVEL_LABELS[code]) for code in LEVEL_CODES]
SEAM_KIND_CHOICES = [(kind, f"{kind.capitalize()} seam") for kind in SEAM_KINDS]


class Shape:
    """How many panels and which levels a block form has, and the unit its lengths are typed in."""

    def __init__(self, panels=6, levels=LEVEL_CODES, unit="cm"):
        self.panels = panels
        self.levels = tuple(code for code in LEVEL_CODES if code in levels)
        self.unit = unit

    @classmethod
    def read(cls, data, default=None):
        """The shape asked for in submitted data; bad or missing parts fall back to the default."""
        default = default or cls()
        try:
            panels = int(data.get("panel_count", default.panels))
        except (TypeError, ValueError):
            panels = default.panels
        panels = min(max(panels, 1), MAX_PANELS)
        levels = data.getlist("levels") if hasattr(data, "getlist") and "panel_count" in data else default.levels
        levels = [code for code in levels if code in LEVEL_CODES] or list(default.levels)
        unit = data.get("unit", default.unit)
        return cls(panels, levels, unit if unit in UNITS else "cm")


def _length(label, required=True, signed=False, help_text=""):
    return LengthField(
        label=label,
        required=required,
        signed=signed,
        limits=None if signed else (0, MAX_LENGTH_MM),
        help_text=help_text,
    )


class ShapeFields(forms.Form):
    unit = forms.ChoiceField(choices=UNIT_CHOICES, initial="cm", widget=forms.RadioSelect, label="Lengths typed in")
    panel_count = forms.IntegerField(min_value=1, max_value=MAX_PANELS, label="Panels in the half pattern")
    levels = forms.MultipleChoiceField(choices=LEVEL_CHOICES, widget=forms.CheckboxSelectMultiple, label="Levels")


class BlockForm(UnitFormMixin, forms.Form):
    """One base pattern: garment, levels, panels from centre front to centre back, seams."""

    name = forms.CharField(max_length=80, label="Name of the block")
    size_label = forms.CharField(max_length=20, label="Size", help_text="As the atelier names it, e.g. 10 or M.")
    garment = forms.ChoiceField(choices=GarmentKind.choices)
    centre_front = forms.ChoiceField(choices=CentreFront.choices, label="Centre front")
    centre_back = forms.ChoiceField(choices=CentreBack.choices, label="Centre back")

    def __init__(self, *args, shape: Shape, **kwargs):
        super().__init__(*args, **kwargs)
        self.shape = shape
        f = self.fields
        f["seam_allowance"] = _length(
            "Seam allowance", help_text="Added outside the stitch lines; 12-15 mm is usual in corsetry."
        )
        for code in shape.levels:
            f[f"level_{code}"] = _length(f"{LEVEL_LABELS[code]}: height", help_text="Down from the top of the block.")
        for i in range(1, shape.panels + 1):
            p = f"p{i}_"
            f[p + "name"] = forms.CharField(max_length=80, label=f"Panel {i}: name")
            f[p + "side"] = forms.ChoiceField(choices=PanelSide.choices, label="Side")
            f[p + "cut"] = forms.IntegerField(min_value=1, max_value=8, label="Cut", initial=2)
            f[p + "fold"] = forms.BooleanField(required=False, label="On the fold")
            f[p + "top_bound"] = forms.BooleanField(required=False, label="Top edge bound (no seam allowance)")
            f[p + "bottom_bound"] = forms.BooleanField(required=False, label="Bottom edge bound (no seam allowance)")
            f[p + "top_l"] = _length("Top edge at its left stitch line")
            f[p + "top_r"] = _length("Top edge at its right stitch line")
            f[p + "bottom_l"] = _length("Bottom edge at its left stitch line")
            f[p + "bottom_r"] = _length("Bottom edge at its right stitch line")
            f[p + "grain"] = _length(
                "Grainline from the left stitch line",
                required=False,
                help_text="At the middle level; empty puts it in the middle.",
            )
            for code in shape.levels:
                f[f"{p}{code}_w"] = _length(f"Panel {i} width at the {LEVEL_LABELS[code].lower()}", signed=True)
                f[f"{p}{code}_x"] = _length(
                    f"Panel {i} left stitch line at the {LEVEL_LABELS[code].lower()}", required=False, signed=True
                )
        for j in range(1, shape.panels):
            s = f"s{j}_"
            f[s + "name"] = forms.CharField(max_length=80, label=f"Seam {j}: name")
            f[s + "kind"] = forms.ChoiceField(choices=SEAM_KIND_CHOICES, label="Kind")
            f[s + "moves"] = forms.MultipleChoiceField(
                choices=[(c, LEVEL_LABELS[c]) for c in shape.levels],
                required=False,
                widget=forms.CheckboxSelectMultiple,
                label="May move at",
            )
            f[s + "cap"] = _length(
                "Most one raw edge may move",
                required=False,
                help_text=f"Empty: {format_length(DEFAULT_CAP_MM, shape.unit)} {shape.unit}.",
            )
        self.set_unit(shape.unit)

    # --- for the template ------------------------------------------------------------
    def panel_rows(self):
        rows = []
        for i in range(1, self.shape.panels + 1):
            p = f"p{i}_"
            rows.append(
                {
                    "number": i,
                    "fields": [self[p + k] for k in ("name", "side", "cut")],
                    "checks": [self[p + k] for k in ("fold", "top_bound", "bottom_bound")],
                    "edges": [self[p + k] for k in ("top_l", "top_r", "bottom_l", "bottom_r", "grain")],
                    "levels": [(LEVEL_LABELS[c], self[f"{p}{c}_w"], self[f"{p}{c}_x"]) for c in self.shape.levels],
                }
            )
        return rows

    def seam_rows(self):
        return [
            {
                "number": j,
                "name": self[f"s{j}_name"],
                "kind": self[f"s{j}_kind"],
                "moves": self[f"s{j}_moves"],
                "cap": self[f"s{j}_cap"],
            }
            for j in range(1, self.shape.panels)
        ]

    def level_fields(self):
        return [self[f"level_{c}"] for c in self.shape.levels]

    # --- reading ----------------------------------------------------------------------
    def clean(self):
        data = super().clean()
        for i in range(1, self.shape.panels + 1):
            given = [data.get(f"p{i}_{c}_x") is not None for c in self.shape.levels]
            if any(given) and not all(given):
                raise ValidationError(
                    f"Panel {i}: give its left stitch line at every level, or at none (it is then laid out by its widths)."
                )
        return data

    def draft(self) -> BlockDraft:
        d = self.cleaned_data
        mm = float
        levels = tuple(Level(c, mm(d[f"level_{c}"])) for c in self.shape.levels)
        panels = []
        for i in range(1, self.shape.panels + 1):
            p = f"p{i}_"
            lefts = {c: mm(d[f"{p}{c}_x"]) for c in self.shape.levels if d.get(f"{p}{c}_x") is not None}
            panels.append(
                PanelDraft(
                    name=d[p + "name"].strip(),
                    side=d[p + "side"],
                    widths={c: mm(d[f"{p}{c}_w"]) for c in self.shape.levels},
                    lefts=lefts,
                    top=(mm(d[p + "top_l"]), mm(d[p + "top_r"])),
                    bottom=(mm(d[p + "bottom_l"]), mm(d[p + "bottom_r"])),
                    cut_count=d[p + "cut"],
                    on_fold=d[p + "fold"],
                    top_bound=d[p + "top_bound"],
                    bottom_bound=d[p + "bottom_bound"],
                    grainline_mm=None if d.get(p + "grain") is None else mm(d[p + "grain"]),
                )
            )
        seams = tuple(
            SeamDraft(
                name=d[f"s{j}_name"].strip(),
                kind=d[f"s{j}_kind"],
                moves_at=frozenset(d[f"s{j}_moves"]),
                cap_mm=DEFAULT_CAP_MM if d.get(f"s{j}_cap") is None else mm(d[f"s{j}_cap"]),
            )
            for j in range(1, self.shape.panels)
        )
        return BlockDraft(
            name=d["name"].strip(),
            size=d["size_label"].strip(),
            garment=d["garment"],
            levels=levels,
            panels=tuple(panels),
            seams=seams,
            centre_front=d["centre_front"],
            centre_back=d["centre_back"],
            seam_allowance_mm=mm(d["seam_allowance"]),
        )

    @staticmethod
    def initial_for(draft: BlockDraft, unit: str) -> dict:
        """Form values (as typed) for a draft: the stored block, to edit it."""

        def length(mm):
            if unit == "cm":  # exact to the stored 1/10 000 mm, so an unchanged value reads back the same
                text = format((quantize_mm(mm) / 10).normalize(), "f")
                return text if "." in text else f"{text}.0"
            return format_length(Decimal(str(mm)), unit)

        out = {
            "unit": unit,
            "panel_count": len(draft.panels),
            "levels": [lv.name for lv in draft.levels],
            "name": draft.name,
            "size_label": draft.size,
            "garment": draft.garment,
            "centre_front": draft.centre_front,
            "centre_back": draft.centre_back,
            "seam_allowance": length(draft.seam_allowance_mm),
        }
        for lv in draft.levels:
            out[f"level_{lv.name}"] = length(lv.y)
        for i, panel in enumerate(draft.panels, start=1):
            p = f"p{i}_"
            out.update(
                {
                    p + "name": panel.name,
                    p + "side": panel.side,
                    p + "cut": panel.cut_count,
                    p + "fold": panel.on_fold,
                    p + "top_bound": panel.top_bound,
                    p + "bottom_bound": panel.bottom_bound,
                    p + "top_l": length(panel.top[0]),
                    p + "top_r": length(panel.top[1]),
                    p + "bottom_l": length(panel.bottom[0]),
                    p + "bottom_r": length(panel.bottom[1]),
                    p + "grain": "" if panel.grainline_mm is None else length(panel.grainline_mm),
                }
            )
            for code, width in panel.widths.items():
                out[f"{p}{code}_w"] = length(width)
            for code, x in panel.lefts.items():
                out[f"{p}{code}_x"] = length(x)
        for j, seam in enumerate(draft.seams, start=1):
            out.update(
                {
                    f"s{j}_name": seam.name,
                    f"s{j}_kind": seam.kind,
                    f"s{j}_moves": [lv.name for lv in draft.levels if lv.name in seam.moves_at],
                    f"s{j}_cap": length(seam.cap_mm),
                }
            )
        return out

    @staticmethod
    def initial_new(shape: Shape) -> dict:
        """Names and choices for a new block of this shape; the lengths are left to type."""
        n = shape.panels
        out = {
            "unit": shape.unit,
            "panel_count": n,
            "levels": list(shape.levels),
            "garment": GarmentKind.OVERBUST_CORSET,
            "centre_front": CentreFront.BUSK,
            "centre_back": CentreBack.LACED,
            "seam_allowance": format_length(Decimal(15), shape.unit),
        }
        front = (n + 1) // 2
        for i in range(1, n + 1):
            name = "Centre front" if i == 1 else "Centre back" if i == n and n > 1 else f"Panel {i}"
            out.update(
                {
                    f"p{i}_name": name,
                    f"p{i}_side": FRONT if i <= front else BACK,
                    f"p{i}_cut": 2,
                    f"p{i}_top_bound": True,
                    f"p{i}_bottom_bound": True,
                }
            )
        for j in range(1, n):
            side = j == front
            out.update(
                {
                    f"s{j}_name": "Side seam" if side else f"Seam {j}",
                    f"s{j}_kind": "side" if side else "other",
                    f"s{j}_moves": list(shape.levels),
                }
            )
        return out


class TapeSetupForm(UnitFormMixin, forms.Form):
    """First step of the tape entry: what the card pattern is."""

    unit = forms.ChoiceField(choices=UNIT_CHOICES, initial="cm", widget=forms.RadioSelect, label="Tape read in")
    name = forms.CharField(max_length=80, label="Name of the block")
    size_label = forms.CharField(max_length=20, label="Size")
    garment = forms.ChoiceField(choices=GarmentKind.choices)
    centre_front = forms.ChoiceField(choices=CentreFront.choices, label="Centre front")
    centre_back = forms.ChoiceField(choices=CentreBack.choices, label="Centre back")
    levels = forms.MultipleChoiceField(
        choices=LEVEL_CHOICES, widget=forms.CheckboxSelectMultiple, label="Levels marked on the card"
    )
    panel_names = forms.CharField(
        max_length=1000,
        label="Panels, centre front first, one a line",
        widget=forms.Textarea(attrs={"rows": 6}),
        help_text="Put “(back)” after the first panel behind the side seam, e.g. “Side back (back)”.",
    )
    bound = forms.BooleanField(required=False, initial=True, label="Top and bottom edges bound (no seam allowance)")

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self.fields["seam_allowance"] = _length("Seam allowance")
        self.set_unit(self.data.get("unit", "cm") if self.is_bound else "cm")

    def clean_panel_names(self):
        lines = [line.strip() for line in self.cleaned_data["panel_names"].splitlines() if line.strip()]
        if not lines:
            raise ValidationError("Name at least one panel.")
        if len(lines) > MAX_PANELS:
            raise ValidationError(f"At most {MAX_PANELS} panels.")
        panels, side = [], FRONT
        for line in lines:
            if line.lower().endswith("(back)"):
                side, line = BACK, line[: -len("(back)")].strip()
            if not line or len(line) > 80:
                raise ValidationError("Each panel needs a name of at most 80 characters.")
            panels.append(TapePanel(name=line, side=side))
        if len({p.name for p in panels}) != len(panels):
            raise ValidationError("Two panels have the same name.")
        return panels

    def setup(self):
        d = self.cleaned_data
        bound = d["bound"]
        levels = [c for c in LEVEL_CODES if c in d["levels"]]
        panels = [TapePanel(p.name, p.side, top_bound=bound, bottom_bound=bound) for p in d["panel_names"]]
        return d, levels, panels


class TapeForm(UnitFormMixin, forms.Form):
    """Every tape reading, asked step by step: the top, each level in turn, the bottom, the seams."""

    def __init__(self, *args, levels, panels, unit, **kwargs):
        super().__init__(*args, **kwargs)
        self.levels, self.panels = list(levels), list(panels)
        n = len(self.panels)
        f = self.fields
        self.lines = [
            "Centre front",
            *[f"Seam between {a.name} and {b.name}" for a, b in zip(self.panels, self.panels[1:])],
            "Centre back",
        ]
        for k, line in enumerate(self.lines):
            f[f"down{k}_0"] = _length(f"{line}: from the top edge to the {LEVEL_LABELS[self.levels[0]].lower()}")
        for li, code in enumerate(self.levels):
            for i, panel in enumerate(self.panels):
                f[f"w_{code}_{i}"] = _length(f"{panel.name}: width at the {LEVEL_LABELS[code].lower()}", signed=True)
            if li:
                upper = LEVEL_LABELS[self.levels[li - 1]].lower()
                for k, line in enumerate(self.lines):
                    f[f"down{k}_{li}"] = _length(f"{line}: from the {upper} to the {LEVEL_LABELS[code].lower()}")
        last = len(self.levels)
        for k, line in enumerate(self.lines):
            f[f"down{k}_{last}"] = _length(
                f"{line}: from the {LEVEL_LABELS[self.levels[-1]].lower()} to the bottom edge"
            )
        for j in range(1, n):
            f[f"s{j}_name"] = forms.CharField(
                max_length=80, label=f"Seam {j} ({self.panels[j - 1].name} | {self.panels[j].name}): name"
            )
            f[f"s{j}_kind"] = forms.ChoiceField(choices=SEAM_KIND_CHOICES, label="Kind")
            f[f"s{j}_moves"] = forms.MultipleChoiceField(
                choices=[(c, LEVEL_LABELS[c]) for c in self.levels],
                required=False,
                widget=forms.CheckboxSelectMultiple,
                label="May move at",
            )
        self.set_unit(unit)

    def steps(self):
        """(title, field names) for each step, in the order they are asked."""
        out = [("The top edge", [f"down{k}_0" for k in range(len(self.lines))])]
        for li, code in enumerate(self.levels):
            names = [f"w_{code}_{i}" for i in range(len(self.panels))]
            if li:
                names += [f"down{k}_{li}" for k in range(len(self.lines))]
            out.append((f"At the {LEVEL_LABELS[code].lower()}", names))
        out.append(("The bottom edge", [f"down{k}_{len(self.levels)}" for k in range(len(self.lines))]))
        if len(self.panels) > 1:
            out.append(
                ("The seams", [f"s{j}_{k}" for j in range(1, len(self.panels)) for k in ("name", "kind", "moves")])
            )
        return out

    def readings(self) -> TapeReadings:
        d = self.cleaned_data
        return TapeReadings(
            levels=tuple(self.levels),
            panels=tuple(self.panels),
            widths={c: tuple(float(d[f"w_{c}_{i}"]) for i in range(len(self.panels))) for c in self.levels},
            down=tuple(
                tuple(float(d[f"down{k}_{li}"]) for li in range(len(self.levels) + 1)) for k in range(len(self.lines))
            ),
        )

    def seams(self) -> tuple[SeamDraft, ...]:
        d = self.cleaned_data
        return tuple(
            SeamDraft(d[f"s{j}_name"].strip(), d[f"s{j}_kind"], frozenset(d[f"s{j}_moves"]))
            for j in range(1, len(self.panels))
        )


class GradeForm(UnitFormMixin, forms.Form):
    """A size run from one block: the sizes, and the girth change per size step at each level."""

    run_name = forms.CharField(max_length=200, label="Name of the size run")
    sizes = forms.CharField(
        max_length=300,
        label="Sizes, smallest first, separated by commas",
        help_text="The block's own size must be one of them.",
    )
    unit = forms.ChoiceField(choices=UNIT_CHOICES, initial="cm", widget=forms.RadioSelect, label="Lengths typed in")

    def __init__(self, *args, block, **kwargs):
        super().__init__(*args, **kwargs)
        self.block = block
        self.add_level_lengths(
            block.level_names, "girth_{}", "{}: girth per size step", help_text="The whole girth, both body halves."
        )
        for upper, lower in zip(block.level_names, block.level_names[1:]):
            self.fields[f"band_{upper}_{lower}"] = LengthField(
                label=f"{LEVEL_LABELS[upper]} to {LEVEL_LABELS[lower].lower()}: length per size step",
                signed=True,
                required=False,
            )
        self.set_unit(self.data.get("unit", "cm") if self.is_bound else "cm")

    @staticmethod
    def initial_for(block, unit="cm"):
        # 4 cm of bust per size: EN 13402-3's interval; the other girths alike (from memory: a common grade).
        step = format_length(Decimal(str(EN13402_BUST_STEP_MM)), unit)
        return {"unit": unit, **{f"girth_{c}": step for c in block.level_names}}

    def clean_sizes(self):
        sizes = [s.strip() for s in self.cleaned_data["sizes"].split(",") if s.strip()]
        if len(sizes) < 2:
            raise ValidationError("Give at least two sizes.")
        if any(len(s) > 20 for s in sizes):
            raise ValidationError("A size is at most 20 characters.")
        if len(set(sizes)) != len(sizes):
            raise ValidationError("A size appears twice.")
        if self.block.size not in sizes:
            raise ValidationError(f"The block's own size, {self.block.size}, must be one of the sizes.")
        return sizes

    def table(self) -> GradingTable:
        d = self.cleaned_data
        names = self.block.level_names
        return GradingTable(
            girth_mm={c: float(d[f"girth_{c}"]) for c in names},
            band_mm={
                (u, lo): float(d[f"band_{u}_{lo}"])
                for u, lo in zip(names, names[1:])
                if d.get(f"band_{u}_{lo}") is not None
            },
        )

    def girth_fields(self):
        return [self[f"girth_{c}"] for c in self.block.level_names]

    def band_fields(self):
        return [self[f"band_{u}_{lo}"] for u, lo in zip(self.block.level_names, self.block.level_names[1:])]


class BlockImportForm(forms.Form):
    file = forms.FileField(
        label="Drawing (DXF or SVG)",
        help_text="One closed stitch line per piece, centre front on the left; a horizontal line for each level "
        "on a layer (or group) named after it, or with its name written on it; in mm, cm or inches.",
        widget=forms.ClearableFileInput(attrs={"accept": ".dxf,.svg,image/svg+xml,application/dxf"}),
    )
    name = forms.CharField(max_length=200, label="Block name")
    size_label = forms.CharField(max_length=20, label="Size", help_text="As the atelier names it, e.g. 10 or M.")
    garment = forms.ChoiceField(choices=GarmentKind.choices, initial=GarmentKind.OVERBUST_CORSET)
    front_panels = forms.IntegerField(
        required=False,
        min_value=1,
        max_value=20,
        label="Pieces in front of the side seam",
        help_text="Counted from centre front. Left empty: the first half of the pieces.",
    )
    centre_back = forms.ChoiceField(choices=CentreBack.choices, initial=CB_LACED, label="Centre back")
    seam_allowance = LengthField(limits=(0, 50), initial="1.5", label="Seam allowance (cm)")

    def clean_name(self):
        return self.cleaned_data["name"].strip()

    def clean_size_label(self):
        return self.cleaned_data["size_label"].strip()

    def clean_file(self):
        upload = self.cleaned_data["file"]
        if upload.size > MAX_FILE_BYTES:
            raise forms.ValidationError(f"The file is larger than {MAX_FILE_BYTES // (1024 * 1024)} MB.")
        return upload

    def clean(self):
        data = super().clean()
        if self.errors:
            return data
        if BasePattern.objects.filter(is_active=True, name=data["name"], size_label=data["size_label"]).exists():
            self.add_error(
                "name",
                f"The atelier already keeps {data['name']!r} in size {data['size_label']}; "
                "give the block another name or size.",
            )
            return data
        options = ImportOptions(
            name=data["name"],
            size=data["size_label"],
            garment=data["garment"],
            front_panels=data.get("front_panels"),
            centre_back=data["centre_back"],
            seam_allowance_mm=float(data["seam_allowance"]),
        )
        upload = data["file"]
        try:
            data["block"] = import_block(upload.read(), upload.name or "", options)
        except BlockImportError as exc:
            self.add_error("file", str(exc))
        return data
