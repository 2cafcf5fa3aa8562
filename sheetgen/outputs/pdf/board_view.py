"""The build board drawn twice: the component side (parts, links, wire points) and the copper side.

The copper side is mirrored, as the board is seen when turned over: column 1
is at the right.  Both views carry row letters and column numbers, the names
every step and list uses.  Drawn in black and greys only, so it prints on any
printer; nothing here decides where a part goes, it only draws ``report.board``.
"""

from __future__ import annotations

from xml.sax.saxutils import escape

from reportlab.lib import colors
from reportlab.platypus import Flowable, Paragraph

from sheetgen.board import words
from sheetgen.board.model import Board, Hole, row_letter
from sheetgen.model.netlist import Netlist
from sheetgen.outputs.pdf.fonts import BOLD, REGULAR, register
from sheetgen.outputs.wording import keep_units

BLACK = colors.black
WHITE = colors.white
COPPER = colors.Color(0.78, 0.78, 0.78)
FAINT = colors.Color(0.88, 0.88, 0.88)
MAX_PITCH_PT = 15.0
MIN_FONT_PT = 6.0
VIEW_GAP_PT = 6.0


class BoardViews(Flowable):
    """Both sides of the board, one above the other, as wide as they are offered (to ``MAX_PITCH_PT``)."""

    def __init__(self, board: Board, netlist: Netlist, *, font_pt: float = 7.0, max_pitch_pt: float = MAX_PITCH_PT) -> None:
        super().__init__()
        register()
        self.board, self.netlist = board, netlist
        self.font = max(font_pt, MIN_FONT_PT)
        self.max_pitch = max_pitch_pt

    def _pitch(self, aw: float) -> float:
        return min(self.max_pitch, aw / (self.board.cols + 2.6))

    def wrap(self, aw, ah):
        self.pitch = self._pitch(aw)
        self.view_h = (self.board.rows + 2.2) * self.pitch + self.font + 3
        self.width = (self.board.cols + 2.6) * self.pitch
        self.height = 2 * self.view_h + VIEW_GAP_PT
        return self.width, self.height

    # -------------------------------------------------------------- geometry
    def _xy(self, hole: Hole, *, mirrored: bool, top: float) -> tuple[float, float]:
        r, c = hole
        col = self.board.cols - 1 - c if mirrored else c
        return (1.6 + col + 0.5) * self.pitch, top - (1.2 + r + 0.5) * self.pitch

    def draw(self):
        c = self.canv
        self._view(c, top=self.height, mirrored=False)
        self._view(c, top=self.view_h, mirrored=True)

    def _frame(self, c, *, top: float, mirrored: bool, title: str) -> None:
        b, p = self.board, self.pitch
        from reportlab.pdfbase.pdfmetrics import stringWidth

        c.setFillColor(BLACK)
        size = self.font
        while size > MIN_FONT_PT and stringWidth(title, BOLD, size) > self.width:
            size -= 0.25
        c.setFont(BOLD, size)
        c.drawString(0, top - self.font, title)
        top -= self.font + 3
        x0, y0 = 1.6 * p, top - (1.2 + b.rows) * p
        c.setStrokeColor(BLACK)
        c.setLineWidth(0.8)
        c.rect(x0, y0, b.cols * p, b.rows * p, stroke=1, fill=0)
        size = max(MIN_FONT_PT, min(self.font, p * 0.62))
        c.setFont(REGULAR, size)
        for r in range(b.rows):
            _, y = self._xy((r, 0), mirrored=mirrored, top=top)
            c.drawCentredString(0.8 * p, y - size * 0.35, row_letter(r))
        every = 1 if p >= size * 1.25 else 2
        for col in range(b.cols):
            if col % every and col != b.cols - 1:
                continue
            x, _ = self._xy((0, col), mirrored=mirrored, top=top)
            c.drawCentredString(x, top - 0.95 * p, str(col + 1))
        self._top = top

    def _view(self, c, *, top: float, mirrored: bool) -> None:
        b = self.board
        title = ("Copper side, from below (mirrored: column 1 at the right)" if mirrored
                 else f"Component side, from above: {b.kind}, {b.rows} × {b.cols} holes")
        self._frame(c, top=top, mirrored=mirrored, title=title)
        top = self._top
        if mirrored:
            self._copper(c, top)
        else:
            self._components(c, top)

    def _copper(self, c, top: float) -> None:
        b, p = self.board, self.pitch
        cut = set(b.cuts)
        if b.kind == "stripboard":
            c.setFillColor(COPPER)
            for r in range(b.rows):
                _, y = self._xy((r, 0), mirrored=True, top=top)
                c.rect(1.6 * p + 0.05 * p, y - 0.36 * p, b.cols * p - 0.1 * p, 0.72 * p, stroke=0, fill=1)
        used = {h for pl in b.placements for _, h in pl.holes} | {t.hole for t in b.offboard}
        used |= {h for link in b.links for h in link}
        for r in range(b.rows):
            for col in range(b.cols):
                x, y = self._xy((r, col), mirrored=True, top=top)
                if (r, col) in cut:
                    c.setFillColor(WHITE)
                    c.rect(x - 0.42 * p, y - 0.4 * p, 0.84 * p, 0.8 * p, stroke=0, fill=1)
                    c.setStrokeColor(BLACK)
                    c.setLineWidth(1.1)
                    d = 0.3 * p
                    c.line(x - d, y - d, x + d, y + d)
                    c.line(x - d, y + d, x + d, y - d)
                    continue
                if b.kind == "perfboard":
                    c.setStrokeColor(BLACK)
                    c.setLineWidth(0.4)
                    c.setFillColor(COPPER)
                    c.circle(x, y, 0.34 * p, stroke=1, fill=1)
                c.setFillColor(BLACK if (r, col) in used else WHITE)
                c.circle(x, y, 0.16 * p if (r, col) in used else 0.1 * p, stroke=0, fill=1)
        if b.kind == "perfboard":
            c.setStrokeColor(BLACK)
            c.setLineWidth(0.34 * p)
            c.setLineCap(1)
            for a, z in b.links:
                if a[0] == z[0] and abs(a[1] - z[1]) == 1:
                    (x1, y1), (x2, y2) = self._xy(a, mirrored=True, top=top), self._xy(z, mirrored=True, top=top)
                    c.line(x1, y1, x2, y2)
            c.setLineCap(0)

    def _components(self, c, top: float) -> None:
        b, p = self.board, self.pitch
        c.setFillColor(FAINT)
        for r in range(b.rows):
            for col in range(b.cols):
                x, y = self._xy((r, col), mirrored=False, top=top)
                c.circle(x, y, 0.1 * p, stroke=0, fill=1)
        for pl in b.placements:
            self._part(c, pl, top)
        c.setStrokeColor(BLACK)
        c.setFillColor(BLACK)
        bridges = {(a, z) for a, z in b.links if b.kind == "perfboard" and a[0] == z[0] and abs(a[1] - z[1]) == 1}
        for a, z in b.links:
            if (a, z) in bridges:
                continue
            (x1, y1), (x2, y2) = self._xy(a, mirrored=False, top=top), self._xy(z, mirrored=False, top=top)
            c.setLineWidth(1.4)
            c.line(x1, y1, x2, y2)
            c.circle(x1, y1, 0.17 * p, stroke=0, fill=1)
            c.circle(x2, y2, 0.17 * p, stroke=0, fill=1)
        for k, t in enumerate(b.offboard, start=1):
            x, y = self._xy(t.hole, mirrored=False, top=top)
            c.setFillColor(WHITE)
            c.setStrokeColor(BLACK)
            c.setLineWidth(0.9)
            c.rect(x - 0.3 * p, y - 0.3 * p, 0.6 * p, 0.6 * p, stroke=1, fill=1)
            c.setFillColor(BLACK)
            c.circle(x, y, 0.12 * p, stroke=0, fill=1)

    def _part(self, c, pl, top: float) -> None:
        p = self.pitch
        pts = [self._xy(h, mirrored=False, top=top) for _, h in pl.holes]
        xs = [x for x, _ in pts]
        ys = [y for _, y in pts]
        x, y_hi, y_lo = xs[0], max(ys), min(ys)
        yc = (y_hi + y_lo) / 2
        mm = p / 2.54
        c.setStrokeColor(BLACK)
        c.setLineWidth(0.9)
        half = pl.body_mm[0] * mm / 2  # the body's half-width across the column: the label sits left of it
        inside = False
        part = self.netlist.part(pl.ref)
        if pl.style == "axial" and not pl.upright:
            w, length = pl.body_mm[0] * mm, pl.body_mm[1] * mm
            c.line(x, y_lo, x, y_hi)
            c.setFillColor(WHITE)
            c.rect(x - w / 2, yc - length / 2, w, length, stroke=1, fill=1)
            if part.kind == "diode":
                _, ky = self._xy(pl.hole("K"), mirrored=False, top=top)
                band = yc + (length / 2 - 0.12 * length) * (1 if ky > yc else -1)
                c.setLineWidth(max(1.2, 0.18 * length))
                c.line(x - w / 2, band, x + w / 2, band)
        elif pl.style == "axial":  # standing on end: body over the first lead, the other lead bent back down
            c.line(x, y_lo, x, y_hi)
            c.setFillColor(WHITE)
            body_y = y_hi if part.kind == "resistor" else y_hi
            half = pl.body_mm[0] * mm / 2 + 0.25 * p
            c.circle(x, body_y, half, stroke=1, fill=1)
            if part.kind == "diode":
                c.setFillColor(BLACK)
                c.circle(x, self._xy(pl.hole("K"), mirrored=False, top=top)[1], 0.2 * p, stroke=0, fill=1)
        elif pl.style == "radial":
            rad = pl.body_mm[0] * mm / 2
            c.setFillColor(WHITE)
            c.circle(x, yc, rad, stroke=1, fill=1)
            _, my = self._xy(pl.hole("-"), mirrored=False, top=top)
            stripe = rad * 0.45
            c.saveState()  # the sleeve's stripe: a band across the can on its − side
            clip = c.beginPath()
            clip.circle(x, yc, rad)
            c.clipPath(clip, stroke=0, fill=0)
            c.setFillColor(COPPER)
            band_y = yc - rad if my < yc else yc + rad - stripe
            c.rect(x - rad, band_y, 2 * rad, stripe, stroke=0, fill=1)
            c.restoreState()
            c.setStrokeColor(BLACK)
            c.circle(x, yc, rad, stroke=1, fill=0)
            c.setFillColor(BLACK)
            c.setFont(BOLD, max(MIN_FONT_PT, min(self.font, p * 0.6)))
            _, py = self._xy(pl.hole("+"), mirrored=False, top=top)
            c.drawCentredString(x + min(stripe, p * 0.6), py - 0.2 * p, "+")
            inside = True
        elif pl.style == "inline":
            across, along = pl.body_mm[0] * mm, pl.body_mm[1] * mm
            c.setFillColor(WHITE)
            path = c.beginPath()
            flat_x = x + (-across / 2 if pl.face == "left" else across / 2)
            back_x = x + (across / 2 if pl.face == "left" else -across / 2)
            h, k = along / 2, 0.5523  # two quarter ellipses from the flat face round the back
            path.moveTo(flat_x, yc - h)
            path.lineTo(flat_x, yc + h)
            path.curveTo(flat_x + k * (back_x - flat_x), yc + h, back_x, yc + k * h, back_x, yc)
            path.curveTo(back_x, yc - k * h, flat_x + k * (back_x - flat_x), yc - h, flat_x, yc - h)
            c.drawPath(path, stroke=1, fill=1)
            c.setLineWidth(1.8)
            c.line(flat_x, yc - along / 2, flat_x, yc + along / 2)
            size = max(MIN_FONT_PT, min(self.font * 0.9, p * 0.55))
            c.setFont(REGULAR, size)
            c.setFillColor(BLACK)
            side = 1 if pl.face == "left" else -1  # the lead letters inside the body, on its round side
            for pin, (px, py) in zip((pin for pin, _ in pl.holes), pts):
                c.drawCentredString(px + side * max(across * 0.25, 0.34 * self.pitch), py - size * 0.35, pin)
            half = across / 2
        c.setFillColor(BLACK)
        for px, py in pts:
            c.circle(px, py, 0.16 * p, stroke=0, fill=1)
        size = max(MIN_FONT_PT, min(self.font, p * 0.62))
        c.setFont(BOLD, size)
        body_top, body_bottom = self._extent(pl, pts, mm)
        board_top, board_bottom = top - 1.2 * p, top - (1.2 + self.board.rows) * p
        if pl.style == "axial" and not pl.upright:  # along the body, inside it
            c.saveState()
            c.translate(x + size * 0.35, yc)
            c.rotate(90)
            c.drawCentredString(0, 0, pl.ref)
            c.restoreState()
        elif inside:
            c.drawCentredString(x - 0.3 * p, yc - size * 0.35, pl.ref)
        elif board_top - body_top >= size + 1:
            c.drawCentredString(x, body_top + 1.5, pl.ref)
        elif body_bottom - board_bottom >= size + 1:
            c.drawCentredString(x, body_bottom - size - 0.5, pl.ref)
        else:
            c.drawRightString(x - half - 0.12 * p, yc - size * 0.35, pl.ref)

    def _extent(self, pl, pts, mm: float) -> tuple[float, float]:
        """The highest and lowest y a part's drawing reaches."""
        ys = [y for _, y in pts]
        hi, lo, mid = max(ys), min(ys), (max(ys) + min(ys)) / 2
        if pl.style == "radial":
            return mid + pl.body_mm[0] * mm / 2, mid - pl.body_mm[0] * mm / 2
        if pl.style == "inline":
            return max(hi + 0.16 * self.pitch, mid + pl.body_mm[1] * mm / 2), min(lo - 0.16 * self.pitch,
                                                                                 mid - pl.body_mm[1] * mm / 2)
        if pl.upright:
            return hi + pl.body_mm[0] * mm / 2 + 0.25 * self.pitch, lo - 0.16 * self.pitch
        return max(hi, mid + pl.body_mm[1] * mm / 2) + 0.16 * self.pitch, min(lo, mid - pl.body_mm[1] * mm / 2) - 0.16 * self.pitch


def _lines(board: Board, netlist: Netlist) -> list[str]:
    out = []
    cut = words.cuts(board)
    if cut:
        out.append(cut + ".")
    out += [t + "." for t in words.links(board)]
    out.append("Parts: " + "; ".join(words.placing(board, netlist)) + ".")
    out.append("Wires: " + "; ".join(words.wires(board)) + ".")
    if board.off_board_parts:
        joins = "; ".join(words.off_board_joins(board, netlist))
        out.append("Mounted off the board: " + words.refs_run(board.off_board_parts) + (f"; {joins}" if joins else "")
                   + ".")
    return out


def board_items(board: Board, netlist: Netlist, style) -> list[Flowable]:
    """The views and the lists in words, for a sheet block."""
    return [BoardViews(board, netlist, font_pt=style.fontSize)] + [Paragraph(keep_units(escape(t)), style)
                                                                    for t in _lines(board, netlist)]
