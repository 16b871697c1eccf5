"""The form that takes in a block drawn in a drawing program (DXF or SVG)."""

from django import forms

from fittings.forms import LengthField
from patterns.core.block import CB_LACED
from patterns.core.importing import MAX_FILE_BYTES, BlockImportError, ImportOptions, import_block
from patterns.models import BasePattern, CentreBack, GarmentKind


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
        required=False, min_value=1, max_value=20, label="Pieces in front of the side seam",
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
            self.add_error("name", f"The atelier already keeps {data['name']!r} in size {data['size_label']}; "
                                   "give the block another name or size.")
            return data
        options = ImportOptions(
            name=data["name"], size=data["size_label"], garment=data["garment"],
            front_panels=data.get("front_panels"), centre_back=data["centre_back"],
            seam_allowance_mm=float(data["seam_allowance"]),
        )
        upload = data["file"]
        try:
            data["block"] = import_block(upload.read(), upload.name or "", options)
        except BlockImportError as exc:
            self.add_error("file", str(exc))
        return data
