"""Bad input over every form, the fitting-file import, uploads and URL parameters.

Each case is refused with a 4xx (never a 500), says what is wrong where a
page is shown, and leaves every table of the fittings and patterns apps
(rows and contents) and the private files exactly as they were.

The cases themselves are data, in bad_input_cases.toml (its head says how
a case is written); this module turns each into a request.
"""

import copy
import functools
import io
import json
import re
import tomllib
from pathlib import Path

import pytest
from django.core.files.uploadedfile import SimpleUploadedFile
from django.urls import reverse

from tests.patterns.block_post import tape_post
from tests.security.conftest import jpeg_bytes, options_post, private_files, snapshot
from tests.security.test_private_files import png_claiming

pytestmark = pytest.mark.django_db

TOO_BIG = 10**25  # beyond any 64-bit id

# What "{name}" in a case's URL arguments, query or form values stands for.
REFS = {
    "client": lambda w: w.client.pk,  # WF-0102, read in inches
    "session": lambda w: w.session.pk,
    "plan": lambda w: w.plan.pk,
    "other_plan": lambda w: w.other_plan.pk,  # WF-0101's plan, kept in centimetres
    "issued": lambda w: w.issued.pk,
    "photo": lambda w: w.photo.pk,
    "job": lambda w: w.job.pk,
    "plan_pattern": lambda w: w.plan.base_pattern_id,  # used by the plan, part of a size run
    "other_pattern": lambda w: w.other_plan.base_pattern_id,
    "other_session": lambda w: w.other_client.sessions.get().pk,
    "other_revision": lambda w: w.other_plan.revisions.get().pk,
    "too_big": lambda w: TOO_BIG,
}


class _Refs:
    def __init__(self, world):
        self.world = world

    def __getitem__(self, name):
        return REFS[name](self.world)


def value(spec, world):
    """A form value, URL argument or query as written in the cases file."""
    if isinstance(spec, str):
        return spec.format_map(_Refs(world))
    if isinstance(spec, list):
        return [value(item, world) for item in spec]
    if isinstance(spec, dict):
        if "repeat" in spec:
            return spec["repeat"] * spec["times"]
        return "".join(value(item, world) for item in spec["join"])
    return spec


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


MAKERS = {
    "jpeg": lambda size=(40, 30): jpeg_bytes(tuple(size)),
    "png_claiming": png_claiming,
    "svg_block": _svg_block,
    "dxf_block": _dxf_block,
}


def content(spec) -> bytes:
    """A file's bytes: text (one character a byte), repeated, joined, or made by one of MAKERS."""
    if isinstance(spec, str):
        return spec.encode("latin-1")
    if "repeat" in spec:
        return (spec["repeat"] * spec["times"]).encode("latin-1")
    if "join" in spec:
        return b"".join(content(part) for part in spec["join"])
    params = {k: v for k, v in spec.items() if k not in ("make", "first_bytes")}
    made = MAKERS[spec["make"]](**params)
    return made[: spec["first_bytes"]] if "first_bytes" in spec else made


# --- the forms a case starts from ---------------------------------------------------------------

with (Path(__file__).parent / "bad_input_cases.toml").open("rb") as f:
    CASE_FILE = tomllib.load(f)
BASE_FORMS = CASE_FILE["form"]  # the forms whose fields are written in the cases file


def fixed_fields(form, world, /, **changes):
    return {**BASE_FORMS[form], **changes}


def session_edit_fields(world, /, **changes):
    return {**BASE_FORMS["session"], **changes, "version": changes.get("version", world.session.version)}


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


FITTING_CHANGES = {f.__name__: f for f in (fixed_twice, upside_down_panel, without_level, renamed_seam)}


def huge_waist(text):
    return re.sub(r'"waist_girth": [0-9.]+', '"waist_girth": ' + "7" * 4400, text, count=1)


def measurements_twice(text):
    return text.replace('"measurements": {', '"measurements": {"waist_girth": 700, ', 1)


FITTING_TEXT_EDITS = {f.__name__: f for f in (huge_waist, measurements_twice)}


def fitting_file(world, spec) -> bytes:
    """The stored revision's own (valid) fitting file with one thing changed, or raw bytes."""
    if "raw" in spec:
        return content(spec["raw"])
    if "text_edit" in spec:
        return FITTING_TEXT_EDITS[spec["text_edit"]](json.dumps(world.issued.inputs)).encode()
    data = copy.deepcopy(world.issued.inputs)
    if "set" in spec:
        *path, last = spec["set"]["path"]
        target = data
        for key in path:
            target = target[key]
        target[last] = spec["set"]["value"]
    else:
        FITTING_CHANGES[spec["change"]](data)
    return json.dumps(data).encode()


def fitting_fields(world, spec, **changes):
    upload = SimpleUploadedFile("fitting.json", fitting_file(world, spec), content_type="application/json")
    return {"file": upload, **changes}


def block_fields(world, **changes):
    """The block form filled in for an invented block, with changes."""
    import dataclasses

    from patterns.demo import bodice_block
    from tests.patterns.block_post import block_post

    return block_post(dataclasses.replace(bodice_block(), name="Bad-input bodice", size="40"), **changes)


def edit_block_fields(world, **changes):
    """The block form for the world's plan's (used) pattern, with changes."""
    from patterns.selectors import block_for
    from tests.patterns.block_post import block_post

    return block_post(block_for(world.plan.base_pattern), **changes)


def grade_fields(world, **changes):
    from patterns.selectors import block_for

    levels = block_for(world.plan.base_pattern).level_names
    base = {"run_name": "Bad-input run", "sizes": "36, 38, 40", "unit": "cm", "save": "1"}
    return {**base, **{f"girth_{lv}": "4" for lv in levels}, **changes}


FORMS = {
    **{name: functools.partial(fixed_fields, name) for name in BASE_FORMS},
    "session_edit": session_edit_fields,
    "block": block_fields,
    "edit_block": edit_block_fields,
    "tape": lambda w, **changes: tape_post(**changes),
    "grade": grade_fields,
}
FITTING_KEYS = ("raw", "text_edit", "set", "change")
CASE_KEYS = {"id", "get", "post", "args", "query", "form", "with", "leave_out", "upload", "options_of", "status"}
CASE_KEYS |= {"words", "headers", *FITTING_KEYS}


def load_cases(table):
    cases = CASE_FILE[table]
    for case in cases:
        assert set(case) <= CASE_KEYS, (case["id"], set(case) - CASE_KEYS)
        assert ("get" in case) != ("post" in case), case["id"]
        assert "status" in case, case["id"]
        assert case.get("form") in (None, "fitting", "options", *FORMS), case["id"]
    return cases


def url_of(case, world):
    name = case.get("get") or case["post"]
    url = reverse(name, args=[value(arg, world) for arg in case.get("args", [])])
    return url + "?" + value(case["query"], world) if "query" in case else url


def data_of(case, world):
    """The case's form: its starting fields, its changes, the fields it leaves out and its upload."""
    changes = {key: value(v, world) for key, v in case.get("with", {}).items()}
    changes.update(dict.fromkeys(case.get("leave_out", ())))
    form = case.get("form")
    if form is None:
        data = changes
    elif form == "fitting":
        data = fitting_fields(world, {k: case[k] for k in FITTING_KEYS if k in case}, **changes)
    elif form == "options":
        data = options_post(getattr(world, case.get("options_of", "plan")), **changes)
    else:
        data = FORMS[form](world, **changes)
    if "upload" in case:
        upload = case["upload"]
        data[upload["field"]] = SimpleUploadedFile(upload["name"], content(upload["content"]))
    return data


CASES = load_cases("refused")
IGNORED = load_cases("ignored")  # junk in the query string of a page that only reads: the page is still shown


def test_it_has_a_corpus_of_at_least_fifty_cases():
    assert len(CASES) >= 50
    assert len({case["id"] for case in CASES + IGNORED}) == len(CASES) + len(IGNORED)


def _send(client, case, world):
    url, data = url_of(case, world), data_of(case, world)
    headers = case.get("headers", {})
    if "get" in case:
        return client.get(url, headers=headers)
    return client.post(url, data, headers=headers)


@pytest.mark.parametrize("case", [pytest.param(c, id=c["id"]) for c in CASES])
def test_it_refuses_bad_input_plainly_and_changes_nothing(fitter_client, world, case):
    fitter_client.raise_request_exception = False  # a 500 must fail the check below, not stop the test
    tables, files = snapshot(), private_files()
    response = _send(fitter_client, case, world)
    assert response.status_code == case["status"], response.content[:2000]
    if "words" in case:
        body = response.content.decode()
        assert case["words"] in body, body[:3000]
    assert snapshot() == tables
    assert private_files() == files


@pytest.mark.parametrize("case", [pytest.param(c, id=c["id"]) for c in IGNORED])
def test_it_ignores_junk_in_a_reading_page_and_changes_nothing(fitter_client, world, case):
    fitter_client.raise_request_exception = False
    tables = snapshot()
    response = _send(fitter_client, case, world)
    assert response.status_code == case["status"]
    if case.get("words"):
        assert case["words"] in response.content.decode()
    assert snapshot() == tables


def test_it_refuses_to_add_to_a_client_removed_from_the_lists(fitter_client, world):
    from django.utils import timezone

    from fittings.models import Client

    Client.all_objects.filter(pk=world.client.pk).update(is_deleted=True, deleted_at=timezone.now())
    tables = snapshot()
    for url, data in (
        (reverse("fittings:session_new", args=[world.client.pk]), fixed_fields("session", world)),
        (
            reverse("fittings:fitting_import", args=[world.client.pk]),
            fitting_fields(world, {"set": {"path": ["unit"], "value": "in"}}),
        ),
        (reverse("fittings:client_detail", args=[world.client.pk]), None),
    ):
        response = fitter_client.post(url, data) if data else fitter_client.get(url)
        assert response.status_code == 404, url
    assert snapshot() == tables


def test_it_reads_arabic_indic_digits_as_digits(fitter_client, world):
    """Not bad input: a tablet keyboard may type other digits; they mean what they say."""
    response = fitter_client.post(
        reverse("fittings:session_new", args=[world.client.pk]),
        fixed_fields("session", world, unit="in", bust_girth="٣٧"),
    )
    assert response.status_code == 302
    assert str(world.client.sessions.order_by("-id").first().measurements.get().value_mm) == "939.8000"  # 37 in


def test_it_keeps_junk_inputs_away_from_pages_as_markup(fitter_client, world):
    response = fitter_client.get(reverse("fittings:client_list"), {"q": "<script>alert(1)</script>"})
    assert "<script>alert(1)</script>" not in response.content.decode()
    assert "&lt;script&gt;" in response.content.decode()
