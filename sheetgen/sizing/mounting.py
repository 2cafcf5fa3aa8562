"""Q1's heatsink as real parts: the heatsink, its insulating kit, the steps to fit them and the words.

The heat analysis says how good a heatsink must be (R_θSA at most so much);
here that becomes a catalog heatsink and insulating kit, the junction
temperature the chosen chain really gives,

    T_j = T_a + P (R_θJC + R_θCS + R_θSA),

and the cautions and steps that go with it, so every output prints the same
figures.
"""

from __future__ import annotations

import math

from sheetgen.parts import heatsinks
from sheetgen.sizing.report import Hardware, Heat, Mounting
from sheetgen.sizing.design import Design
from sheetgen.sizing.size import HEATSINK_MIN_C_PER_W

__all__ = ["choose", "with_steps", "heat_cautions", "free_air_words", "TAB_PIN"]

#: The lead a TO-220 tab is joined to inside, by the switch's kind (every catalog TO-220 part).
TAB_PIN = {"npn": "collector", "nmos": "drain"}


def choose(design: Design, heat: Heat) -> Mounting | None:
    """The heatsink and insulating kit Q1 needs at worst case, or None when free air will do."""
    if heat.heatsink_c_per_w is None:
        return None
    q = design.values.transistor
    switch = design.netlist.by_role("switch")[0]
    p = heat.hover_power_w
    budget = (heat.junction_limit_c - heat.ambient_c) / p - q.rth_jc_c_per_w
    kit = heatsinks.insulator_for(q.package)
    if kit is not None and budget - kit.rating_c_per_w < HEATSINK_MIN_C_PER_W:
        kit = None  # the kit's own resistance leaves no room: bare tab on an isolated heatsink, compound only
    r_cs = kit.rating_c_per_w if kit is not None else q.rth_cs_c_per_w
    need = budget - r_cs
    fitting = [s for s in heatsinks.heatsinks(q.package) if s.rating_c_per_w <= need]
    if fitting:
        s = fitting[0]  # the smallest that is good enough
        sink = Hardware(ref="HS1", kind="heatsink", description=f"{s.description} ({s.maker})",
                        part_number=s.part_number, rating_c_per_w=s.rating_c_per_w, package=q.package,
                        sources=s.sources)
    else:
        sink = Hardware(ref="HS1", kind="heatsink",
                        description=f"heatsink for {q.package}, {math.floor(need * 10.0) / 10.0:g} °C/W or better; none in the catalog is "
                                    "this good: choose one from a maker's table",
                        part_number="", rating_c_per_w=math.floor(need * 10.0) / 10.0, package=q.package)
    insulator = None
    if kit is not None:
        insulator = Hardware(ref="MK1", kind="insulator", description=f"{kit.name}: {kit.contents}",
                             part_number="", rating_c_per_w=kit.rating_c_per_w, package=kit.outline,
                             sources=kit.sources)
    chain = q.rth_jc_c_per_w + r_cs + sink.rating_c_per_w
    return Mounting(transistor=switch.ref, heatsink=sink, insulator=insulator, rth_jc_c_per_w=q.rth_jc_c_per_w,
                    rth_cs_c_per_w=r_cs, power_w=p, ambient_c=heat.ambient_c, junction_c=heat.ambient_c + p * chain,
                    sink_c=heat.ambient_c + p * sink.rating_c_per_w, free_air_c=heat.peak_junction_c,
                    tj_max_c=q.tj_max_c, needed_c_per_w=need)


def free_air_words(m: Mounting) -> str:
    """What free air would do, said honestly: a figure above the part's rating means nothing."""
    if m.free_air_c > m.tj_max_c:
        return f"would exceed its {m.tj_max_c:g} °C rating without the heatsink"
    return f"would reach {m.free_air_c:.0f} °C without the heatsink"


def _sink_name(m: Mounting) -> str:
    part = f" {m.heatsink.part_number}" if m.heatsink.part_number else ""
    return f"{m.heatsink.ref}{part} ({m.heatsink.rating_c_per_w:g} °C/W)"


def _steps(design: Design, m: Mounting, *, short: bool) -> list[str]:
    q = design.netlist.part(m.transistor)
    tab = TAB_PIN.get(q.kind, "middle lead")
    sink = _sink_name(m)
    if m.insulator is None:
        if short:
            return [f"Mount {q.ref} on {sink} with thermal compound; keep {m.heatsink.ref} clear of metal "
                    "and ground."]
        return [f"Mount {q.ref} on {sink} before soldering it, with a thin film of thermal compound under the tab "
                f"and one M3 screw. The tab is {q.ref}'s {tab}: {m.heatsink.ref} is live, so mount it where it "
                "touches no metal, chassis or ground."]
    if short:
        return [f"Mount {q.ref} on {sink} with kit {m.insulator.ref}: compound, mica, bushing in the tab hole, "
                "M3 screw.",
                f"Ohms from {m.heatsink.ref} to {q.ref}'s {tab}: must read open."]
    return [
        f"Mount {q.ref} on heatsink {sink} before soldering it, through the insulating kit {m.insulator.ref}: "
        f"a thin film of thermal compound on both faces of the mica washer, the washer between {q.ref}'s tab and "
        f"{m.heatsink.ref}, the insulating bushing in the tab's hole, then the M3 screw through {m.heatsink.ref}, "
        "washer and bushing; tighten firmly without cracking the mica.",
        f"Check the insulation: meter on ohms between {m.heatsink.ref} and {q.ref}'s {tab} (the middle lead, "
        f"joined to the tab inside). It must read open; any reading means the washer or bushing is out of place "
        "and the light would stay on. Stand the heatsink where air can rise through its fins.",
    ]


def with_steps(steps: tuple[str, ...], design: Design, m: Mounting | None, *, short: bool) -> tuple[str, ...]:
    """The wiring steps with the mounting ones put in after making safe: Q1 goes on its heatsink first."""
    if m is None:
        return steps
    return (steps[0], *_steps(design, m, short=short), *steps[1:])


def heat_cautions(heat: Heat, m: Mounting | None) -> list[tuple[str, str | None]]:
    """(sheet, card) cautions about heat, with the same figures as the heat table."""
    out: list[tuple[str, str | None]] = []
    if m is not None:
        kit = " with its insulating kit" if m.insulator else ""
        out.append((f"Q1 must be mounted on heatsink {_sink_name(m)}{kit}: Q1 {free_air_words(m)} if the feed "
                    "hovers half-on.",
                    f"Q1 goes on heatsink {m.heatsink.ref}{kit}: without it Q1 overheats."))
        if max(m.junction_c, m.sink_c) > 60.0:
            out.append((f"Q1 and its heatsink can get hot enough to burn (heatsink up to {m.sink_c:.0f} °C, junction "
                        f"{m.junction_c:.0f} °C in the worst case): keep them clear of wiring, trim and fingers.",
                        f"Heatsink {m.heatsink.ref} can reach {m.sink_c:.0f} °C: keep it clear of wiring and "
                        "fingers."))
        return out
    if heat.peak_junction_c > 60.0:
        out.append((f"Q1 can get hot enough to burn (up to {heat.peak_junction_c:.0f} °C at the junction in the worst "
                    "case): keep it clear of wiring, trim and fingers.",
                    f"Q1 can reach {heat.peak_junction_c:.0f} °C: keep it clear of wiring and fingers."))
    return out

