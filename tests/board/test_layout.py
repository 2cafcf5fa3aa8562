"""The board layout: proven on every example and a grid of generated designs; broken boards rejected.

The checks here rebuild the copper themselves from the JSON contract (strips
along rows, a cut hole joining nothing, links joining their two holes), so the
engine's own proof is not the only judge; the lead spacings are checked
against the makers' figures written out beside each check.
"""

from __future__ import annotations

import glob
import itertools
from dataclasses import replace
from pathlib import Path

import pytest

from sheetgen.board import layout
from sheetgen.board.model import Board, Placement
from sheetgen.board.proof import LayoutMismatch, copper_pieces, prove
from sheetgen.circuits.topologies import TOPOLOGIES, Values, window_for
from sheetgen.inputs.spec import parse_spec
from sheetgen.parts import catalog

EXAMPLES = sorted(glob.glob(str(Path(__file__).parents[2] / "examples" / "*.yaml")))
PITCH_MM = 2.54  # 0.1 in stripboard and perfboard hole pitch

#: Radial electrolytic lead spacing by case diameter, mm: Vishay Sprague 515D data sheet, dimensions table
#: (6.3 → 2.5, 8 → 3.5, 10 and 12.5 → 5.0, 16 and 18 → 7.5) and its cut-and-formed table (5 → 2.0).
RADIAL_SPACING_MM = {5.0: 2.0, 6.3: 2.5, 8.0: 3.5, 10.0: 5.0, 12.5: 5.0, 16.0: 7.5, 18.0: 7.5}
BEND_MM = 1.0  # a radial lead may be formed this far in or out (common practice, no source)
#: TO-92 (formed), TO-220: leads 2.54 mm apart (ON Semiconductor BC337 and TIP120 package drawings; from memory);
#: TO-126 2.28 mm (BD139 drawing; from memory), formed out to the 2.54 mm holes
INLINE_PITCH_MM = {"TO-92": 2.54, "TO-220": 2.54, "TO-126": 2.28}


def _rebuilt_nets(board: dict) -> dict:
    """hole -> copper piece, from the JSON contract alone."""
    rows, cols = board["rows"], board["cols"]
    parent = {(r, c): (r, c) for r in range(rows) for c in range(cols)}

    def find(h):
        while parent[h] != h:
            h = parent[h]
        return h

    cut = {tuple(h) for h in board["cuts"]}
    pairs = [((r, c), (r, c + 1)) for r in range(rows) for c in range(cols - 1)
             if board["kind"] == "stripboard" and (r, c) not in cut and (r, c + 1) not in cut]
    pairs += [(tuple(link["from"]), tuple(link["to"])) for link in board["links"]]
    for a, b in pairs:
        parent[find(a)] = find(b)
    return {h: find(h) for h in parent}


def _check_board(board: Board, netlist) -> None:
    data = board.as_dict()
    assert set(data) == {"kind", "pitch_mm", "rows", "cols", "cuts", "links", "placements", "offboard",
                         "off_board_parts"}
    piece = _rebuilt_nets(data)
    nets_of_piece: dict = {}
    pieces_of_net: dict = {}
    holes = []
    for p in data["placements"]:
        part = netlist.part(p["ref"])
        assert set(p["holes"]) == {pin for pin, _ in part.pins}
        for pin, hole in p["holes"].items():
            holes.append(tuple(hole))
            nets_of_piece.setdefault(piece[tuple(hole)], set()).add(part.net(pin))
            pieces_of_net.setdefault(part.net(pin), set()).add(piece[tuple(hole)])
    for t in data["offboard"]:
        holes.append(tuple(t["hole"]))
        nets_of_piece.setdefault(piece[tuple(t["hole"])], set()).add(t["net"])
        pieces_of_net.setdefault(t["net"], set()).add(piece[tuple(t["hole"])])
    wires = {tuple(t["hole"]) for t in data["offboard"]}
    for r, c in wires:  # at the edge: column 1, or a run of wire points out to the right-hand edge
        assert c == 0 or all((r, cc) in wires for cc in range(c, data["cols"])), "wire point not at the edge"
    bridge = lambda link: (data["kind"] == "perfboard"  # noqa: E731  solder between neighbouring pads
                           and sum(abs(a - b) for a, b in zip(link["from"], link["to"])) == 1)
    holes += [tuple(link[k]) for link in data["links"] if not bridge(link) for k in ("from", "to")]
    assert len(holes) == len(set(holes)), "no two leads in one hole"
    assert all(0 <= r < data["rows"] and 0 <= c < data["cols"] for r, c in holes), "every hole on the board"
    assert not set(holes) & {tuple(h) for h in data["cuts"]}
    assert all(len(n) == 1 for n in nets_of_piece.values()), "a piece of copper joins two nets"
    assert all(len(p) == 1 for p in pieces_of_net.values()), "a net is split"
    placed = {p["ref"] for p in data["placements"]}
    assert placed | set(data["off_board_parts"]) == {p.ref for p in netlist.parts}
    if data["kind"] == "perfboard":
        assert data["cuts"] == []
    for p in board.placements:
        _check_spacing(p, netlist.part(p.ref))


def _check_spacing(p: Placement, part) -> None:
    (r0, c0), (r1, c1) = min(h for _, h in p.holes), max(h for _, h in p.holes)
    dist = PITCH_MM * ((r1 - r0) ** 2 + (c1 - c0) ** 2) ** 0.5
    if part.kind == "capacitor":
        d = float(p.footprint.split()[1])
        spacing = RADIAL_SPACING_MM.get(d, 10.0)
        assert abs(dist - spacing) <= BEND_MM + 1e-9, (p.ref, p.footprint, dist)
    elif part.kind in ("npn", "pnp", "nmos"):
        pitch = INLINE_PITCH_MM[p.footprint]
        assert abs(dist / 2 - pitch) <= 0.3 + 1e-9, (p.ref, dist)
    elif p.upright:
        assert dist == pytest.approx(PITCH_MM)
    else:  # lying flat: at least the body (6.5 mm for 0.25 W, 5.2 mm DO-41) plus a bend at each end
        body = {"resistor": 6.5 if (part.rating_w or 0.25) <= 0.25 else 9.0, "diode": 5.2}[part.kind]
        assert dist >= body + 3.0 - 1e-9, (p.ref, dist)


def _off_board(netlist, *, switch: bool = False) -> tuple[str, ...]:
    return tuple(p.ref for p in netlist.parts if p.role == "load" or (switch and p.role == "switch"))


# ------------------------------------------------------------------ examples
@pytest.fixture(scope="module")
def example_netlists():
    from sheetgen.inputs.spec import load_spec
    from sheetgen.sizing.size import size

    return {Path(f).stem: size(load_spec(f)).netlist for f in EXAMPLES}


@pytest.mark.parametrize("kind", ["stripboard", "perfboard"])
def test_every_example_is_laid_out_and_proven(example_netlists, kind):
    for name, nl in example_netlists.items():
        board = layout(nl, kind=kind, off_board=_off_board(nl))
        _check_board(board, nl)
        assert board.kind == kind
        # as small as it reasonably can: never more rows than nets plus the spare ones
        assert board.rows <= len({n for p in nl.parts for n in p.nets}) + 3, name


# --------------------------------------------------------- generated designs
LOADS = {
    "one LED": "{kind: led, current: 10 mA, vf: 2.9 V}",
    "2 strings of 3": "{kind: led, current: 20 mA, vf: 3.1 V, per_string: 3, strings: 2}",
    "5 strings of 2": "{kind: led, current: 20 mA, vf: 3.1 V, per_string: 2, strings: 5}",
    "lamp 5 W": "{kind: lamp, power: 5 W}",
    "two lamps 21 W": "{kind: lamp, power: 21 W, count: 2}",
}
SWITCHES = {"mosfet": "IRLZ44N", "darlington": "TIP120", "bjt": "BC337-40", "bjt-medium": "BD139"}


def _design(topology: str, load: str, *, c_f: float, switch: str | None = None, supply: str = "12 V"):
    t = TOPOLOGIES[topology]
    spec = parse_spec(f"supply: {supply}\ntrigger: {t.trigger}\nload: {LOADS[load]}\nfade: {{in: 1 s, out: 4 s}}\n",
                      source="grid")
    q = switch or {"mosfet": "IRLZ44N"}.get(t.stage.kind, "TIP120" if t.stage.darlington else "BC337-40")
    clamp = catalog.diode("1N4744A") if t.stage.kind == "mosfet" and supply == "24 V" else None
    values = Values(transistor=catalog.transistor(q), diode=catalog.diode("1N4007"), r_charge_ohm=10e3,
                    r_bleed_ohm=47e3, r_base_ohm=4700, c_timing_f=c_f, r_led_ohm=150.0, clamp=clamp,
                    input_transistor=catalog.transistor("BC327-40"),
                    ratings=(("C1", 25.0, None), *((f"R{k}", None, 0.5) for k in range(4, 12))))
    return t.build(spec, values, window_for(1.0, 4.0))


GRID = list(itertools.product(sorted(TOPOLOGIES), sorted(LOADS), (22e-6, 4700e-6)))


@pytest.mark.parametrize("topology, load, c_f", GRID)
def test_generated_designs_are_proven(topology, load, c_f):
    nl = _design(topology, load, c_f=c_f, supply="24 V" if c_f == 22e-6 else "12 V")
    for kind, heatsinked in (("stripboard", False), ("perfboard", c_f == 4700e-6)):
        board = layout(nl, kind=kind, off_board=_off_board(nl, switch=heatsinked))
        _check_board(board, nl)


def test_a_medium_power_switch_takes_its_own_footprint():
    nl = _design("npn", "lamp 5 W", c_f=470e-6, switch="BD139")
    board = layout(nl, off_board=_off_board(nl))
    assert board.placement("Q1").footprint == "TO-126"
    _check_board(board, nl)


# ----------------------------------------------------------- broken boards
@pytest.fixture(scope="module")
def good():
    nl = _design("npn-ground", "2 strings of 3", c_f=220e-6)
    board = layout(nl, off_board=_off_board(nl))
    assert board.cuts and board.links, "the fixture needs a board with cuts and links to break"
    return nl, board


def test_a_missing_cut_is_rejected(good):
    nl, board = good
    for k in range(len(board.cuts)):
        broken = replace(board, cuts=board.cuts[:k] + board.cuts[k + 1:])
        with pytest.raises(LayoutMismatch, match="copper joins"):
            prove(broken, nl)


def test_a_misplaced_link_is_rejected(good):
    nl, board = good
    piece = copper_pieces(board)
    used = {h for p in board.placements for _, h in p.holes} | {t.hole for t in board.offboard}
    used |= {h for link in board.links for h in link}
    for k, (a, b) in enumerate(board.links):
        rest = board.links[:k] + board.links[k + 1:]
        elsewhere = [(r, b[1]) for r in range(board.rows)
                     if (r, b[1]) not in used and piece[(r, b[1])] != piece[b]]
        assert elsewhere
        for h in elsewhere:  # the far end on another strip in the same column
            with pytest.raises(LayoutMismatch):
                prove(replace(board, links=(*rest, (a, h))), nl)
        with pytest.raises(LayoutMismatch, match="split"):
            prove(replace(board, links=rest), nl)


def test_a_lead_in_the_wrong_hole_or_a_missing_part_is_rejected(good):
    nl, board = good
    first, *others = board.placements
    (pin, (r, c)), *pins = first.holes
    piece = copper_pieces(board)
    used = {h for p in board.placements for _, h in p.holes} | {t.hole for t in board.offboard}
    used |= {h for link in board.links for h in link}
    for rr, cc in [(rr, cc) for rr in range(board.rows) for cc in (c - 1, c + 1)]:
        if (rr, cc) in used or piece[(rr, cc)] == piece[(r, c)]:
            continue  # a free hole on another piece of copper: the lead would join the wrong net
        shifted = replace(first, holes=((pin, (rr, cc)), *pins))
        with pytest.raises(LayoutMismatch):
            prove(replace(board, placements=(shifted, *others)), nl)
    with pytest.raises(LayoutMismatch, match="neither on the board"):
        prove(replace(board, placements=tuple(others)), nl)
    doubled = replace(others[0], holes=((others[0].holes[0][0], (r, c)), *others[0].holes[1:]))
    with pytest.raises(LayoutMismatch, match="share hole"):
        prove(replace(board, placements=(first, doubled, *others[1:])), nl)


def test_a_perfboard_missing_a_bridge_or_with_a_cut_is_rejected(good):
    nl, _ = good
    board = layout(nl, kind="perfboard", off_board=_off_board(nl))
    bridges = [k for k, (a, b) in enumerate(board.links) if a[0] == b[0] and abs(a[1] - b[1]) == 1]
    k = bridges[len(bridges) // 2]
    with pytest.raises(LayoutMismatch, match="split"):
        prove(replace(board, links=board.links[:k] + board.links[k + 1:]), nl)
    with pytest.raises(LayoutMismatch, match="no strips"):
        prove(replace(board, cuts=((0, 0),)), nl)


def test_leads_too_close_for_the_footprint_are_rejected(good):
    nl, board = good
    q = next(p for p in board.placements if p.ref == "Q1")
    (p1, h1), (p2, h2), (p3, h3) = sorted(q.holes, key=lambda ph: ph[1])
    squeezed = replace(q, holes=((p1, h1), (p2, (h1[0] + 1, h1[1])), (p3, (h1[0] + 1, h1[1] + 0))))
    others = tuple(p for p in board.placements if p.ref != "Q1")
    with pytest.raises(LayoutMismatch):
        prove(replace(board, placements=(*others, squeezed)), nl)
