"""Board layout speed on every example, measured against one nominal transient in the same run.

    python benchmarks/bench_board.py

Prints, per example: the layout time (engine and proof, stripboard and
perfboard; best of 3), the time of one nominal transient of the same netlist
as the reference, their ratio, and the board's size.  Target: every layout
under 1 s.
"""

from __future__ import annotations

import sys
from pathlib import Path

from bench_engine import _best_of  # the benchmarks' one timer (this folder is on the path when run)

ROOT = Path(__file__).resolve().parent.parent
TARGET_S = 1.0


def main() -> int:
    from sheetgen.board import layout
    from sheetgen.engine import simulate
    from sheetgen.inputs.spec import load_spec
    from sheetgen.sizing.size import size

    worst = 0.0
    print(f"{'example':34} {'kind':11} {'layout':>9} {'transient':>10} {'ratio':>6}  board")
    for path in sorted((ROOT / "examples").glob("*.yaml")):
        nl = size(load_spec(path)).netlist
        off = tuple(p.ref for p in nl.by_role("load"))
        t_ref = _best_of(lambda: simulate.transient(nl), 3)
        for kind in ("stripboard", "perfboard"):
            t = _best_of(lambda: layout(nl, kind=kind, off_board=off), 3)
            board = layout(nl, kind=kind, off_board=off)
            worst = max(worst, t)
            print(f"{path.stem:34} {kind:11} {t * 1e3:7.0f} ms {t_ref * 1e3:7.0f} ms {t / t_ref:6.2f}  "
                  f"{board.rows} × {board.cols}, {len(board.cuts)} cuts, {len(board.links)} links")
    verdict = "meets" if worst < TARGET_S else "MISSES"
    print(f"slowest layout {worst * 1e3:.0f} ms: {verdict} the {TARGET_S:g} s target")
    return 0 if worst < TARGET_S else 1


if __name__ == "__main__":
    sys.exit(main())
