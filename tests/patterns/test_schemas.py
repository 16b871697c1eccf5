"""The JSON Schemas list what the core defines, and nothing else.

The schemas are the written contract of the fitting file and the result for
people outside the app, so their lists are spelled out; this test is what ties
each list to the one place the core defines it.  A new measurement, level,
policy or unit in the core fails here until the schema says it too.
"""

import pytest

from patterns.core.block import BACK, CB_LACED, CB_SEAMED, CF_BUSK, CF_FOLD, FRONT, LEFT, RIGHT, SEAM_KINDS
from patterns.core.findings import CAUTION, ERROR, WARNING
from patterns.core.fitting import schema
from patterns.core.measures import LEVEL_CODES, MEASURES
from patterns.core.policies import POLICIES
from patterns.core.units import UNITS

LEVELS = list(LEVEL_CODES)

# Where each list of a schema comes from.  Paths are the schema's own keys, items of arrays as "items".
HOMES = {
    "fitting": {
        "properties/unit": list(UNITS),
        "properties/pattern/properties/centre_front": [CF_FOLD, CF_BUSK],
        "properties/pattern/properties/centre_back": [CB_LACED, CB_SEAMED],
        "properties/pattern/properties/levels/items/properties/name": LEVELS,
        "properties/pattern/properties/panels/items/properties/side": [FRONT, BACK],
        "properties/pattern/properties/panels/items/properties/left/propertyNames": LEVELS,
        "properties/pattern/properties/panels/items/properties/right/propertyNames": LEVELS,
        "properties/pattern/properties/seams/items/properties/kind": list(SEAM_KINDS),
        "properties/pattern/properties/seams/items/properties/alterable_at/items": LEVELS,
        "properties/pattern/properties/channels/items/properties/edge": [LEFT, RIGHT],
        "properties/plan/properties/ease/propertyNames": LEVELS,
        "properties/plan/properties/policy": list(POLICIES),
        "properties/plan/properties/overrides/items/properties/level": LEVELS,
        "properties/plan/properties/pins/items/properties/level": LEVELS,
    },
    "result": {
        "properties/unit": list(UNITS),
        "properties/policy": list(POLICIES),
        "properties/levels/items/properties/level": LEVELS,
        "properties/shifts/items/properties/level": LEVELS,
        "properties/bands/items/properties/upper": LEVELS,
        "properties/bands/items/properties/lower": LEVELS,
        "properties/findings/items/properties/severity": [ERROR, WARNING, CAUTION],
    },
}


def enums(node, path=()):
    """Every enum in a schema, by its path."""
    if isinstance(node, dict):
        for key, value in node.items():
            if key == "enum":
                yield "/".join(path), value
            else:
                yield from enums(value, (*path, key))
    elif isinstance(node, list):
        for value in node:
            yield from enums(value, path)


@pytest.mark.parametrize("name", sorted(HOMES))
def test_it_lists_in_each_schema_exactly_what_the_core_defines(name):
    found = dict(enums(schema(name)))
    assert set(found) == set(HOMES[name]), "a list in the schema without a home in the core, or the reverse"
    for path, values in found.items():
        assert values == HOMES[name][path], path


def test_it_lists_every_measurement_of_the_core_in_the_fitting_file():
    properties = schema("fitting")["properties"]["measurements"]["properties"]
    assert list(properties) == [m.code for m in MEASURES]
