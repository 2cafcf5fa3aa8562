"""Sizing: the achieved fades, the drive rule, the part choice and facts of the trade."""

from __future__ import annotations

import numpy as np
import pytest

from sheetgen.parts import catalog
from sheetgen.parts import eseries
from sheetgen.engine import simulate
from sheetgen.errors import InfeasibleDesign
from sheetgen.engine.measure import light_times
from sheetgen.sizing.light import light
from sheetgen.sizing.size import OVERDRIVE_MIN, drive_at_minimum, size
from sheetgen.inputs.spec import parse_spec
from sheetgen.circuits.topologies import window_for


def _spec(load: str, fade_in: float, fade_out: float, supply: str = "12 V", extra: str = "") -> object:
    return parse_spec(f"supply: {supply}\nload: {load}\nfade: {{in: {fade_in} s, out: {fade_out} s}}\n{extra}",
                      source="test")


LED1 = "{kind: led, current: 20 mA, vf: 2.0 V}"
LED2X3 = "{kind: led, current: 20 mA, vf: 3.1 V, per_string: 3, strings: 2}"
LED24 = "{kind: led, current: 15 mA, vf: 3.0 V, per_string: 5, strings: 4}"
LAMP3 = "{kind: lamp, power: 3 W}"

# A single 20 mA LED at 20 s / 20 s is out of reach now that the Darlington's gain at 20 mA
# is what its equivalent circuit gives (R2 takes most of the drive); 10 s / 10 s is the slow case.
GRID = [
    (LED1, 0.3, 0.3, "12 V"), (LED1, 1.5, 4, "12 V"), (LED1, 5, 20, "12 V"), (LED1, 10, 10, "12 V"),
    (LED2X3, 0.3, 3, "12 V"), (LED2X3, 1, 1, "12 V"), (LED2X3, 3, 10, "12 V"), (LED2X3, 0.5, 20, "12 V"),
    (LED24, 0.8, 3, "24 V"), (LED24, 2, 8, "24 V"),
    (LAMP3, 0.3, 3, "12 V"), (LAMP3, 0.5, 20, "12 V"),
]


@pytest.mark.parametrize("load,fade_in,fade_out,supply", GRID)
def test_grid_meets_requested_fades_within_ten_percent(load, fade_in, fade_out, supply):
    d = size(_spec(load, fade_in, fade_out, supply))
    assert d.fade_in_s == pytest.approx(fade_in, rel=0.10)
    assert d.fade_out_s == pytest.approx(fade_out, rel=0.10)


@pytest.mark.parametrize("load,fade_in,fade_out,supply", GRID[:2] + GRID[8:9] + GRID[10:11])
def test_reported_fades_are_what_the_simulator_says(load, fade_in, fade_out, supply):
    """The design's own numbers come from an independent re-run of its final netlist."""
    d = size(_spec(load, fade_in, fade_out, supply))
    tr = simulate.transient(d.netlist)
    op = simulate.operating_point(d.netlist, at_s=d.netlist.release_s * 0.999)
    times = light_times(tr.t_s, light(d.netlist, tr.v), release_s=d.netlist.release_s, full=light(d.netlist, op.v))
    assert times.fade_in_s[0] == pytest.approx(d.fade_in_s, rel=0.01)
    assert times.fade_out_s[0] == pytest.approx(d.fade_out_s, rel=0.01)
    assert times.delay_on_s[0] == pytest.approx(d.delay_on_s, rel=0.01)
    assert times.hold_off_s[0] == pytest.approx(d.hold_off_s, rel=0.01)


def test_saturates_at_minimum_gain_and_minimum_supply():
    # Ib ≥ 1.5 · Ic / hFE_min at the minimum supply (overdrive margin: common practice, no source).
    spec = _spec(LED2X3, 1.5, 4)
    d = size(spec)
    q = d.values.transistor
    hfe_min = q.hfe_min_at(d.load_current_a)
    ib, ic = drive_at_minimum(d.netlist, {}, n=1, supply_v=spec.supply.min_v, hfe_min=hfe_min,
                              window=window_for(1.5, 4))
    assert ib[0] >= OVERDRIVE_MIN * ic[0] / hfe_min
    # ...and at minimum gain the load really is at full current (saturated), within 2 %.
    full = simulate.operating_point(d.netlist, at_s=d.netlist.release_s * 0.999,
                                    overrides={("Q1", "BF"): np.array([hfe_min]),
                                               ("VSUPPLY", "level"): np.array([spec.supply.min_v]),
                                               ("VFEED", "level"): np.array([spec.supply.min_v])})
    typ = simulate.operating_point(d.netlist, at_s=d.netlist.release_s * 0.999,
                                   overrides={("VSUPPLY", "level"): np.array([spec.supply.min_v]),
                                              ("VFEED", "level"): np.array([spec.supply.min_v])})
    assert full.i_source("VSUPPLY")[0] == pytest.approx(typ.i_source("VSUPPLY")[0], rel=0.02)


def test_led_series_resistor_follows_the_standard_formula():
    # R = (Vs - n·Vf - Vce(sat)) / I (components101.com "5mm round LED"; read in the source),
    # with Vce(sat) taken as 0.2 V, then the next E24 value up.  A bench supply: in a vehicle the
    # series reverse-battery Schottky's drop comes off Vs as well (tests/sizing/test_protection.py).
    d = size(_spec(LED2X3, 1.5, 4, extra="protection: false\n"))
    r = (12.0 - 3 * 3.1 - 0.2) / 0.020
    assert d.values.r_led_ohm == eseries.above("E24", r)
    assert d.values.r_led_ohm == 130.0


def test_a_12v_led_at_20ma_takes_about_470_to_510_ohm():
    # One red LED (2.0 V) at 20 mA on 12 V takes a resistor near 470-510 Ω (common practice, no source;
    # andromeda.df.lu.lv "LED notes" lists 510 Ω for 2.1 V, read in the source).
    d = size(_spec(LED1, 1.5, 4))
    assert 470.0 <= d.values.r_led_ohm <= 510.0


def test_small_loads_get_a_small_signal_part_heavy_loads_a_power_part():
    # A small-signal NPN in TO-92 serves loads up to about 50-100 mA; above ~100 mA a power part
    # (common practice, no source).
    small = size(_spec(LED2X3, 1.5, 4))
    assert small.values.transistor.package == "TO-92"
    heavy = size(_spec("{kind: led, current: 50 mA, vf: 3.1 V, strings: 3}", 0.5, 3))
    assert heavy.values.transistor.package != "TO-92"
    lamp = size(_spec(LAMP3, 0.3, 3))
    assert lamp.values.transistor.package != "TO-92"


def _fades_with(d, **values):
    ov = {(ref, "value"): np.array([v]) for ref, v in values.items()}
    nl = d.netlist
    tr = simulate.transient(nl, overrides=ov)
    op = simulate.operating_point(nl, at_s=nl.release_s * 0.999, overrides=ov)
    times = light_times(tr.t_s, light(nl, tr.v, ov), release_s=nl.release_s, full=light(nl, op.v, ov))
    return times.fade_in_s, times.fade_out_s


def test_halving_the_capacitor_roughly_halves_both_fades():
    # RC timing scales with C (common practice, no source).
    d = size(_spec(LED2X3, 1.5, 4))
    t_in, t_out = _fades_with(d, C1=d.values.c_timing_f / 2)
    assert t_in[0] / d.fade_in_s == pytest.approx(0.5, abs=0.08)
    assert t_out[0] / d.fade_out_s == pytest.approx(0.5, abs=0.08)


def test_a_lower_bleed_resistor_shortens_the_fade_out():
    # The bleed resistor drains the timing capacitor (common practice, no source).
    d = size(_spec(LED2X3, 1.5, 4))
    _, t_out = _fades_with(d, R2=d.values.r_bleed_ohm / 2)
    assert t_out[0] < 0.9 * d.fade_out_s


def test_ratings_cover_the_maximum_supply():
    d = size(_spec(LED2X3, 1.5, 4))
    c1 = d.netlist.part("C1")
    assert c1.rating_v * 0.8 >= 14.6  # working voltage ≤ 80 % of rating (common practice, no source)
    for p in d.netlist.parts:
        if p.kind == "resistor":
            assert p.rating_w in (0.25, 0.5, 1.0, 2.0, 3.0)
    assert d.values.transistor.vmax_v >= 14.6


def test_heavy_lamp_with_a_long_fade_in_is_refused_with_the_limit():
    # Forced to a single NPN, a 3 W lamp cannot fade in over 3 s: its base current drains C1.
    with pytest.raises(InfeasibleDesign) as exc:
        size(_spec(LAMP3, 3, 10, extra="topology: npn\n"))
    msg = str(exc.value)
    assert "4700 µF" in msg and "topology: auto" in msg  # the same capacitor limit as an automatic choice


def test_unknown_topology_is_bad_input():
    from sheetgen.errors import SpecError

    with pytest.raises(SpecError, match="topology"):
        size(_spec(LED1, 1, 1, extra="topology: triple-mosfet\n"))




def test_catalog_minimum_gain_is_what_the_sizer_uses():
    # BC337-40 hFE 250-630 at 100 mA / 1 V (onsemi BC337/D data sheet; read in the source).
    assert catalog.transistor("BC337-40").hfe_min_at(0.1) == pytest.approx(250)
