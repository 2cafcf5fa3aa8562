"""The bounds that refuse a stage without searching it are sound: they never stop a spec the
search would meet, and the refusal they give names the limit and what would work.

The reference for the hold-off bound is our simulator (held to ngspice by
tests/engine/test_vs_ngspice.py): a current stage's simulated hold-off, over a spread of its
parts, stays under the ideal RC limit the bound doubles.  The reference levels are those of
IEEE Std 181-2011 (10 % and 90 %, engine/measure.py)."""

from __future__ import annotations

import numpy as np
import pytest

from sheetgen.circuits.loads import kind_of
from sheetgen.engine import simulate
from sheetgen.engine.measure import HIGH, LOW, light_times
from sheetgen.errors import InfeasibleDesign
from sheetgen.inputs.spec import parse_spec
from sheetgen.parts import catalog
from sheetgen.sizing import size as sizer

STATION = """
title: station lamp
supply: {nominal: 12 V, min: 11.5 V, max: 13 V}
load: {kind: led, current: 10 mA, vf: 2.9 V, per_string: 1}
fade: {in: 3 s, out: 3 s}
install: bench
"""


def _spec(extra: str = ""):
    return parse_spec(STATION + extra, source="test")


@pytest.fixture(scope="module", params=["positive", "ground"])
def station(request):
    """The station lamp's current stage, fed from the positive side or through the ground-switched input."""
    d = sizer.size(_spec(f"trigger: {request.param}\ntopology: npn-current\n"))
    assert d.values.r_emitter_ohm is not None
    return d


def test_a_current_stage_holds_less_than_the_ideal_rc_limit(station):
    """Over a spread of bleed resistors and capacitors the simulated hold-off / fade-out stays under
    (1 - HIGH) / (HIGH - LOW), the ideal limit; the sizer's bound is twice that."""
    nl = station.netlist
    r2 = station.values.r_bleed_ohm * np.array([0.25, 0.5, 1.0, 1.0, 2.0, 4.0])
    c1 = station.values.c_timing_f * np.array([1.0, 0.5, 1.0, 0.25, 0.5, 0.25])
    ov = {("R2", "value"): r2, ("C1", "value"): c1}
    tr = simulate.transient(nl, overrides=ov, n=r2.size)
    op = simulate.operating_point(nl, at_s=nl.release_s * 0.999, overrides=ov, n=r2.size)
    light = kind_of(station.spec.load).light
    times = light_times(tr.t_s, light(nl, tr.v, ov), release_s=nl.release_s, full=light(nl, op.v, ov))
    ratio = times.hold_off_s / times.fade_out_s
    assert np.isfinite(ratio).sum() >= 4
    ideal = (1 - HIGH) / (HIGH - LOW)
    assert np.nanmax(ratio) < ideal
    assert sizer._CurrentDrive.hold_ratio_max(station.spec) == pytest.approx(2 * ideal)


def test_a_hold_the_current_stage_gives_still_gets_a_design(station):
    """A hold asked at what the stage gives anyway (its unasked hold) passes the bound and is met."""
    hold = round(station.hold_off_s, 2)
    d = sizer.size(_spec(f"trigger: {station.spec.trigger}\ndelay: {{off: {max(hold, 0.1):g} s}}\n"
                         "topology: npn-current\n"))
    assert d.values.r_emitter_ohm is not None
    assert d.hold_off_s == pytest.approx(max(hold, 0.1), rel=sizer.ACCURACY)


def test_the_hold_bound_refuses_just_outside_and_searches_just_inside():
    spec = _spec()
    ratio = sizer._CurrentDrive.hold_ratio_max(spec)
    edge = ratio * 3.0 * (1 + sizer.ACCURACY) / (1 - sizer.ACCURACY)  # the longest hold the bound lets by
    inside = _spec(f"delay: {{off: {edge * 0.99:.4g} s}}\n")
    outside = _spec(f"delay: {{off: {edge * 1.01:.4g} s}}\n")
    assert sizer._CurrentDrive.beyond_reach(inside) is None
    why = sizer._CurrentDrive.beyond_reach(outside)
    assert why is not None and "holds at full for at most" in why and "a fade-out of at least" in why
    # Forced onto the current stage, the spec just outside is refused at once, with the limit and the way out.
    with pytest.raises(InfeasibleDesign) as err:
        sizer.size(_spec(f"delay: {{off: {edge * 1.01:.4g} s}}\ntopology: npn-current\n"))
    text = str(err.value)
    assert "holds at full for at most" in text and "a hold needs a switching stage" in text
    assert "What would work" in text


def test_no_bound_where_none_is_derived():
    """The current stage's bound needs a hold asked; the saturating switch has none; the MOSFET's are
    bounds of its part, not of the stage."""
    top = sizer.TOPOLOGIES
    assert sizer._CurrentDrive.beyond_reach(_spec(), top["npn-current"]) is None
    assert sizer._BaseDrive.beyond_reach(_spec("delay: {off: 30 s}\n"), top["npn"]) is None
    assert sizer._BaseDrive.beyond_reach(_spec("delay: {off: 30 s}\n"), top["npn"],
                                         catalog.transistor("BC337-40")) is None
    assert sizer._GateDrive.beyond_reach(_spec("delay: {off: 30 s}\n"), top["mosfet"]) is None


def test_a_higher_voltage_grade_is_the_same_part_inside():
    """TIP122 is TIP120 in a 100 V grade (onsemi TIP120/D Rev. 9: all other figures shared): the
    sizer reads the same of both, and nothing of a different part."""
    tip120, tip122 = catalog.transistor("TIP120"), catalog.transistor("TIP122")
    assert sizer._inside(tip120) == sizer._inside(tip122)
    assert sizer._inside(tip120) != sizer._inside(catalog.transistor("BD139"))
    assert sizer._inside(catalog.transistor("BD139")) != sizer._inside(catalog.transistor("TIP31C"))


def test_a_twin_is_refused_as_the_part_it_repeats():
    """A Darlington asked for a fade its base current drains too fast: TIP120 is searched and refused
    with its limit; TIP122 is refused as TIP120, unsearched."""
    spec = parse_spec("title: t\nsupply: 12 V\nload: {kind: led, current: 20 mA, vf: 3.1 V, per_string: 3, "
                      "strings: 2}\nfade: {in: 1.5 s, out: 4 s}\ndelay: {off: 5 s}\ntopology: darlington\n",
                      source="test")
    with pytest.raises(InfeasibleDesign) as err:
        sizer.size(spec)
    text = str(err.value)
    # The nearest miss names the delay or the hold it fails (whichever that candidate misses by).
    assert "TIP120: the closest it gets is" in text and ("holds at full" in text or "stays dark" in text)
    assert "TIP122: as TIP120, the same part inside in a higher voltage grade" in text
    assert "What would work" in text


POWER_PAIR = """
title: tent lantern
supply: 9 V
load: {kind: led, current: 525 mA, vf: 3.1 V, per_string: 2}
fade: {in: 1 s, out: 1 s}
"""


@pytest.mark.parametrize("trigger", ["positive", "ground"])
def test_a_mosfet_keeps_inside_both_bounds_over_its_dividers(trigger):
    """Over dividers from the grid's lowest ratio up, the simulated fade-in / fade-out of the MOSFET
    stage stays under the derived bound (1 - k) v_hi / (k V - v_hi) at each divider's own k, and its
    hold-off / fade-out over the least the sizer derives."""
    spec = parse_spec(POWER_PAIR + f"trigger: {trigger}\n", source="test")
    topology = sizer.TOPOLOGIES["mosfet-ground" if trigger == "ground" else "mosfet"]
    q = catalog.transistor("IRLZ44N")
    stage = topology.stage
    v_full = max(q.rds_on_vgs_v, q.vgs_th_v[1] + 2.0)
    k_min = v_full / (spec.supply.min_v - sizer.DIODE_DROP_V)
    ks = np.array([1.0, 1.05, 1.15, 1.3]) * k_min
    r1 = np.full(ks.size, 10e3)
    r2 = r1 * ks / (1 - ks)
    values = sizer.Values(transistor=q, diode=catalog.diode(sizer.DIODE), r_charge_ohm=10e3, r_bleed_ohm=float(r2[0]),
                          r_base_ohm=sizer.GATE_RESISTOR_OHM, c_timing_f=100e-6,
                          r_led_ohm=sizer._led_resistor(spec, stage),
                          input_transistor=catalog.transistor(sizer.INPUT_PNP) if trigger == "ground" else None)
    window = sizer.window_for(2.0, 4.0, settle_s=5 * 100e-6 * 10e3)
    nl = sizer._netlist(topology, spec, values, window)
    ov = {("R1", "value"): r1, ("R2", "value"): r2}
    tr = simulate.transient(nl, overrides=ov, n=ks.size)
    op = simulate.operating_point(nl, at_s=nl.release_s * 0.999, overrides=ov, n=ks.size)
    light = kind_of(spec.load).light
    times = light_times(tr.t_s, light(nl, tr.v, ov), release_s=nl.release_s, full=light(nl, op.v, ov))
    ratio = times.fade_in_s / times.fade_out_s
    assert np.all(np.isfinite(ratio))
    bound = sizer._GateDrive.fade_ratio_max(spec, topology, q) / sizer._GateDrive.FADE_BOUND_MARGIN
    v_hi = sizer._GateDrive.gate_at_high(spec, stage, q)
    v = ((1 - k_min) * v_hi / bound + v_hi) / k_min  # the feed the bound assumed, from the bound itself
    own = (1 - ks) * v_hi / (ks * v - v_hi)
    assert own[0] == pytest.approx(bound)
    assert np.all(ratio < own)
    # and it holds at full longer than the least hold the sizer's bound derives (before its margin)
    least = sizer._GateDrive.hold_ratio_min(spec, topology, q) * sizer._GateDrive.FADE_BOUND_MARGIN
    assert least > 1.0
    assert np.all(times.hold_off_s / times.fade_out_s > least)


def test_the_fade_bound_refuses_the_mosfet_just_outside_and_searches_just_inside():
    """With a long hold asked (so the hold bound lets the MOSFET by), the fade bound decides."""
    hold = "delay: {off: 10 s}\n"
    spec = parse_spec(POWER_PAIR + hold, source="test")
    topology, q = sizer.TOPOLOGIES["mosfet"], catalog.transistor("IRLZ44N")
    ratio = sizer._GateDrive.fade_ratio_max(spec, topology, q)
    edge = ratio * 1.0 * (1 + sizer.ACCURACY) / (1 - sizer.ACCURACY)  # the longest fade-in the bound lets by
    fades = "fade: {{in: {:.4g} s, out: 1 s}}\n"
    inside = parse_spec(POWER_PAIR.replace("fade: {in: 1 s, out: 1 s}\n", fades.format(edge * 0.99)) + hold,
                        source="test")
    outside = parse_spec(POWER_PAIR.replace("fade: {in: 1 s, out: 1 s}\n", fades.format(edge * 1.01)) + hold,
                         source="test")
    assert sizer._GateDrive.beyond_reach(inside, topology, q) is None
    why = sizer._GateDrive.beyond_reach(outside, topology, q)
    assert why is not None and "fade-in can be at most" in why and "a fade-out of at least" in why
    with pytest.raises(InfeasibleDesign) as err:
        sizer.size(parse_spec(POWER_PAIR + hold + "topology: mosfet\n", source="test"))
    text = str(err.value)
    assert "IRLZ44N: its gate crosses the light's whole range" in text and "What would work" in text


def test_the_hold_bound_refuses_a_mosfet_asked_for_a_short_hold():
    """Fades of 0.5 s and 3 s allow a hold of at most 3 s (delay_limits); the MOSFET holds several
    fade-outs, so it is refused at once with the limit and what would suit it."""
    spec = parse_spec(POWER_PAIR.replace("fade: {in: 1 s, out: 1 s}", "fade: {in: 0.5 s, out: 3 s}")
                      + "topology: mosfet\n", source="test")
    q = catalog.transistor("IRLZ44N")
    least = sizer._GateDrive.hold_ratio_min(spec, sizer.TOPOLOGIES["mosfet"], q)
    assert least * 3.0 * (1 - sizer.ACCURACY) > 3.0
    with pytest.raises(InfeasibleDesign) as err:
        sizer.size(spec)
    text = str(err.value)
    assert "IRLZ44N: its gate falls from the divider's top voltage" in text and "holds at full for at least" in text
    assert "What would work" in text
