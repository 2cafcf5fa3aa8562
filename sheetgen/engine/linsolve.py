"""Batched direct solve of many linear systems that share one sparsity pattern.

Every tolerance draw of a circuit has the same MNA nonzero pattern, so the
elimination is planned once: a minimum-degree order whose pivots are taken in
independent sets (no two adjacent, so a whole set is eliminated at once), the
fill-in it creates, and for each set the gathers and scatters that do the work.
The numeric phase runs that plan with the batch on the last axis, one numpy
operation per step over every member, where LAPACK would loop over members.
The right-hand side rides along as an extra column, so forward substitution is
part of the factorisation.

There is no pivoting: nodal matrices are close to diagonally dominant.  If any
member's pivot cancels to almost nothing (or the matrix is singular) the solve
says so, and the caller sends the whole call to LAPACK's partially pivoted
solve instead.
"""

from __future__ import annotations

import numpy as np

PIVOT_RTOL = 1e-13  # a pivot smaller than this times its original diagonal is not trusted


class Scatter:
    """``out[targets] += values[sources]`` where targets repeat, as a few duplicate-free fancy adds."""

    def __init__(self, targets, sources=None):
        targets = np.asarray(targets, dtype=int)
        sources = np.arange(len(targets)) if sources is None else np.asarray(sources, dtype=int)
        seen: dict[int, int] = {}
        layer = np.empty(len(targets), dtype=int)
        for i, t in enumerate(targets):
            layer[i] = seen.get(t, 0)
            seen[t] = layer[i] + 1
        self.layers = []
        for k in range(int(layer.max(initial=-1)) + 1):
            pick = layer == k
            self.layers.append((targets[pick], _slice_or_index(sources[pick])))

    def add(self, out: np.ndarray, values: np.ndarray) -> None:
        for t, s in self.layers:
            out[t] += values[s]

    def sub(self, out: np.ndarray, values: np.ndarray) -> None:
        for t, s in self.layers:
            out[t] -= values[s]


class Gather(Scatter):
    """``base`` plus signed blocks of values scattered into its rows, built as one gather.

    For a scatter that touches most rows of its output: gathering every
    output row at once from the stacked values, their negatives and a zero
    row moves less memory than fancy adds into a copy.  ``signs`` (+1 or -1)
    say whether each source enters added or subtracted.
    """

    def __init__(self, targets, sources, signs, n_out: int, n_src: int):
        sources = np.asarray(sources, dtype=int) + np.where(np.asarray(signs) < 0, n_src, 0)
        super().__init__(targets, sources)
        self._n_src = n_src
        self._perm = np.full(n_out, 2 * n_src)  # the zero row
        if self.layers:
            t, s = self.layers.pop(0)
            self._perm[t] = np.arange(2 * n_src)[s]

    def onto(self, base: np.ndarray, blocks: list) -> np.ndarray:
        n = self._n_src
        values = np.empty((2 * n + 1, base.shape[1]))
        if n:
            np.concatenate(blocks, out=values[:n])
            np.negative(values[:n], out=values[n:2 * n])
        values[2 * n] = 0.0
        out = np.take(values, self._perm, axis=0)
        out += base
        self.add(out, values)
        return out


def _slice_or_index(idx: np.ndarray):
    """A slice where the indices are a contiguous run (a view, not a gather)."""
    if len(idx) and np.array_equal(idx, np.arange(idx[0], idx[0] + len(idx))):
        return slice(int(idx[0]), int(idx[0]) + len(idx))
    return idx


class _Level:
    """One independent set of pivots: where its values sit and what it updates."""

    def __init__(self, d, col, row, urow, rhs, l_piv, prod_l, prod_u, targets, back_piv, back_x):
        self.d = d  # slice of the pivots' diagonal slots
        self.col = col  # slice of the column entries (i, p), grouped by pivot
        self.row = row  # slice of the row entries (p, j), grouped by pivot
        self.urow = urow  # the row entries followed by the pivots' rhs slots
        self.rhs = rhs  # slice of the pivots' rhs slots
        self.l_piv = l_piv  # for each column entry, its pivot's position in the level
        self.prod_l, self.prod_u = prod_l, prod_u  # update products l[prod_l] * u[prod_u]
        self.targets = targets  # Scatter of those products into their slots
        self.back_piv = back_piv  # Scatter of row-entry products into their pivot (back substitution)
        self.back_x = back_x  # for each row entry (p, j), the slot where x_j is by then


class SparseLU:
    """Plan for solving A x = b for a batch of matrices with one pattern.

    ``entries`` are the structurally nonzero (row, col) positions of A (the
    diagonal is always included).  Values go in one array of shape
    (n_slots, N): A's entry (r, c) at ``slot[(r, c)]`` and b's row r at
    ``rhs_slot[r]``.
    """

    def __init__(self, m: int, entries):
        self.m = m
        nbr = [set() for _ in range(m)]
        for r, c in entries:
            if r != c:
                nbr[r].add(c)
                nbr[c].add(r)
        levels = []
        left = set(range(m))
        while left:
            # Pivots of least degree, and of degree two or less (one fill edge
            # at most), taken greedily while no two are neighbours.
            cap = max(min(len(nbr[i]) for i in left), 2)
            chosen, blocked = [], set()
            for i in sorted(left, key=lambda i: (len(nbr[i]), i)):
                if len(nbr[i]) > cap:
                    break
                if i not in blocked:
                    chosen.append((i, sorted(nbr[i])))
                    blocked |= nbr[i]
            for p, ns in chosen:
                for i in ns:
                    nbr[i] |= set(ns) - {i}
                    nbr[i].discard(p)
                left.discard(p)
            levels.append(chosen)

        # Slots: every pivot's diagonal first (in elimination order, so the
        # pivots can be checked in one go), then per level its column entries
        # (i, p), row entries (p, j) and right-hand sides, each a contiguous run.
        self.slot: dict[tuple[int, int], int] = {}
        for chosen in levels:
            for p, _ in chosen:
                self.slot[(p, p)] = len(self.slot)
        spans = []
        for chosen in levels:
            c0 = len(self.slot)
            for p, ns in chosen:
                for i in ns:
                    self.slot[(i, p)] = len(self.slot)
            r0 = len(self.slot)
            for p, ns in chosen:
                for j in ns:
                    self.slot[(p, j)] = len(self.slot)
            h0 = len(self.slot)
            for p, _ in chosen:
                self.slot[(p, -1)] = len(self.slot)  # the right-hand side as column -1
            spans.append((c0, r0, h0, len(self.slot)))
        self.rhs_slot = {r: s for (r, c), s in self.slot.items() if c == -1}
        self.n_slots = len(self.slot)

        self._levels = []
        d0 = 0
        for chosen, (c0, r0, h0, end) in zip(levels, spans):
            pos = {p: k for k, (p, _) in enumerate(chosen)}
            col_at = {key: k for k, key in enumerate((i, p) for p, ns in chosen for i in ns)}
            u_keys = [(p, j) for p, ns in chosen for j in ns] + [(p, -1) for p, _ in chosen]
            u_at = {key: k for k, key in enumerate(u_keys)}
            prod_l, prod_u, tgt = [], [], []
            for p, ns in chosen:
                for i in ns:
                    for j in ns + [-1]:
                        prod_l.append(col_at[(i, p)])
                        prod_u.append(u_at[(p, j)])
                        tgt.append(self.slot[(i, j)])
            back = [(p, j) for p, ns in chosen for j in ns]
            self._levels.append(_Level(
                d=slice(d0, d0 + len(chosen)), col=slice(c0, r0), row=slice(r0, h0), urow=slice(r0, end),
                rhs=slice(h0, end), l_piv=np.array([pos[p] for p, ns in chosen for _ in ns], dtype=int),
                prod_l=np.array(prod_l, dtype=int), prod_u=np.array(prod_u, dtype=int), targets=Scatter(tgt),
                back_piv=Scatter([pos[p] for p, _ in back]),
                back_x=np.array([self.rhs_slot[j] for _, j in back], dtype=int)))
            d0 += len(chosen)
        self._mat = np.array([s for (r, c), s in self.slot.items() if c >= 0])
        self._rows = np.array([r for (r, c) in self.slot if c >= 0])
        self._cols = np.array([c for (r, c) in self.slot if c >= 0])
        self._rhs = np.array([self.rhs_slot[i] for i in range(m)], dtype=int)

    def solve(self, values: np.ndarray) -> np.ndarray | None:
        """Solution x of shape (m, N) for ``values`` of shape (n_slots, N), which it overwrites.

        Returns None where a pivot collapsed in some member: the caller then
        rebuilds the values and uses :meth:`dense_solve`.
        """
        w = values
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            small = PIVOT_RTOL * np.abs(w[:self.m])
            inv = []
            for lv in self._levels:
                dinv = np.divide(1.0, w[lv.d])
                inv.append(dinv)
                if lv.l_piv.size:
                    ell = w[lv.col] * dinv[lv.l_piv]
                    lv.targets.sub(w, ell[lv.prod_l] * w[lv.urow][lv.prod_u])
            if not (np.abs(w[:self.m]) > small).all():
                return None
            # Back substitution, each unknown landing in its own rhs slot.
            for lv, dinv in zip(reversed(self._levels), reversed(inv)):
                b = w[lv.rhs]
                if lv.back_x.size:
                    lv.back_piv.sub(b, w[lv.row] * w[lv.back_x])
                b *= dinv
        return w[self._rhs]

    def dense(self, values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """The systems as LAPACK takes them: A (N, m, m) and b (N, m)."""
        a = np.zeros((values.shape[1], self.m, self.m))
        a[:, self._rows, self._cols] = values[self._mat].T
        return a, values[self._rhs].T

    def dense_solve(self, values: np.ndarray) -> np.ndarray:
        """The same systems through LAPACK (partial pivoting); raises LinAlgError if one is singular."""
        a, b = self.dense(values)
        return np.linalg.solve(a, b[..., None])[..., 0].T
