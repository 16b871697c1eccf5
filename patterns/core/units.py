"""Lengths: millimetres inside, centimetres or inches (to 1/16) only at the edges.

Values are carried as :class:`~decimal.Decimal` millimetres with four places,
which holds every metric tape reading and every 1/16 in exactly
(1/16 in = 1.5875 mm).
"""

import re
from decimal import ROUND_HALF_EVEN, Decimal, InvalidOperation
from fractions import Fraction

MM_PER_INCH = Decimal("25.4")
MM_PER_CM = Decimal("10")
INCH_STEP = Fraction(1, 16)
STORE_PLACES = Decimal("0.0001")

UNITS = ("cm", "in")
UNIT_LABELS = {"cm": "cm", "in": "in"}
UNIT_CHOICES = [(unit, UNIT_LABELS[unit]) for unit in UNITS]

# Default rounding step of a plan, in mm, per unit the plan is kept in.
DEFAULT_STEP_MM = {"cm": 1.0, "in": float(MM_PER_INCH * Decimal(INCH_STEP.numerator) / INCH_STEP.denominator)}


class LengthError(ValueError):
    """A length the fitter typed that cannot be read."""


_INCH_RE = re.compile(
    r"^\s*(?:(?P<whole>\d+)(?:\s+|-|\s*\+\s*)(?P<num>\d+)\s*/\s*(?P<den>\d+)"
    r"|(?P<only_num>\d+)\s*/\s*(?P<only_den>\d+)"
    r"|(?P<decimal>\d+(?:[.,]\d+)?|[.,]\d+))\s*(?:in|\"|inch|inches)?\s*$"
)
_CM_RE = re.compile(r"^\s*(?P<decimal>\d+(?:[.,]\d+)?|[.,]\d+)\s*(?:cm)?\s*$")


def _decimal(text: str) -> Decimal:
    return Decimal(text.replace(",", "."))


def parse_length(text: str, unit: str) -> Decimal:
    """Read a tape reading typed in ``unit`` and return millimetres.

    Centimetres take a decimal point or comma ("68.5", "68,5").  Inches also
    take fractions as written on a tape ("27 3/8", "27-3/8", "3/4").
    Negative numbers, NaN, infinity and fractions in centimetres are refused.
    """
    if unit not in UNITS:
        raise LengthError(f"Unknown unit {unit!r}; use cm or in.")
    text = (text or "").strip()
    if not text:
        raise LengthError("Enter a length.")
    if len(text) > 32:
        raise LengthError("That is too long to be a tape reading.")
    if unit == "cm":
        match = _CM_RE.match(text)
        if not match:
            if "/" in text:
                raise LengthError("Fractions are for inches; in centimetres write a decimal such as 68.5.")
            raise LengthError(f"{text!r} is not a length in centimetres (for example 68.5).")
        return quantize_mm(_decimal(match["decimal"]) * MM_PER_CM)
    match = _INCH_RE.match(text)
    if not match:
        raise LengthError(f"{text!r} is not a length in inches (for example 27 3/8 or 27.375).")
    if match["whole"] is not None:
        den = int(match["den"])
        if den == 0:
            raise LengthError("A fraction cannot have 0 below the line.")
        inches = Fraction(int(match["whole"])) + Fraction(int(match["num"]), den)
        if Fraction(int(match["num"]), den) >= 1:
            raise LengthError("The fraction after the whole inches must be less than 1 (for example 27 3/8).")
    elif match["only_num"] is not None:
        den = int(match["only_den"])
        if den == 0:
            raise LengthError("A fraction cannot have 0 below the line.")
        inches = Fraction(int(match["only_num"]), den)
    else:
        inches = Fraction(_decimal(match["decimal"]))
    mm = Decimal(inches.numerator) * MM_PER_INCH / Decimal(inches.denominator)
    return quantize_mm(mm)


def quantize_mm(mm) -> Decimal:
    """Millimetres as stored: a Decimal with four places."""
    try:
        value = Decimal(mm) if not isinstance(mm, float) else Decimal(repr(mm))
    except InvalidOperation as exc:
        raise LengthError(f"{mm!r} is not a number.") from exc
    if not value.is_finite():
        raise LengthError("A length must be a finite number.")
    return value.quantize(STORE_PLACES, rounding=ROUND_HALF_EVEN)


def nearest_sixteenth(mm) -> Fraction:
    """The reading in inches, to the nearest 1/16 in, as a fraction."""
    inches = Fraction(Decimal(str(mm))) / Fraction(MM_PER_INCH)
    sixteenths = round(inches * 16)
    return Fraction(sixteenths, 16)


def format_inches(mm, signed: bool = False) -> str:
    """'27 3/8', '-1/16', '0'; to the nearest 1/16 in."""
    value = nearest_sixteenth(mm)
    sign = "-" if value < 0 else ("+" if signed and value > 0 else "")
    value = abs(value)
    whole, rest = divmod(value, 1)
    whole = int(whole)
    if rest == 0:
        return f"{sign}{whole}"
    frac = f"{rest.numerator}/{rest.denominator}"
    return f"{sign}{whole} {frac}" if whole else f"{sign}{frac}"


def format_cm(mm, signed: bool = False, places: int = 1) -> str:
    """Centimetres to 1 mm by default: '69.5', '+0.3'."""
    value = float(Decimal(str(mm)) / MM_PER_CM)
    text = f"{value:+.{places}f}" if signed else f"{value:.{places}f}"
    if text in ("-0.0", "+0.0", "-0"):
        text = "0.0" if places else "0"
    return text


def format_length(mm, unit: str, signed: bool = False) -> str:
    if mm is None:
        return ""
    if unit == "in":
        return format_inches(mm, signed=signed)
    return format_cm(mm, signed=signed)


def format_exact(mm, unit: str, signed: bool = False) -> str:
    """A stored length written back into a form field exactly as it is kept, so reading it again
    gives the same millimetres: '-0.75' cm, '27 3/8' or '0.3' in.  Unlike ``format_length`` it
    never rounds to the tape's step (that is for reading, not for editing)."""
    if mm is None:
        return ""
    value = quantize_mm(mm)
    sign = "-" if value < 0 else ("+" if signed and value > 0 else "")
    value = abs(value)
    if unit == "in":
        inches = Fraction(value) / Fraction(MM_PER_INCH)
        if inches.denominator & (inches.denominator - 1) == 0 and inches.denominator <= 64:
            whole, rest = divmod(inches, 1)
            if rest == 0:
                return f"{sign}{int(whole)}"
            fraction = f"{rest.numerator}/{rest.denominator}"
            return f"{sign}{int(whole)} {fraction}" if whole else f"{sign}{fraction}"
        # Six places of an inch are within 0.00003 mm, less than half the stored precision.
        text = _plain(value / MM_PER_INCH, Decimal("0.000001"))
    else:
        text = _plain(value / MM_PER_CM, STORE_PLACES / MM_PER_CM)
    return f"{sign}{text}" if text != "0" else "0"


def _plain(value: Decimal, places: Decimal) -> str:
    text = f"{value.quantize(places, rounding=ROUND_HALF_EVEN):f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def format_with_unit(mm, unit: str, signed: bool = False) -> str:
    if mm is None:
        return ""
    return f"{format_length(mm, unit, signed=signed)} {UNIT_LABELS[unit]}"


def parse_signed_length(text: str, unit: str) -> Decimal:
    """A length that may be negative (ease, a shift, a pin): '-5', '+1/2', '−0.5'."""
    text = (text or "").strip().replace("\u2212", "-")
    sign = Decimal(1)
    if text[:1] in "+-" and text:
        sign = Decimal(-1) if text[0] == "-" else Decimal(1)
        text = text[1:].lstrip()
    return quantize_mm(sign * parse_length(text, unit))
