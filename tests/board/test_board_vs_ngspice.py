"""The circuit the board builds, simulated by ngspice, against the circuit the netlist describes.

Each net is renamed after the piece of copper it is on (rebuilt from the JSON
board alone: strips, cuts, links); the off-board parts keep the wires that
land on the board.  ngspice (the reference simulator) must then give the same
supply current through the whole fade-in and fade-out as for the netlist
itself: a board that joined or split a net would change it.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from sheetgen.board import layout
from sheetgen.model.netlist import GROUND
from sheetgen.outputs.spice import spice_deck
from sheetgen.outputs.spice_run import run_transient

from test_layout import _rebuilt_nets  # noqa: E402  (the copper rebuilt from the JSON contract)

EXAMPLES = Path(__file__).parents[2] / "examples"


def _board_netlist(nl, board):
    data = board.as_dict()
    piece = _rebuilt_nets(data)
    name: dict = {}

    def node(hole) -> str:
        return name.setdefault(piece[tuple(hole)], f"cu{len(name) + 1}")

    wire_node = {}
    for w in data["offboard"]:
        wire_node.setdefault(w["net"], node(w["hole"]))
    if GROUND in wire_node:  # ngspice's reference node stays 0
        ground_piece = next(k for k, v in name.items() if v == wire_node[GROUND])
        name[ground_piece] = GROUND
        wire_node[GROUND] = GROUND
    holes = {p["ref"]: p["holes"] for p in data["placements"]}
    parts = []
    for part in nl.parts:
        if part.ref in holes:
            pins = tuple((pin, node(holes[part.ref][pin])) for pin, _ in part.pins)
        else:  # off the board: its wire lands on a piece of copper, or it joins another off-board part
            pins = tuple((pin, wire_node.get(net, f"off_{net}")) for pin, net in part.pins)
        parts.append(replace(part, pins=pins))
    sources = tuple(replace(s, plus=wire_node[s.plus], minus=wire_node[s.minus]) for s in nl.sources)
    return replace(nl, parts=tuple(parts), sources=sources, probes=())


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("example, kind", [("camper-van-step-light", "stripboard"),
                                           ("estate-car-tailgate-ground", "perfboard")])
def test_the_board_builds_the_same_circuit_in_ngspice(example, kind):
    from sheetgen.inputs.spec import load_spec
    from sheetgen.sizing.size import size

    nl = size(load_spec(EXAMPLES / f"{example}.yaml")).netlist
    board = layout(nl, kind=kind, off_board=tuple(p.ref for p in nl.by_role("load")))
    built = _board_netlist(nl, board)
    assert {n for p in built.parts for n in p.nets} != {n for p in nl.parts for n in p.nets}, "nets renamed"
    ref = run_transient(spice_deck(replace(nl, probes=())), vectors=["i(vsupply)"])
    got = run_transient(spice_deck(built), vectors=["i(vsupply)"])
    t = np.linspace(0.0, nl.stop_s, 400)
    a = np.interp(t, ref["time"], -ref["i(vsupply)"])
    b = np.interp(t, got["time"], -got["i(vsupply)"])
    assert np.max(np.abs(a - b)) <= 1e-4 * np.max(np.abs(a)) + 1e-9


@pytest.mark.requires_ngspice
def test_a_board_missing_a_cut_builds_a_different_circuit_in_ngspice():
    """The comparison above can fail: a missing cut joins two nets and ngspice sees another circuit."""
    from sheetgen.inputs.spec import load_spec
    from sheetgen.sizing.size import size

    nl = size(load_spec(EXAMPLES / "camper-van-step-light.yaml")).netlist
    board = layout(nl, off_board=tuple(p.ref for p in nl.by_role("load")))
    broken = replace(board, cuts=board.cuts[1:])
    ref = run_transient(spice_deck(replace(nl, probes=())), vectors=["i(vsupply)"])
    got = run_transient(spice_deck(_board_netlist(nl, broken)), vectors=["i(vsupply)"])
    t = np.linspace(0.0, nl.stop_s, 400)
    a = np.interp(t, ref["time"], -ref["i(vsupply)"])
    b = np.interp(t, got["time"], -got["i(vsupply)"])
    assert np.max(np.abs(a - b)) > 0.1 * np.max(np.abs(a))
