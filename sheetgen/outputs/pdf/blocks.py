"""The sheet's blocks: one flowable each, built from a Report and nothing else.

Every block knows its size (``wrap``) and draws itself in its own
coordinates; blocks made of rows (parts list, readings, steps) ``split``
between rows and carry their heading onto the next page marked "continued".
Blocks that only make sense whole (schematic, plots, parts list, cautions)
move to the next page instead of splitting, unless they are taller than a
whole page; no block leaves a sliver of itself at the foot of a page.
Numbers are formatted here, never computed: the physics lives in the Report.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from typing import Callable, Sequence
from xml.sax.saxutils import escape

import numpy as np
from reportlab.lib import colors
from reportlab.lib.enums import TA_LEFT
from reportlab.lib.styles import ParagraphStyle
from reportlab.platypus import Flowable, Paragraph, Table, TableStyle

from sheetgen.engine.measure import DEFINITIONS, FULL_MEANS
from sheetgen.sizing.size import delay_limits
from sheetgen.sizing import mounting, protection, runs
from sheetgen.sizing.analyse import WIRES
from sheetgen.sizing.report import Report
from sheetgen.circuits.loads import kind_of
from sheetgen.inputs.units import format_quantity, rkm_code, rkm_code_farad

from sheetgen.outputs.pdf import plot
from sheetgen.outputs.wording import (current_stage_words, draws_bin_words, keep_units, led_dimming_words,
                                     led_string_words, refs_text, standby_text, volts_range, watts)
from sheetgen.parts.colour_code import bands
from sheetgen.outputs.pdf.fonts import BOLD, REGULAR, register
from sheetgen.inputs.blocknames import SHEET_BLOCKS
from sheetgen.inputs.layout import FULL, Layout

BLACK = colors.black
WHITE = colors.white
ITEM_GAP_PT = 4.0  # between the items of one block
BLOCK_GAP_PT = 8.0  # between blocks
HEADING_RULE_PT = 1.2
EN_DASH = "\u2013"
LIGHT_DASH = (4.0, 2.5)
BAND_DASH = (1.0, 1.6)


# ------------------------------------------------------------------ styles
@dataclass(frozen=True)
class Styles:
    """The few paragraph styles a sheet uses; sizes chosen to read at arm's length."""

    body: ParagraphStyle
    small: ParagraphStyle
    cell: ParagraphStyle
    cell_bold: ParagraphStyle
    heading: ParagraphStyle
    step: ParagraphStyle
    bullet: ParagraphStyle
    caution_head: ParagraphStyle
    caution: ParagraphStyle


def paragraph_style(name, size, *, font=REGULAR, leading=None, **kw) -> ParagraphStyle:
    """Left-aligned, in the bundled faces only; sheets and cards share it so no bullet falls back to Helvetica."""
    kw.setdefault("textColor", BLACK)
    kw.setdefault("bulletFontName", REGULAR)  # the default would pull in unembedded Helvetica
    kw.setdefault("bulletFontSize", size)
    return ParagraphStyle(name, fontName=font, fontSize=size, leading=leading or size * 1.25,
                          alignment=TA_LEFT, **kw)


def number_room(size_pt: float) -> float:
    """The left indent a numbered step needs so that steps 10 to 99 line up with 1 to 9.

    The page setter starts a paragraph's first line after its bullet plus 0.6 of the bullet's size
    whenever that reaches past the left indent (reportlab's ``_handleBulletWidth``), so the indent must
    hold the widest two-digit number, its full stop and that gap; a little air on top.
    """
    from reportlab.pdfbase.pdfmetrics import stringWidth

    return max(stringWidth(f"{d}{d}.", BOLD, size_pt) for d in "0123456789") + 0.7 * size_pt


@lru_cache(maxsize=1)
def styles() -> Styles:
    """Build the styles once, after the fonts are registered."""
    register()
    return Styles(
        body=paragraph_style("body", 9),
        small=paragraph_style("small", 7.8),
        cell=paragraph_style("cell", 8.3),
        cell_bold=paragraph_style("cell_bold", 8.3, font=BOLD),
        heading=paragraph_style("heading", 11.5, font=BOLD, leading=13),
        step=paragraph_style("step", 9, leftIndent=number_room(9), bulletIndent=0, bulletFontName=BOLD),
        bullet=paragraph_style("bullet", 8.3, leftIndent=10, bulletIndent=1),
        caution_head=paragraph_style("caution_head", 10.5, font=BOLD, textColor=WHITE),
        caution=paragraph_style("caution", 8.6, leftIndent=11, bulletIndent=2, bulletFontName=BOLD),
    )


def _p(text: str, style: ParagraphStyle, **kw) -> Paragraph:
    """A paragraph of plain text (escaped: titles and messages may hold < or &); numbers keep their units."""
    return Paragraph(keep_units(escape(text)), style, **kw)


def _pm(markup: str, style: ParagraphStyle) -> Paragraph:
    """A paragraph of our own markup (bold tags); callers escape any data they insert."""
    return Paragraph(keep_units(markup), style)


# ------------------------------------------------------------ flowable kit
class Heading(Flowable):
    """Block title with a rule under it across the block's width.

    Sheets use the defaults; cards pass their own style and a tighter gap and rule.
    """

    def __init__(self, text: str, style: ParagraphStyle | None = None, *, gap_pt: float = 4.0,
                 rule_pt: float = HEADING_RULE_PT, rule_y_pt: float = 1.5) -> None:
        super().__init__()
        self._para = _p(text, style or styles().heading)
        self._gap, self._rule, self._rule_y = gap_pt, rule_pt, rule_y_pt

    def wrap(self, aw, ah):
        _, h = self._para.wrap(aw, ah)
        self.width, self.height = aw, h + self._gap
        return self.width, self.height

    def draw(self):
        self._para.drawOn(self.canv, 0, self._gap)
        self.canv.setLineWidth(self._rule)
        self.canv.setStrokeColor(BLACK)
        self.canv.line(0, self._rule_y, self.width, self._rule_y)


class Block(Flowable):
    """A heading and its items, stacked top to bottom; splits between (or inside) items.

    A ``whole`` block moves to the next frame in one piece; it splits only when
    even an empty frame of ``page_height_pt`` cannot hold it.
    """

    MIN_PIECE_PT = 72.0  # a first piece shorter than this (heading and a line or two) moves on instead

    def __init__(self, heading: str, items: Sequence[Flowable], *, continued: bool = False,
                 whole: bool = False, page_height_pt: float = 0.0) -> None:
        super().__init__()
        self.heading = heading
        self.items = tuple(items)
        self.continued = continued
        self.whole = whole
        self.page_height_pt = page_height_pt
        self.spaceAfter = BLOCK_GAP_PT
        self._head = Heading(f"{heading} (continued)" if continued else heading)
        self._sizes: list[tuple[float, float]] = []

    def _stack(self) -> tuple[Flowable, ...]:
        return (self._head, *self.items)

    def wrap(self, aw, ah):
        self._sizes = [f.wrap(aw, 1e6) for f in self._stack()]
        self.width = aw
        self.height = sum(h for _, h in self._sizes) + ITEM_GAP_PT * (len(self._sizes) - 1)
        return self.width, self.height

    def draw(self):
        y = self.height
        for f, (w, h) in zip(self._stack(), self._sizes):
            y -= h
            f.drawOn(self.canv, 0, y)
            y -= ITEM_GAP_PT

    def split(self, aw, ah):
        if self.whole and not self.wrap(aw, ah)[1] > self.page_height_pt:
            return []
        if ah < self.MIN_PIECE_PT:
            return []
        head_h = self._head.wrap(aw, ah)[1] + ITEM_GAP_PT
        room = ah - head_h
        fits: list[Flowable] = []
        for k, item in enumerate(self.items):
            _, h = item.wrap(aw, 1e6)
            if h <= room:
                fits.append(item)
                room -= h + ITEM_GAP_PT
                continue
            # A paragraph (a numbered step, a note) is never cut: it moves on whole, and so does
            # everything after it; only tables split between their rows.
            pieces = item.split(aw, room) if room > 24 and not isinstance(item, Paragraph) else []
            if len(pieces) >= 2:
                fits.append(pieces[0])
                rest = [*pieces[1:], *self.items[k + 1:]]
            else:
                rest = list(self.items[k:])
            if not fits:
                return []
            return [self._piece(fits, continued=self.continued), self._piece(rest, continued=True)]
        return [self]

    def _piece(self, items, *, continued: bool) -> "Block":
        return Block(self.heading, items, continued=continued, page_height_pt=self.page_height_pt)


class Boxed(Flowable):
    """Content inside a heavy black frame under a black heading bar: the cautions' look.

    On a wide block the items run in two balanced columns, which keeps the box
    short enough to share the first page with the summary and the timing.
    """

    TWO_COLUMNS_FROM_PT = 400.0
    COLUMN_GAP_PT = 12.0

    def __init__(self, title: str, items: Sequence[Flowable], *, pad_pt: float = 6.0) -> None:
        super().__init__()
        self._title = _p(title, styles().caution_head)
        self.items = tuple(items)
        self.pad = pad_pt
        self.spaceAfter = BLOCK_GAP_PT

    def _columns(self, inner: float) -> tuple[float, list[list[tuple[Flowable, float]]]]:
        if inner < self.TWO_COLUMNS_FROM_PT or len(self.items) < 2:
            return inner, [[(f, f.wrap(inner, 1e6)[1]) for f in self.items]]
        col_w = (inner - self.COLUMN_GAP_PT) / 2
        sized = [(f, f.wrap(col_w, 1e6)[1]) for f in self.items]
        best = min(range(1, len(sized)),
                   key=lambda k: max(sum(h for _, h in sized[:k]), sum(h for _, h in sized[k:])))
        return col_w, [sized[:best], sized[best:]]

    def wrap(self, aw, ah):
        inner = aw - 2 * self.pad
        self._title_h = self._title.wrap(inner, 1e6)[1] + 6.0
        self._col_w, self._cols = self._columns(inner)
        body = max(sum(h for _, h in col) + 3.0 * (len(col) - 1) for col in self._cols)
        self.width, self.height = aw, self._title_h + body + 2 * self.pad
        return self.width, self.height

    def draw(self):
        c = self.canv
        c.setFillColor(BLACK)
        c.rect(0, self.height - self._title_h, self.width, self._title_h, stroke=0, fill=1)
        self._title.drawOn(c, self.pad, self.height - self._title_h + 3.5)
        c.setLineWidth(2.0)
        c.setStrokeColor(BLACK)
        c.rect(1.0, 1.0, self.width - 2.0, self.height - 2.0, stroke=1, fill=0)
        for k, col in enumerate(self._cols):
            x = self.pad + k * (self._col_w + self.COLUMN_GAP_PT)
            y = self.height - self._title_h - self.pad
            for f, h in col:
                y -= h
                f.drawOn(c, x, y)
                y -= 3.0


class Centred(Flowable):
    """A fixed-size drawing centred in the width it is given."""

    def __init__(self, drawing: Flowable) -> None:
        super().__init__()
        self.drawing = drawing

    def wrap(self, aw, ah):
        w, h = self.drawing.wrap(aw, ah)
        self.width, self.height = aw, h
        self._w = w
        return aw, h

    def draw(self):
        self.drawing.drawOn(self.canv, max((self.width - self._w) / 2, 0), 0)


class ColumnRow(Flowable):
    """Blocks side by side: each column stacks its own blocks; the row splits column by column."""

    MIN_PIECE_PT = 140.0

    def __init__(self, columns: Sequence[tuple[float, Sequence[Flowable]]], *, gutter_pt: float) -> None:
        super().__init__()
        self.columns = tuple((w, tuple(fs)) for w, fs in columns)
        self.gutter = gutter_pt
        self.spaceAfter = 0.0

    @staticmethod
    def _height(width: float, flowables) -> float:
        total = 0.0
        for k, f in enumerate(flowables):
            total += f.wrap(width, 1e6)[1]
            if k < len(flowables) - 1:
                total += f.getSpaceAfter()
        return total

    def wrap(self, aw, ah):
        self.width = aw
        self.height = max((self._height(w, fs) for w, fs in self.columns), default=0.0)
        return self.width, self.height

    def draw(self):
        x = 0.0
        for w, fs in self.columns:
            y = self.height
            for f in fs:
                _, h = f.wrap(w, 1e6)
                y -= h
                f.drawOn(self.canv, x, y)
                y -= f.getSpaceAfter()
            x += w + self.gutter

    def split(self, aw, ah):
        if ah < min(self.MIN_PIECE_PT, 0.3 * self.wrap(aw, ah)[1]):
            return []  # a row cut to a sliver reads worse than a row on the next page
        firsts, rests = [], []
        for w, fs in self.columns:
            room, first, rest = ah, [], []
            for k, f in enumerate(fs):
                _, h = f.wrap(w, 1e6)
                if h <= room:
                    first.append(f)
                    room -= h + f.getSpaceAfter()
                    continue
                pieces = f.split(w, room)
                if len(pieces) >= 2:
                    first.append(pieces[0])
                    rest = [*pieces[1:], *fs[k + 1:]]
                else:
                    rest = list(fs[k:])
                break
            firsts.append((w, first))
            rests.append((w, rest))
        if not any(first for _, first in firsts):
            return []
        if not any(rest for _, rest in rests):
            return [self]
        left_over = [rest for _, rest in rests if rest]
        if len(left_over) == 1:
            # Only one column runs on: let it take the full width rather than leave half a page empty.
            return [ColumnRow(firsts, gutter_pt=self.gutter), *left_over[0]]
        return [ColumnRow(firsts, gutter_pt=self.gutter), ColumnRow(rests, gutter_pt=self.gutter)]

    def getSpaceAfter(self):
        return BLOCK_GAP_PT


def _table(rows: list[list], widths: Sequence[float], *, header: bool = True, rules: bool = True) -> Table:
    """A plain black-ruled table; the header row repeats when it breaks across pages."""
    t = Table(rows, colWidths=list(widths), repeatRows=1 if header else 0, hAlign="LEFT")
    cmds = [
        ("FONT", (0, 0), (-1, -1), REGULAR, 8.3),  # the cell default would pull in unembedded Helvetica
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("LEFTPADDING", (0, 0), (-1, -1), 2.5),
        ("RIGHTPADDING", (0, 0), (-1, -1), 2.5),
        ("TOPPADDING", (0, 0), (-1, -1), 1.8),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 2.2),
    ]
    if header:
        cmds += [("LINEBELOW", (0, 0), (-1, 0), 1.0, BLACK)]
    if rules:
        cmds += [("LINEBELOW", (0, 1 if header else 0), (-1, -1), 0.35, BLACK)]
    t.setStyle(TableStyle(cmds))
    return t


def _fractions(width: float, shares: Sequence[float]) -> list[float]:
    total = sum(shares)
    return [width * s / total for s in shares]


class _Sized(Flowable):
    """Builds its content for the width it is offered: tables whose columns follow the block width."""

    def __init__(self, build: Callable[[float], Flowable]) -> None:
        super().__init__()
        self._build = build
        self._made: tuple[float, Flowable] | None = None

    def _content(self, aw: float) -> Flowable:
        if self._made is None or abs(self._made[0] - aw) > 0.01:
            self._made = (aw, self._build(aw))
        return self._made[1]

    def wrap(self, aw, ah):
        self.width, self.height = self._content(aw).wrap(aw, ah)
        return self.width, self.height

    def draw(self):
        self._made[1].drawOn(self.canv, 0, 0)

    def split(self, aw, ah):
        inner = self._content(aw)
        inner.wrap(aw, ah)
        return inner.split(aw, ah)


# ------------------------------------------------------------------ wording
def load_text(report: Report) -> str:
    """The load in a sentence; a single LED or string is not called "1 string of 1 LED"."""
    load = report.design.spec.load
    return kind_of(load).describe(load, format_quantity)


def _sentence(words: str) -> str:
    """Words as an escaped sentence: first letter up, a full stop at the end."""
    return escape(words[:1].upper() + words[1:] + ".") if words else ""


def spread_text(p5_p50_p95: tuple[float, float, float]) -> str:
    """``0.96–2.98 s`` from a (p5, p50, p95) triple; fades that never finish are said so."""
    lo, _, hi = p5_p50_p95
    if not np.isfinite(lo):
        return "does not finish"
    if not np.isfinite(hi):
        return f"{format_quantity(lo, 's')} to never (some sets do not finish)"
    text_lo, text_hi = format_quantity(lo, "s"), format_quantity(hi, "s")
    if text_lo.split()[1] == text_hi.split()[1]:
        return f"{text_lo.split()[0]}{EN_DASH}{text_hi}"
    return f"{text_lo} {EN_DASH} {text_hi}"


def seconds(t_s: float) -> str:
    """A fade time as printed; a fade that never completes says so instead of printing a number."""
    return format_quantity(t_s, "s") if np.isfinite(t_s) else "does not finish"


def joules(e_j: float) -> str:
    return format_quantity(e_j, "W")[:-1] + "J"


def part_value(part) -> tuple[str, str]:
    """(value as printed, IEC 60062 letter code) of a part."""
    if part.kind == "resistor":
        return format_quantity(part.value, "ohm"), rkm_code(part.value)
    if part.kind == "capacitor":
        return format_quantity(part.value, "F"), rkm_code_farad(part.value)
    return part.part_number or "", ""


def part_rating(part) -> str:
    bits = []
    if part.rating_v:
        bits.append(format_quantity(part.rating_v, "V"))
    if part.rating_w:
        bits.append(format_quantity(part.rating_w, "W"))
    return ", ".join(bits) or EN_DASH


def part_bands(part) -> str:
    if part.kind != "resistor" or part.tolerance is None:
        return ""
    try:
        return " ".join(bands(float(part.value), part.tolerance))
    except ValueError:
        return "(no colour code: read the printed value)"


def part_groups(report: Report) -> list[tuple[list, object]]:
    """Parts that are bought as one line: same kind, value, model, ratings and package."""
    groups: dict[tuple, list] = {}
    for p in report.design.netlist.parts:
        key = (p.kind, None if p.value is None else float(p.value), p.model.name if p.model else None,
               p.part_number, p.description, p.rating_v, p.rating_w, p.tolerance, p.package)
        groups.setdefault(key, []).append(p)
    return [(ps, ps[0]) for ps in groups.values()]


# ------------------------------------------------------------------- blocks
@dataclass(frozen=True)
class Frame:
    """The page area a block is made for: its maker may scale a drawing to it."""

    width_pt: float
    height_pt: float


@SHEET_BLOCKS.register("summary")
def summary_block(report: Report, frame: Frame) -> Block:
    """What was asked, what was achieved, and why this transistor."""
    s = styles()
    d = report.design
    spec = d.spec
    sup = spec.supply

    on_max, off_max = delay_limits(spec)

    def limit_row(label, achieved, limit, definition):
        return [_p(label, s.cell_bold),
                _pm(f"<b>{escape(format_quantity(achieved, 's'))}</b><br/>"
                    f"at most {escape(format_quantity(limit, 's'))}", s.cell),
                _p(f"Measured {definition} ({FULL_MEANS}).", s.cell)]

    def fade_row(label, achieved, asked, definition):
        return [_p(label, s.cell_bold),
                _pm(f"<b>{escape(format_quantity(achieved, 's'))}</b> achieved<br/>"
                    f"asked {escape(format_quantity(asked, 's'))}", s.cell),
                _p(f"Measured {definition}.", s.cell)]

    rows = [
        [_p("Load", s.cell_bold), _p(load_text(report), s.cell), ""],
        [_p("Supply", s.cell_bold),
         _p(f"{format_quantity(sup.nominal_v, 'V')} nominal; sized for {format_quantity(sup.min_v, 'V')} to "
            f"{format_quantity(sup.max_v, 'V')}; ambient up to {spec.ambient_c:g} °C", s.cell), ""],
        [_p("Circuit", s.cell_bold), _p(f"{d.topology.title}. {d.topology.summary}", s.cell), ""],
        (fade_row("Delay on", d.delay_on_s, spec.delay_on_s, DEFINITIONS["delay_on_s"]) if spec.delay_on_s else
         limit_row("Delay on", d.delay_on_s, on_max, DEFINITIONS["delay_on_s"])),
        fade_row("Fade-in", d.fade_in_s, spec.fade_in_s, DEFINITIONS["fade_in_s"]),
        (fade_row("Hold off", d.hold_off_s, spec.delay_off_s, DEFINITIONS["hold_off_s"]) if spec.delay_off_s else
         limit_row("Hold off", d.hold_off_s, off_max, DEFINITIONS["hold_off_s"])),
        fade_row("Fade-out", d.fade_out_s, spec.fade_out_s, DEFINITIONS["fade_out_s"]),
        [_p("Load current", s.cell_bold),
         _pm(f"<b>{escape(format_quantity(report.steady_a, 'A'))}</b> steady, at "
             f"{escape(format_quantity(sup.nominal_v, 'V'))}", s.cell),
         _p(" ".join(_sentence(w) for w in (led_dimming_words(report), led_string_words(report)) if w), s.cell)],
        [_p("Real parts", s.cell_bold),
         _pm(f"fade-in <b>{escape(spread_text(report.spread.fade_in_s))}</b><br/>"
             f"fade-out <b>{escape(spread_text(report.spread.fade_out_s))}</b><br/>"
             f"delay on {escape(spread_text(report.spread.delay_on_s))}<br/>"
             f"hold off {escape(spread_text(report.spread.hold_off_s))}", s.cell),
         _p(f"5th to 95th percentile over {report.spread.draws} random sets of part tolerances, supply "
            f"and ambient; {report.spread.full_brightness_yield:.0%} of them reach full brightness."
            + (f" {_sentence(bins)}" if (bins := draws_bin_words(report)) else ""), s.cell)],
        [_p("Standby", s.cell_bold),
         _p(f"{standby_text(report.standby_a)} from the always-on supply with the feed off", s.cell), ""],
        _drive_row(report),
    ]
    rows.append([_p("Why this transistor", s.cell_bold),
                 [_p(r, s.bullet, bulletText="•") for r in d.reasons], ""])

    def build(aw):
        spans = [("SPAN", (1, r), (2, r)) for r, row in enumerate(rows) if row[2] == ""]
        t = _table(rows, _fractions(aw, (0.9, 1.6, 4.0)), header=False)
        t.setStyle(TableStyle(spans))
        return t

    return Block("Design summary", [_Sized(build)])


def _drive_row(report: Report) -> list:
    """How hard Q1 is driven at the lowest supply, in the terms of its kind of switch."""
    s = styles()
    d = report.design
    low = format_quantity(d.spec.supply.min_v, "V")
    part = d.values.transistor.part_number
    current = current_stage_words(report)
    if current:
        return [_p("Current set", s.cell_bold), _p(f"by {escape(d.netlist.by_role('emitter')[0].ref)}", s.cell),
                _p(_sentence(current), s.cell)]
    if d.topology.stage.kind == "mosfet":
        return [_p("Gate drive", s.cell_bold),
                _pm(f"<b>{d.overdrive:.2f} ×</b> the rated gate voltage", s.cell),
                _p(f"At {low}, the gate of the {part} reaches {d.overdrive:.2f} × the voltage its on-resistance "
                   f"is specified at, so it is fully on even with a sagging battery.", s.cell)]
    return [_p("Base drive", s.cell_bold),
            _pm(f"<b>{d.overdrive:.2f} ×</b> what saturation needs", s.cell),
            _p(f"At {low} with the lowest-gain {part} the catalog allows: Q1 stays fully on as the battery "
               f"sags, so it runs cool and the light is at full brightness.", s.cell)]


@SHEET_BLOCKS.register("schematic", whole=True)
def schematic_block(report: Report, frame: Frame) -> Block:
    """The circuit as a vector drawing, scaled to the block (at most 42 % of the frame's height)."""
    s = styles()
    max_height_pt = frame.height_pt * 0.42
    d = report.design
    probes = ", ".join(label for label, _ in d.netlist.probes)
    items = [_Schematic(report, max_height_pt=max_height_pt),
             _p(f"Test points: {probes}. Their readings are in the bench table.", s.small)]
    return Block("Schematic", items)


class _Schematic(Flowable):
    """The schematic, drawn for the width this block is given."""

    def __init__(self, report: Report, *, max_height_pt: float) -> None:
        super().__init__()
        self._report = report
        self._max_h = max_height_pt
        self._made: tuple[float, Flowable] | None = None

    def _drawing(self, aw: float) -> Flowable:
        if self._made is None or abs(self._made[0] - aw) > 0.01:
            self._made = (aw, _schematic_drawing(self._report, aw, self._max_h))
        return self._made[1]

    def wrap(self, aw, ah):
        dr = self._drawing(aw)
        w, h = dr.wrap(aw, ah)
        self._w = w
        self.width, self.height = aw, h
        return aw, h

    def draw(self):
        self._made[1].drawOn(self.canv, max((self.width - self._w) / 2, 0), 0)


def _schematic_drawing(report: Report, width_pt: float, height_pt: float) -> Flowable:
    from sheetgen.outputs.pdf.schematic import schematic_drawing

    d = report.design
    return schematic_drawing(d.netlist, d.topology, max_width_pt=width_pt, max_height_pt=height_pt)


@SHEET_BLOCKS.register("parts", whole=True)
def parts_block(report: Report, frame: Frame) -> Block:
    """One line per part to buy, with what a shop and a helper need to pick it out of a tray."""
    s = styles()
    head = ["Ref", "Qty", "Value", "Code", "Rating", "Tol.", "Package / part", "Colour bands", "Purpose"]
    rows = [[_p(h, s.cell_bold) for h in head]]
    for parts, p in part_groups(report):
        value, code = part_value(p)
        if p.kind in ("led", "lamp"):
            value = ""
        package = " ".join(x for x in (p.package, p.part_number) if x) or EN_DASH
        tol = f"±{p.tolerance * 100:g} %" if p.tolerance is not None else EN_DASH
        does = p.description
        rows.append([_p(refs_text([q.ref for q in parts]), s.cell_bold), _p(str(len(parts)), s.cell),
                     _p(value or EN_DASH, s.cell_bold if value else s.cell), _p(code or EN_DASH, s.cell),
                     _p(part_rating(p), s.cell), _p(tol, s.cell), _p(package, s.cell),
                     _p(part_bands(p) or EN_DASH, s.cell), _p(does, s.cell)])

    m = report.mounting
    for item in (m.hardware if m is not None else ()):
        rows.append([_p(item.ref, s.cell_bold), _p("1", s.cell), _p(item.part_number or EN_DASH, s.cell_bold),
                     _p(EN_DASH, s.cell), _p(f"{item.rating_c_per_w:g} °C/W", s.cell), _p(EN_DASH, s.cell),
                     _p(item.package, s.cell), _p(EN_DASH, s.cell),
                     _p(f"{item.description}; for {m.transistor}", s.cell)])

    def build(aw):
        return _table(rows, _fractions(aw, (1.15, 0.4, 0.85, 0.55, 0.95, 0.55, 0.95, 1.5, 2.0)))

    electrolytics = [p.ref for p in report.design.netlist.parts
                     if p.kind == "capacitor" and "electrolytic" in p.description.lower()]
    polarity = (f" Electrolytic {', '.join(electrolytics)}: the longer lead and the unstriped side are +."
                if electrolytics else "")
    note = _p("Code: IEC 60062 letter code printed on small parts (4K7 = 4.7 kΩ, 1m0 = 1000 µF). "
              "Colour bands read from the band nearest a lead; the tolerance band (gold = ±5 %) is last."
              + polarity, s.small)
    return Block("Parts list", [_Sized(build), note])


def _current_axis(report: Report) -> tuple[float, str]:
    """Scale and unit for load currents: mA under 1 A, A above."""
    peak = max(float(np.max(report.curves.load_a)), report.steady_a)
    return (1.0, "A") if peak >= 1.0 else (1e3, "mA")


@SHEET_BLOCKS.register("timing", whole=True)
def timing_block(report: Report, frame: Frame) -> Block:
    """Expected load current and light output through a fade-in and a fade-out."""
    s = styles()
    c = report.curves
    d = report.design
    release = d.netlist.release_s
    scale, unit = _current_axis(report)
    steady = report.steady_a * scale
    i = c.load_a * scale
    sp = report.spread
    band = [(np.asarray(sp.load_p5_a) * scale), (np.asarray(sp.load_p95_a) * scale)]
    top = plot.nice_ceiling(max(float(np.max(i)), float(np.max(band[1])), steady) * 1.08)
    light_top = top / steady * 100.0 if steady > 0 else 110.0
    left = plot.Axis(0.0, top, f"load current ({unit})")
    right = plot.Axis(0.0, light_top, "light output (% of full)",
                      ticks=tuple(t for t in plot.nice_ticks(0.0, light_top) if t <= light_top))

    def curves(shift):
        spread = tuple(plot.Series(np.asarray(sp.t_s) - shift, b, dash=BAND_DASH, width_pt=0.8) for b in band)
        return (*spread, plot.Series(c.t_s - shift, i),
                plot.Series(c.t_s - shift, c.light * 100.0, dash=LIGHT_DASH, width_pt=1.1, right_axis=True))

    curve, curve_off = curves(0.0), curves(release)
    fin = plot.Panel(
        x_range=(0.0, release), x_title="time since the feed switched on (s)", series=curve,
        markers=(plot.Marker(d.delay_on_s, 0.1 * steady, f"10 % at {format_quantity(d.delay_on_s, 's')}"),
                 plot.Marker(d.delay_on_s + d.fade_in_s, 0.9 * steady,
                             f"90 % at {format_quantity(d.delay_on_s + d.fade_in_s, 's')}")),
        heading="Fade-in")
    fout = plot.Panel(
        x_range=(0.0, float(c.t_s[-1]) - release), x_title="time since the feed switched off (s)", series=curve_off,
        markers=(plot.Marker(d.hold_off_s, 0.9 * steady, f"90 % at {format_quantity(d.hold_off_s, 's')}"),
                 plot.Marker(d.hold_off_s + d.fade_out_s, 0.1 * steady,
                             f"10 % at {format_quantity(d.hold_off_s + d.fade_out_s, 's')}")),
        heading="Fade-out")
    legend = (("load current (left scale)", None, 1.4), ("light output (right scale)", LIGHT_DASH, 1.1),
              ("5 % and 95 % of real parts (current)", BAND_DASH, 0.8))

    def build(aw):
        return Centred(plot.panels_drawing(width_pt=aw, height_pt=min(165.0, aw * 0.4), panels=(fin, fout),
                                           left=left, right=right, legend=legend))

    follows = kind_of(d.spec.load).light_words
    note = _p(f"Nominal parts at {format_quantity(d.spec.supply.nominal_v, 'V')}; steady current "
              f"{format_quantity(report.steady_a, 'A')}. {follows}The marked points are where the light crosses "
              f"10 % and 90 % of full: between them lie the fade-in and the fade-out; before them, the delay on and "
              f"the hold off.", s.small)
    return Block("Expected timing", [_Sized(build), note])


@SHEET_BLOCKS.register("heat")
def heat_block(report: Report, frame: Frame) -> Block:
    """How hot Q1 and the resistors run, and whether Q1 needs a heatsink."""
    s = styles()
    h = report.heat
    limit = f"{h.junction_limit_c:g} °C"
    m = report.mounting
    hover = f"{escape(format_quantity(h.hover_power_w, 'W'))} steady: "
    if m is None:
        sink = _pm(f"<b>Not needed</b>: under {escape(limit)} in free air", s.cell)
        stuck = _pm(hover + f"junction <b>{h.peak_junction_c:.0f} °C</b> without heatsink (limit {escape(limit)})",
                    s.cell)
    else:
        kit = f"{m.insulator.ref} kit" if m.insulator else "compound"
        name = f"{m.heatsink.ref} {m.heatsink.part_number}".strip()
        sink = _pm(f"<b>{escape(name)}, {m.heatsink.rating_c_per_w:g} °C/W</b> (needed: "
                   f"{m.needed_shown_c_per_w:g} °C/W or better). Chain: junction–case {m.rth_jc_c_per_w:g} + {kit} "
                   f"{m.rth_cs_c_per_w:g} + heatsink {m.heatsink.rating_c_per_w:g} = {m.chain_c_per_w:.2f} °C/W; "
                   f"heatsink up to {m.sink_c:.0f} °C", s.cell)
        stuck = _pm(hover + f"junction <b>{m.junction_c:.0f} °C</b> on {m.heatsink.ref} (limit {escape(limit)}); "
                    f"{escape(mounting.free_air_words(m))}", s.cell)
    rows = [
        [_p("Peak power in a fade", s.cell_bold), _p(watts(h.peak_power_w), s.cell)],
        [_p("Energy per fade", s.cell_bold), _p(joules(h.fade_energy_j), s.cell)],
        [_p("Steady, fully on", s.cell_bold), _p(watts(h.steady_power_w), s.cell)],
        [_p("Junction in use", s.cell_bold), _p(f"{h.fade_peak_junction_c:.0f} °C at most, fading on and off", s.cell)],
        [_p("Feed stuck half on", s.cell_bold), stuck],
        [_p("Heatsink", s.cell_bold), sink],
    ]
    head = [_p(x, s.cell_bold) for x in ("Ref", "Power", "Rating")]
    cells = [[_p(r.ref, s.cell), _p(watts(r.power_w), s.cell), _p(format_quantity(r.rating_w, "W"), s.cell)]
             for r in h.resistors]
    # Two resistors to a row: the list stays short however many LED strings there are.
    res = [head + head] + [cells[k] + (cells[k + 1] if k + 1 < len(cells) else ["", "", ""])
                           for k in range(0, len(cells), 2)]
    intro = _p(f"{h.transistor} ({h.package}) at {format_quantity(h.supply_v, 'V')} supply and "
               f"{h.ambient_c:g} °C ambient.", s.small)
    power = _power_plot(report)

    def res_table(aw):
        t = _table(res, _fractions(aw, (0.6, 1, 0.9, 0.6, 1, 0.9)))
        t.setStyle(TableStyle([("LINEBEFORE", (3, 0), (3, -1), 0.8, BLACK)]))
        return t

    return Block("Heat", [intro, _Sized(lambda aw: _table(rows, _fractions(aw, (1.0, 1.5)), header=False)),
                          _Sized(res_table),
                          _p("Resistor power: fully on at the highest supply; each is rated at least twice "
                             "what it dissipates.", s.small), power])


def _power_plot(report: Report) -> Flowable:
    h = report.heat
    release = report.design.netlist.release_s
    power = np.asarray(h.power_w)
    peak = float(np.max(power)) if power.size else 0.0
    scale, unit = (1.0, "W") if peak >= 1.0 else (1e3, "mW")
    top = plot.nice_ceiling(peak * scale * 1.1) if peak > 0 else 1.0
    panel = plot.Panel(x_range=(0.0, float(h.power_t_s[-1])), x_title="time since the feed switched on (s)",
                       series=(plot.Series(np.asarray(h.power_t_s), power * scale, width_pt=1.2),),
                       events=((release, "feed off"),), heading=f"Q1 dissipation at {format_quantity(h.supply_v, 'V')}")
    axis = plot.Axis(0.0, top, f"power ({unit})")
    return _Sized(lambda aw: Centred(plot.panels_drawing(width_pt=aw, height_pt=min(110.0, aw * 0.42),
                                                         panels=(panel,), left=axis)))


@SHEET_BLOCKS.register("bench")
def bench_block(report: Report, frame: Frame) -> Block:
    """Meter readings that tell a helper the board is right before the lights go in."""
    s = styles()
    rows = [[_p(x, s.cell_bold) for x in ("Test point", "Feed on", "Feed off")]]
    rows += [[_p(b.label, s.cell), _p(volts_range(b.on_v), s.cell), _p(volts_range(b.off_v), s.cell)]
             for b in report.bench]
    intro = _p("Meter on DC volts, black lead on ground. Read after each fade has settled; "
               "a reading inside the range is right.", s.small)
    items = [intro, _Sized(lambda aw: _table(rows, _fractions(aw, (1.5, 1, 1))))]
    if report.abuse:
        items += _abuse_items(report)
    return Block("Bench readings", items)


def _abuse_items(report: Report) -> list[Flowable]:
    """The simulated supply faults: what the board does and its most stressed part against the rating."""
    s = styles()
    rows = [[_p(x, s.cell_bold) for x in ("Supply fault", "What happens", "Most stressed")]]
    for c in report.abuse:
        held = f", {seconds(c.duration_s)}" if c.duration_s else ""
        happens = (f"{c.guard}; {escape(format_quantity(c.supply_a, 'A'))} drawn, light "
                   + ("off" if c.load_fraction < 0.05 else f"at {c.load_fraction:.0%} of its current"))
        w = c.worst
        worst = (f"{w.ref} {w.quantity} {escape(format_quantity(w.value, w.unit))} of "
                 f"{escape(format_quantity(w.limit, w.unit))}")
        if not c.ok:
            worst = "<b>EXCEEDS:</b> " + "; ".join(
                f"{st.ref} {st.quantity} {escape(format_quantity(st.value, st.unit))} of "
                f"{escape(format_quantity(st.limit, st.unit))}" for st in c.stresses if not st.ok)
        rows.append([_p(f"{c.title}, {format_quantity(abs(c.supply_v), 'V')}{held}", s.cell), _pm(happens, s.cell),
                     _pm(worst, s.cell)])
    note = _p("Simulated at DC with the feed on and off (the feed follows the supply): a reversed battery at the "
              "highest charging voltage, a jump start and a load dump as the alternator's own suppression leaves "
              "it (ISO 16750-2). An unsuppressed load dump (up to about 100 V) is beyond these parts.", s.small)
    return [_Sized(lambda aw: _table(rows, _fractions(aw, (1.1, 1.45, 1.45)))), note]


#: How the faults table words each way a part fails, in its "likely cause" column.
FAULT_WORDS = {"reversed": "in backwards", "leads_swapped": "with collector and emitter swapped",
               "open": "open (left out or not soldered)", "short": "shorted (a solder bridge)"}
#: The order a builder meets the symptoms in, worst first.
LOOKS = ("fuse", "never", "stays", "string", "dim", "bright", "fade", "none", "unknown")


def _fault_rows(report: Report) -> tuple[list[tuple[str, list, tuple]], list]:
    """The faults table's rows, ``(symptom, faults, telling readings)``, and the faults nothing shows.

    Faults with the same symptom and the same telling readings share a row (the
    test points cannot tell them apart); rows keep the symptoms' order and, within
    one, the likeliest fault first (``sizing.faults.FAULTS``).
    """
    from sheetgen.sizing.faults import FAULTS, READ_MARGIN, READ_MARGIN_V

    def same(a, b) -> bool:
        ta, tb = a.telling, b.telling
        return ([r.point for r in ta] == [r.point for r in tb]
                and all(abs(x - y) <= READ_MARGIN * max(abs(x), abs(y)) + READ_MARGIN_V
                        for ra, rb in zip(ta, tb) for x, y in ((ra.on_v, rb.on_v), (ra.off_v, rb.off_v))))

    rows: list[tuple[str, list, tuple]] = []
    unseen = []
    order = {name: k for k, name in enumerate(FAULTS)}
    cases = sorted(report.faults, key=lambda c: (LOOKS.index(c.look), order[c.fault]))
    for case in cases:
        if case.look == "none" and not case.telling:
            unseen.append(case)
            continue
        for symptom, faults, _ in rows:
            if symptom == case.symptom and same(faults[0], case):
                faults.append(case)
                break
        else:
            rows.append((case.symptom, [case], case.telling))
    first = {}
    for k, (symptom, _, _) in enumerate(rows):
        first.setdefault(symptom, k)
    rows.sort(key=lambda row: first[row[0]])  # rows of one symptom together, in the order they came
    return rows, unseen


def _either(refs: list[str]) -> str:
    """``R3 or R7``, ``R4 or any of LED1–LED3``: parts each of which alone gives the row's symptom."""
    runs: list[list[str]] = []
    for ref in refs:
        prefix = ref.rstrip("0123456789")
        if runs and runs[-1][0].rstrip("0123456789") == prefix:
            runs[-1].append(ref)
        else:
            runs.append([ref])
    words = []
    for run in runs:
        text = refs_text(run)
        words += [f"any of {text}"] if EN_DASH in text else text.split(", ")
    return words[0] if len(words) == 1 else ", ".join(words[:-1]) + " or " + words[-1]


def _causes(faults) -> str:
    """``R4 or any of LED1–LED3 open (...); any of LED1–LED3 in backwards``: the faults of one row."""
    nl_order: dict[str, list[str]] = {}
    for f in faults:
        refs = nl_order.setdefault(f.fault, [])
        if f.ref not in refs:
            refs.append(f.ref)
    return "; ".join(f"{_either(refs)} {FAULT_WORDS[fault]}" for fault, refs in nl_order.items())


def _volts(v: float) -> str:
    return f"{0.0 if abs(v) < 0.005 else v:.2f} V"


@SHEET_BLOCKS.register("faults")
def faults_block(report: Report, frame: Frame) -> Block:
    """What each single fault does to the light and which test-point reading gives it away (``sizing.faults``)."""
    s = styles()
    rows_data, unseen = _fault_rows(report)
    head = [_p(x, s.cell_bold) for x in ("What you see", "Likely cause", "Reading that tells it: feed on / off")]
    rows = [head]
    last = None
    for symptom, faults, telling in rows_data:
        said = _sentence(symptom) if symptom != last else ""
        last = symptom
        if faults[0].look == "fuse":  # a blown fuse leaves nothing to read: the part is found by eye
            reads = "nothing: the fuse goes first; find the part before fitting a new one"
        elif faults[0].look == "unknown":
            reads = "not worked out"
        else:
            reads = ("; ".join(f"<b>{escape(r.point.split(' ', 1)[0])}</b> {_volts(r.on_v)} / {_volts(r.off_v)}"
                               for r in telling)
                     or "every test point as on a good board")
        rows.append([_pm(said, s.cell), _p(_causes(faults), s.cell), _pm(reads, s.cell)])
    sup = format_quantity(report.design.spec.supply.nominal_v, "V")
    intro = _p(f"Worked out with one part wrong at a time, at {sup} with nominal parts. Measure as for the bench "
               "readings; a test point named here reads outside its bench range with that fault, the others do "
               "not. Causes are listed likeliest first: a part in backwards, then a lead not soldered, then a "
               "solder bridge.", s.small)
    items = [intro, _Sized(lambda aw: _table(rows, _fractions(aw, (1.25, 1.6, 1.35))))]
    if unseen:
        nl = report.design.netlist
        guards = [c.ref for c in unseen if nl.part(c.ref).role in protection.GUARD_ROLES]
        guard = (f" {refs_text(list(dict.fromkeys(guards)))} guard the supply: their faults show only when the "
                 "supply misbehaves." if guards else "")
        items.append(_p("No change in the light or at any test point, so check these by eye: "
                        + _causes(unseen) + "." + guard, s.small))
    return Block("If it does not work", items)


@SHEET_BLOCKS.register("tuning")
def tuning_block(report: Report, frame: Frame) -> Block:
    """What one swap to the next standard value does, for a helper who wants the fade a little different."""
    s = styles()
    nl = report.design.netlist
    rows = [[_p(x, s.cell_bold) for x in ("Part", "Now", "Swap to", "Fade-in", "Fade-out")]]
    for t in report.tuning:
        part = nl.part(t.ref)
        unit = "F" if part.kind == "capacitor" else "ohm"
        rows.append([_p(t.ref, s.cell_bold), _p(format_quantity(float(part.value), unit), s.cell),
                     _p(f"{format_quantity(t.value, unit)} ({t.direction})", s.cell),
                     _p(seconds(t.fade_in_s), s.cell), _p(seconds(t.fade_out_s), s.cell)])
    d = report.design
    intro = _p(f"Now: fade-in {format_quantity(d.fade_in_s, 's')}, fade-out {format_quantity(d.fade_out_s, 's')}. "
               "Change one part at a time; times are for nominal parts.", s.small)
    return Block("Tuning", [intro, _Sized(lambda aw: _table(rows, _fractions(aw, (0.55, 0.85, 1.35, 0.9, 0.98))))])


@SHEET_BLOCKS.register("wiring")
def wiring_block(report: Report, frame: Frame) -> Block:
    """Numbered steps, and the fuse and wire the harness needs."""
    s = styles()
    h = report.harness
    harness = _pm(
        f"<b>Fuse {h.fuse_a:g} A</b> in the always-on feed. <b>Wire {h.wire_mm2:g} mm² ({h.wire_awg} AWG)</b>, "
        f"rated {h.wire_rating_a:g} A; the load draws at most {escape(format_quantity(h.max_current_a, 'A'))} "
        f"at the highest supply, {escape(format_quantity(report.design.spec.supply.max_v, 'V'))}"
        + (f" (at least {h.wire_min_mm2:g} mm² here)" if h.wire_min_mm2 > WIRES_SMALLEST_MM2 else "")
        + ". Runs: " + ", ".join(escape(runs.label(report.design.spec, net)) for net, _ in report.design.topology.wiring)
        + ("." if report.design.spec.wires else "; colours as you choose, the same on every build."),
        s.body)
    steps = [_p(text, s.step, bulletText=f"{k}.") for k, text in enumerate(report.wiring, start=1)]
    return Block("Wiring", [harness, *steps])


@SHEET_BLOCKS.register("board", whole=True)
def board_block(report: Report, frame: Frame) -> Block:
    """Where every part goes: the board's two sides and its cut, link and wire lists (``board_view``)."""
    from sheetgen.outputs.pdf.board_view import board_items

    return Block("Board", board_items(report.board, report.design.netlist, styles().small))


@SHEET_BLOCKS.register("cautions")
def cautions_block(report: Report, frame: Frame) -> Flowable:
    """The safety cautions, boxed under a black bar so they cannot be missed or skimmed past."""
    s = styles()
    items = [_p(text, s.caution, bulletText="!") for text in report.cautions]
    return Boxed("CAUTIONS: read before you start", items)


WIRES_SMALLEST_MM2 = WIRES[0][0]


def _make(name: str, report: Report, frame: Frame) -> Flowable:
    """The registered block ``name``; a block registered ``whole`` moves on rather than split."""
    entry = SHEET_BLOCKS.entry(name)
    block = entry.maker(report, frame)
    if entry.whole:
        block.whole, block.page_height_pt = True, frame.height_pt
    return block


def build_blocks(report: Report, layout: Layout, *, frame_width_pt: float, frame_height_pt: float) -> list[Flowable]:
    """The story for ``layout``: blocks in its order, side-by-side rows packed into ColumnRows."""
    from reportlab.platypus import PageBreak

    frame = Frame(frame_width_pt, frame_height_pt)
    widths = layout.column_widths_pt(frame_width_pt)
    gutter = layout.gutter_mm * 72.0 / 25.4
    story: list[Flowable] = []
    row: dict[str, list[Flowable]] = {}

    def close_row():
        if row:
            story.append(ColumnRow([(widths[c.name], row.get(c.name, [])) for c in layout.columns],
                                   gutter_pt=gutter))
            row.clear()

    for placement in layout.blocks:
        if placement.new_page:
            close_row()
            if story:
                story.append(PageBreak())
        flowable = _make(placement.name, report, frame)
        if placement.column == FULL:
            close_row()
            story.append(flowable)
        else:
            row.setdefault(placement.column, []).append(flowable)
    close_row()
    return story


# ------------------------------------------------- for the other renderers
#: The same kit under public names, for the pack's booklet: one look for every page it prints.
plain_paragraph = _p
markup_paragraph = _pm
ruled_table = _table
width_shares = _fractions
SizedToWidth = _Sized
