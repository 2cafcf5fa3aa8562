"""Circuit templates the sizer can build.

Each topology is one entry in ``TOPOLOGIES``: how to turn a spec and a set of
chosen values into a netlist, which nets a builder measures, how the
off-board wiring is worded and how its schematic is laid out.  Nothing outside
this module branches on a topology's name.

The layout is a recipe written against ``Pen``, a small drawing vocabulary
defined here, so the engine holds its drawings as plain functions and never
imports a drawing library; ``sheetgen.outputs.pdf.schematic`` supplies the pen.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Callable, Literal, Protocol, Sequence

from sheetgen.parts.catalog import Diode, Transistor
from sheetgen.model.netlist import GROUND, Netlist, Part, Source
from sheetgen.circuits.loads import kind_of
from sheetgen.inputs.spec import Spec

TRIGGER_EDGE_S = 1e-3  # the feed switches on and off in 1 ms (a relay or switch contact)


@dataclass(frozen=True)
class Values:
    """The chosen parts of a fader: what the sizer decides and the netlist shows.

    ``ratings`` maps a reference designator to ``(rating_v, rating_w)`` for the
    parts list; it is empty while the sizer is still searching.
    """

    transistor: Transistor
    diode: Diode
    r_charge_ohm: float
    r_bleed_ohm: float
    r_base_ohm: float
    c_timing_f: float
    r_led_ohm: float | None = None
    ratings: tuple[tuple[str, float | None, float | None], ...] = ()
    input_transistor: Transistor | None = None  # the PNP of a ground-switched input stage
    clamp: Diode | None = None  # zener across a MOSFET's gate where the supply exceeds the gate rating
    r_emitter_ohm: float | None = None  # a current stage's emitter resistor: sets the LED current
    r_divider_ohm: float | None = None  # a current stage's charge divider: sets C1's top voltage


@dataclass(frozen=True)
class Window:
    """When the trigger is removed and when the transient ends."""

    release_s: float
    stop_s: float


def window_for(fade_in_s: float, fade_out_s: float, *, settle_s: float = 0.0) -> Window:
    """A window long enough to see the fade-in settle and the fade-out finish.

    ``settle_s`` is how long the timing capacitor needs to charge fully (about
    five time constants): the fade-out must start from a fully charged C1, as it
    does after the light has been on for a while.
    """
    release = max(3.0 * fade_in_s, fade_in_s + 0.5, settle_s)
    return Window(release_s=release, stop_s=release + max(3.0 * fade_out_s, fade_out_s + 0.5))


Direction = Literal["right", "left", "up", "down"]


class Pen(Protocol):
    """What a schematic recipe may ask of a renderer.

    The pen is a cursor that always stands on one net.  Lengths are in part
    pitches: 1 is the length of one resistor.  Drawing a part from the cursor
    leaves the cursor at the part's far end, on that pin's net; the pen turns
    polarised parts to match their pins, so a recipe never says which way a
    diode points.  The pen labels every part (reference and value) itself, and
    refuses a step that contradicts the netlist: a part with no pin on the
    cursor's net, a test point or ground symbol on the wrong net.
    """

    def start(self, net: str) -> None:
        """Put the cursor down at the origin, on ``net``."""

    def move(self, toward: Direction, length: float, *, net: str) -> None:
        """Lift the pen, move without drawing and put it down on ``net``."""

    def wire(self, toward: Direction, length: float = 1.0, *, until: str | None = None) -> None:
        """Draw a wire; with ``until`` it runs to be level with that mark instead."""

    def mark(self, name: str) -> None:
        """Remember the cursor (place and net) under ``name``."""

    def go(self, name: str) -> None:
        """Put the cursor back on a mark."""

    def pin(self, part: Part, pin: str) -> None:
        """Put the cursor on a pin of a part already drawn."""

    def junction(self) -> None:
        """A connection dot at the cursor."""

    def resistor(self, part: Part, toward: Direction) -> None:
        """A resistor from the cursor."""

    def capacitor(self, part: Part, toward: Direction) -> None:
        """A capacitor from the cursor (the + plate where its + pin is)."""

    def diode(self, part: Part, toward: Direction) -> None:
        """A diode from the cursor (the bar at its cathode); a ``clamp`` is drawn as the zener it is."""

    def npn(self, part: Part) -> None:
        """An NPN with its base at the cursor, collector up, emitter down; the cursor stays."""

    def pnp(self, part: Part) -> None:
        """A PNP with its base at the cursor, emitter up, collector down; the cursor stays."""

    def nmos(self, part: Part) -> None:
        """An n-channel MOSFET with its gate at the cursor, drain up, source down; the cursor stays."""

    def load(self, branches: Sequence[Sequence[Part]], *, top: str) -> None:
        """Parallel branches hanging from net ``top`` down to the cursor's net.

        Each branch lists its parts in series from ``top`` downwards (a series
        resistor and LEDs, or one lamp).  They are drawn above the cursor; the
        cursor ends on the ``top`` rail at its left end.  The pen may draw a
        long string or many branches compactly but names every part.
        """

    def ground(self) -> None:
        """A ground symbol at the cursor, which must be on ground."""

    def terminal(self, text: str, toward: Direction) -> None:
        """An off-board connection at the cursor, worded by function, its text on the ``toward`` side."""

    def test_point(self, label: str, net: str, toward: Direction) -> None:
        """A test point on a short stub from the cursor, which must be on ``net``."""

    def net_label(self, text: str, toward: Direction) -> None:
        """A flag saying where the cursor's net joins the rest of the drawing (an on-board link, not a terminal)."""

    def apart(self, draw: Callable[[], None]) -> None:
        """A piece of the circuit joined to the rest by ``net_label`` flags only, drawn by ``draw`` from the cursor.

        The cursor is where the recipe would put it; a pen short of width may
        draw it wherever it finds room instead, since only its flags join it.
        """


@dataclass(frozen=True)
class Stage:
    """The output switch: which catalog parts fit and the rough figures for a first guess.

    ``vce_sat_v`` is the on-state drop used for the LED resistor formula;
    ``v_drive_v`` the base voltage while driven hard (a Darlington has two
    junctions).  The simulator, not these figures, decides the design.
    """

    kind: str  # "bjt" | "mosfet"
    darlington: bool
    vce_sat_v: float
    v_drive_v: float
    cost_rank: int  # 0 cheapest: a plain NPN, then a Darlington, then a MOSFET
    drive_net: str = "base"
    out_net: str = "collector"
    emitter_resistor: bool = False  # a current stage: the load current is (V_C1 - V_BE) / R_E
    loads: tuple[str, ...] = ("led", "lamp")  # the load kinds it is designed for


SINGLE_NPN = Stage(kind="bjt", darlington=False, vce_sat_v=0.2, v_drive_v=0.75, cost_rank=0)
# An emitter-degenerated NPN: never saturated in use, so the LED current follows C1's voltage over
# the whole charge curve and is set by R_E, not by the transistor's gain (Horowitz & Hill, The Art of
# Electronics, 3rd ed., 2.2.6 "current sources"; section number from memory).
CURRENT_NPN = Stage(kind="bjt", darlington=False, vce_sat_v=0.2, v_drive_v=0.7, cost_rank=1,
                    emitter_resistor=True, loads=("led",))
# Darlington Vce(sat) about 1 V at moderate currents, VBE(on) 1.2-1.5 V (TIP120: 2 V max at 3 A, onsemi TIP120 data sheet; read in the source)
# A Darlington as a current stage: the same emitter resistor sets the LED current, and its gain in the
# thousands draws so little base current that the R1-R_div divider holds C1's top voltage whatever the
# part's gain or the cold; it needs about 1 V more headroom than a single NPN.
CURRENT_DARLINGTON = Stage(kind="bjt", darlington=True, vce_sat_v=1.0, v_drive_v=1.4, cost_rank=2,
                           emitter_resistor=True, loads=("led",))
DARLINGTON = Stage(kind="bjt", darlington=True, vce_sat_v=1.0, v_drive_v=1.4, cost_rank=3)
# A logic-level MOSFET fully on drops only I·RDS(on): tens of millivolts at an amp (IRLZ44N, 25 mΩ at 5 V)
LOGIC_MOSFET = Stage(kind="mosfet", darlington=False, vce_sat_v=0.05, v_drive_v=0.0, cost_rank=4,
                     drive_net="gate", out_net="drain")

INPUT_PNP = "BC327-40"
R_INPUT_BASE_OHM = 4700.0  # PNP base resistor to the grounded feed: about 2.3 mA of base current at 11 V
R_PULLUP_OHM = 47000.0  # holds the PNP off when the feed wire is open (common practice, no source)


@dataclass(frozen=True)
class Topology:
    """One circuit template.

    ``build()`` makes the netlist; ``probes`` are the test points a builder
    measures, ``(label, net)``; ``wiring`` words the off-board connections by
    function as ``(net, what to connect there)``; ``draw`` lays out the
    schematic of a netlist this topology built, on any ``Pen``.
    """

    name: str
    title: str
    summary: str
    probes: tuple[tuple[str, str], ...]
    wiring: tuple[tuple[str, str], ...]
    draw: Callable[[Pen, Netlist], None]
    stage: Stage = SINGLE_NPN
    trigger: str = "positive"  # the feed it takes: "positive" or "ground"

    def build(self, spec: Spec, values: Values, window: Window) -> Netlist:
        """The netlist of this template with the chosen values."""
        return _build(spec, values, window, topology=self)


def _rating(values: Values, ref: str) -> tuple[float | None, float | None]:
    for r, v, w in values.ratings:
        if r == ref:
            return v, w
    return None, None


def _resistor(ref: str, a: str, b: str, role: str, r_ohm: float, values: Values, desc: str) -> Part:
    rv, rw = _rating(values, ref)
    return Part(ref=ref, kind="resistor", pins=(("1", a), ("2", b)), role=role, value=r_ohm,
                description=desc, rating_v=rv, rating_w=rw, tolerance=0.05, package="axial")


def load_parts(spec: Spec, values: Values, *, top: str, bottom: str, first_r: int) -> list[Part]:
    """The load's parts between two nets, each branch's series resistor set to ``values.r_led_ohm``."""

    def series(ref: str, a: str, b: str) -> Part:
        return _resistor(ref, a, b, "led_series", values.r_led_ohm, values, "LED series resistor: sets the string current")

    return kind_of(spec.load).parts(spec.load, top=top, bottom=bottom, first_r=first_r, series=series)


def feed_source(spec: Spec, window: Window, *, trigger: str) -> Source:
    """The switched feed: on at t = 0, off at the release time, following the supply.

    A positive feed rises from 0 V to the supply; a ground-switched feed sits at
    the supply (held there by the pull-up or the vehicle's own lamp) and is
    pulled to 0 V while the light should be on.
    """
    e = TRIGGER_EDGE_S
    on, off = (1.0, 0.0) if trigger == "positive" else (0.0, 1.0)
    shape = ((0.0, off), (e, on), (window.release_s, on), (window.release_s + e, off))
    return Source(name="VFEED", plus="feed", minus=GROUND, level_v=spec.supply.nominal_v, shape=shape)


def _input_parts(values: Values) -> list[Part]:
    """Ground-switched input: a PNP high-side switch turns the grounded feed into a positive one."""
    q = values.input_transistor
    return [
        Part(ref="Q2", kind="pnp", pins=(("C", "switched"), ("B", "q2_base"), ("E", "supply")), role="input",
             model=q.model, part_number=q.part_number, description="PNP input switch: on while the feed is grounded",
             rating_v=q.vmax_v, rating_w=q.pd_free_air_w, package=q.package),
        _resistor("R4", "q2_base", "feed", "input_base", R_INPUT_BASE_OHM, values,
                  "input base resistor: limits the current the feed wire sinks"),
        _resistor("R5", "supply", "q2_base", "pullup", R_PULLUP_OHM, values,
                  "pull-up: an open feed wire means off"),
    ]


def _switch(values: Values, stage: Stage) -> list[Part]:
    """The low-side switch, its drive resistor and (for a MOSFET on a high supply) the gate clamp."""
    q = values.transistor
    drive, out = stage.drive_net, stage.out_net
    if stage.kind == "mosfet":
        parts = [
            _resistor("R3", "timer", drive, "base", values.r_base_ohm, values, "gate resistor: damps the gate"),
            Part(ref="Q1", kind="nmos", pins=(("D", out), ("G", drive), ("S", GROUND)), role="switch",
                 model=q.model, part_number=q.part_number, description="logic-level MOSFET switch, low side",
                 rating_v=q.vmax_v, rating_w=q.pd_free_air_w, package=q.package),
        ]
        if values.clamp is not None:
            z = values.clamp
            parts.append(Part(ref="D2", kind="diode", pins=(("A", GROUND), ("K", drive)), role="clamp",
                              model=z.model, part_number=z.part_number,
                              description=f"{z.vrrm_v:g} V zener: clamps the gate below its rating",
                              rating_v=z.vrrm_v, package=z.package))
        return parts
    if stage.emitter_resistor:
        return [
            _resistor("R3", "timer", drive, "base", values.r_base_ohm, values, "base resistor: isolates Q1's base"),
            Part(ref="Q1", kind="npn", pins=(("C", out), ("B", drive), ("E", "emitter")), role="switch",
                 model=q.model, part_number=q.part_number,
                 description="Darlington current stage, low side" if q.darlington else "NPN current stage, low side",
                 rating_v=q.vmax_v, rating_w=q.pd_free_air_w, package=q.package),
        ]
    return [
        _resistor("R3", "timer", drive, "base", values.r_base_ohm, values, "base resistor: sets the drive to Q1"),
        Part(ref="Q1", kind="npn", pins=(("C", out), ("B", drive), ("E", GROUND)), role="switch",
             model=q.model, part_number=q.part_number,
             description="Darlington switch, low side" if q.darlington else "NPN switch, low side",
             rating_v=q.vmax_v, rating_w=q.pd_free_air_w, package=q.package),
    ]


def _build(spec: Spec, values: Values, window: Window, *, topology: "Topology") -> Netlist:
    d = values.diode
    cv, _ = _rating(values, "C1")
    ground_input = topology.trigger == "ground"
    d1_anode = "switched" if ground_input else "feed"
    if topology.stage.emitter_resistor:
        # The divider comes before D1, so C1 charges to a low top voltage but discharges through R2 alone:
        # separate charge and discharge paths, set independently.
        charge = [
            _resistor("R1", d1_anode, "divided", "charge", values.r_charge_ohm, values,
                      "charge resistor: sets the fade-in"),
            Part(ref="D1", kind="diode", pins=(("A", "divided"), ("K", "timer")), role="blocking", model=d.model,
                 part_number=d.part_number,
                 description="steering diode: the capacitor cannot discharge into the charge path",
                 rating_v=d.vrrm_v, package=d.package),
        ]
    else:
        charge = [
            Part(ref="D1", kind="diode", pins=(("A", d1_anode), ("K", "feed_d")), role="blocking", model=d.model,
                 part_number=d.part_number, description="blocking diode: the capacitor cannot discharge into the feed",
                 rating_v=d.vrrm_v, package=d.package),
            _resistor("R1", "feed_d", "timer", "charge", values.r_charge_ohm, values,
                      "charge resistor: sets the fade-in"),
        ]
    parts = [
        *charge,
        Part(ref="C1", kind="capacitor", pins=(("+", "timer"), ("-", GROUND)), role="timing",
             value=values.c_timing_f, description="timing capacitor, electrolytic", rating_v=cv,
             tolerance=0.20, package="radial"),
        _resistor("R2", "timer", GROUND, "bleed", values.r_bleed_ohm, values, "bleed resistor: sets the fade-out"),
        *_switch(values, topology.stage),
    ]
    if ground_input:
        parts += _input_parts(values)
    first_r = 6 if ground_input else 4
    load = load_parts(spec, values, top="supply", bottom=topology.stage.out_net, first_r=first_r)
    parts += load
    if topology.stage.emitter_resistor:
        strings = sum(p.kind == "resistor" for p in load)
        parts.append(replace(_resistor(f"R{first_r + strings}", "emitter", GROUND, "emitter",
                                       values.r_emitter_ohm or 1.0, values, "emitter resistor: sets the LED current"),
                             tolerance=0.01))
        parts.append(_resistor(f"R{first_r + strings + 1}", "divided", GROUND, "divider", values.r_divider_ohm or 1.0,
                               values, "divider resistor: with R1 sets how far C1 charges"))
    sources = (
        Source(name="VSUPPLY", plus="supply", minus=GROUND, level_v=spec.supply.nominal_v),
        feed_source(spec, window, trigger=topology.trigger),
    )
    return Netlist(title=spec.title, parts=tuple(parts), sources=sources, release_s=window.release_s,
                   stop_s=window.stop_s, probes=topology.probes)


def series_branches(netlist: Netlist, *, top: str, bottom: str) -> tuple[tuple[Part, ...], ...]:
    """The chains of parts in series from net ``top`` to net ``bottom``, each listed from the top.

    A chain follows nets that join exactly two parts, so it stops at any node
    where the circuit branches; chains that do not reach ``bottom`` are left out.
    """
    def on(net: str) -> list[Part]:
        return [p for p in netlist.parts if net in p.nets]

    branches = []
    for first in on(top):
        chain, net, part = [], top, first
        while True:
            chain.append(part)
            net = next(n for n in part.nets if n != net)
            if net == bottom:
                branches.append(tuple(chain))
                break
            following = [p for p in on(net) if p is not part]
            if net in (top, GROUND) or len(following) != 1:
                break
            part = following[0]
    return tuple(branches)


def _one(netlist: Netlist, role: str) -> Part:
    parts = netlist.by_role(role)
    if len(parts) != 1:
        raise ValueError(f"expected one part with role {role!r}, found {len(parts)}")
    return parts[0]


def _shunt(pen: Pen, draw, part: Part, *, mark: str) -> None:
    """A junction at the cursor and ``part`` from it down to ground; the cursor stays on the junction."""
    pen.junction()
    pen.mark(mark)
    draw(part, "down")
    pen.ground()
    pen.go(mark)


def _draw_positive_feed(pen: Pen, netlist: Netlist) -> None:
    """Signal left to right along one row; the load hangs above Q1 from the supply rail."""
    tp = {net: label for label, net in netlist.probes}
    pen.start("feed")
    pen.terminal("switched feed", "left")
    pen.mark("inputs")
    pen.wire("right", 0.5)
    pen.test_point(tp["feed"], "feed", "down")
    pen.wire("right", 0.25)
    _draw_timer_and_switch(pen, netlist, row="inputs")


def _draw_ground_feed(pen: Pen, netlist: Netlist) -> None:
    """The PNP input stage on its own row above the timer row, so the signal still reads left to right.

    The feed row carries R4 into Q2's base, R5 rises from there to the rail and
    Q2's emitter meets the rail too; Q2's collector drops to the timer row, one
    pitch below, which from D1 on is drawn exactly as the positive-feed layout.
    """
    tp = {net: label for label, net in netlist.probes}
    q2, r4, r5 = _one(netlist, "input"), _one(netlist, "input_base"), _one(netlist, "pullup")

    pen.start("feed")
    pen.terminal("switched feed\n(grounded = on)", "left")
    pen.mark("inputs")
    pen.move("down", 1.0, net="switched")
    pen.mark("row")  # where the timer row starts, below the feed terminal
    pen.go("inputs")
    pen.wire("right", 0.5)
    pen.test_point(tp["feed"], "feed", "down")
    pen.wire("right", 0.25)
    pen.resistor(r4, "right")
    pen.wire("right", 0.25)  # room between R4's value and R5
    pen.junction()
    pen.mark("q2_base")
    pen.resistor(r5, "up")
    pen.mark("pullup")
    pen.go("q2_base")
    pen.wire("right", 1.0)
    pen.pnp(q2)
    pen.pin(q2, "C")
    pen.wire("down", until="row")
    pen.wire("right", 0.5)
    pen.test_point(tp["switched"], "switched", "down")
    pen.wire("right", 0.25)
    _draw_timer_and_switch(pen, netlist, row="row")
    pen.go("pullup")
    pen.wire("up", until="rail")
    pen.junction()
    pen.pin(q2, "E")
    pen.wire("up", until="rail")
    pen.junction()


# Q1's drive, output and grounded pins by its kind: the netlist, not the topology, says which.
_SWITCH_PINS = {"npn": ("B", "C", "E"), "nmos": ("G", "D", "S")}


def _draw_timer_and_switch(pen: Pen, netlist: Netlist, *, row: str) -> None:
    """From D1 (the cursor on its anode's net) to the supply rail and the off-board terminals.

    Every layout shares this, so a fix to the timer, Q1 or load drawing lands in
    all of them.  Q1 is drawn as the kind the netlist gives it, probed on its
    own drive and output nets; a gate clamp, where there is one, drops from the
    drive node to ground between R3 and Q1.  ``row`` marks the left end of the
    cursor's row: the supply rail runs back to its x and is marked ``rail``; the
    ground terminal stands below it.
    """
    supply_v = netlist.source("VSUPPLY").level_v
    tp = {net: label for label, net in netlist.probes}
    d1, r1, c1 = _one(netlist, "blocking"), _one(netlist, "charge"), _one(netlist, "timing")
    r2, r3, q1 = _one(netlist, "bleed"), _one(netlist, "base"), _one(netlist, "switch")
    drive_pin, out_pin, common_pin = _SWITCH_PINS[q1.kind]
    drive, out = q1.net(drive_pin), q1.net(out_pin)

    if netlist.by_role("divider"):
        pen.resistor(r1, "right")
        _shunt(pen, pen.resistor, _one(netlist, "divider"), mark="divider")
        pen.wire("right", 1.0)  # room for the divider's label between it and C1's
        pen.diode(d1, "right")
    else:
        pen.diode(d1, "right")
        pen.resistor(r1, "right")
    pen.junction()
    pen.test_point(tp["timer"], "timer", "up")
    pen.mark("timer")
    pen.capacitor(c1, "down")
    pen.ground()
    pen.go("timer")
    pen.wire("right", 1.0)
    _shunt(pen, pen.resistor, r2, mark="bleed")
    pen.resistor(r3, "right")
    if netlist.by_role("clamp"):
        pen.wire("right", 0.25)
        _shunt(pen, pen.diode, _one(netlist, "clamp"), mark="clamp")
        pen.wire("right", 1.0)  # room for the clamp's label between it and Q1
    pen.wire("right", 0.25)
    pen.test_point(tp[drive], drive, "down")
    pen.wire("right", 0.25)
    if q1.kind == "nmos":
        pen.nmos(q1)
    else:
        pen.npn(q1)
    pen.pin(q1, common_pin)
    if netlist.by_role("emitter"):
        pen.wire("down", 0.25)
        pen.test_point(tp["emitter"], "emitter", "right")
        pen.resistor(_one(netlist, "emitter"), "down")
    pen.ground()
    pen.pin(q1, out_pin)
    pen.wire("up", 0.5)
    pen.test_point(tp[out], out, "right")
    pen.wire("up", 0.5)
    rail = _rail(netlist)
    pen.load(series_branches(netlist, top=rail, bottom=out), top=rail)
    pen.test_point(tp[rail], rail, "up")
    pen.mark("rail")
    if rail != "supply":
        pen.go(row)
        pen.move("right", GUARD_SPAN, net=rail)
        pen.mark("guard")  # only its x counts: where the guard ends on the rail
        pen.go("rail")
        pen.wire("left", until="guard")
        _draw_supply_guard(pen, netlist, row=row)
    else:
        pen.wire("left", until=row)
    pen.terminal(f"+{supply_v:g} V always-on\n(via fuse)", "left")
    pen.go(row)
    pen.move("down", 1.5, net=GROUND)
    pen.terminal("ground", "left")
    pen.wire("right", 0.5)
    pen.ground()
    if netlist.by_role("cutoff"):
        pen.pin(q1, common_pin)
        pen.apart(lambda: _draw_cutoff(pen, netlist))


def _rail(netlist: Netlist) -> str:
    """The net the load and the input stage hang from: the protected rail where a supply guard is fitted."""
    guard = netlist.by_role("reverse_polarity")
    return guard[0].net("K") if guard else "supply"


#: Rail length, from the always-on terminal, that the guard takes: short of the first part a
#: ground-switched input hangs from the rail (R5, 2 pitches along).
GUARD_SPAN = 1.75


def _draw_supply_guard(pen: Pen, netlist: Netlist, *, row: str) -> None:
    """On the rail by the always-on terminal: the TVS down to ground, then the series Schottky and TP5."""
    tp = {net: label for label, net in netlist.probes}
    guard = _one(netlist, "reverse_polarity")
    for tvs in netlist.by_role("surge"):
        _shunt(pen, pen.diode, tvs, mark="tvs")
    pen.diode(guard, "left")
    pen.wire("left", 0.25)
    pen.test_point(tp["supply"], "supply", "down")
    pen.wire("left", until=row)


def _draw_cutoff(pen: Pen, netlist: Netlist) -> None:
    """The over-voltage cut-off beside Q1 (the cursor on Q1's grounded pin), joined by flags to the rail and Q1's drive.

    Beside Q1, where no label sits; a card's narrower drawing puts it wherever it finds room.
    """
    tp = {net: label for label, net in netlist.probes}
    q = _one(netlist, "cutoff")
    upper, lower = _one(netlist, "cutoff_series"), _one(netlist, "cutoff_bias")
    rail, drive = upper.net("1"), q.net("C")
    pen.move("right", 2.0, net=rail)
    pen.move("down", 0.5, net=rail)
    pen.net_label(f"rail ({tp[rail].split()[0]})", "left")
    pen.resistor(upper, "right")
    for zener in netlist.by_role("cutoff_zener"):  # a 24 V system's cut-off: its trip set by a zener
        pen.diode(zener, "right")
    _shunt(pen, pen.resistor, lower, mark="cut_b")
    pen.wire("right", 1.0)
    pen.npn(q)
    pen.pin(q, "E")
    pen.ground()
    pen.pin(q, "C")
    pen.wire("up", 0.5)
    pen.net_label(f"{drive} ({tp[drive].split()[0]})", "right")


_POSITIVE_WIRING = (("supply", "always-on positive feed"),
                    ("feed", "switched feed (the wire that goes positive when the light should be on)"),
                    (GROUND, "ground (chassis or battery negative)"))
_GROUND_WIRING = (("supply", "always-on positive feed"),
                  ("feed", "switched feed (the wire that is grounded when the light should be on)"),
                  (GROUND, "ground (chassis or battery negative)"))


def _probes(stage: Stage, trigger: str) -> tuple[tuple[str, str], ...]:
    probes = (("TP1 feed", "feed"), ("TP2 timing capacitor", "timer"), (f"TP3 {stage.drive_net}", stage.drive_net),
              (f"TP4 {stage.out_net}", stage.out_net), ("TP5 supply", "supply"))
    if trigger == "ground":
        probes += (("TP6 input switch output", "switched"),)
    if stage.emitter_resistor:
        probes += (f"TP{len(probes) + 1} emitter", "emitter"),
    return probes


def _topology(name: str, title: str, summary: str, *, stage: Stage, trigger: str, draw) -> Topology:
    return Topology(name=name, title=title, summary=summary, probes=_probes(stage, trigger),
                    wiring=_GROUND_WIRING if trigger == "ground" else _POSITIVE_WIRING,
                    draw=draw, stage=stage, trigger=trigger)


_SUMMARY = ("The feed charges C1 through D1 and R1; C1 drives Q1's base through R3; R2 drains C1 when the feed "
            "goes away, so the light fades out.")
_GROUND_SUMMARY = (" A grounded feed wire turns on the PNP Q2, which feeds D1 from the always-on supply; R5 holds Q2 "
                   "off when the wire is open.")

NPN = _topology("npn", "Single NPN, low side", _SUMMARY, stage=SINGLE_NPN, trigger="positive", draw=_draw_positive_feed)
DARLINGTON_LOW = _topology("darlington", "Darlington, low side",
                           _SUMMARY + " The Darlington's gain lets C1 be far smaller for heavy loads.",
                           stage=DARLINGTON, trigger="positive", draw=_draw_positive_feed)
_CURRENT_SUMMARY = (" R_E in Q1's emitter sets the LED current, so the light follows C1's voltage over its whole "
                    "charge and does not depend on Q1's gain.")
_FOLLOWER_SUMMARY = (" The Darlington's gain draws so little base current that C1's divider holds its voltage "
                     "whatever the part's gain or the cold.")
NPN_CURRENT = _topology("npn-current", "NPN current stage, low side", _SUMMARY + _CURRENT_SUMMARY,
                        stage=CURRENT_NPN, trigger="positive", draw=_draw_positive_feed)
NPN_CURRENT_GROUND = _topology("npn-current-ground", "NPN current stage, low side, ground-switched input",
                               _SUMMARY + _CURRENT_SUMMARY + _GROUND_SUMMARY, stage=CURRENT_NPN, trigger="ground",
                               draw=_draw_ground_feed)
DARLINGTON_CURRENT = _topology("darlington-current", "Darlington current stage, low side",
                                _SUMMARY + _CURRENT_SUMMARY + _FOLLOWER_SUMMARY, stage=CURRENT_DARLINGTON,
                                trigger="positive", draw=_draw_positive_feed)
DARLINGTON_CURRENT_GROUND = _topology("darlington-current-ground",
                                       "Darlington current stage, low side, ground-switched input",
                                       _SUMMARY + _CURRENT_SUMMARY + _FOLLOWER_SUMMARY + _GROUND_SUMMARY,
                                       stage=CURRENT_DARLINGTON, trigger="ground", draw=_draw_ground_feed)
NPN_GROUND = _topology("npn-ground", "Single NPN, low side, ground-switched input", _SUMMARY + _GROUND_SUMMARY,
                       stage=SINGLE_NPN, trigger="ground", draw=_draw_ground_feed)
DARLINGTON_GROUND = _topology("darlington-ground", "Darlington, low side, ground-switched input",
                              _SUMMARY + _GROUND_SUMMARY, stage=DARLINGTON, trigger="ground", draw=_draw_ground_feed)

_MOSFET_SUMMARY = ("The feed charges C1 through D1 and R1; the R1-R2 divider sets the gate voltage of the "
                   "logic-level MOSFET Q1 through R3; the light fades while C1's voltage crosses the gate "
                   "threshold, and R2 drains C1 when the feed goes away.")
MOSFET_LOW = _topology("mosfet", "Logic-level MOSFET, low side", _MOSFET_SUMMARY, stage=LOGIC_MOSFET,
                       trigger="positive", draw=_draw_positive_feed)
MOSFET_GROUND = _topology("mosfet-ground", "Logic-level MOSFET, low side, ground-switched input",
                          _MOSFET_SUMMARY + _GROUND_SUMMARY, stage=LOGIC_MOSFET, trigger="ground",
                          draw=_draw_ground_feed)

TOPOLOGIES: dict[str, Topology] = {t.name: t for t in (NPN, NPN_CURRENT, DARLINGTON_CURRENT, DARLINGTON_LOW, MOSFET_LOW,
                                                       NPN_GROUND, NPN_CURRENT_GROUND, DARLINGTON_CURRENT_GROUND,
                                                       DARLINGTON_GROUND, MOSFET_GROUND)}


def topologies_for(trigger: str) -> tuple[Topology, ...]:
    """The templates that take this kind of feed, cheapest output stage first."""
    return tuple(sorted((t for t in TOPOLOGIES.values() if t.trigger == trigger), key=lambda t: t.stage.cost_rank))


def forced_names() -> tuple[str, ...]:
    """The names a spec's ``topology:`` may force (besides auto): each stage, whatever its trigger."""
    return tuple(sorted({t.name.removesuffix("-ground") for t in TOPOLOGIES.values()}))
