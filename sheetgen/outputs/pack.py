"""Making a build night's pack: check the event, size each distinct design once, render, write all three files.

The plan (kit letters, grouping, card order) comes from ``pack.plan``; this
module runs it through the renderers and the all-or-none writer, with a
progress bar on a terminal.
"""

from __future__ import annotations

import contextlib
import os
import sys
from pathlib import Path

from sheetgen.errors import SheetgenError, SpecError
from sheetgen.inputs.event import Event
from sheetgen.pack import batch
from sheetgen.pack.plan import PACK_FILES, design_failure, plan_pack
from sheetgen.reader.yamltree import excerpt

__all__ = ["make_pack", "check_printable"]


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
                                "covers Latin, Greek and Cyrillic letters")
    if problems:
        raise SpecError(problems)


def _progress(total: int):
    """A progress bar on stderr for the slow parts of a pack; silent unless stderr is a terminal."""
    from tqdm import tqdm

    tqdm.monitor_interval = 0  # no monitor thread: sizing may fork worker processes
    return tqdm(total=total, desc="pack", unit="step", file=sys.stderr, disable=not sys.stderr.isatty(),
                leave=False, dynamic_ncols=True)


@contextlib.contextmanager
def _naming_the_design(plan, layout, render_one):
    """A page that cannot be laid out is bad input for that layout: find the design it fails on and name it.

    Only on failure is each design rendered alone (``render_one``) to find the one at fault.
    """
    try:
        yield
    except SheetgenError:
        raise
    except Exception as exc:
        culprit = None
        for design in plan.designs:
            try:
                render_one(design)
            except Exception:
                culprit = design
                break
        build = culprit.builds[0] if culprit is not None else None
        who = f"{build.where} ({build.spec_label}): kit {culprit.letter}: " if build is not None else ""
        raise SpecError(f"{who}{layout.source}: this layout cannot set the design's pages "
                        f"({excerpt(f'{type(exc).__name__}: {exc}', 120)[1:-1]}); try a shipped layout") from None


def make_pack(event: Event, *, sheet_layout, card_layout, output: str | os.PathLike[str],
              jobs: int | None) -> list[Path]:
    """Size, render and write the pack of a checked ``event``; the three paths written."""
    from sheetgen.outputs.pdf.booklet import render_booklet
    from sheetgen.outputs.pdf.cards import Card, render_cards
    from sheetgen.outputs.pdf.sheet import sheet_date
    from sheetgen.outputs.write import atomic_write_files, check_folder
    from sheetgen.pack.kit import kit_csv, kit_list

    check_printable(event)
    folder = check_folder(output)
    sheet_date()  # a malformed SOURCE_DATE_EPOCH is bad input: say so before the slow part
    if jobs is not None and jobs < 1:
        raise SpecError(f"--jobs: {jobs}: give 1 or more")
    specs = batch.distinct([b.spec for b in event.builds])
    jobs = jobs or batch.default_jobs(len(specs))
    with _progress(2 * len(specs) + 2) as bar:
        bar.set_description_str(f"sizing {len(specs)} design{'s' if len(specs) != 1 else ''}")
        try:
            reports = batch.analyse_all(specs, jobs=jobs, on_done=lambda _k: bar.update())
        except batch.DesignFailed as failed:
            raise design_failure(event, specs, failed) from None
        plan = plan_pack(event, specs, reports)
        kit = kit_list(list(plan.kit_uses), spares=event.spares)
        cards = [Card(report=c.report, design=c.design, name=c.name, place=c.place, event=c.event)
                 for c in plan.cards]
        bar.set_description_str("cards")
        with _naming_the_design(plan, card_layout,
                                lambda d: render_cards([c for c in cards if c.design == d.letter], card_layout,
                                                       title=event.title)):
            cards_pdf = render_cards(cards, card_layout, title=event.title, on_design=lambda _d: bar.update())
        bar.set_description_str("booklet")
        sheets = sum(-(-d.kits // card_layout.per_sheet) for d in plan.designs)
        with _naming_the_design(plan, sheet_layout,
                                lambda d: render_booklet(event, [d], kit, sheet_layout, card_layout, card_sheets=1)):
            booklet = render_booklet(event, list(plan.designs), kit, sheet_layout, card_layout, card_sheets=sheets)
        bar.update()
        bar.set_description_str("writing")
        paths = atomic_write_files(folder, dict(zip(PACK_FILES, (booklet, cards_pdf, kit_csv(kit)))))
        bar.update()
    return paths
