"""The connectivity proof: nets rebuilt from the copper, the cuts and the links, compared with the netlist.

The board is read as a builder would see it after soldering: on a stripboard
every row is one strip, broken at each cut hole (a cut hole joins nothing);
on a perfboard every hole is its own pad.  Wire links and solder bridges join
their two holes.  Each lead and wire point then sits in one piece of copper;
the layout is right only if every piece holds exactly one netlist net and
every net is exactly one piece.  Geometry is checked on the way: every hole
on the board, no two leads in one hole, each part's leads as far apart as its
footprint allows.  Any failure raises ``LayoutMismatch``.
"""

from __future__ import annotations

from sheetgen.board.model import Board, Hole, hole_name
from sheetgen.model.netlist import Netlist
from sheetgen.parts import catalog, footprints


class LayoutMismatch(RuntimeError):
    """A board that does not build the netlist: never printed."""

    def __init__(self, problems: list[str]) -> None:
        self.problems = problems
        super().__init__("board layout does not match the netlist: " + "; ".join(problems))


def _find(parent: dict, h: Hole) -> Hole:
    while parent[h] != h:
        parent[h] = parent[parent[h]]
        h = parent[h]
    return h


def copper_pieces(board: Board) -> dict[Hole, Hole]:
    """Each hole -> a representative of the piece of copper it is on (cut holes stand alone)."""
    parent = {(r, c): (r, c) for r in range(board.rows) for c in range(board.cols)}
    cut = set(board.cuts)

    def join(a: Hole, b: Hole) -> None:
        ra, rb = _find(parent, a), _find(parent, b)
        if ra != rb:
            parent[max(ra, rb)] = min(ra, rb)

    if board.kind == "stripboard":
        for r in range(board.rows):
            for c in range(board.cols - 1):
                if (r, c) not in cut and (r, c + 1) not in cut:
                    join((r, c), (r, c + 1))
    for a, b in board.links:
        if a in parent and b in parent:
            join(a, b)
    return {h: _find(parent, h) for h in parent}


def is_bridge(board: Board, a: Hole, b: Hole) -> bool:
    """A perfboard's solder bridge: two neighbouring pads joined with solder, not a wire."""
    return board.kind == "perfboard" and abs(a[0] - b[0]) + abs(a[1] - b[1]) == 1


def _geometry(board: Board, netlist: Netlist) -> list[str]:
    problems = []
    on = lambda h: 0 <= h[0] < board.rows and 0 <= h[1] < board.cols  # noqa: E731
    taken: dict[Hole, str] = {}
    cut = set(board.cuts)
    if board.kind == "perfboard" and board.cuts:
        problems.append("a perfboard has no strips to cut")

    def claim(h: Hole, who: str) -> None:
        if not on(h):
            problems.append(f"{who} at {h} is off the {board.rows} × {board.cols} board")
        elif h in taken:
            problems.append(f"{who} and {taken[h]} share hole {hole_name(h)}")
        elif h in cut:
            problems.append(f"{who} is in the cut hole {hole_name(h)}")
        else:
            taken[h] = who

    for p in board.placements:
        for pin, h in p.holes:
            claim(h, f"{p.ref} {pin}")
    for t in board.offboard:
        claim(t.hole, f"wire '{t.label}'")
    for k, (a, b) in enumerate(board.links):
        if is_bridge(board, a, b):
            for h in (a, b):  # solder between two neighbouring pads, leads or not
                if not on(h):
                    problems.append(f"bridge at {h} is off the board")
            continue
        claim(a, f"link {k + 1}")
        claim(b, f"link {k + 1}")
    for h in board.cuts:
        if not on(h):
            problems.append(f"cut at {h} is off the board")
    pitch = board.pitch_mm
    for p in board.placements:
        part = netlist.part(p.ref)
        package = catalog.transistor(part.part_number).package if part.kind in ("npn", "pnp", "nmos") else ""
        fp = footprints.footprint(part, package=package)
        holes = [h for _, h in p.holes]
        ends = [holes[0], holes[-1]] if fp.leads == 2 else sorted(holes)
        first, last = min(ends), max(ends)
        dist = pitch * ((first[0] - last[0]) ** 2 + (first[1] - last[1]) ** 2) ** 0.5
        if not fp.allows(dist, pitch_mm=pitch):
            problems.append(f"{p.ref}: leads {dist:.2f} mm apart, its {fp.name} takes "
                            f"{fp.spacing_mm[0]:.2f}–{fp.spacing_mm[1]:.2f} mm")
        if fp.leads == 3:
            mid = sorted(holes)[1]
            if 2 * mid[0] != first[0] + last[0] or 2 * mid[1] != first[1] + last[1]:
                problems.append(f"{p.ref}: its three leads are not in a line")
    return problems


def prove(board: Board, netlist: Netlist) -> None:
    """Raise ``LayoutMismatch`` unless the board builds exactly ``netlist``'s connections."""
    problems = _geometry(board, netlist)
    refs = {p.ref for p in netlist.parts}
    placed = [p.ref for p in board.placements]
    for ref in sorted(refs - set(placed) - set(board.off_board_parts)):
        problems.append(f"{ref} is neither on the board nor listed off it")
    for ref in sorted(set(placed) & set(board.off_board_parts)):
        problems.append(f"{ref} is both on the board and off it")
    for ref in sorted(set(placed) - refs):
        problems.append(f"{ref} is on the board but not in the netlist")
    if len(set(placed)) != len(placed):
        problems.append("a part is placed twice")
    if problems:
        raise LayoutMismatch(problems)

    piece = copper_pieces(board)
    net_at: list[tuple[Hole, str, str]] = []  # (hole, net it must be, who)
    for p in board.placements:
        part = netlist.part(p.ref)
        if {pin for pin, _ in p.holes} != {pin for pin, _ in part.pins}:
            problems.append(f"{p.ref}: pins {sorted(pin for pin, _ in p.holes)} do not match its part")
            continue
        for pin, h in p.holes:
            net_at.append((h, part.net(pin), f"{p.ref} {pin}"))
    for t in board.offboard:
        net_at.append((t.hole, t.net, f"wire '{t.label}'"))
    by_piece: dict[Hole, dict[str, str]] = {}
    by_net: dict[str, set[Hole]] = {}
    for h, net, who in net_at:
        by_piece.setdefault(piece[h], {}).setdefault(net, who)
        by_net.setdefault(net, set()).add(piece[h])
    for nets in by_piece.values():
        if len(nets) > 1:
            problems.append("copper joins " + " and ".join(f"{who} (net {n})" for n, who in sorted(nets.items())))
    for net, pieces in sorted(by_net.items()):
        if len(pieces) > 1:
            problems.append(f"net {net} is split into {len(pieces)} pieces of copper")
    problems += _wires(board, netlist)
    if problems:
        raise LayoutMismatch(problems)


def _wires(board: Board, netlist: Netlist) -> list[str]:
    """Every off-board connection has its wire point: each source's nets, each off-board part's leads."""
    on_board = {n for p in netlist.parts if p.ref not in board.off_board_parts for n in p.nets}
    want: dict[str, int] = {}
    for s in netlist.sources:
        for n in {s.plus, s.minus}:
            want.setdefault(n, 1)
    landed = on_board | set(want)
    for ref in board.off_board_parts:
        for _, n in netlist.part(ref).pins:
            if n in landed:
                want[n] = want.get(n, 0) + 1
    want = {n: k for n, k in want.items() if n in on_board or k > 1}
    have: dict[str, int] = {}
    for t in board.offboard:
        have[t.net] = have.get(t.net, 0) + 1
    return [f"net {n}: {have.get(n, 0)} wire points, {k} wires to land" for n, k in sorted(want.items())
            if have.get(n, 0) != k] + [f"wire point on net {n}, which needs none" for n in sorted(set(have) - set(want))]
