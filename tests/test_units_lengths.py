"""Length and pitch parsing and display (1 in = 25.4 mm exactly, international inch 1959;
thou = 0.001 in, tenths = 0.0001 in: shop usage, docs/conventions.md)."""

from decimal import Decimal

import pytest
from hypothesis import given, settings, strategies as st

from profilecheck.errors import ProfilecheckError
from profilecheck.units import (LengthFormatError, format_length, parse_length, parse_pitch,
                                round_half_up, to_unit)


@pytest.mark.parametrize("text,mm", [
    ("2.000mm", 2.0), ("0.0787in", 1.99898), ("2.5um", 0.0025), ("2.5µm", 0.0025),
    ('0.25"', 6.35), ("0.25 in", 6.35), ("1inch", 25.4), ("3thou", 0.0762), ("3 mil", 0.0762),
    ("5tenths", 0.0127), ("1 tenth", 0.00254), ("-0.1mm", -0.1), (".5mm", 0.5),
    ("1e-3in", 0.0254), ("2 MM", 2.0), ("12 microns", 0.012),
])
def test_parse_length(text, mm):
    assert parse_length(text) == pytest.approx(mm, abs=1e-12)


def test_parse_is_decimal_exact():
    # 0.2491 in = 6.32714 mm exactly; the float is the one nearest that decimal
    assert parse_length("0.2491in") == 6.32714
    assert parse_length("5tenths") == 0.0127


@pytest.mark.parametrize("text,mm", [("40tpi", 0.635), ("20 TPI", 1.27), ("1.25mm", 1.25),
                                     ("0.05in", 1.27), ("4.5tpi", 25.4 / 4.5)])
def test_parse_pitch(text, mm):
    assert parse_pitch(text) == pytest.approx(mm, abs=1e-12)


@pytest.mark.parametrize("text", ["2", "2 furlongs", "mm", "", "abc", "nanmm", "1.2.3mm"])
def test_bad_lengths(text):
    with pytest.raises(LengthFormatError) as e:
        parse_length(text)
    assert isinstance(e.value, ProfilecheckError) and isinstance(e.value, ValueError)
    assert "\n" not in str(e.value)


@pytest.mark.parametrize("text", ["0tpi", "-1.25mm", "0mm", "tpi", "-40tpi"])
def test_bad_pitches(text):
    with pytest.raises(LengthFormatError):
        parse_pitch(text)


def test_type_and_unit_errors():
    with pytest.raises(TypeError, match="text"):
        parse_length(2.0)
    with pytest.raises(ValueError, match="unit"):
        format_length(1.0, "furlong")


@pytest.mark.parametrize("mm,unit,text", [
    (6.32714, "in", "0.2491in"), (6.35, "in", "0.2500in"), (0.0254, "thou", "1.0thou"),
    (0.00254, "tenths", "1tenths"), (1.0, "um", "1000.0um"), (1.23449, "mm", "1.234mm"),
    (1.2345, "mm", "1.235mm"),          # half-up on the decimal value, not binary
    (-0.0001, "mm", "0.000mm"),         # no negative zero
    (0.0127, "tenths", "5tenths"),
])
def test_format_length(mm, unit, text):
    assert format_length(mm, unit) == text


def test_round_half_up():
    # ties go up on the shortest decimal form: 0.22235 -> 0.2224 (binary round() gives 0.2223)
    assert round(0.22235, 4) == 0.2223
    assert round_half_up(0.22235, 4) == Decimal("0.2224")
    assert round_half_up(2.675, 2) == Decimal("2.68")
    assert to_unit(25.4, "in") == 1.0


@settings(max_examples=200, deadline=None)
@given(value=st.decimals(min_value=Decimal("-100"), max_value=Decimal("100"), places=4,
                         allow_nan=False, allow_infinity=False),
       unit=st.sampled_from(["mm", "in", "thou", "um"]))
def test_parse_format_parse_identity(value, unit):
    text = f"{value:f}{unit}"
    mm = parse_length(text)
    again = format_length(mm, unit, decimals=4)
    assert Decimal(again[: -len(unit)]) == value
    assert parse_length(again) == mm


@settings(max_examples=100, deadline=None)
@given(tenths=st.integers(0, 99999))
def test_tenths_round_trip(tenths):
    text = f"{Decimal(tenths).scaleb(-4):f}in"        # 0.0000 .. 9.9999 in
    assert format_length(parse_length(text), "in") == f"{Decimal(tenths).scaleb(-4):.4f}in"
    assert format_length(parse_length(text), "tenths") == f"{tenths}tenths"
