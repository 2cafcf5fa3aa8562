"""Words for the builder: wiring steps from the netlist and the cautions that apply.

Steps are derived from the netlist, one per board net, naming every lead that
joins there in the words a builder sees on the part (banded end, longer lead).
Off-board connections are worded by function, as each topology describes them.

A wiring card has a tenth of a sheet's room, so ``brief`` words the same steps
and cautions again in fewer words: how to tell the leads apart is said once,
and a run of LEDs in series is one step instead of one per joint.  Both come
from the same netlist walk, so the card and the sheet cannot disagree.
"""

from __future__ import annotations

from sheetgen.parts import catalog
from sheetgen.model.kinds import KINDS
from sheetgen.model.netlist import GROUND, Part
from sheetgen.sizing.report import Brief, Harness, Heat
from sheetgen.sizing.size import Design
from sheetgen.inputs.spec import LampLoad
from sheetgen.inputs.units import format_quantity

_LEAD_KEY = {
    "led": "LED: anode = longer lead, cathode = shorter lead (flat side)",
    "diode": "diode: cathode = banded end",
    "capacitor": "electrolytic: + = longer lead, − = striped side",
}
_LEAD_NAMES = {"C": "collector", "B": "base", "E": "emitter", "D": "drain", "G": "gate", "S": "source"}


def _lead(part: Part, pin: str, pin_count: dict[str, int], *, short: bool = False) -> str:
    if part.kind == "resistor":
        if pin_count.get(part.ref, 0) == 0:
            return part.ref if short else f"{part.ref} (one end)"
        return f"{part.ref} (other end)"
    entry = KINDS[part.kind]
    return f"{part.ref} {(entry.lead_short if short else entry.lead_words)[pin]}"


def _led_runs(pins_on: dict[str, list[tuple[Part, str]]]) -> dict[str, tuple[str, ...]]:
    """Runs of two or more LEDs in series: each joint's net -> the run's LED refs, in order.

    A joint is a net holding exactly one LED's cathode and the next LED's
    anode and nothing else.
    """
    nxt: dict[str, tuple[str, str]] = {}  # LED ref -> (next LED ref, the joint's net)
    for net, on in pins_on.items():
        if len(on) == 2 and all(part.kind == "led" for part, _ in on):
            (a, pa), (b, pb) = on
            if {pa, pb} == {"A", "K"}:
                first, second = (a, b) if pa == "K" else (b, a)
                nxt[first.ref] = (second.ref, net)
    runs: dict[str, tuple[str, ...]] = {}
    for head in sorted(set(nxt) - {ref for ref, _ in nxt.values()}):
        chain, joints, ref = [head], [], head
        while ref in nxt:
            ref, net = nxt[ref]
            chain.append(ref)
            joints.append(net)
        runs.update((net, tuple(chain)) for net in joints)
    return runs


_String = tuple[str, tuple[str, ...]]  # (series resistor ref, its LEDs from the anode end)


def _led_strings(pins_on: dict[str, list[tuple[Part, str]]],
                 runs: dict[str, tuple[str, ...]]) -> dict[str, tuple[_String, ...]]:
    """LED strings (a series resistor into one LED or a run): every net they cover -> all the strings.

    A string starts at a net holding exactly one resistor lead and one LED's
    anode.  All strings are worded in one card step, placed where the first
    of their nets comes in the walk; a lone single LED is left to a plain step.
    """
    run_from = {run[0]: run for run in runs.values()}
    strings: list[_String] = []
    covered: list[str] = []
    for net, on in pins_on.items():
        if len(on) != 2:
            continue
        kinds = {part.kind: (part, pin) for part, pin in on}
        if set(kinds) != {"resistor", "led"} or kinds["led"][1] != "A":
            continue
        led = kinds["led"][0].ref
        run = run_from.get(led, (led,))
        strings.append((kinds["resistor"][0].ref, run))
        covered += [net] + [joint for joint, r in runs.items() if r == run]
    if not strings or (len(strings) == 1 and len(strings[0][1]) == 1):
        return {}
    group = tuple(strings)
    return {net: group for net in covered}


def _strings_step(group: tuple[_String, ...]) -> str:
    def leds(run: tuple[str, ...]) -> str:
        return f"{run[0]}\u2013{run[-1]}" if len(run) > 1 else run[0]

    if len(group) == 1:
        r, run = group[0]
        return f"Join {r}, {run[0]} anode; then {run[0]} to {run[-1]} in series: each cathode to the next anode."
    listed = ", ".join(f"{r} \u2192 {leds(run)}" for r, run in group)
    if all(len(run) == 1 for _, run in group):
        how = "one end of each resistor to its LED's anode"
    else:
        how = "one end of the resistor to the first LED's anode, then each cathode to the next anode"
    return f"Build {len(group)} LED strings alike ({listed}): in each, {how}."


def wiring_steps(design: Design, harness: Harness, *, short: bool = False) -> tuple[str, ...]:
    """Numbered-in-order wiring steps for the board and the harness.

    ``short`` words them for a card: lead names without their descriptions
    (the card prints ``lead_key`` once) and the LED strings in one step.
    """
    nl = design.netlist
    spec = design.spec
    steps = ["Disconnect the battery first: a short can start a fire." if short else
             "Disconnect the battery (or switch off and unplug the bench supply) before you start."]
    pins_on: dict[str, list[tuple[Part, str]]] = {}
    for part in nl.parts:
        for pin, net in part.pins:
            pins_on.setdefault(net, []).append((part, pin))
    for part in nl.parts:
        if part.kind not in ("npn", "pnp", "nmos"):
            continue
        q = catalog.transistor(part.part_number)
        if not q.pinout:
            continue
        leads = ", ".join(_LEAD_NAMES[x] for x in q.pinout)
        if short:
            steps.append(f"{part.ref} {q.part_number} ({q.package}), printed face to you, leads down: {leads} "
                         "(check its data sheet).")
        else:
            steps.append(f"Identify {part.ref} ({q.part_number}, {q.package}) leads: printed face towards you, "
                         f"leads down, left to right: {leads}. Makers differ; check the data sheet of the part "
                         "in your hand.")
    off_board = dict(design.topology.wiring)
    probe_of = {net: label for label, net in nl.probes}
    runs = _led_runs(pins_on) if short else {}
    strings = _led_strings(pins_on, runs) if short else {}
    worded: set[tuple] = set()
    used: dict[str, int] = {}
    for net, on in pins_on.items():
        if net in off_board:
            continue
        if len(on) < 2:
            continue
        if net in strings or net in runs:  # one step says it all, at the first of its nets
            if net in strings and strings[net] not in worded:
                worded.add(strings[net])
                steps.append(_strings_step(strings[net]))
                for r, _ in strings[net]:
                    used[r] = used.get(r, 0) + 1
            elif net not in strings and runs[net] not in worded:
                run = runs[net]
                worded.add(run)
                steps.append(f"Join {run[0]} to {run[-1]} in series: each cathode to the next anode.")
            continue
        words = []
        for part, pin in on:
            words.append(_lead(part, pin, used, short=short))
            used[part.ref] = used.get(part.ref, 0) + 1
        if short:
            steps.append("Join " + ", ".join(words) + (f": test point {probe_of[net].split()[0]}." if net in probe_of
                                                       else "."))
            continue
        where = f" This is test point {probe_of[net]}." if net in probe_of else ""
        steps.append("Join " + ", ".join(words) + "." + where)
    wire = f"{harness.wire_mm2:g} mm² ({harness.wire_awg} AWG)"
    supply_v = format_quantity(spec.supply.nominal_v, "V")
    for net, what in design.topology.wiring:
        leads = []
        for part, pin in pins_on.get(net, []):
            leads.append(_lead(part, pin, used, short=short))
            used[part.ref] = used.get(part.ref, 0) + 1
        target = ", ".join(leads)
        other_ends = [lead[:-len(" (other end)")] for lead in leads if lead.endswith(" (other end)")]
        if short and len(other_ends) >= 2:  # "R4, R5, R6, R7 (other ends)" reads faster than four brackets
            rest = [lead for lead in leads if not lead.endswith(" (other end)")]
            target = ", ".join([", ".join(other_ends) + " (other ends)", *rest])
        if short:  # the card's harness box gives the wire size once
            if net == "supply":
                steps.append(f"Fit the {harness.fuse_a:g} A fuse in the {supply_v} {what} near its source; wire it "
                             f"to {target}.")
            elif net == GROUND:
                steps.append(f"Join {target}; wire them to {what}.")
            else:  # the card's harness box says which way the feed switches
                steps.append(f"Wire the {what.split(' (')[0]} to {target}.")
            continue
        if net == "supply":
            steps.append(
                         f"Fit a {harness.fuse_a:g} A fuse in the {supply_v} {what} as close to its "
                         f"source (battery or distribution point) as you can, and run {wire} wire from it to "
                         f"{target}.")
        elif net == GROUND:
            steps.append(f"Join {target}, and run {wire} wire from there to {what}; use a clean, tight "
                         "ground point.")
        else:
            steps.append(f"Connect the {what} to {target}, with {wire} wire.")
    steps.append("Check every joint against the schematic, reconnect, then take the readings: feed off, then on."
                 if short else
                 "Check every joint against the schematic, then reconnect the supply and take the readings "
                 "in the bench table with the feed off, then on.")
    return tuple(steps)


def lead_key(design: Design) -> str:
    """How to tell the leads apart, for the parts this design has: said once on a card."""
    kinds = {part.kind for part in design.netlist.parts}
    said = [text for kind, text in _LEAD_KEY.items() if kind in kinds]
    return "; ".join(said) + "." if said else ""


def brief(design: Design, harness: Harness, heat: Heat) -> Brief:
    """The card's words: the short steps, the lead key and the short cautions."""
    return Brief(steps=wiring_steps(design, harness, short=True), leads=lead_key(design),
                 cautions=cautions(design, heat, short=True))


def cautions(design: Design, heat: Heat, *, short: bool = False) -> tuple[str, ...]:
    """The safety cautions for this build, chosen by its load, its heat and where it goes.

    Each caution is written twice, (sheet, card); ``short`` picks the card's
    words, so a caution can never be on one and missing from the other.  Two
    are not repeated on a card because the card already says them elsewhere:
    disconnecting the battery is its first step, and the low-voltage scope its
    footer on both sides.
    """
    spec = design.spec
    out = [
        ("Fuse the always-on feed close to its source, sized to protect the wire (the fuse protects the wire, "
         "not the lamp).",
         "Fuse the always-on feed near its source: the fuse protects the wire."),
        ("Disconnect the battery before working on the wiring; a short on a battery feed can start a fire.",
         None),
    ]
    if heat.heatsink_c_per_w is not None:
        out.append((f"Q1 needs a heatsink of {heat.heatsink_c_per_w:.1f} °C/W or better: without one its junction "
                    f"could reach {heat.peak_junction_c:.0f} °C if the feed hovers half-on.",
                    f"Q1 needs a heatsink of {heat.heatsink_c_per_w:.1f} °C/W or better."))
    if heat.peak_junction_c > 60.0:
        hot = min(heat.peak_junction_c, 150)
        out.append((f"Q1 can get hot enough to burn (up to about {hot:.0f} °C at the "
                    "junction in the worst case): keep it clear of wiring, trim and fingers.",
                    f"Q1 can reach about {hot:.0f} °C: keep it clear of wiring and fingers."))
    if isinstance(spec.load, LampLoad):
        out.append(("Lamp glass and holders run hot: use heat-rated holders, keep them clear of fabric, trim and "
                    "wiring, and let them cool before touching.",
                    "Lamps run hot: heat-rated holders, clear of fabric and trim."))
    if spec.install == "vehicle":
        out.append(("Airbag and seat-belt restraint wiring runs in pillars and headliners (often in yellow "
                    "sleeving): do not cut, splice or pierce it, and do not route new wiring over it.",
                    "Never cut or splice airbag or seat-belt wiring (often yellow)."))
        out.append(("Vehicles whose interior lights are run by a body controller (dimmed, pulsed or load-sensed "
                    "feeds) may not suit a plain fader: measure the feed before you fit it.",
                    "A body-controlled feed (dimmed, pulsed, load-sensed) may not suit a fader: measure it first."))
    if spec.install == "boat":
        out.append(("On a boat use tinned marine wire, sealed connections and ignition-protected parts where "
                    "fuel vapour can collect.",
                    "Boats: tinned wire, sealed joints, ignition-protected parts near fuel vapour."))
    out.append(("sheetgen covers low-voltage DC (5–32 V) only. Follow your local vehicle, marine and electrical "
                "codes; where they call for licensed work, have it done by a licensed installer.",
                None))
    return tuple(card if short else sheet for sheet, card in out if card is not None or not short)
