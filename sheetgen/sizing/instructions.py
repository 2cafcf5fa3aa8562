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

from dataclasses import dataclass

from sheetgen.board import words
from sheetgen.board.model import Board
from sheetgen.parts import catalog
from sheetgen.parts import installs
from sheetgen.model.kinds import KINDS
from sheetgen.model.netlist import GROUND, Part
from sheetgen.sizing import mounting
from sheetgen.sizing import runs as offboard
from sheetgen.sizing.report import Brief, Harness, Heat
from sheetgen.sizing.design import Design
from sheetgen.circuits.loads import kind_of
from sheetgen.inputs.units import format_quantity

_LEAD_KEY = {
    "led": "LED: anode = longer lead, cathode = shorter lead (flat side)",
    "diode": "diode: cathode = banded end",
    "capacitor": "electrolytic: + = longer lead, − = striped side",
}
_LEAD_NAMES = {"C": "collector", "B": "base", "E": "emitter", "D": "drain", "G": "gate", "S": "source"}


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


@dataclass(frozen=True)
class Lead:
    """One lead of one part at a joint; ``first`` when no earlier step named this part (a resistor's "one end")."""

    part: Part
    pin: str
    first: bool


@dataclass(frozen=True)
class Identify:
    """Tell a transistor's leads apart before anything is soldered to it."""

    part: Part
    pinout: tuple[str, ...]  # lead letters left to right, printed face towards you, leads down
    part_number: str
    package: str
    refs: tuple[str, ...] = ()  # every transistor of this part number, told apart in one step

    @property
    def who(self) -> str:
        return ", ".join(self.refs) if self.refs else self.part.ref


@dataclass(frozen=True)
class Joint:
    """One board net: the leads that meet there, and its test point's label if it has one."""

    net: str
    leads: tuple[Lead, ...]
    probe: str | None


@dataclass(frozen=True)
class Strings:
    """LED strings built alike (a card's one step for all of them)."""

    group: tuple[_String, ...]


@dataclass(frozen=True)
class Run:
    """LEDs in series, each cathode to the next anode (a card's one step for the run)."""

    refs: tuple[str, ...]


@dataclass(frozen=True)
class OffBoard:
    """A harness wire: the topology's words for where it goes, and the leads it meets on the board."""

    net: str
    what: str
    leads: tuple[Lead, ...]


Connection = Identify | Joint | Strings | Run | OffBoard


def connection_plan(design: Design, *, group_leds: bool = False) -> tuple[Connection, ...]:
    """What joins what, in build order: transistors identified, board nets, then the harness.

    ``group_leds`` folds LED strings and series runs into one connection each (a card's wording).
    """
    nl = design.netlist
    pins_on: dict[str, list[tuple[Part, str]]] = {}
    for part in nl.parts:
        for pin, net in part.pins:
            pins_on.setdefault(net, []).append((part, pin))
    plan: list[Connection] = []
    alike: dict[str, list[Part]] = {}  # one step per transistor type: "Q1, Q3 BC337-40"
    for part in nl.parts:
        if part.kind in ("npn", "pnp", "nmos"):
            alike.setdefault(part.part_number, []).append(part)
    for number, parts in alike.items():
        q = catalog.transistor(number)
        if q.pinout:
            plan.append(Identify(parts[0], tuple(q.pinout), q.part_number, q.package,
                                 refs=tuple(p.ref for p in parts)))
    off_board = dict(design.topology.wiring)
    probe_of = {net: label for label, net in nl.probes}
    runs = _led_runs(pins_on) if group_leds else {}
    strings = _led_strings(pins_on, runs) if group_leds else {}
    worded: set[tuple] = set()
    used: dict[str, int] = {}

    def leads(on: list[tuple[Part, str]]) -> tuple[Lead, ...]:
        out = []
        for part, pin in on:
            out.append(Lead(part, pin, used.get(part.ref, 0) == 0))
            used[part.ref] = used.get(part.ref, 0) + 1
        return tuple(out)

    for net, on in pins_on.items():
        if net in off_board or len(on) < 2:
            continue
        if net in strings or net in runs:  # one connection says it all, at the first of its nets
            if net in strings and strings[net] not in worded:
                worded.add(strings[net])
                plan.append(Strings(strings[net]))
                for r, _ in strings[net]:
                    used[r] = used.get(r, 0) + 1
            elif net not in strings and runs[net] not in worded:
                worded.add(runs[net])
                plan.append(Run(runs[net]))
            continue
        plan.append(Joint(net, leads(on), probe_of.get(net)))
    for net, what in design.topology.wiring:
        plan.append(OffBoard(net, what, leads(pins_on.get(net, []))))
    return tuple(plan)


def _lead(lead: Lead, *, short: bool) -> str:
    part = lead.part
    if part.kind == "resistor":
        if lead.first:
            return part.ref if short else f"{part.ref} (one end)"
        return f"{part.ref} (other end)"
    entry = KINDS[part.kind]
    return f"{part.ref} {(entry.lead_short if short else entry.lead_words)[lead.pin]}"


def _off_board_target(c: OffBoard, *, short: bool) -> str:
    leads = [_lead(lead, short=short) for lead in c.leads]
    other_ends = [lead[:-len(" (other end)")] for lead in leads if lead.endswith(" (other end)")]
    if short and len(other_ends) >= 2:  # "R4, R5, R6, R7 (other ends)" reads faster than four brackets
        rest = [lead for lead in leads if not lead.endswith(" (other end)")]
        return ", ".join([", ".join(other_ends) + " (other ends)", *rest])
    return ", ".join(leads)


def _sheet_words(c: Connection, design: Design, harness: Harness) -> str:
    """A connection as the build sheet says it: every lead described, wire sizes in each harness step."""
    if isinstance(c, Identify):
        leads = ", ".join(_LEAD_NAMES[x] for x in c.pinout)
        return (f"Identify {c.who} ({c.part_number}, {c.package}) leads: printed face towards you, "
                f"leads down, left to right: {leads}. Makers differ; check the data sheet of the part "
                "in your hand.")
    if isinstance(c, Joint):
        where = f" This is test point {c.probe}." if c.probe else ""
        return "Join " + ", ".join(_lead(lead, short=False) for lead in c.leads) + "." + where
    if isinstance(c, OffBoard):
        wire = f"{harness.wire_mm2:g} mm² ({harness.wire_awg} AWG)"
        target = _off_board_target(c, short=False)
        run = offboard.label(design.spec, c.net)  # "always-on +" or "always-on +, red": one name on every output
        if c.net == "supply":
            supply_v = format_quantity(design.spec.supply.nominal_v, "V")
            return (f"Fit a {harness.fuse_a:g} A fuse in the {supply_v} {c.what} as close to its "
                    f"source (battery or distribution point) as you can, and run {wire} wire ({run}) from it to "
                    f"{target}.")
        if c.net == GROUND:
            return (f"Join {target}, and run {wire} wire ({run}) from there to {c.what}; use a clean, tight "
                    "ground point.")
        hue = offboard.colour(design.spec, c.net)
        return f"Connect the {c.what} to {target}, with {wire} wire" + (f" ({hue})." if hue else ".")
    raise ValueError(f"the sheet's plan has no grouped LEDs: {c!r}")


def _card_words(c: Connection, design: Design, harness: Harness) -> str:
    """A connection as a card says it: bare lead names (the card prints the lead key once)."""
    if isinstance(c, Identify):
        leads = ", ".join(_LEAD_NAMES[x] for x in c.pinout)
        return (f"{c.who} {c.part_number} ({c.package}), printed face to you, leads down: {leads} "
                "(check its data sheet).")
    if isinstance(c, Strings):
        return _strings_step(c.group)
    if isinstance(c, Run):
        return f"Join {c.refs[0]} to {c.refs[-1]} in series: each cathode to the next anode."
    if isinstance(c, Joint):
        return ("Join " + ", ".join(_lead(lead, short=True) for lead in c.leads)
                + (f": test point {c.probe.split()[0]}." if c.probe else "."))
    target = _off_board_target(c, short=True)
    hue = offboard.colour(design.spec, c.net)  # the card's harness box names the runs; a colour is said here
    hue = f" ({hue})" if hue else ""
    if c.net == "supply":  # the card's harness box gives the wire size once
        supply_v = format_quantity(design.spec.supply.nominal_v, "V")
        return (f"Fit the {harness.fuse_a:g} A fuse in the {supply_v} {c.what} near its source; wire it{hue} "
                f"to {target}.")
    if c.net == GROUND:
        return f"Join {target}; wire them{hue} to {c.what}."
    return f"Wire the {c.what.split(' (')[0]}{hue} to {target}."  # the card's harness box says which way the feed switches


def wiring_steps(design: Design, harness: Harness, *, short: bool = False) -> tuple[str, ...]:
    """Numbered-in-order wiring steps for the board and the harness: the connection plan, worded.

    ``short`` words them for a card: lead names without their descriptions
    (the card prints ``lead_key`` once) and the LED strings in one step.
    """
    word = _card_words if short else _sheet_words
    place = installs.install(design.spec.install)
    steps = [place.isolate_short if short else place.isolate]
    steps += [word(c, design, harness) for c in connection_plan(design, group_leds=short)]
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


_PLACING_ORDER = ("resistor", "diode", "capacitor", "npn", "pnp", "nmos", "led", "lamp")


def board_steps(design: Design, harness: Harness, board: Board) -> tuple[str, ...]:
    """A card's steps beside the board view: cut, link, place each part at its holes, land the wires.

    They replace the "join X to Y" steps, which the copper now does.
    """
    nl = design.netlist
    steps = [installs.install(design.spec.install).isolate_short]
    steps += [_card_words(c, design, harness) for c in connection_plan(design) if isinstance(c, Identify)]
    if board.cuts:
        steps.append(words.cuts(board) + " on the copper side, as the copper view shows.")
    steps += [text + "." for text in words.links(board)]
    placed = dict(zip((p.ref for p in board.placements), words.placing(board, nl)))
    kinds: dict[str, list[str]] = {}
    for p in board.placements:
        kinds.setdefault(nl.part(p.ref).kind, []).append(placed[p.ref])
    for kind in sorted(kinds, key=lambda k: _PLACING_ORDER.index(k) if k in _PLACING_ORDER else 99):
        steps.append("Place " + "; ".join(kinds[kind]) + ".")
    supply_v = format_quantity(design.spec.supply.nominal_v, "V")
    steps.append(f"Fit the {harness.fuse_a:g} A fuse in the {supply_v} always-on feed near its source. Wires: "
                 + "; ".join(words.wires(board)) + ".")
    if board.off_board_parts:
        joins = "; ".join(words.off_board_joins(board, nl))
        steps.append("Off the board: " + words.refs_run(board.off_board_parts) + (f"; {joins}" if joins else "")
                     + ".")
    steps.append("Check every joint against the board views, reconnect, take the readings: feed off, then on.")
    return tuple(steps)


def brief(design: Design, harness: Harness, heat: Heat, board: Board | None = None) -> Brief:
    """The card's words: the short steps (and, with a board, the board's steps), the lead key and cautions.

    Where Q1 needs a heatsink, the steps to mount it come right after making safe, in both.
    """
    mount = mounting.choose(design, heat)
    steps = mounting.with_steps(wiring_steps(design, harness, short=True), design, mount, short=True)
    on_board = (mounting.with_steps(board_steps(design, harness, board), design, mount, short=True)
                if board is not None else ())
    return Brief(steps=steps, leads=lead_key(design), cautions=cautions(design, heat, short=True),
                 board_steps=on_board)


def guard_cautions(design: Design) -> list[tuple[str, str | None]]:
    """What the supply protection does and does not cover, from the parts actually fitted."""
    nl = design.netlist
    guard, cut = nl.by_role("reverse_polarity"), nl.by_role("cutoff")
    if not guard:
        return []
    out: list[tuple[str, str | None]] = [(
        f"{guard[0].ref} blocks a reversed battery and {nl.by_role('surge')[0].ref} takes fast spikes; fit both "
        f"the way round the schematic shows (banded ends to the rail): fitted backwards, {guard[0].ref} leaves the "
        f"board dead and {nl.by_role('surge')[0].ref} shorts the supply until the fuse blows.",
        None)]  # a card's steps already name each cathode (banded end)
    if not cut:
        out.append(("This design has no over-voltage cut-off (its supply's jump-start voltage is too close to the "
                    "charging voltage for one): a jump start from a higher voltage overruns the load. Jump-start "
                    "with the light switched off.",
                    "No over-voltage cut-off: jump-start with the light off."))
    return out


def cautions(design: Design, heat: Heat, *, short: bool = False) -> tuple[str, ...]:
    """The safety cautions for this build, chosen by its load, its heat and where it goes.

    Each caution is written twice, (sheet, card); ``short`` picks the card's
    words, so a caution can never be on one and missing from the other.  Two
    are not repeated on a card because the card already says them elsewhere:
    disconnecting the battery is its first step, and the low-voltage scope its
    footer on both sides.
    """
    spec = design.spec
    place = installs.install(spec.install)
    out = [
        ("Fuse the always-on feed close to its source, sized to protect the wire (the fuse protects the wire, "
         "not the lamp).",
         "Fuse the always-on feed near its source: the fuse protects the wire."),
        (place.isolate, None),
    ]
    out += mounting.heat_cautions(heat, mounting.choose(design, heat))
    out += kind_of(spec.load).cautions
    out += place.cautions
    out += guard_cautions(design)
    out.append(("sheetgen covers low-voltage DC (5–32 V) only. Follow your local vehicle, marine and electrical "
                "codes; where they call for licensed work, have it done by a licensed installer.",
                None))
    return tuple(card if short else sheet for sheet, card in out if card is not None or not short)
