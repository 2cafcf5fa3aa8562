"""The command line.  Nothing else imports this module.

Exit codes: 0 success, 1 internal failure, 2 bad input, 3 valid spec that no
design can meet.
"""

from __future__ import annotations

import argparse
import sys

from .errors import InfeasibleDesign, SheetgenError, SpecError

EXIT_OK, EXIT_INTERNAL, EXIT_INPUT, EXIT_INFEASIBLE = 0, 1, 2, 3


def _design(path: str):
    from .size import size
    from .spec import load_spec

    return size(load_spec(path))


def cmd_size(args) -> int:
    from .analyse import analyse
    from .export import report_json
    from .summary import summary_text

    report = analyse(_design(args.spec))
    print(report_json(report) if args.json else summary_text(report))
    return EXIT_OK


def cmd_check(args) -> int:
    from .spec import load_spec
    from .size import size

    spec = load_spec(args.spec)
    design = size(spec)
    print(f"{args.spec}: OK: {design.topology.title} with {design.values.transistor.part_number}; "
          f"fade-in {design.fade_in_s:.2f} s (asked {spec.fade_in_s:g} s), "
          f"fade-out {design.fade_out_s:.2f} s (asked {spec.fade_out_s:g} s)")
    return EXIT_OK


def _sheet(spec, *, layout_choice: str | None, out: str) -> int:
    """Check the layout and the output path first, then size, analyse and write the sheet."""
    from .analyse import analyse
    from .render.layout import load_layout
    from .render.sheet import build_sheet, sheet_date
    from .render.write import check_writable
    from .size import size

    layout = load_layout(layout_choice)
    check_writable(out)
    sheet_date()  # a malformed SOURCE_DATE_EPOCH is bad input: say so before the slow part
    path = build_sheet(analyse(size(spec)), layout, out)
    print(path)
    return EXIT_OK


def cmd_build(args) -> int:
    from pathlib import Path

    from .spec import load_spec

    spec = load_spec(args.spec)
    out = args.output or f"{Path(args.spec).stem}.pdf"
    if Path(out).resolve() == Path(args.spec).resolve():
        raise SpecError(f"-o {out}: would overwrite the spec itself; give a .pdf name")
    return _sheet(spec, layout_choice=args.layout, out=out)


def cmd_demo(args) -> int:
    from .demo import OUTPUT, demo_spec

    return _sheet(demo_spec(), layout_choice=None, out=OUTPUT)


def parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="sheetgen",
        description="Size soft-on / soft-off faders for low-voltage DC lighting (5-32 V) and print build sheets.")
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
                   help="a shipped layout (a4-sheet, letter-sheet; default a4-sheet) or a layout file")
    b.set_defaults(func=cmd_build)

    d = sub.add_parser("demo", help="write the sheet of a built-in scenario into the current folder",
                       description="Size a built-in scenario (a camper van awning light), write its build sheet "
                                   "to sheetgen-demo.pdf in the current folder and print the path.")
    d.set_defaults(func=cmd_demo)
    return p


def main(argv: list[str] | None = None) -> int:
    args = parser().parse_args(argv)
    try:
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
