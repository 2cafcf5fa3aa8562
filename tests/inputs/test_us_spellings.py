"""US spellings and units in a spec, and hints that fit the key: what a user outside Europe writes."""

from __future__ import annotations

import pytest

from sheetgen.errors import SpecError
from sheetgen.inputs.spec import parse_spec
from sheetgen.inputs.units import parse_quantity

SPEC = """\
title: Cab light
supply: 12 V
load: {{kind: led, current: {current}, {colour_key}: red}}
fade: {{in: 1 s, out: 2 s}}
ambient: {ambient}
"""


def _spec(current="20 mA", colour_key="colour", ambient="40 °C"):
    return parse_spec(SPEC.format(current=current, colour_key=colour_key, ambient=ambient), source="us.yaml")


def test_color_reads_as_colour():
    assert _spec(colour_key="color").load == _spec(colour_key="colour").load


def test_both_spellings_at_once_is_refused_naming_the_line():
    text = SPEC.format(current="20 mA", colour_key="colour: red, color", ambient="40 °C")
    with pytest.raises(SpecError, match=r"us.yaml:3: load.color: is given twice"):
        parse_spec(text, source="us.yaml")


@pytest.mark.parametrize("written, celsius", [
    # t/°C = (t/°F − 32) / 1.8: NIST Special Publication 811 (2008 edition), Appendix B
    # (the clause from memory); 104 °F = 40 °C, 32 °F = 0 °C, −40 °F = −40 °C.
    ("104 °F", 40.0), ("32 F", 0.0), ("-40 degF", -40.0), ("113 \u2109", 45.0),
])
def test_fahrenheit_is_converted(written, celsius):
    assert parse_quantity(written, "degC", key="ambient") == pytest.approx(celsius, abs=1e-12)
    assert _spec(ambient=written).ambient_c == pytest.approx(celsius, abs=1e-12)


def test_kelvin_is_still_refused_with_the_units_that_work():
    with pytest.raises(SpecError, match="°C or °F"):
        parse_quantity("300 K", "degC", key="ambient")


@pytest.mark.parametrize("written", ["20 Ω", "20 kΩ", "20 V"])
def test_an_led_current_in_the_wrong_unit_hints_milliamps(written):
    with pytest.raises(SpecError) as info:
        _spec(current=written)
    (problem,) = info.value.problems
    assert "load.current" in problem and "e.g. 20 mA" in problem and "e.g. 20 A)" not in problem


def test_a_voltage_hint_keeps_the_users_own_prefix():
    with pytest.raises(SpecError, match=r"e\.g\. 20 mA"):
        parse_quantity("20 mV", "A", key="load.current")


@pytest.mark.parametrize("written", ["10 s", "40 V", "40 Q"])
def test_a_temperature_in_the_wrong_unit_names_both_units_that_work(written):
    with pytest.raises(SpecError) as info:
        _spec(ambient=written)
    (problem,) = info.value.problems
    assert "us.yaml:5: ambient" in problem and "°C or °F" in problem and "(e.g. " in problem
