"""Unusual but valid specs through ``sheetgen check``: every one must end in exit 0 or 3.

    python benchmarks/solver_grid.py [--cases N] [--seed S]

Draws N specs (default 60) from the corners of what the spec allows: supply 5-32 V,
load current 1 mA-5 A (LED strings or a lamp), fades 0.1-120 s, both triggers, every
topology forced or ``auto``.  Runs each in-process through the command-line entry and
prints the exit classes, the slowest cases, and every case that ended otherwise (a
solver failure is ours to handle, never the user's).  The test suite runs a few of
these cases; this script is the larger round.
"""

from __future__ import annotations

import argparse
import contextlib
import io
import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

TOPOLOGY_NAMES = ("auto", "npn", "darlington", "mosfet", "npn-ground", "darlington-ground", "mosfet-ground")


def spec_text(rng: np.random.Generator) -> str:
    """One spec from the edges of the valid range."""
    supply = float(rng.choice([5.0, 6.0, 9.0, 12.0, 13.8, 24.0, 28.0, 32.0]))
    fade_in = float(rng.choice([0.1, 0.3, 1.0, 3.0, 10.0, 30.0, 120.0]))
    fade_out = float(rng.choice([0.1, 0.5, 1.0, 5.0, 20.0, 60.0, 120.0]))
    topology = str(rng.choice(TOPOLOGY_NAMES))
    trigger = "ground" if topology.endswith("-ground") or (topology == "auto" and rng.random() < 0.5) else "positive"
    low, high = max(5.0, round(0.92 * supply, 1)), min(32.0, round(1.2 * supply, 1))
    if rng.random() < 0.6:
        vf = float(rng.choice([2.0, 3.1]))
        per_string = int(max(1, min(rng.integers(1, 8), (low - 1.0) / vf - 1e-9)))
        current = float(rng.choice([0.001, 0.005, 0.02, 0.35, 0.525, 1.0]))
        strings = int(rng.choice([1, 2, 4, 5]))
        load = f"{{kind: led, current: {current:g} A, vf: {vf:g} V, per_string: {per_string}, strings: {strings}}}"
    else:
        power = float(rng.choice([0.1, 0.5, 2.0, 5.0, 21.0, 60.0]))
        load = f"{{kind: lamp, power: {min(power, 5.0 * supply):g} W}}"
    lines = ["title: grid case", f"supply: {{nominal: {supply:g} V, min: {low:g} V, max: {high:g} V}}", f"trigger: {trigger}", f"load: {load}",
             f"fade: {{in: {fade_in:g} s, out: {fade_out:g} s}}"]
    if topology != "auto":
        lines.append(f"topology: {topology}")
    return "\n".join(lines) + "\n"


def run_case(text: str, folder: Path, k: int) -> tuple[int, float, str]:
    """(exit code, seconds, the last line of what it printed) of ``sheetgen check`` on ``text``."""
    from sheetgen.cli import main

    path = folder / f"case{k}.yaml"
    path.write_text(text, encoding="utf-8")
    out, err = io.StringIO(), io.StringIO()
    t0 = time.perf_counter()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(["check", str(path)])
    said = (err.getvalue() or out.getvalue()).strip().splitlines()
    return code, time.perf_counter() - t0, said[0] if said else ""


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cases", type=int, default=60)
    ap.add_argument("--seed", type=int, default=11)
    args = ap.parse_args()
    rng = np.random.default_rng(args.seed)
    results = []
    with tempfile.TemporaryDirectory(prefix="sheetgen-grid-") as tmp:
        for k in range(args.cases):
            text = spec_text(rng)
            code, secs, said = run_case(text, Path(tmp), k)
            results.append((code, secs, said, text))
            print(f"case {k:3d}: exit {code} in {secs:5.1f} s", flush=True)
    print("\nexit classes:", dict(sorted(Counter(r[0] for r in results).items())))
    print("slowest:")
    for code, secs, said, text in sorted(results, key=lambda r: -r[1])[:5]:
        print(f"  {secs:5.1f} s exit {code}: {' | '.join(text.splitlines()[1:])}")
    bad = [r for r in results if r[0] not in (0, 3)]
    for code, secs, said, text in bad:
        print(f"\nexit {code}: {said}\n{text}")
    return 1 if bad else 0


if __name__ == "__main__":
    raise SystemExit(main())
