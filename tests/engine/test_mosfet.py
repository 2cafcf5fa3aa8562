"""The NMOS equation: level 1 above threshold, an exponential tail below it, the same in ngspice."""

from __future__ import annotations

import subprocess

import numpy as np
import pytest

from sheetgen.engine.devices import VT_NOMINAL, mosfet, mosfet_vto
from sheetgen.model.netlist import Model
from sheetgen.outputs import spice
from sheetgen.outputs.spice_run import NGSPICE
from sheetgen.parts import catalog

P = {"vto": 1.8, "kp": 30.0, "lam": 0.01, "n": 1.5}


def test_well_above_threshold_it_is_the_shichman_hodges_square_law():
    """Shichman and Hodges, IEEE JSSC 3 (1968) 285 (SPICE level 1): saturation KP/2 Vov² (1 + λVds),
    linear KP (Vov - Vds/2) Vds (1 + λVds), here with Vov = 3.2 V."""
    vgs = np.array([5.0, 5.0])
    vds = np.array([10.0, 0.5])
    i, _, _ = mosfet(vgs, vds, **P)
    vov = 5.0 - P["vto"]
    assert i[0] == pytest.approx(0.5 * P["kp"] * vov**2 * (1 + P["lam"] * 10.0), rel=1e-6)
    assert i[1] == pytest.approx(P["kp"] * (vov - 0.25) * 0.5 * (1 + P["lam"] * 0.5), rel=1e-6)


def test_below_threshold_the_current_falls_n_vt_ln10_per_decade():
    """Weak inversion (Tsividis, Operation and Modeling of the MOS Transistor, ch. 4): Id ∝ exp(Vgs / n Vt)."""
    vgs = P["vto"] - np.array([0.4, 0.6])
    i, _, _ = mosfet(vgs, np.full(2, 5.0), **P)
    per_decade = 0.2 / np.log10(i[0] / i[1])
    assert per_decade == pytest.approx(P["n"] * VT_NOMINAL * np.log(10), rel=0.01)


def test_the_derivatives_are_the_slopes():
    """Newton needs the true Jacobian: central differences agree everywhere, through threshold and Vds = 0."""
    rng = np.random.default_rng(3)
    vgs, vds = rng.uniform(0.5, 6.0, 200), rng.uniform(-2.0, 12.0, 200)
    i, gm, gds = mosfet(vgs, vds, **P)
    h = 1e-6
    gm_fd = (mosfet(vgs + h, vds, **P)[0] - mosfet(vgs - h, vds, **P)[0]) / (2 * h)
    gds_fd = (mosfet(vgs, vds + h, **P)[0] - mosfet(vgs, vds - h, **P)[0]) / (2 * h)
    assert gm == pytest.approx(gm_fd, rel=1e-4, abs=1e-9)
    assert gds == pytest.approx(gds_fd, rel=1e-4, abs=1e-9)


def test_drain_and_source_swap_with_the_sign_of_the_current():
    """A MOSFET is symmetric: reversing Vds with the gate held to the lower terminal reverses the current."""
    i_fwd, _, _ = mosfet(np.array([3.0]), np.array([1.0]), **P)
    i_rev, _, _ = mosfet(np.array([2.0]), np.array([-1.0]), **P)  # the same device seen from its drain
    assert i_rev[0] == pytest.approx(-i_fwd[0], rel=1e-9)


def test_vto_for_a_threshold_gives_that_threshold():
    vto = mosfet_vto(np.array([1.0, 2.0]), at_a=250e-6, kp=P["kp"], n=P["n"])
    i, _, _ = mosfet(np.array([1.0, 2.0]), np.array([1.0, 2.0]), vto=vto, kp=P["kp"], lam=0.0, n=P["n"])
    assert i == pytest.approx([250e-6, 250e-6], rel=1e-6)


def _ngspice_sweep(tmp_path, model: Model, vds: float) -> np.ndarray:
    deck = tmp_path / "mos.cir"
    out = tmp_path / "mos.txt"
    deck.write_text("* NMOS sweep\nX1 d g 0 M1\nVG g 0 DC 0\nVD d 0 DC {vds}\n".format(vds=vds)
                    + "\n".join(spice.model_card("M1", model))
                    + f"\n.control\nset wr_singlescale\ndc VG 0 6 0.02\nwrdata {out} -i(VD)\n.endc\n.end\n")
    proc = subprocess.run([NGSPICE, "-b", str(deck)], capture_output=True, text=True, timeout=120)
    assert out.exists(), proc.stdout + proc.stderr
    return np.loadtxt(out)


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("vds", [0.05, 0.5, 12.0])
def test_ngspice_runs_the_same_equation_from_the_deck(tmp_path, vds):
    """ngspice 39 (Debian) on the deck's subcircuit: the drain current over a gate sweep from deep below
    threshold to full enhancement, within 0.5 %, series resistances included."""
    q = catalog.transistor("IRLZ44N")
    data = _ngspice_sweep(tmp_path, q.model, vds)
    vg, i_spice = data[:, 0], data[:, 1]
    m = q.model
    # Our side: the drain current with RD and RS in series, by Newton on the current itself.
    i = np.zeros_like(vg)
    for _ in range(100):
        f, gm, gds = mosfet(vg - i * m["RS"], vds - i * (m["RD"] + m["RS"]), vto=m["VTO"], kp=m["KP"],
                            lam=m["LAMBDA"], n=m["N"], g_leak=m["GLEAK"])
        i = i - (f - i) / (-gm * m["RS"] - gds * (m["RD"] + m["RS"]) - 1.0)
    keep = i_spice > 1e-9
    assert i_spice[keep] == pytest.approx(i[keep], rel=5e-3)


@pytest.mark.requires_ngspice
def test_threshold_corners_in_the_draws_land_on_the_datasheet_limits(tmp_path):
    """Infineon/IR IRLZ44N data sheet: VGS(th) 1.0–2.0 V at VDS = VGS, ID = 250 µA; a card at each end
    of the draws, run in ngspice, sits at that end within 10 mV."""
    q = catalog.transistor("IRLZ44N")
    for vth in q.vgs_th_v:
        vto = float(mosfet_vto(vth, at_a=q.vgs_th_at_a, kp=q.model["KP"], n=q.model["N"]))
        params = tuple((k, vto if k == "VTO" else v) for k, v in q.model.params)
        card = "\n".join(spice.model_card("M1", Model("M1", "NMOS", params)))
        deck = tmp_path / "vth.cir"
        out = tmp_path / "vth.txt"
        deck.write_text(f"* VGS(th)\nX1 g g 0 M1\nIG 0 g DC {q.vgs_th_at_a}\n{card}\n.control\nset wr_singlescale\n"
                        f"op\nwrdata {out} v(g)\n.endc\n.end\n")
        subprocess.run([NGSPICE, "-b", str(deck)], capture_output=True, text=True, timeout=120)
        assert float(np.atleast_2d(np.loadtxt(out))[0, -1]) == pytest.approx(vth, abs=0.01)
