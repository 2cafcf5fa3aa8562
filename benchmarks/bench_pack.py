"""Whole build-night packs as fresh processes (run on demand, not a test).

    python benchmarks/bench_pack.py [--repeat N]

An organiser waits for a whole cold ``sheetgen pack``, so that is what is
timed: a child process sizing the designs, rendering the booklet and every
card and writing the three files.  Two packs: 30 builders over 3 designs and
100 builders over 5.  Each is run with an empty design cache (the first pack
of an event) at the default ``--jobs`` and at ``--jobs 1``, and again with its
designs cached.  Peak memory is the child's ru_maxrss as ``os.wait4`` reports
it, which on Linux covers the worker processes it sizes designs in.  The bare
import of the runtime libraries is measured in the same run as a yardstick for
how loaded the machine is.  The outputs of the three runs must be the same bytes.
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
TARGET_MB = 600.0
LIBRARIES = "import numpy, yaml, reportlab, schemdraw, svglib"
SPECS = ("camper-van-step-light.yaml", "workshop-cabinet.yaml", "model-railway-station.yaml",
         "estate-car-tailgate-ground.yaml")
BUILDERS = (("Ana", "Bo", "Zoë", "Ødegård", "Priya", "Kai", "Lin", "Mo", "Noor", "Olek", "Pía", "Quinn"),
            ("Ravi", "Sión", "Tove", "Uma", "Vík", "Wen", "Xu", "Yara"))
#: (label, builders per design in order, target seconds)
PACKS = (("30 builders over 3 designs", (12, 10, 8), 5.0),
         ("100 builders over 5 designs", (24, 22, 20, 18, 16), 12.0))


def _event(counts: tuple[int, ...]) -> str:
    lines = ["title: Benchmark build night", "date: 2027-03-20", "venue: Hall B", "spares: 10 %", "builds:"]
    for k, count in enumerate(counts):
        lines.append(f"  - spec: {ROOT / 'examples' / SPECS[k]}")
        if k < len(BUILDERS) and count == len(BUILDERS[k]):
            lines.append(f"    builders: [{', '.join(BUILDERS[k])}]")
        else:
            lines.append(f"    count: {count}")
    return "\n".join(lines) + "\n"


def _env(cache: Path) -> dict[str, str]:
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    env["PYTHONPATH"] = os.pathsep.join([str(ROOT), env.get("PYTHONPATH", "")]).rstrip(os.pathsep)
    env["SOURCE_DATE_EPOCH"] = "1700000000"
    env["SHEETGEN_CACHE_DIR"] = str(cache)
    return env


def _run(cmd: list[str], cache: Path) -> tuple[float, float]:
    """Wall seconds and peak MB of one cold process."""
    t0 = time.perf_counter()
    child = subprocess.Popen(cmd, env=_env(cache), cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(child.pid, 0)
    wall = time.perf_counter() - t0
    err = child.stderr.read().decode("utf-8", "replace")
    child.stderr.close()
    if os.waitstatus_to_exitcode(status) != 0:
        raise SystemExit(f"failed: {' '.join(cmd[2:])}: {err.strip()}")
    scale = 1024.0 * 1024.0 if platform.system() == "Darwin" else 1024.0  # bytes on macOS, KiB on Linux
    return wall, usage.ru_maxrss / scale


def _files(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


def main(repeat: int) -> None:
    cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        floor = min(_run([sys.executable, "-c", LIBRARIES], tmp / "unused")[0] for _ in range(3))
        print(f"{cores} cores, load average {os.getloadavg()[0]:.1f}; bare import floor ({LIBRARIES[7:]}) "
              f"{floor:.3f} s; best of {repeat}")
        for n, (label, counts, target_s) in enumerate(PACKS):
            event = tmp / f"event-{n}.yaml"
            event.write_text(_event(counts), encoding="utf-8")
            pack = [sys.executable, "-m", "sheetgen", "pack", str(event)]
            runs, outputs = {}, {}
            warm = tmp / f"cold-{n}-0-0"  # filled by the first cold run, then reused
            for c, (name, extra, cached) in enumerate((("empty cache, default jobs", [], False),
                                                       ("empty cache, --jobs 1", ["--jobs", "1"], False),
                                                       ("designs cached, default jobs", [], True))):
                best, peak = float("inf"), 0.0
                out = tmp / f"out-{n}-{c}"
                for k in range(repeat):
                    wall, mb = _run([*pack, *extra, "-o", str(out)], warm if cached else tmp / f"cold-{n}-{c}-{k}")
                    best, peak = min(best, wall), max(peak, mb)
                runs[name] = (best, peak)
                outputs[name] = _files(out)
            same = len({tuple(sorted(o.items())) for o in outputs.values()}) == 1
            print(f"pack of {label}  (target ≤ {target_s:g} s, ≤ {TARGET_MB:g} MB)")
            for name, (wall, mb) in runs.items():
                met = "met" if wall <= target_s and mb <= TARGET_MB else "NOT met"
                print(f"  {name:<29} {wall:6.2f} s = {wall / target_s:4.2f} of target   peak {mb:5.0f} MB  ({met})")
            jobs = runs["empty cache, default jobs"][0] / runs["empty cache, --jobs 1"][0]
            print(f"  default jobs / --jobs 1 with an empty cache: {jobs:.2f} of the time; "
                  f"same bytes in all three: {'yes' if same else 'NO'}")


if __name__ == "__main__":
    import argparse

    cli = argparse.ArgumentParser(description="Time cold `sheetgen pack` runs of 30 and 100 builders.")
    cli.add_argument("--repeat", type=int, default=1, help="cold processes per figure; the best time is kept")
    main(max(cli.parse_args().repeat, 1))
