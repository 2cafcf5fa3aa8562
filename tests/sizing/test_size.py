"""Sizing: the achieved fades, the drive rule, the part choice and facts of the trade."""

from __future__ import annotations

import numpy as np
import pytest

from sheetgen.parts import catalog
from sheetgen.parts import eseries
from sheetgen.engine import simulate
from sheetgen.errors import InfeasibleDesign
from sheetgen.engine.measure import light_times
from sheetgen.circuits.loads import kind_of
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

BENCH = "{nominal: 12 V, min: 11.5 V, max: 13 V}"
# Times are read from the light (10 % to 90 %), so a switch driven into saturation gives a fade-in of
# at most about a third of its fade-out; the current stage covers symmetric and slow fades.
GRID = [
    (LED1, 0.3, 0.3, "12 V"), (LED1, 1.5, 4, "12 V"), (LED1, 5, 20, "12 V"), (LED1, 10, 10, "12 V"),
    (LED2X3, 0.3, 3, "12 V"), (LED2X3, 0.5, 20, "12 V"), (LED1, 2, 2, BENCH), (LED1, 1, 6, BENCH),
]
#: Valid specs no design here meets, each with the limit its refusal must name.
REFUSED = [
    (LED2X3, 1, 1, "12 V", "light"),  # symmetric fades over a 3.3 V swing of the supply: no headroom
    # Four strings of five on 24 V: with string resistors that share the current over a forward-voltage
    # bin, a current stage reaches 2 s and 8 s only past the largest timing capacitor.
    (LED24, 2, 8, "24 V", "fades can only be as long as C1 allows"),
    (LAMP3, 0.3, 3, "12 V", "top third of its current"),
    (LAMP3, 0.5, 20, "12 V", "top third of its current"),
]


@pytest.mark.parametrize("load,fade_in,fade_out,supply", GRID)
def test_grid_meets_requested_fades_within_ten_percent(load, fade_in, fade_out, supply):
    d = size(_spec(load, fade_in, fade_out, supply))
    assert d.fade_in_s == pytest.approx(fade_in, rel=0.10)
    assert d.fade_out_s == pytest.approx(fade_out, rel=0.10)


@pytest.mark.parametrize("load,fade_in,fade_out,supply,limit", REFUSED)
def test_specs_no_stage_meets_are_refused_naming_the_limit(load, fade_in, fade_out, supply, limit):
    with pytest.raises(InfeasibleDesign) as exc:
        size(_spec(load, fade_in, fade_out, supply))
    assert limit in str(exc.value)


def test_every_accepted_design_passes_its_corners():
    """Acceptance at every corner: LED strings at or under their rating, the light at full drive."""
    for load, fade_in, fade_out, supply in GRID[:3] + GRID[4:5]:
        d = size(_spec(load, fade_in, fade_out, supply))
        assert len(d.corners) == 8
        for c in d.corners:
            assert c.led_current_max_a <= 0.020 * 1.001
            assert c.drive_fraction >= 0.90
            assert c.tj_max_c < 125.0


@pytest.mark.parametrize("load,fade_in,fade_out,supply", GRID[:2] + GRID[4:5] + GRID[6:7])
def test_reported_fades_are_what_the_simulator_says(load, fade_in, fade_out, supply):
    """The design's own numbers come from an independent re-run of its final netlist."""
    d = size(_spec(load, fade_in, fade_out, supply))
    tr = simulate.transient(d.netlist)
    op = simulate.operating_point(d.netlist, at_s=d.netlist.release_s * 0.999)
    light = kind_of(d.spec.load).light
    times = light_times(tr.t_s, light(d.netlist, tr.v), release_s=d.netlist.release_s, full=light(d.netlist, op.v))
    assert times.fade_in_s[0] == pytest.approx(d.fade_in_s, rel=0.01)
    assert times.fade_out_s[0] == pytest.approx(d.fade_out_s, rel=0.01)
    assert times.delay_on_s[0] == pytest.approx(d.delay_on_s, rel=0.01)
    assert times.hold_off_s[0] == pytest.approx(d.hold_off_s, rel=0.01)


def test_saturates_at_minimum_gain_and_minimum_supply():
    # Ib ≥ 1.1 · Ic / hFE_min at the minimum supply (overdrive margin: common practice, no source).
    spec = _spec(LED2X3, 0.3, 3)
    d = size(spec)
    q = d.values.transistor
    hfe_min = q.hfe_min_at(d.load_current_a)
    assert d.topology.name == "npn"
    ib, ic = drive_at_minimum(d.netlist, {}, n=1, supply_v=spec.supply.min_v, hfe_min=hfe_min,
                              window=window_for(0.3, 3))
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


def test_led_series_resistor_follows_the_standard_formula_at_the_top_of_the_supply():
    # R = (Vs - n·Vf - Vce(sat)) / I (components101.com "5mm round LED"; read in the source), taken at
    # the highest supply (14.6 V) so the string never runs over its rating, with the forward voltage at
    # the spec's ambient and the next E24 value up.  Each LED at the bottom of its forward-voltage bin,
    # 0.1 V under the stated 3.1 V (a 0.2 V bin: Lumileds DS144 bins AlGaInP 0.2 V wide; InGaN from
    # memory), so no string of the bag can run over.  A bench supply: in a vehicle the series
    # reverse-battery Schottky's drop comes off Vs as well (tests/sizing/test_protection.py).
    d = size(_spec(LED2X3, 0.3, 3, extra="protection: false\nambient: 25 °C\n"))
    r = (14.6 - 3 * (3.1 - 0.1) - 0.2 / 3) / 0.020 * 1.02
    assert d.values.r_led_ohm == eseries.above("E24", r)
    assert d.values.r_led_ohm == 300.0


def test_a_single_red_led_on_12v_gets_a_current_stage_within_its_rating():
    # With a resistor alone, one red LED (2.0 V) at 20 mA on 12 V takes about 510 Ω (andromeda.df.lu.lv
    # "LED notes" lists 510 Ω for 2.1 V, read in the source) and its current then swings with the supply;
    # the current stage holds it at or under 20 mA over 11-14.6 V instead.
    d = size(_spec(LED1, 1.5, 4, extra="topology: npn-current\n"))
    assert d.topology.name == "npn-current"
    assert max(c.led_current_max_a for c in d.corners) <= 0.020 * 1.001
    assert min(c.led_current_max_a for c in d.corners) >= 0.020 * 0.6


def test_small_loads_get_a_small_signal_part_heavy_ones_not():
    # A small-signal NPN in TO-92 serves loads up to about 50-100 mA; above ~100 mA a power part
    # (common practice, no source).
    small = size(_spec(LED2X3, 0.3, 3))
    assert small.values.transistor.package == "TO-92"
    with pytest.raises(InfeasibleDesign, match="junction past 125 °C in free air"):  # TO-92 refused on heat first
        size(_spec("{kind: led, current: 100 mA, vf: 2.0 V, strings: 3}", 1.5, 4, extra="ambient: 25 °C\n"))


def _fades_with(d, **values):
    ov = {(ref, "value"): np.array([v]) for ref, v in values.items()}
    nl = d.netlist
    tr = simulate.transient(nl, overrides=ov)
    op = simulate.operating_point(nl, at_s=nl.release_s * 0.999, overrides=ov)
    light = kind_of(d.spec.load).light
    times = light_times(tr.t_s, light(nl, tr.v, ov), release_s=nl.release_s, full=light(nl, op.v, ov))
    return times.fade_in_s, times.fade_out_s


def test_halving_the_capacitor_roughly_halves_both_fades():
    # RC timing scales with C (common practice, no source).
    d = size(_spec(LED1, 1.5, 4))
    t_in, t_out = _fades_with(d, C1=d.values.c_timing_f / 2)
    assert t_in[0] / d.fade_in_s == pytest.approx(0.5, abs=0.08)
    assert t_out[0] / d.fade_out_s == pytest.approx(0.5, abs=0.08)


def test_a_lower_bleed_resistor_shortens_the_fade_out():
    # The bleed resistor drains the timing capacitor (common practice, no source).
    d = size(_spec(LED1, 1.5, 4))
    _, t_out = _fades_with(d, R2=d.values.r_bleed_ohm / 2)
    assert t_out[0] < 0.9 * d.fade_out_s


def test_ratings_cover_the_maximum_supply():
    d = size(_spec(LED1, 1.5, 4))
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


def test_the_built_in_demo_gets_a_design_that_passes_its_corners():
    # The README's first command runs `sheetgen demo`: its spec must have a design, not a refusal.
    from sheetgen.inputs.demo import demo_spec

    d = size(demo_spec())
    assert d.corners and all(c.led_current_max_a <= d.spec.load.current_a * 1.001 for c in d.corners)


def test_a_requested_delay_is_met_like_a_fade():
    """`delay: {on}` asks for a wait in the dark; the design meets it within the same ±10 % as a fade,
    and the report, the summary and the JSON say it was asked for."""
    from sheetgen.outputs.export import report_dict
    from sheetgen.outputs.summary import summary_text
    from sheetgen.sizing.analyse import analyse

    # 1.2 s: with the string resistors sized for LEDs at the bottom of their bin (300 Ω, not 270 Ω) the
    # strings draw less, and the single NPN that meets these fades shows its light after about 1.25 s;
    # 1 s is no longer within ±10 % of any standard-value set the sizer tries.
    spec = _spec(LED2X3, 1.5, 4, extra="delay: {on: 1.2 s}\nambient: 40 °C\n")
    d = size(spec)
    assert d.delay_on_s == pytest.approx(1.2, rel=0.10)
    assert d.fade_in_s == pytest.approx(1.5, rel=0.10) and d.fade_out_s == pytest.approx(4.0, rel=0.10)
    report = analyse(d, draws=50)
    assert report_dict(report)["requested"] == {"delay_on_s": 1.2, "fade_in_s": 1.5, "fade_out_s": 4.0}
    assert "(asked 1.2 s)" in summary_text(report)


def test_a_hold_the_stages_cannot_give_is_refused_naming_the_hold():
    """A saturating switch holds at full for τ·ln(overdrive) after the feed goes (the discharge of C1 down to
    the edge of saturation; textbook RC decay), and the drive that sets the hold also sets the fades: a
    short hold with a slow fade-out is out of its reach, and the refusal says so."""
    with pytest.raises(InfeasibleDesign) as err:
        size(_spec(LED2X3, 1.5, 4, extra="delay: {off: 3 s}\nambient: 40 °C\n"))
    text = str(err.value)
    assert "hold off 3 s" in text and "holds at full" in text


def test_a_near_miss_is_searched_around_until_the_design_next_to_it_is_found():
    # Two strings of three white LEDs at 1.5 s / 4 s in a 35 °C cabin: with Vf 3.1 V the first rounds land
    # inside ±10 %; with Vf 3.0 V (an easier load) they only come near (fade-out 3.6 s, delay at its
    # limit), and the design one standard value away (2200 µF, 6.8 kΩ, 2.7 kΩ, 18 kΩ: found by hand with
    # the simulator) must still be found, not refused.
    load = LED2X3.replace("3.1 V", "3.0 V")
    d = size(_spec(load, 1.5, 4, extra="ambient: 35 °C\ninstall: vehicle\n"))
    assert d.fade_in_s == pytest.approx(1.5, rel=0.10) and d.fade_out_s == pytest.approx(4.0, rel=0.10)


def test_outside_the_band_the_nearest_miss_ranks_first_whatever_its_capacitor():
    from sheetgen.sizing.size import _Trial, _rank

    spec = _spec(LED2X3, 1.5, 4)
    near = _Trial(c=1e-3, r1=1e4, r2=1e4, r3=1e4, delay_on=1.0, t_in=1.36, hold_off=3.0, t_out=3.6)
    far = _Trial(c=1e-4, r1=1e4, r2=1e4, r3=1e4, delay_on=0.5, t_in=0.6, hold_off=3.0, t_out=4.3)
    assert _rank(near, spec) < _rank(far, spec)
    inside = _Trial(c=2.2e-3, r1=1e4, r2=1e4, r3=1e4, delay_on=1.0, t_in=1.5, hold_off=3.0, t_out=4.1)
    assert _rank(inside, spec) < _rank(near, spec)
