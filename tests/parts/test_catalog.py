"""The parts catalog: loading, sources, hFE rules, leakage, filament, and the model cards in ngspice.

Each figure checked names its source; the part's own sources are in the YAML files.
The ngspice checks carry the shared ``requires_ngspice`` mark (tests/conftest.py):
skipped when ngspice is missing, failed when CI=true.
"""

from __future__ import annotations

import math
import subprocess

import numpy as np
import pytest

from sheetgen.engine.light import lamp_light
from sheetgen.parts import catalog
from sheetgen.model.netlist import Model
from sheetgen.outputs import spice
from sheetgen.outputs.spice_run import NGSPICE

REQUIRED_TRANSISTORS = ("PN2222A", "BC337-40", "BD139", "TIP31C", "BC327-40",
                        "TIP120", "TIP122", "IRLZ44N")


# --------------------------------------------------------------------------- loading


def test_required_parts_load():
    numbers = {t.part_number for t in catalog.transistors()}
    assert set(REQUIRED_TRANSISTORS) <= numbers
    assert {d.part_number for d in catalog.diodes()} >= {"1N4007", "1N5819"}
    names = {c.name for c in catalog.led_colours()}
    assert names >= {"red", "yellow", "green", "blue", "white", "warm white", "amber"}


def test_lookups_ignore_case_and_spelling():
    assert catalog.transistor("bc337-40").part_number == "BC337-40"
    assert catalog.diode("1n4007").part_number == "1N4007"
    assert catalog.led_colour("Warm-White").name == "warm white"
    assert catalog.led_colour("  WARM_white ").name == "warm white"


def test_unknown_parts_raise_lookup_errors():
    from sheetgen.errors import SheetgenError
    for call, arg in ((catalog.transistor, "2N3055"), (catalog.diode, "1N4148"),
                      (catalog.led_colour, "ultraviolet")):
        with pytest.raises(catalog.UnknownPart) as info:
            call(arg)
        assert isinstance(info.value, LookupError) and isinstance(info.value, SheetgenError)


def test_loaders_are_cached_and_frozen():
    assert catalog.transistors() is catalog.transistors()
    t = catalog.transistor("TIP120")
    with pytest.raises(AttributeError):
        t.vmax_v = 1.0          # frozen dataclass


def test_polarity_kinds_and_fields():
    for t in catalog.transistors():
        assert t.model.kind == {"npn": "NPN", "pnp": "PNP", "nmos": "NMOS"}[t.polarity]
        assert t.package in ("TO-92", "TO-126", "TO-220")
        if t.polarity == "nmos":
            assert not t.hfe and not t.vce_sat
            assert t.vgs_th_v[0] < t.vgs_th_v[1] and t.rds_on_ohm > 0 and t.vgs_max_v > 0
            with pytest.raises(ValueError):
                t.hfe_min_at(1.0)
        else:
            assert t.hfe and t.vce_sat and t.vgs_th_v is None
        # the free-air rating cannot beat the free-air thermal path (5 % slack for rounding)
        assert t.pd_free_air_w <= 1.05 * (t.tj_max_c - 25) / t.rth_ja_c_per_w
    assert catalog.transistor("TIP120").darlington and catalog.transistor("TIP122").darlington
    assert not catalog.transistor("BD139").darlington


def test_every_part_names_its_sources():
    groups = [catalog.transistors(), catalog.diodes(), catalog.led_colours(),
              (catalog.filament(), catalog.capacitors(), catalog.resistors())]
    for group in groups:
        for item in group:
            assert item.sources, item
            assert all(isinstance(s, str) and len(s) > 10 for s in item.sources)


def test_datasheet_figures_as_cited():
    # data sheets named in transistors.yaml (read in the source)
    pn = catalog.transistor("PN2222A")
    assert (pn.vmax_v, pn.imax_a, pn.pd_free_air_w) == (40, 0.6, 0.625)       # onsemi P2N2222A/D
    assert (pn.rth_ja_c_per_w, pn.rth_jc_c_per_w, pn.tj_max_c) == (200, 83.3, 150)
    tip = catalog.transistor("TIP120")
    assert (tip.rth_jc_c_per_w, tip.rth_ja_c_per_w) == (1.92, 62.5)           # onsemi TIP120/D
    assert catalog.transistor("TIP31C").rth_jc_c_per_w == 3.125                # onsemi, Diotec
    bd = catalog.transistor("BD139")
    assert (bd.rth_jc_c_per_w, bd.rth_ja_c_per_w) == (10, 100)                 # ST; Central
    assert catalog.transistor("TIP122").vmax_v == 100                          # onsemi TIP120/D


# --------------------------------------------------------------------------- hFE rules


def test_hfe_min_at_datasheet_points():
    pn = catalog.transistor("PN2222A")
    # onsemi P2N2222A/D: 35 @0.1 mA, 75 @10 mA; at 150 mA the 1 V line (50) beats the 10 V one (100)
    assert pn.hfe_min_at(1e-4) == pytest.approx(35)
    assert pn.hfe_min_at(1e-2) == pytest.approx(75)
    assert pn.hfe_min_at(0.15) == pytest.approx(50)


def test_hfe_min_interpolates_log_log():
    pn = catalog.transistor("PN2222A")
    # between 1 mA (50) and 10 mA (75): at 3.16 mA, the geometric mean
    assert pn.hfe_min_at(math.sqrt(1e-3 * 1e-2)) == pytest.approx(math.sqrt(50 * 75))
    ic = 0.3
    t = math.log(ic / 0.15) / math.log(0.5 / 0.15)
    assert pn.hfe_min_at(ic) == pytest.approx(math.exp(math.log(50) + t * math.log(40 / 50)))


def test_hfe_min_extrapolates_down_never_up():
    for t in catalog.transistors():
        if not t.hfe:
            continue
        first, last = t.hfe[0].ic_a, max(p.ic_a for p in t.hfe)
        end = t.hfe_min_at(last)
        for k in (1.5, 2, 5, 10):
            # above the table: falls at least as 1/Ic (high-injection roll-off)
            assert t.hfe_min_at(last * k) <= end / k * (1 + 1e-9)
        start = t.hfe_min_at(first)
        for k in (2, 10, 100):
            assert t.hfe_min_at(first / k) <= start * (1 + 1e-9)
    # TIP31C: 25 @1 A, 10 @3 A (onsemi TIP31A/D) falls as Ic^-0.83, gentler than 1/Ic,
    # so beyond 3 A the 1/Ic floor rules
    assert catalog.transistor("TIP31C").hfe_min_at(5.0) == pytest.approx(10 * 3 / 5)
    # BC337-40: 250 @100 mA, 60 @300 mA (onsemi BC337/D) falls faster than 1/Ic; that continues
    slope = math.log(60 / 250) / math.log(3)
    assert catalog.transistor("BC337-40").hfe_min_at(0.6) == pytest.approx(60 * 2 ** slope)


def test_hfe_max_rule_and_ordering():
    bd = catalog.transistor("BD139")
    # ST: 40–250 at 150 mA; elsewhere no max, so max(3 × min, 250) = 250 (common practice, c)
    assert bd.hfe_max_at(0.15) == pytest.approx(250)
    assert bd.hfe_max_at(5e-3) == pytest.approx(250)
    tip = catalog.transistor("TIP120")
    assert tip.hfe_max_at(1.0) == pytest.approx(catalog.HFE_MAX_FACTOR * 1000)   # no max printed
    for t in catalog.transistors():
        if not t.hfe:
            continue
        for ic in np.geomspace(1e-5, 10 * t.imax_a, 40):
            lo, typ, hi = t.hfe_min_at(ic), t.hfe_typ_at(ic), t.hfe_max_at(ic)
            assert 0 < lo <= typ <= hi, (t.part_number, ic)


def test_hfe_needs_positive_current():
    with pytest.raises(ValueError):
        catalog.transistor("BD139").hfe_min_at(0.0)


# --------------------------------------------------------------------------- capacitors, resistors


def test_capacitor_values_and_ratings():
    caps = catalog.capacitors()
    # E6 from 1 µF to 10 000 µF: four decades of six, plus 10 000 µF
    assert len(caps.values_f) == 25
    assert caps.values_f[0] == 1e-6 and caps.values_f[-1] == 1e-2
    assert 4.7e-6 in caps.values_f and 2.2e-3 in caps.values_f
    assert caps.ratings_v == (6.3, 10, 16, 25, 35, 50, 63)      # Nichicon VR series table
    assert caps.tolerance == 0.20                                # Nichicon VR series catalogue (read in the source)


def test_leakage_rule_worked_example():
    caps = catalog.capacitors()
    # Nippon Chemi-Con FAQ: 2200 µF 35 V -> 770 µA (read in the source)
    assert caps.leakage_a(2200e-6, 35) == pytest.approx(770e-6)
    # itecnotes quoting Panasonic/Nichicon/Rubycon: never below 3 µA
    assert caps.leakage_a(1e-6, 6.3) == pytest.approx(3e-6)
    assert caps.leakage_a(100e-6, 16) == pytest.approx(16e-6)


def test_capacitor_rating_for_working_voltage():
    caps = catalog.capacitors()
    # 80 % working-voltage margin (common practice, no source)
    assert caps.rating_for(14.6) == 25
    assert caps.rating_for(29.2) == 50
    with pytest.raises(ValueError):
        caps.rating_for(60)
    assert caps.size_mm(1e-3, 25) is None          # no maker's size table was read


def test_resistor_range():
    res = catalog.resistors()
    assert res.series == ("E12", "E24")
    assert res.powers_w == (0.25, 0.5, 1, 2, 3)
    assert res.tolerance("Metal film") == 0.01 and res.tolerance("carbon film") == 0.05
    assert "axial" in res.package(0.25)
    assert res.derated_w(0.25, 25) == 0.25 and res.derated_w(0.25, 155) == 0.0
    assert res.power_for(0.1) == 0.25               # 2 × 0.1 W fits a 0.25 W part at 25 °C
    assert res.power_for(0.1, ambient_c=100) == 0.5
    with pytest.raises(catalog.UnknownPart):
        res.tolerance("carbon composition")


# --------------------------------------------------------------------------- filament


def test_filament_cold_fraction_and_inrush():
    f = catalog.filament()
    assert f.cold_fraction == pytest.approx((300 / 2700) ** 1.2)
    inrush = 1 / f.cold_fraction
    # nncyjs lamp-driver note: 10–12×; lamptech.co.uk: about 14× (read in the source)
    assert 10 <= inrush <= 15


# Resistivity of tungsten, µΩ·cm, by temperature in kelvin: Forsythe and Worthing, "The
# properties of tungsten and the characteristics of tungsten lamps", Astrophysical Journal
# 61 (1925) 146, as tabulated in the CRC Handbook of Chemistry and Physics (values from memory).
TUNGSTEN_RESISTIVITY = {300: 5.65, 1000: 24.93, 1500: 40.36, 2000: 56.67, 2500: 73.91, 3000: 92.04}


def test_filament_resistance_law_follows_the_tungsten_table():
    f = catalog.filament()
    rho = TUNGSTEN_RESISTIVITY
    for t_k in (1000, 1500, 2000, 2500):
        law = (t_k / f.t_room_k) ** f.alpha
        assert law == pytest.approx(rho[t_k] / rho[300], rel=0.08), t_k
    # cold over hot at the catalog's hot temperature, the table interpolated linearly
    hot = np.interp(f.t_hot_k, sorted(rho), [rho[k] for k in sorted(rho)])
    assert f.cold_fraction == pytest.approx(rho[300] / hot, rel=0.08)


def _warm_up(f, *, power_w, rated_v, stop_taus=12.0, steps=100_000):
    """Filament temperature at rated voltage from cold: C dT/dt = P (T_hot/T)^alpha − k (T⁴ − T_room⁴),
    integrated here independently of both solvers."""
    k = f.radiation_k(power_w=power_w)
    c = f.heat_capacity_j_per_k(power_w=power_w, rated_v=rated_v)
    stop_s = stop_taus * f.tau_s(power_w=power_w, rated_v=rated_v)
    dt = stop_s / steps
    temps = np.empty(steps + 1)
    temp = f.t_room_k
    temps[0] = temp
    for i in range(steps):   # explicit steps of tau / 8000
        temp += dt * (power_w * (f.t_hot_k / temp) ** f.alpha - k * (temp ** 4 - f.t_room_k ** 4)) / c
        temps[i + 1] = temp
    return np.linspace(0, stop_s, steps + 1), temps


def test_filament_wire_from_the_rating():
    """The sized wire carries the rating: V²/P hot, and its surface radiates P."""
    f = catalog.filament()
    d, length = f.wire_m(power_w=5.0, rated_v=12.0)
    assert 4 * f.resistivity_hot_ohm_m * length / (math.pi * d * d) == pytest.approx(12.0 ** 2 / 5.0)
    assert f.emissivity * catalog.STEFAN_BOLTZMANN * f.t_hot_k ** 4 * math.pi * d * length == pytest.approx(5.0)
    # small 12 V lamp filaments are a few tens of micrometres thick (from memory)
    assert 20e-6 < d < 80e-6
    # a 21 W filament is heavier per watt and warms slower than a 5 W one
    assert f.tau_s(power_w=21.0, rated_v=12.0) > 2 * f.tau_s(power_w=5.0, rated_v=12.0)


def test_filament_warm_up_matches_a_published_lamp():
    # Wikipedia, "Incandescent light bulb", Current and resistance (read in a page quoting it):
    # a 100 W 120 V lamp reaches 90 % of full brightness after about 0.13 s.  Light from the
    # filament temperature by the project's model (Planck's law weighted by CIE 1924 V(λ)).
    f = catalog.filament()
    t, temps = _warm_up(f, power_w=100.0, rated_v=120.0)
    t90 = t[np.argmax(lamp_light(temps, t_ref_k=f.t_hot_k) >= 0.9)]
    assert 0.13 * 0.7 <= t90 <= 0.13 * 1.3, t90
    # lamptech.co.uk, Starting Characteristics: a 230 V 100 W lamp closely approaches its
    # nominal current within about 0.05 s (read in the source); here: within 10 % by 0.06 s
    t, temps = _warm_up(f, power_w=100.0, rated_v=230.0)
    assert t[np.argmax((f.t_hot_k / temps) ** f.alpha <= 1.1)] <= 0.06


def test_lamp_model_card():
    f = catalog.filament()
    m = f.lamp_model(power_w=5.0, rated_v=12.0, name="LP1")
    assert isinstance(m, Model) and m.kind == "LAMP"
    r_hot = 12.0 ** 2 / 5.0
    assert m["R0"] == pytest.approx(r_hot * f.cold_fraction)
    assert m["R0"] * (m["THOT"] / m["TROOM"]) ** m["ALPHA"] == pytest.approx(r_hot)
    assert m["K"] * (m["THOT"] ** 4 - m["TROOM"] ** 4) == pytest.approx(5.0)
    slope = 4 * m["K"] * m["THOT"] ** 3 + m["ALPHA"] * 5.0 / m["THOT"]
    assert m["CTH"] / slope == pytest.approx(f.tau_s(power_w=5.0, rated_v=12.0))
    # the card the designs use (sheetgen.circuits.loads) carries the same heat capacity
    from sheetgen.circuits.loads import lamp_model
    from sheetgen.inputs.spec import LampLoad
    import dataclasses
    fields = {fl.name for fl in dataclasses.fields(LampLoad)}
    load = LampLoad(**{k: v for k, v in dict(power_w=5.0, rated_v=12.0, count=1).items() if k in fields})
    assert lamp_model(load)["CTH"] == pytest.approx(m["CTH"], rel=1e-5)


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("power_w,rated_v", [(5.0, 12.0), (21.0, 12.0), (10.0, 24.0)])
def test_lamp_card_in_ngspice_warm_up_hot_and_cold(tmp_path, power_w, rated_v):
    """ngspice on the lamp card at rated voltage from cold: the first current is the cold
    resistance, the last the hot one, and 90 % of hot resistance comes when the independent
    heat balance above says, in units of the handbook-derived time constant."""
    f = catalog.filament()
    m = f.lamp_model(power_w=power_w, rated_v=rated_v, name="LP1")
    tau = f.tau_s(power_w=power_w, rated_v=rated_v)
    stop = 12 * tau
    body = (f"X1 a 0 LP1\nV1 a 0 DC {rated_v}\n{_card(m)}\n.ic v(x1.th)={f.t_room_k}\n"
            f".options reltol=1e-4")
    data = _run(tmp_path, body, f"tran {stop / 4000:g} {stop:g} uic", "-i(V1)")
    t, r = data[:, 0], rated_v / data[:, 1]
    r_hot = rated_v ** 2 / power_w
    assert r[-1] == pytest.approx(r_hot, rel=0.01)            # hot at rated voltage: V²/P
    # cold at 20 °C: rho(293 K) / rho(2700 K) of tungsten, 5.28 µΩ·cm (CRC "Electrical resistivity
    # of pure metals", from memory) or 5.65 at 300 K (Forsythe and Worthing) over the table's
    # 81.2 at 2700 K: 0.065–0.070 of hot; the law holds the cold value below 27 °C
    hot_rho = np.interp(2700, sorted(TUNGSTEN_RESISTIVITY), [TUNGSTEN_RESISTIVITY[k] for k in sorted(TUNGSTEN_RESISTIVITY)])
    assert 5.28 / hot_rho * 0.95 <= r[0] / r_hot <= 5.65 / hot_rho * 1.05
    t_ode, temps = _warm_up(f, power_w=power_w, rated_v=rated_v)
    t90_ode = t_ode[np.argmax((temps / f.t_room_k) ** f.alpha >= 0.9 * (f.t_hot_k / f.t_room_k) ** f.alpha)]
    t90 = t[np.argmax(r >= 0.9 * r_hot)]
    assert t90 == pytest.approx(t90_ode, rel=0.03)
    assert 2.0 * tau <= t90 <= 3.0 * tau      # the nonlinear warm-up: about 2.6 tau to 90 % of hot R


# --------------------------------------------------------------------------- ngspice checks


def _card(model: Model) -> str:
    """The card exactly as the deck writer prints it (a Darlington as its .subckt)."""
    return "\n".join(spice.model_card(model.name, model))


def _q(model: Model) -> str:
    """The transistor's element: Q1, or X1 for a device built of parts."""
    return "X1" if model.body else "Q1"


def _run(tmp_path, body: str, analysis: str, vectors: str) -> np.ndarray:
    deck = tmp_path / "check.cir"
    out = tmp_path / "out.txt"
    deck.write_text(f"* sheetgen catalog check\n{body}\n.control\nset wr_singlescale\n"
                    f"{analysis}\nwrdata {out} {vectors}\n.endc\n.end\n")
    proc = subprocess.run([NGSPICE, "-b", str(deck)], capture_output=True, text=True,
                          timeout=120)
    if not out.exists():
        raise AssertionError(f"ngspice produced no data:\n{proc.stdout}\n{proc.stderr}")
    return np.atleast_2d(np.loadtxt(out))


def _bjt_gain(tmp_path, t, ic_a: float, vce_v: float, temp_c: float = 27.0) -> tuple[float, float]:
    """(hFE, Vbe) of the card at collector current ic_a and fixed vce_v, from a Vbe sweep,
    at junction temperature ``temp_c`` (ngspice's default 27 °C unless given)."""
    s = -1.0 if t.polarity == "pnp" else 1.0
    body = (f"{_q(t.model)} c b 0 {t.model.name}\nVB b 0 DC 0\nVC c 0 DC {s * vce_v}\n{_card(t.model)}\n"
            f".temp {temp_c:g}")
    a = _run(tmp_path, body, f"dc VB 0 {s * 2.0} {s * 0.001}", "i(VB) i(VC)")
    vb, ib, ic = s * a[:, 0], -s * a[:, 1], -s * a[:, 2]      # columns: VB, i(VB), i(VC)
    ok = (ib > 0) & (ic > 0)
    x = np.log(ic[ok])
    assert x[0] < math.log(ic_a) < x[-1], "sweep does not reach the test current"
    ib_at = math.exp(np.interp(math.log(ic_a), x, np.log(ib[ok])))
    return ic_a / ib_at, float(np.interp(math.log(ic_a), x, vb[ok]))


def _bjt_sat(tmp_path, t, ic_a: float, ib_a: float) -> tuple[float, float]:
    """(Vce, Vbe) of the card with forced collector and base currents."""
    s = -1.0 if t.polarity == "pnp" else 1.0
    body = (f"{_q(t.model)} c b 0 {t.model.name}\nIB 0 b DC {s * ib_a}\nIC 0 c DC {s * ic_a}\n"
            f"{_card(t.model)}")
    a = _run(tmp_path, body, "op", "v(c) v(b)")
    return s * a[0, -2], s * a[0, -1]                          # last columns: v(c), v(b)


BIPOLARS = [t.part_number for t in catalog.transistors() if t.is_bipolar]


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("part", BIPOLARS)
def test_card_hfe_within_datasheet_band(tmp_path, part):
    t = catalog.transistor(part)
    for p in t.hfe:
        hfe, _ = _bjt_gain(tmp_path, t, p.ic_a, p.vce_v)
        hi = p.max if p.max is not None else t.hfe_max_at(p.ic_a)
        assert p.min <= hfe <= hi, (part, p, hfe)


# Typical gain the card aims at.  Where the sheet prints min and max, their geometric mean
# (common practice, c); TIP120/TIP122: 2500 typical at 4 A (onsemi TIP120/D, test voltage
# not printed; 3 V assumed).
TYPICAL_TARGETS = {"TIP120": (4.0, 3.0, 2500.0), "TIP122": (4.0, 3.0, 2500.0)}


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("part", BIPOLARS)
def test_card_hfe_near_typical(tmp_path, part):
    t = catalog.transistor(part)
    if part in TYPICAL_TARGETS:
        targets = [TYPICAL_TARGETS[part]]
    else:
        targets = [(p.ic_a, p.vce_v, math.sqrt(p.min * p.max)) for p in t.hfe
                   if p.max is not None]
    assert targets
    for ic, vce, target in targets:
        hfe, _ = _bjt_gain(tmp_path, t, ic, vce)
        assert target / 1.3 <= hfe <= target * 1.3, (part, ic, hfe, target)


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("part", BIPOLARS)
def test_card_vce_sat_at_or_below_datasheet(tmp_path, part):
    t = catalog.transistor(part)
    for s in t.vce_sat:
        vce, _ = _bjt_sat(tmp_path, t, s.ic_a, s.ib_a)
        assert 0 < vce <= s.max_v, (part, s, vce)


# Base-emitter limits printed on the sheets: (kind, Ic, Vce or Ib, min, max, source).
VBE_LIMITS = {
    "PN2222A": [("sat", 0.15, 0.015, 0.6, 1.2, "onsemi P2N2222A/D, VBE(sat)"),
                ("sat", 0.5, 0.05, None, 2.0, "onsemi P2N2222A/D, VBE(sat)")],
    "BC337-40": [("on", 0.5, 1.0, None, 1.2, "ST BC337-25/-40 (March 2003), VBE(on)")],
    "BC327-40": [("on", 0.3, 1.0, None, 1.2, "onsemi BC327/D, VBE(on)")],
    "BD139": [("on", 0.5, 2.0, None, 1.0, "ST BD135/BD139 (2001); Central BD139 R3, VBE(on)")],
    "TIP31C": [("on", 3.0, 4.0, None, 1.8, "onsemi TIP31A/D, VBE(on) (from memory)")],
    "TIP120": [("on", 3.0, 3.0, None, 2.5, "onsemi TIP120/D, VBE(on)")],
    "TIP122": [("on", 3.0, 3.0, None, 2.5, "onsemi TIP120/D, VBE(on)")],
}


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("part", BIPOLARS)
def test_card_vbe(tmp_path, part):
    t = catalog.transistor(part)
    for kind, ic, x, lo, hi, _source in VBE_LIMITS[part]:
        vbe = (_bjt_gain(tmp_path, t, ic, x)[1] if kind == "on"
               else _bjt_sat(tmp_path, t, ic, x)[1])
        assert (lo is None or vbe >= lo) and vbe <= hi, (part, kind, ic, vbe)
    # Vbe(on) at a tenth of the rated current: about 0.65–0.8 V for one junction
    # (industrialmonitordirect.com, read in a secondary source; partly from memory), twice that for a Darlington (two junctions).
    _, vbe = _bjt_gain(tmp_path, t, 0.1 * t.imax_a, 2.0 if not t.darlington else 3.0)
    band = (1.1, 1.6) if t.darlington else (0.6, 0.85)
    assert band[0] <= vbe <= band[1], (part, vbe)


# Temperature: the gain falls in the cold and rises with heat, Vbe falls by about 2 mV/°C
# per junction.  Bands read off the makers' normalised "DC current gain" and "on voltages"
# curves (onsemi BC337/D, P2N2222A/D, TIP120/D; ST BD135/BD139), from memory: hFE at
# -20 °C 55-95 % of its 25 °C value, at +60 °C 105-145 %; dVbe/dT -1.4 to -2.6 mV/°C per
# junction at a tenth of the rated current.
@pytest.mark.requires_ngspice
@pytest.mark.parametrize("part", BIPOLARS)
def test_card_temperature_behaviour(tmp_path, part):
    t = catalog.transistor(part)
    ic, vce = 0.1 * t.imax_a, (3.0 if t.darlington else 2.0)
    h25, v25 = _bjt_gain(tmp_path, t, ic, vce, 25.0)
    h_cold, v_cold = _bjt_gain(tmp_path, t, ic, vce, -20.0)
    h_hot, v_hot = _bjt_gain(tmp_path, t, ic, vce, 60.0)
    assert 0.55 <= h_cold / h25 <= 0.95, (part, h_cold / h25)
    assert 1.05 <= h_hot / h25 <= 1.45, (part, h_hot / h25)
    junctions = 2 if t.darlington else 1
    for v, dt in ((v_cold, -45.0), (v_hot, 35.0)):
        slope = (v - v25) / dt / junctions
        assert -2.6e-3 <= slope <= -1.4e-3, (part, slope)


def test_tolerance_drift_matches_the_cards_temperature_law():
    """The tolerance draws shift gain and Vbe with ambient by straight lines; at -20 °C they
    must agree with what the cards' own temperature law (XTB, EG, XTI as in ngspice's BJT
    model) gives, so draws and ngspice decks tell the same story in the cold."""
    from sheetgen.sizing.tolerance import HFE_TC_PER_C, T_MODEL_C
    t_model, t_cold = T_MODEL_C + 273.15, -20.0 + 273.15
    for q in (t for t in catalog.transistors() if t.is_bipolar):
        for _, card in q.model.junctions():
            law = (t_cold / t_model) ** card["XTB"]     # ngspice: BF(T) = BF (T / TNOM)^XTB
            assert 1 + HFE_TC_PER_C * (-20.0 - T_MODEL_C) == pytest.approx(law, abs=0.05), q.part_number


def _mos_rds(tmp_path, t, vgs: float, id_a: float) -> float:
    body = (f"X1 d g 0 {t.model.name}\nVG g 0 DC {vgs}\nID 0 d DC {id_a}\n{_card(t.model)}")
    return _run(tmp_path, body, "op", "v(d)")[0, -1] / id_a


@pytest.mark.requires_ngspice
def test_mosfet_card(tmp_path):
    t = catalog.transistor("IRLZ44N")
    # Infineon/IR IRLZ44NS/L table (secondary extraction): RDS(on) max 0.025 Ω at 5 V
    # (ID 25 A), 0.022 Ω at 10 V (25 A), 0.035 Ω at 4 V (21 A); the currents from memory.
    assert _mos_rds(tmp_path, t, t.rds_on_vgs_v, 25.0) <= t.rds_on_ohm
    assert _mos_rds(tmp_path, t, 10.0, 25.0) <= 0.022
    assert _mos_rds(tmp_path, t, 4.0, 21.0) <= 0.035
    # VGS(th) 1.0–2.0 V at VDS = VGS, ID = 250 µA (same table)
    body = f"X1 g g 0 {t.model.name}\nIG 0 g DC {t.vgs_th_at_a}\n{_card(t.model)}"
    vth = _run(tmp_path, body, "op", "v(g)")[0, -1]
    assert t.vgs_th_v[0] <= vth <= t.vgs_th_v[1]


def _diode_vf(tmp_path, model: Model, i_a: float) -> float:
    body = f"D1 a 0 {model.name}\nI1 0 a DC {i_a}\n{_card(model)}"
    return _run(tmp_path, body, "op", "v(a)")[0, -1]


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("part", ["1N4007", "1N5819"])
def test_diode_card_forward_voltage(tmp_path, part):
    d = catalog.diode(part)
    vf = _diode_vf(tmp_path, d.model, d.vf_at_a)
    # 1N4007: 1.1 V max at 1 A (Vishay; Diodes Inc. DS28002 prints 1.0 V, also met);
    # 1N5819: 0.60 V max at 1 A (1N5817–1N5819 Version A06 sheet)
    assert 0.6 * d.vf_max_v <= vf <= d.vf_max_v
    if part == "1N4007":
        assert vf <= 1.0                               # Diodes Inc. DS28002 Rev. E-2
    if part == "1N5819":
        assert _diode_vf(tmp_path, d.model, 3.0) <= 0.900   # same sheet, at 3 A


def _diode_vf_at(tmp_path, model: Model, i_a: float, temp_c: float) -> float:
    body = f"D1 a 0 {model.name}\nI1 0 a DC {i_a}\n{_card(model)}\n.temp {temp_c:g}"
    return _run(tmp_path, body, "op", "v(a)")[0, -1]


def _our_vf(model: Model, i_a: float, is_scale: float = 1.0) -> float:
    """Forward voltage through the card with our solver's junction equation (devices.diode), RS in series."""
    from sheetgen.engine import devices
    lo, hi = 0.0, 6.0
    for _ in range(200):   # bisection on the junction voltage: current rises monotonically
        vj = 0.5 * (lo + hi)
        i, _ = devices.diode(np.array(vj), is_a=model["IS"] * is_scale, n=model["N"])
        lo, hi = (vj, hi) if i < i_a else (lo, vj)
    return float(vj + i_a * model["RS"])


# The datasheet points of each colour (typical Vf at the rated current and at 1 % of it) are
# named per colour in leds.yaml: Cree 5-mm Round LED data sheets CLD-CT011.000 (red, LC503UHR1),
# CLD-CT208.001 (white, LC513FWH1); Shenzhen Fedy FD-5WSRGB-A rev 1.0 (green, blue); QILSTE
# H-F5CSY2T (yellow, secondary).  The 1 % points and the tempcos are from memory (typical
# Vf-vs-IF curves of 5 mm AlGaInP and InGaN lamps), as the YAML marks them.
@pytest.mark.requires_ngspice
@pytest.mark.parametrize("name", [c.name for c in catalog.led_colours()])
def test_led_card_passes_both_datasheet_points(tmp_path, name):
    c = catalog.led_colour(name)
    for i_a, want in ((c.at_a, c.vf_typ_v), (c.at_a / 100, c.vf_low_v)):
        assert _diode_vf(tmp_path, c.model, i_a) == pytest.approx(want, abs=0.005), (name, i_a)  # ngspice
        assert _our_vf(c.model, i_a) == pytest.approx(want, abs=0.005), (name, i_a)              # our solver
    assert _diode_vf(tmp_path, c.model, c.at_a) <= c.vf_max_v
    # the fitted emission coefficient stays physical: 1 < N < 7 (InGaN ideality runs to about 7, from memory)
    assert 1.0 < c.model["N"] < 7.0


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("name", [c.name for c in catalog.led_colours()])
def test_led_card_tempco_at_minus_20_and_plus_60(tmp_path, name):
    """ngspice's diode temperature law on the card (EG, XTI) gives the colour's tempco, and the
    drift the tolerance draws apply in our solver (IS scaled) moves Vf the same way."""
    c = catalog.led_colour(name)
    v27 = _diode_vf_at(tmp_path, c.model, c.at_a, 27.0)
    for temp_c in (-20.0, 60.0):
        v = _diode_vf_at(tmp_path, c.model, c.at_a, temp_c)
        assert (v - v27) / (temp_c - 27.0) == pytest.approx(c.tc_v_per_c, rel=0.05), (name, temp_c)
        ours = _our_vf(c.model, c.at_a, float(c.is_drift(temp_c - 27.0, n=c.model["N"])))
        assert ours == pytest.approx(v, abs=0.005), (name, temp_c)


def test_user_led_card_keeps_the_colour_tempco():
    """A card fitted to the spec's own Vf (loads.led_model) drifts by its colour's tempco too."""
    from sheetgen.circuits.loads import led_model
    from sheetgen.inputs.spec import LedLoad
    from sheetgen.parts import led_fit
    load = LedLoad(current_a=0.015, vf_v=3.05, per_string=3, strings=1, colour="white")
    m = led_model(load)
    vj = load.vf_v - load.current_a * m["RS"]
    assert (vj - m["EG"]) / led_fit.T_NOMINAL_K == pytest.approx(catalog.led_colour("white").tc_v_per_c)
