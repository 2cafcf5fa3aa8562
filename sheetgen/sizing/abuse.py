"""Supply faults, simulated: a reversed battery, a jump start and a suppressed load dump.

Each fault is held at DC (the conservative reading of a 60 s jump start and a
400 ms load dump, whose capacitor has time to follow only partly), with the
switched feed on and off; the feed wire follows the supply, as it does in a
vehicle.  Every part's voltage, power or current is then set beside its
rating, and each LED string's current beside the spec's current: a jump start
may dim or cut the light, never overrun a part.
"""

from __future__ import annotations

import numpy as np

from sheetgen.engine import simulate
from sheetgen.circuits.loads import kind_of, led_strings
from sheetgen.model.netlist import Part
from sheetgen.parts import catalog, protective
from sheetgen.sizing import protection
from sheetgen.sizing.report import AbuseCase, Stress
from sheetgen.sizing.design import Design

__all__ = ["abuse_cases", "VEBO_V", "LED_VR_V", "CAP_REVERSE_V"]

VEBO_V = 5.0  # emitter-base reverse rating of the catalog's bipolar parts, 5-6 V in their data sheets (from memory)
LED_VR_V = 5.0  # reverse voltage rating of a 5 mm indicator LED, 5 V in the usual data sheets (from memory)
#: IEC 60115-1 short-time overload: 2.5 × rated voltage (6.25 × rated power) for 5 s without harm (from memory).
SHORT_TIME_OVERLOAD = 6.25
SHORT_TIME_S = 5.0
CAP_REVERSE_V = 1.0  # an aluminium electrolytic takes about 1 V reversed without harm (common practice, no source)


def _cases(design: Design) -> list[tuple[str, str, float, float | None, str]]:
    spec = design.spec
    s = protection.system_of(spec)
    guard = design.netlist.by_role("reverse_polarity")
    tvs = design.netlist.by_role("surge")
    cut = design.netlist.by_role("cutoff")
    g = guard[0].ref if guard else "nothing"
    out = [("reverse", "Battery reversed", -spec.supply.max_v, None,
            f"{g} blocks: nothing conducts" if guard else "no guard fitted")]
    if s.jump_v:
        out.append(("jump", "Jump start", s.jump_v, s.jump_s,
                    f"{cut[0].ref} cuts the light" if cut else "no cut-off fitted"))
    if s.dump_v:
        out.append(("dump", "Load dump, suppressed", s.dump_v, s.dump_s,
                    (f"below {tvs[0].ref}'s breakdown; " if tvs else "") +
                    (f"{cut[0].ref} cuts the light" if cut else "no cut-off fitted")))
    return out


def abuse_cases(design: Design) -> tuple[AbuseCase, ...]:
    """The faults the design's supply system can throw at it, each with every part's worst stress."""
    if not protection.wanted(design.spec):
        return ()
    nl = design.netlist
    kind = kind_of(design.spec.load)
    cases = _cases(design)
    levels = np.array([v for _, _, v, _, _ in cases])
    ov = {("VSUPPLY", "level"): levels, ("VFEED", "level"): levels}
    n = len(cases)
    on = simulate.operating_point(nl, at_s=nl.release_s * 0.999, overrides=ov, n=n)
    off = simulate.operating_point(nl, at_s=nl.stop_s, overrides=ov, n=n)
    nominal = simulate.operating_point(nl, at_s=nl.release_s * 0.999).i_source("VSUPPLY")[0]
    out = []
    for k, (name, title, v, duration, guard) in enumerate(cases):
        states = [(lambda net, op=op: float(op.v(net)[k])) for op in (on, off)]
        short = duration is not None and duration <= SHORT_TIME_S
        stresses = tuple(st for part in nl.parts for st in _part_stresses(design, part, states, short_time=short))
        branches = kind.branch_currents(nl, states[0])
        leds = [] if branches is None else [float(i) for i in branches]
        rating = kind.branch_rating_a(design.spec.load)
        if rating is not None:
            stresses += tuple(Stress(ref=r.ref, quantity=kind.branch_words, value=i, limit=rating, unit="A")
                              for r, i in zip(nl.by_role("led_series"), leds))
        stresses += tuple(_string_stresses(design, states))
        supply_a = max(abs(float(op.i_source("VSUPPLY")[k])) for op in (on, off))
        feed_a = max(abs(float(op.i_source("VFEED")[k])) for op in (on, off))
        load = float(on.i_source("VSUPPLY")[k]) / nominal if nominal > 0 else 0.0
        out.append(AbuseCase(name=name, title=title, supply_v=float(v), duration_s=duration, supply_a=supply_a,
                             feed_a=feed_a, load_fraction=max(load, 0.0), led_max_a=max(leds) if leds else None,
                             stresses=stresses, guard=guard))
    return tuple(out)


def _worst(ref: str, quantity: str, values: list[float], limit: float, unit: str) -> Stress:
    return Stress(ref=ref, quantity=quantity, value=float(max(values)), limit=float(limit), unit=unit)


def _part_stresses(design: Design, part: Part, states, *, short_time: bool = False) -> list[Stress]:
    """The figures of one part that have a rating, worst over the feed states.

    ``short_time``: the fault lasts under a second (a load dump), so a resistor is held to its
    short-time overload rating rather than its continuous power.
    """
    def across(a: str, b: str) -> list[float]:
        return [v(part.net(a)) - v(part.net(b)) for v in states]

    ref = part.ref
    if part.kind == "resistor":
        power = [d * d / part.value for d in across("1", "2")]
        if not part.rating_w:
            return []
        limit = part.rating_w * (SHORT_TIME_OVERLOAD if short_time else 1.0)
        return [_worst(ref, "short-time power" if short_time else "power", power, limit, "W")]
    if part.kind == "capacitor":
        d = across("+", "-")
        out = [_worst(ref, "reverse voltage", [-x for x in d], CAP_REVERSE_V, "V")]
        if part.rating_v:
            out.append(_worst(ref, "voltage", d, part.rating_v, "V"))
        return out
    if part.kind == "diode":
        reverse = [-x for x in across("A", "K")]
        d = protective.find(part.part_number)
        if part.role == "cutoff_zener":  # works in breakdown: held to its regulator current, IZM
            series = design.netlist.by_role("cutoff_series")[0]
            current = [(v(series.net("1")) - v(series.net("2"))) / series.value for v in states]
            return [_worst(ref, "zener current", current, d.if_avg_a, "A")]
        if d.vz_min_v is not None:  # a TVS or gate clamp must stay below its breakdown in these faults
            return [_worst(ref, "reverse voltage", reverse, d.vz_min_v, "V")]
        return [_worst(ref, "reverse voltage", reverse, d.vrrm_v, "V")]
    if part.kind == "led":
        return []  # per string, in _string_stresses: the solver folds a chain of like LEDs into one
    if part.kind == "lamp":
        return [_worst(ref, "voltage", [abs(x) for x in across("1", "2")], part.rating_v, "V")]
    if part.kind in ("npn", "pnp"):
        sign = 1.0 if part.kind == "npn" else -1.0
        vce = [sign * x for x in across("C", "E")]
        veb = [sign * -x for x in across("B", "E")]
        return [_worst(ref, "VCE", vce, part.rating_v, "V"), _worst(ref, "reverse VBE", veb, VEBO_V, "V")]
    if part.kind == "nmos":
        q = catalog.transistor(part.part_number)
        return [_worst(ref, "VDS", across("D", "S"), part.rating_v, "V"),
                _worst(ref, "VGS", [abs(x) for x in across("G", "S")], q.vgs_max_v, "V")]
    return []


def _string_stresses(design: Design, states) -> list[Stress]:
    """Each LED's reverse voltage, the string's shared evenly among its LEDs."""
    out = []
    for chain in led_strings(design.netlist):
        if not chain:
            continue
        reverse = [(v(chain[-1].net("K")) - v(chain[0].net("A"))) / len(chain) for v in states]
        out.append(_worst(f"{chain[0].ref}" + (f"–{chain[-1].ref}" if len(chain) > 1 else ""), "reverse voltage",
                          reverse, LED_VR_V, "V"))
    return out
