"""A netlist flattened for the simulator: node indices and batched parameters by element.

The solver works on six element classes (linear resistors, capacitors,
junction diodes, bipolar transistors, MOSFETs and filaments), each a group of
node-index rows and per-member parameter arrays.  How a part of each kind
becomes elements of these classes is one entry per kind in :data:`ELEMENTS`;
the stamp plan built on top of this index lives in :mod:`.simulate`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from sheetgen.engine.devices import GMIN, NMOS_N_DEFAULT
from sheetgen.model.netlist import GROUND, Netlist, Overrides, Part


@dataclass
class _Group:
    """Devices of one kind, their node indices and per-batch parameters."""

    refs: list
    nodes: np.ndarray  # (n_dev, n_terminals) node indices
    params: dict  # name -> (N, n_dev)


@dataclass
class _Elements:
    """What the parts became, by element class: ``(name, nets, params)`` each."""

    res: list = field(default_factory=list)
    caps: list = field(default_factory=list)
    diodes: list = field(default_factory=list)
    bjts: list = field(default_factory=list)
    mos: list = field(default_factory=list)
    lamps: list = field(default_factory=list)


class NetIndex:
    """Node names and indices, and every element's batched parameters.

    ``names`` orders the nodes: the ``n_unknown`` solved for, then each
    diode's inner node between RS and junction (carried, not solved for), then
    the ``n_fixed`` source nodes, then ground.
    """

    def __init__(self, netlist: Netlist, overrides: Overrides | None, n: int):
        self.netlist = netlist
        self.n = n
        self.overrides = _inner_overrides(netlist, overrides or {})
        for (ref, _), arr in self.overrides.items():
            if np.shape(arr) not in ((n,), ()):
                raise ValueError(f"override for {ref} has shape {np.shape(arr)}, expected ({n},)")
        netlist = self.flat = netlist.flattened()
        fixed = [s.plus for s in netlist.sources]
        for s in netlist.sources:
            if s.minus != GROUND:
                raise ValueError(f"source {s.name} must return to ground")
        parts, hidden = self._merge_chains(netlist, fixed)
        unknown = [net for net in netlist.nets if net not in fixed and net not in hidden]
        self._internal: list[str] = []
        self._behind_rs: list[str] = []
        el = _Elements()
        for part in parts:
            add = ELEMENTS.get(part.kind)
            if add is None:
                raise ValueError(f"{part.ref}: the simulator has no elements for kind {part.kind!r}")
            add(self, part, el)
        unknown += self._internal
        self.names = unknown + self._behind_rs + fixed + [GROUND]
        self.n_unknown = len(unknown)
        self.n_state = self.n_unknown + len(self._behind_rs)  # rows Newton updates; fixed nodes follow
        self.n_fixed = len(fixed)
        self.size = len(self.names)
        self.index = {name: i for i, name in enumerate(self.names)}
        self.sources = netlist.sources
        self.source_levels = np.stack([self._value(s.name, "level", s.level_v) for s in netlist.sources], axis=1)
        self.res = self._group(el.res, ("g",), 2)
        self.caps = self._group(el.caps, ("c", "ic"), 2)
        self.diodes = self._group(el.diodes, ("is", "n", "rs", "bv", "ibv", "nbv"))
        self.bjts = self._group(el.bjts, ("sign", "is", "bf", "br", "nf", "nr", "vaf", "ikf", "ise", "ne"))
        self.mos = self._group(el.mos, ("vto", "kp", "lam", "n", "gleak"))
        self.lamps = self._group(el.lamps, ("r0", "troom", "alpha", "k", "thot"))

    def _merge_chains(self, netlist: Netlist, fixed: list[str]):
        """Replace each series chain of identical diodes (an LED string) by one diode.

        n equal junctions in series carrying one current drop n·N·Vt·ln(I/IS)
        plus n·I·RS, which is one junction with emission coefficient n·N, series
        resistance n·RS and IS the geometric mean of the members' IS: the same
        equations with fewer unknowns.  The chain's inner nets are not solved
        for (they are not test points).
        """
        pins_on: dict[str, list[tuple[Part, str]]] = {}
        for part in netlist.parts:
            for pin, net in part.pins:
                pins_on.setdefault(net, []).append((part, pin))
        probes = {net for _, net in netlist.probes}

        def joins(net: str):
            on = pins_on.get(net, [])
            if net in fixed or net in probes or net == GROUND or len(on) != 2:
                return None
            (p1, a), (p2, b) = on
            if {a, b} != {"A", "K"} or p1.kind not in ("led", "diode") or p2.kind != p1.kind:
                return None
            if p1.model != p2.model or _breaks_down(p1):  # breakdown does not scale with the chain
                return None
            return (p1, p2) if a == "K" else (p2, p1)

        nxt = {}
        for net in pins_on:
            pair = joins(net)
            if pair:
                nxt[pair[0].ref] = (pair[1], net)
        heads = [p for p in netlist.parts if p.ref in nxt and p.ref not in {q.ref for q, _ in nxt.values()}]
        merged: dict[str, Part] = {}
        hidden: set[str] = set()
        for head in heads:
            chain, nets = [head], []
            while chain[-1].ref in nxt:
                q, net = nxt[chain[-1].ref]
                chain.append(q)
                nets.append(net)
            hidden.update(nets)
            ref = "+".join(p.ref for p in chain)
            n_chain = len(chain)
            iss = np.stack([self._model(p, "IS", 1e-14) for p in chain])
            self.overrides[(ref, "IS")] = np.exp(np.mean(np.log(iss), axis=0))
            for name in ("N", "RS"):
                vals = np.stack([self._model(p, name, 1.0 if name == "N" else 0.0) for p in chain])
                self.overrides[(ref, name)] = n_chain * np.mean(vals, axis=0)
            merged[head.ref] = Part(ref=ref, kind=head.kind, pins=(("A", head.net("A")), ("K", chain[-1].net("K"))),
                                    role=head.role, model=head.model)
            for p in chain[1:]:
                merged[p.ref] = None
        parts = []
        for p in netlist.parts:
            if p.ref in merged:
                if merged[p.ref] is not None:
                    parts.append(merged[p.ref])
            else:
                parts.append(p)
        return parts, hidden

    # Parameters --------------------------------------------------------
    def _value(self, ref: str, name: str, nominal: float) -> np.ndarray:
        arr = self.overrides.get((ref, name))
        if arr is None:
            return np.full(self.n, float(nominal))
        return np.broadcast_to(np.asarray(arr, dtype=float), (self.n,)).copy()

    def _model(self, part: Part, name: str, default: float) -> np.ndarray:
        return self._value(part.ref, name, part.model.get(name, default))

    def _series(self, part: Part, pin_net: str, r_param: str, suffix: str, res: list) -> str:
        """Insert a model's series resistance as SPICE does: on an internal node."""
        r = self._model(part, r_param, 0.0)
        if np.all(r <= 0):
            return pin_net
        inner = f"{part.ref}:{suffix}"
        self._internal.append(inner)
        res.append((f"{part.ref}.{r_param}", (pin_net, inner), {"g": 1.0 / np.maximum(r, 1e-9)}))
        return inner

    def _group(self, items, names, width: int = 3) -> _Group:
        if not items:
            return _Group([], np.zeros((0, width), dtype=int), {k: np.zeros((self.n, 0)) for k in names})
        refs = [r for r, _, _ in items]
        nodes = np.array([[self.index[x] for x in nets] for _, nets, _ in items], dtype=int)
        params = {k: np.stack([p[k] for _, _, p in items], axis=1) for k in names}
        return _Group(refs, nodes, params)



def _inner_overrides(netlist: Netlist, overrides: Overrides) -> dict:
    """Overrides with a composite's ``(Q1, "QD.BF")`` addressed to its inner part ``(Q1.QD, BF)``."""
    composite = {p.ref for p in netlist.parts if p.is_composite}
    out = {}
    for (ref, param), arr in overrides.items():
        if ref in composite:
            inner, dot, name = param.partition(".")
            if not dot:
                raise ValueError(f"{ref} is built of parts: override one of them, as ({ref!r}, 'QD.{param}')")
            ref, param = f"{ref}.{inner}", name
        out[(ref, param)] = arr
    return out


# ------------------------------------------------------------------ elements
def _resistor(ix: NetIndex, part: Part, el: _Elements) -> None:
    el.res.append((part.ref, part.nets, {"g": 1.0 / ix._value(part.ref, "value", part.value)}))


def _capacitor(ix: NetIndex, part: Part, el: _Elements) -> None:
    el.caps.append((part.ref, part.nets, {"c": ix._value(part.ref, "value", part.value), "ic": np.zeros(ix.n)}))


def _diode(ix: NetIndex, part: Part, el: _Elements) -> None:
    a, kk = part.nets
    rs = np.maximum(ix._model(part, "RS", 0.0), 0.0)
    a_int = a
    if np.any(rs > 0):  # the junction's own anode, behind RS
        a_int = f"{part.ref}:a"
        ix._behind_rs.append(a_int)
    n = ix._model(part, "N", 1.0)
    # No BV: breakdown at an infinite voltage.  NBV defaults to N, IBV to 1 mA (ngspice's defaults).
    zener = _breaks_down(part)
    el.diodes.append((part.ref, (a, kk, a_int), {
        "is": ix._model(part, "IS", 1e-14), "n": n, "rs": rs,
        "bv": ix._model(part, "BV", 0.0) if zener else np.full(ix.n, np.inf),
        "ibv": ix._model(part, "IBV", 1e-3),
        "nbv": ix._model(part, "NBV", 1.0) if zener and _given(part, "NBV") else n}))


def _given(part: Part, name: str) -> bool:
    return part.model is not None and any(k == name for k, _ in part.model.params)


def _breaks_down(part: Part) -> bool:
    """Whether a diode's card gives BV, which is what turns on SPICE's breakdown branch."""
    return _given(part, "BV")


def _bjt(ix: NetIndex, part: Part, el: _Elements) -> None:
    c, b, e = part.nets
    c = ix._series(part, c, "RC", "c", el.res)
    b = ix._series(part, b, "RB", "b", el.res)
    e = ix._series(part, e, "RE", "e", el.res)
    p = {name.lower(): ix._model(part, name, d) for name, d in
         (("IS", 1e-16), ("BF", 100.0), ("BR", 1.0), ("NF", 1.0), ("NR", 1.0),
          ("VAF", 0.0), ("IKF", 0.0), ("ISE", 0.0), ("NE", 1.5))}
    p["sign"] = np.full(ix.n, 1.0 if part.kind == "npn" else -1.0)
    el.bjts.append((part.ref, (c, b, e), p))


def _nmos(ix: NetIndex, part: Part, el: _Elements) -> None:
    d, g, s = part.nets
    d = ix._series(part, d, "RD", "d", el.res)
    s = ix._series(part, s, "RS", "s", el.res)
    el.mos.append((part.ref, (d, g, s), {"vto": ix._model(part, "VTO", 0.0),
                                         "kp": ix._model(part, "KP", 2e-5),
                                         "lam": ix._model(part, "LAMBDA", 0.0),
                                         "n": ix._model(part, "N", NMOS_N_DEFAULT),
                                         "gleak": ix._model(part, "GLEAK", GMIN)}))


def _lamp(ix: NetIndex, part: Part, el: _Elements) -> None:
    th = f"{part.ref}:th"
    ix._internal.append(th)
    troom = ix._model(part, "TROOM", 300.0)
    el.lamps.append((part.ref, (*part.nets, th), {"r0": ix._model(part, "R0", 1.0), "troom": troom,
                                                  "alpha": ix._model(part, "ALPHA", 1.2),
                                                  "k": ix._model(part, "K", 1e-12),
                                                  "thot": ix._model(part, "THOT", 2700.0)}))
    el.caps.append((f"{part.ref}.CTH", (th, GROUND), {"c": ix._model(part, "CTH", 1e-3), "ic": troom}))


#: How a part of each kind enters the simulator: kind -> adder of its elements.
ELEMENTS: dict[str, Callable[[NetIndex, Part, _Elements], None]] = {
    "resistor": _resistor,
    "capacitor": _capacitor,
    "diode": _diode,
    "led": _diode,
    "npn": _bjt,
    "pnp": _bjt,
    "nmos": _nmos,
    "lamp": _lamp,
}
