"""Bad input over every form, the fitting-file import, uploads and URL parameters.

Each case is refused with a 4xx (never a 500), says what is wrong where a
page is shown, and leaves every table of the fittings and patterns apps
(rows and contents) and the private files exactly as they were.
"""

import copy
import io
import json
import re
from dataclasses import dataclass, field

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile
from django.urls import reverse

from tests.security.conftest import jpeg_bytes, private_files, snapshot
from tests.security.test_private_files import png_claiming

pytestmark = pytest.mark.django_db

TOO_BIG = 10**25  # beyond any 64-bit id


@dataclass
class Case:
    id: str
    method: str
    url: object  # world -> path
    data: object = None  # world -> dict (files as uploaded-file objects)
    status: int = 400
    words: str | None = None  # must appear in the page shown
    headers: dict = field(default_factory=dict)


def u(name, *args):
    """world -> reverse(name, args), each arg a callable on the world or a value."""
    return lambda w: reverse(name, args=[a(w) if callable(a) else a for a in args])


def q(name, query, *args):
    return lambda w: u(name, *args)(w) + "?" + (query(w) if callable(query) else query)


CLIENT = lambda w: w.client.pk  # noqa: E731  WF-0102, read in inches
SESSION = lambda w: w.session.pk  # noqa: E731
PLAN = lambda w: w.plan.pk  # noqa: E731
CM_PLAN = lambda w: w.other_plan.pk  # noqa: E731  WF-0101's plan, kept in centimetres


def new_client(**changes):
    return lambda w: {"reference": "BI-1", "name": "Perpetua Lisle", **changes}


def session(**changes):
    return lambda w: {
        "taken_on": "2026-11-30",
        "kind": "first",
        "unit": "cm",
        "bust_girth": "95",
        "done": "1",
        **changes,
    }


def session_edit(**changes):
    return lambda w: {**session(**changes)(w), "version": changes.get("version", w.session.version)}


def photo(data, name="front.jpg"):
    return lambda w: {**session()(w), "photo_front": SimpleUploadedFile(name, data() if callable(data) else data)}


def options(plan_of=lambda w: w.plan, **changes):
    def build(w):
        from tests.security.conftest import options_post

        return options_post(plan_of(w), **changes)

    return build


def fitting(change=None, raw=None):
    """A fitting file: the stored revision's own (valid) file with one thing changed, or raw bytes."""

    def build(w):
        if raw is not None:
            content = raw
        else:
            data = copy.deepcopy(w.issued.inputs)
            change(data)
            content = json.dumps(data).encode()
        return {"file": SimpleUploadedFile("fitting.json", content, content_type="application/json")}

    return build


def setitem(path, value):
    def change(data):
        target = data
        for key in path[:-1]:
            target = target[key]
        target[path[-1]] = value

    return change


def fitting_text(edit):
    """A fitting file whose JSON text is edited (for what json.dumps cannot write)."""

    def build(w):
        content = edit(json.dumps(w.issued.inputs)).encode()
        return {"file": SimpleUploadedFile("fitting.json", content, content_type="application/json")}

    return build


def huge_waist(text):
    return re.sub(r'"waist_girth": [0-9.]+', '"waist_girth": ' + "7" * 4400, text, count=1)


def measurements_twice(text):
    return text.replace('"measurements": {', '"measurements": {"waist_girth": 700, ', 1)


def fixed_twice(data):
    seam = data["pattern"]["seams"][2]
    cell = {"seam": seam["name"], "level": "waist", "panel": seam["front_panel"], "shift_mm": 3.0}
    data["plan"]["overrides"] = [cell, {**cell, "shift_mm": -3.0}]


def upside_down_panel(data):
    panel = data["pattern"]["panels"][1]
    panel["top_left"], panel["bottom_left"] = panel["bottom_left"], panel["top_left"]


def without_level(data):
    data["pattern"]["levels"] = data["pattern"]["levels"][:1]


def renamed_seam(data):
    data["pattern"]["seams"][0]["name"] = "Imaginary seam"


def _svg_block(
    pieces='<rect x="0" y="0" width="100" height="300"/><rect x="150" y="0" width="80" height="300"/>',
    levels='<line id="bust" x1="-5" y1="50" x2="250" y2="50"/><line id="waist" x1="-5" y1="200" x2="250" y2="200"/>',
    size='width="300mm" height="500mm" viewBox="0 0 300 500"',
) -> bytes:
    """A block drawn by hand as SVG: two rectangles and two level lines, each part replaceable."""
    return f'<svg xmlns="http://www.w3.org/2000/svg" {size}>{pieces}{levels}</svg>'.encode()


def _dxf_block(units: int) -> bytes:
    import ezdxf

    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = units
    doc.modelspace().add_lwpolyline([(0, 0), (100, 0), (100, -300), (0, -300)], close=True)
    stream = io.StringIO()
    doc.write(stream)
    return stream.getvalue().encode()


def drawing(content, filename="block.svg", **fields):
    """The block import form as sent, with a drawing file (None: no file)."""

    def build(w):
        data = {
            "name": "Drawn block",
            "size_label": "M",
            "garment": "overbust corset",
            "front_panels": "",
            "centre_back": "laced",
            "seam_allowance": "1.5",
            **fields,
        }
        if content is not None:
            data["file"] = SimpleUploadedFile(filename, content)
        return data

    return build


def layout(**changes):
    """A fabric layout request for the inch plan: the outer fabric and the lining, 55 in wide."""
    return lambda w: {
        "use_fashion": "on",
        "width_fashion": "55",
        "use_lining": "on",
        "width_lining": "55",
        "gap": "1/4",
        "seconds": "1",
        **changes,
    }


def bigger(n):
    return lambda: jpeg_bytes() + b"\x00" * n


def block(**changes):
    """The block form filled in for an invented block, with changes."""

    def build(w):
        import dataclasses

        from patterns.demo import bodice_block
        from tests.patterns.block_post import block_post

        return block_post(dataclasses.replace(bodice_block(), name="Bad-input bodice", size="40"), **changes)

    return build


def edit_block(**changes):
    """The block form for the world's plan's (used) pattern, with changes."""

    def build(w):
        from patterns.selectors import block_for
        from tests.patterns.block_post import block_post

        return block_post(block_for(w.plan.base_pattern), **changes)

    return build


def tape(step=0, **changes):
    base = {
        "unit": "cm",
        "name": "Card block",
        "size_label": "12",
        "garment": "underbust corset",
        "centre_front": "busk",
        "centre_back": "laced",
        "levels": ["waist", "hip"],
        "panel_names": "Front\nBack (back)",
        "bound": "on",
        "seam_allowance": "1.5",
        "step": str(step),
    }
    return lambda w: {**base, **changes}


def grade(**changes):
    def build(w):
        base = {"run_name": "Bad-input run", "sizes": "36, 38, 40", "unit": "cm", "save": "1"}
        pattern = w.plan.base_pattern
        from patterns.selectors import block_for

        levels = block_for(pattern).level_names
        return {**base, **{f"girth_{lv}": "4" for lv in levels}, **changes}

    return build


GRADE_PATTERN = lambda w: w.other_plan.base_pattern_id  # noqa: E731
PATTERN_OF_PLAN = lambda w: w.plan.base_pattern_id  # noqa: E731


CASES = [
    # --- a new client ------------------------------------------------------------------------
    Case(
        "client-reference-empty",
        "post",
        u("fittings:client_new"),
        new_client(reference=""),
        words="This field is required",
    ),
    Case(
        "client-reference-blank",
        "post",
        u("fittings:client_new"),
        new_client(reference="   "),
        words="This field is required",
    ),
    Case("client-name-empty", "post", u("fittings:client_new"), new_client(name=""), words="This field is required"),
    Case(
        "client-reference-too-long",
        "post",
        u("fittings:client_new"),
        new_client(reference="R" * 33),
        words="at most 32",
    ),
    Case("client-name-too-long", "post", u("fittings:client_new"), new_client(name="N" * 201), words="at most 200"),
    Case(
        "client-edit-name-empty",
        "post",
        u("fittings:client_edit", CLIENT),
        new_client(name=""),
        words="This field is required",
    ),
    Case(
        "client-edit-reference-too-long",
        "post",
        u("fittings:client_edit", CLIENT),
        new_client(reference="R" * 33),
        words="at most 32",
    ),
    Case(
        "client-edit-reference-taken",
        "post",
        u("fittings:client_edit", CLIENT),
        new_client(reference="WF-0101"),
        words="already exists",
    ),
    Case("client-edit-that-does-not-exist", "post", u("fittings:client_edit", TOO_BIG), new_client(), status=404),
    Case(
        "client-contact-too-long", "post", u("fittings:client_new"), new_client(contact="0" * 201), words="at most 200"
    ),
    Case(
        "client-consent-not-a-date",
        "post",
        u("fittings:client_new"),
        new_client(consent_given_on="yesterday"),
        words="valid date",
    ),
    Case(
        "client-consent-no-such-day",
        "post",
        u("fittings:client_new"),
        new_client(consent_given_on="2026-02-30"),
        words="valid date",
    ),
    Case(
        "client-reference-taken",
        "post",
        u("fittings:client_new"),
        new_client(reference="WF-0101"),
        words="already exists",
    ),
    Case(
        "client-reference-nul",
        "post",
        u("fittings:client_new"),
        new_client(reference="BI\x001"),
        words="Null characters",
    ),
    # --- a session's readings ------------------------------------------------------------------
    Case(
        "reading-not-a-number",
        "post",
        u("fittings:session_new", CLIENT),
        session(bust_girth="abc"),
        words="not a length in centimetres",
    ),
    Case("reading-nan", "post", u("fittings:session_new", CLIENT), session(bust_girth="NaN"), words="not a length"),
    Case(
        "reading-infinity", "post", u("fittings:session_new", CLIENT), session(bust_girth="inf"), words="not a length"
    ),
    Case(
        "reading-negative", "post", u("fittings:session_new", CLIENT), session(bust_girth="-90"), words="not a length"
    ),
    Case("reading-zero", "post", u("fittings:session_new", CLIENT), session(bust_girth="0"), words="Must be between"),
    Case(
        "reading-absurd", "post", u("fittings:session_new", CLIENT), session(bust_girth="9000"), words="Must be between"
    ),
    Case(
        "reading-exponent", "post", u("fittings:session_new", CLIENT), session(bust_girth="1e3"), words="not a length"
    ),
    Case(
        "unit-switch-unknown-unit",
        "post",
        u("fittings:session_convert", CLIENT),
        session(unit="furlong", typed_unit="cm"),
        words="Choose a tape unit",
    ),
    Case(
        "unit-switch-no-typed-unit",
        "post",
        u("fittings:session_convert", CLIENT),
        session(unit="in"),
        words="Choose a tape unit",
    ),
    Case(
        "reading-fraction-in-cm",
        "post",
        u("fittings:session_new", CLIENT),
        session(bust_girth="27 3/8"),
        words="Fractions are for inches",
    ),
    Case(
        "reading-fraction-over-zero",
        "post",
        u("fittings:session_new", CLIENT),
        session(unit="in", bust_girth="37 3/0"),
        words="0 below the line",
    ),
    Case(
        "reading-fraction-over-one",
        "post",
        u("fittings:session_new", CLIENT),
        session(unit="in", bust_girth="37 9/8"),
        words="less than 1",
    ),
    Case("reading-too-long", "post", u("fittings:session_new", CLIENT), session(bust_girth="9" * 40), words="too long"),
    Case(
        "reading-none-at-all",
        "post",
        u("fittings:session_new", CLIENT),
        session(bust_girth=""),
        words="Enter at least one measurement",
    ),
    Case(
        "session-kind-unknown",
        "post",
        u("fittings:session_new", CLIENT),
        session(kind="fitting"),
        words="Select a valid choice",
    ),
    Case(
        "session-unit-unknown",
        "post",
        u("fittings:session_new", CLIENT),
        session(unit="yd"),
        words="Select a valid choice",
    ),
    Case(
        "session-date-impossible",
        "post",
        u("fittings:session_new", CLIENT),
        session(taken_on="2026-13-45"),
        words="valid date",
    ),
    Case(
        "session-date-far-future",
        "post",
        u("fittings:session_new", CLIENT),
        session(taken_on="9999-12-31"),
        words="cannot be in the future",
    ),
    Case(
        "session-notes-too-long",
        "post",
        u("fittings:session_new", CLIENT),
        session(posture_notes="x" * 2001),
        words="at most 2000",
    ),
    Case(
        "session-notes-nul", "post", u("fittings:session_new", CLIENT), session(notes="a\x00b"), words="Null characters"
    ),
    Case(
        "edit-version-not-a-number",
        "post",
        u("fittings:session_edit", SESSION),
        session_edit(version="abc"),
        words="whole number",
    ),
    Case(
        "edit-version-zero",
        "post",
        u("fittings:session_edit", SESSION),
        session_edit(version="0"),
        words="greater than or equal to 1",
    ),
    Case(
        "edit-version-stale",
        "post",
        u("fittings:session_edit", SESSION),
        session_edit(version="999"),
        status=409,
        words="Someone else saved",
    ),
    Case(
        "edit-bad-reading",
        "post",
        u("fittings:session_edit", SESSION),
        session_edit(waist_girth="-1"),
        words="not a length",
    ),
    # --- photos --------------------------------------------------------------------------------
    Case(
        "photo-not-a-picture",
        "post",
        u("fittings:session_new", CLIENT),
        photo(b"<?php echo 1; ?>" * 20),
        words="not a photo that can be read",
    ),
    Case("photo-empty-file", "post", u("fittings:session_new", CLIENT), photo(b""), words="empty"),
    Case(
        "photo-over-8-mb",
        "post",
        u("fittings:session_new", CLIENT),
        photo(bigger(8 * 1024 * 1024)),
        words="larger than 8 MB",
    ),
    Case(
        "photo-too-many-pixels",
        "post",
        u("fittings:session_new", CLIENT),
        photo(png_claiming(10_000, 6_000), "f.png"),
        words="too many pixels",
    ),
    Case(
        "photo-pixel-bomb",
        "post",
        u("fittings:session_new", CLIENT),
        photo(png_claiming(30_000, 30_000), "f.png"),
        words="too many pixels",
    ),
    Case(
        "photo-cut-off",
        "post",
        u("fittings:session_new", CLIENT),
        photo(lambda: jpeg_bytes((300, 200))[:250]),
        words="damaged",
    ),
    Case(
        "photo-svg",
        "post",
        u("fittings:session_new", CLIENT),
        photo(b"<svg xmlns='http://www.w3.org/2000/svg'/>", "f.svg"),
        words="not a photo",
    ),
    Case(
        "photo-replace-not-a-picture",
        "post",
        u("fittings:photo_replace", lambda w: w.photo.pk),
        lambda w: {"image": SimpleUploadedFile("x.jpg", b"<?php echo 1; ?>" * 20)},
        words="not a photo that can be read",
    ),
    Case(
        "photo-replace-nothing-chosen",
        "post",
        u("fittings:photo_replace", lambda w: w.photo.pk),
        lambda w: {},
        words="Choose the new photo",
    ),
    Case("photo-replace-that-does-not-exist", "post", u("fittings:photo_replace", TOO_BIG), lambda w: {}, status=404),
    Case("photo-delete-that-does-not-exist", "post", u("fittings:photo_delete", TOO_BIG), lambda w: {}, status=404),
    # --- a new plan ----------------------------------------------------------------------------
    Case(
        "plan-garment-empty",
        "post",
        u("fittings:plan_new", SESSION),
        lambda w: {"garment": "", "base_pattern": w.plan.base_pattern_id},
        words="This field is required",
    ),
    Case(
        "plan-garment-too-long",
        "post",
        u("fittings:plan_new", SESSION),
        lambda w: {"garment": "g" * 201, "base_pattern": w.plan.base_pattern_id},
        words="at most 200",
    ),
    Case(
        "plan-pattern-not-a-number",
        "post",
        u("fittings:plan_new", SESSION),
        lambda w: {"garment": "Corset", "base_pattern": "abc"},
        words="Select a valid choice",
    ),
    Case(
        "plan-pattern-missing",
        "post",
        u("fittings:plan_new", SESSION),
        lambda w: {"garment": "Corset", "base_pattern": TOO_BIG},
        words="Select a valid choice",
    ),
    Case(
        "plan-from-another-clients-revision",
        "get",
        q("fittings:plan_new", lambda w: f"from={w.other_plan.revisions.get().pk}", SESSION),
        status=404,
        words="Not found",
    ),
    Case("plan-from-not-a-number", "get", q("fittings:plan_new", "from=abc", SESSION), status=404, words="Not found"),
    Case("plan-from-too-big", "get", q("fittings:plan_new", f"from={TOO_BIG}", SESSION), status=404, words="Not found"),
    # --- a plan's options ----------------------------------------------------------------------
    Case(
        "ease-not-a-number",
        "post",
        u("fittings:plan_edit", PLAN),
        options(ease_waist="abc"),
        words="not a length in inches",
    ),
    Case("ease-nan", "post", u("fittings:plan_edit", PLAN), options(ease_waist="nan"), words="not a length"),
    Case("ease-absurd", "post", u("fittings:plan_edit", PLAN), options(ease_waist="-999"), words="Must be between"),
    Case(
        "ease-fraction-in-cm",
        "post",
        u("fittings:plan_edit", CM_PLAN),
        options(lambda w: w.other_plan, ease_waist="-1 1/2"),
        words="Fractions are for inches",
    ),
    Case(
        "lacing-gap-negative",
        "post",
        u("fittings:plan_edit", PLAN),
        options(lacing_gap="-2"),
        words="not a length in inches",
    ),
    Case("step-not-offered", "post", u("fittings:plan_edit", PLAN), options(step="0.3"), words="Select a valid choice"),
    Case(
        "policy-unknown", "post", u("fittings:plan_edit", PLAN), options(policy="random"), words="Select a valid choice"
    ),
    Case(
        "centre-front-absurd",
        "post",
        u("fittings:plan_edit", PLAN),
        options(centre_front_width="1e9"),
        words="not a length",
    ),
    Case(
        "fixed-cell-absurd",
        "post",
        u("fittings:plan_edit", PLAN),
        options(**{"fix-0-waist-0": "99"}),
        words="Must be between",
    ),
    Case(
        "plan-version-not-a-number", "post", u("fittings:plan_edit", PLAN), options(version="abc"), words="whole number"
    ),
    Case(
        "plan-version-stale",
        "post",
        u("fittings:plan_edit", PLAN),
        options(version="1"),
        status=409,
        words="Someone saved this plan",
    ),
    Case(
        "recompute-infinity-htmx",
        "post",
        u("fittings:plan_recompute", PLAN),
        options(ease_waist="inf"),
        status=422,
        words="not a length",
        headers={"HX-Request": "true"},
    ),
    # --- pins from a toile fitting -------------------------------------------------------------
    Case(
        "pins-none",
        "post",
        u("fittings:revision_pins", PLAN, 2),
        lambda w: {"note": "nothing"},
        words="Enter at least one pin",
    ),
    Case(
        "pin-not-a-number",
        "post",
        u("fittings:revision_pins", PLAN, 2),
        lambda w: {"pin-0-waist": "lots"},
        words="not a length",
    ),
    Case(
        "pin-over-zero",
        "post",
        u("fittings:revision_pins", PLAN, 2),
        lambda w: {"pin-0-waist": "1/0"},
        words="0 below the line",
    ),
    Case(
        "pin-absurd",
        "post",
        u("fittings:revision_pins", PLAN, 2),
        lambda w: {"pin-0-waist": "300"},
        words="Must be between",
    ),
    Case(
        "pin-note-too-long",
        "post",
        u("fittings:revision_pins", PLAN, 2),
        lambda w: {"pin-0-waist": "-1/4", "note": "n" * 2001},
        words="at most 2000",
    ),
    Case(
        "apply-pins-version-damaged",
        "post",
        u("fittings:revision_apply_pins", PLAN, 1),
        lambda w: {"version": "²"},
        words="damaged",
    ),
    # --- the fitting-file import ---------------------------------------------------------------
    Case("import-no-file", "post", u("fittings:fitting_import", CLIENT), lambda w: {}, words="Choose a fitting file"),
    Case(
        "import-malformed-json",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(raw=b'{"format": "atelier-fitting",'),
        words="damaged or is not a fitting file",
    ),
    Case(
        "import-not-text",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(raw=b"\xff\xfe\x00\x01"),
        words="not text",
    ),
    Case(
        "import-not-an-object",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(raw=b"[1, 2]"),
        words="JSON object",
    ),
    Case(
        "import-empty-file",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(raw=b""),
        words="damaged or is not a fitting file",
    ),
    Case(
        "import-nan",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(raw=b'{"measurements": {"bust_girth": NaN}}'),
        words="NaN is not a length",
    ),
    Case(
        "import-infinity",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(raw=b'{"measurements": {"bust_girth": -Infinity}}'),
        words="Infinity is not a length",
    ),
    Case(
        "import-overflowing-number",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["measurements", "bust_girth"], "1e999")),
        words="measurements › bust_girth",
    ),
    Case(
        "import-no-measurements",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["measurements"], {})),
        words="measurements is missing",
    ),
    Case(
        "import-negative-reading",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["measurements", "waist_girth"], -700)),
        words="measurements › waist_girth",
    ),
    Case(
        "import-absurd-reading",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["measurements", "waist_girth"], 4000)),
        words="outside what a body measures",
    ),
    Case(
        "import-reading-as-text",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["measurements", "waist_girth"], "700")),
        words="measurements › waist_girth holds the wrong kind of value",
    ),
    Case(
        "import-unknown-measurement",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["measurements", "shoe_size"], 38)),
        words="shoe_size",
    ),
    Case(
        "import-unknown-seam-override",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(
            setitem(
                ["plan", "overrides"],
                [{"seam": "Nowhere seam", "level": "waist", "panel": "Side front", "shift_mm": 2}],
            )
        ),
        words="no seam called",
    ),
    Case(
        "import-unknown-seam-pin",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["plan", "pins"], [{"seam": "Nowhere seam", "level": "waist", "amount_mm": -3}])),
        words="no seam called",
    ),
    Case(
        "import-unknown-level-ease",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["plan", "ease"], {"knee": 5})),
        words="knee",
    ),
    Case(
        "import-unknown-seam-in-pattern",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(renamed_seam),
        words="differs from the atelier",
    ),
    Case(
        "import-missing-levels", "post", u("fittings:fitting_import", CLIENT), fitting(without_level), words="pattern"
    ),
    Case(
        "import-pattern-not-kept",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["pattern", "name"], "Someone else's block")),
        words="has no base pattern",
    ),
    Case(
        "import-unit-unknown",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["unit"], "yd")),
        words="unit",
    ),
    Case(
        "import-wrong-format",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["format"], "other-program")),
        words="format",
    ),
    Case(
        "import-integer-of-4400-digits",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting_text(huge_waist),
        words="A number of 4,400 digits is not a length",
    ),
    Case(
        "import-name-twice",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting_text(measurements_twice),
        words="appears twice",
    ),
    Case(
        "import-cell-fixed-twice",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(fixed_twice),
        words="a cell is fixed once",
    ),
    Case(
        "import-panel-upside-down",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(upside_down_panel),
        words="lies above its top",
    ),
    Case(
        "import-deeply-nested",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(raw=b"[" * 100_000 + b"]" * 100_000),
        words="damaged or is not a fitting file",
    ),
    Case(
        "import-file-too-large",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(raw=b" " * (600 * 1024) + b"{}"),
        words="larger than 512 KB",
    ),
    Case(
        "import-garment-too-long",
        "post",
        u("fittings:fitting_import", CLIENT),
        lambda w: {**fitting(setitem(["unit"], "in"))(w), "garment": "g" * 201},
        words="too long",
    ),
    # --- a block drawing (DXF or SVG) for a new base pattern ---------------------------------------
    Case("block-no-file", "post", u("patterns:block_import"), drawing(None), words="This field is required"),
    Case(
        "block-empty-file",
        "post",
        u("patterns:block_import"),
        drawing(b"", "empty.svg"),
        words="The submitted file is empty",
    ),
    Case(
        "block-open-outline",
        "post",
        u("patterns:block_import"),
        drawing(_svg_block('<path d="M 0 0 L 100 0 L 100 300 L 0 300"/>')),
        words="An outline is open",
    ),
    Case(
        "block-svg-without-unit",
        "post",
        u("patterns:block_import"),
        drawing(_svg_block(size='width="300" height="500"')),
        words="true size is unknown",
    ),
    Case(
        "block-svg-in-pixels",
        "post",
        u("patterns:block_import"),
        drawing(_svg_block(size='width="300px" height="500px"')),
        words="true size is unknown",
    ),
    Case(
        "block-dxf-unitless", "post", u("patterns:block_import"), drawing(_dxf_block(0), "block.dxf"), words="unitless"
    ),
    Case("block-dxf-in-feet", "post", u("patterns:block_import"), drawing(_dxf_block(2), "block.dxf"), words="feet"),
    Case(
        "block-without-levels",
        "post",
        u("patterns:block_import"),
        drawing(_svg_block(levels="")),
        words="no level lines",
    ),
    Case(
        "block-piece-short-of-a-level",
        "post",
        u("patterns:block_import"),
        drawing(
            _svg_block('<rect x="0" y="0" width="100" height="300"/><rect x="150" y="0" width="80" height="150"/>')
        ),
        words="does not reach the waist",
    ),
    Case(
        "block-not-a-dxf",
        "post",
        u("patterns:block_import"),
        drawing(b"0\nSECTION\n2\nNONSENSE", "block.dxf"),
        words="DXF",
    ),
    Case(
        "block-not-svg",
        "post",
        u("patterns:block_import"),
        drawing(b"<html><body>hello</body></html>", "block.svg"),
        words="not SVG",
    ),
    Case(
        "block-broken-xml",
        "post",
        u("patterns:block_import"),
        drawing(b"<svg xmlns='http://www.w3.org/2000/svg'><g>", "block.svg"),
        words="not an SVG file that can be read",
    ),
    Case(
        "block-xml-entities",
        "post",
        u("patterns:block_import"),
        drawing(
            b'<!DOCTYPE svg [<!ENTITY a "aaaaaaaa"><!ENTITY b "&a;&a;&a;&a;">]><svg xmlns="http://www.w3.org/2000/svg">&b;</svg>',
            "block.svg",
        ),
        words="declares its own entities",
    ),
    Case(
        "block-neither-format",
        "post",
        u("patterns:block_import"),
        drawing(b"\x89PNG\r\n\x1a\n", "block.png"),
        words="neither DXF nor SVG",
    ),
    Case(
        "block-file-too-large",
        "post",
        u("patterns:block_import"),
        drawing(b"<svg>" + b" " * (5 * 1024 * 1024) + b"</svg>"),
        words="larger than 5 MB",
    ),
    Case(
        "block-name-taken",
        "post",
        u("patterns:block_import"),
        drawing(_svg_block(), name="Overbust corset, six panels", size_label="10"),
        words="already keeps",
    ),
    Case(
        "block-too-many-front-pieces",
        "post",
        u("patterns:block_import"),
        drawing(_svg_block(), front_panels="3"),
        words="in front of the side seam",
    ),
    Case(
        "block-negative-allowance",
        "post",
        u("patterns:block_import"),
        drawing(_svg_block(), seam_allowance="-1"),
        words="is not a length in centimetres",
    ),
    Case(
        "block-allowance-too-wide",
        "post",
        u("patterns:block_import"),
        drawing(_svg_block(), seam_allowance="6"),
        words="Must be between",
    ),
    Case(
        "block-unknown-garment",
        "post",
        u("patterns:block_import"),
        drawing(_svg_block(), garment="cape"),
        words="Select a valid choice",
    ),
    Case(
        "block-name-blank",
        "post",
        u("patterns:block_import"),
        drawing(_svg_block(), name="   "),
        words="This field is required",
    ),
    Case(
        "import-channel-beyond-the-panel",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["pattern", "channels"], [{"panel": "Back", "fraction": 2}])),
        words="pattern › channels › 0 › fraction",
    ),
    Case(
        "import-channel-unknown-edge",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["pattern", "channels"], [{"panel": "Back", "edge": "middle", "offset_mm": 10}])),
        words="pattern › channels › 0 › edge",
    ),
    Case(
        "import-channel-on-no-panel",
        "post",
        u("fittings:fitting_import", CLIENT),
        fitting(setitem(["pattern", "channels"], [{"panel": "Nowhere", "fraction": 0.5}])),
        words="names a panel the block does not have",
    ),
    # --- a fabric layout (the plan is kept in inches) --------------------------------------------
    Case(
        "layout-width-zero",
        "post",
        u("fittings:fabric_layout_start", PLAN, 1),
        layout(width_fashion="0"),
        words="more than 0",
    ),
    Case(
        "layout-width-text",
        "post",
        u("fittings:fabric_layout_start", PLAN, 1),
        layout(width_lining="wide"),
        words="not a length in inches",
    ),
    Case(
        "layout-width-negative",
        "post",
        u("fittings:fabric_layout_start", PLAN, 1),
        layout(use_strength="on", width_strength="-55"),
        words="not a length in inches",
    ),
    Case(
        "layout-width-narrower-than-a-piece",
        "post",
        u("fittings:fabric_layout_start", PLAN, 1),
        layout(width_fashion="3"),
        words="wider than the fabric",
    ),
    Case(
        "layout-width-nan",
        "post",
        u("fittings:fabric_layout_start", PLAN, 1),
        layout(width_fashion="NaN"),
        words="not a length",
    ),
    Case(
        "layout-width-absurd",
        "post",
        u("fittings:fabric_layout_start", PLAN, 1),
        layout(width_fashion="99999"),
        words="not a fabric width",
    ),
    Case(
        "layout-gap-text",
        "post",
        u("fittings:fabric_layout_start", PLAN, 1),
        layout(gap="some"),
        words="not a length in inches",
    ),
    Case(
        "layout-gap-absurd", "post", u("fittings:fabric_layout_start", PLAN, 1), layout(gap="20"), words="between 0 and"
    ),
    Case(
        "layout-no-layer",
        "post",
        u("fittings:fabric_layout_start", PLAN, 1),
        lambda w: {"gap": "1/4", "seconds": "1"},
        words="Choose at least one fabric layer",
    ),
    Case(
        "layout-seconds-zero",
        "post",
        u("fittings:fabric_layout_start", PLAN, 1),
        layout(seconds="0"),
        words="greater than or equal to 1",
    ),
    Case(
        "layout-seconds-text",
        "post",
        u("fittings:fabric_layout_start", PLAN, 1),
        layout(seconds="soon"),
        words="whole number",
    ),
    Case(
        "layout-revision-beyond-the-plans",
        "post",
        u("fittings:fabric_layout_start", PLAN, 9),
        layout(),
        status=404,
        words="Not found",
    ),
    # --- base patterns: typed in, edited, read off a card, graded -------------------------------
    Case(
        "block-width-not-a-number",
        "post",
        u("patterns:block_new"),
        block(p2_waist_w="wide"),
        words="not a length in centimetres",
    ),
    Case(
        "block-width-negative",
        "post",
        u("patterns:block_new"),
        block(p2_waist_w="-3"),
        words="wide at the waist: a width between stitch lines must be more than nothing",
    ),
    Case("block-width-zero", "post", u("patterns:block_new"), block(p1_bust_w="0"), words="must be more than nothing"),
    Case(
        "block-width-missing", "post", u("patterns:block_new"), block(p3_abdomen_w=None), words="This field is required"
    ),
    Case("block-width-nan", "post", u("patterns:block_new"), block(p1_waist_w="NaN"), words="not a length"),
    Case("block-level-absurd", "post", u("patterns:block_new"), block(level_waist="9000"), words="Must be between"),
    Case(
        "block-level-outside",
        "post",
        u("patterns:block_new"),
        block(level_abdomen="250"),
        words="crosses none of the panels",
    ),
    Case(
        "block-levels-out-of-order",
        "post",
        u("patterns:block_new"),
        block(level_bust="35"),
        words="must lie below the bust",
    ),
    Case(
        "block-edges-cross",
        "post",
        u("patterns:block_new"),
        block(p2_top_l="45"),
        words="The top and bottom edges of Side front cross",
    ),
    Case("block-name-empty", "post", u("patterns:block_new"), block(name=""), words="This field is required"),
    Case("block-name-too-long", "post", u("patterns:block_new"), block(name="n" * 81), words="at most 80"),
    Case(
        "typed-block-name-taken",
        "post",
        u("patterns:block_new"),
        block(name="Overbust corset, six panels", size_label="10", garment="overbust corset"),
        words="There is already a base pattern",
    ),
    Case("block-cut-zero", "post", u("patterns:block_new"), block(p1_cut="0"), words="greater than or equal to 1"),
    Case(
        "block-garment-unknown", "post", u("patterns:block_new"), block(garment="cape"), words="Select a valid choice"
    ),
    Case(
        "block-seam-kind-unknown", "post", u("patterns:block_new"), block(s1_kind="zip"), words="Select a valid choice"
    ),
    Case(
        "block-seam-level-unknown",
        "post",
        u("patterns:block_new"),
        block(s1_moves=["knee"]),
        words="Select a valid choice",
    ),
    Case("block-seam-cap-negative", "post", u("patterns:block_new"), block(s2_cap="-1"), words="not a length"),
    Case(
        "block-stitch-lines-half-given",
        "post",
        u("patterns:block_new"),
        block(by_widths=True, p2_bust_x="40"),
        words="or at none",
    ),
    Case(
        "block-grainline-outside", "post", u("patterns:block_new"), block(p2_grain="90"), words="lies outside the panel"
    ),
    Case(
        "block-allowance-negative", "post", u("patterns:block_new"), block(seam_allowance="-1.5"), words="not a length"
    ),
    Case(
        "block-fold-off-centre",
        "post",
        u("patterns:block_new"),
        block(p3_fold="on"),
        words="Only the centre-front panel can be cut on the fold",
    ),
    Case("block-draw-nan", "post", u("patterns:block_draw"), block(p1_waist_w="inf"), words="not a length"),
    Case(
        "block-edit-used-negative",
        "post",
        u("patterns:block_edit", PATTERN_OF_PLAN),
        edit_block(p3_waist_w="-2"),
        words="must be more than nothing",
    ),
    Case("block-edit-missing", "post", u("patterns:block_edit", 999_999), lambda w: {}, status=404, words="Not found"),
    Case("block-drawing-not-kept", "get", u("patterns:block_drawing", "f" * 64), status=404, words="Not found"),
    Case("block-drawing-junk-key", "get", u("patterns:block_drawing", "..%2F..%2Fetc"), status=404, words="Not found"),
    Case(
        "tape-no-panels", "post", u("patterns:block_measure"), tape(panel_names=" \n "), words="This field is required"
    ),
    Case("tape-no-levels", "post", u("patterns:block_measure"), tape(levels=[]), words="This field is required"),
    Case(
        "tape-two-panels-alike",
        "post",
        u("patterns:block_measure"),
        tape(panel_names="Front\nFront"),
        words="same name",
    ),
    Case(
        "tape-top-length-negative",
        "post",
        u("patterns:block_measure"),
        tape(1, down0_0="-2", down1_0="3", down2_0="3"),
        words="not a length",
    ),
    Case(
        "tape-width-missing",
        "post",
        u("patterns:block_measure"),
        tape(2, down0_0="2", down1_0="3", down2_0="3", w_waist_0="8"),
        words="This field is required",
    ),
    Case(
        "grade-size-not-in-run",
        "post",
        u("patterns:pattern_grade", GRADE_PATTERN),
        grade(sizes="4, 6"),
        words="must be one of the sizes",
    ),
    Case(
        "grade-step-not-a-number",
        "post",
        u("patterns:pattern_grade", GRADE_PATTERN),
        grade(girth_waist="four"),
        words="not a length",
    ),
    Case(
        "grade-pattern-in-a-run",
        "post",
        u("patterns:pattern_grade", PATTERN_OF_PLAN),
        grade(sizes="8, 10, 12"),
        words="belongs to the size run",
    ),
    Case(
        "grade-run-name-empty",
        "post",
        u("patterns:pattern_grade", GRADE_PATTERN),
        grade(run_name=""),
        words="This field is required",
    ),
    # --- URL parameters: other clients' objects, ids that do not exist, junk ---------------------
    Case(
        "compare-another-clients-session",
        "get",
        q("fittings:compare", lambda w: f"a=s{w.other_client.sessions.get().pk}&b=s{w.session.pk}", CLIENT),
        words="not in this client",
    ),
    Case(
        "compare-another-clients-revision",
        "get",
        q("fittings:compare", lambda w: f"a=r{w.other_plan.revisions.get().pk}&b=r{w.issued.pk}", CLIENT),
        words="not in this client",
    ),
    Case(
        "compare-session-with-revision",
        "get",
        q("fittings:compare", lambda w: f"a=s{w.session.pk}&b=r{w.issued.pk}", CLIENT),
        words="a session with a session",
    ),
    Case(
        "compare-junk", "get", q("fittings:compare", "a=%27%3B--&b=%3Cscript%3E", CLIENT), words="Choose two sessions"
    ),
    Case(
        "compare-superscript-digits",
        "get",
        q("fittings:compare", "a=s%C2%B2&b=s%C2%B3", CLIENT),
        words="Choose two sessions",
    ),
    Case(
        "compare-id-too-big",
        "get",
        q("fittings:compare", lambda w: f"a=s{TOO_BIG}&b=s{w.session.pk}", CLIENT),
        words="not in this client",
    ),
    Case("session-that-does-not-exist", "get", u("fittings:session_edit", TOO_BIG), status=404, words="Not found"),
    Case(
        "plan-that-does-not-exist",
        "post",
        u("fittings:plan_edit", 999_999),
        lambda w: {},
        status=404,
        words="Not found",
    ),
    Case("revision-beyond-the-plans", "get", u("fittings:revision_detail", PLAN, 3), status=404, words="Not found"),
    Case(
        "revision-file-beyond-the-plans",
        "get",
        u("fittings:revision_fitting_file", PLAN, 99),
        status=404,
        words="Not found",
    ),
    Case(
        "issue-revision-beyond-the-plans",
        "post",
        u("fittings:revision_issue", PLAN, 3),
        lambda w: {},
        status=404,
        words="Not found",
    ),
    Case("photo-that-does-not-exist", "get", u("fittings:photo_file", TOO_BIG), status=404, words="Not found"),
    Case("proof-unknown-document", "get", u("fittings:revision_proof", PLAN, 1, "recipe"), status=404),
    Case(
        "proof-unknown-paper",
        "get",
        q("fittings:revision_proof", "paper=a0", PLAN, 1, "work-order"),
        words="a4 or letter",
    ),
    Case("client-that-does-not-exist", "get", u("fittings:session_new", 999_999), status=404, words="Not found"),
    Case(
        "large-sheet-unknown-size",
        "get",
        u("fittings:print_large", lambda w: w.job.pk, "a1"),
        status=404,
        words="Not found",
    ),
    Case("large-sheet-job-missing", "get", u("fittings:print_large", TOO_BIG, "a0"), status=404, words="Not found"),
    Case(
        "projector-revision-beyond-the-plans", "get", u("fittings:projector", PLAN, 99), status=404, words="Not found"
    ),
    Case(
        "projector-pieces-revision-beyond",
        "get",
        u("fittings:projector_pieces", PLAN, 99),
        status=404,
        words="Not found",
    ),
]


def test_it_has_a_corpus_of_at_least_fifty_cases():
    assert len(CASES) >= 50
    assert len({case.id for case in CASES}) == len(CASES)


def _send(client, case, world):
    url = case.url(world)
    data = case.data(world) if case.data else None
    if case.method == "get":
        return client.get(url, headers=case.headers)
    return client.post(url, data or {}, headers=case.headers)


@pytest.mark.parametrize("case", [pytest.param(c, id=c.id) for c in CASES])
def test_it_refuses_bad_input_plainly_and_changes_nothing(fitter_client, world, case):
    fitter_client.raise_request_exception = False  # a 500 must fail the check below, not stop the test
    tables, files = snapshot(), private_files()
    response = _send(fitter_client, case, world)
    assert response.status_code == case.status, response.content[:2000]
    if case.words is not None:
        body = response.content.decode()
        assert case.words in body, body[:3000]
    assert snapshot() == tables
    assert private_files() == files


# Junk in the query string of a page that only reads: ignored, the page still shown.
IGNORED = [
    Case("list-page-not-a-number", "get", q("fittings:client_list", "page=abc"), status=200, words="WF-0102"),
    Case("list-page-negative", "get", q("fittings:client_list", "page=-1"), status=200, words="WF-0102"),
    Case("list-page-too-big", "get", q("fittings:client_list", f"page={TOO_BIG}"), status=200, words="WF-0102"),
    Case(
        "list-search-10k-chars",
        "get",
        q("fittings:client_list", "q=" + "x" * 10_000),
        status=200,
        words="No client matches",
    ),
    Case("list-search-nul", "get", q("fittings:client_list", "q=Odalys%00"), status=200, words="WF-0102"),
    Case(
        "preview-junk-options",
        "get",
        q("fittings:plan_preview", "ease_waist=1e999&step=abc&fix-0-waist-0=%00", PLAN),
        status=200,
    ),
    Case(
        "advice-superscript-session",
        "post",
        u("fittings:session_check", CLIENT),
        lambda w: {"session": "²", "bust_girth": "90"},
        status=200,
    ),
]


@pytest.mark.parametrize("case", [pytest.param(c, id=c.id) for c in IGNORED])
def test_it_ignores_junk_in_a_reading_page_and_changes_nothing(fitter_client, world, case):
    fitter_client.raise_request_exception = False
    tables = snapshot()
    response = _send(fitter_client, case, world)
    assert response.status_code == case.status
    if case.words:
        assert case.words in response.content.decode()
    assert snapshot() == tables


def test_it_refuses_to_add_to_a_client_removed_from_the_lists(fitter_client, world):
    from django.utils import timezone

    from fittings.models import Client

    Client.all_objects.filter(pk=world.client.pk).update(is_deleted=True, deleted_at=timezone.now())
    tables = snapshot()
    for url, data in (
        (reverse("fittings:session_new", args=[world.client.pk]), session()(world)),
        (reverse("fittings:fitting_import", args=[world.client.pk]), fitting(setitem(["unit"], "in"))(world)),
        (reverse("fittings:client_detail", args=[world.client.pk]), None),
    ):
        response = fitter_client.post(url, data) if data else fitter_client.get(url)
        assert response.status_code == 404, url
    assert snapshot() == tables


def test_it_reads_arabic_indic_digits_as_digits(fitter_client, world):
    """Not bad input: a tablet keyboard may type other digits; they mean what they say."""
    response = fitter_client.post(
        reverse("fittings:session_new", args=[world.client.pk]), session(unit="in", bust_girth="٣٧")(world)
    )
    assert response.status_code == 302
    assert str(world.client.sessions.order_by("-id").first().measurements.get().value_mm) == "939.8000"  # 37 in


def test_it_keeps_junk_inputs_away_from_pages_as_markup(fitter_client, world):
    response = fitter_client.get(reverse("fittings:client_list"), {"q": "<script>alert(1)</script>"})
    assert "<script>alert(1)</script>" not in response.content.decode()
    assert "&lt;script&gt;" in response.content.decode()
