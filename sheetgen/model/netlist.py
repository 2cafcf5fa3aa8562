"""The netlist: the one description of a fader that every analysis and output reads.

A netlist is immutable.  Simulation, export and rendering all take it as it is;
per-run variations (tolerance draws, what-if values) are passed to the simulator
as overrides, never written back into the parts.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Literal, Mapping

from sheetgen.model.kinds import KINDS

GROUND = "0"

PartKind = Literal["resistor", "capacitor", "diode", "led", "npn", "pnp", "nmos", "lamp"]
ModelKind = Literal["D", "NPN", "PNP", "NMOS", "LAMP"]

#: The pin names of each kind, in SPICE element order.
PIN_ORDER: dict[str, tuple[str, ...]] = {k.name: k.pins for k in KINDS.values()}


@dataclass(frozen=True)
class Model:
    """A device model card describing the *typical* part.

    For D, NPN, PNP and NMOS the parameters are SPICE model parameters under their
    SPICE names (IS, N, RS, BF, ...).  LAMP is a tungsten filament: R0 (cold
    resistance at TROOM, ohm), TROOM and THOT (K), ALPHA (resistance exponent,
    R = R0 (T/TROOM)^ALPHA), K (radiation constant, W/K^4) and CTH (heat
    capacity, J/K).

    A composite device (a Darlington: two transistors, two resistors and a
    diode in one package) has an empty ``params`` and its equivalent circuit
    in ``body``: parts whose nets are the kind's pin names (``C``, ``B``,
    ``E``) or inner nets of the device.  A composite's parameters are named
    ``<inner ref>.<parameter>`` (``QD.BF``, ``R1.value``).
    """

    name: str
    kind: ModelKind
    params: tuple[tuple[str, float], ...]
    body: tuple["Part", ...] = ()

    def __getitem__(self, key: str) -> float:
        for k, v in self.params:
            if k == key:
                return v
        raise KeyError(f"model {self.name} has no parameter {key}")

    def get(self, key: str, default: float) -> float:
        for k, v in self.params:
            if k == key:
                return v
        return default

    def as_dict(self) -> dict[str, float]:
        return dict(self.params)

    def junctions(self) -> tuple[tuple[str, "Model"], ...]:
        """The bipolar cards inside, each with the prefix its parameters take.

        ``(("", self),)`` for a plain card; for a composite, one entry per inner
        transistor (``("QD.", driver card)``...), so a gain or temperature shift
        can be spread over every transistor of the device.
        """
        if not self.body:
            return (("", self),)
        return tuple((f"{p.ref}.", p.model) for p in self.body if p.kind in ("npn", "pnp"))


@dataclass(frozen=True)
class Part:
    """One physical part on the board or in the harness.

    ``pins`` maps pin name to net name, in the kind's pin order.  ``value`` is in
    SI base units (ohm, farad) where the part has one.  Ratings describe the part
    to buy: ``rating_v`` (volts), ``rating_w`` (watts), ``tolerance`` (fraction,
    e.g. 0.05), ``package`` and ``part_number``.  ``role`` says what the part does
    in the fader (``charge``, ``bleed``, ``base``, ``timing``, ``blocking``,
    ``switch``, ``led_series``, ``load``...), so renderers can word things without
    guessing from designators.
    """

    ref: str
    kind: PartKind
    pins: tuple[tuple[str, str], ...]
    role: str
    value: float | None = None
    model: Model | None = None
    part_number: str = ""
    description: str = ""
    rating_v: float | None = None
    rating_w: float | None = None
    tolerance: float | None = None
    package: str = ""

    def __post_init__(self) -> None:
        names = tuple(p for p, _ in self.pins)
        if names != PIN_ORDER[self.kind]:
            raise ValueError(f"{self.ref}: pins {names} do not match {self.kind} {PIN_ORDER[self.kind]}")

    def net(self, pin: str) -> str:
        for p, n in self.pins:
            if p == pin:
                return n
        raise KeyError(f"{self.ref} has no pin {pin}")

    @property
    def nets(self) -> tuple[str, ...]:
        return tuple(n for _, n in self.pins)

    def gain_overrides(self, factor) -> dict:
        """Overrides multiplying this transistor's current gain by ``factor`` (an array).

        In a composite the transistors' gains multiply, so each takes an equal
        share in log: ``factor ** (1 / transistors)``.
        """
        units = self.model.junctions()
        return {(self.ref, f"{prefix}BF"): m["BF"] * factor ** (1.0 / len(units)) for prefix, m in units}

    @property
    def is_composite(self) -> bool:
        return self.model is not None and bool(self.model.body)

    def expanded(self) -> tuple["Part", ...]:
        """A composite's inner parts as parts of the netlist: refs ``<ref>.<inner>``,
        pins on this part's nets or on inner nets ``<ref>:<net>``."""
        outer = dict(self.pins)
        return tuple(replace(p, ref=f"{self.ref}.{p.ref}", role=self.role,
                             pins=tuple((pin, outer.get(net, f"{self.ref}:{net}")) for pin, net in p.pins))
                     for p in self.model.body)


@dataclass(frozen=True)
class Source:
    """An ideal voltage source from ``plus`` to ``minus``.

    ``level_v`` is the source's full level.  ``shape`` is None for a DC source, or
    piecewise-linear points ``(time_s, fraction_of_level)``; the feed follows the
    supply, so a supply override moves both.
    """

    name: str
    plus: str
    minus: str
    level_v: float
    shape: tuple[tuple[float, float], ...] | None = None

    def value_at(self, t_s: float) -> float:
        """The fraction of the level at time ``t_s`` (1.0 for a DC source)."""
        if self.shape is None:
            return 1.0
        pts = self.shape
        if t_s <= pts[0][0]:
            return pts[0][1]
        for (t0, v0), (t1, v1) in zip(pts, pts[1:]):
            if t_s <= t1:
                return v0 + (v1 - v0) * (t_s - t0) / (t1 - t0)
        return pts[-1][1]

    @property
    def breakpoints(self) -> tuple[float, ...]:
        return tuple(t for t, _ in self.shape) if self.shape else ()


@dataclass(frozen=True)
class Netlist:
    """Parts, sources and the simulation window of one fader.

    ``release_s`` is when the trigger is removed; ``stop_s`` is the end of the
    transient.  ``probes`` names the test points a builder measures, as
    ``(label, net)`` pairs.
    """

    title: str
    parts: tuple[Part, ...]
    sources: tuple[Source, ...]
    release_s: float
    stop_s: float
    probes: tuple[tuple[str, str], ...] = field(default=())

    def __post_init__(self) -> None:
        refs = [p.ref for p in self.parts] + [s.name for s in self.sources]
        dup = {r for r in refs if refs.count(r) > 1}
        if dup:
            raise ValueError(f"duplicate references {sorted(dup)}")

    def part(self, ref: str) -> Part:
        for p in self.parts:
            if p.ref == ref:
                return p
        raise KeyError(ref)

    def source(self, name: str) -> Source:
        for s in self.sources:
            if s.name == name:
                return s
        raise KeyError(name)

    def by_role(self, role: str) -> tuple[Part, ...]:
        return tuple(p for p in self.parts if p.role == role)

    @property
    def nets(self) -> tuple[str, ...]:
        """Every net except ground, in order of first appearance."""
        seen: dict[str, None] = {}
        for s in self.sources:
            for n in (s.plus, s.minus):
                seen.setdefault(n, None)
        for p in self.parts:
            for n in p.nets:
                seen.setdefault(n, None)
        seen.pop(GROUND, None)
        return tuple(seen)

    def flattened(self) -> "Netlist":
        """The same circuit with every composite device replaced by its equivalent circuit."""
        if not any(p.is_composite for p in self.parts):
            return self
        parts = tuple(q for p in self.parts for q in (p.expanded() if p.is_composite else (p,)))
        return replace(self, parts=parts)

    @property
    def models(self) -> tuple[Model, ...]:
        out: dict[str, Model] = {}
        for p in self.parts:
            if p.model is not None:
                out.setdefault(p.model.name, p.model)
        return tuple(out.values())


#: Parameter overrides for a batch: ``(ref, param) -> array of shape (N,)``.
#: ``param`` is ``"value"`` for R and C, ``"level"`` for sources, or a model
#: parameter name (``"BF"``, ``"IS"``, ``"R0"``...); a composite device's
#: inner parts as ``"<inner ref>.<param>"`` (``"QD.BF"``, ``"R1.value"``).
Overrides = Mapping[tuple[str, str], "object"]
