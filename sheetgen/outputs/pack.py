"""Making a build night's pack: check the event, size each distinct design once, render, write all three files.

The plan (kit letters, grouping, card order) comes from ``pack.plan``; this
module runs it through the renderers and the all-or-none writer, with a
progress bar on a terminal.
"""

from __future__ import annotations

import os
import re
import sys
from dataclasses import dataclass
from pathlib import Path

from sheetgen.errors import SpecError
from sheetgen.inputs.event import Event
from sheetgen.pack import batch
from sheetgen.pack.plan import PACK_FILES, design_failure, plan_pack
from sheetgen.reader.yamltree import excerpt

__all__ = ["MadePack", "make_pack", "check_printable"]


def check_printable(event: Event) -> None:
    """Every name and line of the event must be printable in the embedded font; say which is not."""
    from sheetgen.outputs.pdf.fonts import BOLD, REGULAR, missing_glyphs

    problems = []
    for key, text in (("title", event.title), ("venue", event.venue)):
        missing = text and (missing_glyphs(text, font=BOLD) or missing_glyphs(text, font=REGULAR))
        if missing:
            problems.append(f"{event.source}: {key}: {excerpt(text)} has characters the booklet's font cannot "
                            f"print ({missing})")
    for build in event.builds:
        for b in build.builders:
            missing = missing_glyphs(b.name, font=BOLD) if b.name is not None else ""
            if missing:
                problems.append(f"{build.source}:{b.line}: builds[{build.index}].builders[{b.number - 1}]: "
                                f"{excerpt(b.name)} has characters the card font cannot print ({missing}); it "
                                "covers Latin, Greek and Cyrillic letters: write the name in those, e.g. in "
                                "Latin letters")
    if problems:
        raise SpecError(problems)


def _progress(total: int):
    """A progress bar on stderr for the slow parts of a pack; silent unless stderr is a terminal."""
    from tqdm import tqdm

    tqdm.monitor_interval = 0  # no monitor thread: sizing may fork worker processes
    return tqdm(total=total, desc="pack", unit="step", file=sys.stderr, disable=not sys.stderr.isatty(),
                leave=False, dynamic_ncols=True)


@dataclass(frozen=True)
class MadePack:
    paths: list[Path]
    line: str  # what was made and how much paper it takes, for the terminal


def _laying_out(exc: BaseException) -> bool:
    """Whether ``exc`` is the page setter refusing a page (the layout and the design together), not our bug."""
    if type(exc).__module__.startswith("reportlab"):
        return True
    tb = exc.__traceback__
    while tb is not None and tb.tb_next is not None:
        tb = tb.tb_next
    return tb is not None and f"{os.sep}reportlab{os.sep}" in tb.tb_frame.f_code.co_filename


def _find_the_design(plan, render_one) -> str:
    """Which design a failed rendering fails on, tried one by one (only ever on the way to an error)."""
    for design in plan.designs:
        try:
            render_one(design)
        except Exception:
            build = design.builds[0]
            return f"{build.where} ({build.spec_label}): kit {design.letter}: "
    return ""


def make_pack(event: Event, *, sheet_layout, card_layout, output: str | os.PathLike[str],
              jobs: int | None, use_cache: bool = True) -> MadePack:
    """Size, render and write the pack of a checked ``event``: the three paths written and a summary line."""
    from sheetgen.outputs.parallel import render_all
    from sheetgen.outputs.pdf.booklet import render_booklet
    from sheetgen.outputs.pdf.cards import Card, fit_card, render_cards
    from sheetgen.outputs.pdf.sheet import sheet_date
    from sheetgen.outputs.write import atomic_write_files, check_folder
    from sheetgen.pack.kit import kit_csv, kit_list

    check_printable(event)
    folder = check_folder(output)
    sheet_date()  # a malformed SOURCE_DATE_EPOCH is bad input: say so before the slow part
    if jobs is not None and jobs < 1:
        raise SpecError(f"--jobs: {jobs}: give 1 or more")
    specs = batch.distinct([b.spec for b in event.builds])
    with _progress(2 * len(specs) + 2) as bar:
        bar.set_description_str(f"sizing {len(specs)} design{'s' if len(specs) != 1 else ''}")
        try:
            reports = batch.analyse_all(specs, jobs=jobs or batch.default_jobs(len(specs)), use_cache=use_cache,
                                        on_done=lambda _k: bar.update())
        except batch.DesignFailed as failed:
            raise design_failure(event, specs, failed) from None
        plan = plan_pack(event, specs, reports)
        kit = kit_list(list(plan.kit_uses), spares=event.spares)
        cards = [Card(report=c.report, design=c.design, name=c.name, place=c.place, event=c.event)
                 for c in plan.cards]
        designs = list(plan.designs)
        bar.set_description_str("cards and booklet")
        fits = {}
        for d in designs:  # which card each design is set on: the layout's own or its larger one
            try:
                fits[id(d.report)] = fit_card(d.report, card_layout)
            except SpecError as exc:
                build = d.builds[0]
                raise SpecError(f"{build.where} ({build.spec_label}): kit {d.letter}: {exc}") from None
        sheets = sum(-(-d.kits // fits[id(d.report)].layout.per_sheet) for d in designs)
        moved = [(d.letter, fits[id(d.report)].layout) for d in designs if fits[id(d.report)].moved_from is not None]
        try:
            cards_pdf, booklet = render_all(
                [lambda: render_cards(cards, card_layout, title=event.title, on_design=lambda _d: bar.update(),
                                      fits=fits),
                 lambda: render_booklet(event, designs, kit, sheet_layout, card_layout, card_sheets=sheets,
                                        larger=moved)],
                jobs=jobs or batch.default_jobs(2))
        except Exception as exc:
            if not _laying_out(exc):
                raise
            who = (_find_the_design(plan, lambda d: render_cards([c for c in cards if c.design == d.letter],
                                                                 card_layout, title=event.title, fits=fits))
                   or _find_the_design(plan, lambda d: render_booklet(event, [d], kit, sheet_layout, card_layout,
                                                                      card_sheets=1)))
            raise SpecError(f"{who}{card_layout.source} / {sheet_layout.source}: these layouts cannot set the "
                            f"design's pages ({excerpt(f'{type(exc).__name__}: {exc}', 120)[1:-1]}); "
                            "try the shipped layouts") from None
        bar.update(bar.total - 1 - bar.n)  # the cards' steps, counted where they ran
        bar.set_description_str("writing")
        paths = atomic_write_files(folder, dict(zip(PACK_FILES, (booklet, cards_pdf, kit_csv(kit)))))
        bar.update()
    return MadePack(paths=paths, line=_pack_line(len(designs), len(cards), sheets, _pages(booklet), len(kit)))


def _pages(pdf: bytes) -> int:
    """Pages in a PDF reportlab wrote: one ``/Type /Page`` object each (``/Pages`` is the tree)."""
    return len(re.findall(rb"/Type /Page(?![s\w])", pdf))


def _plural(n: int, word: str) -> str:
    return f"{n} {word}" if n == 1 else f"{n} {word}s"


def _pack_line(designs: int, cards: int, card_sheets: int, booklet_pages: int, kit_lines: int) -> str:
    """The pack's last line: what was made and how much paper it takes."""
    return (f"{_plural(designs, 'design')}, {_plural(cards, 'card')}; sheets to print: "
            f"{_plural(card_sheets, 'card sheet')} (both sides) and {_plural(booklet_pages, 'booklet page')}; "
            f"{_plural(kit_lines, 'kit line')}")
