"""Choosing a transistor and standard values that meet the stated fade.

The search is discrete, over IEC 60063 values, and every candidate that may be
chosen is checked with the simulator:

1. the transistor must carry the load with margin, survive the worst supply and
   ambient in free air, and have enough *minimum* gain to be driven;
2. a closed-form first guess of the four light times (engine.measure) ranks
   every (C1, R1, R2) combination on the standard grid, with the stage's own
   parts (R3, or a current stage's R_E and divider) set by its drive rule;
3. the best-ranked combinations are checked in one batched operating-point run
   (the drive rule: a switch's base drive at minimum supply and gain, a
   current stage's LED current at maximum supply) and one batched transient
   (the four times at nominal);
4. the closed form is recalibrated on what the simulator said and the loop runs
   again, until a candidate lands within ±10 % of both fades with both delays
   within their limits;
5. the chosen design must pass every corner (sizing.corners), or it is sized
   again with a larger LED resistor or a stronger drive.

No acceptance rule is loosened to make a spec pass.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from sheetgen.parts import catalog
from sheetgen.parts import eseries
from sheetgen.engine import simulate
from sheetgen.engine.devices import VT_NOMINAL
from sheetgen.sizing import protection
from sheetgen.sizing import corners as corner_checks
from sheetgen.sizing import tolerance
from sheetgen.parts.catalog import Transistor
from sheetgen.errors import InfeasibleDesign, SpecError
from sheetgen.circuits.loads import kind_of, led_colour, rated_current_a
from sheetgen.engine.measure import HIGH, LOW, light_times, steady_light
from sheetgen.inputs.spec import Spec
from sheetgen.circuits.topologies import INPUT_PNP, TOPOLOGIES, Stage, Topology, Values, Window, topologies_for, window_for
from sheetgen.inputs.units import format_quantity
from sheetgen.sizing.design import Design
from sheetgen.sizing.hover import load_line_peak_w

ACCURACY = 0.10  # achieved fade times within ±10 % of the request
OVERDRIVE_MIN = 1.1  # Ib ≥ 1.1 · Ic / hFE_min at minimum supply to start with; the corner checks decide (common practice, no source)
OVERDRIVE_MAX = 2.0
C_MIN_F = 1e-6
C_MAX_F = 4_700e-6  # the largest timing capacitor, chosen or forced: past it a stronger stage is the answer
HOVER_MAX_W = 15.0  # a feed hovering half-on may put at most this into Q1 (common practice, no source):
#                     more needs a heatsink better than about 3 °C/W, a large finned extrusion, not a fader box's
R_CHARGE_RANGE = (22.0, 220e3)
R_BLEED_RANGE = (100.0, 220e3)  # above this, electrolytic leakage (µA) starts to rival the bleed current
HEATSINK_MIN_C_PER_W = 1.0  # a better heatsink than this is a fan-cooled extrusion, not a fader's (common practice)
TJ_LIMIT_C = 125.0  # keep the junction under 125 °C at worst case (common practice, no source)
IC_DERATE = 0.6  # run a transistor at no more than 60 % of its rated collector current (common practice, no source)
DIODE = "1N4007"
GATE_CLAMP = "1N4744A"  # 15 V zener across the gate where the supply can exceed the gate rating
GATE_DERATE = 0.8  # the gate never sees more than 80 % of its rating (or of the clamp) in normal use
GATE_RESISTOR_OHM = 1000.0  # damps the gate's charge current (common practice, no source)
DIODE_DROP_V = 0.75  # rough forward drop of the blocking diode at a few mA; first guess only
CANDIDATES_PER_ROUND = 48
C_PENALTY = 0.01  # a tenfold larger capacitor must buy 2.3 % of accuracy: cans grow and cost
ROUNDS = 4
REFINE_ROUNDS = 3  # rounds of simulating a near miss's neighbours on the grid
REFINE_WITHIN = 3.0  # a miss within this many times the band is worth searching around
#: A stage gives up after its first round when every candidate simulated missed by more than this
#: and so does the closed form, recalibrated on what the simulator said, for every grid entry not
#: yet simulated: the search picks by that guess, so the next round would try entries it already
#: places this far off, and after it the search stops anyway when the best is still past this.
FAR_OFF = 4 * ACCURACY
SETTLE_TAUS = 5.0  # the capacitor is within 1 % of its final voltage after five time constants
YIELD_ATTEMPTS = 3
STIFF_DIVIDER = 0.94  # C1's top with the weakest part's base load, against no load at all (first-guess filter)
BALLAST_V = 0.3  # a current stage's string resistors drop at least this at the rated current, to share it (common practice, no source)
SHARE_MARGIN = 1.1  # a current stage whose strings share too unequally: its string resistors sized again for 10 % less current
CURRENT_STAGE_R3_OHM = 1000.0  # isolates a current stage's base from C1; its drop is small (common practice, no source)
VBE_CORNER_SHIFT_V = 2e-3  # V_BE falls about 2 mV/°C (common practice, no source): the stage's current at a hot ambient
LED_CURRENT_MARGIN = 1.02  # the string resistor 2 % above the exact figure, for the solver's own Vce(sat)


def size(spec: Spec) -> Design:
    """Size a fader for ``spec`` or raise InfeasibleDesign saying which limit stops it.

    With ``topology: auto`` the templates for the spec's trigger are tried
    cheapest first, and the first that meets every criterion is chosen: fades
    within ±10 %, delays within their limits, every corner of supply, gain and
    temperature passed (full light, LEDs within their rating, junction under
    125 °C or a heatsink stated) and a timing capacitor no larger than 4,700 µF.  A forced topology is held to the same limits; its reason says it was forced.
    """
    forced = spec.topology != "auto"
    c_max = C_MAX_F
    passed_over: list[str] = []
    for topology in _topologies(spec):
        refusals: list[str] = []
        design = _size_topology(spec, topology, refusals, c_max)
        if design is not None:
            if forced:
                why = f"{topology.title} forced by topology: {spec.topology} in the spec"
            else:
                why = f"{topology.title} chosen" + (": the cheaper stages could not meet the spec" if passed_over
                                                    else ": the simplest stage that meets the spec")
            return replace(design, reasons=(why, *design.reasons[:1], *passed_over, *design.reasons[1:]))
        passed_over.append(f"not {topology.title}: " + "; ".join(refusals))
    raise InfeasibleDesign(_infeasible_message(spec, passed_over, c_max))


def _size_topology(spec: Spec, topology: Topology, refusals: list[str], c_max: float) -> Design | None:
    """The first transistor of this topology that meets the spec, or None (refusals say why).

    A part that is the same inside as one already refused here (a higher voltage grade of it:
    the same cards, gains, ratings and thermal path, see ``_inside``) is refused for the same
    reason without being sized again.  The sizing is deterministic and reads nothing of a
    candidate but what ``_inside`` keeps (its voltage grade was checked when it became a
    candidate), so the search would repeat the same steps to the same refusal.

    A drive's ``beyond_reach`` names a request that no candidate of its search can meet (a bound
    that holds for every value on the grid, derived in the drive's docstrings); the stage, or the
    part, is then refused with that limit and what would work, unsearched.
    """
    refused: list[tuple[tuple, str]] = []
    candidates = _transistor_candidates(spec, topology, refusals)
    drive = _drive_for(topology.stage)
    beyond = drive.beyond_reach(spec, topology) if candidates else None
    if beyond is not None:
        refusals.append(beyond)
        return None
    for q in candidates:
        twin = next((name for inside, name in refused if inside == _inside(q)), None)
        if twin is not None:
            refusals.append(f"{q.part_number}: as {twin}, the same part inside in a higher voltage grade")
            continue
        beyond = drive.beyond_reach(spec, topology, q)
        if beyond is not None:
            refusals.append(f"{q.part_number}: {beyond}")
            continue
        refused.append((_inside(q), q.part_number))
        od_min, led_scale, share_a = OVERDRIVE_MIN, 1.0, None
        rated = kind_of(spec.load).branch_rating_a(spec.load)
        try:
            for _ in range(YIELD_ATTEMPTS + 2):
                design = _size_with(spec, topology, q, od_min, c_max, led_scale, share_a)
                found = corner_checks.corners(design)
                share = corner_checks.string_share(design, found)
                fails = corner_checks.failures(design, found, share)
                if not fails:
                    sample = tolerance.draw(design)
                    drawn = tolerance.string_draws(tolerance.string_currents(design, sample), rated)
                    if drawn is None or drawn.max_a <= rated * (1 + 1e-3):
                        y = tolerance.full_brightness_yield(design, sample)
                        return replace(design, full_brightness_yield=y, corners=found, strings=share,
                                       reasons=design.reasons + tuple(f"not {r}" for r in refusals))
                    fails = [f"over {tolerance.DEFAULT_DRAWS} tolerance draws an LED string carries up to "
                             f"{format_quantity(drawn.max_a, 'A')}, over its {format_quantity(rated, 'A')} rating"]
                    led_scale *= drawn.max_a / rated * 1.01  # a larger string resistor, then size the timing again
                    continue
                over = max((c.led_current_max_a / spec.load.current_a for c in found
                            if c.led_current_max_a is not None), default=0.0)
                unequal = share is not None and len(share.typical_a) > 1 and share.ratio < share.ratio_min
                if unequal and not topology.stage.emitter_resistor:
                    # A saturating stage's string resistors set each string's current from the headroom
                    # left over the LEDs; a larger resistor lowers every string alike, so the ratio stays.
                    raise _NoFit(fails[0] + ": its string resistors share out only the headroom the LEDs leave; "
                                 "fewer LEDs per string or a higher supply would")
                if unequal:
                    # Ohm's law on the bin again, at the current the strings were found to carry at nominal,
                    # with a margin for the current the larger resistors take away.
                    now = float(np.mean(share.typical_a)) / SHARE_MARGIN
                    share_a = now if share_a is None else min(share_a / SHARE_MARGIN, now)
                elif over > 1.0:
                    led_scale *= over * 1.01  # a larger string resistor, then size the timing again
                else:
                    od_min *= 1.25  # strengthen the drive and size again
            raise _NoFit("at the corners of supply, gain and temperature: " + "; ".join(fails[:2])
                         + (f" (and {len(fails) - 2} more)" if len(fails) > 2 else ""))
        except _NoFit as exc:
            refusals.append(f"{q.part_number}: {exc}")
    return None


def _inside(q: Transistor) -> tuple:
    """Everything the sizer reads of a candidate part: all but its name, voltage grade, pinout,
    sources and its cards' names (the cards' parameters and equivalent circuits are kept)."""
    def card(m):
        return None if m is None else (m.kind, m.params, tuple((replace(p, model=None), card(p.model))
                                                               for p in m.body))
    return (replace(q, part_number="", vmax_v=0.0, sources=(), pinout="", model=None), card(q.model))


class _NoFit(Exception):
    """This transistor cannot meet the spec; the message says why."""


def _topologies(spec: Spec) -> tuple[Topology, ...]:
    """The templates to try: all for the spec's trigger, or the forced one."""
    if spec.topology == "auto":
        return topologies_for(spec.trigger)
    base = spec.topology.removesuffix("-ground")
    name = f"{base}-ground" if spec.trigger == "ground" else base
    if name not in TOPOLOGIES:
        stages = sorted({t.name.removesuffix("-ground") for t in TOPOLOGIES.values()})
        raise SpecError(f"{spec.source}: topology: '{spec.topology}' is not one of: auto, {', '.join(stages)}")
    return (TOPOLOGIES[name],)


# ------------------------------------------------------------ transistor
def ballast_ohm(*, per_string: int, strings: int, vf_spread_v: float, slope_ohm: float, current_a: float,
                ratio: float) -> float:
    """The least string resistor that keeps the dimmest string at ``ratio`` of the brightest (not rounded).

    The strings share one current, so a string whose ``per_string`` LEDs lie ``vf_spread_v`` lower
    than another's carries more by Ohm's law: the two differ by x = n·ΔVf / (R + n·r_d), with r_d
    each LED's slope resistance.  With the strings sharing N·I, the worst is one string at the top
    of the bin and all the others at the bottom: the dimmest carries I − x (N−1)/N and the brightest
    I + x/N, so dimmest ≥ ratio · brightest wants x ≤ (1 − ratio)·N·I / (N − 1 + ratio).
    """
    n, big_n = per_string, strings
    x = (1 - ratio) * big_n * current_a / (big_n - 1 + ratio)
    return max(n * vf_spread_v / x - n * slope_ohm, 0.0)


def string_hog_a(*, per_string: int, strings: int, vf_spread_v: float, slope_ohm: float, ballast: float) -> float:
    """How much more than the average a string with its LEDs at the bottom of the bin carries, the others at the top."""
    if strings < 2:
        return 0.0
    return per_string * vf_spread_v * (strings - 1) / strings / (ballast + per_string * slope_ohm)


def _led_resistor(spec: Spec, stage: Stage, scale: float = 1.0, share_a: float | None = None) -> float | None:
    load = spec.load
    kind = kind_of(load)
    if not kind.series_resistor:
        return None
    half_bin = kind.vf_spread_v(load) / 2
    if stage.emitter_resistor:
        # R_E sets the strings' total; each string's resistor shares it out.  Sized so that with one
        # string's LEDs at the bottom of the bin and another's at the top the dimmest string keeps
        # STRING_RATIO_MIN of the brightest's current at nominal supply, where C1's charge and with it
        # the current stand at about nominal / maximum of the rated current (a first guess: the
        # corners check it by simulation, and ``share_a`` then gives the current they found).
        i_nominal = load.current_a * spec.supply.nominal_v / spec.supply.max_v if share_a is None else share_a
        r = ballast_ohm(per_string=load.per_string, strings=load.strings, vf_spread_v=2 * half_bin,
                        slope_ohm=kind.slope_ohm(load), current_a=i_nominal,
                        ratio=corner_checks.STRING_RATIO_MIN) if load.strings > 1 else 0.0
        return eseries.above("E24", max(r, BALLAST_V / load.current_a))
    # R = (Vmax - n·Vf(low, hot) - Vce(sat)) / I, at the top of the supply range and the spec's ambient
    # (the forward voltage falls as the LED warms), with every LED at the bottom of its bin, rounded up
    # to E24: no string exceeds its rated current, and all are dimmer at nominal supply.  Vce(sat) is
    # taken at a third of the stage's figure, as a lightly loaded switch drops less.
    colour = led_colour(load)
    vf_hot = load.vf_v - half_bin + colour.tc_v_per_c * (spec.ambient_c - 25.0)
    headroom = spec.supply.max_v - protection.drop_v(spec) - load.per_string * vf_hot - stage.vce_sat_v / 3
    r = headroom / load.current_a * LED_CURRENT_MARGIN * scale
    if r <= 0 or spec.supply.min_v - load.per_string * (load.vf_v + half_bin) - stage.vce_sat_v <= 0:
        raise _NoFit(f"{load.per_string} LEDs of {load.vf_v:g} V (up to {load.vf_v + half_bin:g} V at the top of "
                     f"their bin) plus the switch's {stage.vce_sat_v:g} V leave no headroom at {spec.supply.min_v:g} V")
    return eseries.above("E24", r)


def _transistor_candidates(spec: Spec, topology: Topology, refusals: list[str]) -> list[Transistor]:
    """Parts of the topology's stage able to carry the load: smallest package, then highest gain."""
    if spec.load.kind not in topology.stage.loads:
        refusals.append(f"it is designed for {' and '.join(topology.stage.loads)} loads only")
        return []
    try:
        r_led = _led_resistor(spec, topology.stage)
    except _NoFit as exc:
        refusals.append(str(exc))
        return []
    i_load = rated_current_a(spec.load) * spec.supply.max_v / spec.supply.nominal_v
    limit = rated_current_a(spec.load) if topology.stage.emitter_resistor else None
    p_peak = load_line_peak_w(spec, supply_v=spec.supply.max_v, r_led_ohm=r_led, current_limit_a=limit)
    v_surge = protection.surge_v(spec)
    if p_peak > HOVER_MAX_W:
        refusals.append(f"a feed that hovers half-on would put about {p_peak:.0f} W into the switch at "
                        f"{spec.supply.max_v:g} V, more than the {HOVER_MAX_W:g} W this tool designs for; "
                        "split the load over two faders or use LEDs")
        return []
    ok = []
    for q in catalog.transistors():
        wanted = "nmos" if topology.stage.kind == "mosfet" else "npn"
        if q.polarity != wanted or q.darlington != topology.stage.darlington:
            continue
        if q.vmax_v < max(1.25 * spec.supply.max_v, v_surge):
            refusals.append(f"{q.part_number}: VCEO {q.vmax_v:g} V is too low for {spec.supply.max_v:g} V"
                            + (f" and a {v_surge:g} V load dump" if v_surge > spec.supply.max_v else ""))
            continue
        if i_load > IC_DERATE * q.imax_a:
            refusals.append(f"{q.part_number}: at {spec.supply.max_v:g} V the load would draw more than "
                            f"{IC_DERATE:.0%} of its {format_quantity(q.imax_a, 'A')} rating")
            continue
        tj = spec.ambient_c + p_peak * q.rth_ja_c_per_w
        if tj > TJ_LIMIT_C and q.package == "TO-92":
            refusals.append(f"{q.part_number}: a fade would take its junction past {TJ_LIMIT_C:g} °C in free air "
                            f"at {spec.ambient_c:g} °C")
            continue
        sink = (TJ_LIMIT_C - spec.ambient_c) / p_peak - q.rth_jc_c_per_w - q.rth_cs_c_per_w if p_peak > 0 else 1e9
        if tj > TJ_LIMIT_C and sink < HEATSINK_MIN_C_PER_W:
            refusals.append(f"{q.part_number}: with a feed that hovers half-on, keeping the junction under "
                            f"{TJ_LIMIT_C:g} °C would take a heatsink better than {HEATSINK_MIN_C_PER_W:g} °C/W")
            continue
        ok.append(q)
    package_rank = {"TO-92": 0, "TO-126": 1, "TO-220": 2}
    i_nom = rated_current_a(spec.load)
    ok.sort(key=lambda q: (package_rank.get(q.package, 3), -q.hfe_min_at(i_nom) if q.is_bipolar else q.rds_on_ohm))
    return ok


# --------------------------------------------------------------- search
def _grid(series: str, lo: float, hi: float) -> np.ndarray:
    return np.array(eseries.values(series, lo, hi))


def _snap_above(series: str, x: np.ndarray) -> np.ndarray:
    """Vectorised ``eseries.above`` over an array of values from 0.1 Ω up."""
    grid = _grid(series, 0.1, 1e8)
    return grid[np.minimum(np.searchsorted(grid, x * (1 - 1e-9), side="left"), grid.size - 1)]


def _snap_below(series: str, x: np.ndarray) -> np.ndarray:
    """Vectorised ``eseries.below`` over an array of values above 1 Ω."""
    grid = _grid(series, 1.0, 1e8)
    return grid[np.searchsorted(grid, x * (1 + 1e-9), side="right") - 1]


def current_fractions(spec: Spec) -> tuple[float, float]:
    """Fractions of the steady current at which the light crosses the low and the high level."""
    return kind_of(spec.load).current_fractions(LOW, HIGH)


def _predict(v_feed, vbe, r1, r2, r3, c, i_load, beta, fractions):
    """Closed-form light times (4, M) of the RC network driving a transistor of gain ``beta``.

    C1 first charges through R1 against R2 to Q1's base voltage, then against
    R2 and the base path; the load current follows the base current until the
    switch saturates.  Rows: delay on, fade-in, hold off, fade-out.
    """
    lo, hi = fractions
    g = 1 / r1 + 1 / r2 + 1 / r3
    vc_ss = (v_feed / r1 + vbe / r3) / g
    v_lo = vbe + lo * i_load * r3 / beta
    v_hi = vbe + hi * i_load * r3 / beta
    v0 = v_feed * r2 / (r1 + r2)
    tau0 = c * r1 * r2 / (r1 + r2)
    v_inf = vbe * r2 / (r2 + r3)
    tau_off = c * r2 * r3 / (r2 + r3)
    with np.errstate(divide="ignore", invalid="ignore"):
        t_a = tau0 * np.log(v0 / (v0 - vbe))
        t_lo = t_a + (c / g) * np.log((vc_ss - vbe) / (vc_ss - v_lo))
        t_hi = t_a + (c / g) * np.log((vc_ss - vbe) / (vc_ss - v_hi))
        o_hi = tau_off * np.log((vc_ss - v_inf) / (v_hi - v_inf))
        o_lo = tau_off * np.log((vc_ss - v_inf) / (v_lo - v_inf))
    p = np.stack([t_lo, t_hi - t_lo, o_hi, o_lo - o_hi])
    bad = (v0 <= vbe) | (vc_ss <= v_hi)
    return np.where(bad, np.inf, p)


def delay_limits(spec: Spec) -> tuple[float, float]:
    """Longest darkness after the feed goes on and longest hold at full after it goes off.

    Without a requested delay, darkness may not outlast the fade: at most
    max(0.3 s, fade-in) and max(0.5 s, fade-out).  A requested delay is met
    like a fade, within ±ACCURACY, so its limit is the top of that band.
    """
    on = spec.delay_on_s * (1 + ACCURACY) if spec.delay_on_s else max(0.3, spec.fade_in_s)
    off = spec.delay_off_s * (1 + ACCURACY) if spec.delay_off_s else max(0.5, spec.fade_out_s)
    return on, off


def _asked(spec: Spec) -> tuple[float | None, float, float | None, float]:
    """The four times asked for, in measurement order; None where only a limit applies."""
    return spec.delay_on_s, spec.fade_in_s, spec.delay_off_s, spec.fade_out_s


@dataclass
class _Trial:
    c: float
    r1: float
    r2: float
    r3: float
    re: float = 0.0  # a current stage's emitter resistor; 0 where there is none
    rd: float = 0.0  # a current stage's charge divider resistor; 0 where there is none
    t_in: float = math.nan
    t_out: float = math.nan
    delay_on: float = math.nan
    hold_off: float = math.nan
    i_load: float = math.nan
    overdrive: float = math.nan

    def error(self, spec: Spec) -> float:
        """Worst relative miss of the times asked for (see ``_misses``)."""
        times = np.array([[self.delay_on], [self.t_in], [self.hold_off], [self.t_out]])
        return float(_misses(spec, times)[0])


def _misses(spec: Spec, times: np.ndarray) -> np.ndarray:
    """Worst relative miss of the times asked for, for times (4, M) in measurement order; a delay past its
    limit counts as a miss beyond the band, and a time that is not finite as an infinite miss."""
    on_max, off_max = delay_limits(spec)
    with np.errstate(divide="ignore", invalid="ignore"):
        err = np.max([np.abs(times[i] / asked - 1) for i, asked in enumerate(_asked(spec)) if asked], axis=0)
        over = np.maximum(times[0] / on_max, times[2] / off_max) - 1
        err = np.where(over > 0, np.maximum(err, ACCURACY * 1.001 + over), err)
    return np.where(np.all(np.isfinite(times), axis=0), err, np.inf)


def _size_with(spec: Spec, topology: Topology, q: Transistor, od_min: float, c_max: float,
               led_scale: float = 1.0, share_a: float | None = None) -> Design:
    r_led = _led_resistor(spec, topology.stage, led_scale, share_a)
    drive = _drive_for(topology.stage)(spec, topology, q, od_min, r_led=r_led)
    drive.led_scale = led_scale
    base_values = Values(transistor=q, diode=catalog.diode(DIODE), r_charge_ohm=1.0, r_bleed_ohm=1.0,
                         r_base_ohm=1.0, c_timing_f=1.0, r_led_ohm=r_led,
                         input_transistor=catalog.transistor(INPUT_PNP) if topology.trigger == "ground" else None,
                         clamp=drive.clamp)
    C, R1, R2 = (a.ravel() for a in np.meshgrid(_grid("E6", C_MIN_F, c_max), _grid("E12", *R_CHARGE_RANGE),
                                                  _grid("E12", *R_BLEED_RANGE), indexing="ij"))
    C, R1, R2, R3, RE, P = drive.grid(C, R1, R2)

    k = np.ones((4, 1))  # simulator / closed-form ratios of the four times, learnt each round
    on_max, off_max = delay_limits(spec)
    asked = _asked(spec)
    wanted = np.array([[asked[0] or on_max], [spec.fade_in_s], [asked[2] or off_max], [spec.fade_out_s]])
    # Rows asked for are aimed at from both sides; a row with only a limit is penalised past it.
    two_sided = np.array([[x is not None] for x in asked])
    tried: dict[tuple, _Trial] = {}
    picked = np.zeros(C.shape, dtype=bool)
    best: _Trial | None = None
    for round_no in range(ROUNDS):
        with np.errstate(divide="ignore", invalid="ignore"):
            e = np.log(k * P / wanted)
        miss = np.where(two_sided, np.abs(e), np.maximum(e, 0))
        aimed = np.max(np.where(two_sided, miss, 0.0), axis=0)  # the worst miss of a time asked for
        score = aimed + np.where(two_sided[0], 0.0, miss[0]) + np.where(two_sided[2], 0.0, miss[2])
        score = score + C_PENALTY * np.log(C / C_MIN_F)
        order = np.argsort(score)
        picks = []
        for j in order:
            key = (C[j], R1[j], R2[j], R3[j], RE[j])
            if key in tried or not np.isfinite(score[j]):
                continue
            picks.append(_Trial(c=C[j], r1=R1[j], r2=R2[j], r3=R3[j], re=RE[j]))
            tried[key] = picks[-1]
            picked[j] = True
            if len(picks) == CANDIDATES_PER_ROUND:
                break
        if not picks:
            break
        window = _window(spec, drive, picks)
        picks = drive.check(_netlist(topology, spec, _values(base_values, picks[0]), window), picks, window)
        _simulate(spec, topology, base_values, _window(spec, drive, picks), picks)
        good = [t for t in picks if math.isfinite(t.error(spec))]
        if good:
            # Learn how far the closed form is off near the best candidates.
            near = sorted(good, key=lambda t: t.error(spec))[:8]
            idx = [int(np.flatnonzero((C == t.c) & (R1 == t.r1) & (R2 == t.r2))[0]) for t in near]
            seen = np.array([[t.delay_on, t.t_in, t.hold_off, t.t_out] for t in near]).T
            with np.errstate(divide="ignore", invalid="ignore"):
                ratio = np.log(np.maximum(seen, 1e-6) / P[:, idx])
            k = np.exp(np.nan_to_num(np.median(ratio, axis=1), posinf=0.0, neginf=0.0))[:, None]
        for t in good:
            if best is None or _rank(t, spec) < _rank(best, spec):
                best = t
        # Stop when well inside the band, or inside it after one refinement; give up early when
        # even the recalibrated guess stays far off (a limit of this stage, not of the search).
        if best is not None and best.error(spec) <= ACCURACY * (0.5 if round_no == 0 else 1.0):
            break
        if round_no >= 1 and (best is None or best.error(spec) > 4 * ACCURACY):
            break
        if (round_no == 0 and good and min(t.error(spec) for t in good) > FAR_OFF
                and _guessed_error(spec, k * P, picked) > FAR_OFF):
            break  # see FAR_OFF
    best = _refine(spec, topology, drive, base_values, (C, R1, R2, R3, RE), tried, best)
    if best is None or best.error(spec) > ACCURACY:
        raise _NoFit(_why_not(spec, best, c_max, drive.limit_note))
    return _finish(spec, topology, base_values, _window(spec, drive, [best]), best, drive.reason(best))


def _refine(spec: Spec, topology: Topology, drive, base_values: Values, grid: tuple, tried: dict,
            best: "_Trial | None") -> "_Trial | None":
    """A near miss searched around on the grid itself: the closed form steers the rounds above, but where
    it is off by more than its learnt ratio (a saturating switch's delay, a divider's loading) the nearest
    standard values of the best candidates are simulated directly, one step each way in C1, R1 and R2."""
    C, R1, R2, R3, RE = grid
    steps = [np.searchsorted(np.unique(a), a) for a in (C, R1, R2)]
    for _ in range(REFINE_ROUNDS):
        if best is None or not ACCURACY < best.error(spec) <= REFINE_WITHIN * ACCURACY:
            break
        near = sorted((t for t in tried.values() if math.isfinite(t.error(spec))), key=lambda t: t.error(spec))
        picks: list[_Trial] = []
        for t in near[:6]:
            j = np.flatnonzero((C == t.c) & (R1 == t.r1) & (R2 == t.r2))
            if not len(j):
                continue
            close = np.all([np.abs(s - s[j[0]]) <= 1 for s in steps], axis=0)
            for k in np.flatnonzero(close):
                key = (C[k], R1[k], R2[k], R3[k], RE[k])
                if key not in tried and len(picks) < CANDIDATES_PER_ROUND:
                    picks.append(_Trial(c=C[k], r1=R1[k], r2=R2[k], r3=R3[k], re=RE[k]))
                    tried[key] = picks[-1]
        window = _window(spec, drive, picks + near[:6])
        netlist = _netlist(topology, spec, _values(base_values, (picks + near)[0]), window)
        picks = drive.check(netlist, picks, window) if picks else []
        if hasattr(drive, "neighbours"):
            for t in drive.neighbours(netlist, near[:6], window):
                key = (t.c, t.r1, t.r2, t.r3, t.re)
                if key not in tried:
                    tried[key] = t
                    picks.append(t)
        if not picks:
            break
        _simulate(spec, topology, base_values, _window(spec, drive, picks), picks)
        for t in picks:
            if math.isfinite(t.error(spec)) and _rank(t, spec) < _rank(best, spec):
                best = t
    return best


def _guessed_error(spec: Spec, P: np.ndarray, picked: np.ndarray) -> float:
    """The smallest ``_Trial.error`` the closed form ``P`` (4, M), as recalibrated, gives a grid entry
    not yet simulated (``picked`` marks those that were)."""
    return float(np.where(picked, np.inf, _misses(spec, P)).min(initial=np.inf))


def _netlist(topology: Topology, spec: Spec, values: Values, window: Window):
    """The stage's netlist with the supply protection its install needs (a step that fits any stage)."""
    return protection.apply(topology.build(spec, values, window), spec)


def _window(spec: Spec, drive, trials) -> Window:
    """A simulation window that lets the slowest-charging candidate settle before release."""
    settle = SETTLE_TAUS * max((drive.charge_tau_s(t) for t in trials), default=0.0)
    return window_for(spec.fade_in_s, spec.fade_out_s, settle_s=settle)


def _rank(t: _Trial, spec: Spec) -> tuple:
    """Order of preference: inside ±5 %, then inside ±10 %, the smallest capacitor among those; outside the
    band, the nearest miss (the search steers by it and a refusal quotes it)."""
    err = t.error(spec)
    if err > ACCURACY:
        return (True, True, 0.0, err)
    return (False, err > ACCURACY / 2, t.c, err)


def _load_scale(spec: Spec, supply_v: float, stage: Stage) -> float:
    """How the saturated load current scales with the supply (LED strings are headroom-limited)."""
    return kind_of(spec.load).supply_scale(spec.load, supply_v=supply_v, nominal_v=spec.supply.nominal_v,
                                           switch_drop_v=stage.vce_sat_v)


def _values(base: Values, t: _Trial) -> Values:
    return replace(base, r_charge_ohm=t.r1, r_bleed_ohm=t.r2, r_base_ohm=t.r3, c_timing_f=t.c,
                   r_emitter_ohm=t.re or None, r_divider_ohm=t.rd or None)


def _batch_overrides(trials: list[_Trial], netlist=None) -> dict:
    ov = {("R1", "value"): np.array([t.r1 for t in trials]),
          ("R2", "value"): np.array([t.r2 for t in trials]),
          ("R3", "value"): np.array([t.r3 for t in trials]),
          ("C1", "value"): np.array([t.c for t in trials])}
    for role, field in (("emitter", "re"), ("divider", "rd")):
        found = netlist.by_role(role) if netlist is not None else ()
        if found:
            ov[(found[0].ref, "value")] = np.array([getattr(t, field) for t in trials])
    return ov


def drive_at_minimum(netlist, trials_overrides: dict, *, n: int, supply_v: float, hfe_min: float,
                     window: Window, hfe_typ: float | None = None):
    """Base and load current with the feed on, at ``supply_v``, with Q1 at minimum gain.

    A plain card's BF is set to the minimum; a Darlington's pair, whose gain is
    not one parameter, has its transistors scaled by minimum over typical.
    """
    ov = dict(trials_overrides)
    ov[("VSUPPLY", "level")] = np.full(n, supply_v)
    ov[("VFEED", "level")] = np.full(n, supply_v)
    q1 = netlist.part("Q1")
    if q1.is_composite:
        if hfe_typ is None:
            raise ValueError("a Darlington's minimum gain needs its typical gain to scale from")
        ov.update(q1.gain_overrides(np.full(n, hfe_min / hfe_typ)))
    else:
        ov[("Q1", "BF")] = np.full(n, hfe_min)
    op = simulate.operating_point(netlist, at_s=window.release_s / 2, overrides=ov, n=n)
    r3 = ov[("R3", "value")] if ("R3", "value") in ov else netlist.part("R3").value
    ib = (op.v("timer") - op.v("base")) / r3
    ic = op.i_source("VSUPPLY")
    return ib, ic


class _BaseDrive:
    """A bipolar switch: R3 is set so Q1 saturates at minimum gain and minimum supply.

    The rule is Ib ≥ od_min · Ic / hFE_min (od_min starts at 1.1) and the drive
    stays below 4/3 of that, so the light does not sit at full brightness long
    after the feed goes.
    """

    clamp = None

    @staticmethod
    def beyond_reach(spec: Spec, topology: Topology, q: Transistor | None = None) -> str | None:
        """No bound is known for this stage that a spec could pass unsearched: the search decides."""
        return None

    def __init__(self, spec: Spec, topology: Topology, q: Transistor, od_min: float, r_led: float | None = None):
        self.spec, self.q, self.od_min = spec, q, od_min
        self.od_max = od_min * OVERDRIVE_MAX / OVERDRIVE_MIN
        self.vbe_on = topology.stage.v_drive_v
        self.i_nom = rated_current_a(spec.load)
        self.hfe_min = q.hfe_min_at(self.i_nom)
        self.i_at_min = self.i_nom * _load_scale(spec, spec.supply.min_v, topology.stage)
        self.ib_rule = self.i_at_min / self.hfe_min

    def grid(self, C, R1, R2):
        """R3 for every (C1, R1, R2) by the Thevenin estimate, snapped to E24, and first-guess fades."""
        v_min = self.spec.supply.min_v
        vth = (v_min - DIODE_DROP_V) * R2 / (R1 + R2)
        rth = R1 * R2 / (R1 + R2)
        R3 = (vth - self.vbe_on) / (1.07 * self.od_min * self.ib_rule) - rth
        valid = R3 > 10.0
        if not valid.any():
            raise _NoFit(f"the feed cannot supply {format_quantity(self.od_min * self.ib_rule, 'A')} of base "
                         f"current ({self.od_min:.2g} × {format_quantity(self.i_at_min, 'A')} / hFE_min "
                         f"{self.hfe_min:.0f}) through any charge resistor")
        C, R1, R2 = C[valid], R1[valid], R2[valid]
        R3 = _snap_below("E24", R3[valid])
        v_feed = self.spec.supply.nominal_v - DIODE_DROP_V
        P = _predict(v_feed, self.vbe_on, R1, R2, R3, C, self.i_nom, self.q.hfe_typ_at(self.i_nom),
                     current_fractions(self.spec))
        return C, R1, R2, R3, np.zeros(C.shape), P

    def check(self, netlist, trials, window) -> list:
        """Step each candidate's R3 along E24 until its drive lies in the window, by DC analysis."""
        for _ in range(6):
            ib, ic = drive_at_minimum(netlist, _batch_overrides(trials), n=len(trials),
                                      supply_v=self.spec.supply.min_v, hfe_min=self.hfe_min, window=window,
                                      hfe_typ=self.q.hfe_typ_at(self.i_nom))
            od = ib * self.hfe_min / ic
            moved = False
            for t, o in zip(trials, od):
                t.overdrive = float(o)
                if o < self.od_min:
                    t.r3 = eseries.below("E24", t.r3 * 0.999)
                    moved = True
                elif o > self.od_max:
                    t.r3 = eseries.above("E24", t.r3 * 1.001)
                    moved = True
            if not moved:
                break
        return [t for t in trials if self.od_min <= t.overdrive <= self.od_max * 1.1]

    def neighbours(self, netlist, trials, window) -> list:
        """R3 one E24 step either side of each candidate's, kept while Q1 still saturates at minimum gain and
        supply: near a miss the drive window above is a first guess, and the simulation and the corners
        judge the hold and the light."""
        out = [replace(t, r3=r3) for t in trials
               for r3 in (eseries.below("E24", t.r3 * 0.999), eseries.above("E24", t.r3 * 1.001))]
        if not out:
            return []
        ib, ic = drive_at_minimum(netlist, _batch_overrides(out), n=len(out), supply_v=self.spec.supply.min_v,
                                  hfe_min=self.hfe_min, window=window, hfe_typ=self.q.hfe_typ_at(self.i_nom))
        for t, o in zip(out, ib * self.hfe_min / ic):
            t.overdrive = float(o)
        return [t for t in out if t.overdrive >= self.od_min]

    limit_note = "the base current this load needs drains C1 quickly"

    @staticmethod
    def charge_tau_s(t) -> float:
        """C1 charges through R1 against R2 and the base path (R3 into about 0.7 V)."""
        return t.c / (1 / t.r1 + 1 / t.r2 + 1 / t.r3)

    def reason(self, best) -> str:
        return (f"{self.q.part_number} chosen: the smallest package that carries {format_quantity(best.i_load, 'A')} "
                f"and is driven to {best.overdrive:.2f}× its minimum-gain base current (hFE_min "
                f"{self.hfe_min:.0f}) at {self.spec.supply.min_v:g} V")


class _GateDrive:
    """A logic-level MOSFET: the R1/R2 divider sets the gate voltage, R3 only damps the gate.

    At minimum supply the gate must reach the voltage at which the datasheet
    guarantees RDS(on) (and the highest threshold plus 2 V); at maximum supply it
    must stay below 80 % of the gate rating, or of the clamp's lowest voltage
    where a clamp is fitted (supplies above the gate rating).  The light fades
    while the gate crosses the narrow window above threshold.
    """

    #: ``fade_ratio_max`` is taken at this multiple of its derived value, ``hold_ratio_min`` at its
    #: inverse: room for what the derivations leave out (D1's own slope, the card's corner).
    FADE_BOUND_MARGIN = 1.5

    @staticmethod
    def gate_at_high(spec: Spec, stage: Stage, q: Transistor) -> float:
        """The highest gate voltage at which the light can first reach its high level, at nominal.

        The card's channel (Shichman-Hodges in the EKV form, engine/devices.mosfet) carries
        I = KP (u V_DS - V_DS^2 / 2) in its linear region and KP u^2 / 2 in saturation, u the gate's
        excess over VTO.  At the high level the load carries hi of its steady current, at most
        its rated current I: in saturation u = sqrt(2 hi I / KP).  In the linear region (V_DS < u)
        u = I_hi / (KP V_DS) + V_DS / 2 < 2 I_hi / (KP V_DS), and the LEDs' series resistor R has
        dropped (1 - hi) I_steady R less than at full, all of it now across the channel:
        u < 2 hi / ((1 - hi) KP R), whatever the current.  The smooth corner of the EKV form moves u
        by at most 2 n Vt ln 2 each side (taken twice); the source resistance adds RS I.  A lamp
        has no series resistor: there the datasheet's gate voltage for its rated RDS(on) is taken,
        as it is wherever it is lower (the channel is fully on there).
        """
        m = q.model
        lo, hi = current_fractions(spec)
        i = rated_current_a(spec.load)
        u = math.sqrt(2 * hi * i / m["KP"])
        r_led = _led_resistor(spec, stage) if kind_of(spec.load).series_resistor else None
        v_full = max(q.rds_on_vgs_v or 5.0, q.vgs_th_v[1] + 2.0)
        if r_led is None:
            return v_full
        u = max(u, 2 * hi / ((1 - hi) * m["KP"] * r_led))
        corner = 2 * 2 * m.get("N", 1.0) * VT_NOMINAL * math.log(2)
        return min(v_full, m["VTO"] + u + corner + i * m.get("RS", 0.0))

    @classmethod
    def fade_ratio_max(cls, spec: Spec, topology: Topology, q: Transistor) -> float:
        """The longest fade-in this stage gives, as a multiple of its fade-out; inf where none is known.

        The gate draws nothing, so C1 is a plain RC: it charges through D1 and R1 against R2, and
        discharges through R2 alone (D1 blocks the feed).  Between the gate voltages v_lo and
        v_hi at which the light crosses its levels, the fade-out takes C R2 ln(v_hi / v_lo) >=
        C R2 (v_hi - v_lo) / v_hi, and the fade-in at most C (v_hi - v_lo) over the least charge
        current there, (V - v_hi) / R1 - v_hi / R2 with V the feed's least voltage (``_feed_v``).
        With k = R2 / (R1 + R2):
        fade-in / fade-out <= (1 - k) v_hi / (k V - v_hi), falling with k; the sizer's grid
        keeps k >= v_full / (V_min - a diode drop), the divider that reaches the rated-RDS(on)
        gate voltage at the bottom of the supply, so the bound is taken there, with v_hi from
        ``gate_at_high``, and at FADE_BOUND_MARGIN times that for what the ideal leaves out.
        """
        s = spec.supply
        v_full = max(q.rds_on_vgs_v or 5.0, q.vgs_th_v[1] + 2.0)
        if s.min_v - DIODE_DROP_V <= v_full:
            return math.inf  # no divider reaches v_full: the grid refuses it, in its own words
        k = v_full / (s.min_v - DIODE_DROP_V)
        v = cls._feed_v(spec, topology)
        v_hi = cls.gate_at_high(spec, topology.stage, q)
        if k * v <= v_hi:
            return math.inf
        return cls.FADE_BOUND_MARGIN * (1 - k) * v_hi / (k * v - v_hi)

    @staticmethod
    def _feed_v(spec: Spec, topology: Topology) -> float:
        """The least voltage the feed puts on R1 at nominal supply: less the supply guard's drop, the
        1N4007's datasheet maximum forward drop (at far more current than a timing network draws)
        and, for a ground-switched feed, the input PNP's saturation voltage."""
        v = spec.supply.nominal_v - protection.drop_v(spec) - catalog.diode(DIODE).vf_max_v
        if topology.trigger == "ground":
            v -= max(x.max_v for x in catalog.transistor(INPUT_PNP).vce_sat)
        return v

    @classmethod
    def hold_ratio_min(cls, spec: Spec, topology: Topology, q: Transistor) -> float:
        """The shortest hold-off this stage gives, as a multiple of its fade-out; 0 where none is known.

        With the feed off C1 runs down through R2 alone, v = v_ss exp(-t / C R2), so the hold-off
        is C R2 ln(v_ss / v_hi) and the fade-out C R2 ln(v_hi / v_lo), whatever C, R1 and R2.  The
        grid's divider gives v_ss >= k V (``fade_ratio_max``); v_hi is at most ``gate_at_high``.
        The light is at its low level when the channel carries lo of the steady current; the card
        carries at most KP/2 s(u)^2 (1 + LAMBDA V) plus its leakage (s as in engine/devices.mosfet,
        the EKV form's smooth square law), so s(u_lo) >= sqrt(2 lo I / KP (1 + LAMBDA V)), with I
        taken at a quarter of the rated current (the strings are dimmer at nominal than at the top
        of the supply, and the corners may enlarge their resistors).  The bound is taken at
        1 / FADE_BOUND_MARGIN of that.  Not where a clamp holds the gate down, nor for a lamp
        (its high level is taken at v_full, too loose to bound anything).
        """
        if spec.supply.max_v > q.vgs_max_v or not kind_of(spec.load).series_resistor:
            return 0.0
        s = spec.supply
        v_full = max(q.rds_on_vgs_v or 5.0, q.vgs_th_v[1] + 2.0)
        if s.min_v - DIODE_DROP_V <= v_full:
            return 0.0
        v_ss = v_full / (s.min_v - DIODE_DROP_V) * cls._feed_v(spec, topology)
        v_hi = cls.gate_at_high(spec, topology.stage, q)
        m = q.model
        lo, _ = current_fractions(spec)
        leak = m.get("GLEAK", 0.0) * s.nominal_v
        i_lo = lo * 0.25 * rated_current_a(spec.load) - leak
        if i_lo <= 0 or v_ss <= v_hi:
            return 0.0
        w = 2.0 * m.get("N", 1.0) * VT_NOMINAL
        y = math.sqrt(2 * i_lo / (m["KP"] * (1 + m.get("LAMBDA", 0.0) * s.nominal_v)))
        v_lo = m["VTO"] + w * math.log(math.expm1(y / w))
        if v_lo <= 0 or v_lo >= v_hi:
            return 0.0
        return math.log(v_ss / v_hi) / math.log(v_hi / v_lo) / cls.FADE_BOUND_MARGIN

    @classmethod
    def beyond_reach(cls, spec: Spec, topology: Topology, q: Transistor | None = None) -> str | None:
        """A fade-in too long for this part's fade-out, or a hold-off too short for it, whatever the
        network's values: why, or None.

        The shortest fade-in allowed (the bottom of its band) against the longest fade-out (the
        top of its) is compared with ``fade_ratio_max``; the longest hold-off allowed (the top of a
        requested delay's band, or its limit) against the shortest fade-out with ``hold_ratio_min``.
        """
        if q is None:
            return None
        shortest_out, longest_out = spec.fade_out_s * (1 - ACCURACY), spec.fade_out_s * (1 + ACCURACY)
        least_hold = cls.hold_ratio_min(spec, topology, q)
        _, off_max = delay_limits(spec)
        if off_max < least_hold * shortest_out:
            asked = f"the {spec.delay_off_s:g} s hold off asked" if spec.delay_off_s else f"at most {off_max:.2g} s"
            # Unasked, the hold may last max(0.5 s, the fade-out): only a fade-out under 0.5 s gains room.
            room = off_max if spec.delay_off_s else min(off_max, 0.5)
            return (f"its gate falls from the divider's top voltage to the narrow range where the light fades only "
                    f"slowly, so it holds at full for at least about {least_hold:.2g} × its fade-out: "
                    f"{least_hold * shortest_out:.2g} s with a fade-out of {spec.fade_out_s:g} s, against {asked}; a "
                    f"fade-out of at most {room / (least_hold * (1 - ACCURACY)):.2g} s, a longer hold, or a bipolar "
                    "or current stage would suit it")
        ratio = cls.fade_ratio_max(spec, topology, q)
        shortest_in = spec.fade_in_s * (1 - ACCURACY)
        if shortest_in <= ratio * longest_out:
            return None
        return (f"its gate crosses the light's whole range within a fraction of the divider's swing, low on C1's "
                f"charge curve, so its fade-in can be at most about {ratio:.2g} × its fade-out: "
                f"{ratio * spec.fade_out_s * (1 + ACCURACY):.2g} s with a fade-out of {spec.fade_out_s:g} s, not "
                f"{spec.fade_in_s:g} s; a fade-out of at least {shortest_in / (ratio * (1 + ACCURACY)):.2g} s, or "
                "a bipolar or current stage, would suit it")

    def __init__(self, spec: Spec, topology: Topology, q: Transistor, od_min: float, r_led: float | None = None):
        self.spec, self.q = spec, q
        self.margin = od_min / OVERDRIVE_MIN  # grows if tolerance yield asks for more gate drive
        self.i_nom = rated_current_a(spec.load)
        self.v_full = max(q.rds_on_vgs_v or 5.0, q.vgs_th_v[1] + 2.0)
        self.clamp = catalog.diode(GATE_CLAMP) if spec.supply.max_v > q.vgs_max_v else None
        limit = q.vgs_max_v if self.clamp is None else min(q.vgs_max_v, self.clamp.vz_min_v)
        self.v_gate_max = GATE_DERATE * limit

    def grid(self, C, R1, R2):
        s = self.spec.supply
        ratio = R2 / (R1 + R2)
        lo = self.margin * self.v_full / (s.min_v - DIODE_DROP_V)
        hi = self.v_gate_max / (s.max_v - DIODE_DROP_V)
        valid = (ratio >= lo) & (ratio <= hi)
        if not valid.any():
            raise _NoFit(f"no divider gives the gate {self.margin * self.v_full:.1f} V at {s.min_v:g} V and "
                         f"stays under {self.v_gate_max:.1f} V at {s.max_v:g} V")
        C, R1, R2 = C[valid], R1[valid], R2[valid]
        R3 = np.full(C.shape, GATE_RESISTOR_OHM)
        m = self.q.model
        kp, vto = m["KP"], m["VTO"]
        v_inf = (s.nominal_v - DIODE_DROP_V) * R2 / (R1 + R2)
        lo, hi = current_fractions(self.spec)
        v_hi = vto + np.sqrt(2 * hi * self.i_nom / kp)  # square law: Id = KP/2 (Vgs - VTO)^2
        v_lo = vto + np.sqrt(2 * lo * self.i_nom / kp)
        tau_in, tau_out = C * R1 * R2 / (R1 + R2), C * R2
        with np.errstate(divide="ignore", invalid="ignore"):
            P = np.stack([tau_in * np.log(v_inf / (v_inf - v_lo)), tau_in * np.log((v_inf - v_lo) / (v_inf - v_hi)),
                          tau_out * np.log(v_inf / v_hi), tau_out * np.log(v_hi / v_lo)])
        return C, R1, R2, R3, np.zeros(C.shape), np.where(v_inf > v_hi, P, np.inf)

    def check(self, netlist, trials, window) -> list:
        """Keep candidates whose simulated gate voltage meets both limits."""
        s = self.spec.supply
        ov = _batch_overrides(trials, netlist)
        n = len(trials)
        out = []
        gates = {}
        for v in (s.min_v, s.max_v):
            o = dict(ov)
            o[("VSUPPLY", "level")] = o[("VFEED", "level")] = np.full(n, v)
            gates[v] = simulate.operating_point(netlist, at_s=window.release_s / 2, overrides=o, n=n).v("gate")
        for k, t in enumerate(trials):
            t.overdrive = float(gates[s.min_v][k] / self.v_full)
            if t.overdrive >= self.margin and gates[s.max_v][k] <= self.v_gate_max:
                out.append(t)
        return out

    @staticmethod
    def charge_tau_s(t) -> float:
        """The gate draws nothing: C1 charges through R1 against R2 alone."""
        return t.c / (1 / t.r1 + 1 / t.r2)

    limit_note = ("with a MOSFET the light comes on early on C1's charge curve, so its fade-in can only be a "
                  "small part of its fade-out")

    def reason(self, best) -> str:
        clamp = f", gate clamped by a {self.clamp.part_number}" if self.clamp else ""
        return (f"{self.q.part_number} chosen: the gate reaches {best.overdrive:.2f}× the {self.v_full:g} V its "
                f"on-resistance is rated at, at {self.spec.supply.min_v:g} V{clamp}")


class _CurrentDrive:
    """An emitter-degenerated NPN: R_E sets the LED current, C1's voltage sets how much of it flows.

    The R1-R_div divider before the steering diode D1 sets how far C1
    charges; R2 alone (with Q1's base) drains it, so fade-in and fade-out are
    chosen apart.  R_E is chosen so that at the top of the supply range, at the
    spec's ambient, the strings carry their rated current, and checked by DC
    analysis.  At the bottom of the range the emitter's drop plus the LEDs must
    still leave Q1 out of saturation.  The light follows C1's charge curve from
    Q1's V_BE upwards: a fade, not a snap.
    """

    clamp = None
    led_scale = 1.0

    #: The bound below at twice its ideal value, for what the ideal leaves out (see ``beyond_reach``).
    HOLD_BOUND_MARGIN = 2.0

    @classmethod
    def hold_ratio_max(cls, spec: Spec) -> float:
        """The longest hold-off this stage gives, as a multiple of its fade-out.

        With the feed off, D1 cuts C1 from the divider and C1 runs down through R2 and the base;
        the light is the emitter current, (v_C1 - V_BE) / R_E plus the base's share, so it
        falls from the moment the feed goes.  Were C1's voltage w above its end point v_inf
        (at most V_BE: R2 and the base divide V_BE) an exponential, and the light proportional
        to v_C1 - V_BE = w - a with a = V_BE - v_inf >= 0, full light at w = a + b, the crossings
        at a + hi b and a + lo b (hi, lo the light levels as fractions of the steady current) give
        hold / fade = ln((a + b) / (a + hi b)) / ln((a + hi b) / (a + lo b)), which rises with a / b
        to its limit (1 - hi) / (hi - lo) (0.125 at 10 % and 90 %).  What the ideal leaves out
        lengthens the fade against the hold: the base draws less as the light falls (C1 runs
        down ever more slowly), and V_BE falls about 60 mV per decade of current, which moves
        the low crossing far more than the high one.  The bound is taken at twice the limit.
        """
        lo, hi = current_fractions(spec)
        return cls.HOLD_BOUND_MARGIN * (1 - hi) / (hi - lo)

    @classmethod
    def beyond_reach(cls, spec: Spec, topology: Topology | None = None, q: Transistor | None = None) -> str | None:
        """A hold-off this stage cannot give with a fade-out in its band, whatever its parts: why, or None.

        The shortest hold asked (the delay's band's bottom) against the longest fade-out allowed
        (the fade's band's top) is compared with ``hold_ratio_max``; every candidate of the stage's
        search would be refused for its hold, so none is simulated.
        """
        if not spec.delay_off_s or q is not None:  # a bound of the stage, not of its part
            return None
        ratio = cls.hold_ratio_max(spec)
        longest = ratio * spec.fade_out_s * (1 + ACCURACY)
        if spec.delay_off_s * (1 - ACCURACY) <= longest:
            return None
        return (f"the light of a current stage falls as soon as the feed goes, so it holds at full for at most "
                f"{ratio:.2g} × its fade-out: about {longest:.2g} s with a fade-out of {spec.fade_out_s:g} s, not the "
                f"{spec.delay_off_s:g} s hold off asked; a hold needs a switching stage, or a fade-out of at least "
                f"{spec.delay_off_s * (1 - ACCURACY) / (ratio * (1 + ACCURACY)):.2g} s")

    def __init__(self, spec: Spec, topology: Topology, q: Transistor, od_min: float, r_led: float | None = None):
        self.spec, self.q = spec, q
        self.vbe = topology.stage.v_drive_v
        load = spec.load
        kind = kind_of(load)
        spread = kind.vf_spread_v(load)
        r_led = _led_resistor(spec, topology.stage) if r_led is None else r_led
        # With one string's LEDs at the bottom of the bin and the others' at the top, that string carries
        # more than the average: the strings' total is held down so that it too stays within its rating.
        hog = string_hog_a(per_string=load.per_string, strings=load.strings, vf_spread_v=spread,
                           slope_ohm=kind.slope_ohm(load), ballast=r_led)
        self.i_rated = load.strings * (load.current_a - hog)
        if self.i_rated <= 0.3 * rated_current_a(load):
            raise _NoFit(f"with the strings' LEDs {spread:g} V apart, {format_quantity(r_led, 'ohm')} string "
                         "resistors would leave the others too little of the current")
        # The weakest part in the cold loads the divider most.
        self.beta = q.hfe_min_at(self.i_rated) * (1 + tolerance.HFE_TC_PER_C * (corner_checks.COLD_C
                                                                               - tolerance.T_MODEL_C))
        self.r_led = r_led
        ballast = r_led * load.current_a
        # What R_E may drop at the bottom of the range, with the LEDs at the top of their bin and the
        # ballast, before Q1 saturates.
        self.room_v = (spec.supply.min_v - protection.drop_v(spec) - load.per_string * (load.vf_v + spread / 2)
                       - ballast - max(0.3, topology.stage.vce_sat_v))
        self.hot = VBE_CORNER_SHIFT_V * (spec.ambient_c - tolerance.T_MODEL_C)

    def _vc(self, supply_v, R1, RD, R2, RE, beta=None):
        """C1's steady voltage: the divider through D1, loaded by R2 and the base (R3 + β R_E into V_BE)."""
        vth = supply_v * RD / (R1 + RD) - DIODE_DROP_V
        rth = R1 * RD / (R1 + RD)
        rb = CURRENT_STAGE_R3_OHM + (self.beta if beta is None else beta) * RE
        g = 1 / rth + 1 / R2 + 1 / rb
        return (vth / rth + self.vbe / rb) / g

    def grid(self, C, R1, R2):
        s = self.spec
        if self.room_v <= 0.3:
            load = s.load
            top = load.per_string * (load.vf_v + kind_of(load).vf_spread_v(load) / 2)
            raise _NoFit(f"the LEDs (up to {top:.3g} V a string at the top of their bin) and the "
                         f"{format_quantity(self.r_led, 'ohm')} string resistors that share the current evenly "
                         f"({self.r_led * load.current_a:.2g} V) leave Q1 and its emitter resistor no room at "
                         f"{s.supply.min_v:g} V")
        target = self.i_rated / self.led_scale
        # C1's top voltage at the bottom of the range, cold: R_E then drops 80 % of the room there.
        vc_min = self.vbe + self.hot + 0.8 * self.room_v
        RD, RE = R1.copy(), np.full(C.shape, 10.0)
        for _ in range(4):  # the divider, R_E and the base's load on C1 settle together
            rth = R1 * RD / (R1 + RD)
            rb = CURRENT_STAGE_R3_OHM + self.beta * RE
            vth = (vc_min * (1 / rth + 1 / R2 + 1 / rb) - self.vbe / rb) * rth + DIODE_DROP_V
            k = np.clip(vth / s.supply.min_v, 0.02, 0.98)
            RD = R1 * k / (1 - k)
            RE = np.maximum((self._vc(s.supply.max_v, R1, RD, R2, RE) - self.vbe + self.hot) / target, 0.1)
        RD = _snap_above("E12", RD)
        RE = _snap_above("E24", np.maximum((self._vc(s.supply.max_v, R1, RD, R2, RE) - self.vbe + self.hot)
                                           / target, 0.1))
        x_min = self._vc(s.supply.min_v, R1, RD, R2, RE) - self.vbe - self.hot
        # The weakest part's base current may not pull C1 down enough to dim the light (the corners' 90 %).
        x_stiff = self._vc(s.supply.min_v, R1, RD, R2, RE, beta=self.beta * 1e3) - self.vbe - self.hot
        valid = (x_min >= 0.3) & (x_min <= self.room_v) & (RD >= 100.0) & (x_min >= STIFF_DIVIDER * x_stiff)
        if not valid.any():
            raise _NoFit(f"no divider sets C1 between {self.vbe + 0.3:.1f} V and {self.vbe + self.room_v:.1f} V "
                         "over the supply range")
        C, R1, R2, RD, RE = C[valid], R1[valid], R2[valid], RD[valid], RE[valid]
        R3 = np.full(C.shape, CURRENT_STAGE_R3_OHM)
        vc = self._vc(s.supply.nominal_v, R1, RD, R2, RE)
        rb = CURRENT_STAGE_R3_OHM + self.beta * RE
        lo, hi = current_fractions(s)
        v_lo, v_hi = self.vbe + lo * (vc - self.vbe), self.vbe + hi * (vc - self.vbe)
        tau_in = C / (1 / (R1 * RD / (R1 + RD)) + 1 / R2 + 1 / rb)
        v_inf = self.vbe * R2 / (R2 + rb)
        tau_out = C * R2 * rb / (R2 + rb)
        with np.errstate(divide="ignore", invalid="ignore"):
            P = np.stack([tau_in * np.log(vc / (vc - v_lo)), tau_in * np.log((vc - v_lo) / (vc - v_hi)),
                          tau_out * np.log((vc - v_inf) / (v_hi - v_inf)),
                          tau_out * np.log((v_hi - v_inf) / (v_lo - v_inf))])
        self.dividers = dict(zip(zip(C, R1, R2, R3, RE), RD))
        return C, R1, R2, R3, RE, np.where(np.isfinite(P) & (P > 0), P, np.inf)

    def check(self, netlist, trials, window) -> list:
        """Set each R_E on E24 so the strings carry at most their rating at the top of the supply range."""
        s = self.spec
        n = len(trials)
        target = self.i_rated / self.led_scale
        for t in trials:
            t.rd = self.dividers.get((t.c, t.r1, t.r2, t.r3, t.re), t.rd)
        for _ in range(2):
            ov = _batch_overrides(trials, netlist)
            ov[("VSUPPLY", "level")] = ov[("VFEED", "level")] = np.full(n, s.supply.max_v)
            op = simulate.operating_point(netlist, at_s=window.release_s / 2, overrides=ov, n=n)
            i = kind_of(s.load).branch_currents(netlist, op.v, ov).sum(axis=0)
            for t, ii, x in zip(trials, i, op.v("emitter")):
                # With V_BE lower by the heat of the spec's ambient, the emitter sits that much higher.
                t.re = eseries.above("E24", max(x + self.hot, 1e-3) / target)
                t.overdrive = float(ii / target)
        return trials

    @staticmethod
    def charge_tau_s(t) -> float:
        """C1 charges from the R1-R_div divider through D1, against R2.

        Twice the plain RC figure: D1's own resistance grows as its current
        falls, so the last of the charge comes slowly.
        """
        return 2.0 * (t.c * t.r2 / (1 + t.r2 / (t.r1 * t.rd / (t.r1 + t.rd))) if t.rd else t.c * t.r2)

    limit_note = "the current stage's light follows C1 over its whole charge, so fades can only be as long as C1 allows"

    def reason(self, best) -> str:
        return (f"{self.q.part_number} as a current stage: its emitter resistor "
                f"{format_quantity(best.re, 'ohm')} holds the LED strings at or under their rating at "
                f"{self.spec.supply.max_v:g} V, and the light follows C1's charge")


_DRIVES = {"bjt": _BaseDrive, "mosfet": _GateDrive, "current": _CurrentDrive}


def _drive_for(stage: Stage):
    """The drive rule of a stage: a current stage, a bipolar switch or a MOSFET."""
    return _DRIVES["current" if stage.emitter_resistor else stage.kind]


def _simulate(spec, topology, base, window, trials) -> None:
    """Nominal transient of every candidate in one batch; fills t_in, t_out, i_load."""
    if not trials:
        return
    netlist = _netlist(topology, spec, _values(base, trials[0]), window)
    ov = _batch_overrides(trials, netlist)
    n = len(trials)
    op = simulate.operating_point(netlist, at_s=window.release_s / 2, overrides=ov, n=n)
    steady = op.i_source("VSUPPLY")
    tr = simulate.transient(netlist, overrides=ov, n=n)
    glow = kind_of(spec.load).light(netlist, tr.v, ov)
    times = light_times(tr.t_s, glow, release_s=window.release_s,
                        full=steady_light(tr.t_s, glow, release_s=window.release_s))
    for k, (t, s) in enumerate(zip(trials, steady)):
        t.delay_on, t.t_in = float(times.delay_on_s[k]), float(times.fade_in_s[k])
        t.hold_off, t.t_out = float(times.hold_off_s[k]), float(times.fade_out_s[k])
        t.i_load = float(s)


def _why_not(spec: Spec, best: _Trial | None, c_max: float, note: str) -> str:
    if best is None:
        return "no combination of standard values gave both fades inside the simulated window"
    cap = format_quantity(best.c, "F")
    msg = (f"the closest it gets is fade-in {best.t_in:.2g} s, fade-out {best.t_out:.2g} s "
           f"(C1 {cap}, R1 {format_quantity(best.r1, 'ohm')}, R2 {format_quantity(best.r2, 'ohm')}, "
           f"R3 {format_quantity(best.r3, 'ohm')})")
    on_max, off_max = delay_limits(spec)
    if spec.delay_off_s and best.hold_off < spec.delay_off_s * (1 - ACCURACY):
        return (msg + f"; the light holds at full only {best.hold_off:.2g} s after the feed goes (asked "
                f"{spec.delay_off_s:g} s): a hold comes from driving the switch far past what it needs, and "
                "this stage runs out of drive or capacitor first")
    if spec.delay_on_s and best.delay_on < spec.delay_on_s * (1 - ACCURACY):
        return (msg + f"; the light shows after only {best.delay_on:.2g} s (asked {spec.delay_on_s:g} s): a "
                "wait in the dark needs C1 to charge far before the switch starts, which the fade-in leaves no "
                "room for")
    if best.delay_on > on_max:
        return (msg + f"; the light stays dark {best.delay_on:.2g} s before it shows (at most {on_max:.2g} s "
                "allowed): a saturating switch turns the light on over a narrow slice of C1's voltage")
    if best.hold_off > off_max:
        return (msg + f"; the light holds at full {best.hold_off:.2g} s after the feed goes (at most "
                f"{off_max:.2g} s allowed): the drive that keeps it saturated also keeps it on")
    slow = best.t_out < spec.fade_out_s * (1 - ACCURACY) or best.t_in < spec.fade_in_s * (1 - ACCURACY)
    if best.c >= c_max * 0.999 and slow:
        msg += f"; a slower fade needs a timing capacitor above the {format_quantity(c_max, 'F')} limit, because {note}"
    elif best.c <= C_MIN_F * 1.001 and not slow:
        msg += f"; a faster fade needs a timing capacitor below {format_quantity(C_MIN_F, 'F')}"
    else:
        msg += f"; {note}"
    return msg


def _infeasible_message(spec: Spec, refusals: list[str], c_max: float) -> str:
    delays = "".join(f", {name} {t:g} s" for name, t in (("delay on", spec.delay_on_s), ("hold off", spec.delay_off_s))
                     if t)
    lines = [f"no design meets fade-in {spec.fade_in_s:g} s and fade-out {spec.fade_out_s:g} s{delays} for this load "
             f"within ±{ACCURACY:.0%} (timing capacitor at most {format_quantity(c_max, 'F')}):"]
    lines += [f"  - {r}" for r in refusals]
    hints = []
    if spec.fade_in_s > 2 * spec.fade_out_s:
        hints.append("a fade-in much longer than the fade-out needs a large charge resistor against a small "
                     "bleed resistor, which leaves too little drive; bring the two times closer together")
    if kind_of(spec.load).refusal_hint:
        hints.append(kind_of(spec.load).refusal_hint)
    if spec.topology != "auto":
        hints.append("topology: auto lets the sizer move to a stronger stage")
    hints.append("a shorter fade-in, fade times nearer 1-5 s, or a lighter load are easiest to reach")
    lines.append("What would work: " + "; ".join(hints) + ".")
    return "\n".join(lines)


# ---------------------------------------------------------------- ratings
POWER_RATINGS_W = (0.25, 0.5, 1.0, 2.0, 3.0)
DERATE = 2.0  # resistors run at no more than half their rating (common practice, no source)
CAP_DERATE = 0.8  # capacitor working voltage ≤ 80 % of rating (common practice, no source)


def _power_rating(ref: str, p_w: float) -> float:
    for r in POWER_RATINGS_W:
        if p_w * DERATE <= r:
            return r
    raise _NoFit(f"{ref} would dissipate {p_w:.2f} W at maximum supply, more than a {POWER_RATINGS_W[-1]:g} W "
                 f"part takes with {DERATE:g}× derating (an LED string that long on this supply wants a "
                 "constant-current driver, or fewer LEDs per string)")


def _cap_rating(v: float) -> float:
    for r in catalog.capacitors().ratings_v:
        if v <= CAP_DERATE * r:
            return r
    raise InfeasibleDesign(f"the timing capacitor sees {v:.1f} V, above the highest rating with margin")


def _finish(spec, topology, base, window, best: _Trial, reason: str) -> Design:
    values = _values(base, best)
    netlist = _netlist(topology, spec, values, window)
    vmax = spec.supply.max_v
    # The highest supply, and a 60 s jump start where the supply protection is fitted: with the cut-off
    # holding the drive down, the charge and base resistors carry more than at full light.
    levels = np.array([vmax, protection.jump_v(spec) or vmax])
    ov = {("VSUPPLY", "level"): levels, ("VFEED", "level"): levels}
    op = simulate.operating_point(netlist, at_s=window.release_s / 2, overrides=ov, n=2)
    ratings = []
    for part in netlist.parts:
        if part.kind == "resistor":
            v = op.v(part.net("1")) - op.v(part.net("2"))
            ratings.append((part.ref, None, _power_rating(part.ref, float(np.max(v * v)) / part.value)))
    ratings.append(("C1", _cap_rating(vmax), None))
    values = replace(values, ratings=tuple(ratings))
    netlist = _netlist(topology, spec, values, window)
    return Design(spec=spec, topology=topology, values=values, netlist=netlist, load_current_a=best.i_load,
                  fade_in_s=best.t_in, fade_out_s=best.t_out, overdrive=best.overdrive, reasons=(reason,),
                  delay_on_s=best.delay_on, hold_off_s=best.hold_off)
