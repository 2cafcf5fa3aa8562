"""The load-kind registry: one entry per kind, each entry's figures against closed forms."""

from __future__ import annotations

import numpy as np
import pytest

from sheetgen.circuits.loads import LOAD_KINDS, kind_of
from sheetgen.engine.measure import HIGH, LOW
from sheetgen.inputs import spec as spec_reader
from sheetgen.inputs.spec import LampLoad, LedLoad


def test_every_kind_the_reader_accepts_has_one_entry():
    """A kind is read in one place and behaves from one place, under the same name."""
    assert set(spec_reader._LOAD_READERS) == set(LOAD_KINDS)
    for name, kind in LOAD_KINDS.items():
        assert kind.spec_type.kind == name


def test_an_unknown_kind_lists_every_registered_kind():
    with pytest.raises(spec_reader.SpecError) as err:
        spec_reader.parse_spec("title: t\nsupply: 12 V\nload: {kind: neon}\nfade_in: 1 s\nfade_out: 2 s\n",
                               source="t.yaml")
    assert "use " + " or ".join(LOAD_KINDS) in str(err.value)


def test_led_hover_peak_is_the_maximum_power_transfer_point():
    """Maximum power transfer (any circuit-theory text): a source of headroom H behind R delivers at most
    H²/4R to a variable load; here the switch is the load and H is the supply less the string's drops."""
    load = LedLoad(current_a=0.02, vf_v=3.0, per_string=3, strings=2)
    headroom = 14.6 - 3 * 3.0
    peak = LOAD_KINDS["led"].hover_peak_w(load, supply_v=14.6, series_ohm=270.0, current_limit_a=None)
    assert peak == pytest.approx(headroom**2 / (4 * 270.0 / 2), rel=1e-9)
    limited = LOAD_KINDS["led"].hover_peak_w(load, supply_v=14.6, series_ohm=270.0, current_limit_a=0.005)
    assert limited == pytest.approx(0.005 * (headroom - 0.005 * 135.0), rel=1e-9)


def test_lamp_hover_peak_stays_under_the_linear_resistor_bound():
    """A filament's resistance only rises with its temperature, so the switch's share can never exceed the
    maximum-power-transfer bound V²/4R_cold of a fixed resistor at the filament's cold resistance."""
    from sheetgen.parts import catalog

    f = catalog.filament()
    load = LampLoad(power_w=5.0, rated_v=12.0)
    r_cold = 12.0**2 / 5.0 / (f.t_hot_k / f.t_room_k) ** f.alpha
    peak = LOAD_KINDS["lamp"].hover_peak_w(load, supply_v=14.6, series_ohm=None, current_limit_a=None)
    assert 0.0 < peak < 14.6**2 / (4 * r_cold)


def test_light_levels_are_current_levels_for_leds_and_steeper_for_lamps():
    """IEEE Std 181 levels: an LED's light tracks its current, a filament's rises far faster than it."""
    assert LOAD_KINDS["led"].current_fractions(LOW, HIGH) == (LOW, HIGH)
    lo, hi = LOAD_KINDS["lamp"].current_fractions(LOW, HIGH)
    assert LOW < lo < hi < 1.0 and hi > HIGH


def test_led_supply_scale_is_the_headroom_ratio():
    load = LedLoad(current_a=0.02, vf_v=3.0, per_string=3)
    s = LOAD_KINDS["led"].supply_scale(load, supply_v=14.6, nominal_v=12.6, switch_drop_v=0.2)
    assert s == pytest.approx((14.6 - 9.2) / (12.6 - 9.2))


def test_words_describe_the_load_as_written():
    from sheetgen.inputs.units import format_quantity

    led = LedLoad(current_a=0.02, vf_v=2.0, per_string=1, strings=1, colour="red")
    assert kind_of(led).describe(led, format_quantity) == "1 red LED, 20 mA, Vf 2 V"
    lamps = LampLoad(power_w=5.0, rated_v=12.0, count=2)
    assert kind_of(lamps).describe(lamps, format_quantity) == "2 lamps in parallel, 5 W each, rated at 12 V"
    assert kind_of(lamps).cautions and not kind_of(led).cautions


def test_branch_currents_read_each_string_through_its_resistor(camper_report):
    """Ohm's law on each series resistor; a lamp has no per-branch rating to read."""
    nl = camper_report.design.netlist
    series = nl.by_role("led_series")
    drops = {r.ref: 0.5 + k for k, r in enumerate(series)}
    volts = {}
    for r in series:
        volts[r.net("1")] = np.array([12.0])
        volts[r.net("2")] = np.array([12.0 - drops[r.ref]])
    i = kind_of(camper_report.design.spec.load).branch_currents(nl, lambda net: volts[net])
    assert i[:, 0] == pytest.approx([drops[r.ref] / r.value for r in series])
    assert LOAD_KINDS["lamp"].branch_currents(nl, lambda net: volts[net]) is None
