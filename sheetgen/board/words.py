"""The board in words: where each part goes, the cut list, the link list and the wire points.

Every phrase names holes as the drawing labels them (row letter, column
number from 1), so the words and the picture cannot disagree.
"""

from __future__ import annotations

from sheetgen.board.model import Board, Hole, hole_name, row_letter
from sheetgen.model.netlist import Netlist

EN_DASH = "\u2013"
_MARKS = {"diode": ("K", "band"), "led": ("K", "flat side"), "capacitor": ("-", "stripe")}
_LETTERS = {"C": "C", "B": "B", "E": "E", "D": "D", "G": "G", "S": "S"}


def _span(a: Hole, b: Hole) -> str:
    return f"{hole_name(a)}{EN_DASH}{hole_name(b)}"


def placing(board: Board, netlist: Netlist) -> list[str]:
    """One phrase per part: "R1 at D5–H5", "D1 at C3–D3, band at D3", "Q1 C D17, B C17, E B17"."""
    out = []
    for p in board.placements:
        part = netlist.part(p.ref)
        holes = [h for _, h in p.holes]
        if len(holes) == 3:
            leads = ", ".join(f"{pin} {hole_name(h)}" for pin, h in sorted(p.holes, key=lambda ph: ph[1]))
            out.append(f"{p.ref}: {leads}, printed face to the {p.face}")
            continue
        first, last = sorted(holes)
        text = f"{p.ref} at {_span(first, last)}"
        if part.kind in _MARKS:
            pin, mark = _MARKS[part.kind]
            text += f", {mark} at {hole_name(p.hole(pin))}"
        if p.upright:
            text += ", standing"
        out.append(text)
    return out


def cuts(board: Board) -> str:
    """The cut list: "Cut the strip at B4, C7 (3 cuts)", or "" when there is none."""
    if not board.cuts:
        return ""
    names = ", ".join(hole_name(h) for h in sorted(board.cuts, key=lambda h: (h[1], h[0])))
    return f"Cut the copper at {names} ({len(board.cuts)} cut{'s' if len(board.cuts) != 1 else ''})"


def _bridge_runs(board: Board) -> tuple[list[tuple[Hole, Hole]], list[tuple[Hole, Hole]]]:
    """Neighbouring-hole bridges gathered into runs along a row, and the wire links."""
    bridges = sorted((min(a, b), max(a, b)) for a, b in board.links
                     if a[0] == b[0] and abs(a[1] - b[1]) == 1) if board.kind == "perfboard" else []
    wires = [link for link in board.links if (min(link), max(link)) not in set(bridges)]
    runs: list[tuple[Hole, Hole]] = []
    for a, b in bridges:
        if runs and runs[-1][1] == a:
            runs[-1] = (runs[-1][0], b)
        else:
            runs.append((a, b))
    return runs, wires


def links(board: Board) -> list[str]:
    """The link list: wire links, and on a perfboard the solder bridges along each row."""
    runs, wires = _bridge_runs(board)
    out = [f"Bridge {_span(a, b)} with solder" if b[1] - a[1] == 1 else
           f"Solder a bare wire along row {row_letter(a[0])} from {hole_name(a)} to {hole_name(b)}, to every pad"
           for a, b in runs]
    if wires:
        out.append("Wire link" + ("s" if len(wires) > 1 else "") + " " + ", ".join(_span(a, b) for a, b in wires))
    return out


def wires(board: Board) -> list[str]:
    """Where each off-board wire lands: "always-on positive feed at A1"."""
    return [f"{t.label} at {hole_name(t.hole)}" for t in board.offboard]


def refs_run(refs) -> str:
    """``LED1–LED6`` for a run of consecutive references of one letter prefix, else a list."""
    import re

    parsed = [re.fullmatch(r"([A-Z]+)(\d+)", r) for r in refs]
    if len(refs) > 2 and all(parsed) and len({m[1] for m in parsed}) == 1:
        numbers = [int(m[2]) for m in parsed]
        if numbers == list(range(numbers[0], numbers[0] + len(numbers))):
            return f"{refs[0]}{EN_DASH}{refs[-1]}"
    return ", ".join(refs)


def off_board_joins(board: Board, netlist: Netlist) -> list[str]:
    """Joins made off the board between parts mounted off it: a run of LEDs in series in one phrase,
    any other join named lead to lead ("join Q1 collector to LP1 lead 2")."""
    from sheetgen.board.place import PIN_WORDS

    landed = {t.net for t in board.offboard}
    on: dict[str, list[tuple[str, str]]] = {}
    for ref in board.off_board_parts:
        for pin, net in netlist.part(ref).pins:
            if net not in landed:
                on.setdefault(net, []).append((ref, pin))
    following: dict[str, str] = {}  # LED ref -> the LED whose anode its cathode meets
    out = []
    for net, leads in on.items():
        kinds = {netlist.part(ref).kind for ref, _ in leads}
        if kinds == {"led"} and sorted(pin for _, pin in leads) == ["A", "K"]:
            following[next(ref for ref, pin in leads if pin == "K")] = next(ref for ref, pin in leads if pin == "A")
        elif len(leads) > 1:
            out.append("join " + " to ".join(f"{ref} {PIN_WORDS.get(pin, pin)}" for ref, pin in leads))
    runs = []
    for head in [ref for ref in following if ref not in following.values()]:
        run = [head]
        while run[-1] in following:
            run.append(following[run[-1]])
        runs.append(f"{run[0]}{EN_DASH}{run[-1]}")
    if runs:
        out.append(f"wire {', '.join(runs)} in series" + (" (each string on its own)" if len(runs) > 1 else "")
                   + ", each cathode to the next anode")
    return out
