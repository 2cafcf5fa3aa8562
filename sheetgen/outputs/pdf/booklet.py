"""The pack's booklet: a cover for the event, the kit list, then each design's full sheet.

One PDF, one document: the cover and kit list are a section with the event's
title block, and each distinct design follows as the section its own sheet
would be (the same blocks, the same furniture), so "page n of N" counts the
whole booklet and the fonts are embedded once.  Everything the event file
says (title, venue, builders' names) is set as plain text, never as markup.
"""

from __future__ import annotations

import hashlib
import os
from dataclasses import replace
from pathlib import Path
from typing import Sequence

from reportlab.lib.enums import TA_LEFT
from reportlab.lib.styles import ParagraphStyle
from reportlab.platypus import Spacer, TableStyle

from sheetgen.inputs.event import Build, Event
from sheetgen.pack.kit import KitLine, WIRE_M_PER_RUN
from sheetgen.pack.plan import PackDesign

from sheetgen.outputs.pdf.blocks import Block, SizedToWidth, markup_paragraph, plain_paragraph, ruled_table, styles, width_shares
from sheetgen.outputs.pdf.fonts import BOLD, REGULAR
from sheetgen.inputs.layout import CardLayout, Layout
from sheetgen.outputs.pdf.sheet import Section, SheetInfo, design_digest, frame_box, render_sections, sheet_date, sheet_section

__all__ = ["PackDesign", "render_booklet", "pack_digest"]


def pack_digest(event: Event, designs: Sequence[PackDesign]) -> str:
    """Eight hex digits naming the pack: its designs, who builds them, and the spares."""
    lines = [event.title, str(event.date), event.venue or "", str(event.spares)]
    for d in designs:
        lines.append(f"{d.letter} {design_digest(d.report)}")
        for b in d.builds:
            lines += [f"  {x.name!r} {x.number}/{x.of}" for x in b.builders]
    return hashlib.sha256("\n".join(lines).encode("utf-8")).hexdigest()[:8]


def _cover_styles() -> dict[str, ParagraphStyle]:
    base = styles()
    return {
        "title": ParagraphStyle("cover_title", parent=base.body, fontName=BOLD, fontSize=22, leading=26,
                                alignment=TA_LEFT, spaceAfter=4),
        "when": ParagraphStyle("cover_when", parent=base.body, fontName=REGULAR, fontSize=12.5, leading=16),
        "lead": ParagraphStyle("cover_lead", parent=base.body, fontSize=10, leading=13.5),
        "kit": ParagraphStyle("cover_kit", parent=base.body, fontName=BOLD, fontSize=13, leading=15),
    }


def _event_line(event: Event) -> str:
    return " \u00b7 ".join(x for x in (event.date.isoformat() if event.date else "", event.venue or "") if x)


#: Names in one row of the builds table: a row never splits, so a long list takes several rows.
NAMES_PER_ROW = 12


def _builders_texts(build: Build) -> list[str]:
    """The builders as the table's rows hold them: names a dozen to a row, or one line for unnamed ones."""
    if build.named:
        names = [b.name for b in build.builders]
        return [", ".join(names[k:k + NAMES_PER_ROW]) for k in range(0, len(names), NAMES_PER_ROW)]
    n = len(build.builders)
    return [f"{n} unnamed (cards say Builder 1 of {n} \u2026 {n} of {n})" if n > 1 else "1 unnamed"]


def _builds_block(event: Event, designs: Sequence[PackDesign]) -> Block:
    s = styles()
    letter_of = {id(b): d.letter for d in designs for b in d.builds}
    report_of = {id(b): d.report for d in designs for b in d.builds}
    head = ["Kit", "Circuit", "Spec", "Builders", "Kits"]
    rows = [[plain_paragraph(h, s.cell_bold) for h in head]]
    for b in event.builds:
        d = report_of[id(b)].design
        first, *more = _builders_texts(b)
        rows.append([plain_paragraph(letter_of[id(b)], _cover_styles()["kit"]),
                     markup_paragraph(f"<b>{_esc(d.spec.title)}</b><br/>{_esc(d.topology.title)}", s.cell),
                     plain_paragraph(Path(b.spec_label).name if b.spec_label != "inline design" else b.spec_label,
                                     s.cell),
                     plain_paragraph(first, s.cell),
                     plain_paragraph(str(len(b.builders)), s.cell)])
        rows += [["", "", "", plain_paragraph(text, s.cell), ""] for text in more]

    def build(aw):
        return ruled_table(rows, width_shares(aw, (0.4, 2.2, 1.75, 2.7, 0.45)))

    return Block("Builds", [SizedToWidth(build)])


def _esc(text: str) -> str:
    from xml.sax.saxutils import escape

    return escape(text)


def _howto_block(cards: CardLayout, card_sheets: int, larger: Sequence[tuple[str, CardLayout]] = ()) -> Block:
    s = styles()
    w, h = cards.card_mm
    two_sided = bool(cards.back)
    moved = ""
    if larger:
        letters = [letter for letter, _ in larger]
        named = letters[0] if len(letters) == 1 else f"{', '.join(letters[:-1])} and {letters[-1]}"
        sizes = sorted({(round(c.card_mm[0], 1), round(c.card_mm[1], 1), c.per_sheet) for _, c in larger})
        on = " or ".join(f"{bw:g} \u00d7 {bh:g} mm cards, {n} to a sheet" for bw, bh, n in sizes)
        moved = (f" Design{'s' if len(letters) > 1 else ''} {named} {'are' if len(letters) > 1 else 'is'} set on "
                 f"{on}: {'their cards hold' if len(letters) > 1 else 'its card holds'} too much for "
                 f"{w:g} \u00d7 {h:g} mm with every step at 6 pt; {'their' if len(letters) > 1 else 'its'} "
                 "sheets say so.")
    lines = [
        f"<b>cards.pdf</b>: one card per builder, {cards.per_sheet} to a sheet of {cards.page_size} "
        f"({w:g} \u00d7 {h:g} mm cards), {card_sheets} sheet{'s' if card_sheets != 1 else ''}.{moved} "
        + ("Print both sides; either flip edge works, because every sheet holds one design and no back "
           "carries a name. " if two_sided else "")
        + "Cut at the marks at the corners.",
        "<b>Kits are lettered by design</b>: the letter on a card is the letter of its kit in the list below "
        "and of its design's sheet in this booklet.",
        "<b>kit-list.csv</b>: the kit list below, for a spreadsheet or a parts order.",
    ]
    return Block("The pack", [markup_paragraph(text, s.bullet) for text in lines])


def _kit_block(event: Event, kit: Sequence[KitLine], *, page_height_pt: float) -> Block:
    s = styles()
    head = ["Item", "Value", "Rating", "Tol.", "Package", "Kits", "Needed", "Spares", "Total"]
    rows = [[plain_paragraph(h, s.cell_bold) for h in head]]
    for line in kit:
        unit = f" {line.unit}" if line.unit != "pcs" else ""
        rows.append([plain_paragraph(line.item, s.cell), plain_paragraph(line.value or "\u2013", s.cell_bold),
                     plain_paragraph(line.rating or "\u2013", s.cell),
                     plain_paragraph(line.tolerance or "\u2013", s.cell),
                     plain_paragraph(line.package or "\u2013", s.cell),
                     plain_paragraph(" ".join(line.designs), s.cell),
                     plain_paragraph(f"{line.needed}{unit}", s.cell), plain_paragraph(f"{line.spares}{unit}", s.cell),
                     plain_paragraph(f"{line.total}{unit}", s.cell_bold)])

    def build(aw):
        t = ruled_table(rows, width_shares(aw, (1.5, 1.4, 1.15, 0.55, 0.7, 0.5, 0.72, 0.66, 0.55)))
        t.setStyle(TableStyle([("ALIGN", (6, 0), (-1, -1), "RIGHT")]))
        return t

    spares = (f"Spares: {event.spares_text} of each line, rounded up to a whole part (or metre)."
              if event.spares else "Spares: none (the event gives spares: 0 %); add some for parts that go astray.")
    note = plain_paragraph(
        f"Needed: parts per kit \u00d7 kits, summed over the designs that use the line. {spares} "
        f"Wire: {WIRE_M_PER_RUN} m per build for each off-board run, each line named by its run or by the colour "
        "the spec or event chose, a common-practice estimate; measure the real runs.", s.small)
    # Whole: a list cut to leave its last lines alone on the next page reads worse than a list moved there.
    return Block("Kit list", [SizedToWidth(build), note], whole=True, page_height_pt=page_height_pt)


def render_booklet(event: Event, designs: Sequence[PackDesign], kit: Sequence[KitLine], layout: Layout,
                   cards: CardLayout, *, card_sheets: int, larger: Sequence[tuple[str, CardLayout]] = (),
                   environ=None) -> bytes:
    """The booklet as PDF bytes: cover, builds, how to print, kit list, then every design's sheet."""
    env = os.environ if environ is None else environ
    cs = _cover_styles()
    cover = [plain_paragraph(event.title, cs["title"])]
    if _event_line(event):
        cover.append(plain_paragraph(_event_line(event), cs["when"]))
    n_designs = len(designs)
    cover += [Spacer(1, 8),
              plain_paragraph(f"{event.builder_count} builder{'s' if event.builder_count != 1 else ''}, "
                              f"{n_designs} design{'s' if n_designs != 1 else ''}, one kit each. This booklet "
                              "holds the builds, the kit list and then each design's full build sheet; the cards "
                              "are for the bench.", cs["lead"]),
              Spacer(1, 10),
              _builds_block(event, designs), _howto_block(cards, card_sheets, larger),
              _kit_block(event, kit, page_height_pt=frame_box(layout)[3])]
    info = SheetInfo(title=event.title,
                     subtitle=f"Build-night pack \u00b7 {event.builder_count} builders \u00b7 {n_designs} designs",
                     date=sheet_date(env), revision=pack_digest(event, designs),
                     spec_name=Path(event.source).name, layout_name=layout.name, source_label="event")
    sections = [Section(info=info, story=tuple(cover))]
    for d in designs:
        section = sheet_section(d.report, layout, environ=env)
        sections.append(replace(section, info=replace(section.info,
                                                      subtitle=f"Kit {d.letter} \u00b7 {section.info.subtitle}")))
    return render_sections(sections, layout, title=f"{event.title} \u2013 build-night booklet",
                           subject=info.subtitle, environ=env)
