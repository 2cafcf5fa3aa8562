"""A whole build-night pack: 30 builders over 3 designs, as a fresh process (run on demand, not a test).

    python benchmarks/bench_pack.py [--repeat N]

An organiser waits for a whole cold ``sheetgen pack``, so that is what is
timed: a child process sizing the three designs, rendering the booklet and 30
cards and writing the three files.  Its peak memory is the child's ru_maxrss
as ``os.wait4`` reports it, which on Linux covers the worker processes it
sizes designs in.  The same pack with ``--jobs 1`` is the yardstick in the
same run: the ratio says what sizing side by side buys on this machine.
Targets: under 20 s and under 600 MB.
"""

from __future__ import annotations

import os
import platform
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
TARGET_S = 20.0
TARGET_MB = 600.0
SPECS = ("camper-van-step-light.yaml", "workshop-cabinet.yaml", "model-railway-station.yaml")

EVENT = """\
title: Benchmark build night
date: 2027-03-20
venue: Hall B
spares: 10 %
builds:
  - spec: {camper}
    builders: [Ana, Bo, Zoë, Ødegård, Priya, Kai, Lin, Mo, Noor, Olek, Pía, Quinn]
  - spec: {cabinet}
    count: 10
  - spec: {railway}
    builders: [Ravi, Sión, Tove, Uma, Vík, Wen, Xu, Yara]
"""


def _env() -> dict[str, str]:
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join([str(ROOT), env.get("PYTHONPATH", "")]).rstrip(os.pathsep)
    env["SOURCE_DATE_EPOCH"] = "1700000000"
    return env


def _run(event: Path, out: Path, extra: list[str]) -> tuple[float, float]:
    """Wall seconds and peak MB of one cold pack process."""
    t0 = time.perf_counter()
    child = subprocess.Popen([sys.executable, "-m", "sheetgen.cli", "pack", str(event), "-o", str(out), *extra],
                             env=_env(), cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(child.pid, 0)
    wall = time.perf_counter() - t0
    err = child.stderr.read().decode("utf-8", "replace")
    child.stderr.close()
    if os.waitstatus_to_exitcode(status) != 0:
        raise SystemExit(f"pack failed: {err.strip()}")
    scale = 1024.0 * 1024.0 if platform.system() == "Darwin" else 1024.0  # bytes on macOS, KiB on Linux
    return wall, usage.ru_maxrss / scale


def main(repeat: int) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        event = Path(tmp) / "bench.yaml"
        event.write_text(EVENT.format(**{k: ROOT / "examples" / s for k, s in zip(("camper", "cabinet", "railway"),
                                                                                     SPECS)}), encoding="utf-8")
        results = {}
        for label, extra in (("default jobs", []), ("--jobs 1", ["--jobs", "1"])):
            runs = [_run(event, Path(tmp) / f"out-{label[-1]}", extra) for _ in range(repeat)]
            results[label] = (min(w for w, _ in runs), max(m for _, m in runs))
        out = Path(tmp) / "out-s"
        sizes = {p.name: p.stat().st_size for p in sorted(out.iterdir())}
    cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    print(f"pack of 30 builders over 3 designs ({', '.join(SPECS)}); {cores} cores; best of {repeat}")
    for label, (wall, mb) in results.items():
        verdict = "met" if wall < TARGET_S and mb < TARGET_MB else "NOT met"
        print(f"  {label:<13} wall {wall:6.2f} s   peak {mb:6.0f} MB   (targets < {TARGET_S:g} s, < {TARGET_MB:g} MB: "
              f"{verdict})")
    print(f"  side by side / one at a time: {results['default jobs'][0] / results['--jobs 1'][0]:.2f} of the time")
    print("  files: " + ", ".join(f"{name} {size / 1024:.0f} KiB" for name, size in sizes.items()))


if __name__ == "__main__":
    import argparse

    cli = argparse.ArgumentParser(description="Time a cold 30-builder, 3-design `sheetgen pack`.")
    cli.add_argument("--repeat", type=int, default=1, help="cold processes per figure; the best time is kept")
    main(max(cli.parse_args().repeat, 1))
