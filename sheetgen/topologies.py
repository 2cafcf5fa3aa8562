"""Circuit templates the sizer can build.

Each topology is one entry in ``TOPOLOGIES``: how to turn a spec and a set of
chosen values into a netlist, which nets a builder measures, and how the
off-board wiring is worded.  Nothing outside this module branches on a
topology's name.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

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


@dataclass(frozen=True)
class Topology:
    """One circuit template.

    ``build`` makes the netlist; ``probes`` are the test points a builder
    measures, ``(label, net)``; ``wiring`` words the off-board connections by
    function as ``(net, what to connect there)``.
    """

    name: str
    title: str
    summary: str
    build: Callable[[Spec, Values, Window], Netlist]
    probes: tuple[tuple[str, str], ...]
    wiring: tuple[tuple[str, str], ...]


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
)

TOPOLOGIES: dict[str, Topology] = {t.name: t for t in (NPN,)}
