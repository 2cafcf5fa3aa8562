"""The schematic of a fader: its topology's recipe drawn with schemdraw.

The engine holds each layout as a recipe written against the small ``Pen``
vocabulary in ``sheetgen.circuits.topologies``; this module is the one pen there is.  It
draws with schemdraw's own SVG backend (no matplotlib) and hands the sheet a
reportlab vector ``Drawing`` made from that SVG by svglib.

Text stays text all the way into the PDF, so a reader can search the sheet
for "R1" and a test can extract it: schemdraw is told to write ``<text>``
elements (never glyph outlines), each label line sits on its alphabetic
baseline (svglib ignores ``dominant-baseline``; the few texts schemdraw
anchors otherwise are moved before conversion), and svglib is given a font
map that sends every family to the sheet's embedded DejaVu Sans.  Labels are
measured with that same font, so the places found for them hold (``labels.py``
chooses those places).

schemdraw, svglib and reportlab are imported inside the functions that need
them, so importing this module costs nothing.
"""

from __future__ import annotations

import hashlib
import io
import math
from typing import TYPE_CHECKING, Any, Callable, Sequence
from xml.etree import ElementTree as ET

from sheetgen.model.netlist import GROUND, PIN_ORDER, Netlist, Part

from sheetgen.outputs.pdf.fonts import REGULAR as PDF_FONT
from sheetgen.outputs.pdf.fonts import register as register_fonts
from sheetgen.outputs.pdf.labels import (FONT_PT, INCHES_PER_UNIT, PART, SIGN, TAG, Ask, Box, Spot, label_box,
                                         part_label, place, probe_tag, spots_around, text_width)
from sheetgen.outputs.wording import refs_text as span

if TYPE_CHECKING:
    from reportlab.graphics.shapes import Drawing

    from sheetgen.circuits.topologies import Direction, Topology

__all__ = ["schematic_svg", "schematic_drawing", "FONT_PT", "LINE_PT"]

SVG_FONT_FAMILY = "DejaVu Sans"  # the family the SVG names; a browser with DejaVu shows what the PDF shows
LINE_PT = 1.6  # wire and symbol weight at natural scale: still ≥ 1 pt when shrunk to half an A4 page
PITCH = 2.0  # one part pitch (a resistor's length), in drawing units
LED_PITCHES = 0.75  # an LED is shorter than a resistor: strings stay a sensible height
GAP = 0.15  # between a symbol and its label, drawing units
STUB = 0.55  # a test point's stub, drawing units
TP_RADIUS = 0.1  # test point and terminal circles, drawing units
SHOW_ALL_BRANCHES = 3  # more parallel branches than this are drawn as the first, a note, and the last
SHOW_ALL_IN_SERIES = 3  # more LEDs in one string than this are drawn as first, dotted line, last
APART_STEP = 0.25  # drawing units between the places tried for a piece drawn apart (compact)
APART_CLEARANCE = 0.3  # drawing units of white kept round a piece drawn apart, so it reads as its own
APART_CLEARANCE_TIGHT = 0.15  # the least, taken only where it keeps the piece inside the drawing
NARROW_LINE = "(via fuse)"  # the widest line a terminal's words take in the compact drawing

_SVG_NS = "{http://www.w3.org/2000/svg}"

# Half-widths of symbols across their axis (drawing units), for placing labels clear of them.
_HALF = {"resistor": 0.3, "capacitor": 0.3, "diode": 0.3, "led": 0.3, "lamp": 0.5}
_LED_ARROWS = 0.85  # how far an LED's light arrows reach on their side


_BREAKDOWN_ROLES = ("clamp", "surge", "cutoff_zener")


class SchemdrawPen:
    """The ``Pen`` of ``sheetgen.circuits.topologies``, drawing onto one schemdraw ``Drawing``.

    Symbols and wires go down as the recipe asks; labels are only requested
    then, each with a few candidate spots, and placed by ``finish`` once every
    symbol is known, so a label never lands on a part drawn after it.  The pen
    keeps what a check needs: every label's box (``boxes``), the labels that
    found no free spot (``collisions``), the references it has drawn or
    named (``named``) and the pieces it moved apart (``pieces``).

    ``compact`` is the card's narrower drawing: the terminals' words on short
    lines, one of several parallel strings drawn and a note naming the rest, and
    a piece joined only by flags moved into free room.
    """

    def __init__(self, *, compact: bool = False) -> None:
        import schemdraw

        register_fonts()
        self.drawing = schemdraw.Drawing(canvas="svg", show=False)
        self.drawing.config(unit=PITCH, inches_per_unit=INCHES_PER_UNIT, fontsize=FONT_PT,
                            font=SVG_FONT_FAMILY, lw=LINE_PT, color="black", margin=0.1)
        self.boxes: list[Box] = []
        self.collisions: list[str] = []
        self.named: list[str] = []
        self.pieces: list[tuple[int, int]] = []  # the elements (first, past last) of each piece moved apart
        self._asks: list[Ask] = []
        self._compact = compact  # parallel branches drawn as the first and a note naming the rest
        self._here = (0.0, 0.0)
        self._net: str | None = None
        self._marks: dict[str, tuple[tuple[float, float], str]] = {}
        self._pins: dict[tuple[str, str], tuple[tuple[float, float], str]] = {}

    # -- the Pen protocol ---------------------------------------------------------------

    def start(self, net: str) -> None:
        self._here, self._net = (0.0, 0.0), net

    def move(self, toward: Direction, length: float, *, net: str) -> None:
        self._here, self._net = self._step(toward, length), net

    def wire(self, toward: Direction, length: float = 1.0, *, until: str | None = None) -> None:
        if until is None:
            end = self._step(toward, length)
        else:
            (mx, my), _ = self._marks[until]
            end = (mx, self._here[1]) if toward in ("left", "right") else (self._here[0], my)
            if _direction(self._here, end) not in (toward, None):
                raise ValueError(f"mark {until!r} does not lie {toward} of the cursor")
        self._line(self._here, end)
        self._here = end

    def mark(self, name: str) -> None:
        self._marks[name] = (self._here, self._current())

    def go(self, name: str) -> None:
        self._here, self._net = self._marks[name]

    def pin(self, part: Part, pin: str) -> None:
        try:
            self._here, self._net = self._pins[(part.ref, pin)]
        except KeyError:
            raise ValueError(f"{part.ref} pin {pin} is not drawn yet") from None

    def junction(self) -> None:
        self._dot(self._here)

    def resistor(self, part: Part, toward: Direction) -> None:
        import schemdraw.elements as elm

        self._two_terminal(part, elm.ResistorIEEE(), toward)

    def capacitor(self, part: Part, toward: Direction) -> None:
        import schemdraw.elements as elm

        # The curved plate is the negative one; a "+" by the straight plate says it twice.
        self._two_terminal(part, elm.Capacitor2(), toward, plus_pin="+")

    def diode(self, part: Part, toward: Direction) -> None:
        import schemdraw.elements as elm

        # A clamp, a TVS or a cut-off zener works in breakdown: its symbol warns the builder off fitting a plain
        # rectifier there; the reverse-battery guard is a Schottky and is drawn as one.
        if part.role in _BREAKDOWN_ROLES:
            element = elm.Zener()
        elif part.role == "reverse_polarity":
            element = elm.Schottky()
        else:
            element = elm.Diode()
        self._two_terminal(part, element, toward)

    def npn(self, part: Part) -> None:
        import schemdraw.elements as elm

        self._transistor(part, elm.BjtNpn(circle=True).right(), "npn", ("collector", "base", "emitter"))

    def pnp(self, part: Part) -> None:
        import schemdraw.elements as elm

        self._transistor(part, elm.BjtPnp(circle=True).right(), "pnp", ("collector", "base", "emitter"))

    def nmos(self, part: Part) -> None:
        import schemdraw.elements as elm

        # Gate centred between drain and source, so it reads like the BJTs; the source arrow says n-channel.
        self._transistor(part, elm.AnalogNFet(offset_gate=False).reverse(), "nmos", ("drain", "gate", "source"))

    def load(self, branches: Sequence[Sequence[Part]], *, top: str) -> None:
        bottom = self._current()
        if not branches:
            raise ValueError(f"no load branches between {top!r} and {bottom!r}")
        for branch in branches:
            _check_chain(branch, top, bottom)
        if self._compact and len(branches) > 1:
            shown: list[Sequence[Part] | None] = [None, branches[0]]  # the note over the circuit, not beyond it
            note = _hidden_note(branches[1:])
            self.named.extend(p.ref for b in branches[1:] for p in b)
        elif len(branches) > SHOW_ALL_BRANCHES:
            shown = [branches[0], None, branches[-1]]
            note = _hidden_note(branches[1:-1])
            self.named.extend(p.ref for b in branches[1:-1] for p in b)
        else:
            shown, note = list(branches), []

        # Widths either side of each column: light arrows to the left, labels to the right.
        lefts, rights = [], []
        for branch in shown:
            if branch is None:
                half = max(text_width(t) for t in note) / 2 + 0.2
                lefts.append(half)
                rights.append(half)
                continue
            lefts.append(max(_LED_ARROWS if p.kind == "led" else _HALF[p.kind] for p in branch))
            label_w = max(text_width(t) for group in _groups(branch) for t in _group_label(group))
            rights.append(max(_HALF[p.kind] for p in branch) + GAP + label_w)
        xs = [0.0]
        for j in range(1, len(shown)):
            xs.append(xs[-1] + rights[j - 1] + 0.35 + lefts[j])
        x_bus, y_bus = self._here
        # The cursor's wire rises into the rightmost column that keeps the load clear of the
        # terminals on the left; the columns to its right then overhang the rest.
        drawn_left = self.drawing.get_bbox().xmin if self.drawing.elements else -math.inf
        left_limit = drawn_left + PITCH + lefts[0]
        real = [j for j, b in enumerate(shown) if b is not None]
        fits = [j for j in real if x_bus - xs[j] + xs[0] >= left_limit]
        on = fits[-1] if fits else real[0]
        xs = [x + x_bus - xs[on] for x in xs]
        height = max(_branch_height(b) for b in shown if b is not None)
        y_top = y_bus + height

        for x, branch in zip(xs, shown):
            if branch is None:
                self._ask(note, [Spot(x, y_top - 0.5, "center", "top")], PART)
                continue
            self._here, self._net = (x, y_top), top
            self._draw_branch(branch)
            self._line(self._here, (x, y_bus))
        if len(real) > 1:  # rails join the drawn branches; a compact note beside them hangs free
            self._line((xs[real[0]], y_top), (xs[real[-1]], y_top))
            self._line((xs[real[0]], y_bus), (xs[real[-1]], y_bus))
            for j in real[:-1]:  # the rail tees into every column but the last, where it turns
                self._dot((xs[j], y_top))
            for j in real:  # the bus tees where the cursor's wire joins and at every inner column
                if 0 < j < len(xs) - 1 or j == on:
                    self._dot((xs[j], y_bus))
        self._here, self._net = (xs[real[0]], y_top), top  # the rail meets the first branch drawn, over any note

    def ground(self) -> None:
        import schemdraw.elements as elm

        if self._current() != GROUND:
            raise ValueError(f"a ground symbol on net {self._net!r}")
        self.drawing.add(elm.Ground().theta(0).at(self._here))

    def terminal(self, text: str, toward: Direction) -> None:
        import schemdraw.elements as elm

        self._current()
        radius = TP_RADIUS * 1.3
        self.drawing.add(elm.Dot(open=True, radius=radius).at(self._here))
        lines = text.split("\n")
        if self._compact:  # short lines: the terminals' words set the drawing's left edge
            lines = _narrow(lines)
        self._ask(lines, spots_around(self._here, (toward,), radius + GAP), PART)

    def net_label(self, text: str, toward: Direction) -> None:
        import schemdraw.elements as elm

        self._current()
        dx, dy = _unit_vector(toward)
        x, y = self._here
        tip = (x + dx * STUB, y + dy * STUB)
        self._line(self._here, tip)
        self.drawing.add(elm.Dot(radius=TP_RADIUS * 0.8).at(tip))
        self._ask([text], spots_around(tip, (toward,), TP_RADIUS + GAP), PART)

    def test_point(self, label: str, net: str, toward: Direction) -> None:
        import schemdraw.elements as elm

        if net != self._current():
            raise ValueError(f"test point {label!r} is for net {net!r} but the cursor is on {self._net!r}")
        dx, dy = _unit_vector(toward)
        x, y = self._here
        tip = (x + dx * STUB, y + dy * STUB)
        self._dot(self._here)
        self._line(self._here, (tip[0] - dx * TP_RADIUS, tip[1] - dy * TP_RADIUS))
        self.drawing.add(elm.Dot(open=True, radius=TP_RADIUS).at(tip))
        sides: tuple[Direction, ...]
        if toward in ("left", "right"):
            sides = (toward, "up", "down")
        else:
            sides = ("right", "left", toward)
        self._ask([probe_tag(label)], spots_around(tip, sides, TP_RADIUS + 0.08), TAG)

    def apart(self, draw: Callable[[], None]) -> None:
        """Draw a piece joined by flags only: at the cursor, or (compact) in the first free room found.

        The compact drawing is for a card, where width is what runs short: the
        piece is drawn once to learn its extent, taken out again, and drawn
        where it meets no symbol, wire or label of the rest, inside the drawing's
        width and growing its height as little as it can, nearest the place the
        recipe chose.
        """
        if not self._compact:
            draw()
            return
        start, net = self._here, self._net
        counts = len(self.drawing.elements), len(self._asks), len(self.named)
        draw()
        extent = _union([_element_box(e) for e in self.drawing.elements[counts[0]:]]
                        + [label_box(a.lines, a.spots[0]) for a in self._asks[counts[1]:]])
        del self.drawing.elements[counts[0]:]
        del self._asks[counts[1]:]
        del self.named[counts[2]:]
        dx, dy = self._room_for(extent)
        self._here, self._net = (start[0] + dx, start[1] + dy), net
        draw()
        self.pieces.append((counts[0], len(self.drawing.elements)))

    def _room_for(self, extent: Box) -> tuple[float, float]:
        """The shift that puts ``extent`` clear of everything drawn and every label asked for so far.

        Room inside the drawing comes first, with the full clearance, then with the
        tight one; failing both, the least growth of the drawing's height.
        """
        import numpy as np

        taken = [_element_box(e) for e in self.drawing.elements]
        placed, _ = place(self._asks, [Box(b.x0 - 0.05, b.y0 - 0.05, b.x1 + 0.05, b.y1 + 0.05, b.text)
                                       for b in taken])
        taken += [p.box for p in placed]
        whole = _union(taken)
        boxes = np.array([(b.x0, b.y0, b.x1, b.y1) for b in taken])
        w, h = extent.x1 - extent.x0, extent.y1 - extent.y0

        def free(m: float, below: float) -> tuple[np.ndarray, np.ndarray]:
            """Lower-left corners, on the grid, at which ``extent`` keeps ``m`` clear of everything."""
            xs = np.arange(whole.x0, max(whole.x1 - w, whole.x0) + 1e-9, APART_STEP)
            ys = np.arange(whole.y0 - below, whole.y1 - h + 1e-9, APART_STEP)
            gx, gy = (a.ravel() for a in np.meshgrid(xs, ys))
            hits = ((gx[:, None] - m < boxes[None, :, 2]) & (boxes[None, :, 0] < gx[:, None] + w + m)
                    & (gy[:, None] - m < boxes[None, :, 3]) & (boxes[None, :, 1] < gy[:, None] + h + m)).any(axis=1)
            return gx[~hits], gy[~hits]

        for m in (APART_CLEARANCE, APART_CLEARANCE_TIGHT):
            gx, gy = free(m, 0.0)
            if gx.size:
                best = int(np.argmin(np.hypot(gx - extent.x0, gy - extent.y0)))
                return float(gx[best] - extent.x0), float(gy[best] - extent.y0)
        gx, gy = free(APART_CLEARANCE, h + APART_CLEARANCE)
        if gx.size == 0:  # nothing free even below: under the lot, at its left edge
            return whole.x0 - extent.x0, whole.y0 - APART_CLEARANCE - extent.y1
        growth = np.maximum(whole.y0 - gy, 0.0)
        distance = np.hypot(gx - extent.x0, gy - extent.y0)
        best = np.lexsort((distance, np.round(growth, 6)))[0]
        return float(gx[best] - extent.x0), float(gy[best] - extent.y0)

    # -- after the recipe -------------------------------------------------------------------

    def finish(self) -> None:
        """Place every requested label on its first spot clear of symbols, wires and other labels."""
        import schemdraw.elements as elm
        from schemdraw.segments import SegmentText

        pad = 0.05
        obstacles = []
        for e in self.drawing.elements:
            b = e.get_bbox(transform=True, includetext=False)
            obstacles.append(Box(b.xmin - pad, b.ymin - pad, b.xmax + pad, b.ymax + pad, type(e).__name__))
        placed, collisions = place(self._asks, obstacles)
        self.collisions.extend(collisions)
        for label in placed:
            self.boxes.append(label.box)
            holder = elm.Element()
            for line, baseline in zip(label.lines, label.baselines()):
                holder.segments.append(SegmentText((0, baseline), line, align=(label.spot.halign, "base"),  # type: ignore[arg-type]
                                                   fontsize=FONT_PT, font=SVG_FONT_FAMILY))
            self.drawing.add(holder.theta(0).at((label.spot.x, 0.0)))
        self._asks.clear()

    # -- helpers --------------------------------------------------------------------------

    def _ask(self, lines: Sequence[str], spots: Sequence[Spot], priority: int) -> None:
        self._asks.append(Ask(tuple(lines), tuple(spots), priority))

    def _current(self) -> str:
        if self._net is None:
            raise ValueError("the recipe drew before start()")
        return self._net

    def _step(self, toward: Direction, length: float) -> tuple[float, float]:
        dx, dy = _unit_vector(toward)
        return (self._here[0] + dx * length * PITCH, self._here[1] + dy * length * PITCH)

    def _line(self, a: tuple[float, float], b: tuple[float, float], *, dotted: bool = False) -> None:
        import schemdraw.elements as elm

        if a == b:
            return
        line = elm.Line().at(a).to(b)
        if dotted:
            line.linestyle(":")
        self.drawing.add(line)

    def _dot(self, at: tuple[float, float]) -> None:
        import schemdraw.elements as elm

        self.drawing.add(elm.Dot(radius=0.09).at(at))

    def _two_terminal(self, part: Part, element: Any, toward: Direction, *, pitches: float = 1.0,
                      plus_pin: str | None = None, label: bool = True, flip: bool = False) -> None:
        """Place a two-pin symbol from the cursor, turned so its pins sit where the netlist says."""
        first, second = PIN_ORDER[part.kind]
        net = self._current()
        if part.net(first) == net:
            near, far = first, second
        elif part.net(second) == net:
            near, far = second, first
        else:
            raise ValueError(f"{part.ref} has no pin on net {net!r} (its pins: {dict(part.pins)})")
        start = self._here
        end = self._step(toward, pitches)
        getattr(element.at(start), toward)(pitches * PITCH)  # e.g. .down(2.0): sources ignore .to()
        if near != first:
            element.reverse()
        if flip:
            element.flip()
        self.drawing.add(element)
        self._pins[(part.ref, near)] = (start, part.net(near))
        self._pins[(part.ref, far)] = (end, part.net(far))
        self._here, self._net = end, part.net(far)
        mid = ((start[0] + end[0]) / 2, (start[1] + end[1]) / 2)
        half = _HALF[part.kind]
        across: tuple[Direction, Direction] = ("up", "down") if toward in ("left", "right") else ("right", "left")
        if label:
            spots = spots_around(mid, across, half + GAP)
            if toward in ("up", "down"):
                # A tall label may reach the wire at the part's top: then let it hang lower.
                low = (mid[0], min(start[1], end[1]) + 0.3 * PITCH)
                spots += spots_around(low, across, half + GAP)
            self._ask(part_label(part), spots, PART)
            self.named.append(part.ref)
        if plus_pin is not None:
            plus_end = start if plus_pin == near else end
            at = (mid[0] + (plus_end[0] - mid[0]) * 0.3, mid[1] + (plus_end[1] - mid[1]) * 0.3)
            self._ask(["+"], spots_around(at, across[::-1], half + 0.05), SIGN)

    def _transistor(self, part: Part, element: Any, kind: str, anchors: tuple[str, str, str]) -> None:
        """A transistor hung by its control pin from the cursor, labelled to its right, clear of its leads.

        ``anchors`` names the symbol's anchors in the order of the kind's pins
        (``PIN_ORDER``: output, control, common), so every kind shares one check.
        """
        if part.kind != kind:
            raise ValueError(f"{part.ref} is drawn as a {kind} but the netlist has a {part.kind}")
        pins = PIN_ORDER[kind]
        control = pins[1]
        if part.net(control) != self._current():
            raise ValueError(f"{part.ref}: {anchors[1]} is on {part.net(control)!r}, the cursor on {self._net!r}")
        q = self.drawing.add(element.anchor(anchors[1]).at(self._here))
        for pin, name in zip(pins, anchors):
            x, y = q.absanchors[name]
            self._pins[(part.ref, pin)] = ((float(x), float(y)), part.net(pin))
        box = q.get_bbox(transform=True, includetext=False)
        mid_y = (box.ymin + box.ymax) / 2
        self._ask(part_label(part), [Spot(box.xmax + GAP, mid_y - 0.2, "left", "center"),
                                     Spot(box.xmax + GAP, box.ymin, "left", "top")], PART)
        self.named.append(part.ref)

    def _draw_branch(self, branch: Sequence[Part]) -> None:
        """One column of the load, from its top net downwards, cursor ending at its foot."""
        import schemdraw.elements as elm

        for group in _groups(branch):
            kind = group[0].kind
            if kind == "led":
                top_y = self._here[1]
                if len(group) > SHOW_ALL_IN_SERIES:
                    self._two_terminal(group[0], elm.LED(), "down", pitches=LED_PITCHES, label=False, flip=True)
                    gap_start = self._here
                    self._here = self._step("down", 0.5)
                    self._line(gap_start, self._here, dotted=True)
                    self._net = group[-1].net("A")
                    self._two_terminal(group[-1], elm.LED(), "down", pitches=LED_PITCHES, label=False, flip=True)
                    mid = (self._here[0], (top_y + self._here[1]) / 2)
                    self._ask(_group_label(group), spots_around(mid, ("right",), _HALF["led"] + GAP), PART)
                else:
                    for led in group:
                        self._two_terminal(led, elm.LED(), "down", pitches=LED_PITCHES, flip=True)
                self.named.extend(p.ref for p in group if p.ref not in self.named)
            elif kind == "lamp":
                self._two_terminal(group[0], elm.Lamp(), "down")
            elif kind == "resistor":
                self._two_terminal(group[0], elm.ResistorIEEE(), "down")
            else:
                raise ValueError(f"{group[0].ref}: a {kind} cannot be drawn in a load branch")


def _element_box(element: Any) -> Box:
    b = element.get_bbox(transform=True, includetext=False)
    return Box(b.xmin, b.ymin, b.xmax, b.ymax, type(element).__name__)


def _union(boxes: Sequence[Box]) -> Box:
    return Box(min(b.x0 for b in boxes), min(b.y0 for b in boxes), max(b.x1 for b in boxes),
               max(b.y1 for b in boxes), "")


def _narrow(lines: Sequence[str]) -> list[str]:
    """Label lines broken at spaces, each no wider than ``NARROW_LINE`` unless a single word is."""
    limit = text_width(NARROW_LINE)
    out: list[str] = []
    for line in lines:
        current = ""
        for word in line.split(" "):
            trial = f"{current} {word}" if current else word
            if current and text_width(trial) > limit:
                out.append(current)
                current = word
            else:
                current = trial
        out.append(current)
    return out


def _unit_vector(toward: Direction) -> tuple[float, float]:
    return {"right": (1.0, 0.0), "left": (-1.0, 0.0), "up": (0.0, 1.0), "down": (0.0, -1.0)}[toward]


def _direction(a: tuple[float, float], b: tuple[float, float]) -> str | None:
    dx, dy = b[0] - a[0], b[1] - a[1]
    if dx == 0 and dy == 0:
        return None
    if dy == 0:
        return "right" if dx > 0 else "left"
    if dx == 0:
        return "up" if dy > 0 else "down"
    return "diagonal"


def _check_chain(branch: Sequence[Part], top: str, bottom: str) -> None:
    """A branch must run part to part from ``top`` to ``bottom``; the drawing would lie otherwise."""
    net = top
    for part in branch:
        if net not in part.nets:
            raise ValueError(f"{part.ref} is not on net {net!r}, so it does not follow in series")
        net = next(n for n in part.nets if n != net)
    if net != bottom:
        raise ValueError(f"branch from {top!r} ends on {net!r}, not {bottom!r}")


def _groups(branch: Sequence[Part]) -> list[list[Part]]:
    """Consecutive LEDs together, every other part alone."""
    groups: list[list[Part]] = []
    for part in branch:
        if part.kind == "led" and groups and groups[-1][0].kind == "led":
            groups[-1].append(part)
        else:
            groups.append([part])
    return groups


def _group_label(group: Sequence[Part]) -> list[str]:
    if group[0].kind == "led":
        if len(group) > SHOW_ALL_IN_SERIES:
            return [span([p.ref for p in group]), f"{len(group)} in series"]
        return [p.ref for p in group]
    return part_label(group[0])


def _branch_height(branch: Sequence[Part]) -> float:
    """Drawing units from a branch's top net to the foot of its last part."""
    pitches = 0.0
    for group in _groups(branch):
        if group[0].kind == "led":
            shown = 2 if len(group) > SHOW_ALL_IN_SERIES else len(group)
            pitches += shown * LED_PITCHES + (0.5 if len(group) > SHOW_ALL_IN_SERIES else 0.0)
        else:
            pitches += 1.0
    return pitches * PITCH + 0.5


def _hidden_note(hidden: Sequence[Sequence[Part]]) -> list[str]:
    """The lines standing in for branches not drawn, naming every part in them."""
    by_kind: dict[str, list[str]] = {}
    for branch in hidden:
        for part in branch:
            by_kind.setdefault(part.kind, []).append(part.ref)
    what = "lamp" if all(p.kind == "lamp" for b in hidden for p in b) else "string"
    lines = [f"+ {len(hidden)} {what}{'' if len(hidden) == 1 else 's'}", "the same:"]
    lines += [span(refs) for refs in by_kind.values()]
    return lines


def _layout(netlist: Netlist, topology: Topology, *, compact: bool = False) -> SchemdrawPen:
    """Run the topology's recipe on a fresh pen and check that it named every part."""
    pen = SchemdrawPen(compact=compact)
    topology.draw(pen, netlist)
    pen.finish()
    missing = [p.ref for p in netlist.parts if p.ref not in pen.named]
    if missing:
        raise ValueError(f"the {topology.name} drawing leaves out {', '.join(missing)}")
    return pen


def _svg_of(pen: SchemdrawPen) -> bytes:
    """The pen's drawing as SVG, its page grown to hold every label as the PDF font sets it."""
    import schemdraw
    from schemdraw.types import BBox

    previous = schemdraw.svgconfig.text
    schemdraw.svgconfig.text = "text"  # <text> elements, not glyph outlines, even when ziamath is installed
    try:
        fig = pen.drawing.draw(show=False)
        box = pen.drawing.get_bbox()
        xs = [box.xmin, box.xmax] + [b.x0 for b in pen.boxes] + [b.x1 for b in pen.boxes]
        ys = [box.ymin, box.ymax] + [b.y0 for b in pen.boxes] + [b.y1 for b in pen.boxes]
        fig.set_bbox(BBox(min(xs), min(ys), max(xs), max(ys)))
        # schemdraw spells a solid line "stroke-dasharray:-", which no SVG reader accepts.
        return fig.getimage("svg").replace(b"stroke-dasharray:-;", b"")
    finally:
        schemdraw.svgconfig.text = previous


def schematic_svg(netlist: Netlist, topology: Topology, *, compact: bool = False) -> bytes:
    """The schematic as a standalone SVG document (UTF-8), text kept as text.

    ``compact`` is the card's narrower drawing (``SchemdrawPen``): terminal words on short
    lines, one of several parallel load branches drawn and the rest named in a note
    ("+ 2 strings the same"), the over-voltage cut-off moved into free room.
    """
    return _svg_of(_layout(netlist, topology, compact=compact))


# How far below its anchor the alphabetic baseline sits for each dominant-baseline, in ems:
# svglib reads every <text> as alphabetic, so the anchors schemdraw writes are moved.
_BASELINE_SHIFT_EM = {"central": 0.36, "middle": 0.36, "hanging": 0.75, "text-before-edge": 0.75,
                      "ideographic": -0.22, "text-after-edge": -0.22}


def _for_svglib(svg: bytes) -> bytes:
    """Put each text's baseline where a browser would, since svglib ignores ``dominant-baseline``."""
    root = ET.fromstring(svg)
    for text in root.iter(f"{_SVG_NS}text"):
        baseline = text.attrib.pop("dominant-baseline", "alphabetic")
        shift = _BASELINE_SHIFT_EM.get(baseline, 0.0)
        if shift:
            size = float(text.get("font-size", FONT_PT))
            text.set("y", repr(float(text.get("y", "0")) + shift * size))
    return ET.tostring(root, encoding="utf-8")


def _art_cache_key(netlist: Netlist, topology: Topology, *, compact: bool):
    """Where svglib's reading of this schematic is kept: it depends on the circuit, this code and the libraries.

    Drawing the SVG and reading it back cost most of a sheet's rendering, and
    neither depends on anything but the netlist and its drawing recipe.
    """
    import pickle

    import reportlab
    import schemdraw
    import svglib

    from sheetgen.sizing.cache import PACKAGE, DesignCache, code_fingerprint

    code = code_fingerprint(PACKAGE, ("model", "circuits", "inputs/units.py", "outputs/pdf", "fonts"))
    versions = f"{reportlab.Version} {schemdraw.__version__} {getattr(svglib, '__version__', '')}"
    blob = pickle.dumps((netlist, topology, compact), protocol=4) + f"\n{code}\n{versions}".encode()
    return DesignCache(), "schematic-" + hashlib.sha256(blob).hexdigest()


def schematic_drawing(netlist: Netlist, topology: Topology, *, max_width_pt: float,
                      max_height_pt: float, compact: bool = False) -> Drawing:
    """The schematic as a reportlab vector ``Drawing`` no larger than the box given.

    The drawing is shrunk to fit but never enlarged: at natural size its text
    is ``FONT_PT`` and its lines ``LINE_PT``, meant for print.
    """
    from reportlab.graphics.shapes import Drawing, Group
    from svglib.fonts import FontMap
    from svglib.svglib import svg2rlg

    class _SheetFont(FontMap):
        """Every family the SVG names becomes the sheet's embedded face."""

        def find_font(self, font_name: str, weight: str = "normal", style: str = "normal") -> tuple[str, bool]:
            return PDF_FONT, True

    if max_width_pt <= 0 or max_height_pt <= 0:
        raise ValueError(f"the box must have room: {max_width_pt} × {max_height_pt} pt")
    register_fonts()
    cache, key = _art_cache_key(netlist, topology, compact=compact)
    art = cache.get(key)
    if art is None:
        art = svg2rlg(io.BytesIO(_for_svglib(schematic_svg(netlist, topology, compact=compact))),
                      font_map=_SheetFont())
        if art is None:
            raise ValueError("svglib could not read the schematic SVG")
        cache.put(key, art)
    body = Group(*art.contents)
    x0, y0, x1, y1 = body.getBounds()
    pad = LINE_PT  # strokes reach half a line beyond the geometry, round caps included
    x0, y0, x1, y1 = x0 - pad, y0 - pad, x1 + pad, y1 + pad
    scale = min(1.0, max_width_pt / (x1 - x0), max_height_pt / (y1 - y0))
    body.transform = (scale, 0, 0, scale, -x0 * scale, -y0 * scale)
    out = Drawing((x1 - x0) * scale, (y1 - y0) * scale)
    out.add(body)
    return out
