"""Tolerance draws, heat over time and standby drain, checked against outside references."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from sheetgen.sizing import analyse
from sheetgen.parts import catalog
from sheetgen.engine import simulate
from sheetgen.engine import thermal
from sheetgen.sizing import tolerance
from sheetgen.model.netlist import Part
from sheetgen.engine.measure import light_times
from sheetgen.sizing.size import size
from sheetgen.inputs.spec import parse_spec
from sheetgen.outputs.spice import spice_deck
from sheetgen.outputs.spice_run import run_transient

VAN = """
title: van
supply: 12 V
load: {kind: led, current: 20 mA, vf: 3.1 V, per_string: 3, strings: 2}
fade: {in: 1.5 s, out: 4 s}
ambient: 40 °C
"""


@pytest.fixture(scope="module")
def design():
    return size(parse_spec(VAN, source="test"))


@pytest.fixture(scope="module")
def sample(design):
    return tolerance.draw(design, n=40, seed=7)


def test_draws_are_seeded_and_inside_their_bands(design):
    a = tolerance.draw(design, n=200, seed=3)
    b = tolerance.draw(design, n=200, seed=3)
    for key in a.overrides:
        np.testing.assert_array_equal(a.overrides[key], b.overrides[key])
    c1 = design.netlist.part("C1")
    c = a.overrides[("C1", "value")]
    assert c.min() >= 0.8 * c1.value and c.max() <= 1.2 * c1.value  # ±20 % electrolytic (Nichicon, §10)
    assert a.supply_v.min() >= 11.0 and a.supply_v.max() <= 14.6


@pytest.mark.requires_ngspice
def test_drawn_sets_are_the_same_physics_in_ngspice(design, sample):
    """Members of the batch, written as their own decks, give the same fade times in ngspice 39."""
    nl = design.netlist
    tr = simulate.transient(nl, overrides=sample.overrides, n=sample.n)
    load = tr.i_source("VSUPPLY")
    for k in (0, 11, 23, 37):
        data = run_transient(spice_deck(nl, overrides=sample.overrides, index=k), vectors=["i(vsupply)"])
        t_ref, i_ref = data["time"], -data["i(vsupply)"]
        s_ref = np.interp(nl.release_s * 0.999, t_ref, i_ref)
        s_ours = np.interp(nl.release_s * 0.999, tr.t_s, load[k])
        ref = light_times(t_ref, i_ref[None], release_s=nl.release_s, full=np.array([s_ref]))  # LED light ∝ current
        ours = light_times(tr.t_s, load[k][None], release_s=nl.release_s, full=np.array([s_ours]))
        assert s_ours == pytest.approx(s_ref, rel=0.01)
        for name in ref._fields:
            assert getattr(ours, name)[0] == pytest.approx(getattr(ref, name)[0], rel=0.02, abs=0.005), name


def test_yield_is_full_for_an_accepted_design(design):
    assert design.full_brightness_yield >= tolerance.YIELD_REQUIRED


def test_a_starved_base_loses_yield(design):
    """The yield measure must fail a design whose base resistor is ten times too large."""
    weak = replace(design, netlist=replace(design.netlist, parts=tuple(
        replace(p, value=p.value * 10) if p.ref == "R3" else p for p in design.netlist.parts)))
    assert tolerance.full_brightness_yield(weak, tolerance.draw(weak, n=100)) < 0.5


def test_thermal_steady_state_is_ta_plus_p_times_rthja():
    # Tj = Ta + P·RθJA; BC337 TO-92: RθJA 200 °C/W, RθJC 83.3 °C/W (onsemi BC337/D data sheet; read in the source).
    q = catalog.transistor("BC337-40")
    net = thermal.network(package=q.package, rth_jc_c_per_w=q.rth_jc_c_per_w, rth_ja_c_per_w=q.rth_ja_c_per_w)
    assert q.rth_ja_c_per_w == 200.0
    t = np.linspace(0, 3000, 3001)
    tj = thermal.junction_temperature(net, t_s=t, power_w=np.full(t.size, 0.3), ambient_c=40.0)
    assert tj[-1] == pytest.approx(40.0 + 0.3 * 200.0, abs=0.05)


def test_thermal_step_response_matches_the_first_order_solution():
    # With a negligible die capacity the ladder is one RC section plus RθJC in series:
    # Tj(t) = Ta + P·(Rjc + Rca·(1 − e^(−t/(Rca·Cc)))) (textbook first-order step response).
    net = thermal.Network(r_jc=10.0, r_ca=50.0, c_j=1e-6, c_c=2.0)
    t = np.linspace(0, 500, 2001)
    tj = thermal.junction_temperature(net, t_s=t, power_w=np.full(t.size, 1.0), ambient_c=25.0)
    ref = 25.0 + 1.0 * (10.0 + 50.0 * (1 - np.exp(-t / 100.0)))
    assert np.max(np.abs(tj[1:] - ref[1:])) < 0.05


def test_peak_dissipation_of_a_resistive_load_is_v_squared_over_4r(design):
    # A resistive load line peaks at Vce = V/2, P = V²/4R (maximum power transfer, textbook).
    nl = design.netlist
    keep = [p for p in nl.parts if p.role not in ("load", "led_series")]
    load = Part(ref="R9", kind="resistor", pins=(("1", "supply"), ("2", "collector")), role="load", value=120.0)
    nl = replace(nl, parts=tuple(keep) + (load,))
    tr = simulate.transient(nl, max_step_s=nl.stop_s / 2000)
    p = tr.switch_power("Q1")[0]
    assert p.max() == pytest.approx(12.0**2 / (4 * 120.0), rel=0.02)


def test_standby_drain_uses_the_leakage_rule(design):
    # Electrolytic leakage I ≤ 0.01·C·V or 3 µA (itecnotes quoting Panasonic/Nichicon/Rubycon, §10).
    # Hold C1 at the supply with the feed off (a fader whose capacitor sits on the always-on rail):
    nl = design.netlist
    c1 = nl.part("C1")
    moved = replace(c1, pins=(("+", "supply"), ("-", "0")))
    rail = replace(design, netlist=replace(nl, parts=tuple(moved if p.ref == "C1" else p for p in nl.parts)))
    base = analyse._standby(design)
    with_cap = analyse._standby(rail)
    rule = max(0.01 * c1.value * 1e6 * c1.rating_v * 1e-6, 3e-6)  # µF × V → µA, at rated voltage
    assert with_cap - base == pytest.approx(rule * 12.0 / c1.rating_v, rel=1e-3)
    # The plain fader draws almost nothing with the feed off; a vehicle's over-voltage cut-off
    # divider (sizing/protection.py) draws rail / (R_upper + R_lower) on top, by Ohm's law.
    divider = sum(nl.by_role(role)[0].value for role in ("cutoff_series", "cutoff_bias") if nl.by_role(role))
    v_rail = 12.0 - 0.3  # nominal supply less about 0.3 V across the series Schottky
    assert base - (v_rail / divider if divider else 0.0) < 1e-6
