"""Cold `sheetgen build` against the bare import of its runtime libraries (run on demand, not a test).

    python benchmarks/bench_build.py [SPEC] [--repeat N]

A user waits for a whole cold process, so that is what is timed: a fresh
``python -m sheetgen.cli build SPEC`` writing a PDF.  The yardstick is a
fresh process that only imports numpy, yaml, reportlab, schemdraw and svglib,
measured in the same run on the same machine, so the ratio says how much the
tool adds on top of what it cannot avoid.  A third child process reports where
a build's time goes, phase by phase.  Target: the whole build under 1.5 s.
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
TARGET_S = 1.5
LIBRARIES = "import numpy, yaml, reportlab, schemdraw, svglib"

#: Runs in a child: times each phase of one build with the same calls the command line makes.
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


def _env() -> dict[str, str]:
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join([str(ROOT), env.get("PYTHONPATH", "")]).rstrip(os.pathsep)
    env["SOURCE_DATE_EPOCH"] = "1700000000"
    return env


def _best_of(cmd: list[str], repeat: int) -> float:
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        subprocess.run(cmd, check=True, capture_output=True, env=_env(), cwd=ROOT)
        best = min(best, time.perf_counter() - t0)
    return best


def main(spec: Path, repeat: int) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "sheet.pdf"
        t_import = _best_of([sys.executable, "-c", LIBRARIES], repeat)
        t_build = _best_of([sys.executable, "-m", "sheetgen.cli", "build", str(spec), "-o", str(out)], repeat)
        phases = json.loads(subprocess.run([sys.executable, "-c", _PHASES, str(spec), str(out)], check=True,
                                           capture_output=True, text=True, env=_env(), cwd=ROOT).stdout)
    print(f"spec: {spec.name}   (best of {repeat} cold processes each)")
    print(f"bare import of {LIBRARIES[7:]}: {t_import:.3f} s")
    print(f"sheetgen build, whole process:             {t_build:.3f} s  (target < {TARGET_S} s: "
          f"{'met' if t_build < TARGET_S else 'NOT met'})")
    print(f"ratio build / bare import:                 {t_build / t_import:.1f}")
    print("where one build's time goes (one more cold process):")
    for name, seconds in phases.items():
        print(f"  {name:<18} {seconds:7.3f} s")


if __name__ == "__main__":
    import argparse

    cli = argparse.ArgumentParser(description="Time a cold `sheetgen build` against the bare library imports.")
    cli.add_argument("spec", nargs="?", type=Path, default=DEFAULT_SPEC, help="spec file (default: camper van)")
    cli.add_argument("--repeat", type=int, default=3, help="cold processes per figure; the best is kept")
    a = cli.parse_args()
    main(a.spec.resolve(), max(a.repeat, 1))
