"""Batched nonlinear transient and DC analysis of a netlist.

Modified nodal analysis with Newton's method at every implicit time step, run on
N parameter sets at once: every array carries the batch along one axis, so a
thousand tolerance draws cost one pass of numpy work per Newton iteration, not a
thousand Python loops.  The integrator is the trapezoidal rule with local
truncation-error step control, falling back to backward Euler on the first step
after each source breakpoint (as SPICE does) so switching edges do not ring.
Where Newton fails even at the smallest step, a recovery ladder takes over
for a while: backward Euler with more iterations from the last accepted point,
then gmin continuation within the step; only then does the run give up.

Sources must have their minus terminal on ground; their nodes are then known
voltages and drop out of the unknowns, and the current they deliver comes out of
Kirchhoff's law at their node.

Internally the batch is the *last* axis, so that picking nodes or matrix
entries yields contiguous rows and the linear solve (:mod:`.linsolve`) runs as a
short program of whole-batch operations on the matrix's fixed sparsity pattern.
A diode's series resistance is eliminated inside the diode rather than solved
for: its anode-side node is carried along and updated from the solution, so
the Newton iterates are the ones SPICE's internal node would give.  Newton
starts each step from the curve extrapolated through the last points, and a
member that has converged stops iterating, so the later iterations of a step
run only on the few members still moving.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from sheetgen.engine import devices
from sheetgen.model.netlist import GROUND, Netlist, Overrides
from sheetgen.errors import SimulationError
from sheetgen.engine.linsolve import Gather, Scatter, SparseLU
from sheetgen.engine.netindex import NetIndex

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
SPARSE_MIN_BATCH = 64  # below this LAPACK's per-member loop beats the sparse plan's fixed cost


# ---------------------------------------------------------------- solve plan
class Compiled(NetIndex):
    """A netlist's index (:class:`.netindex.NetIndex`) with the plan that stamps and solves it."""

    def __init__(self, netlist: Netlist, overrides: Overrides | None, n: int):
        super().__init__(netlist, overrides, n)
        self._given = overrides or {}  # as the caller gave them, to compile a part of the batch again
        self._plan_devices()
        self._plan_system()

    def _plan_devices(self) -> None:
        """Per-member device parameters (``batch``, batch last) and every pn junction in one table."""
        vt = devices.VT_NOMINAL
        d, q = self.diodes, self.bjts
        self._nd, self._nq = len(d.refs), len(q.refs)
        dp = {k: v.T for k, v in d.params.items()}
        qp = {k: v.T for k, v in q.params.items()}
        # Junctions: diodes, then base-emitter, then base-collector; v = sign (x[plus] - x[minus]).
        self._j_plus = np.concatenate([d.nodes[:, 2], q.nodes[:, 1], q.nodes[:, 1]])
        self._j_minus = np.concatenate([d.nodes[:, 1], q.nodes[:, 2], q.nodes[:, 0]])
        j_is = np.concatenate([dp["is"], qp["is"], qp["is"]])
        j_nvt = np.concatenate([dp["n"], qp["nf"], qp["nr"]]) * vt
        b = {"j_is": j_is, "j_nvt": j_nvt, "j_vcrit": devices.junction_vcrit(j_is, j_nvt),
             "inv_bf": 1.0 / qp["bf"], "inv_br": 1.0 / qp["br"],
             "inv_vaf": devices.inverse_or_zero(qp["vaf"]), "inv_ikf": devices.inverse_or_zero(qp["ikf"])}
        if np.any(qp["sign"] != 1.0):
            b["q_sign"] = qp["sign"]
            b["j_sign"] = np.concatenate([np.ones((self._nd, self.n)), qp["sign"], qp["sign"]])
        if np.any(dp["rs"] > 0):
            b["rs"] = dp["rs"]
        # Diodes with BV (zeners): their rows among the junctions, and the breakdown knee.
        self._zener = np.flatnonzero(np.isfinite(d.params["bv"][0])) if self._nd else np.zeros(0, dtype=int)
        if len(self._zener):
            z = self._zener
            b["z_nbv_vt"] = dp["nbv"][z] * vt
            b["z_bv"] = devices.breakdown_knee(dp["bv"][z], dp["ibv"][z], dp["is"][z], b["z_nbv_vt"], vt)
        if np.any(qp["ise"]):
            b["ise"], b["ne"] = qp["ise"], qp["ne"]
        b.update({k: v.T for k, v in self.mos.params.items()})
        b.update({k: v.T for k, v in self.lamps.params.items()})
        # One array, so narrowing the batch to some members is one gather.
        self._batch_rows, start = {}, 0
        for k, v in b.items():
            self._batch_rows[k] = slice(start, start + len(v))
            start += len(v)
        self._batch = np.concatenate(list(b.values()))
        self.batch = self.batch_of(self._batch)
        folded = np.flatnonzero(d.nodes[:, 2] != d.nodes[:, 0])  # diodes with a node behind RS, in row order
        self._fold = slice(None) if len(folded) == self._nd else folded
        self._fold_a, self._fold_k = d.nodes[folded, 0], d.nodes[folded, 1]
        limit = np.full((self.n_state, 1), 1.0 / MAX_DV)
        limit[self.lamps.nodes[:, 2]] = 1.0 / MAX_DT
        self._inv_step_limit = limit

    def narrowed(self, members: np.ndarray) -> "Compiled":
        """The same netlist compiled for some members of this batch only."""
        ov = {k: (np.asarray(v)[members] if np.ndim(v) else v) for k, v in self._given.items()}
        return Compiled(self.netlist, ov, members.size)

    def junction_guess(self) -> np.ndarray:
        """SPICE's first DC guess: diodes and base-emitters at their critical voltage, base-collectors at 0 V."""
        v = self.batch["j_vcrit"].copy()
        v[self._nd + self._nq:] = 0.0
        return v

    def batch_of(self, arr: np.ndarray) -> dict:
        """The per-member parameters by name, as views of ``arr`` (rows of ``_batch``, some members)."""
        return {k: arr[sl] for k, sl in self._batch_rows.items()}

    def _plan_system(self) -> None:
        """Matrix slots, the sparse LU plan, the linear values and where each stamp lands.

        Every value of the Newton system lives in one (slots, N) array: first
        the LU's entries and right-hand side over the unknowns, then the
        entries coupling unknown rows to source nodes (moved to the right-hand
        side each iteration), then the source rows with their own right-hand
        side (for the source currents).
        """
        n, nu, f0, nf = self.n, self.n_unknown, self.n_state, self.n_fixed

        def live(i):
            return i < nu or f0 <= i < f0 + nf

        # _stamp stacks its values in blocks of one row per device; each block
        # feeds matrix entries (row, col) and rhs terms (row, RHS), named here by
        # position in the device's node tuple, added (+1) or subtracted (-1).
        rhs = -1
        bjt = [[(0, 0, -1)], [(0, 1, 1)], [(0, 2, -1)], [(1, 0, -1)], [(1, 1, 1)], [(1, 2, -1)],
               [(2, 0, 1)], [(2, 1, -1)], [(2, 2, 1)], [(0, rhs, 1)], [(1, rhs, 1)], [(2, rhs, -1)]]
        mos = [[(0, 0, 1), (2, 0, -1)], [(0, 1, 1), (2, 1, -1)], [(0, 2, -1), (2, 2, 1)],
               [(0, rhs, -1), (2, rhs, 1)]]
        lamp = [[(0, 0, 1), (0, 1, -1), (1, 0, -1), (1, 1, 1)], [(0, 2, 1), (1, 2, -1)],
                [(2, 0, -1), (2, 1, 1)], [(2, 2, -1)], [(0, rhs, 1), (1, rhs, -1)], [(2, rhs, 1)]]
        stamps = [(self.diodes.nodes, [[(0, 0, 1), (1, 1, 1), (0, 1, -1), (1, 0, -1)], [(1, rhs, 1), (0, rhs, -1)]]),
                  (self.bjts.nodes, bjt), (self.mos.nodes, mos), (self.lamps.nodes, lamp)]
        stamp_keys, stamp_rows, stamp_signs, row = [], [], [], 0
        for nodes, blocks in stamps:
            for block in blocks:
                for j, nd in enumerate(nodes):
                    for rt, ct, sign in block:
                        key = (nd[rt], rhs if ct == rhs else nd[ct])
                        if live(key[0]) and (key[1] == rhs or live(key[1])):
                            stamp_keys.append(key)
                            stamp_rows.append(row + j)
                            stamp_signs.append(sign)
                row += len(nodes)

        def pair(a, b):
            return [((a, a), 1.0), ((b, b), 1.0), ((a, b), -1.0), ((b, a), -1.0)]

        lin_keys = {k for nodes in (self.res.nodes, self.caps.nodes) for a, b in nodes
                    for k, _ in pair(a, b) if live(k[0]) and live(k[1])}
        keys = set(stamp_keys) | lin_keys
        self.lu = SparseLU(nu, [k for k in keys if k[0] < nu and 0 <= k[1] < nu])
        slot = dict(self.lu.slot)
        self._n_lu = len(slot)
        uf = sorted(k for k in keys if k[0] < nu and k[1] >= f0)
        fx = sorted(k for k in keys if k[0] >= f0 and k[1] >= 0)
        for k in uf + fx:
            slot[k] = len(slot)
        for r in range(f0, f0 + nf):
            slot[(r, rhs)] = len(slot)
        self._uf = slice(self._n_lu, self._n_lu + len(uf))
        self._uf_cols = np.array([c for _, c in uf], dtype=int)
        self._uf_scatter = Scatter([slot[(r, rhs)] for r, _ in uf])
        self._fx = slice(self._uf.stop, self._uf.stop + len(fx))
        self._fx_cols = np.array([c for _, c in fx], dtype=int)
        self._src_scatter = Scatter([r - f0 for r, _ in fx])
        self._src = slice(self._fx.start, self._fx.stop + nf)  # the source rows: entries, then rhs
        self._src_g = slice(0, len(fx))
        self._src_rhs = slice(len(fx), len(fx) + nf)
        self._stamp_scatter = Gather([slot[k] for k in stamp_keys], stamp_rows, stamp_signs, len(slot), row)
        self._diag = np.array([slot[(i, i)] for i in range(nu)], dtype=int)

        self._w_lin = np.zeros((len(slot), n))
        self._w_cap = np.zeros((len(slot), n))
        for w, group, name in ((self._w_lin, self.res, "g"), (self._w_cap, self.caps, "c")):
            for (a, b), v in zip(group.nodes, group.params[name].T):
                for key, sgn in pair(a, b):
                    if key in slot:
                        w[slot[key]] += sgn * v
        cap_t, cap_s = [], []
        for j, (a, b) in enumerate(self.caps.nodes):
            for node, src in ((a, j), (b, len(self.caps.nodes) + j)):
                if live(node):
                    cap_t.append(slot[(node, rhs)])
                    cap_s.append(src)
        self._cap_scatter = Scatter(cap_t, cap_s)  # of [i; -i]: a capacitor's history current into its nodes
        cap_slots = np.flatnonzero(np.any(self._w_cap != 0.0, axis=1))
        self._cap_slots, self._w_cap = cap_slots, self._w_cap[cap_slots]

    def fixed_values(self, t_s: float, scale: float = 1.0) -> np.ndarray:
        """Source node voltages at time ``t_s``, shape (N, n_fixed)."""
        frac = np.array([s.value_at(t_s) for s in self.sources])
        return self.source_levels * frac * scale


# ---------------------------------------------------------------- nonlinear
def _stamp(c: Compiled, p: dict, x: np.ndarray, vj_old: np.ndarray, m0: np.ndarray, x_uf: np.ndarray,
           v_start: np.ndarray | None = None):
    """The Newton system at iterate ``x``: every device's linearisation added to ``m0``.

    ``p`` holds the members' parameters (``Compiled.batch`` or a narrowing of
    it) and ``vj_old`` their junction voltages at the previous iterate, for
    SPICE's limiting; ``v_start`` replaces the junction voltages of ``x``
    (SPICE's guesses for a DC solve from nothing).  Returns the system (a new
    array laid out as :meth:`Compiled._plan_system` says), the junction
    voltages used, a mask of members where limiting acted (or None) and, for
    the diodes with a node behind RS, what :func:`_behind_rs` needs.
    """
    blocks = []
    limited = fold = None
    vj = vj_old
    if len(c._j_plus):
        v = _junction_voltages(c, p, x) if v_start is None else v_start
        vj, hit = devices.pnjlim(v, vj_old, p["j_nvt"], p["j_vcrit"])
        if "z_bv" in p:  # deep in reverse a zener limits its mirrored junction instead
            z = c._zener
            vj[z], z_hit = devices.breakdown_limit(vj[z], vj_old[z], bv_x=p["z_bv"], nbv_vt=p["z_nbv_vt"],
                                                   vcrit=p["j_vcrit"][z])
            hit[z] |= z_hit
        if hit.any():
            limited = hit.any(axis=0)
        ij, gj = devices.junction(vj, p["j_is"], p["j_nvt"])
        if "z_bv" in p:
            ij[z], gj[z] = devices.breakdown(vj[z], ij[z], gj[z], is_a=p["j_is"][z], nvt=p["j_nvt"][z],
                                             bv_x=p["z_bv"], nbv_vt=p["z_nbv_vt"])

    nd, nq = c._nd, c._nq
    if nd:
        i_j, g_j, v_j = ij[:nd], gj[:nd], vj[:nd]
        if "rs" in p:
            # RS in series: the terminal sees g_j / (1 + RS g_j) at the terminal
            # voltage v_j + RS i_j, exactly what solving for the inner node gives.
            rs = p["rs"]
            share = 1.0 / (1.0 + rs * g_j)
            g = g_j * share
            v_t = v_j + rs * i_j
            fold = (v_j[c._fold], v_t[c._fold], share[c._fold])
        else:
            g, v_t = g_j, v_j
        blocks += [g, i_j - g * v_t]

    if nq:
        be, bc = slice(nd, nd + nq), slice(nd + nq, nd + 2 * nq)
        vbe, vbc = vj[be], vj[bc]
        leak = devices.be_leakage(vbe, p["ise"], p["ne"]) if "ise" in p else None
        ic, ib, dic_be, dic_bc, dib_be, dib_bc = devices.gummel_poon(
            ij[be], gj[be], ij[bc], gj[bc], vbc, leak,
            inv_bf=p["inv_bf"], inv_br=p["inv_br"], inv_vaf=p["inv_vaf"], inv_ikf=p["inv_ikf"])
        # Linearised about the limited junction voltages; rows C, B, E by (vc, vb, ve).
        r_c = dic_be * vbe + dic_bc * vbc - ic
        r_b = dib_be * vbe + dib_bc * vbc - ib
        if "q_sign" in p:
            r_c *= p["q_sign"]
            r_b *= p["q_sign"]
        j_cb, j_bb = dic_be + dic_bc, dib_be + dib_bc
        blocks += [dic_bc, j_cb, dic_be, dib_bc, j_bb, dib_be,
                   dic_bc + dib_bc, j_cb + j_bb, dic_be + dib_be, r_c, r_b, r_c + r_b]

    if c.mos.refs:
        dn, gn, sn = c.mos.nodes.T
        vgs = x[gn] - x[sn]
        vds = x[dn] - x[sn]
        i_d, gm, gds = devices.mosfet(vgs, vds, vto=p["vto"], kp=p["kp"], lam=p["lam"], n=p["n"], g_leak=p["gleak"])
        blocks += [gds, gm, gm + gds, i_d - gm * vgs - gds * vds]

    if c.lamps.refs:
        an, bn, tn = c.lamps.nodes.T
        v = x[an] - x[bn]
        t = np.maximum(x[tn], 1.0)
        i, di_dv, di_dt, p_net, dp_dv, dp_dt = devices.lamp(
            v, t, r0_ohm=p["r0"], t_room_k=p["troom"], alpha=p["alpha"], k_w_per_k4=p["k"])
        blocks += [di_dv, di_dt, dp_dv, dp_dt, di_dv * v + di_dt * t - i, p_net - dp_dv * v - dp_dt * t]

    m = c._stamp_scatter.onto(m0, blocks)
    c._uf_scatter.sub(m, m[c._uf] * x_uf)  # known source voltages go to the right-hand side
    return m, vj, limited, fold


def _junction_voltages(c: Compiled, p: dict, x: np.ndarray) -> np.ndarray:
    """Every junction's voltage (diodes, base-emitters, base-collectors) at node voltages ``x``."""
    v = x[c._j_plus] - x[c._j_minus]
    if "j_sign" in p:
        v *= p["j_sign"]
    return v


def _behind_rs(c: Compiled, y: np.ndarray, fold) -> np.ndarray:
    """Nodes behind diodes' RS at the solution ``y``: the inner node SPICE would have solved for."""
    v_j, v_t, share = fold
    k = y[c._fold_k]
    return k + v_j + (y[c._fold_a] - k - v_t) * share


def _solve(c: Compiled, m: np.ndarray, rebuild) -> np.ndarray:
    """The unknowns' Newton solution, shape (n_unknown, N); overwrites ``m``'s LU part.

    ``rebuild()`` gives the system again for LAPACK when the sparse plan meets
    a collapsed pivot.  A member whose matrix is singular (or holds non-finite
    numbers, after a wild Newton step) gets NaN, which the caller treats as not
    converged, instead of stopping the whole batch.
    """
    if m.shape[1] >= SPARSE_MIN_BATCH:
        x = c.lu.solve(m[:c._n_lu])
        if x is not None:
            return x
        m = rebuild()
    try:
        return c.lu.dense_solve(m[:c._n_lu])
    except np.linalg.LinAlgError:
        a, b = c.lu.dense(m[:c._n_lu])
        out = np.full(b.shape, np.nan)
        for k in range(a.shape[0]):
            if np.all(np.isfinite(a[k])) and np.all(np.isfinite(b[k])):
                try:
                    out[k] = np.linalg.solve(a[k], b[k])
                except np.linalg.LinAlgError:
                    pass
        return out.T


def _newton(c: Compiled, x0: np.ndarray, xf: np.ndarray, m0: np.ndarray, vj: np.ndarray,
            max_iter: int = MAX_NEWTON, init_junctions: bool = False):
    """Newton iterations at one time point.

    ``x0`` (n_state, N) is the starting point, ``xf`` (n_fixed, N) the source
    voltages now, ``m0`` the linear part of the system and ``vj`` the
    junction voltages behind ``x0``.  ``init_junctions`` linearises the first
    iteration at SPICE's junction starting guesses rather than at ``x0`` (for
    a DC solve from nothing).  Members stop iterating once converged,
    so the later iterations run only on the few that still move.  Returns
    (x, converged mask, the source rows of each member's last system,
    junction voltages).
    """
    nu, ns = c.n_unknown, c.n_state
    x = np.empty((c.size, c.n))
    x[:ns] = x0
    x[ns:ns + c.n_fixed] = xf
    x[-1] = 0.0
    th = c.lamps.nodes[:, 2]
    # The members still iterating (None while it is all of them), and their
    # slices of everything kept per member.
    act = None
    xa, vja, m0a, p = x, vj, m0, c.batch
    x_uf = x[c._uf_cols]
    y = x.copy()  # the solution, beside the known voltages
    v_start = c.junction_guess() if init_junctions else None
    for _ in range(max_iter):
        m, vj_new, limited, fold = _stamp(c, p, xa, vja, m0a, x_uf, v_start)
        if nu:
            y[:nu] = _solve(c, m, lambda: _stamp(c, p, xa, vja, m0a, x_uf, v_start)[0])
        if fold is not None:
            y[nu:ns] = _behind_rs(c, y, fold)
        v_start = None
        step = y[:ns] - xa[:ns]
        size = np.abs(step)
        peak = size.max() if ns else 0.0
        if not np.isfinite(peak):  # a member's solve failed: it stays where it was, unconverged
            bad = ~np.all(np.isfinite(step), axis=0)
            step[:, bad] = 0.0
            size[:, bad] = 0.0
            limited = bad if limited is None else limited | bad
            peak = size.max()
        # Damped Newton: no node moves more than MAX_DV (a lamp's thermal node
        # more than MAX_DT) in one iteration, so a poor linearisation cannot fling
        # the iterate far from the physical region.
        any_damped = peak > MAX_DV  # MAX_DV is the tightest limit: below it none is damped
        if any_damped:
            ratio = np.max(size * c._inv_step_limit, axis=0)
            damped = ratio > 1.0
            scale = 1.0 / np.maximum(ratio, 1.0)
            step *= scale
            size *= scale
        tol = np.abs(xa[:ns])
        xa[:ns] += step
        if len(th):  # a filament is never colder than the room it sits in
            xa[th] = np.maximum(xa[th], p["troom"])
        np.maximum(tol, np.abs(xa[:ns]), out=tol)
        tol *= RELTOL
        tol += VNTOL
        done = np.all(size <= tol, axis=0)
        if any_damped:
            done &= ~damped
        if limited is not None:
            done &= ~limited
        if act is None:
            vj, src, ok = vj_new, m[c._src], done
        else:
            x[:, act] = xa
            vj[:, act] = vj_new
            src[:, act] = m[c._src]
            ok[act] = done
        if done.all():
            break
        vja = vj_new
        if done.any():
            keep = ~done
            act = np.flatnonzero(keep) if act is None else act[keep]
            xa, vja, m0a, x_uf = x[:, act], vj_new[:, keep], m0[:, act], x_uf[:, keep]
            y = xa.copy()
            p = c.batch_of(c._batch[:, act])
    return x, ok, src, vj


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
        """Instantaneous dissipation of transistor ``ref`` (BJT, MOSFET or Darlington), shape (N, T).

        Device currents are evaluated again from the solved junction voltages;
        the power is the sum of pin voltage times pin current over its
        external pins, so series resistances inside the model count too.  A
        composite device dissipates what its transistors do (its resistors and
        diode carry next to nothing in a switch).
        """
        part = self.netlist.part(ref)
        if part.is_composite:
            return sum(self._one_switch_power(q) for q in part.expanded() if q.kind in ("npn", "pnp", "nmos"))
        return self._one_switch_power(part)

    def _one_switch_power(self, part) -> np.ndarray:
        c, ref = self.compiled, part.ref
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
        i_d, _, _ = devices.mosfet(vv[:, :, gn] - vv[:, :, sn], vv[:, :, dn] - vv[:, :, sn],
                                   vto=p["vto"], kp=p["kp"], lam=p["lam"], n=p["n"], g_leak=p["gleak"])
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


def _source_currents(c: Compiled, src: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Current each source delivers, (n_fixed, N): the KCL imbalance at its node.

    ``src`` are the source rows of the last Newton system, as :func:`_newton` returns them.
    """
    out = -src[c._src_rhs]
    c._src_scatter.add(out, src[c._src_g] * x[c._fx_cols])
    return out


def _linear_system(c: Compiled, g_per_f: float, i_cap: np.ndarray) -> np.ndarray:
    """The linear part of the Newton system, each capacitor a companion model.

    A capacitor C is a conductance ``g_per_f`` · C in parallel with a current
    source ``i_cap`` (n_caps, N) into its plus node.
    """
    m = c._w_lin.copy()
    m[c._cap_slots] += c._w_cap * g_per_f
    c._cap_scatter.add(m, np.concatenate([i_cap, -i_cap]))
    return m


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

    x = np.zeros((c.size, n))
    x[c.lamps.nodes[:, 2]] = c.batch["troom"]
    cap_a, cap_b = c.caps.nodes[:, 0], c.caps.nodes[:, 1]
    cap_c = c.caps.params["c"].T
    vc = x[cap_a] - x[cap_b]
    ic = np.zeros_like(vc)
    vj = np.zeros_like(c.batch["j_is"])

    # Operating point at t = 0 with capacitors held at their initial voltage:
    # a tiny backward-Euler step.
    m_op = _linear_system(c, 1e9, 1e9 * cap_c * vc)
    x, ok, src, vj = _newton(c, x[:c.n_state], c.fixed_values(0.0).T, m_op, vj)
    times, volts, currents = [0.0], [x], [_source_currents(c, src, x)]
    i_peak = np.abs(currents[0])
    hist_t, hist_v = [0.0], [vc]

    t, h, bp_i, first = 0.0, h_start, 0, True
    rung, calm = 0, 0  # the recovery ladder's rung in use, and steps accepted on it
    while t < stop * (1 - 1e-12):
        while bps[bp_i] <= t * (1 + 1e-12):
            bp_i += 1
        h = min(h, hmax, bps[bp_i] - t)
        trap = not first and rung == 0
        alpha = 2.0 if trap else 1.0
        geq = alpha * cap_c / h
        hist = geq * vc + (ic if trap else 0.0)
        m0 = _linear_system(c, alpha / h, hist)
        if rung:  # from the last solution: extrapolating across a kink is what failed
            xn, ok, src, vjn = _RUNGS[rung - 1](c, x[:c.n_state], c.fixed_values(t + h).T, m0, vj)
        else:
            x_start = _predict(hist_t[-3:], [v[:c.n_state] for v in volts[-min(3, len(hist_t)):]], t + h)
            xn, ok, src, vjn = _newton(c, x_start, c.fixed_values(t + h).T, m0, vj)
        if not ok.all():
            h /= 8.0
            if h < stop * 1e-12:
                if rung == len(_RUNGS):
                    raise SimulationError(f"{netlist.title}: time step too small at t = {t:.6g} s")
                rung, calm, h = rung + 1, 0, h_start
            continue
        if rung:
            calm += 1
            if calm >= RUNG_STEPS:
                rung = 0
        vcn = xn[cap_a] - xn[cap_b]
        order = 3 if trap else 2  # the error estimate's order: trapezoidal, or backward Euler on a rung
        if (trap or rung) and len(hist_t) >= order:
            dd = _divided_difference(hist_t[-order:] + [t + h], hist_v[-order:] + [vcn])
            lte = np.abs(dd) * (h**3 / 2.0 if trap else h**2)
            tol = (TRTOL if trap else 1.0) * (LTE_RELTOL * np.maximum(np.abs(vcn), np.abs(vc)) + LTE_ABSTOL)
            ratio = np.max(lte / tol) if lte.size else 0.0
            if ratio > 1.0 and h > h_start:
                h *= max(0.25, 0.9 * ratio ** (-1.0 / order))
                continue
            grow = 2.0 if ratio == 0 else min(2.0, 0.9 * ratio ** (-1.0 / order))
        else:
            grow = 2.0
        # Resolve the curve a builder looks at: no source current may move by more
        # than DI_REL of its largest value so far in one step, so fade crossings
        # interpolate accurately even where the load current is steep in Vc.
        i_new = _source_currents(c, src, xn)
        i_scale = np.maximum(i_peak, np.abs(i_new)) + DI_FLOOR_A
        di = np.max(np.abs(i_new - currents[-1]) / i_scale)
        if di > DI_REL and h > h_start:
            h *= max(0.2, 0.8 * DI_REL / di)
            continue
        grow = min(grow, max(1.0, 0.9 * DI_REL / max(di, 1e-12)))
        i_peak = np.maximum(i_peak, np.abs(i_new))
        icn = geq * (vcn - vc) - (ic if trap else 0.0)
        x, vc, ic, vj = xn, vcn, icn, vjn
        t += h
        times.append(t)
        volts.append(x)
        currents.append(i_new)
        hist_t.append(t)
        hist_v.append(vc)
        first = False
        if bp_i < len(bps) and t >= bps[bp_i] * (1 - 1e-12):
            first = True
            h = h_start
            hist_t, hist_v = [t], [vc]  # no divided differences across a corner
        else:
            h *= max(grow, 0.5)
    # Stacked as (T, rows, N) and viewed as (N, T, rows): no transposing copy.
    return Traces(netlist=netlist, t_s=np.array(times), names=tuple(c.names),
                  voltages=np.stack(volts).transpose(2, 0, 1),
                  source_currents=np.stack(currents).transpose(2, 0, 1), compiled=c)


def _patient_newton(c: Compiled, x0, xf, m0, vj):
    """The first rung of the recovery ladder: backward Euler (the caller's choice) and
    four times the Newton iterations, from the last accepted point."""
    return _newton(c, x0, xf, m0, vj, max_iter=4 * MAX_NEWTON)


def _gmin_continuation(c: Compiled, x0, xf, m0, vj):
    """The second rung: the step solved with a conductance from every node to ground,
    relaxed a decade at a time from 1 mS to nothing, each solve starting from the last."""
    x = x0
    for gmin in (*10.0 ** np.arange(-3, -13, -1), 0.0):
        m = m0.copy()
        m[c._diag] += gmin
        xx, ok, src, vj = _newton(c, x, xf, m, vj, max_iter=4 * MAX_NEWTON)
        x = xx[:c.n_state]
    return xx, ok, src, vj


#: What a time step tries when Newton fails even at the smallest step, in order.  A rung
#: stays in use for RUNG_STEPS accepted steps, then the fast path takes over again.
_RUNGS = (_patient_newton, _gmin_continuation)
RUNG_STEPS = 20


def _predict(ts: list[float], xs: list[np.ndarray], t: float) -> np.ndarray:
    """Newton's starting point: the polynomial through the last points, at ``t``.

    SPICE starts from the last point; extrapolating along the curve lands most
    members within tolerance at once, so they converge in one iteration.  The
    points are those since the last breakpoint, where the slope changes.
    """
    out = None
    for i, (ti, xi) in enumerate(zip(ts, xs)):
        w = 1.0
        for j, tj in enumerate(ts):
            if j != i:
                w *= (t - tj) / (ti - tj)
        out = xi * w if out is None else out + xi * w
    return out


def _divided_difference(ts: list[float], vs: list[np.ndarray]) -> np.ndarray:
    """f[t0, ..., tk] ≈ f^(k) / k! of k + 1 values (each (m, N)), as their weighted sum: no stacking."""
    out = None
    for i, (ti, vi) in enumerate(zip(ts, vs)):
        w = 1.0
        for j, tj in enumerate(ts):
            if j != i:
                w /= ti - tj
        out = vi * w if out is None else out + vi * w
    return out


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
                    n: int | None = None, start: OperatingPoint | None = None) -> OperatingPoint:
    """Steady DC state with the sources as they are at time ``at_s``.

    Capacitors are open.  Newton starts from SPICE's junction guesses, or with
    ``start`` from that solution's node voltages (member 0 of it, matched by
    node name; a node it lacks starts at 0 V), which is what a batch of small
    variations of one circuit converges from in a few iterations.  Members
    that do not converge are solved again from nothing with the sources ramped
    up in steps (source stepping), then with gmin stepping (a large conductance
    from every node to ground, relaxed a decade at a time, pins nodes that only
    reverse-biased junctions reach), then by letting the circuit settle in time.
    The solution does not depend on where Newton starts, only how fast it gets there.
    """
    if n is None:
        n = max((np.size(a) for a in (overrides or {}).values()), default=1)
    c = Compiled(netlist, overrides, n)
    x, ok, src, _ = _dc_direct(c, at_s) if start is None else _dc_from(c, at_s, start)
    for fallback in (_dc_source_stepping, _dc_gmin_stepping, _dc_pseudo_transient):
        if ok.all():
            break
        bad = np.flatnonzero(~ok)
        sub_ov = {k: (np.asarray(v)[bad] if np.ndim(v) else v) for k, v in (overrides or {}).items()}
        sub = Compiled(netlist, sub_ov, bad.size)
        xs, oks, srcs, _ = fallback(sub, at_s)
        x[:, bad], src[:, bad] = xs, srcs
        ok[bad] = oks
    if not ok.all():
        raise SimulationError(f"{netlist.title}: DC operating point did not converge")
    return OperatingPoint(netlist=netlist, names=tuple(c.names), voltages=np.ascontiguousarray(x.T),
                          source_currents=np.ascontiguousarray(_source_currents(c, src, x).T))


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
    x0 = transient(settle, overrides=ov, n=n).voltages[:, -1, :].T
    return _newton(c, x0[:c.n_state], c.fixed_values(at_s).T, _with_gmin(c, devices.GMIN),
                   _junction_voltages(c, c.batch, x0), max_iter=200)


def _dc_start(c: Compiled):
    """Every node at 0 V and filaments at their rated temperature (a lit lamp is the usual DC
    question; an unlit one cools to room temperature in a few damped steps)."""
    x = np.zeros((c.n_state, c.n))
    x[c.lamps.nodes[:, 2]] = c.batch["thot"]
    return x, np.zeros_like(c.batch["j_is"])


def _with_gmin(c: Compiled, gmin: float) -> np.ndarray:
    """The linear system with ``gmin`` from every unknown node to ground."""
    m0 = c._w_lin.copy()
    m0[c._diag] += gmin
    return m0


def _dc_direct(c: Compiled, at_s: float):
    """One Newton solve at the full sources from SPICE's junction guesses: enough for most members."""
    x, vj = _dc_start(c)
    return _newton(c, x, c.fixed_values(at_s).T, _with_gmin(c, devices.GMIN), vj, max_iter=40,
                   init_junctions=True)


def _dc_from(c: Compiled, at_s: float, start: OperatingPoint):
    """One Newton solve at the full sources from another solution's node voltages."""
    known = dict(zip(start.names, start.voltages[0]))
    x = np.zeros((c.size, c.n))
    for i, name in enumerate(c.names[:c.n_state]):
        x[i] = known.get(name, 0.0)
    x[c.n_state:c.n_state + c.n_fixed] = c.fixed_values(at_s).T
    vj = _junction_voltages(c, c.batch, x)
    # Half again the cold start's budget: a member this start does not suit goes on to the fallbacks.
    return _newton(c, x[:c.n_state], c.fixed_values(at_s).T, _with_gmin(c, devices.GMIN), vj, max_iter=60)


def _dc_source_stepping(c: Compiled, at_s: float):
    """The sources ramped from 10 % to full in ten steps, each solve starting from the last.

    A member whose solve fails at one step leaves the ramp there, unconverged, for the next
    fallback (gmin stepping): the next step would start from a point that is no solution, which
    is no continuation, and iterating such members to the 200-iteration limit at every step left
    was most of the time a hard batch took.  The members that stay on the ramp are solved exactly
    as before (Newton treats each member on its own).
    """
    x, vj = _dc_start(c)
    alive, sub = np.arange(c.n), c
    m0 = _with_gmin(c, devices.GMIN)  # keeps capacitor-only nodes solvable
    out = None
    for k, scale in enumerate(np.linspace(0.1, 1.0, 10)):
        xx, ok, src, vj = _newton(sub, x, sub.fixed_values(at_s, scale).T, m0, vj, max_iter=200,
                                  init_junctions=k == 0)
        if out is None:
            out = (np.zeros((xx.shape[0], c.n)), np.zeros(c.n, dtype=bool), np.zeros((src.shape[0], c.n)),
                   np.zeros((vj.shape[0], c.n)))
        if k < 9 and not ok.all():
            alive, xx, src, vj = alive[ok], xx[:, ok], src[:, ok], vj[:, ok]
            if not alive.size:
                return out
            sub = c.narrowed(alive)
            m0 = _with_gmin(sub, devices.GMIN)
        x = xx[:c.n_state]
    out_x, out_ok, out_src, out_vj = out
    out_x[:, alive], out_ok[alive], out_src[:, alive], out_vj[:, alive] = xx, ok, src, vj
    return out_x, out_ok, out_src, out_vj


def _dc_gmin_stepping(c: Compiled, at_s: float):
    x, vj = _dc_start(c)
    for k, gmin in enumerate(10.0 ** np.arange(-2, -13, -1)):
        xx, ok, src, vj = _newton(c, x, c.fixed_values(at_s).T, _with_gmin(c, gmin), vj, max_iter=200,
                                  init_junctions=k == 0)
        x = xx[:c.n_state]
    return xx, ok, src, vj
