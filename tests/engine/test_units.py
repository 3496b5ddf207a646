"""Component values: SI prefixes, IEC 60062 letter codes, units, errors and engineering format.

Sources: BIPM, The International System of Units (SI Brochure), 9th edition, with the 2022
prefixes ronna/quetta/ronto/quecto (prefix symbols and powers); IEC 60062 (letter-and-digit
code, the examples are those listed in shared references); Unicode (micro sign U+00B5 and Greek
mu U+03BC, NFKC maps the first to the second). Exact float equality is asserted where the engine
promises "the float nearest the decimal": that float is what Python's own float() gives for the
same decimal text.
"""

from __future__ import annotations

import math
import re
import unicodedata
from decimal import Decimal

import pytest
from hypothesis import given
from hypothesis import strategies as st

from portcut.engine import GROUND, Circuit, CircuitError, ValueParseError
from portcut.engine.solve.units import (
    format_complex,
    format_eng,
    format_phasor,
    implausible,
    parse_frequency,
    parse_value,
)

MICRO_SIGN = "\u00b5"
GREEK_MU = "\u03bc"

# BIPM SI Brochure 9th ed., table of SI prefixes (symbol, power of ten). R (ronna) and Q (quetta)
# are left out here on purpose: see test_ronna_and_quetta_clash_with_the_letter_code below.
SI_PREFIXES = [
    ("q", -30), ("r", -27), ("y", -24), ("z", -21), ("a", -18), ("f", -15), ("p", -12),
    ("n", -9), (MICRO_SIGN, -6), ("m", -3), ("k", 3), ("M", 6), ("G", 9), ("T", 12),
    ("P", 15), ("E", 18), ("Z", 21), ("Y", 24),
]


# -- SI prefixes --------------------------------------------------------------------------------
@pytest.mark.parametrize(("prefix", "power"), SI_PREFIXES)
def test_si_prefix_scales_by_its_power_of_ten(prefix: str, power: int) -> None:
    # BIPM SI Brochure 9th ed.: each prefix symbol stands for one power of ten.
    assert parse_value(f"1{prefix}") == float(f"1e{power}")
    assert parse_value(f"2.5{prefix}") == float(f"2.5e{power}")
    assert parse_value(f"-47 {prefix}") == float(f"-47e{power}")


def test_the_three_spellings_of_micro_are_the_same_prefix() -> None:
    # Unicode: NFKC folds the micro sign into Greek mu; 'u' stands in where µ cannot be typed.
    assert unicodedata.normalize("NFKC", MICRO_SIGN) == GREEK_MU
    for micro in (MICRO_SIGN, GREEK_MU, "u"):
        assert parse_value(f"100{micro}") == float("100e-6")
        assert parse_value(f"100 {micro}F") == float("100e-6")
        assert parse_value(f"4{micro}7") == float("4.7e-6")  # IEC 60062 code letter


@pytest.mark.parametrize(("text", "expected"), [
    ("1m", 1e-3), ("1M", 1e6), ("4m7", 4.7e-3), ("4M7", 4.7e6), ("1 mΩ", 1e-3), ("1 MΩ", 1e6),
    ("3 p", 3e-12), ("3 P", 3e15), ("1 y", 1e-24), ("1 Y", 1e24), ("2z", 2e-21), ("2Z", 2e21),
])
def test_prefix_symbols_are_case_sensitive(text: str, expected: float) -> None:
    # BIPM SI Brochure 9th ed.: prefix symbols are case sensitive (m milli, M mega).
    assert parse_value(text) == expected


def test_plain_decimals_and_exponents_pass_unchanged() -> None:
    assert parse_value("4700") == 4700.0
    assert parse_value("4.7e3") == 4700.0
    assert parse_value("4.7E3") == 4700.0
    assert parse_value("-2.5") == -2.5
    assert parse_value("+3k") == 3000.0
    assert parse_value(".5") == 0.5
    assert parse_value("5.") == 5.0
    assert parse_value("  4.7k  ") == 4700.0
    assert parse_value("1.0e-3m") == float("1e-6")


def test_numbers_pass_through_and_complex_with_no_imaginary_part_becomes_real() -> None:
    assert parse_value(4700) == 4700.0
    assert isinstance(parse_value(4700), float)
    assert parse_value(2 + 3j) == 2 + 3j
    assert isinstance(parse_value(1 + 0j), float)


# -- IEC 60062 letter code ----------------------------------------------------------------------
@pytest.mark.parametrize(("code", "expected"), [
    # IEC 60062, the examples listed in shared references (resistance and capacitance codes).
    ("R47", "0.47"), ("4R7", "4.7"), ("470R", "470"), ("4K7", "4.7e3"), ("47K3", "47.3e3"),
    ("4M7", "4.7e6"), ("4n7", "4.7e-9"), (f"1{MICRO_SIGN}0", "1e-6"),
    # IEC 60062: the other multiplier letters (G, T, L milli for resistance; p, m, F capacitance).
    ("1G5", "1.5e9"), ("2T2", "2.2e12"), ("3L3", "3.3e-3"), ("4p7", "4.7e-12"),
    ("2m2", "2.2e-3"), ("1F0", "1"), ("K47", "470"), ("4k7", "4.7e3"),
])
def test_iec_60062_letter_stands_for_the_decimal_point(code: str, expected: str) -> None:
    assert parse_value(code) == float(expected)


def test_ronna_and_quetta_clash_with_the_letter_code() -> None:
    # The decision documented in engine/solve/units.py: R is the IEC 60062 unit multiplier (1R = 1
    # Ω),
    # so the 2022 prefixes ronna (R) and quetta (Q) are not suffixes; their lowercase partners
    # ronto (r) and quecto (q) keep their SI meaning.
    assert parse_value("1R") == 1.0
    assert parse_value("1R0") == 1.0
    assert parse_value("4R7") == 4.7
    assert parse_value("1r") == 1e-27
    assert parse_value("1q") == 1e-30
    for text in ("1Q", "2 QΩ"):
        with pytest.raises(ValueParseError, match=re.escape(repr(text))):
            parse_value(text)


@pytest.mark.parametrize(("text", "expected"), [
    # IEC 60062 tolerance letters after a complete code (J 5 %, K 10 %, F 1 %, M 20 %).
    ("4K7J", 4.7e3), ("4K7K", 4.7e3), ("4K7F", 4.7e3), ("4K7M", 4.7e3), ("R47J", 0.47),
    # ... while K and M right after the digits are multipliers, and F alone is the farad.
    ("47K", 47e3), ("47M", 47e6), ("1F", 1.0), ("1.5F", 1.5), ("1F0", 1.0),
])
def test_trailing_tolerance_letter_versus_multiplier(text: str, expected: float) -> None:
    assert parse_value(text) == expected


def test_tolerance_letter_needs_a_complete_code() -> None:
    with pytest.raises(ValueParseError, match="'4KJ'"):
        parse_value("4KJ")


@pytest.mark.parametrize(("text", "expected"), [
    ("4.7 kΩ", 4.7e3), ("4.7kΩ", 4.7e3), ("100nF", 100e-9), ("100 nF", 100e-9),
    ("10 mH", 10e-3), ("1 kHz", 1e3), ("5V", 5.0), ("2 mA", 2e-3), ("1 mS", 1e-3),
    ("10 ohm", 10.0), ("4.7kohm", 4.7e3), ("4k7 Ω", 4.7e3), ("2R2 Ω", 2.2), ("4n7F", 4.7e-9),
    ("3 W", 3.0),
])
def test_a_unit_symbol_may_follow_the_value(text: str, expected: float) -> None:
    assert parse_value(text) == expected


# -- errors -------------------------------------------------------------------------------------
@pytest.mark.parametrize("text", [
    "", "   ", "abc", "k", "R", "4k7k", "2R2R", "1..2", "1e", "1 s", "1Ym", "1_000", "nan",
    "inf", "4.7 kΩ x",
])
def test_unreadable_text_raises_quoting_it(text: str) -> None:
    with pytest.raises(ValueParseError, match=f"cannot read {re.escape(repr(text))}.*SI prefix"):
        parse_value(text)


def test_error_names_the_field_and_is_a_circuit_error() -> None:
    with pytest.raises(CircuitError, match=r"^R1 resistance: cannot read '4x7'"):
        parse_value("4x7", what="R1 resistance")


@pytest.mark.parametrize(("value", "message"), [
    ("1e400", "'1e400' is not finite"), (math.inf, "inf is not finite"),
    (complex(math.nan, 0), "is not finite"), (True, "True is not a number"),
    (None, "None is not a number or text"), ([1], r"\[1\] is not a number or text"),
])
def test_non_finite_and_non_numeric_values_are_refused(value: object, message: str) -> None:
    with pytest.raises(ValueParseError, match=message):
        parse_value(value)


def test_frequency_reads_dc_and_hertz_and_refuses_negative_or_complex() -> None:
    assert parse_frequency("DC") == 0.0
    assert parse_frequency(" dc ") == 0.0
    assert parse_frequency("10 kHz") == 10e3
    assert parse_frequency("1k") == 1e3
    assert parse_frequency(50) == 50.0
    for bad in ("-1", 1j):
        message = f"frequency: {re.escape(repr(bad))} must be a real"
        with pytest.raises(ValueParseError, match=message):
            parse_frequency(bad)
    with pytest.raises(ValueParseError, match="frequency: cannot read 'x'"):
        parse_frequency("x")


# -- formatting ---------------------------------------------------------------------------------
@pytest.mark.parametrize(("value", "unit", "text"), [
    # Engineering notation, one space between number and unit, none inside "kΩ"
    # (BIPM SI Brochure 9th ed., writing of unit symbols); µ printed as U+00B5.
    (4700, "Ω", "4.7 kΩ"), (100e-9, "F", "100 nF"), (1e-6, "F", f"1 {MICRO_SIGN}F"),
    (-4700, "Ω", "-4.7 kΩ"), (47e3, "Ω", "47 kΩ"), (2.2, "Ω", "2.2 Ω"), (1e-3, "H", "1 mH"),
    (12345678, "Hz", "12.3 MHz"), (123.456, "V", "123 V"), (0.0, "V", "0 V"), (1000, "", "1 k"),
    (999.95, "Ω", "1 kΩ"), (999.4999, "", "999"), (math.inf, "Ω", "∞ Ω"), (-math.inf, "", "-∞"),
    (math.nan, "V", "undefined"), (1e27, "Ω", "1000 YΩ"), (1e-30, "F", "0.000001 yF"),
])
def test_format_eng(value: float, unit: str, text: str) -> None:
    assert format_eng(value, unit) == text


def test_format_eng_rounds_to_the_requested_significant_digits() -> None:
    assert format_eng(4749, "Ω", digits=2) == "4.7 kΩ"
    assert format_eng(1234.5678, digits=6) == "1.23457 k"
    assert format_eng(1.0049, "V", digits=3) == "1 V"


@pytest.mark.parametrize(("z", "text"), [
    (3.33, "3.33 V ∠ 0°"), (-3.33, "3.33 V ∠ 180°"), (2j, "2 V ∠ 90°"), (0, "0 V ∠ 0°"),
    (-complex(3.33, 0), "3.33 V ∠ 180°"),  # negated: the imaginary part is -0.0
    (complex(1, -1), "1.414 V ∠ -45°"), (complex(math.inf, 0), "∞ V"),
])
def test_format_phasor_magnitude_angle_in_degrees(z: complex, text: str) -> None:
    assert format_phasor(z, "V") == text


@pytest.mark.parametrize(("z", "text"), [
    (1000 + 2000j, "1 kΩ + j 2 kΩ"), (1000 - 2000j, "1 kΩ - j 2 kΩ"), (5, "5 Ω"),
    (-3j, "0 Ω - j 3 Ω"), (complex(math.inf, 0), "∞ Ω"),
])
def test_format_complex_rectangular(z: complex, text: str) -> None:
    assert format_complex(z, "Ω") == text


# -- round trips --------------------------------------------------------------------------------
_UNIT_SYMBOLS = st.sampled_from(["", "Ω", "F", "H", "V", "A", "Hz", "S"])
_MAGNITUDES = st.floats(min_value=1e-30, max_value=1e30, allow_nan=False, allow_infinity=False)


@given(magnitude=_MAGNITUDES, negative=st.booleans(), unit=_UNIT_SYMBOLS,
       digits=st.integers(1, 15))
def test_formatted_value_reads_back_within_its_rounding(magnitude: float, negative: bool,
                                                        unit: str, digits: int) -> None:
    value = -magnitude if negative else magnitude
    back = parse_value(format_eng(value, unit, digits))
    # Rounding to d significant figures moves a value by at most half a unit in the d-th figure,
    # 0.5 * 10**(1 - d) relative; the extra 1e-12 covers the binary division by the prefix scale.
    assert math.isclose(back, value, rel_tol=0.5 * 10 ** (1 - digits) * (1 + 1e-9) + 1e-12)


_FORMAT_TABLE = ["y", "z", "a", "f", "p", "n", MICRO_SIGN, "m", "", "k", "M", "G", "T", "P",
                 "E", "Z", "Y"]


@given(mantissa=st.integers(100, 999), shift=st.integers(0, 2),
       prefix=st.sampled_from(_FORMAT_TABLE), unit=_UNIT_SYMBOLS)
def test_three_figure_text_survives_parse_then_format(mantissa: int, shift: int, prefix: str,
                                                      unit: str) -> None:
    number = format(Decimal(mantissa).scaleb(-shift).normalize(), "f")  # e.g. "4.7", "470"
    text = f"{number} {prefix}{unit}".rstrip()
    assert format_eng(parse_value(f"{number}{prefix}{unit}"), unit) == text


_CODE_LETTERS = st.sampled_from([("R", 0), ("K", 3), ("k", 3), ("M", 6), ("G", 9), ("T", 12),
                                 ("L", -3), ("p", -12), ("n", -9), ("u", -6), (MICRO_SIGN, -6),
                                 (GREEK_MU, -6), ("m", -3)])


@given(whole=st.integers(0, 999), frac=st.text("0123456789", min_size=1, max_size=3),
       letter=_CODE_LETTERS, tolerance=st.sampled_from(["", "F", "G", "J", "K", "M"]))
def test_any_letter_code_reads_as_the_decimal_it_stands_for(whole: int, frac: str,
                                                           letter: tuple[str, int],
                                                           tolerance: str) -> None:
    # IEC 60062: digits, multiplier letter in place of the decimal point, digits, tolerance.
    symbol, power = letter
    leading = str(whole) if whole or symbol != "R" else ""  # "R47" as well as "0R47"
    expected = float(Decimal(f"{whole}.{frac}").scaleb(power))
    assert parse_value(f"{leading}{symbol}{frac}{tolerance}") == expected


# -- units checked against the field ------------------------------------------------------------
@pytest.mark.parametrize(("text", "unit", "expected"), [
    ("4.7 kΩ", "Ω", 4700.0), ("4k7 ohm", "Ω", 4700.0), ("100nF", "F", 100e-9), ("10 mH", "H", 0.01),
    ("1 kHz", "Hz", 1000.0), ("40 mS", "S", 0.04), ("10", "", 10.0), ("2R2", "Ω", 2.2),
])
def test_a_value_in_the_fields_own_unit_is_taken(text: str, unit: str, expected: float) -> None:
    # SI (BIPM SI Brochure, 9th ed.): the symbols of the ohm, farad, henry, hertz and siemens.
    assert parse_value(text, unit=unit) == pytest.approx(expected)


@pytest.mark.parametrize(("text", "unit", "message"), [
    ("10uF", "Ω", "R1 value: '10uF' is in F, but this field takes a value in Ω"),
    ("10 mA", "Ω", "R1 value: '10 mA' is in A, but this field takes a value in Ω"),
    ("5 V", "", "R1 value: '5 V' is in V, but this field takes a plain number without a unit"),
    ("1 W", "A", "R1 value: '1 W' is in W, but this field takes a value in A"),
])
def test_a_value_in_another_unit_is_refused_naming_the_unit(text: str, unit: str,
                                                            message: str) -> None:
    with pytest.raises(ValueParseError) as caught:
        parse_value(text, what="R1 value", unit=unit)
    assert str(caught.value) == message


def test_a_resistor_value_in_farads_is_refused_when_the_circuit_is_built() -> None:
    with pytest.raises(ValueParseError, match="takes a value in Ω"):
        Circuit().resistor("R1", "a", GROUND, "10uF")


@pytest.mark.parametrize(("kind", "value", "warned"), [
    ("capacitor", 10.0, "unusually large"), ("resistor", 1e-7, "unusually small"),
    ("capacitor", 100e-9, None), ("resistor", 0.0, None), ("vcvs", 1e9, None),
])
def test_unusual_magnitudes_are_named(kind: str, value: float, warned: str | None) -> None:
    reason = implausible(kind, value)
    assert (reason is None) if warned is None else (warned in reason)
