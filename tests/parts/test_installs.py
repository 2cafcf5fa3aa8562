"""Install profiles: spans, ambients and wire minimums against the documents they come from."""

from __future__ import annotations

import textwrap

import pytest

from sheetgen.errors import SpecError
from sheetgen.inputs.spec import parse_spec
from sheetgen.parts import installs


def _spec(extra: str, supply: str = "12 V"):
    text = f"""\
    supply: {supply}
    load: {{kind: led, current: 10 mA, vf: 2.0 V}}
    fade: {{in: 1 s, out: 2 s}}
    """
    return parse_spec(textwrap.dedent(text) + extra, source="t.yaml")


def test_usb_port_span_is_the_usb_2_0_vbus_window():
    # USB 2.0 specification, 7.2.1 Table 7-7: VBUS 4.75-5.25 V at a high-power port (from memory).
    spec = _spec("install: bench\n", supply="5 V")
    assert spec.system == "usb-5"
    assert (spec.supply.min_v, spec.supply.max_v) == pytest.approx((4.75, 5.25))


def test_min_below_five_volts_is_allowed_for_a_sagging_usb_port():
    # USB 2.0, 7.2.1: a low-power port may sag to 4.40 V (from memory).
    spec = _spec("install: bench\n", supply="{nominal: 5 V, min: 4.4 V}")
    assert spec.supply.min_v == pytest.approx(4.4)
    with pytest.raises(SpecError, match="supply.min"):
        _spec("install: bench\n", supply="{nominal: 5 V, min: 3.3 V}")
    with pytest.raises(SpecError, match="supply:.*below the 5 V"):
        _spec("install: bench\n", supply="4.5 V")


def test_vehicle_battery_span_sits_inside_iso_16750_2_code_d():
    # ISO 16750-2:2010 Table 1, 12 V code D: 10.5-16 V (360docs.net copy of BS ISO 16750-2:2010).
    for place in ("vehicle", "boat"):
        spec = _spec(f"install: {place}\n")
        assert spec.system == "battery-12"
        assert 10.5 <= spec.supply.min_v < spec.supply.max_v <= 16.0


def test_a_named_system_sets_the_span_and_unknown_ones_are_refused_with_their_line():
    spec = _spec("", supply="{nominal: 12 V, system: adapter-12}")
    # a regulated adapter within ±5 % (common practice, no source): 11.4-12.6 V
    assert (spec.supply.min_v, spec.supply.max_v) == pytest.approx((11.4, 12.6))
    with pytest.raises(SpecError) as err:
        _spec("", supply="{nominal: 12 V, system: mains}")
    assert "t.yaml:1: supply.system" in str(err.value)


def test_default_ambients_are_hotter_than_a_room_where_the_place_is():
    # McLaren, Null & Quinn, Pediatrics 116 (2005): a closed car's cabin rises about 22 °C above a
    # 35 °C day within the hour (from memory); ABYC E-11 rates conductors at 50 °C inside engine
    # spaces (from memory); datasheets rate parts at 25 °C.
    ambient = {p.name: _spec(f"install: {p.name}\n").ambient_c for p in installs.installs()}
    assert ambient["vehicle"] >= 35 + 22 - 2
    assert ambient["boat"] >= 50
    assert ambient["bench"] == 25
    assert _spec("install: boat\nambient: 30 °C\n").ambient_c == 30  # the spec's own figure wins


def test_boat_wire_minimum_is_the_marine_minimum():
    # ISO 10133: 1 mm² smallest conductor; ABYC E-11: 16 AWG (1.31 mm²), which the 1 mm² line of
    # our wire table buys as 16 AWG (both from memory).
    assert installs.install("boat").wire_min_mm2 >= 1.0
    assert all(p.wire_min_mm2 >= 0.5 for p in installs.installs())


def test_every_install_says_how_to_make_it_safe():
    words = {p.name: p.isolate.lower() for p in installs.installs()}
    assert "disconnect the battery" in words["vehicle"]
    assert "unplug the supply" in words["bench"]
    assert all(p.sources for p in installs.installs())
    assert all(s.sources and s.min_v <= s.nominal_v <= s.max_v for s in installs.systems())
