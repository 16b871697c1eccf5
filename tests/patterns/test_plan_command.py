"""`manage.py plan FILE [--json]`: the engine from the command line."""

import json
import subprocess
import sys
from pathlib import Path

import jsonschema
import pytest

from patterns.core.fitting import schema
from patterns.core.units import format_length

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = sorted((ROOT / "patterns" / "examples").glob("*.json"))


def run(*args, stdin=None):
    return subprocess.run(
        [sys.executable, "manage.py", "plan", *args], cwd=ROOT, capture_output=True, text=True, input=stdin, timeout=120
    )


def test_it_prints_json_valid_against_the_result_schema():
    done = run(str(EXAMPLES[0]), "--json")
    assert done.returncode == 0, done.stderr
    data = json.loads(done.stdout)
    jsonschema.Draft202012Validator(schema("result")).validate(data)
    assert data["block"] == "Overbust corset, six panels"


def test_it_prints_a_readable_table_in_the_plans_unit():
    path = next(p for p in EXAMPLES if "odalys" in p.name)
    table = run(str(path))
    data = json.loads(run(str(path), "--json").stdout)
    assert table.returncode == 0
    assert "lengths in in" in table.stdout and "Side seam" in table.stdout
    for shift in data["shifts"]:
        assert format_length(shift["shift_mm"], "in", signed=True) in table.stdout
    assert "strong_waist_reduction" in table.stdout


def negative_bust():
    data = json.loads(EXAMPLES[0].read_text())
    data["measurements"]["bust_girth"] = -1
    return json.dumps(data)


@pytest.mark.parametrize(
    "text, field",
    [
        ("{", "(file)"),
        (negative_bust(), "measurements/bust_girth"),
        ('{"format": "atelier-fitting", "version": 1, "measurements": {"bust_girth": 900}, "pattern": {}}', "pattern"),
    ],
)
def test_it_names_the_field_of_a_bad_file_and_fails(text, field):
    done = run("-", stdin=text)
    assert done.returncode != 0
    assert field in done.stderr
    assert "Traceback" not in done.stderr


def test_it_says_when_the_file_is_missing():
    done = run("no-such-file.json")
    assert done.returncode != 0 and "Cannot read" in done.stderr and "Traceback" not in done.stderr


def test_it_answers_an_integer_of_thousands_of_digits_in_one_line():
    text = EXAMPLES[0].read_text().replace('"waist_girth": 742.0', '"waist_girth": ' + "9" * 4400, 1)
    done = run("-", stdin=text)
    assert done.returncode != 0
    assert "Traceback" not in done.stderr
    assert done.stderr.strip().splitlines() == [
        "CommandError: -: (file): A number of 4,400 digits is not a length in millimetres."
    ]


def test_it_does_not_print_a_huge_value_back():
    data = json.loads(EXAMPLES[0].read_text())
    data["measurements"]["waist_girth"] = "7" * 20_000_000  # a 20 MB line
    done = run("-", stdin=json.dumps(data))
    assert done.returncode != 0 and "Traceback" not in done.stderr
    assert "measurements/waist_girth" in done.stderr
    assert len(done.stderr) < 400
