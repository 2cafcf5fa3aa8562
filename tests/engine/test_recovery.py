"""The transient's recovery ladder: a step whose Newton fails even at the smallest time
step is retried with backward Euler and more iterations, then with gmin continuation,
and the run still ends on the same curve (the reference is the undisturbed run, which
tests/engine/test_vs_ngspice.py holds to ngspice 39).  The DC fallbacks likewise end on the
undisturbed operating point."""

from __future__ import annotations

import numpy as np
import pytest

from sheetgen.engine import simulate
from sheetgen.engine.measure import light_times
from sheetgen.errors import SimulationError
from sheetgen.inputs.spec import parse_spec
from sheetgen.parts import catalog
from sheetgen.circuits.topologies import NPN, Values, window_for

SPEC = """
title: recovery test
supply: 12 V
load: {kind: led, current: 20 mA, vf: 3.1 V, per_string: 3, strings: 2}
fade: {in: 1.5 s, out: 4 s}
"""


def _netlist():
    spec = parse_spec(SPEC, source="test")
    values = Values(transistor=catalog.transistor("BC337-40"), diode=catalog.diode("1N4007"), r_charge_ohm=6800,
                    r_bleed_ohm=3300, r_base_ohm=13000, c_timing_f=1000e-6, r_led_ohm=130)
    return NPN.build(spec, values, window_for(1.5, 4.0))


def _fades(tr):
    nl = tr.netlist
    load = tr.i_source("VSUPPLY")
    steady = simulate.operating_point(nl, at_s=nl.release_s * 0.999).i_source("VSUPPLY")
    times = light_times(tr.t_s, load, release_s=nl.release_s, full=steady)  # on the current itself
    return float(times.delay_on_s[0] + times.fade_in_s[0]), float(times.hold_off_s[0] + times.fade_out_s[0])


def _failing_fast_path(monkeypatch, *, calls: range, rungs_fail: int = 0):
    """Make the plain Newton solve (the fast path) report failure on the calls in ``calls``,
    and the first ``rungs_fail`` rungs of the ladder fail throughout that stretch."""
    real = simulate._newton
    count = {"fast": 0}

    def newton(c, x0, xf, m0, vj, max_iter=simulate.MAX_NEWTON, init_junctions=False):
        x, ok, src, v = real(c, x0, xf, m0, vj, max_iter=max_iter, init_junctions=init_junctions)
        if max_iter == simulate.MAX_NEWTON:
            count["fast"] += 1
            if count["fast"] in calls:
                ok = np.zeros_like(ok)
        return x, ok, src, v

    monkeypatch.setattr(simulate, "_newton", newton)
    if rungs_fail:
        def refuse(c, x0, xf, m0, vj):
            x, ok, src, v = real(c, x0, xf, m0, vj)
            return x, np.zeros_like(ok), src, v
        monkeypatch.setattr(simulate, "_RUNGS", (refuse,) * rungs_fail + simulate._RUNGS[rungs_fail:])
    return count


def test_a_failed_stretch_is_carried_by_the_ladder(monkeypatch):
    nl = _netlist()
    want = _fades(simulate.transient(nl))
    # every fast solve in a stretch of the fade-in fails, however small the step; the ladder
    # carries that stretch on backward Euler (error-controlled) and the fast path resumes
    _failing_fast_path(monkeypatch, calls=range(30, 60))
    got = _fades(simulate.transient(nl))
    assert got == pytest.approx(want, rel=0.02)


def test_gmin_continuation_is_the_second_rung(monkeypatch):
    nl = _netlist()
    want = _fades(simulate.transient(nl))
    _failing_fast_path(monkeypatch, calls=range(30, 60), rungs_fail=1)
    got = _fades(simulate.transient(nl))
    assert got == pytest.approx(want, rel=0.02)


def test_the_run_gives_up_only_when_every_rung_fails(monkeypatch):
    _failing_fast_path(monkeypatch, calls=range(30, 10**9), rungs_fail=len(simulate._RUNGS))
    with pytest.raises(SimulationError, match="time step too small"):
        simulate.transient(_netlist())


def test_a_member_failing_mid_ramp_is_solved_by_gmin_stepping_at_the_same_point(monkeypatch):
    """DC: a member whose source-stepping ramp fails at one step leaves the ramp and is solved by gmin
    stepping, at the same operating point as the undisturbed solve; the members left on the ramp
    are not touched."""
    nl = _netlist()
    ov = {("R3", "value"): np.array([8200.0, 13000.0, 22000.0, 47000.0]),
          ("VFEED", "level"): np.array([11.0, 12.0, 13.0, 14.0])}
    at = nl.release_s / 2
    reference = simulate.operating_point(nl, at_s=at, overrides=ov, n=4)

    real_newton, real_ramp, real_gmin = simulate._newton, simulate._dc_source_stepping, simulate._dc_gmin_stepping
    real_direct = simulate._dc_direct
    seen = {"ramp": False, "calls": 0, "sizes": [], "gmin_sizes": []}

    def direct_fails(c, at_s):  # every member goes on to the fallbacks
        x, ok, src, vj = real_direct(c, at_s)
        return x, np.zeros_like(ok), src, vj

    def newton(c, *a, **k):
        x, ok, src, vj = real_newton(c, *a, **k)
        if seen["ramp"]:
            seen["calls"] += 1
            seen["sizes"].append(c.n)
            if seen["calls"] == 4:  # the fourth step of the ramp: the second member fails there
                ok = ok.copy()
                ok[1] = False
        return x, ok, src, vj

    def ramp(c, at_s):
        seen["ramp"] = True
        try:
            return real_ramp(c, at_s)
        finally:
            seen["ramp"] = False

    def gmin(c, at_s):
        seen["gmin_sizes"].append(c.n)
        return real_gmin(c, at_s)

    monkeypatch.setattr(simulate, "_dc_direct", direct_fails)
    monkeypatch.setattr(simulate, "_newton", newton)
    monkeypatch.setattr(simulate, "_dc_source_stepping", ramp)
    monkeypatch.setattr(simulate, "_dc_gmin_stepping", gmin)
    op = simulate.operating_point(nl, at_s=at, overrides=ov, n=4)

    assert seen["sizes"] == [4] * 4 + [3] * 6  # the failed member left the ramp at its fourth step
    assert seen["gmin_sizes"] == [1]  # and only it went on to gmin stepping
    assert op.names == reference.names
    assert op.voltages == pytest.approx(reference.voltages, rel=1e-5, abs=1e-6)
    assert op.i_source("VSUPPLY") == pytest.approx(reference.i_source("VSUPPLY"), rel=1e-5)
