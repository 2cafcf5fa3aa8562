"""Quantities in and out: SI prefixes and the IEC 60062 letter code.

Sources are named beside each check, with its status: read in the source,
from memory, or common practice with no single source.
"""

from __future__ import annotations

import math

import pytest

from sheetgen.errors import SpecError
from sheetgen.inputs.units import format_quantity, parse_quantity, rkm_code, rkm_code_farad


def parse(text, unit):
    return parse_quantity(text, unit, key="k")


# --- IEC 60062 letter code ---------------------------------------------------

# RKM code article (Wikipedia mirror, wonilvalve.com), "Examples of resistance
# values"; read in the source.
RKM_RESISTANCE_EXAMPLES = [
    ("R47", 0.47),
    ("4R7", 4.7),
    ("470R", 470.0),
    ("4K7", 4.7e3),
    ("47K", 47e3),
    ("47K3", 47.3e3),
    ("470K", 470e3),
    ("4M7", 4.7e6),
]


@pytest.mark.parametrize(("code", "ohms"), RKM_RESISTANCE_EXAMPLES)
def test_rkm_resistance_examples_parse(code, ohms):
    # RKM code article (wonilvalve.com mirror); read in the source.
    assert parse(code, "ohm") == pytest.approx(ohms, rel=1e-12)


@pytest.mark.parametrize(("code", "ohms"), RKM_RESISTANCE_EXAMPLES)
def test_rkm_resistance_examples_written(code, ohms):
    # RKM code article (wonilvalve.com mirror); read in the source.
    assert rkm_code(ohms) == code


def test_rkm_1r8_is_1_8_ohm():
    # probsee.com/p/RKM_code and electrostudy.com/2011/09: 1R8J = 1.8 Ω ±5 %;
    # read in the source (the tolerance letter is not part of a value here).
    assert parse("1R8", "ohm") == pytest.approx(1.8)
    assert rkm_code(1.8) == "1R8"


def test_rkm_letter_l_is_milliohm():
    # probsee.com/p/RKM_code: L = ×10⁻³; read in the source.
    assert parse("4L7", "ohm") == pytest.approx(4.7e-3)


def test_rkm_lower_case_k_and_r_are_read():
    # Lower-case k is the SI kilo; "4k7" is how most schematics
    # write it (common practice, no source).
    assert parse("4k7", "ohm") == pytest.approx(4700.0)
    assert parse("4r7", "ohm") == pytest.approx(4.7)


def test_rkm_lone_digit_gets_a_zero():
    # 1M0 / 1K0 / 1R0 for round values of one digit: common practice on parts
    # lists, no source; two or more digits go without (10K, 470R; RKM code
    # article's "47K" and "470K", read in the source).
    assert rkm_code(1e6) == "1M0"
    assert rkm_code(1e3) == "1K0"
    assert rkm_code(1.0) == "1R0"
    assert rkm_code(10e3) == "10K"
    assert rkm_code(100e3) == "100K"


def test_rkm_rounds_to_significant_digits_and_carries_the_letter():
    # Arithmetic on the letter-code rule: 999.7 Ω at 3 figures is 1.00 kΩ.
    assert rkm_code(999.7) == "1K0"
    assert rkm_code(4748.0) == "4K75"
    assert rkm_code(4748.0, digits=2) == "4K7"
    assert rkm_code(0.047) == "R047"


def test_rkm_capacitance_nanofarad():
    # eestudenthelp.blogspot.com/2009/09/capacitor-markings.html: "2n2 is 2.2
    # Nanofarads" (read in the source).
    assert parse("2n2", "F") == pytest.approx(2.2e-9)
    assert rkm_code_farad(2.2e-9) == "2n2"


@pytest.mark.parametrize(
    ("code", "farads"),
    [("2u2", 2.2e-6), ("470u", 470e-6), ("4m7", 4.7e-3), ("6m8", 6.8e-3), ("4p7", 4.7e-12), ("100n", 100e-9)],
)
def test_rkm_capacitance_letters(code, farads):
    # IEC 60062 capacitance letters p n µ m F in place of the decimal point;
    # the RKM code article lists 6m8 as 6800 µF. From memory: the
    # stored copy of the article did not show its capacitance table.
    assert parse(code, "F") == pytest.approx(farads, rel=1e-12)
    assert rkm_code_farad(farads) == code


def test_rkm_capacitance_micro_sign_option():
    # Same rule with the typeset micro sign; from memory.
    assert rkm_code_farad(2.2e-6, micro="µ") == "2µ2"
    assert parse("2µ2", "F") == pytest.approx(2.2e-6)


def test_rkm_rejects_non_positive_values():
    # A letter code has no sign (common practice, no source).
    with pytest.raises(ValueError):
        rkm_code(0.0)
    with pytest.raises(ValueError):
        rkm_code_farad(-1e-6)


def test_lower_case_m_in_a_resistor_code_is_refused():
    # Upper case for resistor letters (RKM code article, "the case used";
    # read in the source): 4m7 could mean 4.7 MΩ or 4.7 mΩ.
    with pytest.raises(SpecError, match="ambiguous"):
        parse("4m7", "ohm")


# --- SI prefixes in -----------------------------------------------------------


@pytest.mark.parametrize(
    ("text", "unit", "value"),
    [
        ("20 mA", "A", 0.020),
        ("20mA", "A", 0.020),
        ("4.7 kΩ", "ohm", 4700.0),
        ("4.7kΩ", "ohm", 4700.0),
        ("4.7 kΩ", "ohm", 4700.0),  # U+2126 OHM SIGN
        ("4.7 kohm", "ohm", 4700.0),
        ("4.7k", "ohm", 4700.0),
        ("470 R", "ohm", 470.0),
        ("2200 µF", "F", 2200e-6),
        ("2200 μF", "F", 2200e-6),  # U+03BC GREEK SMALL MU
        ("2200uF", "F", 2200e-6),
        ("100 nF", "F", 100e-9),
        ("12 V", "V", 12.0),
        ("13.8V", "V", 13.8),
        ("12 VDC", "V", 12.0),
        ("500 mW", "W", 0.5),
        ("1.5 s", "s", 1.5),
        ("330 ms", "s", 0.33),
        ("2 min", "s", 120.0),
        ("40 °C", "degC", 40.0),
        ("40°C", "degC", 40.0),
        ("40 C", "degC", 40.0),
        ("40 degC", "degC", 40.0),
        ("-40 °C", "degC", -40.0),
        ("−40 °C", "degC", -40.0),  # U+2212 MINUS SIGN
        ("1e-3 A", "A", 1e-3),
        (".5 s", "s", 0.5),
        ("10 000 µF", "F", 10e-3),
    ],
)
def test_si_prefixes_and_spellings(text, unit, value):
    # SI prefixes p n µ m k M G (BIPM SI Brochure, 9th ed., Table 7; from
    # memory); the spellings are the ones a spec file accepts.
    assert parse(text, unit) == pytest.approx(value, rel=1e-12)


def test_decimal_prefix_gives_the_nearest_float():
    # Decimal scaling, not 2200 * 1e-6 (which is 0.0021999999999999997):
    # arithmetic, common practice, no source.
    assert parse("2200 µF", "F") == 0.0022
    assert parse("330 ms", "s") == 0.33


def test_negative_values_pass_through():
    # Range checks belong to the spec reader.
    assert parse("-1 s", "s") == -1.0


def test_mismatched_unit_names_key_and_expected_unit():
    with pytest.raises(SpecError) as info:
        parse_quantity("20 mV", "A", key="load.current")
    (problem,) = info.value.problems
    assert problem == 'load.current: "20 mV" is not a current; write it in A or mA (e.g. 20 mA)'


@pytest.mark.parametrize(("raw", "unit", "hint"), [(12, "V", "write 12 V"), ("12", "V", "write 12 V"),
                                                   (3.1, "V", "write 3.1 V"), (40, "degC", "write 40 °C")])
def test_bare_number_needs_a_unit(raw, unit, hint):
    with pytest.raises(SpecError) as info:
        parse_quantity(raw, unit, key="supply")
    assert info.value.problems[0].startswith("supply: ")
    assert "no unit" in info.value.problems[0]
    assert hint in info.value.problems[0]


@pytest.mark.parametrize(
    ("raw", "unit", "words"),
    [
        (True, "A", "yes-or-no"),
        (None, "A", "has no value"),
        ([1, 2], "A", "got a list"),
        ({"a": 1}, "V", "got a mapping"),
        ("", "V", "is empty"),
        ("4,7 V", "V", "decimal mark"),
        ("20m", "A", "write 20 mA"),
        ("12 furlong", "V", 'unknown unit "furlong"'),
        ("300 K", "degC", "°C"),
        ("4.7 kΩ", "F", "is not a capacitance"),
        ("twelve volts", "V", "is not a voltage"),
        ("1.5 V", "s", "is not a time"),
        ("5 W", "A", "is not a current"),
        ("40 °C", "s", "is not a time"),
    ],
)
def test_bad_quantities_are_refused_with_the_key(raw, unit, words):
    with pytest.raises(SpecError) as info:
        parse_quantity(raw, unit, key="x.y")
    (problem,) = info.value.problems
    assert problem.startswith("x.y: ")
    assert words in problem


def test_unknown_base_unit_is_a_programming_error():
    with pytest.raises(ValueError, match="unknown base unit"):
        parse_quantity("1 V", "volt", key="k")


# --- formatting out ------------------------------------------------------------


@pytest.mark.parametrize(
    ("value", "unit", "text"),
    [
        (4700.0, "ohm", "4.7 kΩ"),
        (2200e-6, "F", "2200 µF"),
        (1e-6, "F", "1 µF"),
        (10e-3, "F", "10 000 µF"),
        (100e-9, "F", "100 nF"),
        (0.020, "A", "20 mA"),
        (1.5, "s", "1.5 s"),
        (0.33, "s", "330 ms"),
        (120.0, "s", "120 s"),
        (14.6, "V", "14.6 V"),
        (0.65, "V", "0.65 V"),
        (0.25, "W", "0.25 W"),
        (0.05, "W", "50 mW"),
        (40.0, "degC", "40 °C"),
        (-40.0, "degC", "-40 °C"),
        (0.47, "ohm", "0.47 Ω"),
        (0.028, "ohm", "28 mΩ"),
        (4.7e6, "ohm", "4.7 MΩ"),
        (0.0, "A", "0 A"),
    ],
)
def test_format_quantity(value, unit, text):
    # Space between number and unit, prefix joined to the symbol: BIPM SI
    # Brochure 9th ed. §5.4.3 (from memory). Capacitors in µF from
    # 1 µF to 10 000 µF and more, volts/watts/ohms plain down to 0.1: the trade's
    # habit (common practice, no source). Groups of three digits separated by a
    # space for five or more digits: SI Brochure §5.4.4 (from memory).
    assert format_quantity(value, unit) == text


def test_format_uses_real_unicode_symbols():
    assert "\u03a9" in format_quantity(4700.0, "ohm")
    assert "\u00b5" in format_quantity(2200e-6, "F")
    assert "\u00b0" in format_quantity(40.0, "degC")


def test_format_rounding_carries_into_the_next_prefix():
    # 999.7 Ω at three significant figures is 1.00 kΩ: arithmetic.
    assert format_quantity(999.7, "ohm") == "1 kΩ"
    assert format_quantity(0.9996, "s") == "1 s"


def test_format_digits():
    assert format_quantity(14.6049, "V", digits=4) == "14.6 V"
    assert format_quantity(14.6549, "V", digits=4) == "14.65 V"
    assert format_quantity(1.0 / 3.0, "s", digits=2) == "330 ms"


def test_format_refuses_non_finite():
    with pytest.raises(ValueError):
        format_quantity(math.inf, "V")
    with pytest.raises(ValueError):
        format_quantity(math.nan, "A")


@pytest.mark.parametrize(
    ("value", "unit"),
    [(4700.0, "ohm"), (2200e-6, "F"), (0.020, "A"), (0.33, "s"), (14.6, "V"), (0.25, "W"), (-12.5, "degC"),
     (47e-3, "F"), (4.7e6, "ohm")],
)
def test_format_then_parse_round_trips(value, unit):
    # What the sheet prints must read back the same (three significant figures).
    assert parse_quantity(format_quantity(value, unit), unit, key="k") == pytest.approx(value, rel=1e-12)


@pytest.mark.parametrize("ohms", [0.47, 1.8, 470.0, 4700.0, 47300.0, 1e6, 2.2e9])
def test_rkm_round_trips(ohms):
    assert parse_quantity(rkm_code(ohms), "ohm", key="k") == pytest.approx(ohms, rel=1e-12)
