"""Wiring cards: one builder's bench aid, several to a sheet of paper, with cut marks.

A card has a front (the builder's name, the schematic, what to pick from the
parts tray, the fuse and wire) and a back (the steps in a card's words, the
meter readings, the key cautions), as its card layout says.  Everything on a
card comes from the Report; this module only sets it.

Printing both sides of a sheet of cards is where cards go wrong, so:

* a sheet never mixes designs and no back carries a name, so every back on a
  sheet is the same picture;
* a back page prints that picture behind every card under both ways a printer
  can flip the paper (about its long or its short edge), so the backs land
  behind their fronts whatever the print dialogue says;
* cut marks are short lines just outside each card's corners, on the fronts
  only, never inside a card.

Each side of a design is drawn once into a PDF form and placed once per card,
so a sheet of thirty cards costs one drawing per side, and every card of a
design is the same drawing.  The builder's name is set on the page itself,
as plain text, never parsed as markup.

Type is set as large as the side allows: the sizes step down from a 9 pt body
to a 7 pt floor until every block fits (the schematic keeps at least two thirds of its
natural size, so its labels print at 6 pt or more), and up to two blocks at the fold
may cross to the other side when that sets the more crowded side larger.  Nothing on
a card prints below 6 pt.  Where the sheet's drawing is too wide, the card's narrower
one is tried: terminal words on short lines, one of several parallel strings drawn
and a note naming the others, a piece joined only by flags (the over-voltage cut-off)
moved into free room.  A design whose card still cannot hold every step at that size
moves to the layout's larger card (``larger:``), and its sheet of cards says so; without
one it keeps as many steps as fit and says where the rest are.  Nothing is ever
clipped or shrunk below 6 pt: a card that cannot be set is refused, naming the layout.
"""

from __future__ import annotations

import io
import re
import os
from dataclasses import dataclass, replace
from functools import lru_cache
from typing import Callable, Sequence
from xml.sax.saxutils import escape

from reportlab.lib import colors
from reportlab.lib.styles import ParagraphStyle
from reportlab.platypus import Flowable, Paragraph, Table, TableStyle

from sheetgen import __version__
from sheetgen.sizing import runs
from sheetgen.sizing.protection import GUARD_ROLES
from sheetgen.sizing.report import Report

from sheetgen.outputs.wording import keep_units, refs_text, volts_range
from sheetgen.outputs.pdf.blocks import Heading, number_room, paragraph_style, part_bands, part_groups, part_rating, part_value
from sheetgen.outputs.pdf.fonts import BOLD, REGULAR, register
from sheetgen.inputs.blocknames import CARD_BLOCKS
from sheetgen.errors import SpecError
from sheetgen.inputs.layout import (CARD_BACK_HEAD_PT, CARD_FOOT_PT, CARD_FRONT_HEAD_PT, CARD_PAD_MM, CardLayout,
                                    Slot)
from sheetgen.outputs.pdf.sheet import FOOTER_TEXT, design_digest

__all__ = ["Card", "Fitted", "render_cards", "fit_card", "card_sides", "cut_marks", "CARD_PAD_MM", "MARK_OFFSET_MM",
           "MARK_LENGTH_MM", "MIN_TEXT_PT"]

PT_PER_MM = 72.0 / 25.4
MIN_TEXT_PT = 6.0  # nothing on a card prints smaller (common practice for printed instructions, no source)
MARK_OFFSET_MM = 1.5  # a mark starts this far beyond the corner, so a slightly wide cut leaves none on the card
MARK_LENGTH_MM = 4.0
MARK_LINE_PT = 0.5
SCALES = (1.0, 0.96, 0.92, 0.88, 0.85, 0.82, 0.8, 0.78)  # type sizes tried, largest first: 9 pt body down to 7 pt
SCHEMATIC_MIN_SCALE = MIN_TEXT_PT / 9.0  # labels of 9 pt at natural size stay at 6 pt or more
SCHEMATIC_MAX_SHARE = 0.62  # of a side's height, so the parts list keeps its room (more only to reach 6 pt)
BLACK = colors.black
WHITE = colors.white
EN_DASH = "\u2013"


@dataclass(frozen=True)
class Card:
    """One builder's card: which design, and who it is for."""

    report: Report
    design: str = ""  # the design's letter in a pack ("A"); "" when there is one design
    name: str | None = None  # the builder's name exactly as written; None: a line to write a name on
    place: str = ""  # "Builder 3 of 7" for a card of a counted, unnamed build
    event: str = ""  # the event's line on the card: "Spring build night · 2027-03-20"


# ------------------------------------------------------------------ styles
@dataclass(frozen=True)
class _Styles:
    body: ParagraphStyle
    small: ParagraphStyle
    cell: ParagraphStyle
    cell_bold: ParagraphStyle
    heading: ParagraphStyle
    step: ParagraphStyle
    caution_head: ParagraphStyle
    caution: ParagraphStyle
    gap_pt: float


@lru_cache(maxsize=None)
def _styles(scale: float) -> _Styles:
    """The card's styles with every size multiplied by ``scale`` (1.0: a 9 pt body)."""
    register()

    def style(name, size, *, font=REGULAR, **kw):
        size *= scale
        return paragraph_style(f"card_{name}", size, font=font, leading=size * 1.2, **kw)

    return _Styles(
        body=style("body", 9.0),
        small=style("small", 7.7),  # 6 pt at the smallest scale
        cell=style("cell", 8.6),
        cell_bold=style("cell_bold", 8.6, font=BOLD),
        heading=style("heading", 9.8, font=BOLD),
        # Room for a two-digit number, so steps 10 and on line up with 1 to 9.
        step=style("step", 9.0, leftIndent=number_room(9.0 * scale), bulletIndent=0, bulletFontName=BOLD),
        caution_head=style("caution_head", 9.4, font=BOLD, textColor=WHITE),
        caution=style("caution", 8.6, leftIndent=9 * scale, bulletIndent=1, bulletFontName=BOLD),
        gap_pt=3.0 * scale,
    )


def _p(text: str, style: ParagraphStyle, **kw) -> Paragraph:
    """A paragraph of plain text: escaped, so data such as ``<b>`` prints as written; numbers keep their units."""
    return Paragraph(keep_units(escape(text)), style, **kw)


# ------------------------------------------------------------ flowable kit
class _Stack(Flowable):
    """Flowables one under another with a fixed gap; draws in its own coordinates."""

    def __init__(self, items: Sequence[Flowable], *, gap_pt: float) -> None:
        super().__init__()
        self.items = tuple(items)
        self.gap = gap_pt
        self._sizes: list[tuple[float, float]] = []

    def wrap(self, aw, ah):
        self._sizes = [f.wrap(aw, 1e6) for f in self.items]
        self.width = aw
        self.height = sum(h for _, h in self._sizes) + self.gap * max(len(self.items) - 1, 0)
        return self.width, self.height

    def draw(self):
        y = self.height
        for f, (_, h) in zip(self.items, self._sizes):
            y -= h
            f.drawOn(self.canv, 0, y)
            y -= self.gap


def _heading(text: str, style: ParagraphStyle) -> Heading:
    """A card's block title: the sheet heading with a tighter gap and a thin rule."""
    return Heading(text, style, gap_pt=2.5, rule_pt=0.8, rule_y_pt=1.0)


class _Framed(Flowable):
    """Content in a ruled frame; with a title, under a black bar (the cautions' look)."""

    def __init__(self, items: Sequence[Flowable], *, title: Paragraph | None = None, pad_pt: float = 4.0,
                 line_pt: float = 1.4) -> None:
        super().__init__()
        self._title = title
        self._body = _Stack(items, gap_pt=2.0)
        self.pad = pad_pt
        self.line = line_pt

    def wrap(self, aw, ah):
        inner = aw - 2 * self.pad
        self._title_h = self._title.wrap(inner, 1e6)[1] + 4.0 if self._title else 0.0
        _, body_h = self._body.wrap(inner, 1e6)
        self.width, self.height = aw, self._title_h + body_h + 2 * self.pad
        return self.width, self.height

    def draw(self):
        c = self.canv
        if self._title is not None:
            c.setFillColor(BLACK)
            c.rect(0, self.height - self._title_h, self.width, self._title_h, stroke=0, fill=1)
            self._title.drawOn(c, self.pad, self.height - self._title_h + 2.5)
        c.setLineWidth(self.line)
        c.setStrokeColor(BLACK)
        half = self.line / 2
        c.rect(half, half, self.width - self.line, self.height - self.line, stroke=1, fill=0)
        self._body.drawOn(c, self.pad, self.pad)


def _table(rows: list[list], widths: Sequence[float], *, size_pt: float) -> Table:
    """A black-ruled table with a header row."""
    t = Table(rows, colWidths=list(widths), hAlign="LEFT")
    t.setStyle(TableStyle([
        ("FONT", (0, 0), (-1, -1), REGULAR, size_pt),  # the cell default would pull in unembedded Helvetica
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("LEFTPADDING", (0, 0), (-1, -1), 1.8),
        ("RIGHTPADDING", (0, 0), (-1, -1), 1.8),
        ("TOPPADDING", (0, 0), (-1, -1), 1.0),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 1.6),
        ("LINEBELOW", (0, 0), (-1, 0), 0.9, BLACK),
        ("LINEBELOW", (0, 1), (-1, -1), 0.3, BLACK),
    ]))
    return t


class _SizedTable(Flowable):
    """A ruled table whose column widths are worked out for the width it is offered."""

    def __init__(self, rows: list[list], widths: Callable[[float], list[float]], *, size_pt: float) -> None:
        super().__init__()
        self._rows, self._widths, self._size = rows, widths, size_pt

    def wrap(self, aw, ah):
        self._table = _table(self._rows, self._widths(aw), size_pt=self._size)
        self.width, self.height = self._table.wrap(aw, ah)
        return self.width, self.height

    def draw(self):
        self._table.drawOn(self.canv, 0, 0)


def _shares(width: float, shares: Sequence[float]) -> list[float]:
    total = sum(shares)
    return [width * s / total for s in shares]


# ------------------------------------------------------------------ blocks
class _Scaled(Flowable):
    """A drawing at a fraction of its natural size: the card tries many sizes of one schematic."""

    def __init__(self, drawing: Flowable, scale: float) -> None:
        super().__init__()
        self.drawing = drawing
        self.scale = scale

    def wrap(self, aw, ah):
        self.width, self.height = self.drawing.width * self.scale, self.drawing.height * self.scale
        return self.width, self.height

    def draw(self):
        self.canv.saveState()
        self.canv.scale(self.scale, self.scale)
        self.drawing.drawOn(self.canv, 0, 0)
        self.canv.restoreState()


def _schematic(art: Flowable, width_pt: float, height_pt: float) -> Flowable:
    from sheetgen.outputs.pdf.blocks import Centred

    return Centred(_Scaled(art, min(1.0, width_pt / art.width, height_pt / art.height)))


def _natural_schematic(report: Report, *, compact: bool = False) -> Flowable:
    """The schematic at its natural scale (9 pt labels), converted once per design and scaled from then on."""
    from sheetgen.outputs.pdf.schematic import schematic_drawing

    d = report.design
    return schematic_drawing(d.netlist, d.topology, max_width_pt=1e5, max_height_pt=1e5, compact=compact)


def _card_value(part) -> str:
    """What the tray is labelled with: a value or a part number; an LED by its colour, a lamp by its rating."""
    if part.kind == "led":
        return part.description.split(", ", 1)[0]  # "white LED, Vf 3 V at 20 mA" -> "white LED"
    if part.kind == "lamp":
        return "lamp"
    value, _ = part_value(part)
    return value


def _card_rating(part) -> str:
    """The rating a builder checks on the part: watts of a resistor, volts of a capacitor.

    A semiconductor is picked by its part number, so its ratings stay on the sheet.
    """
    if part.kind in ("resistor", "capacitor"):
        return part_rating(part)
    return EN_DASH


def _identify(part) -> str:
    """How to pick the part out: colour bands, letter code and package, or package and description."""
    if part.kind == "resistor":
        return part_bands(part)
    if part.kind == "capacitor":
        _, code = part_value(part)
        return ", ".join(x for x in (f"code {code}" if code else "", part.package) if x)
    if part.kind == "led":
        return ", ".join(x for x in (part.package, *part.description.split(", ", 1)[1:]) if x)
    if part.kind == "lamp":
        return ", ".join(x for x in (part.package, part.description) if x)
    return part.package


@dataclass(frozen=True)
class _Frame:
    """What a card block is made for: the type, the width, the schematic's room and the steps to keep."""

    st: _Styles
    width: float
    schematic_h: float
    keep_steps: int | None
    art: Flowable | None


@CARD_BLOCKS.register("schematic")
def _schematic_block(report: Report, frame: _Frame) -> Flowable:
    return _schematic(frame.art, frame.width, frame.schematic_h)


@CARD_BLOCKS.register("parts")
def _parts(report: Report, frame: _Frame) -> Flowable:
    st = frame.st
    texts = [("Ref", "Qty", "Value", "Rating", "Identify")]
    guard = []
    for parts, p in part_groups(report):
        if p.role in GUARD_ROLES:  # one line for the supply guard: a card has no room for five
            guard += parts
            continue
        texts.append((refs_text([q.ref for q in parts]), str(len(parts)), _card_value(p) or EN_DASH, _card_rating(p),
                      _identify(p) or EN_DASH))
    if guard:
        texts.append((refs_text([q.ref for q in guard]), str(len(guard)), "supply guard", EN_DASH,
                      ", ".join(f"{q.ref} {_card_value(q)}" for q in guard)))
    bold_columns = (0, 2)
    rows = [[_p(t, st.cell_bold) for t in texts[0]]]
    rows += [[_p(t, st.cell_bold if k in bold_columns else st.cell) for k, t in enumerate(row)] for row in texts[1:]]

    table = _SizedTable(rows, lambda aw: _column_widths(texts, aw, st, bold_columns=bold_columns),
                        size_pt=st.cell.fontSize)
    return _Stack([_heading("Parts", st.heading), table], gap_pt=st.gap_pt)


def _column_widths(texts: Sequence[Sequence[str]], width: float, st: _Styles, *,
                   bold_columns: Sequence[int]) -> list[float]:
    """Every column but the last as wide as its widest cell (they must not wrap); the last takes the rest."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    size = st.cell.fontSize
    pad = 3.6 + 0.5  # the table's left and right padding, and a hair for rounding
    widths = []
    for k in range(len(texts[0]) - 1):
        widths.append(max(stringWidth(row[k], BOLD if k in bold_columns or row is texts[0] else REGULAR, size)
                          for row in texts) + pad)
    rest = width - sum(widths)
    if rest < 0.3 * width:  # a pathological row: share the width instead of squeezing the last column away
        return _shares(width, [1.0] * (len(texts[0]) - 1) + [2.0])
    return widths + [rest]


@CARD_BLOCKS.register("harness")
def _harness(report: Report, frame: _Frame) -> Flowable:
    st = frame.st
    h = report.harness
    trigger = ("grounded when the light should be on" if report.design.spec.trigger == "ground"
               else "goes positive when the light should be on")
    lines = [Paragraph(keep_units(f"<b>Fuse {h.fuse_a:g} A</b> (always-on feed) \u00b7 "
                       f"<b>Wire {h.wire_mm2:g} mm² ({h.wire_awg} AWG)</b>"), st.body),
             Paragraph(f"Switched feed: {trigger}", st.body),
             Paragraph("Wires: " + " \u00b7 ".join(escape(runs.label(report.design.spec, net))
                                                   for net, _ in report.design.topology.wiring)
                       + ("" if report.design.spec.wires else " (colours as you choose)"), st.body)]
    m = report.mounting
    if m is not None:
        name = f"{m.heatsink.ref} {m.heatsink.part_number}".strip()
        kit = f" on kit {m.insulator.ref}" if m.insulator else ""
        lines.append(Paragraph(keep_units(f"<b>Q1 on heatsink {escape(name)}</b> ({m.heatsink.rating_c_per_w:g} °C/W, "
                               f"{escape(m.heatsink.package)}){kit}"), st.body))
    return _Framed(lines, pad_pt=4.0 * st.gap_pt / 3.0, line_pt=1.2)


@CARD_BLOCKS.register("steps")
def _steps(report: Report, frame: _Frame) -> Flowable:
    """The card's numbered steps; ``keep_steps`` shows only the first steps and says where the rest are."""
    st, keep = frame.st, frame.keep_steps
    steps = report.brief.steps
    shown = steps if keep is None else steps[:keep]
    items: list[Flowable] = [_heading("Wiring steps", st.heading)]
    items += [_p(text, st.step, bulletText=f"{k}.") for k, text in enumerate(shown, start=1)]
    if len(shown) < len(steps):
        items.append(_p(f"Steps {len(shown) + 1}{EN_DASH}{len(steps)}: see Wiring on the design's build sheet.",
                        st.body))
    if report.brief.leads:
        items.append(_p(report.brief.leads, st.small))
    return _Stack(items, gap_pt=st.gap_pt * 0.6)


@CARD_BLOCKS.register("readings")
def _readings(report: Report, frame: _Frame) -> Flowable:
    st = frame.st
    rows = [[_p(x, st.cell_bold) for x in ("Test point", "Feed on", "Feed off")]]
    rows += [[_p(b.label, st.cell), _p(volts_range(b.on_v), st.cell), _p(volts_range(b.off_v), st.cell)]
             for b in report.bench]

    table = _SizedTable(rows, lambda aw: _shares(aw, (1.45, 1, 1)), size_pt=st.cell.fontSize)
    return _Stack([_heading("Meter readings (DC volts, black lead on ground)", st.heading), table],
                  gap_pt=st.gap_pt)


@CARD_BLOCKS.register("cautions")
def _cautions(report: Report, frame: _Frame) -> Flowable:
    st = frame.st
    items = [_p(text, st.caution, bulletText="!") for text in report.brief.cautions]
    return _Framed(items, title=_p("CAUTIONS", st.caution_head), pad_pt=3.5, line_pt=1.6)


@CARD_BLOCKS.register("board")
def _board(report: Report, frame: _Frame) -> Flowable:
    st = frame.st
    from sheetgen.outputs.pdf.board_view import BoardViews

    return _Stack([_heading("Board", st.heading), BoardViews(report.board, report.design.netlist,
                                                             font_pt=st.small.fontSize, max_pitch_pt=11.0)],
                  gap_pt=st.gap_pt)


# ------------------------------------------------------------------ fitting
@dataclass(frozen=True)
class _Side:
    """One side's body, fitted: the blocks, their flowables, total height and the type scale."""

    blocks: tuple[str, ...]
    items: tuple[Flowable, ...]
    gap_pt: float
    height_pt: float
    scale: float  # type scale (1.0 = 9 pt body)
    steps_cut: bool = False  # some steps left to the sheet
    shrink: float = 1.0  # below 1 only when nothing else fits: the whole body drawn smaller
    legible: bool = True  # False only when nothing else fits: the schematic's labels fall under 6 pt

    @property
    def rank(self) -> tuple:
        """Larger is better: schematic labels of 6 pt or more, readable type (a shrunk side sets it below
        7 pt), then every step on the card, then larger type."""
        return (self.legible, self.shrink, not self.steps_cut, self.scale)


def _measure(items: Sequence[Flowable], width: float, gap: float) -> float:
    return sum(f.wrap(width, 1e6)[1] for f in items) + gap * max(len(items) - 1, 0)


def _build_side(report: Report, blocks: Sequence[str], st: _Styles, *, width: float, schematic_h: float,
                keep_steps: int | None, art: Flowable | None) -> list[Flowable]:
    frame = _Frame(st, width, schematic_h, keep_steps, art)
    return [CARD_BLOCKS.entry(name).maker(report, frame) for name in blocks]


def _try_side(report: Report, blocks: tuple[str, ...], scale: float, keep: int | None, *, width: float,
              height: float, art: Flowable | None) -> _Side | None:
    """The side set at ``scale`` (with only ``keep`` steps, if given), or None when it does not fit."""
    st = _styles(scale)
    schematic_h = 0.0
    if "schematic" in blocks:
        full = art.height * min(1.0, width / art.width)
        others = [b for b in blocks if b != "schematic"]
        rest = _measure(_build_side(report, others, st, width=width, schematic_h=1.0, keep_steps=keep, art=art),
                        width, st.gap_pt * 2)
        room = height - rest - (st.gap_pt * 2 if others else 0.0)
        schematic_h = min(full, room, max(SCHEMATIC_MAX_SHARE * height, art.height * SCHEMATIC_MIN_SCALE))
        if schematic_h < art.height * SCHEMATIC_MIN_SCALE or width < art.width * SCHEMATIC_MIN_SCALE:
            return None  # its labels would print under 6 pt
    items = _build_side(report, blocks, st, width=width, schematic_h=schematic_h, keep_steps=keep, art=art)
    used = _measure(items, width, st.gap_pt * 2)
    if used > height + 0.01:
        return None
    return _Side(blocks=blocks, items=tuple(items), gap_pt=st.gap_pt * 2, height_pt=used, scale=scale,
                 steps_cut=keep is not None)


def _largest(fits, candidates: Sequence) -> object | None:
    """The first candidate (they run from best to worst) for which ``fits`` gives a side, by halving.

    Fitting is monotone: smaller type, or fewer steps, never makes a side taller.
    """
    lo, hi, found = 0, len(candidates) - 1, None
    while lo <= hi:
        mid = (lo + hi) // 2
        side = fits(candidates[mid])
        if side is not None:
            found, hi = side, mid - 1
        else:
            lo = mid + 1
    return found


def _fit_side(report: Report, blocks: Sequence[str], *, width: float, height: float,
              art: Flowable | None) -> _Side:
    """The largest type scale at which ``blocks`` fit ``width`` × ``height``; see the module notes."""
    blocks = tuple(blocks)
    box = dict(width=width, height=height, art=art)
    side = _largest(lambda scale: _try_side(report, blocks, scale, None, **box), SCALES)
    if side is not None:
        return side
    steps = len(report.brief.steps) if "steps" in blocks else 0
    side = _largest(lambda keep: _try_side(report, blocks, SCALES[-1], keep, **box), range(steps - 1, 0, -1))
    if side is not None:
        return side
    # Nothing fits at the smallest type: draw the smallest version scaled down to the side, never clipped.
    st = _styles(SCALES[-1])
    schematic_h = art.height * SCHEMATIC_MIN_SCALE if art is not None else 0.0
    items = _build_side(report, blocks, st, width=width, schematic_h=schematic_h,
                        keep_steps=1 if steps else None, art=art)
    used = _measure(items, width, st.gap_pt * 2)
    shrink = min(1.0, height / used)
    wide = art is not None and "schematic" in blocks and width < art.width * SCHEMATIC_MIN_SCALE
    return _Side(blocks=blocks, items=tuple(items), gap_pt=st.gap_pt * 2, height_pt=used, scale=SCALES[-1],
                 steps_cut=steps > 1, shrink=shrink, legible=shrink == 1.0 and not wide)


def _best_sides(report: Report, layout: CardLayout) -> tuple[tuple, dict[str, _Side]]:
    """Both sides of this design's card on this layout's card, and their rank.

    With ``balance`` on, up to two blocks at the fold (the front's last, the
    back's first) may cross to the other side, order kept, when that lets the more
    crowded side set larger type; on a tie the layout's own split stands.  The
    sheet's drawing and the card's narrower one are both tried; on a tie the
    sheet's stands.
    """
    if "board" in layout.front + layout.back and report.brief.board_steps:
        report = replace(report, brief=replace(report.brief, steps=report.brief.board_steps))
    w, h = layout.card_pt
    pad = CARD_PAD_MM * PT_PER_MM
    inner_w = w - 2 * pad
    front_h = h - 2 * pad - _FRONT_HEAD_PT - _FOOT_PT
    back_h = h - 2 * pad - _BACK_HEAD_PT - _FOOT_PT
    if "schematic" not in layout.front + layout.back:
        return _sides(report, layout, None, inner_w=inner_w, front_h=front_h, back_h=back_h)
    best = _sides(report, layout, _natural_schematic(report), inner_w=inner_w, front_h=front_h, back_h=back_h)
    if best[0] < ((True, 1.0, True, SCALES[0]),) * 2:
        narrow = _sides(report, layout, _natural_schematic(report, compact=True), inner_w=inner_w,
                        front_h=front_h, back_h=back_h)
        if narrow[0] > best[0]:
            best = narrow
    return best


def card_sides(report: Report, layout: CardLayout) -> dict[str, _Side]:
    """Both sides of this design's card, fitted to the layout's own card (never its larger one)."""
    return _best_sides(report, layout)[1]


def _complete(rank: tuple) -> bool:
    """Every side legible at 6 pt or more, unshrunk, with every step."""
    return all(side[0] and side[1] == 1.0 and side[2] for side in rank)


@dataclass(frozen=True)
class Fitted:
    """A design's card as it is printed: the card layout it is set on and its two sides."""

    layout: CardLayout  # the layout's own card, or its larger card
    sides: dict[str, _Side]
    moved_from: CardLayout | None = None  # the layout whose card was too small, when on its larger card

    @property
    def note(self) -> str:
        """The line a sheet of these cards carries when they are on the larger card."""
        if self.moved_from is None:
            return ""
        (w, h), (sw, sh) = (tuple(round(x, 1) for x in c.card_mm) for c in (self.layout, self.moved_from))
        return (f"set on {w:g} \u00d7 {h:g} mm cards: this design does not fit {sw:g} \u00d7 {sh:g} mm "
                f"with every step at {MIN_TEXT_PT:g} pt")


def fit_card(report: Report, layout: CardLayout) -> Fitted:
    """The card a design is printed on: the layout's own, or its larger card when the own one cannot set
    every step at 6 pt or more.  A card that no layout card can set at 6 pt is refused (SpecError)."""
    rank, sides = _best_sides(report, layout)
    fitted = Fitted(layout=layout, sides=sides)
    if not _complete(rank) and layout.larger is not None:
        big_rank, big_sides = _best_sides(report, layout.larger)
        if big_rank >= rank:
            rank, fitted = big_rank, Fitted(layout=layout.larger, sides=big_sides, moved_from=layout)
    if not all(side[0] and side[1] == 1.0 for side in rank):
        w, h = (round(x, 1) for x in fitted.layout.card_mm)
        key, what = (("larger", "make the larger card bigger") if fitted.moved_from is not None
                     else ("card", "give the layout a larger card (`larger:`, as layouts/a6-card.yaml does)"))
        raise SpecError(f"{layout.source}: {key}: {w:g} \u00d7 {h:g} mm cannot set the card of "
                        f"{report.design.spec.title!r} with its text at {MIN_TEXT_PT:g} pt or more; {what}, "
                        "or choose another card layout")
    return fitted


def _sides(report: Report, layout: CardLayout, art: Flowable | None, *, inner_w: float, front_h: float,
           back_h: float) -> tuple[tuple, dict[str, _Side]]:
    """The best split of the blocks over the two sides with this drawing, and its rank."""
    if not layout.back:
        front = _fit_side(report, layout.front, width=inner_w, height=front_h, art=art)
        return (front.rank, front.rank), {"front": front}
    order = layout.front + layout.back
    here = len(layout.front)
    splits = [here] + ([k for k in (here - 1, here + 1, here - 2, here + 2) if 1 <= k < len(order)] if layout.balance else [])
    best = None
    for k in splits:
        front = _fit_side(report, order[:k], width=inner_w, height=front_h, art=art)
        back = _fit_side(report, order[k:], width=inner_w, height=back_h, art=art)
        rank = (min(front.rank, back.rank), max(front.rank, back.rank))
        if best is None or rank > best[0]:
            best = (rank, {"front": front, "back": back})
    return best


# ------------------------------------------------------------ card drawing
_NAME_PT = 23.0  # the name's band: one line of 15 pt, two of up to 9.5 pt or three of 6 pt
_FRONT_HEAD_PT = CARD_FRONT_HEAD_PT  # label and event, name, design title, rule
_BACK_HEAD_PT = CARD_BACK_HEAD_PT
_FOOT_PT = CARD_FOOT_PT
_LETTER_BOX_PT = 30.0


def _wrap(text: str, font: str, size: float, width: float) -> list[str]:
    """Greedy word wrap; a word wider than the line is broken between characters, never cut off."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    lines: list[str] = []
    line = ""
    for word in text.split(" "):
        trial = f"{line} {word}" if line else word
        if stringWidth(trial, font, size) <= width:
            line = trial
            continue
        if line:
            lines.append(line)
        line = ""
        for ch in word:
            if stringWidth(line + ch, font, size) > width and line:
                lines.append(line)
                line = ""
            line += ch
    if line or not lines:
        lines.append(line)
    return lines


def _fit_lines(text: str, font: str, largest: float, smallest: float, width: float,
               max_lines: int) -> tuple[list[str], float]:
    """The largest size from ``largest`` down to ``smallest`` at which ``text`` takes at most ``max_lines``."""
    size = largest
    while True:
        lines = _wrap(text, font, size, width)
        if len(lines) <= max_lines or size <= smallest:
            return lines, size
        size = max(size - 0.5, smallest)


def _letter_size(letter: str, size_pt: float) -> tuple[float, float]:
    """The kit letter's type size (never under 6 pt) and the box's width, widened when the letters need it."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    font_size = max(size_pt * (0.62 if len(letter) == 1 else 0.42), MIN_TEXT_PT)
    return font_size, max(size_pt, stringWidth(letter, BOLD, font_size) + 4.0)


def _letter_box(c, x: float, y_top: float, letter: str, size_pt: float) -> float:
    """A black box with the kit letter in white, ``size_pt`` tall; returns its width."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    font_size, width = _letter_size(letter, size_pt)
    c.setFillColor(BLACK)
    c.rect(x, y_top - size_pt, width, size_pt, stroke=0, fill=1)
    c.setFillColor(WHITE)
    c.setFont(BOLD, font_size)
    c.drawString(x + (width - stringWidth(letter, BOLD, font_size)) / 2, y_top - size_pt * 0.5 - font_size * 0.36,
                 letter)
    c.setFillColor(BLACK)
    return width


def _front_header(c, card: Card, *, x: float, y_top: float, width: float) -> None:
    """Builder, design title and event at the top of a front, drawn on the page as plain text.

    The name gets the most room: one line from 15 pt down to 10 pt, else two
    lines down to 6 pt, else three of 6 pt, breaking a word only when it is wider
    than the card; a name longer still ends in an ellipsis.
    """
    from reportlab.pdfbase.pdfmetrics import stringWidth

    d = card.report.design
    box_w = _letter_size(card.design, _LETTER_BOX_PT)[1] if card.design else 0.0
    text_w = width - (box_w + 6 if card.design else 0)
    if card.design:
        _letter_box(c, x + width - box_w, y_top, card.design, _LETTER_BOX_PT)
    c.setFillColor(BLACK)
    c.setFont(REGULAR, 6.5)
    c.drawString(x, y_top - 5.5, card.place.upper() if card.place else "BUILDER")  # "BUILDER 3 OF 7"
    name_top = y_top - 8.0
    if card.name is not None:
        lines, size = _fit_lines(card.name, BOLD, 15.0, 10.0, text_w, 1)
        if len(lines) > 1:
            lines, size = _fit_lines(card.name, BOLD, 9.5, MIN_TEXT_PT, text_w, 2)
        if len(lines) > 3:
            lines = lines[:2] + [_one_line(" ".join(lines[2:]), BOLD, size, size, text_w)[0]]
        c.setFont(BOLD, size)
        if len(lines) == 1:
            c.drawString(x, name_top - _NAME_PT / 2 - size * 0.36, lines[0])
        else:
            for k, line in enumerate(lines):
                c.drawString(x, name_top - size * (0.95 + 1.12 * k), line)
    else:
        y = name_top - _NAME_PT + 4.0
        c.setFont(REGULAR, 8.0)
        c.drawString(x, y + 1.5, "Name")
        c.setLineWidth(0.6)
        c.line(x + stringWidth("Name ", REGULAR, 8.0), y, x + text_w, y)
    if card.event:  # on the label's line, right of it: the date always whole, the event's name shortened first
        label_w = stringWidth(card.place.upper() if card.place else "BUILDER", REGULAR, 6.5) + 8.0
        event, e_size = _event_line(card.event, text_w - label_w)
        c.setFont(REGULAR, e_size)
        c.drawRightString(x + text_w, y_top - 5.5, event)
    base = name_top - _NAME_PT - 8.5
    title, t_size = _one_line(d.spec.title, BOLD, 8.5, 7.0, width)
    c.setFont(BOLD, t_size)
    c.drawString(x, base, title)
    c.setLineWidth(1.2)
    c.line(x, y_top - _FRONT_HEAD_PT + 2.5, x + width, y_top - _FRONT_HEAD_PT + 2.5)


def _event_line(event: str, width: float) -> tuple[str, float]:
    """The event's line at 6.5 to 6 pt; if still too long, its name ends in an ellipsis but its date stays whole."""
    name, dot, date = event.rpartition(" \u00b7 ")
    if not dot or not re.fullmatch(r"\d{4}-\d{2}-\d{2}", date):
        return _one_line(event, REGULAR, 6.5, 6.0, width)
    lines, size = _fit_lines(event, REGULAR, 6.5, 6.0, width, 1)
    if len(lines) == 1:
        return lines[0], size
    from reportlab.pdfbase.pdfmetrics import stringWidth

    tail = f" \u00b7 {date}"
    short, _ = _one_line(name, REGULAR, 6.0, 6.0, max(width - stringWidth(tail, REGULAR, 6.0), 0.0))
    return short + tail, 6.0


def _one_line(text: str, font: str, largest: float, smallest: float, width: float) -> tuple[str, float]:
    """A line of context (a title, the event) shrunk to fit, and ended with an ellipsis if it still does not."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    lines, size = _fit_lines(text, font, largest, smallest, width, 1)
    if len(lines) == 1:
        return lines[0], size
    cut = text
    while cut and stringWidth(cut + "\u2026", font, size) > width:
        cut = cut[:-1]
    return cut.rstrip() + "\u2026", size


def _back_header(c, report: Report, design: str, *, x: float, y_top: float, width: float) -> None:
    """One line atop a back: the kit letter and the design's title (the footer gives its revision)."""
    box = 14.0
    text_x = x
    if design:
        text_x = x + _letter_box(c, x, y_top, design, box) + 5.0
    title, size = _one_line(report.design.spec.title, BOLD, 9.0, 7.0, x + width - text_x)
    c.setFillColor(BLACK)
    c.setFont(BOLD, size)
    c.drawString(text_x, y_top - box / 2 - size * 0.36, title)
    c.setLineWidth(1.2)
    c.line(x, y_top - _BACK_HEAD_PT + 2.0, x + width, y_top - _BACK_HEAD_PT + 2.0)


def _footer(c, report: Report, *, x: float, y: float, width: float) -> None:
    """The safety line, and the design's revision to match a card with its sheet when there is room."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    c.setFont(REGULAR, 6.0)
    c.drawString(x, y, FOOTER_TEXT)
    rev = f"rev {design_digest(report)}"
    if stringWidth(FOOTER_TEXT, REGULAR, 6.0) + stringWidth(rev, REGULAR, 6.0) + 8 <= width:
        c.drawRightString(x + width, y, rev)


def _draw_body(c, side: _Side, *, x: float, y_top: float, width: float) -> None:
    c.saveState()
    c.translate(x, y_top)
    c.scale(side.shrink, side.shrink)
    y = 0.0
    for f in side.items:
        _, h = f.wrap(width / side.shrink, 1e6)
        y -= h
        f.drawOn(c, 0, y)
        y -= side.gap_pt
    c.restoreState()


def _side_form(c, name: str, report: Report, design: str, side: _Side, which: str, layout: CardLayout) -> None:
    """Draw one side's fixed part (everything but a front's header) into the PDF form ``name``."""
    w, h = layout.card_pt
    pad = CARD_PAD_MM * PT_PER_MM
    inner_w = w - 2 * pad
    c.beginForm(name, 0, 0, w, h)
    c.setStrokeColor(BLACK)
    c.setFillColor(BLACK)
    head = _FRONT_HEAD_PT if which == "front" else _BACK_HEAD_PT
    if which == "back":
        _back_header(c, report, design, x=pad, y_top=h - pad, width=inner_w)
    _draw_body(c, side, x=pad, y_top=h - pad - head, width=inner_w)
    _footer(c, report, x=pad, y=pad, width=inner_w)
    c.endForm()


# ------------------------------------------------------------- cut marks
def cut_marks(slot: Slot, layout: CardLayout) -> list[tuple[float, float, float, float]]:
    """The eight short lines (x1, y1, x2, y2) just outside a card's four corners, along its edges."""
    w, h = layout.card_pt
    off = MARK_OFFSET_MM * PT_PER_MM
    room = min(layout.gap_mm / 2, layout.margins_mm) * PT_PER_MM - off - 0.5 * PT_PER_MM
    length = min(MARK_LENGTH_MM * PT_PER_MM, room)
    marks = []
    for cx, sx in ((slot.x_pt, -1), (slot.x_pt + w, 1)):
        for cy, sy in ((slot.y_pt, -1), (slot.y_pt + h, 1)):
            marks.append((cx + sx * off, cy, cx + sx * (off + length), cy))  # along the horizontal edge
            marks.append((cx, cy + sy * off, cx, cy + sy * (off + length)))  # along the vertical edge
    return marks


def _mirrors(slot: Slot, layout: CardLayout) -> tuple[tuple[int, int], tuple[int, int]]:
    """Where a card's back lands when the paper is flipped about its vertical or its horizontal axis."""
    columns, rows = layout.grid
    return (columns - 1 - slot.column, slot.row), (slot.column, rows - 1 - slot.row)


PRINTABLE_EDGE_MM = 4.0  # most printers leave this much of the paper's edge blank


def _sheet_note(c, layout: CardLayout, title: str, text: str) -> None:
    """One line above the cards (or below them), clear of the cut marks and the printer's blank edge.

    ``title`` leads the line; it is shortened (with an ellipsis) before the line
    would set under 6 pt.  On paper with no room for it outside the marks the
    note is left out; the cards say what they are without it.
    """
    from reportlab.pdfbase.pdfmetrics import stringWidth

    page_w, page_h = layout.sheet_size_pt
    slots = layout.slots()
    marks = [m for slot in slots for m in cut_marks(slot, layout)]
    top = max(max(m[1], m[3]) for m in marks)
    bottom = min(min(m[1], m[3]) for m in marks)
    edge = PRINTABLE_EDGE_MM * PT_PER_MM
    room = page_w - 2 * edge
    size = 7.0
    while size > MIN_TEXT_PT and stringWidth(f"{title} \u00b7 {text}", REGULAR, size) > room:
        size -= 0.5
    rest = f" \u00b7 {text}"
    short, _ = _one_line(title, REGULAR, size, size, max(room - stringWidth(rest, REGULAR, size), 0.0))
    text = short + rest
    clear = 1.2 * PT_PER_MM
    if top + clear + size <= page_h - edge:
        y = min(top + clear + (page_h - edge - top - clear - size) / 2, top + 8 * PT_PER_MM)
    elif bottom - clear - size >= edge:
        y = bottom - clear - size
    else:
        return
    c.setFont(REGULAR, size)
    c.setFillColor(BLACK)
    c.drawCentredString(page_w / 2, y, text)


# ------------------------------------------------------------------ the file
def render_cards(cards: Sequence[Card], layout: CardLayout, *, title: str, environ=None,
                 on_design: Callable[[str], None] | None = None, fits: dict[int, Fitted] | None = None) -> bytes:
    """Every card as PDF bytes: per sheet a page of fronts, then (two-sided cards) a page of backs.

    Cards are grouped by design, in the order the designs first appear; a
    sheet holds one design only, on the card ``fit_card`` chose for it (the
    layout's own or its larger one: the paper turns as that card needs).
    ``fits`` may give those choices already made, by ``id(report)``.
    ``on_design`` is called with each design's letter once its sides are
    fitted, for a progress bar.
    """
    from reportlab.pdfgen.canvas import Canvas

    if not cards:
        raise ValueError("no cards to print")
    register()
    env = os.environ if environ is None else environ
    reproducible = bool(env.get("SOURCE_DATE_EPOCH", "").strip())
    buffer = io.BytesIO()
    c = Canvas(buffer, pagesize=layout.sheet_size_pt, invariant=1 if reproducible else 0,
               initialFontName=REGULAR, initialFontSize=8)
    c.setTitle(f"{title} \u2013 wiring cards")
    c.setAuthor("sheetgen")
    c.setSubject(f"Wiring cards, {layout.name}")
    c.setCreator(f"sheetgen {__version__}")

    order: dict[int, list[Card]] = {}
    for card in cards:
        order.setdefault(id(card.report), []).append(card)
    groups = list(order.values())
    forms: dict[int, dict[str, str]] = {}
    fitted: dict[int, Fitted] = {}
    for n, group in enumerate(groups):
        first = group[0]
        fit = (fits or {}).get(id(first.report)) or fit_card(first.report, layout)
        fitted[id(first.report)] = fit
        forms[id(first.report)] = {}
        for which, side in fit.sides.items():
            name = f"card_{n}_{which}"
            _side_form(c, name, first.report, first.design, side, which, fit.layout)
            forms[id(first.report)][which] = name
        if on_design is not None:
            on_design(first.design)

    sheets = [batch for group in groups for batch in _batches(group, fitted[id(group[0].report)].layout.per_sheet)]
    for k, batch in enumerate(sheets, start=1):
        report = batch[0].report
        design = batch[0].design
        fit = fitted[id(report)]
        here = fit.layout
        slots = here.slots()
        by_grid = {(s.column, s.row): s for s in slots}
        w, h = here.card_pt
        pad = CARD_PAD_MM * PT_PER_MM
        label = f"design {design} \u00b7 " if design else ""
        moved = f" \u00b7 {fit.note}" if fit.note else ""
        two_sided = "back" in forms[id(report)]
        how = "print both sides (either flip), then cut at the marks" if two_sided else "cut at the marks"
        c.setPageSize(here.sheet_size_pt)
        _sheet_note(c, here, title, f"{label}sheet {k} of {len(sheets)}, fronts \u00b7 {how}{moved}")
        c.setStrokeColor(BLACK)
        for card, slot in zip(batch, slots):
            c.saveState()
            c.translate(slot.x_pt, slot.y_pt)
            c.doForm(forms[id(report)]["front"])
            c.restoreState()
            _front_header(c, card, x=slot.x_pt + pad, y_top=slot.y_pt + h - pad, width=w - 2 * pad)
            c.setLineWidth(MARK_LINE_PT)
            for x1, y1, x2, y2 in cut_marks(slot, here):
                c.line(x1, y1, x2, y2)
        c.showPage()
        if two_sided:
            c.setPageSize(here.sheet_size_pt)
            _sheet_note(c, here, title, f"{label}sheet {k} of {len(sheets)}, backs{moved}")
            behind = {pos for slot in slots[:len(batch)] for pos in _mirrors(slot, here)}
            for pos in sorted(behind, key=lambda p: (p[1], p[0])):
                slot = by_grid[pos]
                c.saveState()
                c.translate(slot.x_pt, slot.y_pt)
                c.doForm(forms[id(report)]["back"])
                c.restoreState()
            c.showPage()
    c.save()
    return buffer.getvalue()


def _batches(group: Sequence[Card], per_sheet: int) -> list[Sequence[Card]]:
    return [group[k:k + per_sheet] for k in range(0, len(group), per_sheet)]


def single_design_cards(report: Report, fitted: Fitted) -> list[Card]:
    """A sheet's worth of cards for one design on the card it was fitted to, each with a line for a name."""
    return [Card(report=report) for _ in range(fitted.layout.per_sheet)]
