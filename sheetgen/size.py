"""Choosing a transistor and standard values that meet the stated fade.

The search is discrete, over IEC 60063 values, and every candidate that may be
chosen is checked with the simulator:

1. the transistor must carry the load with margin, survive the worst supply and
   ambient in free air, and have enough *minimum* gain to be driven hard;
2. a closed-form first guess of both fade times ranks every (C1, R1, R2)
   combination on the standard grid, with R3 set by the drive rule;
3. the best-ranked combinations are checked in one batched operating-point run
   (drive at minimum supply and minimum gain: Ib ≥ 1.5 Ic / hFE_min, at most 2×)
   and one batched transient (fade times at nominal);
4. the closed form is recalibrated on what the simulator said and the loop runs
   again, until a candidate lands within ±10 % of both requested times.

The saturation rule is never loosened to make a spec pass.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from . import catalog, eseries, simulate, tolerance
from .catalog import Transistor
from .errors import InfeasibleDesign, SpecError
from .loads import rated_current_a
from .measure import fade_times
from .spec import LampLoad, LedLoad, Spec
from .topologies import TOPOLOGIES, Topology, Values, Window, window_for
from .units import format_quantity

ACCURACY = 0.10  # achieved fade times within ±10 % of the request
OVERDRIVE_MIN = 1.5  # Ib ≥ 1.5 · Ic / hFE_min at minimum supply (the rule)
OVERDRIVE_MAX = 2.0
C_MIN_F, C_MAX_F = 1e-6, 10_000e-6
R_CHARGE_RANGE = (22.0, 470e3)
R_BLEED_RANGE = (100.0, 470e3)  # above this, electrolytic leakage (µA) rivals the bleed current
TJ_LIMIT_C = 125.0  # keep the junction under 125 °C at worst case (common practice, no source)
IC_DERATE = 0.6  # run a transistor at no more than 60 % of its rated collector current (common practice, no source)
VCE_SAT_ESTIMATE_V = 0.2  # Vce(sat) 0.1-0.3 V for small-signal parts (check-values §8, a*)
VBE_ON_V = 0.75  # rough Vbe while driven hard; only for the first guess, the simulator decides
DIODE = "1N4007"
DIODE_DROP_V = 0.75  # rough forward drop of the blocking diode at a few mA; first guess only
CANDIDATES_PER_ROUND = 48
C_PENALTY = 0.01  # a tenfold larger capacitor must buy 2.3 % of accuracy: cans grow and cost
ROUNDS = 4
YIELD_ATTEMPTS = 3


@dataclass(frozen=True)
class Design:
    """A sized fader: the chosen parts, its netlist and what it achieves at nominal."""

    spec: Spec
    topology: Topology
    values: Values
    netlist: "object"
    load_current_a: float
    fade_in_s: float
    fade_out_s: float
    overdrive: float
    reasons: tuple[str, ...]
    full_brightness_yield: float = float("nan")  # over the tolerance draws, set once accepted


def size(spec: Spec) -> Design:
    """Size a fader for ``spec`` or raise InfeasibleDesign saying which limit stops it."""
    topology = _topology(spec)
    if spec.trigger != "positive":
        raise InfeasibleDesign(
            "trigger: a ground-switched feed needs an input stage that turns the grounded wire into "
            "a charge current; this version sizes positive (switched +) feeds only. Wire the fader "
            "from a positive switched feed, or use a relay driven by the ground-switched wire.")
    refusals: list[str] = []
    for q in _transistor_candidates(spec, refusals):
        od_min = OVERDRIVE_MIN
        try:
            for _ in range(YIELD_ATTEMPTS):
                design = _size_with(spec, topology, q, refusals, od_min)
                y = tolerance.full_brightness_yield(design, tolerance.draw(design))
                if y >= tolerance.YIELD_REQUIRED:
                    return replace(design, full_brightness_yield=y)
                od_min *= 1.25  # strengthen the base drive and size again
            raise _NoFit(f"only {y:.1%} of tolerance draws reach full brightness, even driven "
                         f"{od_min / 1.25:.2g}× harder than saturation needs")
        except _NoFit as exc:
            refusals.append(f"{q.part_number}: {exc}")
    raise InfeasibleDesign(_infeasible_message(spec, refusals))


class _NoFit(Exception):
    """This transistor cannot meet the spec; the message says why."""


def _topology(spec: Spec) -> Topology:
    name = "npn" if spec.topology == "auto" else spec.topology
    if name not in TOPOLOGIES:
        known = ", ".join(["auto", *TOPOLOGIES])
        raise SpecError(f"{spec.source}: topology: '{spec.topology}' is not one of: {known}")
    return TOPOLOGIES[name]


# ------------------------------------------------------------ transistor
def load_line_peak_w(spec: Spec, *, supply_v: float, r_led_ohm: float | None) -> float:
    """Largest steady dissipation in the switch as it moves along the load line.

    This is the worst case of a feed that hovers half-way: the transistor holds
    whatever current the base allows, and the rest of the supply lies across it.
    """
    load = spec.load
    if isinstance(load, LedLoad):
        # LED string as an ideal drop n·Vf plus its resistor; P = (V - nVf)^2 / 4R.
        r_total = r_led_ohm / load.strings
        headroom = max(supply_v - load.per_string * load.vf_v, 0.0)
        return headroom**2 / (4.0 * r_total)
    f = catalog.filament()
    # Steady states of the filament along its own I-V curve (radiation balances V·I).
    t = np.linspace(f.t_room_k * 1.01, f.t_hot_k * 1.3, 2000)
    p_rated = load.power_w
    r_hot = load.rated_v**2 / p_rated
    r = r_hot * (t / f.t_hot_k) ** f.alpha
    p = p_rated * (t**4 - f.t_room_k**4) / (f.t_hot_k**4 - f.t_room_k**4)
    i = np.sqrt(p / r) * load.count
    v_lamp = np.sqrt(p * r)
    p_q = (supply_v - v_lamp) * i
    return float(np.max(np.where(v_lamp <= supply_v, p_q, 0.0)))


def _led_resistor(spec: Spec) -> float | None:
    load = spec.load
    if not isinstance(load, LedLoad):
        return None
    # R = (Vs - n·Vf - Vce(sat)) / I, rounded up to E24 so the string never exceeds its current.
    r = (spec.supply.nominal_v - load.per_string * load.vf_v - VCE_SAT_ESTIMATE_V) / load.current_a
    return eseries.above("E24", r)


def _transistor_candidates(spec: Spec, refusals: list[str]) -> list[Transistor]:
    """NPN parts able to carry the load, smallest package first, then highest minimum gain."""
    r_led = _led_resistor(spec)
    i_load = rated_current_a(spec.load) * spec.supply.max_v / spec.supply.nominal_v
    p_peak = load_line_peak_w(spec, supply_v=spec.supply.max_v, r_led_ohm=r_led)
    ok = []
    for q in catalog.transistors():
        if q.polarity != "npn" or q.darlington:
            continue
        if q.vmax_v < 1.25 * spec.supply.max_v:
            refusals.append(f"{q.part_number}: VCEO {q.vmax_v:g} V is too low for {spec.supply.max_v:g} V")
            continue
        if i_load > IC_DERATE * q.imax_a:
            refusals.append(f"{q.part_number}: the load draws {format_quantity(i_load, 'A')}, more than "
                            f"{IC_DERATE:.0%} of its {format_quantity(q.imax_a, 'A')} rating")
            continue
        tj = spec.ambient_c + p_peak * q.rth_ja_c_per_w
        if tj > TJ_LIMIT_C and q.package == "TO-92":
            refusals.append(f"{q.part_number}: up to {p_peak:.2f} W while fading would take the junction "
                            f"to {tj:.0f} °C in free air at {spec.ambient_c:g} °C")
            continue
        ok.append(q)
    package_rank = {"TO-92": 0, "TO-126": 1, "TO-220": 2}
    i_nom = rated_current_a(spec.load)
    ok.sort(key=lambda q: (package_rank.get(q.package, 3), -q.hfe_min_at(i_nom)))
    return ok


# --------------------------------------------------------------- search
def _grid(series: str, lo: float, hi: float) -> np.ndarray:
    return np.array(eseries.values(series, lo, hi))


def _snap_below(series: str, x: np.ndarray) -> np.ndarray:
    """Vectorised ``eseries.below`` over an array of values above 1 Ω."""
    grid = _grid(series, 1.0, 1e8)
    return grid[np.searchsorted(grid, x * (1 + 1e-9), side="right") - 1]


def _predict(v_feed, vbe, r1, r2, r3, c, i_load, beta):
    """Closed-form fade times of the RC network driving a transistor of gain ``beta``."""
    g = 1 / r1 + 1 / r2 + 1 / r3
    vc_ss = (v_feed / r1 + vbe / r3) / g
    vc90 = vbe + 0.9 * i_load * r3 / beta
    vc10 = vbe + 0.1 * i_load * r3 / beta
    v0 = v_feed * r2 / (r1 + r2)
    tau0 = c * r1 * r2 / (r1 + r2)
    with np.errstate(divide="ignore", invalid="ignore"):
        t_a = tau0 * np.log(v0 / (v0 - vbe))
        t_b = (c / g) * np.log((vc_ss - vbe) / (vc_ss - vc90))
        v_inf = vbe * r2 / (r2 + r3)
        t_out = c * r2 * r3 / (r2 + r3) * np.log((vc_ss - v_inf) / (vc10 - v_inf))
    bad = (v0 <= vbe) | (vc_ss <= vc90)
    return np.where(bad, np.inf, t_a + t_b), np.where(bad, np.inf, t_out)


def _base_for_drive(v_feed_min, r1, r2, ib_needed):
    """Largest E24 base resistor giving at least the needed drive, by the Thevenin estimate."""
    vth = (v_feed_min - DIODE_DROP_V) * r2 / (r1 + r2)
    rth = r1 * r2 / (r1 + r2)
    r3 = (vth - VBE_ON_V) / ib_needed - rth
    return r3


@dataclass
class _Trial:
    c: float
    r1: float
    r2: float
    r3: float
    t_in: float = math.nan
    t_out: float = math.nan
    i_load: float = math.nan
    overdrive: float = math.nan

    def error(self, spec: Spec) -> float:
        if not (math.isfinite(self.t_in) and math.isfinite(self.t_out)):
            return math.inf
        return max(abs(self.t_in / spec.fade_in_s - 1), abs(self.t_out / spec.fade_out_s - 1))


def _size_with(spec: Spec, topology: Topology, q: Transistor, refusals: list[str], od_min: float) -> Design:
    diode = catalog.diode(DIODE)
    r_led = _led_resistor(spec)
    window = window_for(spec.fade_in_s, spec.fade_out_s)
    i_nom = rated_current_a(spec.load)
    hfe_min = q.hfe_min_at(i_nom)
    hfe_typ = q.hfe_typ_at(i_nom)
    v_min = spec.supply.min_v
    i_at_min = i_nom * _load_scale(spec, v_min)
    ib_rule = i_at_min / hfe_min  # Ic / hFE_min at minimum supply

    cs = _grid("E6", C_MIN_F, C_MAX_F)
    r1s = _grid("E12", *R_CHARGE_RANGE)
    r2s = _grid("E12", *R_BLEED_RANGE)
    C, R1, R2 = (a.ravel() for a in np.meshgrid(cs, r1s, r2s, indexing="ij"))
    R3 = _base_for_drive(v_min, R1, R2, 1.07 * od_min * ib_rule)
    valid = R3 > 10.0
    C, R1, R2, R3 = C[valid], R1[valid], R2[valid], R3[valid]
    if C.size == 0:
        raise _NoFit(f"the feed cannot supply {format_quantity(od_min * ib_rule, 'A')} of base current "
                     f"({od_min:.2g} × {format_quantity(i_at_min, 'A')} / hFE_min {hfe_min:.3g}) through any charge "
                     "resistor")
    R3 = _snap_below("E24", R3)
    v_feed = spec.supply.nominal_v - DIODE_DROP_V
    p_in, p_out = _predict(v_feed, VBE_ON_V, R1, R2, R3, C, i_nom, hfe_typ)

    k_in, k_out = 1.0, 1.0  # simulator / closed-form ratios, learnt each round
    tried: dict[tuple, _Trial] = {}
    best: _Trial | None = None
    for round_no in range(ROUNDS):
        e_in = np.log(k_in * p_in / spec.fade_in_s)
        e_out = np.log(k_out * p_out / spec.fade_out_s)
        score = np.maximum(np.abs(e_in), np.abs(e_out)) + C_PENALTY * np.log(C / C_MIN_F)
        order = np.argsort(score)
        picks = []
        for j in order:
            key = (C[j], R1[j], R2[j], R3[j])
            if key in tried or not np.isfinite(score[j]):
                continue
            picks.append(_Trial(c=C[j], r1=R1[j], r2=R2[j], r3=R3[j]))
            tried[key] = picks[-1]
            if len(picks) == CANDIDATES_PER_ROUND:
                break
        if not picks:
            break
        picks = _fix_drive(spec, topology, q, diode, r_led, window, picks, hfe_min, od_min)
        _simulate(spec, topology, q, diode, r_led, window, picks)
        good = [t for t in picks if math.isfinite(t.error(spec))]
        if good:
            # Learn how far the closed form is off near the best candidates.
            near = sorted(good, key=lambda t: t.error(spec))[:8]
            idx = [int(np.flatnonzero((C == t.c) & (R1 == t.r1) & (R2 == t.r2))[0]) for t in near]
            k_in = float(np.exp(np.median([math.log(t.t_in / p_in[i]) for t, i in zip(near, idx)])))
            k_out = float(np.exp(np.median([math.log(t.t_out / p_out[i]) for t, i in zip(near, idx)])))
        for t in good:
            if best is None or _rank(t, spec) < _rank(best, spec):
                best = t
        # Stop when well inside the band, or inside it after one refinement.
        if best is not None and best.error(spec) <= ACCURACY * (0.5 if round_no == 0 else 1.0):
            break
    if best is None or best.error(spec) > ACCURACY:
        raise _NoFit(_why_not(spec, best, tried.values()))
    return _finish(spec, topology, q, diode, r_led, window, best, hfe_min, refusals)


def _rank(t: _Trial, spec: Spec) -> tuple:
    """Order of preference: inside ±5 %, then inside ±10 %; the smallest capacitor among those."""
    err = t.error(spec)
    return (err > ACCURACY, err > ACCURACY / 2, t.c, err)


def _load_scale(spec: Spec, supply_v: float) -> float:
    """How the saturated load current scales with the supply (LED strings are headroom-limited)."""
    load = spec.load
    if isinstance(load, LedLoad):
        drop = load.per_string * load.vf_v + VCE_SAT_ESTIMATE_V
        return max(supply_v - drop, 0.0) / max(spec.supply.nominal_v - drop, 1e-9)
    # A filament's current rises roughly as V^0.57 (check-values §3, zetatalk8 derived exponents).
    return (supply_v / spec.supply.nominal_v) ** 0.57


def _values(q, diode, r_led, t: _Trial) -> Values:
    return Values(transistor=q, diode=diode, r_charge_ohm=t.r1, r_bleed_ohm=t.r2, r_base_ohm=t.r3,
                  c_timing_f=t.c, r_led_ohm=r_led)


def _batch_overrides(trials: list[_Trial]) -> dict:
    return {("R1", "value"): np.array([t.r1 for t in trials]),
            ("R2", "value"): np.array([t.r2 for t in trials]),
            ("R3", "value"): np.array([t.r3 for t in trials]),
            ("C1", "value"): np.array([t.c for t in trials])}


def drive_at_minimum(netlist, trials_overrides: dict, *, n: int, supply_v: float, hfe_min: float,
                     window: Window):
    """Base and load current with the feed on, at ``supply_v``, with Q1 at minimum gain."""
    ov = dict(trials_overrides)
    ov[("VSUPPLY", "level")] = np.full(n, supply_v)
    ov[("VFEED", "level")] = np.full(n, supply_v)
    ov[("Q1", "BF")] = np.full(n, hfe_min)
    op = simulate.operating_point(netlist, at_s=window.release_s / 2, overrides=ov, n=n)
    r3 = ov[("R3", "value")] if ("R3", "value") in ov else netlist.part("R3").value
    ib = (op.v("timer") - op.v("base")) / r3
    ic = op.i_source("VSUPPLY")
    return ib, ic


def _fix_drive(spec, topology, q, diode, r_led, window, trials, hfe_min, od_min) -> list[_Trial]:
    """Step each candidate's R3 along E24 until its drive lies in the window od_min…4/3·od_min."""
    od_max = od_min * OVERDRIVE_MAX / OVERDRIVE_MIN
    netlist = topology.build(spec, _values(q, diode, r_led, trials[0]), window)
    for _ in range(6):
        ib, ic = drive_at_minimum(netlist, _batch_overrides(trials), n=len(trials),
                                  supply_v=spec.supply.min_v, hfe_min=hfe_min, window=window)
        od = ib * hfe_min / ic
        moved = False
        for t, o in zip(trials, od):
            t.overdrive = float(o)
            if o < od_min:
                t.r3 = eseries.below("E24", t.r3 * 0.999)
                moved = True
            elif o > od_max:
                t.r3 = eseries.above("E24", t.r3 * 1.001)
                moved = True
        if not moved:
            break
    return [t for t in trials if od_min <= t.overdrive <= od_max * 1.1]


def _simulate(spec, topology, q, diode, r_led, window, trials) -> None:
    """Nominal transient of every candidate in one batch; fills t_in, t_out, i_load."""
    if not trials:
        return
    netlist = topology.build(spec, _values(q, diode, r_led, trials[0]), window)
    ov = _batch_overrides(trials)
    n = len(trials)
    op = simulate.operating_point(netlist, at_s=window.release_s / 2, overrides=ov, n=n)
    steady = op.i_source("VSUPPLY")
    tr = simulate.transient(netlist, overrides=ov, n=n)
    t_in, t_out = fade_times(tr.t_s, tr.i_source("VSUPPLY"), release_s=window.release_s, steady_a=steady)
    for t, a, b, s in zip(trials, t_in, t_out, steady):
        t.t_in, t.t_out, t.i_load = float(a), float(b), float(s)


def _why_not(spec: Spec, best: _Trial | None, tried) -> str:
    if best is None:
        return "no combination of standard values gave both fades inside the simulated window"
    cap = format_quantity(best.c, "F")
    msg = (f"the closest it gets is fade-in {best.t_in:.2g} s, fade-out {best.t_out:.2g} s "
           f"(C1 {cap}, R1 {format_quantity(best.r1, 'ohm')}, R2 {format_quantity(best.r2, 'ohm')}, "
           f"R3 {format_quantity(best.r3, 'ohm')})")
    slow = best.t_out < spec.fade_out_s * (1 - ACCURACY) or best.t_in < spec.fade_in_s * (1 - ACCURACY)
    if best.c >= C_MAX_F * 0.999 and slow:
        msg += (f"; a slower fade needs a timing capacitor above the {format_quantity(C_MAX_F, 'F')} limit, "
                "because the base current this load needs drains C1 quickly")
    elif best.c <= C_MIN_F * 1.001 and not slow:
        msg += f"; a faster fade needs a timing capacitor below {format_quantity(C_MIN_F, 'F')}"
    return msg


def _infeasible_message(spec: Spec, refusals: list[str]) -> str:
    lines = [f"no single-transistor design meets fade-in {spec.fade_in_s:g} s and fade-out "
             f"{spec.fade_out_s:g} s for this load within ±{ACCURACY:.0%}:"]
    lines += [f"  - {r}" for r in refusals]
    hints = []
    if isinstance(spec.load, LampLoad) or rated_current_a(spec.load) > 0.3:
        hints.append("a Darlington or MOSFET stage needs far less base current and capacitance for heavy loads")
    hints.append("fade times nearer 1-5 s, or a lighter load, are easiest to reach")
    lines.append("What would work: " + "; ".join(hints) + ".")
    return "\n".join(lines)


# ---------------------------------------------------------------- ratings
POWER_RATINGS_W = (0.25, 0.5, 1.0, 2.0, 3.0)
DERATE = 2.0  # resistors run at no more than half their rating (the 2× derating)
CAP_DERATE = 0.8  # capacitor working voltage ≤ 80 % of rating (check-values §10, common practice)


def _power_rating(p_w: float) -> float:
    for r in POWER_RATINGS_W:
        if p_w * DERATE <= r:
            return r
    raise InfeasibleDesign(f"a resistor would dissipate {p_w:.2f} W, more than a {POWER_RATINGS_W[-1]:g} W "
                           f"part can take with {DERATE:g}× derating")


def _cap_rating(v: float) -> float:
    for r in catalog.capacitors().ratings_v:
        if v <= CAP_DERATE * r:
            return r
    raise InfeasibleDesign(f"the timing capacitor sees {v:.1f} V, above the highest rating with margin")


def _finish(spec, topology, q, diode, r_led, window, best: _Trial, hfe_min, refusals) -> Design:
    values = _values(q, diode, r_led, best)
    netlist = topology.build(spec, values, window)
    vmax = spec.supply.max_v
    ov = {("VSUPPLY", "level"): np.array([vmax]), ("VFEED", "level"): np.array([vmax])}
    op = simulate.operating_point(netlist, at_s=window.release_s / 2, overrides=ov, n=1)
    ratings = []
    for part in netlist.parts:
        if part.kind == "resistor":
            v = float(op.v(part.net("1"))[0] - op.v(part.net("2"))[0])
            ratings.append((part.ref, None, _power_rating(v * v / part.value)))
    ratings.append(("C1", _cap_rating(vmax), None))
    values = replace(values, ratings=tuple(ratings))
    netlist = topology.build(spec, values, window)
    reasons = [f"{q.part_number} chosen: the smallest package that carries "
               f"{format_quantity(best.i_load, 'A')} and is driven to {best.overdrive:.2f}× its minimum-gain base "
               f"current (hFE_min {hfe_min:.3g}) at {spec.supply.min_v:g} V"]
    reasons += [f"not {r}" for r in refusals]
    return Design(spec=spec, topology=topology, values=values, netlist=netlist, load_current_a=best.i_load,
                  fade_in_s=best.t_in, fade_out_s=best.t_out, overdrive=best.overdrive, reasons=tuple(reasons))
