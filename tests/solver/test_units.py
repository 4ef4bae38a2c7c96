"""Display units against the exact NIST SP 811 factors and pint as an independent reference."""

import math

import pint
import pytest
from hypothesis import given, settings, strategies as st

from solver import units
from solver.errors import UnitError

UREG = pint.UnitRegistry()


def test_lbf_factor_is_the_exact_nist_value():
    # NIST SP 811 (2008) App. B: 1 lbf = 0.45359237 kg x 9.80665 m/s^2 exactly
    assert units.LBF_IN_N == pytest.approx(0.45359237 * 9.80665, rel=0, abs=1e-13)
    # independent: pint's own definition
    assert (1 * UREG.force_pound).to("newton").magnitude == pytest.approx(units.LBF_IN_N, rel=1e-12)


def test_foot_is_exactly_0_3048_m():
    # NIST SP 811 (2008) App. B
    assert units.FT_IN_M == 0.3048
    assert (1 * UREG.foot).to("meter").magnitude == pytest.approx(units.FT_IN_M, rel=1e-12)


@given(st.floats(min_value=-1e6, max_value=1e6, allow_nan=False), st.sampled_from(["N", "kN", "lbf"]))
@settings(max_examples=100, deadline=None)
def test_force_round_trip_is_exact_to_rounding(value, unit):
    assert units.force_from(units.force_to(value, unit), unit) == pytest.approx(value, rel=1e-12, abs=1e-9)


@given(st.floats(min_value=-1e5, max_value=1e5, allow_nan=False), st.sampled_from(["m", "ft"]))
@settings(max_examples=100, deadline=None)
def test_length_round_trip_is_exact_to_rounding(value, unit):
    assert units.length_from(units.length_to(value, unit), unit) == pytest.approx(value, rel=1e-12, abs=1e-9)


@pytest.mark.parametrize(
    "text, unit, expected_N",
    [
        ("2.5", "kN", 2500.0),
        ("2.5 kN", "N", 2500.0),
        ("600 lbf", "kN", 600 * 4.4482216152605),  # NIST SP 811
        ("2,500,000 N", "kN", 2.5e6),
        ("1,250.5 N", "kN", 1250.5),
        ("−1.5 kN", "kN", -1500.0),
        ("100 kgf", "kN", 100 * 9.80665),  # kilogram-force, NIST SP 811
    ],
)
def test_parse_force_reads_what_riggers_type(text, unit, expected_N):
    assert units.parse_force(text, unit) == pytest.approx(expected_N, rel=1e-12)


@pytest.mark.parametrize(
    "text, unit, expected_m",
    [("12", "m", 12.0), ("40 ft", "m", 40 * 0.3048), ("10", "ft", 3.048), ("250 cm", "m", 2.5)],
)
def test_parse_length_reads_what_riggers_type(text, unit, expected_m):
    assert units.parse_length(text, unit) == pytest.approx(expected_m, rel=1e-12)


@pytest.mark.parametrize("text, fragment", [
    ("12,5 kN", "point for decimals"),
    ("abc", "not a number"),
    ("3 m", "not a force"),
    ("", "enter a force"),
    ("5 parsecs", "unknown unit"),
])
def test_bad_force_text_gets_a_message_in_words(text, fragment):
    with pytest.raises(UnitError, match=fragment):
        units.parse_force(text, "kN")


def test_length_field_refuses_a_force():
    with pytest.raises(UnitError, match="not a length"):
        units.parse_length("3 kN", "m")


def test_formatting_shows_unit_and_sensible_digits():
    assert units.format_force(2710.0, "kN") == "2.71 kN"
    assert units.format_force(2710.0, "lbf") == f"{2710.0 / 4.4482216152605:,.0f} lbf".replace(",", "\u202f")
    assert units.format_length(12.345, "m") == "12.3 m"
    assert units.format_length(3.048, "ft") == "10.0 ft"
    assert units.format_force(math.nan, "kN") == "—"


def test_unknown_unit_names_the_choices():
    with pytest.raises(UnitError, match="N, kN, lbf"):
        units.force_to(1.0, "kip")


@pytest.mark.parametrize("text, unit, expected", [
    ("4.5 mph", "m/s", 4.5 * 0.44704),  # 1 mph = 0.44704 m/s exactly, NIST SP 811
    ("7 km/h", "m/s", 7 / 3.6),  # km/h by definition
    ("2", "mph", 2 * 0.44704),
])
def test_parse_speed_in_the_units_a_river_report_uses(text, unit, expected):
    assert units.parse_speed(text, unit) == pytest.approx(expected, rel=1e-12)


def test_parse_area_in_square_feet_uses_the_exact_foot():
    # 1 ft = 0.3048 m exactly (NIST SP 811), so 16 ft^2 = 16 x 0.09290304 m^2
    assert units.parse_area("16 ft2", "m²") == pytest.approx(16 * 0.09290304, rel=1e-12)


def test_unknown_speed_unit_names_the_choices():
    with pytest.raises(UnitError, match="m/s, mph, km/h"):
        units.parse_speed("3 knots")


# --- numbers by the locale's rules: a decimal point or a decimal comma ----------------------------
@pytest.mark.parametrize("text, decimal, expected_N", [
    ("1,2345", ",", 1234.5),  # 1.2345 kN: a comma user's decimal (was read as 12,345 kN)
    ("2,5", ",", 2500.0),
    ("1.250,5 N", ",", 1250.5),
    ("1.250.000 N", ",", 1.25e6),
    ("1\u202f250,5 N", ",", 1250.5),  # narrow no-break space groups thousands in some locales
    ("1,000", ",", 1000.0),  # 1.000 kN with a decimal comma
    ("1.5e3 N", ".", 1500.0),
    ("1,5e3 N", ",", 1500.0),
])
def test_numbers_are_read_by_the_locales_decimal_mark(text, decimal, expected_N):
    assert units.parse_force(text, "kN", decimal=decimal) == pytest.approx(expected_N, rel=1e-12)


@pytest.mark.parametrize("text, decimal, words", [
    ("1,000", ".", "ambiguous"),  # 1000 with a decimal point, 1.0 with a decimal comma
    ("1.000", ",", "ambiguous"),
    ("2,500 N", ".", "ambiguous"),
    ("1,2345", ".", "point for decimals"),  # was read as 12,345 kN
    ("12,5", ".", "point for decimals"),
    ("2.5", ",", "comma for decimals"),
    ("1.000,5", ".", "not a number as your settings write them"),
    ("1,5,5", ",", "more than one decimal comma"),
])
def test_what_the_two_habits_read_differently_is_refused_in_words(text, decimal, words):
    with pytest.raises(UnitError, match=words):
        units.parse_force(text, "kN", decimal=decimal)


_TYPED = st.text(alphabet="0123456789.,,..e- ", min_size=1, max_size=12)


@settings(max_examples=300, deadline=None)
@given(_TYPED)
def test_no_typed_number_means_different_things_in_the_two_locales(text):
    """Fuzz: anything typed is refused in words or read, and a text both a decimal-point and a decimal-comma
    reader accept is the same number to both (no silent factor of a thousand)."""
    read = {}
    for mark in (".", ","):
        try:
            read[mark] = units.parse_force(text, "kN", decimal=mark)
        except UnitError as exc:
            assert exc.message
    if len(read) == 2:
        assert read["."] == read[","], (text, read)


def test_shown_thousands_are_spaced_and_read_back_the_same_in_both_locales():
    """A shown force is never "1,250 lbf" (1.25 to a decimal-comma reader): thousands are grouped with a
    narrow space (SI Brochure, 9th ed., BIPM 2019, 5.4.4), and typed back it reads the same in both habits."""
    shown = units.format_force(12_500.0, "N")
    assert shown == "12\u202f500 N"
    for mark in (".", ","):
        assert units.parse_force(shown, "kN", decimal=mark) == 12_500.0
