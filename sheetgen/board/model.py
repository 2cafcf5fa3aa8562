"""A laid-out board as data: what the JSON report, the drawings and the words all read.

Holes are ``(row, column)``, both counted from 0.  Copper strips run along a
row (same row, increasing column).  A cut at a hole removes the copper there,
so that hole joins nothing.  People read a hole as a row letter and a column
number from 1: ``(2, 3)`` is C4.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

Hole = tuple[int, int]
BoardKind = Literal["stripboard", "perfboard"]
KINDS = ("stripboard", "perfboard")


def row_letter(row: int) -> str:
    """A, B, ... Z, AA, AB ...: the row's name on the drawing."""
    name = ""
    row += 1
    while row:
        row, rest = divmod(row - 1, 26)
        name = chr(ord("A") + rest) + name
    return name


def hole_name(hole: Hole) -> str:
    """``(2, 3)`` -> ``C4``: row letter, then column number counted from 1."""
    return f"{row_letter(hole[0])}{hole[1] + 1}"


@dataclass(frozen=True)
class Placement:
    """One part on the board: the hole of each pin (pin names as in the part's ``pins``).

    ``footprint`` names the footprint it takes; ``style`` and ``body_mm``
    (across, along the line of its leads) say what to draw; ``face`` is the
    side a transistor's printed face looks to on the component side.
    """

    ref: str
    holes: tuple[tuple[str, Hole], ...]
    footprint: str
    style: str
    body_mm: tuple[float, float]
    upright: bool = False
    face: str = ""  # "left" | "right" for a transistor

    def hole(self, pin: str) -> Hole:
        return dict(self.holes)[pin]


@dataclass(frozen=True)
class Terminal:
    """Where an off-board wire lands, on which net, worded by what it goes to."""

    net: str
    hole: Hole
    label: str


@dataclass(frozen=True)
class Board:
    """A proven layout: ``place.layout`` never returns one whose copper disagrees with the netlist."""

    kind: str
    pitch_mm: float
    rows: int
    cols: int
    cuts: tuple[Hole, ...]
    links: tuple[tuple[Hole, Hole], ...]  # wire links; on a perfboard also the solder bridges
    placements: tuple[Placement, ...]
    offboard: tuple[Terminal, ...]
    off_board_parts: tuple[str, ...]

    def placement(self, ref: str) -> Placement:
        return next(p for p in self.placements if p.ref == ref)

    def as_dict(self) -> dict:
        """The JSON contract's ``board`` object."""
        return {
            "kind": self.kind,
            "pitch_mm": self.pitch_mm,
            "rows": self.rows,
            "cols": self.cols,
            "cuts": [list(h) for h in self.cuts],
            "links": [{"from": list(a), "to": list(b)} for a, b in self.links],
            "placements": [{"ref": p.ref, "holes": {pin: list(h) for pin, h in p.holes}} for p in self.placements],
            "offboard": [{"net": t.net, "hole": list(t.hole), "label": t.label} for t in self.offboard],
            "off_board_parts": list(self.off_board_parts),
        }
