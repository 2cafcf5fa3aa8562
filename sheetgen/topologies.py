"""Circuit templates the sizer can build.

Each topology is one entry in ``TOPOLOGIES``: how to turn a spec and a set of
chosen values into a netlist, which nets a builder measures, how the
off-board wiring is worded and how its schematic is laid out.  Nothing outside
this module branches on a topology's name.

The layout is a recipe written against ``Pen``, a small drawing vocabulary
defined here, so the engine holds its drawings as plain functions and never
imports a drawing library; ``sheetgen.render.schematic`` supplies the pen.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Literal, Protocol, Sequence

from .catalog import Diode, Transistor
from .circuit import GROUND, Netlist, Part, Source
from .loads import lamp_model, led_model
from .spec import LampLoad, LedLoad, Spec

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


@dataclass(frozen=True)
class Window:
    """When the trigger is removed and when the transient ends."""

    release_s: float
    stop_s: float


def window_for(fade_in_s: float, fade_out_s: float) -> Window:
    """A window long enough to see the fade-in settle and the fade-out finish."""
    release = max(3.0 * fade_in_s, fade_in_s + 0.5)
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
        """A diode from the cursor (the bar at its cathode)."""

    def npn(self, part: Part) -> None:
        """An NPN with its base at the cursor, collector up, emitter down; the cursor stays."""

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


@dataclass(frozen=True)
class Topology:
    """One circuit template.

    ``build`` makes the netlist; ``probes`` are the test points a builder
    measures, ``(label, net)``; ``wiring`` words the off-board connections by
    function as ``(net, what to connect there)``; ``draw`` lays out the
    schematic of a netlist this topology built, on any ``Pen``.
    """

    name: str
    title: str
    summary: str
    build: Callable[[Spec, Values, Window], Netlist]
    probes: tuple[tuple[str, str], ...]
    wiring: tuple[tuple[str, str], ...]
    draw: Callable[[Pen, Netlist], None]


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
    """LED strings (each with its own series resistor) or lamps between two nets."""
    load = spec.load
    parts: list[Part] = []
    if isinstance(load, LedLoad):
        model = led_model(load)
        led_no = 1
        for s in range(load.strings):
            ref = f"R{first_r + s}"
            head = f"str{s + 1}"
            parts.append(_resistor(ref, top, head, "led_series", values.r_led_ohm, values,
                                   "LED series resistor: sets the string current"))
            node = head
            for k in range(load.per_string):
                nxt = bottom if k == load.per_string - 1 else f"str{s + 1}_{k + 1}"
                colour = f"{load.colour} " if load.colour else ""
                parts.append(Part(ref=f"LED{led_no}", kind="led", pins=(("A", node), ("K", nxt)), role="load",
                                  model=model, description=f"{colour}LED, Vf {load.vf_v:g} V at "
                                  f"{load.current_a * 1000:g} mA", package="5 mm"))
                node = nxt
                led_no += 1
    elif isinstance(load, LampLoad):
        model = lamp_model(load)
        for k in range(load.count):
            parts.append(Part(ref=f"LP{k + 1}", kind="lamp", pins=(("1", top), ("2", bottom)), role="load",
                              model=model, description=f"{load.rated_v:g} V {load.power_w:g} W lamp",
                              rating_v=load.rated_v, rating_w=load.power_w))
    return parts


def feed_source(spec: Spec, window: Window) -> Source:
    """The switched feed: on at t = 0, off at the release time, following the supply."""
    e = TRIGGER_EDGE_S
    shape = ((0.0, 0.0), (e, 1.0), (window.release_s, 1.0), (window.release_s + e, 0.0))
    return Source(name="VFEED", plus="feed", minus=GROUND, level_v=spec.supply.nominal_v, shape=shape)


def _build_npn(spec: Spec, values: Values, window: Window) -> Netlist:
    q = values.transistor
    d = values.diode
    dv, _ = _rating(values, "D1")
    cv, _ = _rating(values, "C1")
    parts = [
        Part(ref="D1", kind="diode", pins=(("A", "feed"), ("K", "feed_d")), role="blocking", model=d.model,
             part_number=d.part_number, description="blocking diode: the capacitor cannot discharge into the feed",
             rating_v=d.vrrm_v, package=d.package),
        _resistor("R1", "feed_d", "timer", "charge", values.r_charge_ohm, values, "charge resistor: sets the fade-in"),
        Part(ref="C1", kind="capacitor", pins=(("+", "timer"), ("-", GROUND)), role="timing",
             value=values.c_timing_f, description="timing capacitor, electrolytic", rating_v=cv,
             tolerance=0.20, package="radial"),
        _resistor("R2", "timer", GROUND, "bleed", values.r_bleed_ohm, values, "bleed resistor: sets the fade-out"),
        _resistor("R3", "timer", "base", "base", values.r_base_ohm, values, "base resistor: sets the drive to Q1"),
        Part(ref="Q1", kind="npn", pins=(("C", "collector"), ("B", "base"), ("E", GROUND)), role="switch",
             model=q.model, part_number=q.part_number, description="NPN switch, low side",
             rating_v=q.vmax_v, rating_w=q.pd_free_air_w, package=q.package),
    ]
    parts += load_parts(spec, values, top="supply", bottom="collector", first_r=4)
    sources = (
        Source(name="VSUPPLY", plus="supply", minus=GROUND, level_v=spec.supply.nominal_v),
        feed_source(spec, window),
    )
    return Netlist(title=spec.title, parts=tuple(parts), sources=sources, release_s=window.release_s,
                   stop_s=window.stop_s, probes=NPN.probes)


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


def _draw_npn(pen: Pen, netlist: Netlist) -> None:
    """Signal left to right along one row; the load hangs above Q1 from the supply rail."""
    supply_v = netlist.source("VSUPPLY").level_v
    tp = {net: label for label, net in netlist.probes}
    d1, r1, c1 = _one(netlist, "blocking"), _one(netlist, "charge"), _one(netlist, "timing")
    r2, r3, q1 = _one(netlist, "bleed"), _one(netlist, "base"), _one(netlist, "switch")

    pen.start("feed")
    pen.terminal("switched feed", "left")
    pen.mark("inputs")
    pen.wire("right", 0.5)
    pen.test_point(tp["feed"], "feed", "down")
    pen.wire("right", 0.25)
    pen.diode(d1, "right")
    pen.resistor(r1, "right")
    pen.junction()
    pen.test_point(tp["timer"], "timer", "up")
    pen.mark("timer")
    pen.capacitor(c1, "down")
    pen.ground()
    pen.go("timer")
    pen.wire("right", 1.0)
    pen.junction()
    pen.mark("bleed")
    pen.resistor(r2, "down")
    pen.ground()
    pen.go("bleed")
    pen.resistor(r3, "right")
    pen.wire("right", 0.25)
    pen.test_point(tp["base"], "base", "down")
    pen.wire("right", 0.25)
    pen.npn(q1)
    pen.pin(q1, "E")
    pen.ground()
    pen.pin(q1, "C")
    pen.wire("up", 0.5)
    pen.test_point(tp["collector"], "collector", "right")
    pen.wire("up", 0.5)
    pen.load(series_branches(netlist, top="supply", bottom="collector"), top="supply")
    pen.test_point(tp["supply"], "supply", "up")
    pen.wire("left", until="inputs")
    pen.terminal(f"+{supply_v:g} V always-on\n(via fuse)", "left")
    pen.go("inputs")
    pen.move("down", 1.5, net=GROUND)
    pen.terminal("ground", "left")
    pen.wire("right", 0.5)
    pen.ground()


NPN = Topology(
    name="npn",
    title="Single NPN, low side",
    summary="The feed charges C1 through D1 and R1; C1 drives Q1's base through R3; R2 drains C1 "
            "when the feed goes away, so the light fades out.",
    build=_build_npn,
    probes=(("TP1 feed", "feed"), ("TP2 timing capacitor", "timer"), ("TP3 base", "base"),
            ("TP4 collector", "collector"), ("TP5 supply", "supply")),
    wiring=(("supply", "always-on positive feed"),
            ("feed", "switched feed (the wire that goes positive when the light should be on)"),
            (GROUND, "ground (chassis or battery negative)")),
    draw=_draw_npn,
)

TOPOLOGIES: dict[str, Topology] = {t.name: t for t in (NPN,)}
