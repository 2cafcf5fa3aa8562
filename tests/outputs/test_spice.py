"""The exported ngspice deck: its text, and that ngspice runs it and agrees with physics.

Model cards here are made up for the tests (plain SPICE defaults plus a few
values), so the checks do not lean on the catalogue.
"""

from __future__ import annotations

import math
import subprocess

import numpy as np
import pytest

from sheetgen.model.netlist import GROUND, Model, Netlist, Part, Source
from sheetgen.outputs.spice import element_name, lamp_thermal_node, node_names, spice_deck
from sheetgen.outputs.spice_run import run_transient

needs_ngspice = pytest.mark.requires_ngspice

#: Thermal voltage at ngspice's default 27 °C, k*T/q with CODATA 2018 constants.
VT_27C = 1.380649e-23 * 300.15 / 1.602176634e-19

# A 12 V / 5 W lamp, hot at 2700 K: R_hot = V^2/P = 28.8 ohm, R = R0 (T/300)^1.2,
# K from the rated power at the hot temperature.  (R ∝ T^1.2 for tungsten:
# from memory.)
R_HOT = 12.0**2 / 5.0
LAMP_5W = Model(
    "12V 5W",
    "LAMP",
    (
        ("R0", R_HOT / (2700.0 / 300.0) ** 1.2),
        ("TROOM", 300.0),
        ("THOT", 2700.0),
        ("ALPHA", 1.2),
        ("K", 5.0 / (2700.0**4 - 300.0**4)),
        ("CTH", 4e-4),
    ),
)
D_PLAIN = Model("DTEST", "D", (("IS", 1e-14), ("N", 1.0)))  # ngspice defaults (ngspice manual, Diode Model (D); read in the source)
LED_RED = Model("red 5mm", "D", (("IS", 1e-20), ("N", 2.0)))
NPN_SW = Model("BC337-40", "NPN", (("IS", 1e-14), ("BF", 150.0)))
PNP_80 = Model("PNPTEST", "PNP", (("IS", 1e-14), ("BF", 80.0)))
NMOS_L1 = Model("NTEST", "NMOS", (("VTO", 2.0), ("KP", 0.5), ("LAMBDA", 0.0)))


def res(ref: str, a: str, b: str, ohm: float, role: str = "load") -> Part:
    return Part(ref, "resistor", (("1", a), ("2", b)), role=role, value=ohm)


def cap(ref: str, plus: str, farad: float) -> Part:
    return Part(ref, "capacitor", (("+", plus), ("-", GROUND)), role="timing", value=farad)


def rc_netlist(r_ohm: float = 1000.0, c_f: float = 1000e-6, stop_s: float = 5.0) -> Netlist:
    return Netlist(
        "RC charge",
        parts=(res("R1", "vsup", "tim", r_ohm, "charge"), cap("C1", "tim", c_f)),
        sources=(Source("VSUPPLY", "vsup", GROUND, 12.0),),
        release_s=stop_s,
        stop_s=stop_s,
    )


def lamp_netlist() -> Netlist:
    return Netlist(
        "5 W lamp on 12 V",
        parts=(Part("LP1", "lamp", (("1", "vsup"), ("2", GROUND)), role="load", model=LAMP_5W),),
        sources=(Source("VSUPPLY", "vsup", GROUND, 12.0),),
        release_s=1.0,
        stop_s=1.0,
    )


def npn_led_netlist() -> Netlist:
    feed = ((0.0, 0.0), (1e-3, 1.0), (20e-3, 1.0), (21e-3, 0.0))
    return Netlist(
        "NPN switch, LED load",
        parts=(
            res("R1", "feed", "base", 10e3, "base"),
            Part("Q1", "npn", (("C", "coll"), ("B", "base"), ("E", GROUND)), role="switch", model=NPN_SW),
            Part("LED1", "led", (("A", "led_a"), ("K", "coll")), role="load", model=LED_RED),
            res("R2", "vsup", "led_a", 470.0, "led_series"),
        ),
        sources=(Source("VSUPPLY", "vsup", GROUND, 12.0), Source("VFEED", "feed", GROUND, 12.0, feed)),
        release_s=20e-3,
        stop_s=40e-3,
        probes=(("TP1", "coll"),),
    )


# --- the deck as text --------------------------------------------------------


def test_deck_layout_and_names():
    deck = spice_deck(npn_led_netlist())
    lines = deck.splitlines()
    assert lines[0] == "NPN switch, LED load"
    assert lines[1].startswith("*")
    assert lines[-1] == ".end"
    assert ".control" not in deck.lower()
    assert "VSUPPLY vsup 0 DC 12" in lines
    assert "VFEED feed 0 PWL(0 0 0.001 12 0.02 12 0.021 0)" in lines
    assert "R1 feed base 10000" in lines
    assert "Q1 coll base 0 Q_BC337_40" in lines
    assert "DLED1 led_a coll D_RED_5MM" in lines
    assert ".model Q_BC337_40 NPN (IS=1e-14 BF=150)" in lines
    assert ".model D_RED_5MM D (IS=1e-20 N=2)" in lines
    # tstep = tmax = stop/4000, initial conditions from uic
    assert ".tran 1e-05 0.04 0 1e-05 uic" in lines
    assert spice_deck(npn_led_netlist()) == deck  # same input, same bytes


def test_capacitor_and_lamp_lines():
    deck = spice_deck(rc_netlist(c_f=2.2e-3))
    assert "C1 tim 0 0.0022" in deck.splitlines()
    lamp = spice_deck(lamp_netlist())
    assert "XLP1 vsup 0 LAMP_12V_5W" in lamp.splitlines()
    assert ".ic v(xlp1.th)=300" in lamp.splitlines()
    assert ".subckt LAMP_12V_5W 1 2 params:" in lamp
    assert lamp.count("\nB") == 2 and "pow(max(V(th)" in lamp


def test_element_and_node_names():
    lp = Part("LP1", "lamp", (("1", "+12V"), ("2", "gnd")), role="load", model=LAMP_5W)
    m = Part("Q3", "nmos", (("D", "Led A"), ("G", "gate"), ("S", GROUND)), role="switch", model=NMOS_L1)
    nl = Netlist("names", parts=(lp, m), sources=(Source("SUPPLY", "+12V", GROUND, 12.0),), release_s=1, stop_s=1)
    assert element_name(lp) == "XLP1" and element_name(m) == "XQ3"
    assert lamp_thermal_node(lp) == "xlp1.th"
    nodes = node_names(nl)
    assert nodes == {GROUND: "0", "+12V": "p12v", "gnd": "n_gnd", "Led A": "led_a", "gate": "gate"}
    deck = spice_deck(nl)
    # the net called "gnd" must not be shorted to ground by ngspice's alias
    assert "XLP1 p12v n_gnd LAMP_12V_5W" in deck
    assert "VSUPPLY p12v 0 DC 12" in deck
    assert "XQ3 led_a gate 0 M_NTEST" in deck
    assert ".subckt M_NTEST d g s params: VTO=2 KP=0.5 LAMBDA=0 N=1.5" in deck


def test_vertical_pwl_edge_gets_increasing_times():
    nl = Netlist(
        "step",
        parts=(res("R1", "feed", GROUND, 1e3),),
        sources=(Source("VFEED", "feed", GROUND, 12.0, ((0.0, 1.0), (0.5, 1.0), (0.5, 0.0))),),
        release_s=0.5,
        stop_s=1.0,
    )
    assert "VFEED feed 0 PWL(0 12 0.5 12 0.5000001 0)" in spice_deck(nl)


def test_overrides_write_per_part_cards():
    q2 = Part("Q2", "npn", (("C", "c2"), ("B", "b2"), ("E", GROUND)), role="switch", model=NPN_SW)
    base = npn_led_netlist()
    lp = Part("LP1", "lamp", (("1", "vsup"), ("2", "c2")), role="load", model=LAMP_5W)
    nl = Netlist(base.title, parts=base.parts + (q2, lp), sources=base.sources, release_s=0.02, stop_s=0.04)
    overrides = {
        ("Q1", "BF"): np.array([100.0, 250.0]),
        ("R1", "value"): np.array([4700.0, 2200.0]),
        ("VSUPPLY", "level"): np.array([11.0, 13.8]),
        ("VFEED", "level"): np.array([11.0, 13.8]),
        ("LP1", "TROOM"): np.array([290.0, 320.0]),
    }
    deck = spice_deck(nl, overrides=overrides, index=1)
    lines = deck.splitlines()
    assert "Q1 coll base 0 Q_BC337_40__Q1" in lines
    assert "Q2 c2 b2 0 Q_BC337_40" in lines  # shares the typical card, untouched
    assert ".model Q_BC337_40__Q1 NPN (IS=1e-14 BF=250)" in lines
    assert ".model Q_BC337_40 NPN (IS=1e-14 BF=150)" in lines
    assert "R1 feed base 2200" in lines
    assert "VSUPPLY vsup 0 DC 13.8" in lines
    assert "VFEED feed 0 PWL(0 0 0.001 13.8 0.02 13.8 0.021 0)" in lines
    assert "XLP1 vsup c2 LAMP_12V_5W__LP1" in lines
    assert any(line.startswith(".subckt LAMP_12V_5W__LP1 1 2 params:") and "TROOM=320" in line for line in lines)
    assert ".ic v(xlp1.th)=320" in lines
    assert ".subckt LAMP_12V_5W " not in deck  # no part uses the typical lamp any more
    assert "* Parameter set 1 of 2" in deck
    assert "R1 feed base 4700" in spice_deck(nl, overrides=overrides, index=0)


def test_bad_overrides_are_refused():
    nl = npn_led_netlist()
    with pytest.raises(KeyError):
        spice_deck(nl, overrides={("R9", "value"): np.array([1.0])})
    with pytest.raises(ValueError):
        spice_deck(nl, overrides={("R1", "BF"): np.array([1.0])})
    with pytest.raises(ValueError):
        spice_deck(nl, overrides={("Q1", "value"): np.array([1.0])})
    with pytest.raises(ValueError):
        spice_deck(nl, overrides={("VSUPPLY", "value"): np.array([1.0])})
    with pytest.raises(IndexError):
        spice_deck(nl, overrides={("R1", "value"): np.array([1.0, 2.0])}, index=2)


def test_run_transient_needs_an_end_line():
    with pytest.raises(ValueError):
        run_transient("title\nR1 a 0 1\n", vectors=["v(a)"])


# --- ngspice runs the deck -----------------------------------------------------


@needs_ngspice
@pytest.mark.parametrize("netlist", [rc_netlist(), lamp_netlist(), npn_led_netlist()], ids=["rc", "lamp", "npn"])
def test_deck_runs_as_it_stands(netlist, tmp_path):
    (tmp_path / "deck.cir").write_text(spice_deck(netlist))
    proc = subprocess.run(
        ["ngspice", "-b", "deck.cir"], cwd=tmp_path, capture_output=True, text=True, timeout=120
    )
    assert proc.returncode == 0, proc.stderr
    chatter = (proc.stdout + proc.stderr).lower()
    assert "error" not in chatter and "warning" not in chatter, chatter
    assert "transient analysis" in chatter  # the .print table came out


@needs_ngspice
def test_rc_charge_matches_exponential():
    # Textbook first-order RC step response: V(t) = V (1 - exp(-t/RC)).
    out = run_transient(spice_deck(rc_netlist()), vectors=["v(tim)", "i(vsupply)"])
    t, v = out["time"], out["v(tim)"]
    exact = 12.0 * (1.0 - np.exp(-t / 1.0))
    late = t >= 0.01
    assert np.all(np.abs(v[late] - exact[late]) <= 0.005 * exact[late])
    assert np.max(np.abs(v - exact)) <= 0.005 * 12.0
    # the supply delivers the charging current (negative by SPICE's sign)
    np.testing.assert_allclose(-out["i(vsupply)"], (12.0 - v) / 1000.0, rtol=1e-6, atol=1e-9)


@needs_ngspice
def test_value_override_changes_the_run():
    # R overridden to 2.2 k: at t = RC = 2.2 s the cap reaches 1 - 1/e of the supply,
    # which is overridden to 13.8 V (first-order RC, as above).
    overrides = {("R1", "value"): np.array([1e3, 2.2e3]), ("VSUPPLY", "level"): np.array([12.0, 13.8])}
    out = run_transient(spice_deck(rc_netlist(), overrides=overrides, index=1), vectors=["v(tim)"])
    at_tau = np.interp(2.2, out["time"], out["v(tim)"])
    assert at_tau == pytest.approx(13.8 * (1.0 - math.exp(-1.0)), rel=0.005)


@needs_ngspice
def test_pwl_feed_through_diode_then_bleed():
    feed = ((0.0, 0.0), (1e-3, 1.0), (0.2, 1.0), (0.201, 0.0))
    nl = Netlist(
        "diode feed",
        parts=(
            Part("D1", "diode", (("A", "feed"), ("K", "a")), role="blocking", model=D_PLAIN),
            res("R1", "a", "tim", 100.0, "charge"),
            cap("C1", "tim", 100e-6),
            res("R2", "tim", GROUND, 10e3, "bleed"),
        ),
        sources=(Source("VFEED", "feed", GROUND, 12.0, feed),),
        release_s=0.2,
        stop_s=1.2,
    )
    out = run_transient(spice_deck(nl), vectors=["v(tim)"])
    t, v = out["time"], out["v(tim)"]
    # Held: 12 = Vd + I*R1 + V with I = V/R2 and Shockley Vd = N Vt ln(I/IS + 1).
    held = 11.0
    for _ in range(50):
        i = held / 10e3
        held = 12.0 - VT_27C * math.log(i / 1e-14 + 1.0) - i * 100.0
    on = (t > 0.15) & (t < 0.2)
    assert np.all(np.abs(v[on] - held) < 2e-3)
    # Released: the diode blocks, so C1 bleeds through R2 alone, tau = R2*C1 = 1 s.
    t1 = 0.21
    v1 = np.interp(t1, t, v)
    after = t > t1
    exact = v1 * np.exp(-(t[after] - t1) / 1.0)
    assert np.all(np.abs(v[after] - exact) <= 0.005 * exact)


@needs_ngspice
def test_lamp_settles_at_rating_with_inrush():
    nl = lamp_netlist()
    th = lamp_thermal_node(nl.part("LP1"))
    out = run_transient(spice_deck(nl), vectors=["i(vsupply)", f"v({th})"])
    i = -out["i(vsupply)"]
    temp = out[f"v({th})"]
    assert temp[0] == pytest.approx(300.0, abs=1.0)  # .ic on the hierarchical node took hold
    assert 12.0 * i[-1] == pytest.approx(5.0, rel=0.01)  # settles at the rated 5 W
    assert temp[-1] == pytest.approx(2700.0, rel=0.01)
    # Inrush: lamptech.co.uk "Starting Characteristics": 10-14x (read in the source).
    assert i.max() >= 8.0 * i[-1]
    assert i.max() == pytest.approx(12.0 / LAMP_5W["R0"], rel=0.01)  # the cold filament


@needs_ngspice
def test_npn_switch_drives_led():
    out = run_transient(
        spice_deck(npn_led_netlist()), vectors=["v(coll)", "v(led_a)", "i(vsupply)"]
    )
    t, i_led = out["time"], -out["i(vsupply)"]
    on = (t > 10e-3) & (t < 20e-3)
    assert np.all(out["v(coll)"][on] < 0.2)  # saturated: forced beta about 6
    np.testing.assert_allclose(i_led[on], (12.0 - out["v(led_a)"][on]) / 470.0, rtol=1e-4)
    # Shockley diode law with the test card (IS 1e-20, N 2): the card reached the LED.
    v_ak = out["v(led_a)"][on] - out["v(coll)"][on]
    np.testing.assert_allclose(i_led[on], 1e-20 * np.expm1(v_ak / (2.0 * VT_27C)), rtol=0.01)
    assert np.all((i_led[on] > 15e-3) & (i_led[on] < 25e-3))
    off = t > 25e-3
    assert np.all(np.abs(i_led[off]) < 1e-6)


@needs_ngspice
def test_pnp_card_sets_current_gain():
    # Forward-active BJT with default Gummel-Poon terms: Ic = BF * Ib (ngspice manual, BJT models).
    nl = Netlist(
        "pnp",
        parts=(
            Part("Q2", "pnp", (("C", "c"), ("B", "b"), ("E", "vsup")), role="switch", model=PNP_80),
            res("R1", "b", GROUND, 100e3, "base"),
            res("R2", "c", GROUND, 1e3),
        ),
        sources=(Source("VSUPPLY", "vsup", GROUND, 12.0),),
        release_s=1e-3,
        stop_s=1e-3,
    )
    out = run_transient(spice_deck(nl), vectors=["v(c)", "v(b)"])
    ic, ib = out["v(c)"][-1] / 1e3, out["v(b)"][-1] / 100e3
    assert ic / ib == pytest.approx(80.0, rel=0.005)


@needs_ngspice
def test_nmos_level1_square_law():
    # Shichman-Hodges level 1 in saturation: Id = KP/2 * W/L * (Vgs - VTO)^2, W/L = 1.
    nl = Netlist(
        "nmos",
        parts=(
            Part("M1", "nmos", (("D", "drain"), ("G", "gate"), ("S", GROUND)), role="switch", model=NMOS_L1),
            res("R1", "vsup", "drain", 10.0),
        ),
        sources=(Source("VSUPPLY", "vsup", GROUND, 12.0), Source("VGATE", "gate", GROUND, 3.0)),
        release_s=1e-3,
        stop_s=1e-3,
    )
    out = run_transient(spice_deck(nl), vectors=["i(vsupply)"])
    assert -out["i(vsupply)"][-1] == pytest.approx(0.5 / 2 * (3.0 - 2.0) ** 2, rel=0.005)


@needs_ngspice
def test_run_transient_reports_ngspice_errors():
    broken = "broken\nVSUPPLY a 0 DC 1\nQ1 a a 0 NOSUCH\n.tran 1m 1 0 1m uic\n.end\n"
    with pytest.raises(RuntimeError, match="ngspice wrote no data"):
        run_transient(broken, vectors=["v(a)"])
    with pytest.raises(RuntimeError):
        run_transient(spice_deck(rc_netlist()), vectors=["v(nowhere)"])
