"""Cold `sheetgen build` against the bare import of its runtime libraries (run on demand, not a test).

    python benchmarks/bench_build.py [SPEC] [--repeat N]

A user waits for a whole cold process, so that is what is timed: a fresh
``python -m sheetgen build SPEC`` writing a PDF, once with an empty design
cache (the first build of a spec) and once with the design already cached.
The yardstick is a fresh process that only imports numpy, yaml, reportlab,
schemdraw and svglib, measured in the same run on the same machine, so each
ratio says how much the tool adds on top of what it cannot avoid.  Every child
may write bytecode and one warm-up run goes first, as on a user's machine.
A last child reports where a first build's time goes, phase by phase.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DEFAULT_SPEC = ROOT / "examples" / "camper-van-step-light.yaml"
TARGET_FIRST = 2.5  # × the bare import floor
TARGET_CACHED = 1.4
LIBRARIES = "import numpy, yaml, reportlab, schemdraw, svglib"

#: Runs in a child: times each phase of one uncached build with the same calls the command line makes.
_PHASES = r"""
import json, sys, time
t = [time.perf_counter()]
import numpy, yaml, reportlab, schemdraw, svglib
t.append(time.perf_counter())
from sheetgen.inputs.spec import load_spec
from sheetgen.sizing.size import size
from sheetgen.sizing.analyse import analyse
from sheetgen.inputs.layout import load_layout
from sheetgen.outputs.pdf.sheet import render_sheet
from sheetgen.outputs.write import atomic_write
t.append(time.perf_counter())
spec = load_spec(sys.argv[1]); layout = load_layout(None)
design = size(spec); t.append(time.perf_counter())
report = analyse(design); t.append(time.perf_counter())
pdf = render_sheet(report, layout); t.append(time.perf_counter())
atomic_write(sys.argv[2], pdf); t.append(time.perf_counter())
names = ["import libraries", "import sheetgen", "size", "analyse", "render PDF", "write"]
print(json.dumps(dict(zip(names, [b - a for a, b in zip(t, t[1:])]))))
"""


def _env(cache: Path) -> dict[str, str]:
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    env["PYTHONPATH"] = os.pathsep.join([str(ROOT), env.get("PYTHONPATH", "")]).rstrip(os.pathsep)
    env["SOURCE_DATE_EPOCH"] = "1700000000"
    env["SHEETGEN_CACHE_DIR"] = str(cache)
    return env


def _run(cmd: list[str], cache: Path) -> float:
    t0 = time.perf_counter()
    subprocess.run(cmd, check=True, capture_output=True, env=_env(cache), cwd=ROOT)
    return time.perf_counter() - t0


def main(spec: Path, repeat: int) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        out = tmp / "sheet.pdf"
        build = [sys.executable, "-m", "sheetgen", "build", str(spec), "-o", str(out)]
        _run(build, tmp / "warm-up")  # bytecode written, as after installing
        floor = min(_run([sys.executable, "-c", LIBRARIES], tmp / "unused") for _ in range(repeat))
        first = min(_run(build, tmp / f"empty-{k}") for k in range(repeat))
        cached = min(_run(build, tmp / "warm-up") for _ in range(repeat))
        phases = json.loads(subprocess.run([sys.executable, "-c", _PHASES, str(spec), str(out)], check=True,
                                           capture_output=True, text=True, env=_env(tmp / "unused"),
                                           cwd=ROOT).stdout)
    cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    print(f"spec: {spec.name}   (best of {repeat} cold processes each; {cores} cores, "
          f"load average {os.getloadavg()[0]:.1f})")
    print(f"bare import floor ({LIBRARIES[7:]}): {floor:.3f} s")
    for label, seconds, target in (("first build (empty cache)", first, TARGET_FIRST),
                                   ("build, design cached", cached, TARGET_CACHED)):
        ratio = seconds / floor
        print(f"{label:<27} {seconds:6.3f} s  = {ratio:4.2f} × floor  (target ≤ {target} ×: "
              f"{'met' if ratio <= target else 'NOT met'})")
    print("where a first build's time goes (one more cold process, no cache):")
    for name, seconds in phases.items():
        print(f"  {name:<18} {seconds:7.3f} s")


if __name__ == "__main__":
    import argparse

    cli = argparse.ArgumentParser(description="Time a cold `sheetgen build` against the bare library imports.")
    cli.add_argument("spec", nargs="?", type=Path, default=DEFAULT_SPEC, help="spec file (default: camper van)")
    cli.add_argument("--repeat", type=int, default=3, help="cold processes per figure; the best is kept")
    a = cli.parse_args()
    main(a.spec.resolve(), max(a.repeat, 1))
