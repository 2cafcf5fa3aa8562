"""Our batched solver against ngspice 39 (Debian package) on the same decks.

The reference is ngspice running the deck that sheetgen exports: same model
cards, same values.  Agreement required: fade times within 2 %, steady load
current within 1 %.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from sheetgen.parts import catalog
from sheetgen.engine import simulate
from sheetgen.model.netlist import Netlist
from sheetgen.engine.measure import light_times
from sheetgen.inputs.spec import parse_spec
from sheetgen.outputs.spice import spice_deck
from sheetgen.outputs.spice_run import run_transient
from sheetgen.circuits.topologies import NPN, Values, window_for

LED_12V = """
title: test LED strings
supply: 12 V
load: {kind: led, current: 20 mA, vf: 3.1 V, per_string: 3, strings: 2}
fade: {in: 1.5 s, out: 4 s}
"""
LED_24V = """
title: test 24 V LED strings
supply: 24 V
load: {kind: led, current: 15 mA, vf: 3.0 V, per_string: 5, strings: 3}
fade: {in: 1 s, out: 3 s}
"""
LAMP_12V = """
title: test lamp
supply: 12 V
load: {kind: lamp, power: 3 W}
fade: {in: 0.5 s, out: 3 s}
"""


def _netlist(spec_text: str, *, q: str, r1: float, r2: float | None, r3: float, c: float,
             r_led: float | None = None, fade=(1.5, 4.0)) -> Netlist:
    spec = parse_spec(spec_text, source="test")
    values = Values(transistor=catalog.transistor(q), diode=catalog.diode("1N4007"), r_charge_ohm=r1,
                    r_bleed_ohm=r2 or 1e6, r_base_ohm=r3, c_timing_f=c, r_led_ohm=r_led)
    nl = NPN.build(spec, values, window_for(*fade))
    if r2 is None:  # no bleed resistor at all: C1 drains only through the base
        nl = replace(nl, parts=tuple(p for p in nl.parts if p.ref != "R2"))
    return nl


CASES = {
    # LED strings, Q1 driven hard (about 5× at typical gain), with bleed
    "led-saturated": dict(spec_text=LED_12V, q="BC337-40", r1=6800, r2=3300, r3=13000, c=1000e-6, r_led=130),
    # LED strings, base resistor so large that Q1 never saturates (partly driven)
    "led-partly-driven": dict(spec_text=LED_12V, q="BC337-40", r1=6800, r2=3300, r3=330e3, c=1000e-6, r_led=130),
    # LED strings with no bleed resistor: the fade-out runs through the base alone
    "led-no-bleed": dict(spec_text=LED_12V, q="BC337-40", r1=4700, r2=None, r3=22e3, c=220e-6, r_led=130,
                         fade=(1.5, 12.0)),
    # 24 V bank of three strings of five
    "led-24v": dict(spec_text=LED_24V, q="BC337-40", r1=10e3, r2=10e3, r3=33e3, c=470e-6, r_led=560,
                    fade=(1.0, 3.0)),
    # A 3 W filament lamp driven hard: inrush and warm-up come from the thermal node
    "lamp-saturated": dict(spec_text=LAMP_12V, q="BD139", r1=220, r2=2200, r3=390, c=4700e-6, fade=(0.5, 3.0)),
    # The same lamp held partly on by a weak drive
    "lamp-partly-driven": dict(spec_text=LAMP_12V, q="BD139", r1=220, r2=2200, r3=4700, c=4700e-6,
                               fade=(0.5, 8.0)),
    # The Darlington as its equivalent circuit (an X element and .subckt in the deck): a weak
    # RC drive into R1 / R2, where the internal resistors take much of the base current
    "darlington-led-24v": dict(spec_text=LED_24V, q="TIP120", r1=10e3, r2=10e3, r3=47e3, c=47e-6, r_led=560,
                               fade=(1.0, 3.0)),
    "darlington-lamp": dict(spec_text=LAMP_12V, q="TIP120", r1=470, r2=4700, r3=22e3, c=470e-6, fade=(0.5, 3.0)),
}


def _ours(nl: Netlist):
    tr = simulate.transient(nl)
    return tr.t_s, tr.i_source("VSUPPLY")[0]


def _ngspice(nl: Netlist):
    data = run_transient(spice_deck(nl), vectors=["i(vsupply)"])
    return data["time"], -data["i(vsupply)"]  # SPICE counts a delivering source's current as negative


def _steady_and_fades(t, i, release_s):
    steady = np.interp(release_s * 0.999, t, i)
    times = light_times(t, i[None, :], release_s=release_s, full=np.array([steady]))  # LED light ∝ current
    return steady, times.delay_on_s[0] + times.fade_in_s[0], times.hold_off_s[0] + times.fade_out_s[0]


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("name", sorted(CASES))
def test_transient_matches_ngspice(name):
    nl = _netlist(**CASES[name])
    s_ours, in_ours, out_ours = _steady_and_fades(*_ours(nl), nl.release_s)
    s_ref, in_ref, out_ref = _steady_and_fades(*_ngspice(nl), nl.release_s)
    assert s_ours == pytest.approx(s_ref, rel=0.01)
    assert in_ours == pytest.approx(in_ref, rel=0.02)
    assert out_ours == pytest.approx(out_ref, rel=0.02)


@pytest.mark.requires_ngspice
def test_lamp_inrush_matches_ngspice():
    """With a hard, fast drive the cold filament draws a surge; both solvers see the same peak."""
    nl = _netlist(LAMP_12V, q="BD139", r1=22, r2=2200, r3=100, c=10e-6, fade=(0.5, 3.0))
    t, i = _ours(nl)
    tr, ir = _ngspice(nl)
    assert i.max() == pytest.approx(ir.max(), rel=0.02)
    steady = np.interp(nl.release_s * 0.999, t, i)
    assert i.max() > 2.0 * steady  # a cold filament surges (lamptech.co.uk "Starting Characteristics": inrush 10-14× into a bare lamp; read in the source)
