"""Batched nonlinear transient and DC analysis of a netlist.

Modified nodal analysis with Newton's method at every implicit time step, run on
N parameter sets at once: every array carries the batch as its first axis, so a
thousand tolerance draws cost one pass of numpy work per Newton iteration, not a
thousand Python loops.  The integrator is the trapezoidal rule with local
truncation-error step control, falling back to backward Euler on the first step
after each source breakpoint (as SPICE does) so switching edges do not ring.

Sources must have their minus terminal on ground; their nodes are then known
voltages and drop out of the unknowns, and the current they deliver comes out of
Kirchhoff's law at their node.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from . import devices
from .circuit import GROUND, Netlist, Overrides, Part
from .errors import SimulationError

RELTOL = 1e-3
VNTOL = 1e-6  # V, Newton's absolute voltage tolerance (SPICE default)
LTE_RELTOL = 1e-3
LTE_ABSTOL = 1e-4  # V (or K on a lamp's thermal node)
TRTOL = 7.0
DI_REL = 0.1  # largest change of a source current in one step, relative to its peak so far
DI_FLOOR_A = 1e-6  # SPICE's allowance for its pessimistic LTE estimate
MAX_NEWTON = 60
MAX_DV = 5.0  # V, largest node-voltage change in one Newton iteration
MAX_DT = 400.0  # K, largest filament-temperature change in one Newton iteration


# --------------------------------------------------------------------- compile
@dataclass
class _Group:
    """Devices of one kind, their node indices and per-batch parameters."""

    refs: list
    nodes: np.ndarray  # (n_dev, n_terminals) node indices
    params: dict  # name -> (N, n_dev)


class Compiled:
    """A netlist flattened into node indices and batched parameter arrays."""

    def __init__(self, netlist: Netlist, overrides: Overrides | None, n: int):
        self.netlist = netlist
        self.n = n
        self.overrides = dict(overrides or {})
        for (ref, _), arr in self.overrides.items():
            if np.shape(arr) not in ((n,), ()):
                raise ValueError(f"override for {ref} has shape {np.shape(arr)}, expected ({n},)")
        fixed = [s.plus for s in netlist.sources]
        for s in netlist.sources:
            if s.minus != GROUND:
                raise ValueError(f"source {s.name} must return to ground")
        parts, hidden = self._merge_chains(netlist, fixed)
        unknown = [net for net in netlist.nets if net not in fixed and net not in hidden]
        self._internal: list[str] = []
        res, caps, diodes, bjts, mos, lamps = [], [], [], [], [], []
        for part in parts:
            self._add(part, unknown, res, caps, diodes, bjts, mos, lamps)
        unknown += self._internal
        self.names = unknown + fixed + [GROUND]
        self.n_unknown = len(unknown)
        self.n_fixed = len(fixed)
        self.size = len(self.names)
        self.index = {name: i for i, name in enumerate(self.names)}
        self.sources = netlist.sources
        self.source_levels = np.stack([self._value(s.name, "level", s.level_v) for s in netlist.sources], axis=1)
        self.res = self._group(res, ("g",))
        self.caps = self._group(caps, ("c", "ic"))
        self.diodes = self._group(diodes, ("is", "n"))
        self.bjts = self._group(bjts, ("sign", "is", "bf", "br", "nf", "nr", "vaf", "ikf", "ise", "ne"))
        self.mos = self._group(mos, ("vto", "kp", "lam"))
        self.lamps = self._group(lamps, ("r0", "troom", "alpha", "k"))
        self._flat_linear()

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
            if p1.model != p2.model:
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

    def _add(self, part, unknown, res, caps, diodes, bjts, mos, lamps) -> None:
        k = part.kind
        if k == "resistor":
            res.append((part.ref, part.nets, {"g": 1.0 / self._value(part.ref, "value", part.value)}))
        elif k == "capacitor":
            caps.append((part.ref, part.nets, {"c": self._value(part.ref, "value", part.value), "ic": np.zeros(self.n)}))
        elif k in ("diode", "led"):
            a, kk = part.nets
            a_int = self._series(part, a, "RS", "a", res)
            diodes.append((part.ref, (a_int, kk), {"is": self._model(part, "IS", 1e-14), "n": self._model(part, "N", 1.0)}))
        elif k in ("npn", "pnp"):
            c, b, e = part.nets
            c = self._series(part, c, "RC", "c", res)
            b = self._series(part, b, "RB", "b", res)
            e = self._series(part, e, "RE", "e", res)
            p = {name.lower(): self._model(part, name, d) for name, d in
                 (("IS", 1e-16), ("BF", 100.0), ("BR", 1.0), ("NF", 1.0), ("NR", 1.0),
                  ("VAF", 0.0), ("IKF", 0.0), ("ISE", 0.0), ("NE", 1.5))}
            p["sign"] = np.full(self.n, 1.0 if k == "npn" else -1.0)
            bjts.append((part.ref, (c, b, e), p))
        elif k == "nmos":
            d, g, s = part.nets
            d = self._series(part, d, "RD", "d", res)
            s = self._series(part, s, "RS", "s", res)
            mos.append((part.ref, (d, g, s), {"vto": self._model(part, "VTO", 0.0),
                                               "kp": self._model(part, "KP", 2e-5),
                                               "lam": self._model(part, "LAMBDA", 0.0)}))
        elif k == "lamp":
            th = f"{part.ref}:th"
            self._internal.append(th)
            troom = self._model(part, "TROOM", 300.0)
            lamps.append((part.ref, (*part.nets, th), {"r0": self._model(part, "R0", 1.0), "troom": troom,
                                                       "alpha": self._model(part, "ALPHA", 1.2),
                                                       "k": self._model(part, "K", 1e-12)}))
            caps.append((f"{part.ref}.CTH", (th, GROUND), {"c": self._model(part, "CTH", 1e-3), "ic": troom}))
        else:  # pragma: no cover - PartKind is closed
            raise ValueError(f"{part.ref}: unknown kind {k}")

    def _group(self, items, names) -> _Group:
        if not items:
            return _Group([], np.zeros((0, 0), dtype=int), {k: np.zeros((self.n, 0)) for k in names})
        refs = [r for r, _, _ in items]
        nodes = np.array([[self.index[x] for x in nets] for _, nets, _ in items], dtype=int)
        params = {k: np.stack([p[k] for _, _, p in items], axis=1) for k in names}
        return _Group(refs, nodes, params)

    # Linear stamps ---------------------------------------------------------
    def _pair_stamp(self, nodes: np.ndarray, values: np.ndarray) -> np.ndarray:
        """Sum two-terminal conductances ``values`` (N, n_dev) into a matrix."""
        m = np.zeros((self.n, self.size, self.size))
        for j, (a, b) in enumerate(nodes[:, :2]):
            v = values[:, j]
            m[:, a, a] += v
            m[:, b, b] += v
            m[:, a, b] -= v
            m[:, b, a] -= v
        return m

    def _flat_linear(self) -> None:
        self.g_lin = self._pair_stamp(self.res.nodes, self.res.params["g"])
        self.g_cap = self._pair_stamp(self.caps.nodes, self.caps.params["c"])
        size = self.size
        d = self.diodes.nodes
        if len(d):
            a, k = d[:, 0], d[:, 1]
            self._d_flat = np.concatenate([a * size + a, k * size + k, a * size + k, k * size + a])
        b = self.bjts.nodes
        if len(b):
            rows = np.concatenate([b[:, 0], b[:, 1], b[:, 2]])
            self._q_rows = rows
            self._q_flat = np.concatenate([r * size + b[:, c] for r in (b[:, 0], b[:, 1], b[:, 2]) for c in (0, 1, 2)])
        m = self.mos.nodes
        if len(m):
            self._m_flat = np.concatenate([r * size + m[:, c] for r in (m[:, 0], m[:, 2]) for c in (0, 1, 2)])
        lp = self.lamps.nodes
        if len(lp):
            self._l_flat = np.concatenate([r * size + lp[:, c] for r in (lp[:, 0], lp[:, 1], lp[:, 2]) for c in (0, 1, 2)])

    def fixed_values(self, t_s: float, scale: float = 1.0) -> np.ndarray:
        """Source node voltages at time ``t_s``, shape (N, n_fixed)."""
        frac = np.array([s.value_at(t_s) for s in self.sources])
        return self.source_levels * frac * scale


# ---------------------------------------------------------------- nonlinear
class _Limits:
    """Junction voltages of the previous Newton iterate, for SPICE-style limiting."""

    def __init__(self, c: Compiled):
        self.vd = np.zeros_like(c.diodes.params["is"])
        self.vbe = np.zeros_like(c.bjts.params["is"])
        self.vbc = np.zeros_like(c.bjts.params["is"])
        nvt = c.diodes.params["n"] * devices.VT_NOMINAL
        self.d_vcrit = devices.junction_vcrit(c.diodes.params["is"], nvt)
        q = c.bjts.params
        self.be_vcrit = devices.junction_vcrit(q["is"], q["nf"] * devices.VT_NOMINAL)
        self.bc_vcrit = devices.junction_vcrit(q["is"], q["nr"] * devices.VT_NOMINAL)

    def start_at(self, c: Compiled, x: np.ndarray) -> "_Limits":
        """Take the junction voltages of a known state ``x`` as the previous iterate."""
        d, q = c.diodes.nodes, c.bjts.nodes
        if len(d):
            self.vd = x[:, d[:, 0]] - x[:, d[:, 1]]
        if len(q):
            sgn = c.bjts.params["sign"]
            self.vbe = sgn * (x[:, q[:, 1]] - x[:, q[:, 2]])
            self.vbc = sgn * (x[:, q[:, 1]] - x[:, q[:, 0]])
        return self

    def copy(self) -> "_Limits":
        new = object.__new__(_Limits)
        new.__dict__ = {k: v.copy() for k, v in self.__dict__.items()}
        return new


def _stamp_nonlinear(c: Compiled, x: np.ndarray, lim: _Limits, G: np.ndarray, rhs: np.ndarray,
                     init_junctions: bool = False) -> np.ndarray:
    """Add every nonlinear device's linearisation at ``x``; return the 'limited' mask (N,)."""
    n, size = c.n, c.size
    Gf = G.reshape(n, size * size)
    limited = np.zeros(n, dtype=bool)
    vt = devices.VT_NOMINAL

    d = c.diodes
    if d.refs:
        a, k = d.nodes[:, 0], d.nodes[:, 1]
        v = x[:, a] - x[:, k]
        nvt = d.params["n"] * vt
        if init_junctions:  # SPICE's first DC iteration: every junction starts at its critical voltage
            v = lim.d_vcrit
        v, hit = devices.pnjlim(v, lim.vd, nvt, lim.d_vcrit)
        lim.vd = v
        limited |= hit.any(axis=1)
        i, g = devices.diode(v, is_a=d.params["is"], n=d.params["n"])
        ieq = i - g * v
        np.add.at(Gf.T, c._d_flat, np.concatenate([g, g, -g, -g], axis=1).T)
        np.add.at(rhs.T, np.concatenate([a, k]), np.concatenate([-ieq, ieq], axis=1).T)

    q = c.bjts
    if q.refs:
        p = q.params
        s = p["sign"]
        cn, bn, en = q.nodes[:, 0], q.nodes[:, 1], q.nodes[:, 2]
        vbe = s * (x[:, bn] - x[:, en])
        vbc = s * (x[:, bn] - x[:, cn])
        nvt_f, nvt_r = p["nf"] * vt, p["nr"] * vt
        if init_junctions:  # base-emitter at its critical voltage, base-collector at zero
            vbe, vbc = lim.be_vcrit, np.zeros_like(vbc)
        vbe, h1 = devices.pnjlim(vbe, lim.vbe, nvt_f, lim.be_vcrit)
        vbc, h2 = devices.pnjlim(vbc, lim.vbc, nvt_r, lim.bc_vcrit)
        lim.vbe, lim.vbc = vbe, vbc
        limited |= (h1 | h2).any(axis=1)
        ic, ib, dic_be, dic_bc, dib_be, dib_bc = devices.bjt(
            vbe, vbc, is_a=p["is"], bf=p["bf"], br=p["br"], nf=p["nf"], nr=p["nr"],
            vaf=p["vaf"], ikf=p["ikf"], ise=p["ise"], ne=p["ne"])
        # Terminal currents in node terms; derivatives w.r.t. (vc, vb, ve).
        Ic, Ib = s * ic, s * ib
        jc = (-dic_bc, dic_be + dic_bc, -dic_be)
        jb = (-dib_bc, dib_be + dib_bc, -dib_be)
        je = tuple(-(u + w) for u, w in zip(jc, jb))
        # Linearise around the limited junction voltages, not the raw iterate.
        vb_l = x[:, en] + s * vbe
        vc_l = vb_l - s * vbc
        vnodes = (vc_l, vb_l, x[:, en])
        ieq = []
        for I, J in ((Ic, jc), (Ib, jb), (-(Ic + Ib), je)):
            ieq.append(I - sum(Jk * vk for Jk, vk in zip(J, vnodes)))
        vals = np.concatenate([*jc, *jb, *je], axis=1)
        np.add.at(Gf.T, c._q_flat, vals.T)
        np.add.at(rhs.T, c._q_rows, -np.concatenate(ieq, axis=1).T)

    m = c.mos
    if m.refs:
        p = m.params
        dn, gn, sn = m.nodes[:, 0], m.nodes[:, 1], m.nodes[:, 2]
        vgs = x[:, gn] - x[:, sn]
        vds = x[:, dn] - x[:, sn]
        i_d, gm, gds = devices.mosfet_level1(vgs, vds, vto=p["vto"], kp=p["kp"], lam=p["lam"])
        jd = (gds, gm, -(gm + gds))
        js = tuple(-u for u in jd)
        ieq_d = i_d - gm * vgs - gds * vds
        np.add.at(Gf.T, c._m_flat, np.concatenate([*jd, *js], axis=1).T)
        np.add.at(rhs.T, np.concatenate([dn, sn]), np.concatenate([-ieq_d, ieq_d], axis=1).T)

    lp = c.lamps
    if lp.refs:
        p = lp.params
        an, bn2, tn = lp.nodes[:, 0], lp.nodes[:, 1], lp.nodes[:, 2]
        v = x[:, an] - x[:, bn2]
        t = np.maximum(x[:, tn], 1.0)
        i, di_dv, di_dt, p_net, dp_dv, dp_dt = devices.lamp(
            v, t, r0_ohm=p["r0"], t_room_k=p["troom"], alpha=p["alpha"], k_w_per_k4=p["k"])
        ja = (di_dv, -di_dv, di_dt)
        jb = (-di_dv, di_dv, -di_dt)
        jt = (-dp_dv, dp_dv, -dp_dt)
        xs = (x[:, an], x[:, bn2], t)
        ieq = [I - sum(Jk * vk for Jk, vk in zip(J, xs)) for I, J in ((i, ja), (-i, jb), (-p_net, jt))]
        np.add.at(Gf.T, c._l_flat, np.concatenate([*ja, *jb, *jt], axis=1).T)
        np.add.at(rhs.T, np.concatenate([an, bn2, tn]), -np.concatenate(ieq, axis=1).T)
    return limited


def _solve(A: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Batched dense solve; small systems, so numpy's LAPACK loop is fine.

    A member whose matrix is singular (or holds non-finite numbers, after a wild
    Newton step) gets NaN, which the caller treats as not converged, instead of
    stopping the whole batch.
    """
    if A.shape[1] == 0:
        return b.copy()
    try:
        return np.linalg.solve(A, b[..., None])[..., 0]
    except np.linalg.LinAlgError:
        out = np.full(b.shape, np.nan)
        for k in range(A.shape[0]):
            if np.all(np.isfinite(A[k])) and np.all(np.isfinite(b[k])):
                try:
                    out[k] = np.linalg.solve(A[k], b[k])
                except np.linalg.LinAlgError:
                    pass
        return out


def _newton(c: Compiled, x0: np.ndarray, xf: np.ndarray, G0: np.ndarray, rhs0: np.ndarray,
            lim: _Limits, max_iter: int = MAX_NEWTON, init_junctions: bool = False):
    """Newton iterations at one time point; returns (x, converged mask, G, rhs).

    ``init_junctions`` linearises the first iteration at SPICE's junction
    starting guesses rather than at ``x0`` (for a DC solve from nothing).
    """
    nu = c.n_unknown
    x = x0.copy()
    x[:, nu:nu + c.n_fixed] = xf
    x[:, -1] = 0.0
    th = c.lamps.nodes[:, 2] if c.lamps.refs else None
    step_limit = np.full(nu, MAX_DV)
    if th is not None:
        step_limit[th] = MAX_DT
    done = np.zeros(c.n, dtype=bool)
    for it in range(max_iter):
        G = G0.copy()
        rhs = rhs0.copy()
        limited = _stamp_nonlinear(c, x, lim, G, rhs, init_junctions and it == 0)
        A = G[:, :nu, :nu]
        b = rhs[:, :nu] - np.einsum("nij,nj->ni", G[:, :nu, nu:], x[:, nu:])
        xu = _solve(A, b)
        bad = ~np.all(np.isfinite(xu), axis=1)
        xu[bad] = x[bad, :nu]  # leave a failed member where it was; it stays unconverged
        step = xu - x[:, :nu]
        # Damped Newton: no node moves more than MAX_DV (a lamp's thermal node
        # more than MAX_DT) in one iteration, so a poor linearisation cannot fling
        # the iterate far from the physical region.
        ratio = np.max(np.abs(step) / step_limit, axis=1, initial=0.0)
        damped = ratio > 1.0
        step = step / np.maximum(ratio, 1.0)[:, None]
        xu = x[:, :nu] + step
        if th is not None:  # a filament is never colder than the room it sits in
            xu[:, th] = np.maximum(xu[:, th], c.lamps.params["troom"])
        dx = np.abs(step)
        ok = (np.all(dx <= RELTOL * np.maximum(np.abs(xu), np.abs(x[:, :nu])) + VNTOL, axis=1) & ~limited & ~damped
              & ~bad)
        x[:, :nu] = xu
        done = ok
        if done.all():
            break
    return x, done, G, rhs


# ------------------------------------------------------------------ results
@dataclass(frozen=True)
class Traces:
    """The outcome of one batched transient: node voltages and source currents.

    ``t_s`` is shared by the whole batch.  ``voltages`` has shape (N, T, nodes);
    ``source_currents`` (N, T, sources) is the current each source *delivers*.
    """

    netlist: Netlist
    t_s: np.ndarray
    names: tuple[str, ...]
    voltages: np.ndarray
    source_currents: np.ndarray
    compiled: Compiled

    @property
    def n(self) -> int:
        return self.voltages.shape[0]

    def switch_power(self, ref: str) -> np.ndarray:
        """Instantaneous dissipation of transistor ``ref`` (BJT or MOSFET), shape (N, T).

        Device currents are evaluated again from the solved junction voltages;
        the power is the sum of pin voltage times pin current over its
        external pins, so series resistances inside the model count too.
        """
        c = self.compiled
        part = self.netlist.part(ref)
        vx = {pin: self.v(net) for pin, net in part.pins}
        if ref in c.bjts.refs:
            j = c.bjts.refs.index(ref)
            cn, bn, en = c.bjts.nodes[j]
            p = {k: v[:, j:j + 1] for k, v in c.bjts.params.items()}
            s = p["sign"]
            vbe = s * (self.voltages[:, :, bn] - self.voltages[:, :, en])
            vbc = s * (self.voltages[:, :, bn] - self.voltages[:, :, cn])
            ic, ib, *_ = devices.bjt(vbe, vbc, is_a=p["is"], bf=p["bf"], br=p["br"], nf=p["nf"], nr=p["nr"],
                                     vaf=p["vaf"], ikf=p["ikf"], ise=p["ise"], ne=p["ne"])
            ic, ib = s * ic, s * ib
            return vx["C"] * ic + vx["B"] * ib - vx["E"] * (ic + ib)
        j = c.mos.refs.index(ref)
        dn, gn, sn = c.mos.nodes[j]
        p = {k: v[:, j:j + 1] for k, v in c.mos.params.items()}
        vv = self.voltages
        i_d, _, _ = devices.mosfet_level1(vv[:, :, gn] - vv[:, :, sn], vv[:, :, dn] - vv[:, :, sn],
                                          vto=p["vto"], kp=p["kp"], lam=p["lam"])
        return (vx["D"] - vx["S"]) * i_d

    def v(self, net: str) -> np.ndarray:
        """Voltage of ``net`` against ground, shape (N, T)."""
        if net == GROUND:
            return np.zeros(self.voltages.shape[:2])
        return self.voltages[:, :, self.names.index(net)]

    def i_source(self, name: str) -> np.ndarray:
        """Current delivered by source ``name``, shape (N, T)."""
        idx = [s.name for s in self.netlist.sources].index(name)
        return self.source_currents[:, :, idx]


def _source_currents(c: Compiled, G: np.ndarray, rhs: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Current each source delivers: the KCL imbalance at its node."""
    nu, nf = c.n_unknown, c.n_fixed
    rows = slice(nu, nu + nf)
    return np.einsum("nij,nj->ni", G[:, rows, :], x) - rhs[:, rows]


# ---------------------------------------------------------------- transient
def transient(netlist: Netlist, *, overrides: Overrides | None = None, n: int | None = None,
              max_step_s: float | None = None) -> Traces:
    """Simulate ``netlist`` from t = 0 to ``netlist.stop_s`` for a batch of parameter sets.

    ``n`` is the batch size (taken from the overrides when omitted).  All
    capacitors start discharged and every lamp filament at room temperature,
    like SPICE's ``uic`` with ``.ic`` on the thermal nodes.
    """
    if n is None:
        n = max((np.size(a) for a in (overrides or {}).values()), default=1)
    c = Compiled(netlist, overrides, n)
    stop = netlist.stop_s
    hmax = max_step_s or stop / 50.0
    bps = sorted({t for s in netlist.sources for t in s.breakpoints if 0 < t < stop} | {stop})
    h_start = min(stop * 1e-6, hmax)

    x = np.zeros((n, c.size))
    if c.lamps.refs:
        x[:, c.lamps.nodes[:, 2]] = c.lamps.params["troom"]
    x[:, c.n_unknown:c.n_unknown + c.n_fixed] = c.fixed_values(0.0)
    cap_a, cap_b = c.caps.nodes[:, 0], c.caps.nodes[:, 1]
    cap_c = c.caps.params["c"]
    vc = x[:, cap_a] - x[:, cap_b]
    ic = np.zeros_like(vc)
    lim = _Limits(c)

    # Operating point at t = 0 with capacitors held at their initial voltage:
    # a tiny backward-Euler step.
    G_op = c.g_lin + c.g_cap * 1e9
    rhs_op = np.zeros((n, c.size))
    np.add.at(rhs_op.T, cap_a, (1e9 * cap_c * vc).T)
    np.add.at(rhs_op.T, cap_b, (-1e9 * cap_c * vc).T)
    x, ok, G, rhs = _newton(c, x, c.fixed_values(0.0), G_op, rhs_op, lim)
    times, volts, currents = [0.0], [x.copy()], [_source_currents(c, G, rhs, x)]
    i_peak = np.abs(currents[0])
    hist_t, hist_v = [0.0], [vc.copy()]

    t, h, bp_i, first = 0.0, h_start, 0, True
    n_steps = 0
    while t < stop * (1 - 1e-12):
        while bps[bp_i] <= t * (1 + 1e-12):
            bp_i += 1
        h = min(h, hmax, bps[bp_i] - t)
        trap = not first
        alpha = 2.0 if trap else 1.0
        geq = alpha * cap_c / h
        hist = geq * vc + (ic if trap else 0.0)
        G0 = c.g_lin + c.g_cap * (alpha / h)
        rhs0 = np.zeros((n, c.size))
        np.add.at(rhs0.T, cap_a, hist.T)
        np.add.at(rhs0.T, cap_b, (-hist).T)
        trial_lim = lim.copy()
        xn, ok, G, rhs = _newton(c, x, c.fixed_values(t + h), G0, rhs0, trial_lim)
        if not ok.all():
            h /= 8.0
            if h < stop * 1e-12:
                raise SimulationError(f"{netlist.title}: time step too small at t = {t:.6g} s")
            continue
        vcn = xn[:, cap_a] - xn[:, cap_b]
        if trap and len(hist_t) >= 3:
            ts = np.array(hist_t[-3:] + [t + h])
            vs = np.stack(hist_v[-3:] + [vcn])
            dd3 = _third_divided_difference(ts, vs)
            lte = h**3 * np.abs(dd3) / 2.0
            tol = TRTOL * (LTE_RELTOL * np.maximum(np.abs(vcn), np.abs(vc)) + LTE_ABSTOL)
            ratio = np.max(lte / tol) if lte.size else 0.0
            if ratio > 1.0 and h > h_start:
                h *= max(0.25, 0.9 * ratio ** (-1.0 / 3.0))
                continue
            grow = 2.0 if ratio == 0 else min(2.0, 0.9 * ratio ** (-1.0 / 3.0))
        else:
            grow = 2.0
        # Resolve the curve a builder looks at: no source current may move by more
        # than DI_REL of its largest value so far in one step, so fade crossings
        # interpolate accurately even where the load current is steep in Vc.
        i_new = _source_currents(c, G, rhs, xn)
        i_scale = np.maximum(i_peak, np.abs(i_new)) + DI_FLOOR_A
        di = np.max(np.abs(i_new - currents[-1]) / i_scale)
        if di > DI_REL and h > h_start:
            h *= max(0.2, 0.8 * DI_REL / di)
            continue
        grow = min(grow, max(1.0, 0.9 * DI_REL / max(di, 1e-12)))
        i_peak = np.maximum(i_peak, np.abs(i_new))
        icn = geq * (vcn - vc) - (ic if trap else 0.0)
        x, vc, ic, lim = xn, vcn, icn, trial_lim
        t += h
        n_steps += 1
        times.append(t)
        volts.append(x.copy())
        currents.append(i_new)
        hist_t.append(t)
        hist_v.append(vc.copy())
        first = False
        if bp_i < len(bps) and t >= bps[bp_i] * (1 - 1e-12):
            first = True
            h = h_start
            hist_t, hist_v = [t], [vc.copy()]  # no divided differences across a corner
        else:
            h *= max(grow, 0.5)
    return Traces(netlist=netlist, t_s=np.array(times), names=tuple(c.names),
                  voltages=np.stack(volts, axis=1), source_currents=np.stack(currents, axis=1), compiled=c)


def _third_divided_difference(ts: np.ndarray, vs: np.ndarray) -> np.ndarray:
    """f[t0, t1, t2, t3] for arrays vs of shape (4, N, k); ≈ f'''/6."""
    d1 = [(vs[i + 1] - vs[i]) / (ts[i + 1] - ts[i]) for i in range(3)]
    d2 = [(d1[i + 1] - d1[i]) / (ts[i + 2] - ts[i]) for i in range(2)]
    return (d2[1] - d2[0]) / (ts[3] - ts[0])


# ----------------------------------------------------------------------- DC
@dataclass(frozen=True)
class OperatingPoint:
    """DC node voltages (N, nodes) and source currents (N, sources)."""

    netlist: Netlist
    names: tuple[str, ...]
    voltages: np.ndarray
    source_currents: np.ndarray

    def v(self, net: str) -> np.ndarray:
        if net == GROUND:
            return np.zeros(self.voltages.shape[0])
        return self.voltages[:, self.names.index(net)]

    def i_source(self, name: str) -> np.ndarray:
        idx = [s.name for s in self.netlist.sources].index(name)
        return self.source_currents[:, idx]


def operating_point(netlist: Netlist, *, at_s: float, overrides: Overrides | None = None,
                    n: int | None = None) -> OperatingPoint:
    """Steady DC state with the sources as they are at time ``at_s``.

    Capacitors are open.  Newton starts from SPICE's junction guesses; members
    that do not converge are solved again with the sources ramped up in steps
    (source stepping), then with gmin stepping (a large conductance from every
    node to ground, relaxed a decade at a time, pins nodes that only
    reverse-biased junctions reach), then by letting the circuit settle in time.
    """
    if n is None:
        n = max((np.size(a) for a in (overrides or {}).values()), default=1)
    c = Compiled(netlist, overrides, n)
    x, ok, G, rhs = _dc_direct(c, at_s)
    for fallback in (_dc_source_stepping, _dc_gmin_stepping, _dc_pseudo_transient):
        if ok.all():
            break
        bad = np.flatnonzero(~ok)
        sub_ov = {k: (np.asarray(v)[bad] if np.ndim(v) else v) for k, v in (overrides or {}).items()}
        sub = Compiled(netlist, sub_ov, bad.size)
        xs, oks, Gs, rhss = fallback(sub, at_s)
        x[bad], G[bad], rhs[bad] = xs, Gs, rhss
        ok[bad] = oks
    if not ok.all():
        raise SimulationError(f"{netlist.title}: DC operating point did not converge")
    return OperatingPoint(netlist=netlist, names=tuple(c.names), voltages=x,
                          source_currents=_source_currents(c, G, rhs, x))


def _dc_pseudo_transient(c: Compiled, at_s: float):
    """The last resort: let the circuit settle in time from rest, with every capacitor made tiny.

    The DC state does not depend on capacitances, and small time steps keep
    each Newton solve close to the previous one, which is what makes a
    transient converge where a cold DC solve does not.  The final state is then
    polished by one more Newton solve.
    """
    netlist, n = c.netlist, c.n
    held = tuple(replace(s, level_v=s.level_v * s.value_at(at_s), shape=None) for s in netlist.sources)
    settle = replace(netlist, sources=held, release_s=1e-3, stop_s=1e-3)
    ov = dict(c.overrides)
    for part in netlist.parts:
        if part.kind == "capacitor":
            ov[(part.ref, "value")] = np.full(n, 1e-9)
        elif part.kind == "lamp":
            ov[(part.ref, "CTH")] = np.full(n, 1e-9)
    for src in netlist.sources:
        if (src.name, "level") in ov:
            ov[(src.name, "level")] = np.asarray(ov[(src.name, "level")]) * src.value_at(at_s)
    tr = transient(settle, overrides=ov, n=n)
    x0 = tr.voltages[:, -1, :]
    lim = _Limits(c).start_at(c, x0)
    return _newton(c, x0, c.fixed_values(at_s), _with_gmin(c, devices.GMIN), np.zeros((c.n, c.size)), lim,
                   max_iter=200)


def _dc_start(c: Compiled):
    x = np.zeros((c.n, c.size))
    if c.lamps.refs:
        x[:, c.lamps.nodes[:, 2]] = c.lamps.params["troom"]
    return x, _Limits(c), np.zeros((c.n, c.size))


def _with_gmin(c: Compiled, gmin: float) -> np.ndarray:
    """The linear matrix with ``gmin`` from every unknown node to ground."""
    G0 = c.g_lin.copy()
    idx = np.arange(c.n_unknown)
    G0[:, idx, idx] += gmin
    return G0


def _dc_direct(c: Compiled, at_s: float):
    """One Newton solve at the full sources from SPICE's junction guesses: enough for most members."""
    x, lim, rhs0 = _dc_start(c)
    return _newton(c, x, c.fixed_values(at_s), _with_gmin(c, devices.GMIN), rhs0, lim, max_iter=100,
                   init_junctions=True)


def _dc_source_stepping(c: Compiled, at_s: float):
    x, lim, rhs0 = _dc_start(c)
    G0 = _with_gmin(c, devices.GMIN)  # keeps capacitor-only nodes solvable
    for k, scale in enumerate(np.linspace(0.1, 1.0, 10)):
        x, ok, G, rhs = _newton(c, x, c.fixed_values(at_s, scale), G0, rhs0, lim, max_iter=200,
                                init_junctions=k == 0)
    return x, ok, G, rhs


def _dc_gmin_stepping(c: Compiled, at_s: float):
    x, lim, rhs0 = _dc_start(c)
    for k, gmin in enumerate(10.0 ** np.arange(-2, -13, -1)):
        x, ok, G, rhs = _newton(c, x, c.fixed_values(at_s), _with_gmin(c, gmin), rhs0, lim, max_iter=200,
                                init_junctions=k == 0)
    return x, ok, G, rhs
