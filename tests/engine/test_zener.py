"""Reverse breakdown: the zener cards against their datasheet, our solver against ngspice 39.

Datasheet figures are from Fairchild Semiconductor, "1N4728A - 1N4764A Zeners",
Rev. G2 (January 2005), electrical characteristics table (ZZ and ZZK are
maxima; the A suffix is the ±5 % VZ window printed as min / max).  The
reference simulator is ngspice 39 (Debian package) running the deck sheetgen
exports with the same cards.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from sheetgen.engine import devices, simulate
from sheetgen.inputs.spec import parse_spec
from sheetgen.model.netlist import Model, Netlist, Part, Source
from sheetgen.circuits.topologies import TOPOLOGIES, Values, window_for
from sheetgen.outputs.spice import model_card, spice_deck
from sheetgen.outputs.spice_run import run_transient
from sheetgen.parts import catalog

#: part -> (ZZ max at IZT in ohm, ZZK max in ohm, IZK in A, IR max in A, VR in V), Fairchild Rev. G2 table
#: (the 1N4752A row from memory)
DATASHEET = {
    "1N4744A": (14.0, 700.0, 0.25e-3, 5e-6, 11.4),
    "1N4733A": (7.0, 550.0, 1e-3, 10e-6, 1.0),
    "1N4752A": (45.0, 700.0, 0.25e-3, 5e-6, 25.1),
}
#: How far under its printed ZZ maximum a card may sit at IZT: one knee shape cannot meet both maxima
#: closely, and where ZZK binds (the 33 V part) ZZ at IZT lands near half its maximum.
ZZ_FLOOR = {"1N4744A": 0.75, "1N4733A": 0.75, "1N4752A": 0.5}
R_FEED = 1000.0


def _fed(model: Model, level_v: float, r_ohm: float = R_FEED) -> Netlist:
    """A source feeding the zener's cathode through ``r_ohm``; the anode on ground."""
    parts = (Part("R1", "resistor", (("1", "s"), ("2", "k")), "x", value=r_ohm),
             Part("D1", "diode", (("A", "0"), ("K", "k")), "x", model=model))
    return Netlist(title="zener", parts=parts, sources=(Source("VS", "s", "0", level_v),), release_s=1, stop_s=2)


def _vz_at(model: Model, currents_a: np.ndarray, v_guess: float):
    """Zener voltage and current for sources set to push about ``currents_a`` through R_FEED.

    Each source is set for the voltage found on the pass before, so the
    currents land close to the ones asked for (within 0.1 %, checked).
    """
    want = np.asarray(currents_a, dtype=float)
    v = np.full(want.shape, float(v_guess))
    for _ in range(12):  # the miss shrinks by ZZ / (ZZ + R_FEED) a pass
        op = simulate.operating_point(_fed(model, 1.0), at_s=0.5, overrides={("VS", "level"): v + want * R_FEED})
        v, i = op.v("k"), op.i_source("VS")
    assert np.allclose(i, want, rtol=1e-3)
    return v, i


def _slope(model: Model, at_a: float, v_guess: float) -> float:
    """Small-signal resistance at ``at_a``: ±10 % of the current, as the datasheet's ac test superimposes."""
    v, i = _vz_at(model, np.array([0.9, 1.1]) * at_a, v_guess)
    return (v[1] - v[0]) / (i[1] - i[0])


@pytest.mark.parametrize("pn", sorted(DATASHEET))
def test_card_meets_the_datasheet_at_the_test_current(pn):
    d = catalog.diode(pn)
    zzt, zzk, izk, ir_max, vr = DATASHEET[pn]
    v, i = _vz_at(d.model, np.array([d.iz_a]), d.vrrm_v)
    vz = v[0] + (d.iz_a - i[0]) * _slope(d.model, d.iz_a, d.vrrm_v)  # moved onto IZT exactly
    # VZ at IZT inside the printed min / max (±5 %), and the typical card near the nominal VZ.
    assert d.vz_min_v <= vz <= d.vz_max_v
    assert vz == pytest.approx(d.vrrm_v, rel=0.005)
    # ZZ at IZT: no more than the printed maximum, and not far under it.
    assert ZZ_FLOOR[pn] * zzt <= _slope(d.model, d.iz_a, d.vrrm_v) <= zzt
    # ZZK at IZK: no more than the printed maximum.
    assert _slope(d.model, izk, d.vrrm_v) <= zzk
    # Leakage at the printed VR under the printed IR maximum.
    op = simulate.operating_point(_fed(d.model, vr, r_ohm=1.0), at_s=0.5)
    assert 0 < op.i_source("VS")[0] < ir_max


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("pn", sorted(DATASHEET))
def test_reverse_sweep_matches_ngspice(pn):
    """1, 5 and 20 mA through a resistor from one source: the zener voltage within 1 % of ngspice."""
    d = catalog.diode(pn)
    head_v = 10.0
    parts = []
    for k, i_a in enumerate((1e-3, 5e-3, 20e-3)):
        parts += [Part(f"R{k}", "resistor", (("1", "s"), ("2", f"k{k}")), "x", value=head_v / i_a),
                  Part(f"D{k}", "diode", (("A", "0"), ("K", f"k{k}")), "x", model=d.model)]
    nl = Netlist(title="zener sweep", parts=tuple(parts), sources=(Source("VS", "s", "0", d.vrrm_v + head_v),),
                 release_s=1e-3, stop_s=2e-3)
    ours = simulate.operating_point(nl, at_s=0.5)
    ref = run_transient(spice_deck(nl), vectors=["v(k0)", "v(k1)", "v(k2)"])
    for k in range(3):
        assert ours.v(f"k{k}")[0] == pytest.approx(ref[f"v(k{k})"][-1], rel=0.01)
    # In breakdown: each voltage lies below the nominal VZ at less than IZT, and rises with current.
    v = [ours.v(f"k{k}")[0] for k in range(3)]
    assert 0 < v[0] < v[1] < v[2]


def _clamped_rc(model: Model, level_v: float) -> Netlist:
    """A step through 1 kΩ into 10 µF with the zener across it; the step falls back to 0 V at 50 ms."""
    step = ((0.0, 0.0), (1e-4, 1.0), (0.05, 1.0), (0.0501, 0.0))
    parts = (Part("R1", "resistor", (("1", "s"), ("2", "c")), "x", value=1000.0),
             Part("C1", "capacitor", (("+", "c"), ("-", "0")), "x", value=10e-6),
             Part("D1", "diode", (("A", "0"), ("K", "c")), "x", model=model))
    return Netlist(title="clamped rc", parts=parts, sources=(Source("VS", "s", "0", level_v, step),),
                   release_s=0.05, stop_s=0.1)


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("pn", sorted(DATASHEET))
def test_clamped_rc_transient_matches_ngspice(pn):
    """The node charges toward 1.6 VZ, is held at the clamp, then discharges: within 2 % of ngspice."""
    d = catalog.diode(pn)
    nl = _clamped_rc(d.model, 1.6 * d.vrrm_v)
    tr = simulate.transient(nl)
    ref = run_transient(spice_deck(nl), vectors=["v(c)"])
    t, v = tr.t_s, tr.v("c")[0]
    v_ref = np.interp(t, ref["time"], ref["v(c)"])
    assert np.max(np.abs(v - v_ref)) <= 0.02 * np.max(v_ref)
    clamp, clamp_ref = np.interp(0.049, t, v), np.interp(0.049, ref["time"], ref["v(c)"])
    assert clamp == pytest.approx(clamp_ref, rel=0.02)
    assert clamp < 1.1 * d.vrrm_v  # held near VZ, far below the 1.6 VZ the RC alone would reach

    def crossing(tt, vv, level):
        k = np.argmax(vv >= level)
        return np.interp(level, vv[k - 1:k + 1], tt[k - 1:k + 1])

    half = 0.5 * clamp_ref
    assert crossing(t, v, half) == pytest.approx(crossing(ref["time"], ref["v(c)"], half), rel=0.02)


@pytest.mark.requires_ngspice
def test_mosfet_gate_clamp_matches_ngspice():
    """A 24 V MOSFET fader whose divider would take the gate to 22 V: the 1N4744A holds it, as in ngspice."""
    spec = parse_spec("supply: 24 V\ntrigger: positive\nload: {kind: lamp, power: 21 W}\n"
                      "fade: {in: 1.0 s, out: 4.0 s}\n", source="test")
    values = Values(transistor=catalog.transistor("IRLZ44N"), diode=catalog.diode("1N4007"),
                    r_charge_ohm=56e3, r_bleed_ohm=1e6, r_base_ohm=1000, c_timing_f=22e-6, r_led_ohm=None,
                    clamp=catalog.diode("1N4744A"), input_transistor=catalog.transistor("BC327-40"))
    nl = TOPOLOGIES["mosfet"].build(spec, values, window_for(1.0, 4.0))
    tr = simulate.transient(nl)
    unclamped = simulate.transient(TOPOLOGIES["mosfet"].build(spec, replace(values, clamp=None), window_for(1.0, 4.0)))
    ref = run_transient(spice_deck(nl), vectors=["v(gate)", "v(timer)"])
    t, gate = tr.t_s, tr.v("gate")[0]
    before = nl.release_s * 0.999
    g_ours, g_ref = np.interp(before, t, gate), np.interp(before, ref["time"], ref["v(gate)"])
    assert g_ours == pytest.approx(g_ref, rel=0.02)
    assert g_ours < values.transistor.vgs_max_v  # under the gate rating the catalog cites
    assert np.interp(before, unclamped.t_s, unclamped.v("gate")[0]) > 20.0  # the divider alone gives 22 V
    gate_ref = np.interp(t, ref["time"], ref["v(gate)"])
    assert np.max(np.abs(gate - gate_ref)) <= 0.02 * g_ref


def test_forward_bias_is_the_same_with_or_without_bv():
    """BV changes only the reverse branch (ngspice dioload.c: the forward branch, vd >= -3 N Vt, never reads BV)."""
    plain = Model("DP", "D", (("IS", 1e-14), ("N", 1.0), ("RS", 1.0)))
    zener = catalog.diode("1N4744A").model
    assert [(k, v) for k, v in zener.params if k in ("IS", "N", "RS")] == list(plain.params)
    levels = -np.array([0.7, 1.0, 2.0, 5.0])  # the cathode pulled below the grounded anode
    runs = [simulate.operating_point(_fed(m, 1.0), at_s=0.5, overrides={("VS", "level"): levels})
            for m in (plain, zener)]
    assert np.array_equal(runs[0].voltages, runs[1].voltages)
    # and the forward drop is Shockley's: I = IS (exp(Vj / N Vt) - 1), Vj the terminal voltage less I RS
    v, i = -runs[0].v("k"), -runs[0].i_source("VS")
    assert np.all(i > 1e-5)
    assert np.allclose(v - i * 1.0, devices.VT_NOMINAL * np.log(i / 1e-14 + 1.0), atol=2e-4)


def test_a_diode_without_bv_never_breaks_down():
    """Without BV SPICE's diode has no breakdown: 200 V reverse on a 1N4007 card draws only IS and GMIN."""
    d = catalog.diode("1N4007")
    op = simulate.operating_point(_fed(d.model, 200.0), at_s=0.5)
    assert op.v("k")[0] == pytest.approx(200.0, rel=1e-6)
    # IS and GMIN (at the junction and, in a DC solve, from the node to ground): a few nA, where
    # a breakdown would draw the whole 200 V over 1 kΩ
    assert 0 < op.i_source("VS")[0] < d.model["IS"] + 3 * devices.GMIN * 200.0


def test_spice_card_carries_the_breakdown_parameters():
    card = model_card("D_1N4744A", catalog.diode("1N4744A").model)[0]
    assert "BV=14.983" in card and "IBV=0.017" in card and "NBV=6.7)" in card


def test_breakdown_knee_meets_ibv_at_bv():
    """ngspice's match (diotemp.c): IS (exp((BV - BV') / NBV Vt) - 1 + BV' / Vt) = IBV to RELTOL 1e-3."""
    is_a, nbv_vt, bv, ibv = 1e-14, 6.7 * devices.VT_NOMINAL, 14.983, 0.017
    x = devices.breakdown_knee(np.array(bv), np.array(ibv), np.array(is_a), np.array(nbv_vt))
    i_at_bv = is_a * (np.exp((bv - x) / nbv_vt) - 1.0 + x / devices.VT_NOMINAL)
    assert i_at_bv == pytest.approx(ibv, rel=1e-3)
    i, g = devices.breakdown(np.array(-bv), np.array(0.0), np.array(0.0), is_a=is_a,
                             nvt=devices.VT_NOMINAL, bv_x=x, nbv_vt=nbv_vt)
    assert -i == pytest.approx(ibv, rel=1e-3)
    assert g == pytest.approx(ibv / nbv_vt, rel=1e-3)  # d/dV of the exponential
