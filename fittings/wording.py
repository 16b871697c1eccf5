"""What the engine says, as a person reads it: lengths in the plan's or session's unit, findings in words.

The engine (patterns/core) writes its messages in millimetres and centimetres.
Every length a fitter or the workroom reads must be in the unit the plan or
session is kept in, so the screens and printouts pass the engine's words
through :func:`in_unit` and never show a finding's code.
"""

import re

from patterns.core.units import format_length

# "12.5 mm", "+3.0 mm", "-1.2 cm", and ranges written once: "60 and 150 cm", "5 to 10 cm".
_LENGTH = re.compile(
    r"(?P<first>(?P<sign1>[+\-\u2212]?)(?P<num1>\d+(?:\.\d+)?)\s(?P<join>and|to)\s)?"
    r"(?P<sign>[+\-\u2212]?)(?P<num>\d+(?:\.\d+)?)\s?(?P<unit>mm|cm)\b"
)
_TO_MM = {"mm": 1.0, "cm": 10.0}


def _one(sign: str, number: str, written_in: str, unit: str) -> str:
    mm = float(number) * _TO_MM[written_in] * (-1 if sign in "-\u2212" and sign else 1)
    return format_length(mm, unit, signed=bool(sign))


def in_unit(text: str, unit: str) -> str:
    """``text`` with every length written in ``unit`` ("cm" or "in"): "moves +9.5 mm" -> "moves +3/8 in"."""
    if not text or unit not in ("cm", "in"):
        return text

    def swap(match):
        written = match["unit"]
        if written == unit:
            return match[0]
        last = _one(match["sign"], match["num"], written, unit)
        if match["first"]:
            first = _one(match["sign1"], match["num1"], written, unit)
            return f"{first} {match['join']} {last} {unit}"
        return f"{last} {unit}"

    return _LENGTH.sub(swap, text)


# The finding's kind in words, where a short name is wanted (a mark on the picture).
SHORT_WORDS = {
    "override_exceeds_difference": "fixed by hand",
    "edge_over_cap": "beyond the edge's limit",
    "level_locked": "no seam may move here",
    "residual_over_step": "girth left over",
    "steep_seam": "seam line not smooth",
    "panel_too_narrow": "panel too narrow",
    "strong_waist_reduction": "strong waist reduction",
    "wide_lacing_gap": "wide lacing gap",
    "missing_girth": "girth not measured",
}


def short_words(code: str) -> str:
    """A finding's kind in a few plain words; an unknown code reads as words too, never as the code."""
    return SHORT_WORDS.get(code) or code.replace("_", " ")


def findings_for_screen(findings, unit: str) -> list[dict]:
    """The findings as the page and the printout list them: severity and message in the unit, no code."""
    return [
        {
            "severity": f.severity,
            "message": in_unit(f.message, unit),
            "level": f.level,
            "seam": f.seam,
            "panel": f.panel,
            "code": f.code,
        }
        for f in findings
    ]


# Words of jsonschema's own messages: a file whose shape is wrong, said plainly instead.
_SCHEMA_WORDS = (
    "is a required property",
    "is not of type",
    "is not one of",
    "does not match",
    "Additional properties",
    "is too long",
    "is too short",
    "is less than",
    "is greater than",
    "should be non-empty",
    "is not valid under",
)


def import_refusal(field: str, message: str) -> str:
    """Why a fitting file was refused, as a fitter can act on it (never a parser's own message)."""
    if message.startswith("Not valid JSON"):
        return (
            "This file is damaged or is not a fitting file: it could not be read. "
            "Export the fitting file again from where it was made and import the new copy."
        )
    if any(words in message for words in _SCHEMA_WORDS):
        where = field.replace("/", " › ") if field and field != "(file)" else "the file"
        unexpected = re.findall(r"'([^']{1,60})'", message.split("(", 1)[1]) if "was unexpected" in message else []
        if unexpected:
            what = f"{where} holds {', '.join(unexpected)}, which a fitting file does not have"
        elif found := re.match(r"^'?(.{1,60}?)'? is (not one of|greater than|less than)", message):
            value = found[1]
            what = (
                f"{where} holds “{value}”, which a fitting file cannot have there"
                if found[2] == "not one of"
                else f"{where} holds {value}, which is out of range"
            )
        elif "is not of type" in message:
            what = f"{where} holds the wrong kind of value"
        else:
            what = f"{where} is missing or not as a fitting file has it"
        return (
            f"This is not a fitting file this app can use: {what}. "
            "Export the fitting file again from this app, or ask whoever made it."
        )
    if field in ("", "(file)", "pattern"):
        return message
    return f"In the file's {field.replace('/', ' › ')}: {message}"
