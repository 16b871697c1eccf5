from decimal import Decimal

import pytest
from hypothesis import given
from hypothesis import strategies as st

from patterns.core.units import LengthError, format_cm, format_inches, parse_length


def test_it_uses_the_exact_inch():
    # 1 in = 25.4 mm exactly: international yard and pound agreement (1959); NIST SP 811, B.8.
    assert parse_length("1", "in") == Decimal("25.4")
    assert parse_length("100", "in") == Decimal("2540")


@pytest.mark.parametrize(
    "text, mm",
    [
        ("27 3/8", "695.3250"),
        ("27-3/8", "695.3250"),
        ("3/4", "19.0500"),
        ("27.375", "695.3250"),
        ("1/16", "1.5875"),
        ('30"', "762.0000"),
        ("30 in", "762.0000"),
    ],
)
def test_it_reads_inches_as_written_on_a_tape(text, mm):
    assert parse_length(text, "in") == Decimal(mm)


@pytest.mark.parametrize(
    "text, mm", [("68.5", "685.0000"), ("68,5", "685.0000"), ("70 cm", "700.0000"), ("0.1", "1.0000")]
)
def test_it_reads_centimetres(text, mm):
    assert parse_length(text, "cm") == Decimal(mm)


@pytest.mark.parametrize(
    "text, unit, words",
    [
        ("", "cm", "Enter"),
        ("abc", "cm", "not a length"),
        ("-5", "cm", "not a length"),
        ("27 3/8", "cm", "Fractions are for inches"),
        ("nan", "in", "not a length"),
        ("inf", "cm", "not a length"),
        ("1/0", "in", "0 below the line"),
        ("27 9/8", "in", "less than 1"),
        ("9" * 40, "cm", "too long"),
        ("12", "yd", "Unknown unit"),
    ],
)
def test_it_refuses_what_is_not_a_tape_reading(text, unit, words):
    with pytest.raises(LengthError, match=words):
        parse_length(text, unit)


@pytest.mark.parametrize("mm, text", [(695.325, "27 3/8"), (-1.5875, "-1/16"), (0, "0"), (25.4, "1"), (12.7, "1/2")])
def test_it_writes_inches_to_the_sixteenth(mm, text):
    assert format_inches(mm) == text


def test_it_writes_centimetres_to_the_millimetre():
    assert format_cm(685) == "68.5"
    assert format_cm(3, signed=True) == "+0.3"
    assert format_cm(-0.2, signed=True) == "0.0"


@given(st.integers(0, 16 * 80))
def test_it_round_trips_every_sixteenth(sixteenths):
    """mm -> inches -> mm returns the same tape mark (the inch side of a tape is marked in 1/16)."""
    whole, rest = divmod(sixteenths, 16)
    from fractions import Fraction

    frac = Fraction(rest, 16)
    text = f"{whole} {frac.numerator}/{frac.denominator}" if rest else str(whole)
    mm = parse_length(text, "in")
    assert format_inches(mm) == (text if whole or not rest else f"{frac.numerator}/{frac.denominator}")
    assert parse_length(format_inches(mm), "in") == mm


@pytest.mark.parametrize(
    "text, unit, mm",
    [
        ("-5", "cm", "-50.0000"),
        ("+1/2", "in", "12.7000"),
        ("\u22120.5", "cm", "-5.0000"),
        ("- 1 1/4", "in", "-31.7500"),
    ],
)
def test_it_reads_signed_lengths(text, unit, mm):
    from patterns.core.units import parse_signed_length

    assert parse_signed_length(text, unit) == Decimal(mm)


def test_it_refuses_a_double_sign():
    from patterns.core.units import parse_signed_length

    with pytest.raises(LengthError):
        parse_signed_length("--5", "cm")


# --- writing a stored value back into a form -------------------------------------------------


@given(st.integers(min_value=-2_000_000, max_value=2_000_000), st.sampled_from(["cm", "in"]), st.booleans())
def test_it_writes_any_stored_length_back_so_it_reads_as_the_same_millimetres(ten_thousandths, unit, signed):
    from patterns.core.units import format_exact, parse_signed_length, quantize_mm

    mm = quantize_mm(Decimal(ten_thousandths) / 10_000)
    assert parse_signed_length(format_exact(mm, unit, signed=signed), unit) == mm


@pytest.mark.parametrize(
    "mm, unit, text",
    [
        (-7.5, "cm", "-0.75"),
        (682.5, "cm", "68.25"),
        (-60, "cm", "-6"),
        (0, "cm", "0"),
        (695.325, "in", "27 3/8"),
        (7.62, "in", "0.3"),
        (-1.5875, "in", "-1/16"),
        (15.875, "in", "5/8"),  # 1 in = 25.4 mm
    ],
)
def test_it_writes_what_the_fitter_typed(mm, unit, text):
    from patterns.core.units import format_exact

    assert format_exact(mm, unit) == text
