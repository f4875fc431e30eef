"""The one parser of each kind (devmodels.units): quantities, temperatures, complex values, counts."""

from __future__ import annotations

import math

import pytest

from devmodels.exceptions import InputError
from devmodels.units import (Bounds, check_bounds, format_complex, format_si, parse_complex, parse_count,
                             parse_impedance, parse_quantity, parse_temperature, shown, temperature_warning)


# SI prefixes as in the BIPM SI Brochure (9th ed., table 7); "R" as the ohm sign is the resistor
# marking of IEC 60062 (from memory); "K" for kilo in resistor values is common practice, no source.
@pytest.mark.parametrize("text,unit,value", [
    ("1mA", "A", 1e-3), ("1 mA", "A", 1e-3), ("2.2k", "Ohm", 2200.0), ("2.2kohm", "Ohm", 2200.0),
    ("2.2K", "Ohm", 2200.0), ("300MHz", "Hz", 3e8), ("25u", "", 25e-6), ("2pF", "F", 2e-12),
    ("-1mA", "A", -1e-3), ("1e-3", "", 1e-3), (".5", "V", 0.5), ("4.7R", "Ohm", 4.7), ("1 mohm", "Ohm", 1e-3),
    ("1Mohm", "Ohm", 1e6), ("-2mV/K", "V/K", -2e-3), ("0.5%/K", "%/K", 0.5), ("5%", "%", 5.0),
    ("0.2A/V^2", "A/V2", 0.2), ("50m/V", "1/V", 0.05), (3, "V", 3.0), (2.5, "", 2.5),
])
def test_quantities(text, unit, value):
    assert parse_quantity(text, unit, "x") == pytest.approx(value, rel=1e-12)


@pytest.mark.parametrize("text,unit,needle", [
    ("1ma", "A", "did you mean 1mA"),
    ("10meg", "Hz", "did you mean 10MHz"),
    ("1mhz", "Hz", "did you mean 1mHz or 1MHz"),
    ("1 hz", "Hz", "did you mean 1 Hz"),
    ("5V", "A", "'5V' is in V, expected a current in A"),
    ("100A", "", "is in A, expected a dimensionless number"),
    ("ic=1mA", "A", "cannot read 'ic=1mA'"),
    ("1mA -- note", "A", "unexpected text after the value"),
    ("1mA # note", "A", "unexpected text after the value"),
    ("nan", "A", "cannot read 'nan'"),
    ("inf", "V", "cannot read 'inf'"),
    ("", "A", "empty value"),
    ("   ", "A", "empty value"),
    (True, "A", "got a boolean"),
    ({"a": 1}, "", "got a table"),
    ([1, 2], "", "got an array"),
    (float("nan"), "A", "finite"),
    (float("inf"), "A", "finite"),
    ("1e400", "A", "too large"),
    ("1e308k", "Ohm", "too large"),
    ("1xyz", "A", "unknown unit or prefix 'xyz'"),
])
def test_bad_quantities_name_the_value(text, unit, needle):
    with pytest.raises(InputError) as exc:
        parse_quantity(text, unit, "ic")
    msg = str(exc.value)
    assert msg.startswith("ic: ") and needle in msg, msg


def test_temperatures():
    assert parse_temperature("300") == 300.0
    assert parse_temperature("300K") == 300.0
    assert parse_temperature("27C") == pytest.approx(300.15)  # 0 degC = 273.15 K (SI definition)
    assert parse_temperature("27degC") == pytest.approx(300.15)
    assert parse_temperature("-20C") == pytest.approx(253.15)
    assert parse_temperature(310) == 310.0
    for bad, needle in (("1e-308", "outside the range 1 K to 1000 K"), ("-300K", "above 0 K"),
                        ("hot", "cannot read"), ("27c", "did you mean 27C"), ("", "empty"),
                        ("300 K extra", "unexpected text"), (True, "boolean")):
        with pytest.raises(InputError) as exc:
            parse_temperature(bad, "temp")
        assert str(exc.value).startswith("temp: ") and needle in str(exc.value), str(exc.value)


def test_temperature_warning_suggests_celsius():
    assert temperature_warning("temp", "27", 27.0) == "temp: 27 K is outside 200 K to 500 K; did you mean 27C?"
    assert temperature_warning("temp", "300", 300.0) is None
    assert "did you mean" not in temperature_warning("temp", "900K", 900.0)


@pytest.mark.parametrize("text,unit,value", [
    ("50", "Ohm", 50), ("50+j10", "Ohm", 50 + 10j), ("1k-j200", "Ohm", 1000 - 200j),
    ("1.2e-3+4e-4j", "", 1.2e-3 + 4e-4j), ("-j3", "", -3j), ("j50", "Ohm", 50j), ("50 + j10", "Ohm", 50 + 10j),
    ("0.4m+j0.2m", "S", 0.4e-3 + 0.2e-3j), ("0.4mS+j0.2mS", "S", 0.4e-3 + 0.2e-3j), ("1e-3-2e-4j", "", 1e-3 - 2e-4j),
    ("1kohm", "Ohm", 1000),
])
def test_complex_values(text, unit, value):
    assert parse_complex(text, unit, "z") == pytest.approx(complex(value), rel=1e-12)


@pytest.mark.parametrize("text,needle", [
    ("50+j", "imaginary part"), ("j", "imaginary part"), ("50+10", "cannot read"), ("50+j10V", "is in V"),
    ("1j2", "cannot read"), ("nan+j1", "cannot read"), ("", "empty"),
])
def test_bad_complex_values(text, needle):
    with pytest.raises(InputError) as exc:
        parse_complex(text, "Ohm", "rs")
    assert str(exc.value).startswith("rs: ") and needle in str(exc.value), str(exc.value)


def test_impedances():
    assert parse_impedance("open", "rl", allow_open=True).real == math.inf
    with pytest.raises(InputError, match="^rs: an open source"):
        parse_impedance("open", "rs")
    with pytest.raises(InputError, match="^rl: expected a passive impedance"):
        parse_impedance("-1k+j20", "rl", allow_open=True)
    with pytest.raises(InputError, match="^rs: '1e308' is outside"):
        parse_impedance("1e308", "rs", bounds=Bounds(1e-9, 1e15))


def test_counts():
    assert parse_count("1e6", "points", 10**7) == 1_000_000
    assert parse_count("101", "points", 10**7) == 101
    for bad, needle in (("1.5", "whole number"), ("0", "from 1"), ("1e23", "memory"), ("-3", "from 1"),
                        ("many", "cannot read")):
        with pytest.raises(InputError) as exc:
            parse_count(bad, "points", 10**7)
        assert str(exc.value).startswith("points: ") and needle in str(exc.value), str(exc.value)


def test_bounds_and_shortened_values():
    assert check_bounds("cmu", 0.0, "F", Bounds(1e-18, 1.0)) == 0.0
    with pytest.raises(InputError, match="^cmu: '1e308' is outside the range 1 aF to 1 F"):
        check_bounds("cmu", 1e308, "F", Bounds(1e-18, 1.0), "1e308")
    long = "x" * 1000
    s = shown(long)
    assert len(s) < 100 and "1,000 characters" in s


def test_display_has_no_negative_zero():
    assert format_si(-0.0, "V") == "0 V"
    assert format_complex(complex(-1e-20, -0.0), "", polar=True).endswith("∠ 180.00°")
    assert "-0.00" not in format_complex(complex(2, -0.0), "", polar=True)
    assert format_complex(complex(-0.0, 2), "Ω") == "j2 Ω"


# --- display of rounding residue and of kelvin -------------------------------------------------
@pytest.mark.parametrize("z,unit,text", [
    (0.99 + 5.353e-19j, "", "0.99"),  # an imaginary part 5e-19 of the magnitude: residue
    (10e3 - 191.7e-15j, "Ω", "10 kΩ"),
    (3e-20 + 2.5j, "", "j2.5"),  # a real part 1e-20 of the magnitude
    (1 + 1e-11j, "", "1 + j1e-11"),  # 1e-11 of the magnitude is above the residue level: shown
    (-2 - 3j, "Ω", "-2 Ω - j3 Ω"),
])
def test_format_complex_shows_rounding_residue_as_zero(z, unit, text):
    # Parts below DISPLAY_RESIDUE (1e-12) of the magnitude are rounding residue, far below the
    # four digits shown of the other part (common practice, no source).
    from devmodels.units import DISPLAY_RESIDUE, format_complex

    assert DISPLAY_RESIDUE == 1e-12
    assert format_complex(z, unit) == text


@pytest.mark.parametrize("value,text", [(9130.4, "9130 K"), (91304.0, "91300 K"), (290.0, "290 K"),
                                        (0.5, "0.5 K"), (35.25, "35.25 K")])
def test_kelvin_is_shown_without_a_prefix(value, text):
    # A noise temperature of 9130 K reads as kelvin, not "9.13 kK" (SI brochure: prefixes are
    # allowed but temperatures are quoted in plain kelvin in practice; common practice, no source).
    from devmodels.units import format_si

    assert format_si(value, "K") == text
    assert format_si(9130.4, "Ω") == "9.13 kΩ"  # other units keep their prefixes


@pytest.mark.parametrize("text,decimal,unit,want", [
    ("4k7", "4.7k", "Ohm", 4.7e3), ("4K7", "4.7k", "Ohm", 4.7e3), ("1M5", "1.5M", "Ohm", 1.5e6),
    ("4R7", "4.7", "Ohm", 4.7), ("2p2", "2.2p", "F", 2.2e-12), ("1m5", "1.5m", "A", 1.5e-3),
    ("3n3", "3.3n", "H", 3.3e-9),
])
def test_letter_and_digit_code(text, decimal, unit, want):
    # the RKM code of IEC 60062 (a letter in place of the decimal point), as drawings and parts
    # are marked: the same value as the decimal form, to the last digit
    from devmodels.units import parse_quantity

    assert parse_quantity(text, unit, "x") == parse_quantity(decimal, unit, "x")
    assert parse_quantity(text, unit, "x") == pytest.approx(want, rel=1e-15, abs=0)


@pytest.mark.parametrize("text,unit", [("4R7", "F"), ("4k7k", "Ohm"), ("k47", "Ohm"), ("4 k7", "Ohm"), ("4x7", "Ohm")])
def test_letter_code_is_strict(text, unit):
    from devmodels.exceptions import InputError
    from devmodels.units import parse_quantity

    with pytest.raises(InputError, match="^x: "):
        parse_quantity(text, unit, "x")
