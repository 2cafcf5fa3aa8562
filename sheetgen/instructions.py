"""Words for the builder: wiring steps from the netlist and the cautions that apply.

Steps are derived from the netlist, one per board net, naming every lead that
joins there in the words a builder sees on the part (banded end, longer lead).
Off-board connections are worded by function, as each topology describes them.
"""

from __future__ import annotations

from .circuit import GROUND, Part
from .report import Harness, Heat
from .size import Design
from .spec import LampLoad
from .units import format_quantity

_PIN_WORDS = {
    "diode": {"A": "anode (plain end)", "K": "cathode (banded end)"},
    "led": {"A": "anode (longer lead)", "K": "cathode (shorter lead, flat side)"},
    "capacitor": {"+": "+ lead (longer lead)", "-": "− lead (striped side)"},
    "npn": {"C": "collector", "B": "base", "E": "emitter"},
    "pnp": {"C": "collector", "B": "base", "E": "emitter"},
    "nmos": {"D": "drain", "G": "gate", "S": "source"},
    "lamp": {"1": "terminal", "2": "other terminal"},
}


def _lead(part: Part, pin: str, pin_count: dict[str, int]) -> str:
    if part.kind == "resistor":
        return f"{part.ref} ({'one end' if pin_count.get(part.ref, 0) == 0 else 'other end'})"
    return f"{part.ref} {_PIN_WORDS[part.kind][pin]}"


def wiring_steps(design: Design, harness: Harness) -> tuple[str, ...]:
    """Numbered-in-order wiring steps for the board and the harness."""
    nl = design.netlist
    spec = design.spec
    q = design.values.transistor
    steps = ["Disconnect the battery (or switch off and unplug the bench supply) before you start."]
    pins_on: dict[str, list[tuple[Part, str]]] = {}
    for part in nl.parts:
        for pin, net in part.pins:
            pins_on.setdefault(net, []).append((part, pin))
    if q.pinout:
        leads = ", ".join({"C": "collector", "B": "base", "E": "emitter", "D": "drain", "G": "gate",
                           "S": "source"}[x] for x in q.pinout)
        steps.append(f"Identify Q1 ({q.part_number}, {q.package}) leads: printed face towards you, leads down, "
                     f"left to right: {leads}. Makers differ; check the data sheet of the part in your hand.")
    off_board = dict(design.topology.wiring)
    probe_of = {net: label for label, net in nl.probes}
    used: dict[str, int] = {}
    for net, on in pins_on.items():
        if net in off_board:
            continue
        if len(on) < 2:
            continue
        words = []
        for part, pin in on:
            words.append(_lead(part, pin, used))
            used[part.ref] = used.get(part.ref, 0) + 1
        where = f" This is test point {probe_of[net]}." if net in probe_of else ""
        steps.append("Join " + ", ".join(words) + "." + where)
    wire = f"{harness.wire_mm2:g} mm² ({harness.wire_awg} AWG)"
    supply_v = format_quantity(spec.supply.nominal_v, "V")
    for net, what in design.topology.wiring:
        leads = []
        for part, pin in pins_on.get(net, []):
            leads.append(_lead(part, pin, used))
            used[part.ref] = used.get(part.ref, 0) + 1
        target = ", ".join(leads)
        if net == "supply":
            steps.append(f"Fit a {harness.fuse_a:g} A fuse in the {supply_v} {what} as close to its "
                         f"source (battery or distribution point) as you can, and run {wire} wire from it to "
                         f"{target}.")
        elif net == GROUND:
            steps.append(f"Join {target}, and run {wire} wire from there to {what}; use a clean, tight "
                         "ground point.")
        else:
            steps.append(f"Connect the {what} to {target}, with {wire} wire.")
    steps.append("Check every joint against the schematic, then reconnect the supply and take the readings "
                 "in the bench table with the feed off, then on.")
    return tuple(steps)


def cautions(design: Design, heat: Heat) -> tuple[str, ...]:
    """The safety cautions for this build, chosen by its load, its heat and where it goes."""
    spec = design.spec
    out = [
        "Fuse the always-on feed close to its source, sized to protect the wire (the fuse protects the wire, "
        "not the lamp).",
        "Disconnect the battery before working on the wiring; a short on a battery feed can start a fire.",
    ]
    if heat.heatsink_c_per_w is not None:
        out.append(f"Q1 needs a heatsink of {heat.heatsink_c_per_w:.0f} °C/W or better: without one its junction "
                   f"could reach {heat.peak_junction_c:.0f} °C if the feed hovers half-on.")
    if heat.peak_junction_c > 60.0:
        out.append(f"Q1 can get hot enough to burn (up to about {min(heat.peak_junction_c, 150):.0f} °C at the "
                   "junction in the worst case): keep it clear of wiring, trim and fingers.")
    if isinstance(spec.load, LampLoad):
        out.append("Lamp glass and holders run hot: use heat-rated holders, keep them clear of fabric, trim and "
                   "wiring, and let them cool before touching.")
    if spec.install == "vehicle":
        out.append("Airbag and seat-belt restraint wiring runs in pillars and headliners (often in yellow "
                   "sleeving): do not cut, splice or pierce it, and do not route new wiring over it.")
        out.append("Vehicles whose interior lights are run by a body controller (dimmed, pulsed or load-sensed "
                   "feeds) may not suit a plain fader: measure the feed before you fit it.")
    if spec.install == "boat":
        out.append("On a boat use tinned marine wire, sealed connections and ignition-protected parts where "
                   "fuel vapour can collect.")
    out.append("sheetgen covers low-voltage DC (5–32 V) only. Follow your local vehicle, marine and electrical "
               "codes; where they call for licensed work, have it done by a licensed installer.")
    return tuple(out)
