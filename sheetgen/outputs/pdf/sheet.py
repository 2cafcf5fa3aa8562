"""The build sheet PDF: document template, page furniture, and the bytes.

Three levels, as platypus intends: the document template owns the paper and
metadata; one page template draws the furniture (title block, safety footer,
"page n of N") on every page; one frame holds the blocks the layout names.

A document may hold several sections one after another (a pack's booklet: its
cover, then each design's sheet); each section has its own page template, so
every page's title block names what that page is about, and "of N" counts the
whole document.

Reproducible output: with ``SOURCE_DATE_EPOCH`` set, the printed date and the
PDF's own dates come from it and reportlab runs in invariant mode, so the same
input gives the same bytes.  "of N" is a PDF form drawn once at the end, after
the page count is known, so the sheet is laid out in one pass.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import io
import os
from dataclasses import dataclass, replace
from pathlib import Path

from sheetgen import __version__
from sheetgen.errors import SpecError
from sheetgen.sizing.report import Report

from sheetgen.outputs.pdf.fonts import BOLD, REGULAR, register
from sheetgen.inputs.layout import Layout
from sheetgen.outputs.write import atomic_write

MM = 72.0 / 25.4
TITLE_BLOCK_PT = 50.0
TITLE_GAP_PT = 6.0
FOOTER_PT = 16.0
FOOTER_TEXT = "Low-voltage DC only \u2013 follow local vehicle, marine and electrical codes"
_TOTAL_FORM = "sheetgen_page_total"


@dataclass(frozen=True)
class SheetInfo:
    """What the page furniture prints besides the blocks."""

    title: str
    subtitle: str
    date: _dt.date
    revision: str  # design digest: equal revisions, equal circuits
    spec_name: str
    layout_name: str
    source_label: str = "spec"  # "from spec X" on a design's sheet, "from event X" on a pack's cover


@dataclass(frozen=True)
class Section:
    """Pages that share one title block: the flowables and what the furniture prints."""

    info: SheetInfo
    story: tuple  # flowables, in order


_LAST_EPOCH_S = 253_402_300_799  # 9999-12-31 23:59:59 UTC, the last moment a four-digit year holds


def sheet_date(environ=None) -> _dt.date:
    """The date printed on the sheet: SOURCE_DATE_EPOCH (UTC) when set, else today."""
    env = os.environ if environ is None else environ
    raw = env.get("SOURCE_DATE_EPOCH", "").strip()
    if not raw:
        return _dt.date.today()
    shown = raw if len(raw) <= 24 else raw[:24] + "…"
    if len(raw) > 24 or not raw.lstrip("+-").isdigit() or not raw.isascii():
        raise SpecError(f"SOURCE_DATE_EPOCH: '{shown}' is not a whole number of seconds since 1970-01-01")
    seconds = int(raw)
    if seconds < 0:
        raise SpecError(f"SOURCE_DATE_EPOCH: '{raw}' is before 1970-01-01")
    if seconds > _LAST_EPOCH_S:
        raise SpecError(f"SOURCE_DATE_EPOCH: '{raw}' is after 9999-12-31, the last date a sheet can print")
    return _dt.datetime.fromtimestamp(seconds, _dt.timezone.utc).date()


def design_digest(report: Report) -> str:
    """Eight hex digits naming the circuit: spec, parts, values, ratings and predicted times."""
    d = report.design
    # Leave out where the spec was read from: the same circuit keeps its revision when the file moves.
    lines = [repr(replace(d.spec, source="")), d.topology.name, f"{float(d.fade_in_s)!r} {float(d.fade_out_s)!r}"]
    for p in d.netlist.parts:
        value = None if p.value is None else float(p.value)
        lines.append(f"{p.ref} {p.kind} {p.pins} {value!r} {p.part_number} {p.rating_v!r} {p.rating_w!r} "
                     f"{p.tolerance!r} {p.package} {p.model.name if p.model else ''}")
    return hashlib.sha256("\n".join(lines).encode("utf-8")).hexdigest()[:8]


def sheet_info(report: Report, layout: Layout, *, environ=None) -> SheetInfo:
    d = report.design
    spec_name = Path(d.spec.source).name if d.spec.source and not d.spec.source.startswith("<") else d.spec.source
    return SheetInfo(title=d.spec.title, subtitle=f"Soft-on / soft-off fader build sheet \u00b7 {d.topology.title}",
                     date=sheet_date(environ), revision=design_digest(report), spec_name=spec_name or "",
                     layout_name=layout.name)


def frame_box(layout: Layout) -> tuple[float, float, float, float]:
    """(x, y, width, height) in points of the frame the blocks flow into."""
    page_w, page_h = layout.page_size_pt
    top, right, bottom, left = (m * MM for m in layout.margins_mm)
    y = bottom + FOOTER_PT
    height = page_h - top - TITLE_BLOCK_PT - TITLE_GAP_PT - y
    return left, y, page_w - left - right, height


def sheet_section(report: Report, layout: Layout, *, environ=None) -> Section:
    """One design's sheet as a section: its title block and its blocks in the layout's order."""
    from sheetgen.outputs.pdf.blocks import build_blocks

    register()
    _, _, w, h = frame_box(layout)
    return Section(info=sheet_info(report, layout, environ=environ),
                   story=tuple(build_blocks(report, layout, frame_width_pt=w, frame_height_pt=h)))


def render_sheet(report: Report, layout: Layout, *, environ=None) -> bytes:
    """The whole sheet as PDF bytes; nothing touches the disk."""
    env = os.environ if environ is None else environ
    section = sheet_section(report, layout, environ=env)
    return render_sections([section], layout, title=f"{section.info.title} \u2013 fader build sheet",
                           subject=section.info.subtitle, environ=env)


def render_sections(sections, layout: Layout, *, title: str, subject: str, environ=None) -> bytes:
    """Sections one after another in one PDF, each starting a page and keeping its own title block."""
    from reportlab.platypus import BaseDocTemplate, Frame, NextPageTemplate, PageBreak, PageTemplate

    register()
    env = os.environ if environ is None else environ
    x, y, w, h = frame_box(layout)
    buffer = io.BytesIO()
    reproducible = bool(env.get("SOURCE_DATE_EPOCH", "").strip())
    doc = BaseDocTemplate(
        buffer, pagesize=layout.page_size_pt, title=title,
        author="sheetgen", subject=subject, creator=f"sheetgen {__version__}",
        invariant=1 if reproducible else 0, initialFontName=REGULAR,
        leftMargin=x, rightMargin=layout.page_size_pt[0] - x - w, bottomMargin=y,
        topMargin=layout.page_size_pt[1] - y - h)
    templates, story = [], []
    for k, section in enumerate(sections):
        frame = Frame(x, y, w, h, id=f"blocks{k}", leftPadding=0, rightPadding=0, topPadding=0, bottomPadding=0)
        templates.append(PageTemplate(id=f"section{k}", frames=[frame],
                                      onPage=lambda canv, _doc, info=section.info: _furniture(canv, layout, info)))
        if k:
            story += [NextPageTemplate(f"section{k}"), PageBreak()]
        story += list(section.story)
    doc.addPageTemplates(templates)
    doc.build(story, canvasmaker=_canvas_maker())
    return buffer.getvalue()


def build_sheet(report: Report, layout: Layout, out_path: str | os.PathLike[str], *, environ=None) -> Path:
    """Render and write atomically; returns the absolute path written."""
    return atomic_write(out_path, render_sheet(report, layout, environ=environ))


def _canvas_maker():
    """A canvas that draws the total page count into its form just before saving."""
    from reportlab.pdfgen.canvas import Canvas

    class _Canvas(Canvas):
        def save(self):
            total = self.getPageNumber() - (0 if self._code else 1)  # a page still open counts
            self.beginForm(_TOTAL_FORM)
            self.setFont(REGULAR, 8)
            self.drawString(0, 0, str(total))
            self.endForm()
            super().save()

    return _Canvas


def _fit(text: str, font: str, size: float, width: float, *, smallest: float) -> tuple[str, float]:
    """Shrink ``text`` down to ``smallest`` pt to fit ``width``, then cut it with an ellipsis."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    while size > smallest and stringWidth(text, font, size) > width:
        size -= 0.5
    if stringWidth(text, font, size) <= width:
        return text, size
    while text and stringWidth(text + "\u2026", font, size) > width:
        text = text[:-1]
    return text.rstrip() + "\u2026", size


def _title_lines(title: str, width: float) -> tuple[list[str], float]:
    """The title on one line (15 down to 12 pt), else wrapped onto two at 10.5 pt."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    one, size = _fit(title, BOLD, 15.0, width, smallest=12.0)
    if one == title:
        return [one], size
    size = 10.5
    words = title.split()
    first = ""
    while words and stringWidth(f"{first} {words[0]}".strip(), BOLD, size) <= width:
        first = f"{first} {words.pop(0)}".strip()
    if not first:  # one very long word: cut it
        return [_fit(title, BOLD, size, width, smallest=size)[0]], size
    if not words:
        return [first], size
    second, _ = _fit(" ".join(words), BOLD, size, width, smallest=size)
    return [first, second], size


def _furniture(canv, layout: Layout, info: SheetInfo) -> None:
    """Title block at the top and the safety footer at the bottom of every page."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    page_w, page_h = layout.page_size_pt
    top, right, bottom, left = (m * MM for m in layout.margins_mm)
    width = page_w - left - right
    y0 = page_h - top - TITLE_BLOCK_PT
    canv.saveState()
    canv.setStrokeColorRGB(0, 0, 0)
    canv.setFillColorRGB(0, 0, 0)

    # Title block: the title and subtitle on the left, four labelled cells on the right.
    cell_w = 88.0
    cells_x = left + width - 2 * cell_w
    canv.setLineWidth(1.4)
    canv.rect(left, y0, width, TITLE_BLOCK_PT, stroke=1, fill=0)
    canv.setLineWidth(0.6)
    canv.line(cells_x, y0, cells_x, y0 + TITLE_BLOCK_PT)
    canv.line(cells_x + cell_w, y0, cells_x + cell_w, y0 + TITLE_BLOCK_PT)
    canv.line(cells_x, y0 + TITLE_BLOCK_PT / 2, left + width, y0 + TITLE_BLOCK_PT / 2)
    text_w = cells_x - left - 12
    lines, size = _title_lines(info.title, text_w)
    canv.setFont(BOLD, size)
    for k, line in enumerate(lines):
        canv.drawString(left + 6, y0 + TITLE_BLOCK_PT - 6 - size * 0.8 - k * size * 1.1, line)
    if len(lines) == 1:  # a two-line title takes the subtitle's place; the summary names the circuit
        sub, sub_size = _fit(info.subtitle, REGULAR, 8.5, text_w, smallest=7.0)
        canv.setFont(REGULAR, sub_size)
        canv.drawString(left + 6, y0 + 17, sub)
    spec_line, spec_size = _fit(f"from {info.source_label} {info.spec_name}" if info.spec_name else "", REGULAR,
                                7.5, text_w, smallest=6.5)
    canv.setFont(REGULAR, spec_size)
    canv.drawString(left + 6, y0 + 6, spec_line)
    cells = (("Date", info.date.isoformat()), ("Revision", info.revision),
             ("Layout", info.layout_name), ("Made with", f"sheetgen {__version__}"))
    for k, (label, value) in enumerate(cells):
        cx = cells_x + (k % 2) * cell_w + 4
        cy = y0 + TITLE_BLOCK_PT - (k // 2) * TITLE_BLOCK_PT / 2
        canv.setFont(REGULAR, 6.5)
        canv.drawString(cx, cy - 8.5, label.upper())
        value_text, value_size = _fit(value, BOLD, 9.0, cell_w - 8, smallest=6.5)
        canv.setFont(BOLD, value_size)
        canv.drawString(cx, cy - 20.5, value_text)

    # Footer: the safety line on the left, "page n of N" on the right.
    fy = bottom + 2
    canv.setLineWidth(0.6)
    canv.line(left, bottom + FOOTER_PT - 4, left + width, bottom + FOOTER_PT - 4)
    canv.setFont(BOLD, 8)
    canv.drawString(left, fy, FOOTER_TEXT)
    label = f"page {canv.getPageNumber()} of "
    total_w = stringWidth("99", REGULAR, 8)
    lx = left + width - total_w - stringWidth(label, REGULAR, 8)
    canv.setFont(REGULAR, 8)
    canv.drawString(lx, fy, label)
    canv.translate(lx + stringWidth(label, REGULAR, 8), fy)
    canv.doForm(_TOTAL_FORM)
    canv.restoreState()
