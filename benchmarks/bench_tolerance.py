"""1,000 tolerance draws in one batch, against ngspice running the same 1,000 transients.

    python benchmarks/bench_tolerance.py [SPEC] [--ngspice-sample K]

ngspice runs K of the decks (default 25) and its time is scaled to 1,000; the
target is under 1 s for our batch and at least 100× faster than ngspice (the draws only:
the corner cases are not in this batch yet).
"""

from __future__ import annotations

import argparse
import shutil
import subprocess
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DRAWS = 1000


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("spec", nargs="?", default=str(ROOT / "examples" / "camper-van-step-light.yaml"))
    ap.add_argument("--ngspice-sample", type=int, default=25)
    args = ap.parse_args()

    from sheetgen.engine import simulate
    from sheetgen.sizing import tolerance
    from sheetgen.sizing.size import size
    from sheetgen.inputs.spec import load_spec
    from sheetgen.outputs.spice import spice_deck

    design = size(load_spec(args.spec))
    sample = tolerance.draw(design, n=DRAWS, seed=1)
    t0 = time.perf_counter()
    simulate.transient(design.netlist, overrides=sample.overrides, n=DRAWS)
    ours = time.perf_counter() - t0
    print(f"{DRAWS} draws, one batched transient: {ours:.3f} s  (target < 1 s)")
    if shutil.which("ngspice") is None:
        print("ngspice not installed: no ratio")
        return
    k = args.ngspice_sample
    with tempfile.TemporaryDirectory() as tmp:
        decks = []
        for i in range(k):
            path = Path(tmp) / f"draw{i}.cir"
            path.write_text(spice_deck(design.netlist, overrides=sample.overrides, index=i), encoding="utf-8")
            decks.append(path)
        t0 = time.perf_counter()
        for path in decks:
            subprocess.run(["ngspice", "-b", str(path)], capture_output=True, check=True)
        ng = (time.perf_counter() - t0) / k * DRAWS
    print(f"ngspice, {k} decks run, scaled to {DRAWS}: {ng:.1f} s")
    print(f"speed-up: {ng / ours:.0f}×  (target ≥ 100×: {'met' if ng / ours >= 100 else 'NOT met'})")


if __name__ == "__main__":
    main()
