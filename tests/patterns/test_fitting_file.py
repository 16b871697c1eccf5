import json
from pathlib import Path

import jsonschema
import pytest

from patterns.core.allot import allot
from patterns.core.fitting import (
    FittingFileError,
    block_from_dict,
    block_to_dict,
    body_from_measurements,
    fitting_to_dict,
    load_fitting_text,
    result_to_json,
    schema,
    validate_result,
)
from patterns.demo import bodice_block, corset_run

EXAMPLES = sorted((Path(__file__).resolve().parents[2] / "patterns" / "examples").glob("*.json"))


def example():
    return json.loads(EXAMPLES[0].read_text())


def example_text() -> str:
    return EXAMPLES[0].read_text()  # hester-quayle-first-corset: waist 742.0 mm


def test_it_ships_examples_of_the_demo_scenario():
    assert len(EXAMPLES) >= 3


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_it_computes_a_result_valid_against_its_schema(path):
    jsonschema.Draft202012Validator(schema("fitting")).validate(json.loads(path.read_text()))
    measurements, block, options = load_fitting_text(path.read_text())
    data = result_to_json(allot(block, body_from_measurements(measurements), options))
    validate_result(data)
    assert data["levels"][0]["level"] == block.levels[0].name


@pytest.mark.parametrize("block", [*corset_run(), bodice_block()], ids=lambda b: f"{b.garment} {b.size}")
def test_it_round_trips_a_block(block):
    assert block_from_dict(json.loads(json.dumps(block_to_dict(block)))) == block


def test_it_writes_what_it_reads():
    measurements, block, options = load_fitting_text(EXAMPLES[1].read_text())
    again = fitting_to_dict(measurements, block, options, meta=example().get("about"))
    assert load_fitting_text(json.dumps(again)) == (measurements, block, options)


def mutate(path, value):
    data = example()
    target = data
    keys = path.split("/")
    for key in keys[:-1]:
        target = target[int(key) if key.isdigit() else key]
    last = keys[-1]
    if value is KeyError:
        del target[last]
    else:
        target[int(last) if last.isdigit() else last] = value
    return json.dumps(data)


@pytest.mark.parametrize(
    "text, field",
    [
        ("{", "(file)"),
        ("[]", "(file)"),
        ('{"format": "atelier-fitting", "version": 1, "measurements": {"bust_girth": NaN}, "pattern": {}}', "(file)"),
        (mutate("measurements/bust_girth", -5), "measurements/bust_girth"),
        (mutate("measurements/bust_girth", "95"), "measurements/bust_girth"),
        (mutate("measurements/bust_girth", 10), "measurements/bust_girth"),
        (mutate("measurements/shoe_size", 40), "measurements"),
        (mutate("pattern/levels", KeyError), "pattern"),
        (mutate("pattern/seams/0/front_panel", "Nowhere"), "pattern"),
        (mutate("plan/policy", "random"), "plan/policy"),
        (
            mutate("plan/overrides", [{"seam": "Zip seam", "level": "waist", "panel": "Front", "shift_mm": 2}]),
            "plan/overrides/0/seam",
        ),
        (mutate("plan/ease", {"knee": 10}), "plan/ease"),
        (mutate("version", 2), "version"),
    ],
)
def test_it_names_the_field_at_fault(text, field):
    with pytest.raises(FittingFileError) as caught:
        load_fitting_text(text)
    assert caught.value.field == field
    assert caught.value.message


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_it_reads_a_stored_result_back_unchanged(path):
    from patterns.core.fitting import allotment_from_dict

    measurements, block, options = load_fitting_text(path.read_text())
    result = allot(block, body_from_measurements(measurements), options)
    stored = json.loads(json.dumps(result_to_json(result)))
    again = allotment_from_dict(stored)
    assert again.shifts == result.shifts
    assert again.levels == result.levels
    assert again.findings == result.findings
    assert again.alteration(block) == result.alteration(block)


# --- files no fitter would write, answered in one readable line ---------------------------------


def _text_with(change):
    data = example()
    change(data)
    return json.dumps(data)


def test_it_refuses_an_integer_of_thousands_of_digits_in_words():
    # Python refuses to read integers of more than 4,300 digits (a ValueError of its own).
    text = example_text().replace('"waist_girth": 742.0', '"waist_girth": ' + "9" * 4301, 1)
    with pytest.raises(FittingFileError) as caught:
        load_fitting_text(text)
    assert caught.value.message == "A number of 4,301 digits is not a length in millimetres."


def test_it_refuses_a_number_too_large_for_a_float():
    with pytest.raises(FittingFileError, match="1e400 is far too large"):
        load_fitting_text(example_text().replace('"waist_girth": 742.0', '"waist_girth": 1e400', 1))


def test_it_keeps_an_error_message_short_whatever_the_file_holds():
    text = _text_with(lambda d: d["measurements"].__setitem__("waist_girth", "x" * 1_000_000))
    with pytest.raises(FittingFileError) as caught:
        load_fitting_text(text)
    assert len(str(caught.value)) < 320
    assert "more characters" in caught.value.message


def test_it_refuses_a_cell_fixed_twice():
    def twice(data):
        cell = {"seam": "Side seam", "level": "waist", "panel": "Side front", "shift_mm": 3.0}
        data["plan"]["overrides"] = [cell, {**cell, "shift_mm": -2.0}]

    with pytest.raises(FittingFileError) as caught:
        load_fitting_text(_text_with(twice))
    assert caught.value.field == "plan/overrides/1"
    assert "already fixed by plan/overrides/0" in caught.value.message


def test_it_refuses_a_name_given_twice_in_one_object():
    text = example_text().replace('"measurements": {', '"measurements": {"waist_girth": 700.0, ', 1)
    with pytest.raises(FittingFileError, match="'waist_girth' appears twice"):
        load_fitting_text(text)


def test_it_refuses_a_panel_whose_bottom_lies_above_its_top():
    def upside_down(data):
        panel = data["pattern"]["panels"][2]
        panel["top_right"], panel["bottom_right"] = panel["bottom_right"], panel["top_right"]

    with pytest.raises(FittingFileError) as caught:
        load_fitting_text(_text_with(upside_down))
    assert caught.value.field == "pattern"
    assert caught.value.message.startswith("Panel Side front: the bottom of its right stitch line lies above its top")


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_it_ships_examples_whose_blocks_are_the_demo_atelier_s(path):
    _, block, _ = load_fitting_text(path.read_text())
    demo = {(b.garment, b.size): b for b in [*corset_run(), bodice_block()]}
    assert block == demo[(block.garment, block.size)]
