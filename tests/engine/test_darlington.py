"""The Darlington as its equivalent circuit: our solver against ngspice 39 on the same subcircuit.

The card is the catalog's TIP120 (two transistors, R1 ≈ 8 kΩ, R2 ≈ 120 Ω and the
collector-emitter diode, as the onsemi TIP120/D Rev. 9 equivalent circuit shows).  The
reference is ngspice running the deck sheetgen writes for it (an ``X`` element and
its ``.subckt``).  Agreement required: gain at 50 mA, 0.5 A and 3 A within 5 %,
V_CE(sat) within 5 %.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from sheetgen.engine import simulate
from sheetgen.model.netlist import GROUND, Netlist, Part, Source
from sheetgen.outputs.spice import spice_deck
from sheetgen.outputs.spice_run import run_transient
from sheetgen.parts import catalog


def _darlington(part_number: str = "TIP120") -> Part:
    q = catalog.transistor(part_number)
    return Part(ref="Q1", kind="npn", pins=(("C", "c"), ("B", "b"), ("E", GROUND)), role="switch",
                model=q.model, part_number=q.part_number)


def _r(ref: str, a: str, b: str, ohm: float) -> Part:
    return Part(ref=ref, kind="resistor", pins=(("1", a), ("2", b)), role="test", value=ohm)


def _gain_at(ic: np.ndarray, ib: np.ndarray, vb: np.ndarray, ic_a: float) -> tuple[float, float]:
    """(hFE, V_BE) at collector current ``ic_a``, by log-log interpolation along a sweep."""
    ok = (ic > 0) & (ib > 0)
    x = np.log(ic[ok])
    assert x.min() < math.log(ic_a) < x.max(), "the sweep does not reach the test current"
    order = np.argsort(x)
    ib_at = math.exp(np.interp(math.log(ic_a), x[order], np.log(ib[ok])[order]))
    return ic_a / ib_at, float(np.interp(math.log(ic_a), x[order], vb[ok][order]))


def _sweep_netlist(vb_top: float) -> Netlist:
    """V_CE held at 3 V (the datasheet's hFE test voltage), the base voltage ramped up slowly."""
    return Netlist(title="TIP120 gain sweep", parts=(_darlington(),),
                   sources=(Source("VC", "c", GROUND, 3.0), Source("VB", "b", GROUND, vb_top,
                                                                 shape=((0.0, 0.5), (1.0, 1.0)))),
                   release_s=1.0, stop_s=1.0)


@pytest.mark.requires_ngspice
def test_darlington_gain_matches_ngspice():
    nl = _sweep_netlist(2.0)
    # ngspice: the subcircuit has no charge storage, so a slow ramp is a DC sweep
    data = run_transient(spice_deck(nl), vectors=["v(b)", "i(vb)", "i(vc)"])
    theirs_vb, theirs_ib, theirs_ic = data["v(b)"], -data["i(vb)"], -data["i(vc)"]
    # ours: one batched DC solve over the same base voltages
    levels = np.linspace(1.0, 2.0, 400)
    op = simulate.operating_point(nl, at_s=1.0, overrides={("VB", "level"): levels}, n=levels.size)
    ours_ib, ours_ic = op.i_source("VB"), op.i_source("VC")
    for ic_a in (0.05, 0.5, 3.0):
        h_ours, vbe_ours = _gain_at(ours_ic, ours_ib, levels, ic_a)
        h_ng, vbe_ng = _gain_at(theirs_ic, theirs_ib, theirs_vb, ic_a)
        assert h_ours == pytest.approx(h_ng, rel=0.05), ic_a
        assert vbe_ours == pytest.approx(vbe_ng, rel=0.05), ic_a
    # The gain falls at small currents, as the equivalent circuit makes it: R2 takes the
    # first few mA of base drive (onsemi TIP120/D: hFE ≥ 1000 only from 0.5 A up).
    assert _gain_at(ours_ic, ours_ib, levels, 0.05)[0] < 0.5 * _gain_at(ours_ic, ours_ib, levels, 0.5)[0]


def _saturated(ic_a: float, ib_a: float) -> Netlist:
    """Collector fed from 12 V through a resistor giving about ``ic_a`` once saturated, base
    from 12 V through one giving ``ib_a``: the datasheet's forced-gain V_CE(sat) test."""
    return Netlist(title="TIP120 saturation",
                   parts=(_darlington(), _r("RL", "vcc", "c", (12.0 - 1.0) / ic_a),
                          _r("RB", "vcc", "b", (12.0 - 1.7) / ib_a)),
                   sources=(Source("VCC", "vcc", GROUND, 12.0),), release_s=1e-3, stop_s=1e-3)


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("ic_a, ib_a, max_v", [(3.0, 0.012, 2.0), (5.0, 0.020, 4.0)])
def test_darlington_vce_sat_matches_ngspice_and_datasheet(ic_a, ib_a, max_v):
    nl = _saturated(ic_a, ib_a)
    ours = float(simulate.operating_point(nl, at_s=0.0).v("c")[0])
    theirs = float(run_transient(spice_deck(nl), vectors=["v(c)"])["v(c)"][-1])
    assert ours == pytest.approx(theirs, rel=0.05)
    # onsemi TIP120/D Rev. 9: V_CE(sat) ≤ 2.0 V at 3 A / 12 mA, ≤ 4.0 V at 5 A / 20 mA
    assert 0.0 < ours <= max_v


def test_darlington_deck_is_a_subcircuit():
    deck = spice_deck(_saturated(3.0, 0.012))
    assert "XQ1 c b 0 Q_TIP120" in deck
    assert ".subckt Q_TIP120 c b e" in deck and ".ends Q_TIP120" in deck
    # the equivalent circuit's two resistors, as the onsemi TIP120/D equivalent circuit prints them
    assert "R1 b m 8000" in deck and "R2 m e 120" in deck
    assert "D1 e c Q_TIP120_D1" in deck


def test_darlington_overrides_reach_the_inner_transistors():
    nl = _saturated(3.0, 3e-4)  # weak drive: the collector current follows the gain
    base = simulate.operating_point(nl, at_s=0.0).i_source("VCC")[0]
    q1 = nl.part("Q1")
    weaker = simulate.operating_point(nl, at_s=0.0, overrides=q1.gain_overrides(np.array([0.5])), n=1)
    assert weaker.i_source("VCC")[0] < base
    with pytest.raises(ValueError, match="built of parts"):
        simulate.operating_point(nl, at_s=0.0, overrides={("Q1", "BF"): np.array([100.0])}, n=1)
