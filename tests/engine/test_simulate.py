"""The transient solver against closed-form results and against itself in batch."""

from __future__ import annotations

import numpy as np
import pytest

from sheetgen.engine import simulate
from sheetgen.model.netlist import Model, Netlist, Part, Source

R_OHM, C_F, V = 1e3, 1e-3, 12.0  # τ = 1 s


def _rc(release_s=5.0, stop_s=10.0, r_ohm=R_OHM):
    feed = Source("VFEED", "in", "0", V, ((0.0, 0.0), (1e-6, 1.0), (release_s, 1.0), (release_s + 1e-6, 0.0)))
    parts = (Part("R1", "resistor", (("1", "in"), ("2", "cap")), "charge", value=r_ohm),
             Part("C1", "capacitor", (("+", "cap"), ("-", "0")), "timing", value=C_F))
    return Netlist(title="rc", parts=parts, sources=(feed,), release_s=release_s, stop_s=stop_s)


def test_rc_charge_and_discharge_match_the_exponential():
    # Textbook first-order RC: v = V(1 - e^(-t/RC)) while charging, then v0·e^(-(t-t0)/RC).
    tr = simulate.transient(_rc())
    t, v = tr.t_s, tr.v("cap")[0]
    tau = R_OHM * C_F
    v_release = V * (1 - np.exp(-5.0 / tau))
    ref = np.where(t <= 5.0, V * (1 - np.exp(-t / tau)), v_release * np.exp(-(t - 5.0) / tau))
    assert np.max(np.abs(v - ref)) < 1e-3 * V


def test_rc_time_constant_points():
    # At t = τ a charging capacitor reaches 1 - 1/e = 63.2 % (textbook).
    tr = simulate.transient(_rc())
    assert np.interp(1.0, tr.t_s, tr.v("cap")[0]) == pytest.approx(V * (1 - np.exp(-1)), rel=2e-3)


def test_batch_equals_separate_runs():
    rs = np.array([500.0, 1000.0, 2000.0])
    batch = simulate.transient(_rc(), overrides={("R1", "value"): rs})
    for k, r in enumerate(rs):
        single = simulate.transient(_rc(r_ohm=r))
        v_b = np.interp(single.t_s, batch.t_s, batch.v("cap")[k])
        assert np.max(np.abs(v_b - single.v("cap")[0])) < 5e-3 * V


def test_source_current_is_kcl_at_its_node():
    # The supply current of a 12 V source into 1 kΩ is 12 mA (Ohm's law).
    parts = (Part("R1", "resistor", (("1", "s"), ("2", "0")), "load", value=1e3),)
    nl = Netlist(title="ohm", parts=parts, sources=(Source("VSUPPLY", "s", "0", 12.0),), release_s=1, stop_s=2)
    op = simulate.operating_point(nl, at_s=0.5)
    assert op.i_source("VSUPPLY")[0] == pytest.approx(0.012, rel=1e-9)


def test_diode_forward_drop_follows_shockley():
    # I = IS(exp(V/(N·Vt)) - 1): with IS 1e-14 A, N 1 and 1 mA, V = Vt·ln(1e11) ≈ 0.655 V at 27 °C.
    d = Model("DX", "D", (("IS", 1e-14), ("N", 1.0)))
    parts = (Part("R1", "resistor", (("1", "s"), ("2", "a")), "x", value=(12.0 - 0.655) / 1e-3),
             Part("D1", "diode", (("A", "a"), ("K", "0")), "x", model=d))
    nl = Netlist(title="d", parts=parts, sources=(Source("VSUPPLY", "s", "0", 12.0),), release_s=1, stop_s=2)
    op = simulate.operating_point(nl, at_s=0.5)
    vt = 1.380649e-23 * 300.15 / 1.602176634e-19
    i = op.i_source("VSUPPLY")[0]
    assert op.v("a")[0] == pytest.approx(vt * np.log(i / 1e-14 + 1), abs=2e-4)


def test_a_warm_start_changes_where_newton_starts_not_the_answer():
    # The same diode as above (Shockley's law), fed through a range of resistors: a batch started
    # from one member's solution lands where each member solved from nothing does.
    d = Model("DX", "D", (("IS", 1e-14), ("N", 1.0)))
    parts = (Part("R1", "resistor", (("1", "s"), ("2", "a")), "x", value=11.3e3),
             Part("D1", "diode", (("A", "a"), ("K", "0")), "x", model=d))
    nl = Netlist(title="d", parts=parts, sources=(Source("VSUPPLY", "s", "0", 12.0),), release_s=1, stop_s=2)
    ov = {("R1", "value"): np.array([100.0, 1e3, 11.3e3, 1e6, 1e9])}
    start = simulate.operating_point(nl, at_s=0.5)
    warm = simulate.operating_point(nl, at_s=0.5, overrides=ov, n=5, start=start)
    cold = simulate.operating_point(nl, at_s=0.5, overrides=ov, n=5)
    assert np.allclose(warm.v("a"), cold.v("a"), rtol=1e-5, atol=1e-6)  # within Newton's own tolerance
    vt = 1.380649e-23 * 300.15 / 1.602176634e-19
    assert warm.v("a") == pytest.approx(vt * np.log(warm.i_source("VSUPPLY") / 1e-14 + 1), abs=2e-4)
