"""The command line.  Nothing else imports this module.

Exit codes: 0 success, 1 internal failure, 2 bad input, 3 valid spec that no
design can meet.
"""

from __future__ import annotations

import argparse
import sys

from sheetgen import __version__
from sheetgen.errors import InfeasibleDesign, SheetgenError, SpecError

EXIT_OK, EXIT_INTERNAL, EXIT_INPUT, EXIT_INFEASIBLE = 0, 1, 2, 3


def cmd_size(args) -> int:
    from sheetgen.inputs.spec import load_spec
    from sheetgen.outputs.export import report_json
    from sheetgen.outputs.summary import summary_text
    from sheetgen.sizing.cache import report_for

    report = report_for(load_spec(args.spec))
    print(report_json(report) if args.json else summary_text(report))
    return EXIT_OK


def cmd_check(args) -> int:
    from sheetgen.inputs.spec import load_spec
    from sheetgen.sizing.cache import design_for

    spec = load_spec(args.spec)
    design = design_for(spec)
    print(f"{args.spec}: OK: {design.topology.title} with {design.values.transistor.part_number}; "
          f"fade-in {design.fade_in_s:.2f} s (asked {spec.fade_in_s:g} s), "
          f"fade-out {design.fade_out_s:.2f} s (asked {spec.fade_out_s:g} s)")
    return EXIT_OK


def _sheet(spec, *, layout, out: str) -> int:
    """Check the output path first, then size, analyse (or find the stored design) and write the sheet or cards."""
    from sheetgen.inputs.layout import CardLayout
    from sheetgen.outputs.pdf.sheet import build_sheet, sheet_date
    from sheetgen.outputs.write import atomic_write, check_writable
    from sheetgen.sizing.cache import report_for

    check_writable(out)
    sheet_date()  # a malformed SOURCE_DATE_EPOCH is bad input: say so before the slow part
    report = report_for(spec)
    if isinstance(layout, CardLayout):
        from sheetgen.outputs.pdf.cards import render_cards, single_design_cards

        path = atomic_write(out, render_cards(single_design_cards(report, layout), layout, title=spec.title))
    else:
        path = build_sheet(report, layout, out)
    print(path)
    return EXIT_OK


def cmd_build(args) -> int:
    from pathlib import Path

    from sheetgen.inputs.layout import CardLayout, load_layout
    from sheetgen.inputs.spec import load_spec

    spec = load_spec(args.spec)
    layout = load_layout(args.layout)
    suffix = "-cards.pdf" if isinstance(layout, CardLayout) else ".pdf"
    out = args.output or f"{Path(args.spec).stem}{suffix}"
    if Path(out).suffix.lower() != ".pdf":
        raise SpecError(f"-o {out}: the sheet is a PDF; give a name ending in .pdf "
                        f"(e.g. {Path(out).with_suffix('.pdf').name})")
    if Path(out).resolve() == Path(args.spec).resolve():
        raise SpecError(f"-o {out}: would overwrite the spec itself; give a .pdf name")
    return _sheet(spec, layout=layout, out=out)


def cmd_demo(args) -> int:
    from sheetgen.inputs.demo import OUTPUT, demo_spec
    from sheetgen.inputs.layout import load_layout

    return _sheet(demo_spec(), layout=load_layout(None), out=OUTPUT)


PACK_FILES = ("booklet.pdf", "cards.pdf", "kit-list.csv")


def _check_printable(event) -> None:
    """Every name and line of the event must be printable in the embedded font; say which is not."""
    from sheetgen.outputs.pdf.fonts import BOLD, REGULAR, missing_glyphs

    problems = []
    for key, text in (("title", event.title), ("venue", event.venue)):
        if text and (missing_glyphs(text, font=BOLD) or missing_glyphs(text, font=REGULAR)):
            problems.append(f"{event.source}: {key}: '{text}' has characters the booklet's font cannot print "
                            f"({missing_glyphs(text, font=BOLD) or missing_glyphs(text, font=REGULAR)})")
    for build in event.builds:
        for b in build.builders:
            missing = missing_glyphs(b.name, font=BOLD) if b.name is not None else ""
            if missing:
                problems.append(f"{build.source}:{b.line}: builds[{build.index}].builders[{b.number - 1}]: "
                                f"'{b.name}' has characters the card font cannot print ({missing}); it covers "
                                "Latin, Greek and Cyrillic letters: write the name in those, e.g. in Latin letters")
    if problems:
        raise SpecError(problems)


def _progress(total: int):
    """A progress bar on stderr for the slow parts of a pack; silent unless stderr is a terminal."""
    from tqdm import tqdm

    tqdm.monitor_interval = 0  # no monitor thread: sizing may fork worker processes
    return tqdm(total=total, desc="pack", unit="step", file=sys.stderr, disable=not sys.stderr.isatty(),
                leave=False, dynamic_ncols=True)


def cmd_pack(args) -> int:
    """Check everything, size each distinct design once, render all in memory, then write all three files."""
    from sheetgen.pack import batch
    from sheetgen.inputs.event import load_event
    from sheetgen.pack.kit import KitUse, kit_csv, kit_list
    from sheetgen.outputs.pdf.booklet import PackDesign, render_booklet
    from sheetgen.outputs.pdf.cards import Card, render_cards
    from sheetgen.inputs.layout import load_card_layout, load_sheet_layout
    from sheetgen.outputs.pdf.sheet import sheet_date
    from sheetgen.outputs.parallel import render_all
    from sheetgen.outputs.write import atomic_write_files, check_folder

    event = load_event(args.event)
    for warning in event.warnings:
        print(f"warning: {warning}", file=sys.stderr)
    _check_printable(event)
    sheet_layout = load_sheet_layout(args.layout)
    card_layout = load_card_layout(args.cards)
    folder = check_folder(args.output)
    sheet_date()  # a malformed SOURCE_DATE_EPOCH is bad input: say so before the slow part
    if args.jobs is not None and args.jobs < 1:
        raise SpecError(f"--jobs: {args.jobs}: give 1 or more")
    specs = batch.distinct([b.spec for b in event.builds])
    jobs = args.jobs or batch.default_jobs(len(specs))
    with _progress(2 * len(specs) + 2) as bar:
        bar.set_description_str(f"sizing {len(specs)} design{'s' if len(specs) != 1 else ''}")
        try:
            reports = batch.analyse_all(specs, jobs=jobs, use_cache=not args.no_cache,
                                        on_done=lambda _k: bar.update())
        except batch.DesignFailed as failed:
            build = next(b for b in event.builds if batch.spec_key(b.spec) == batch.spec_key(specs[failed.index]))
            what = f"{build.where} ({build.spec_label})"
            if isinstance(failed.error, InfeasibleDesign):
                raise InfeasibleDesign(f"{what}: {failed.error}") from None
            if isinstance(failed.error, SpecError):
                raise SpecError([f"{what}: {p}" for p in failed.error.problems]) from None
            raise failed.error from None
        letters = _letters(len(specs))
        by_key = {batch.spec_key(spec): k for k, spec in enumerate(specs)}
        designs = [PackDesign(letter=letters[k], report=reports[k],
                              builds=tuple(b for b in event.builds if by_key[batch.spec_key(b.spec)] == k))
                   for k in range(len(specs))]
        kit = kit_list([KitUse(report=d.report, design=d.letter, kits=d.kits) for d in designs],
                       spares=event.spares)
        on_card = " \u00b7 ".join(x for x in (event.title, event.date.isoformat() if event.date else "") if x)
        cards = [Card(report=d.report, design=d.letter, name=b.name, place=b.place, event=on_card)
                 for d in designs for build in d.builds for b in build.builders]
        bar.set_description_str("cards and booklet")
        sheets = sum(-(-d.kits // card_layout.per_sheet) for d in designs)
        cards_pdf, booklet = render_all(
            [lambda: render_cards(cards, card_layout, title=event.title, on_design=lambda _d: bar.update()),
             lambda: render_booklet(event, designs, kit, sheet_layout, card_layout, card_sheets=sheets)],
            jobs=args.jobs or batch.default_jobs(2))
        bar.update(bar.total - 1 - bar.n)  # the cards' steps, counted where they ran
        bar.set_description_str("writing")
        paths = atomic_write_files(folder, dict(zip(PACK_FILES, (booklet, cards_pdf, kit_csv(kit)))))
        bar.update()
    for path in paths:
        print(path)
    print(_pack_line(len(designs), len(cards), sheets, _pages(booklet), len(kit)))
    return EXIT_OK


def _pages(pdf: bytes) -> int:
    """Pages in a PDF reportlab wrote: one ``/Type /Page`` object each (``/Pages`` is the tree)."""
    import re

    return len(re.findall(rb"/Type /Page(?![s\w])", pdf))


def _plural(n: int, word: str) -> str:
    return f"{n} {word}" if n == 1 else f"{n} {word}s"


def _pack_line(designs: int, cards: int, card_sheets: int, booklet_pages: int, kit_lines: int) -> str:
    """The pack's last line: what was made and how much paper it takes."""
    return (f"{_plural(designs, 'design')}, {_plural(cards, 'card')}; sheets to print: "
            f"{_plural(card_sheets, 'card sheet')} (both sides) and {_plural(booklet_pages, 'booklet page')}; "
            f"{_plural(kit_lines, 'kit line')}")


def _letters(n: int) -> list[str]:
    """Kit letters A, B, ... Z, then AA, AB, ... as spreadsheet columns go."""
    out = []
    for k in range(n):
        text, k = "", k + 1
        while k:
            k, r = divmod(k - 1, 26)
            text = chr(ord("A") + r) + text
        out.append(text)
    return out


def parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="sheetgen",
        description="Size soft-on / soft-off faders for low-voltage DC lighting (5-32 V) and print build sheets.")
    p.add_argument("--version", action="version", version=f"%(prog)s {__version__}")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")

    s = sub.add_parser("size", help="size a fader for a spec and print a summary (or the JSON report)",
                       description="Size a fader for SPEC, simulate it and print a summary.")
    s.add_argument("spec", metavar="SPEC", help="spec file (YAML)")
    s.add_argument("--json", action="store_true", help="print the full JSON report instead of the summary")
    s.set_defaults(func=cmd_size)

    c = sub.add_parser("check", help="say whether a spec is valid and can be met",
                       description="Validate SPEC and size it; exit 0 if a design meets it, 2 if the spec "
                                   "is wrong, 3 if no design can meet it.")
    c.add_argument("spec", metavar="SPEC", help="spec file (YAML)")
    c.set_defaults(func=cmd_check)

    b = sub.add_parser("build", help="size a fader and write its printable build sheet (PDF)",
                       description="Size a fader for SPEC and write the build sheet: summary, cautions, timing, "
                                   "schematic, parts list, bench readings, heat and wiring steps.")
    b.add_argument("spec", metavar="SPEC", help="spec file (YAML)")
    b.add_argument("-o", "--output", metavar="OUT.pdf",
                   help="where to write the sheet (default: the spec's name with .pdf, in the current folder)")
    b.add_argument("--layout", metavar="NAME|FILE",
                   help="a shipped layout (a4-sheet, letter-sheet; default a4-sheet) or a layout file; a card "
                        "layout (a6-card, 4x6-card) writes a sheet of wiring cards instead, to SPEC-cards.pdf")
    b.set_defaults(func=cmd_build)

    k = sub.add_parser("pack", help="write a build night's booklet, wiring cards and kit list into a folder",
                       description="Read EVENT (who builds which design), size each distinct design once and "
                                   "write booklet.pdf, cards.pdf and kit-list.csv into DIR, all or none.")
    k.add_argument("event", metavar="EVENT", help="event file (YAML)")
    k.add_argument("-o", "--output", metavar="DIR", required=True,
                   help="the folder to write into (made if needed); other files in it are left alone")
    k.add_argument("--layout", metavar="NAME|FILE", help="sheet layout for the booklet (default a4-sheet)")
    k.add_argument("--cards", metavar="NAME|FILE", help="card layout for the cards (default a6-card; "
                                                        "4x6-card for US Letter)")
    k.add_argument("--jobs", type=int, metavar="N",
                   help="designs sized, and documents rendered, at once in separate processes (default: one per "
                        "core, at most one per design not yet cached; one when the machine is swamped)")
    k.set_defaults(func=cmd_pack)

    d = sub.add_parser("demo", help="write the sheet of a built-in scenario into the current folder",
                       description="Size a built-in scenario (a camper van awning light), write its build sheet "
                                   "to sheetgen-demo.pdf in the current folder and print the path.")
    d.set_defaults(func=cmd_demo)
    for command in (s, c, b, k, d):
        command.add_argument("--no-cache", action="store_true",
                             help="size and analyse afresh, neither reading nor writing the design cache "
                                  "(kept in the user's cache folder, or in $SHEETGEN_CACHE_DIR)")
    return p


def main(argv: list[str] | None = None) -> int:
    args = parser().parse_args(argv)
    try:
        from sheetgen.sizing.cache import bypass

        bypass(args.no_cache)
        return args.func(args)
    except SpecError as exc:
        for line in exc.problems:
            print(f"error: {line}", file=sys.stderr)
        return EXIT_INPUT
    except InfeasibleDesign as exc:
        print(f"cannot meet this spec: {exc}", file=sys.stderr)
        return EXIT_INFEASIBLE
    except SheetgenError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_INTERNAL
    except KeyboardInterrupt:
        return 130
    except Exception as exc:  # never a traceback for the user; say what broke
        print(f"internal error: {type(exc).__name__}: {exc}", file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
