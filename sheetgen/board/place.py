"""The layout engine: every on-board part of any netlist on a 0.1 in board, as small as it reasonably can.

Nothing here knows a topology.  The engine reads the parts, their pins' nets
and each part's footprint from the catalog, and sweeps across the board from
the left edge to the right:

* the wires from the supply, the feed and ground land in the left edge column;
* every part stands along a column of its own (its leads on different rows,
  the span its footprint allows), with a spare column between neighbours for
  track cuts and wire links;
* each row's copper carries one net at a time: where a lead needs another net
  on that row, the strip is cut in the spare column before it; a net that has
  to start a second strip segment is joined to its first by a wire link in
  the spare column after it; a net's strip is never cut while it still has
  leads to come unless the net lives on another row too;
* the wires to the parts mounted off the board (the load, a heatsinked
  transistor) land in the right edge columns.

A beam search keeps the best partial boards at each part (fewest links, then
rows, then cuts), tried in two part orders.  A perfboard takes the same places
with each strip segment replaced by solder bridges between its used holes.
The result is proven (``proof.prove``) before it is returned: a board whose
copper does not join exactly the netlist's nets is never handed out.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from sheetgen.board.model import Board, Placement, Terminal
from sheetgen.board.proof import prove
from sheetgen.model.netlist import Netlist, Part
from sheetgen.parts import catalog, footprints
from sheetgen.parts.footprints import Footprint

BEAM = 24  # partial boards kept per step
LINK_COST = 10.0  # a wire link costs a builder more than a row of board or a cut
ROW_COST = 4.0
CUT_COST = 1.0
SPARE_ROWS = 3  # rows beyond one per net the search may use
BODY_CLEARANCE_MM = 0.3  # between a body and the next column's holes (common practice, no source)

PIN_WORDS = {"A": "anode", "K": "cathode", "C": "collector", "B": "base", "E": "emitter", "D": "drain",
             "G": "gate", "S": "source", "+": "+", "-": "−", "1": "lead 1", "2": "lead 2"}


class LayoutFailed(RuntimeError):
    """The engine found no board for this netlist: a bug, never a user error."""


@dataclass(frozen=True)
class _Item:
    """One thing to place in the sweep: a part (several options) or one wire point."""

    ref: str  # a part's reference; "" for a wire point
    nets: dict  # pin -> net index
    options: tuple[tuple[tuple[str, int], ...], ...]  # each: (pin, row offset) from the top lead
    width: int  # columns the body needs (the leads in the middle one)
    margin: int  # rows the body reaches beyond the outer leads
    part: Part | None = None
    fp: Footprint | None = None
    pinout: str = ""


@dataclass
class _State:
    open: tuple  # per row: the net index its copper carries at the sweep's column, or -1
    pend: tuple  # per net: leads and wire points still to place
    lo: int
    hi: int  # rows touched so far (inclusive); lo > hi while none
    cost: float
    reserved: frozenset  # rows with a link end in the spare column just passed: not to be cut there
    parent: "_State | None"
    action: tuple  # (r0, option, cut rows, links as (row, row))


def _band(fp: Footprint, pitch: float) -> tuple[int, int]:
    """(columns, margin rows) a footprint's body takes around its leads."""
    radius = fp.body_mm[0] / 2 + BODY_CLEARANCE_MM
    k = max(0, math.ceil(radius / pitch - 1e-9) - 1)
    span = max(fp.spans) if fp.spans else 0
    over = (fp.body_mm[1] - (0 if fp.upright and fp.style == "axial" else span * pitch)) / 2
    margin = max(0, math.ceil(over / pitch - 0.5)) if fp.style != "axial" else 0
    return 2 * k + 1, margin


def _part_item(part: Part, net_index: dict, pitch: float) -> _Item:
    package = ""
    pinout = ""
    if part.kind in ("npn", "pnp", "nmos"):
        q = catalog.transistor(part.part_number)
        package, pinout = q.package, q.pinout
    fp = footprints.footprint(part, package=package)
    pins = [p for p, _ in part.pins]
    options: list[tuple[tuple[str, int], ...]] = []
    if fp.leads == 3:
        order = pinout or "".join(pins)
        for span in fp.spans:
            if span % 2:
                continue
            step = span // 2
            options.append(tuple((pin, k * step) for k, pin in enumerate(order)))
            options.append(tuple((pin, k * step) for k, pin in enumerate(reversed(order))))
    else:
        a, b = pins
        for span in fp.spans:
            options += [((a, 0), (b, span)), ((b, 0), (a, span))]
    width, margin = _band(fp, pitch)
    return _Item(ref=part.ref, nets={p: net_index[n] for p, n in part.pins}, options=tuple(options),
                 width=width, margin=margin, part=part, fp=fp, pinout=pinout)


def _orders(parts: list[Part], first_nets: set[str]) -> list[list[Part]]:
    """The netlist's order, and one that follows the copper outward from the wires at the left edge."""
    greedy, seen, rest = [], set(first_nets), list(parts)
    while rest:
        best = max(rest, key=lambda p: (sum(n in seen for n in p.nets), -rest.index(p)))
        greedy.append(best)
        rest.remove(best)
        seen.update(best.nets)
    return [list(parts), greedy] if greedy != list(parts) else [list(parts)]


def _step(st: _State, item: _Item, opt, r0: int, rows: int, *, new_rows_only: bool) -> _State | None:
    """Place ``item`` with option ``opt`` at top row ``r0``; None when that breaks a rule."""
    open_ = list(st.open)
    pend = list(st.pend)
    cuts: list[int] = []
    fresh: list[tuple[int, int]] = []
    for pin, dr in opt:
        r = r0 + dr
        x = item.nets[pin]
        cur = open_[r]
        if cur != x:
            if cur != -1:
                if new_rows_only or r in st.reserved:
                    return None
                if pend[cur] > 0 and open_.count(cur) == 1:
                    return None  # that net's last strip still has leads to come
                cuts.append(r)
            if x in open_:
                fresh.append((r, x))
            open_[r] = x
        pend[x] -= 1
    links: list[tuple[int, int]] = []
    taken: list[tuple[int, int]] = []
    for r, x in fresh:
        best = None
        for q in sorted((q for q in range(rows) if open_[q] == x and q != r), key=lambda q: (abs(q - r), q)):
            a, b = min(q, r), max(q, r)
            if all(b < ta or a > tb for ta, tb in taken):
                best = (a, b)
                break
        if best is None:
            return None
        taken.append(best)
        links.append((r, q))
    span = max(dr for _, dr in opt)
    lo = min(st.lo, r0 - item.margin)
    hi = max(st.hi, r0 + span + item.margin)
    if lo < 0 or hi >= rows:
        return None
    old = st.hi - st.lo + 1 if st.hi >= st.lo else 0
    cost = st.cost + LINK_COST * len(links) + CUT_COST * len(cuts) + ROW_COST * ((hi - lo + 1) - old)
    reserved = frozenset(r for pair in links for r in pair)
    return _State(open=tuple(open_), pend=tuple(pend), lo=lo, hi=hi, cost=cost, reserved=reserved, parent=st,
                  action=(r0, opt, tuple(cuts), tuple(links)))


def _sweep(items: list[_Item], n_left: int, pend0: tuple, rows: int) -> list[_State]:
    beam = [_State(open=(-1,) * rows, pend=pend0, lo=rows, hi=-1, cost=0.0, reserved=frozenset(), parent=None,
                   action=())]
    for k, item in enumerate(items):
        left = k < n_left
        found: dict = {}
        for st in beam:
            for opt in item.options:
                span = max(dr for _, dr in opt)
                for r0 in range(item.margin, rows - span - item.margin):
                    new = _step(st, item, opt, r0, rows, new_rows_only=left)
                    if new is None:
                        continue
                    key = (new.open, new.reserved) if not left else (new.open,)
                    if key not in found or new.cost < found[key].cost:
                        found[key] = new
        beam = sorted(found.values(), key=lambda s: s.cost)[:BEAM]
        if not beam:
            return []
    return beam


def _finish(st: _State, right: list[tuple[int, int]], rows: int) -> tuple[float, dict, tuple] | None:
    """Land the right-edge wire points: (cost, net -> row, cut rows) or None."""
    open_ = list(st.open)
    pend = list(st.pend)
    where: dict[int, int] = {}
    cuts: list[int] = []
    lo, hi = st.lo, st.hi
    cost = st.cost
    for x, count in right:
        rows_x = [r for r in range(rows) if open_[r] == x and r not in where.values()]
        if not rows_x:
            spare = [r for r in range(rows) if open_[r] == -1]
            spare.sort(key=lambda r: (not lo <= r <= hi, abs(r - (lo + hi) / 2)))
            done = [r for r in range(rows) if open_[r] != -1 and pend[open_[r]] == 0 and r not in st.reserved]
            if spare:
                r = spare[0]
            elif done:
                r = done[0]
                cuts.append(r)
                cost += CUT_COST
            else:
                return None
            open_[r] = x
            rows_x = [r]
        r = rows_x[0]
        where[x] = r
        pend[x] -= count
        lo, hi = min(lo, r), max(hi, r)
    if any(pend):
        return None
    cost += ROW_COST * ((hi - lo + 1) - (st.hi - st.lo + 1))
    return cost, where, tuple(cuts)


def layout(netlist: Netlist, *, kind: str = "stripboard", off_board: tuple[str, ...] = (),
           source_labels: dict[str, str] | None = None) -> Board:
    """Lay out every part of ``netlist`` not in ``off_board`` and prove the result.

    ``source_labels`` words the wires from the netlist's sources by net
    (``{"supply": "always-on +12 V", ...}``); wires to the off-board parts are
    worded by part and lead.
    """
    pitch = footprints.pitch_mm()
    labels = dict(source_labels or {})
    on_board = [p for p in netlist.parts if p.ref not in off_board]
    outside = [p for p in netlist.parts if p.ref in off_board]
    board_nets = {n for p in on_board for n in p.nets}
    left_nets: list[str] = []
    for s in netlist.sources:
        for n in (s.plus, s.minus):
            if n not in left_nets:
                left_nets.append(n)
    right_pins = [(p, pin, n) for p in outside for pin, n in p.pins]
    # a net lands on the board when an on-board lead or a source wire is on it
    landed = board_nets | set(left_nets)
    right_pins = [(p, pin, n) for p, pin, n in right_pins if n in landed]
    left_nets = [n for n in left_nets if n in board_nets or any(n == rn for _, _, rn in right_pins)]
    nets = sorted(board_nets | set(left_nets) | {n for _, _, n in right_pins})
    index = {n: k for k, n in enumerate(nets)}
    pend0 = [0] * len(nets)
    for p in on_board:
        for n in p.nets:
            pend0[index[n]] += 1
    for n in left_nets:
        pend0[index[n]] += 1
    right_count: dict[int, int] = {}
    for _, _, n in right_pins:
        pend0[index[n]] += 1
        right_count[index[n]] = right_count.get(index[n], 0) + 1
    right = sorted(right_count.items())
    rows = len(nets) + SPARE_ROWS + 2 * max((_part_item(p, index, pitch).margin for p in on_board), default=0)

    lefts = [_Item(ref="", nets={"w": index[n]}, options=((("w", 0),),), width=1, margin=0) for n in left_nets]
    best = None
    for order in _orders(on_board, set(left_nets)):
        items = lefts + [_part_item(p, index, pitch) for p in order]
        for st in _sweep(items, len(lefts), tuple(pend0), rows):
            done = _finish(st, right, rows)
            if done is not None and (best is None or done[0] < best[0]):
                best = (done[0], st, done, items)
    if best is None:
        raise LayoutFailed(f"no board layout found for {netlist.title!r}")
    _, st, (_, where, end_cuts), items = best
    board = _build(st, items, len(lefts), where, end_cuts, right_pins, index, nets, labels, pitch,
                   off_board=tuple(p.ref for p in outside))
    if kind == "perfboard":
        board = _to_perfboard(board)
    prove(board, netlist)
    return board


def _build(st: _State, items: list[_Item], n_left: int, where: dict, end_cuts: tuple, right_pins, index, nets,
           labels, pitch: float, *, off_board: tuple[str, ...]) -> Board:
    """Turn the chosen sweep into holes: columns from the items' bands, rows shifted to start at 0."""
    actions = []
    s = st
    while s.parent is not None:
        actions.append(s.action)
        s = s.parent
    actions.reverse()
    top = st.lo
    for net_row in where.values():
        top = min(top, net_row)
    bottom = max([st.hi, *where.values()])
    placements, terminals, cuts, links = [], [], [], []
    x = 1  # the spare column after the left edge
    for k, (item, (r0, opt, cut_rows, link_rows)) in enumerate(zip(items, actions)):
        if k < n_left:
            net = nets[item.nets["w"]]
            terminals.append(Terminal(net=net, hole=(r0 - top, 0), label=labels.get(net, net)))
            continue
        lead_col = x + 1 + item.width // 2
        cuts += [(r - top, x) for r in cut_rows]
        x = x + 1 + item.width
        links += [((a - top, x), (b - top, x)) for a, b in link_rows]
        holes = tuple(sorted(((pin, (r0 + dr - top, lead_col)) for pin, dr in opt),
                             key=lambda ph: [p for p, _ in item.part.pins].index(ph[0])))
        face = ""
        if item.pinout:
            face = "left" if "".join(p for p, _ in opt) == item.pinout else "right"
        span = max(dr for _, dr in opt)
        placements.append(Placement(ref=item.ref, holes=holes, footprint=item.fp.name, style=item.fp.style,
                                    body_mm=item.fp.body_mm, upright=item.fp.style == "axial" and span == 1,
                                    face=face))
    cuts += [(r - top, x) for r in end_cuts]
    count: dict[int, int] = {}
    for _, _, net in right_pins:
        count[where[index[net]]] = count.get(where[index[net]], 0) + 1
    cols = x + 1 + max(count.values(), default=0)
    used: dict[int, int] = {}
    for part, pin, net in right_pins:  # each row's wire points run out to the right-hand edge
        r = where[index[net]]
        c = cols - count[r] + used.get(r, 0)
        used[r] = used.get(r, 0) + 1
        terminals.append(Terminal(net=net, hole=(r - top, c), label=f"{part.ref} {PIN_WORDS.get(pin, pin)}"))
    return Board(kind="stripboard", pitch_mm=pitch, rows=bottom - top + 1, cols=cols, cuts=tuple(sorted(cuts)),
                 links=tuple(links), placements=tuple(placements), offboard=tuple(terminals),
                 off_board_parts=off_board)


def _to_perfboard(board: Board) -> Board:
    """The same places on a pad-per-hole board: each strip segment becomes bridges between its used holes."""
    used = {h for p in board.placements for _, h in p.holes} | {t.hole for t in board.offboard}
    used |= {h for link in board.links for h in link}
    cut = set(board.cuts)
    bridges = []
    for r in range(board.rows):
        segment: list[int] = []
        for c in range(board.cols + 1):
            if c == board.cols or (r, c) in cut:
                cols_used = [cc for cc in segment if (r, cc) in used]
                if len(cols_used) > 1:
                    bridges += [((r, cc), (r, cc + 1)) for cc in range(cols_used[0], cols_used[-1])]
                segment = []
            else:
                segment.append(c)
    return Board(kind="perfboard", pitch_mm=board.pitch_mm, rows=board.rows, cols=board.cols, cuts=(),
                 links=tuple(bridges) + board.links, placements=board.placements, offboard=board.offboard,
                 off_board_parts=board.off_board_parts)
