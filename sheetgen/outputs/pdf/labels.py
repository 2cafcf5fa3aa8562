"""Where the schematic's labels stand: candidate spots, text boxes, and first-free placement.

The pen asks for a label with a few candidate spots while it draws; once every
symbol is down, ``place`` gives each label (part values first, test point tags
last) the first spot whose box meets no symbol, wire or earlier label.  Text is
measured with the font the PDF embeds, in the drawing's units (y up), so the
places found here hold on the printed page.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Sequence

from sheetgen.model.netlist import Part
from sheetgen.inputs.units import format_quantity

from sheetgen.outputs.pdf.fonts import REGULAR as PDF_FONT

if TYPE_CHECKING:
    from sheetgen.circuits.topologies import Direction

FONT_PT = 9.0  # label size at natural scale; the sheet scales the whole drawing to fit its box
LEADING = 1.15  # line spacing of multi-line labels, in font sizes
INCHES_PER_UNIT = 0.3  # schemdraw drawing unit -> inches
PT_PER_UNIT = 72.0 * INCHES_PER_UNIT
CAP_HEIGHT = 0.73  # DejaVu Sans cap height, in font sizes


@dataclass(frozen=True)
class Box:
    """A label's extent in drawing units (y up), for layout and overlap checks."""

    x0: float
    y0: float
    x1: float
    y1: float
    text: str

    def overlaps(self, other: Box) -> bool:
        """True when the two boxes share area (touching edges do not count)."""
        return self.x0 < other.x1 and other.x0 < self.x1 and self.y0 < other.y1 and other.y0 < self.y1


def text_width(text: str) -> float:
    """Width of one line of label text in drawing units, with the font the PDF embeds."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    return stringWidth(text, PDF_FONT, FONT_PT) / PT_PER_UNIT


def line_height() -> float:
    return FONT_PT * LEADING / PT_PER_UNIT


def part_label(part: Part) -> list[str]:
    """The lines printed beside a part: its reference, then what to fetch from the drawer."""
    lines = [part.ref]
    if part.kind == "resistor" and part.value is not None:
        lines.append(format_quantity(float(part.value), "ohm"))
        if part.rating_w is not None and part.rating_w > 0.25:
            lines.append(format_quantity(part.rating_w, "W"))  # a ¼ W part from the drawer would cook
    elif part.kind == "capacitor" and part.value is not None:
        lines.append(format_quantity(float(part.value), "F"))
        if part.rating_v is not None:
            lines.append(format_quantity(part.rating_v, "V"))
    elif part.kind == "lamp":
        if part.rating_v is not None and part.rating_w is not None:
            lines.append(f"{format_quantity(part.rating_v, 'V')} {format_quantity(part.rating_w, 'W')}")
    elif part.kind != "led":
        lines.append(part.part_number or part.description)
    return lines


def probe_tag(label: str) -> str:
    """The designator of a probe label (``TP2 timing capacitor`` -> ``TP2``): the sheet's table says the rest."""
    return label.split()[0] if label.strip() else label


@dataclass(frozen=True)
class Spot:
    """One place a label may stand: an anchor and how the text block hangs from it."""

    x: float
    y: float
    halign: str  # left | center | right
    valign: str  # top | center | bottom


@dataclass(frozen=True)
class Ask:
    """A label waiting to be placed; the first spot that collides with nothing wins."""

    lines: tuple[str, ...]
    spots: tuple[Spot, ...]
    priority: int  # lower goes first: part values claim their places before test point tags


PART, SIGN, TAG = 0, 1, 2




def spots_around(at: tuple[float, float], sides: Sequence[Direction], clearance: float) -> list[Spot]:
    """Candidate spots for a label on the given sides of a point, ``clearance`` away, in order."""
    x, y = at
    place = {
        "left": Spot(x - clearance, y, "right", "center"),
        "right": Spot(x + clearance, y, "left", "center"),
        "up": Spot(x, y + clearance, "center", "bottom"),
        "down": Spot(x, y - clearance, "center", "top"),
    }
    return [place[s] for s in sides]


def label_box(lines: Sequence[str], spot: Spot) -> Box:
    """Where a block of label lines would stand if hung from ``spot``."""
    height = line_height() * len(lines)
    width = max(text_width(t) for t in lines)
    top = {"top": spot.y, "center": spot.y + height / 2, "bottom": spot.y + height}[spot.valign]
    x0 = {"left": spot.x, "center": spot.x - width / 2, "right": spot.x - width}[spot.halign]
    return Box(x0, top - height, x0 + width, top, " ".join(lines))


@dataclass(frozen=True)
class Placed:
    """A label on its spot: the lines, the spot they hang from and the box they fill."""

    lines: tuple[str, ...]
    spot: Spot
    box: Box

    def baselines(self) -> list[float]:
        """The alphabetic baseline of each line, top to bottom, centred in its line's height."""
        step = line_height()
        cap = CAP_HEIGHT * FONT_PT / PT_PER_UNIT
        return [self.box.y1 - k * step - (step - cap) / 2 - cap for k in range(len(self.lines))]


def place(asks: Sequence[Ask], obstacles: Sequence[Box]) -> tuple[list[Placed], list[str]]:
    """Every label on its first spot clear of ``obstacles`` and of the labels placed before it.

    A label with no free spot takes its first one anyway; the second list says what it meets.
    """
    placed: list[Placed] = []
    collisions: list[str] = []
    for ask in sorted(asks, key=lambda a: a.priority):
        taken = [*obstacles, *(p.box for p in placed)]
        candidates = [label_box(ask.lines, spot) for spot in ask.spots]
        free = [c for c in candidates if not any(c.overlaps(o) for o in taken)]
        if free:
            box, spot = free[0], ask.spots[candidates.index(free[0])]
        else:
            box, spot = candidates[0], ask.spots[0]
            hits = [o.text for o in taken if box.overlaps(o)]
            collisions.append(f"{box.text!r} meets {', '.join(hits)}")
        placed.append(Placed(ask.lines, spot, box))
    return placed, collisions
