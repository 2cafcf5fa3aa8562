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
MIN_DRAWS, MAX_DRAWS = 50, 20000  # the default (500) is the tolerance module's


def _draws(text: str) -> int:
    """``--draws N``: a whole number of tolerance draws, enough to say something about a spread."""
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"give a whole number of draws ({MIN_DRAWS} to {MAX_DRAWS})") from None
    if not MIN_DRAWS <= n <= MAX_DRAWS:
        raise argparse.ArgumentTypeError(f"{n}: give {MIN_DRAWS} to {MAX_DRAWS} draws (fewer say little about "
                                         "a spread; more take long and add nothing)")
    return n


def _topologies() -> tuple[str, ...]:
    from sheetgen.circuits.topologies import forced_names

    return forced_names()


def _spec(path: str, *, printed: bool = False):
    """The spec at ``path``; ``printed``: it goes on a sheet, so its title must be one the font can draw."""
    from sheetgen.inputs.spec import load_spec

    return load_spec(path, topologies=_topologies(), unprintable=_unprintable() if printed else None)


def _unprintable():
    from sheetgen.outputs.pdf.fonts import unprintable

    return unprintable


def cmd_size(args) -> int:
    from sheetgen.outputs.export import report_json
    from sheetgen.outputs.summary import summary_text
    from sheetgen.sizing.cache import report_for

    report = report_for(_spec(args.spec), draws=args.draws)
    print(report_json(report) if args.json else summary_text(report))
    return EXIT_OK


def cmd_check(args) -> int:
    from sheetgen.sizing.cache import design_for

    spec = _spec(args.spec)
    design = design_for(spec)
    print(f"{args.spec}: OK: {design.topology.title} with {design.values.transistor.part_number}; "
          f"light dark {design.delay_on_s:.2f} s, fade-in {design.fade_in_s:.2f} s (asked {spec.fade_in_s:g} s); "
          f"held {design.hold_off_s:.2f} s, fade-out {design.fade_out_s:.2f} s (asked {spec.fade_out_s:g} s)")
    return EXIT_OK


def _sheet(spec, *, layout, out: str, draws: int | None = None) -> int:
    """Check the output path first, then size, analyse (or find the stored design) and write the sheet or cards."""
    from sheetgen.inputs.layout import CardLayout
    from sheetgen.outputs.pdf.sheet import build_sheet, sheet_date
    from sheetgen.outputs.write import atomic_write, check_writable
    from sheetgen.sizing.cache import report_for

    check_writable(out)
    sheet_date()  # a malformed SOURCE_DATE_EPOCH is bad input: say so before the slow part
    report = report_for(spec, draws=draws)
    if isinstance(layout, CardLayout):
        from sheetgen.outputs.pdf.cards import fit_card, render_cards, single_design_cards

        fitted = fit_card(report, layout)
        path = atomic_write(out, render_cards(single_design_cards(report, fitted), layout, title=spec.title,
                                              fits={id(report): fitted}))
        if fitted.note:
            print(f"note: {fitted.note}", file=sys.stderr)
    else:
        path = build_sheet(report, layout, out)
    print(path)
    return EXIT_OK


def cmd_build(args) -> int:
    from pathlib import Path

    from sheetgen.inputs.layout import CardLayout, load_layout

    spec = _spec(args.spec, printed=True)
    layout = load_layout(args.layout)
    suffix = "-cards.pdf" if isinstance(layout, CardLayout) else ".pdf"
    out = args.output or f"{Path(args.spec).stem}{suffix}"
    if Path(out).suffix.lower() != ".pdf":
        raise SpecError(f"-o {out}: the sheet is a PDF; give a name ending in .pdf "
                        f"(e.g. {Path(out).with_suffix('.pdf').name})")
    if Path(out).resolve() == Path(args.spec).resolve():
        raise SpecError(f"-o {out}: would overwrite the spec itself; give a .pdf name")
    return _sheet(spec, layout=layout, out=out, draws=args.draws)


def cmd_demo(args) -> int:
    from sheetgen.inputs.demo import OUTPUT, demo_spec
    from sheetgen.inputs.layout import load_layout

    return _sheet(demo_spec(), layout=load_layout(None), out=OUTPUT)


def cmd_pack(args) -> int:
    """Check everything, size each distinct design once, render all in memory, then write all three files."""
    from sheetgen.inputs.event import load_event
    from sheetgen.inputs.layout import load_card_layout, load_sheet_layout
    from sheetgen.outputs.pack import make_pack

    event = load_event(args.event, topologies=_topologies(), unprintable=_unprintable())
    for warning in event.warnings:
        print(f"warning: {warning}", file=sys.stderr)
    made = make_pack(event, sheet_layout=load_sheet_layout(args.layout), card_layout=load_card_layout(args.cards),
                     output=args.output, jobs=args.jobs, use_cache=not args.no_cache)
    for path in made.paths:
        print(path)
    print(made.line)
    return EXIT_OK


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
    s.add_argument("--draws", type=_draws, metavar="N",
                   help=f"tolerance draws the spread and bench ranges are taken over (default 500; {MIN_DRAWS} to "
                        f"{MAX_DRAWS})")
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
    b.add_argument("--draws", type=_draws, metavar="N",
                   help=f"tolerance draws the spread and bench ranges are taken over (default 500; {MIN_DRAWS} to "
                        f"{MAX_DRAWS})")
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


class _Stopped(BaseException):
    """SIGTERM or Ctrl-C: unwinds through every clean-up (temporary files, made folders), caught only in main.

    Libraries may re-raise it rebuilt with their own message (reportlab does, from inside a
    paragraph), so the signal's number is kept in _RECEIVED rather than in the exception.
    """


_RECEIVED: list[int] = []


def _stop(signum, _frame) -> None:
    _RECEIVED.append(int(signum))
    raise _Stopped(signum)


def _catch_signals():
    """Route SIGTERM and SIGINT through _Stopped while main runs; the previous handlers, to restore."""
    import signal
    import threading

    if threading.current_thread() is not threading.main_thread():
        return {}
    _RECEIVED.clear()
    previous = {}
    for signum in (signal.SIGTERM, signal.SIGINT):
        previous[signum] = signal.signal(signum, _stop)
    return previous


def main(argv: list[str] | None = None) -> int:
    import signal

    args = parser().parse_args(argv)
    previous = _catch_signals()
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
    except (_Stopped, KeyboardInterrupt) as exc:
        signum = _RECEIVED[-1] if isinstance(exc, _Stopped) and _RECEIVED else signal.SIGINT
        print("stopped; nothing new was written", file=sys.stderr)
        return 128 + int(signum)
    except Exception as exc:  # never a traceback for the user; say what broke
        print(f"internal error: {type(exc).__name__}: {exc}", file=sys.stderr)
        return EXIT_INTERNAL
    finally:
        for signum, handler in previous.items():
            signal.signal(signum, handler)


if __name__ == "__main__":
    sys.exit(main())
