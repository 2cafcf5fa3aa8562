"""Engine speed, measured against ngspice in the same run (run on demand, not a test).

    python benchmarks/bench_engine.py [SPEC]

Prints: our nominal transient vs ngspice's whole batch run of the same exported
deck (target: ratio ≤ 1), and the time to size one spec (target: under 2 s).
"""

from __future__ import annotations

import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DEFAULT_SPEC = ROOT / "examples" / "camper-van-step-light.yaml"


def _best_of(fn, repeat: int) -> float:
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def main(spec_path: Path) -> None:
    from sheetgen.engine import simulate
    from sheetgen.sizing.size import size
    from sheetgen.inputs.spec import load_spec
    from sheetgen.outputs.spice import spice_deck

    spec = load_spec(spec_path)
    t_size = _best_of(lambda: size(spec), 3)
    design = size(spec)
    t_ours = _best_of(lambda: simulate.transient(design.netlist), 5)
    print(f"spec: {spec_path.name}")
    print(f"sizing one spec:          {t_size:.3f} s  (target < 2 s)")
    print(f"nominal transient (ours): {t_ours * 1000:.1f} ms")
    if shutil.which("ngspice") is None:
        print("ngspice not installed: no ratio")
        return
    with tempfile.TemporaryDirectory() as tmp:
        deck = Path(tmp) / "deck.cir"
        deck.write_text(spice_deck(design.netlist), encoding="utf-8")
        run = lambda: subprocess.run(["ngspice", "-b", str(deck)], capture_output=True, check=True)  # noqa: E731
        t_ng = _best_of(run, 5)
    print(f"ngspice -b of the deck:   {t_ng * 1000:.1f} ms")
    print(f"ratio ours / ngspice:     {t_ours / t_ng:.2f}  (target ≤ 1)")


if __name__ == "__main__":
    main(Path(sys.argv[1]) if len(sys.argv) > 1 else DEFAULT_SPEC)
