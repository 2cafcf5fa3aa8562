"""Time to an honest refusal against the slowest example design, in the same run.

    python benchmarks/bench_refusal.py [--repeat N] [--only "NAME;NAME;..."]

Every spec in examples/ (and examples/refused/) runs through ``python -m sheetgen check
--no-cache`` in its own process, one at a time, as a builder would run it; the design cache is
neither read nor written.  The reference is the slowest example that gets a design (exit 0).
Then each valid spec below that no design meets (the refused examples and the hard cases:
long holds, two-minute fades, power LEDs at short fades, a tiny lamp forced onto one stage)
runs the same way.  For each refusal the wall and CPU time are printed with their ratio to the
reference and the targets: a refusal takes no longer than the slowest design (ratio at most
1.0) and at most 10 s wall on a two-core machine.  Every case must end in exit 0 or 3; exit 1
or a case stopped at the timeout is a bug.  With ``--repeat N`` each case runs N times and the
fastest run counts (a shared machine's load moves the others).
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = sorted((ROOT / "examples").glob("*.yaml")) + sorted((ROOT / "examples" / "refused").glob("*.yaml"))
RATIO_TARGET = 1.0
WALL_TARGET_S = 10.0
TIMEOUT_S = 300.0

_CAMPER = """title: Camper van step light
supply: 12 V
load: {{kind: led, current: 20 mA, vf: 3.1 V, per_string: 3, strings: 2}}
fade: {{in: {fade_in} s, out: {fade_out} s}}
{extra}ambient: 40 °C
"""

#: Valid specs that no design meets (each checked to end in exit 3 here).
HARD = {
    "camper van, hold off 5 s": _CAMPER.format(fade_in=1.5, fade_out=4, extra="delay: {off: 5 s}\n"),
    "camper van, hold off 8 s": _CAMPER.format(fade_in=1.5, fade_out=4, extra="delay: {off: 8 s}\n"),
    "camper van, wait 2 s in the dark": _CAMPER.format(fade_in=1.5, fade_out=4, extra="delay: {on: 2 s}\n"),
    "camper van, 5 s in / 1 s out": _CAMPER.format(fade_in=5, fade_out=1, extra=""),
    "camper van, 30 s / 30 s": _CAMPER.format(fade_in=30, fade_out=30, extra=""),
    "LED bank, 24 V ground-switched, 120 s fades": """title: Coach luggage bay bank
supply: 24 V
trigger: ground
load: {kind: led, current: 20 mA, vf: 3.1 V, per_string: 6, strings: 4}
fade: {in: 120 s, out: 120 s}
""",
    "9 V 525 mA LED pair, 1 s / 1 s": """title: Tent lantern
supply: 9 V
load: {kind: led, current: 525 mA, vf: 3.1 V, per_string: 2}
fade: {in: 1 s, out: 1 s}
""",
    "0.1 W 24 V lamp forced to npn, 3 s / 0.5 s": """title: Cab indicator lamp
supply: 24 V
load: {kind: lamp, power: 0.1 W}
fade: {in: 3 s, out: 0.5 s}
topology: npn
""",
}


def _cpu() -> float:
    use = resource.getrusage(resource.RUSAGE_CHILDREN)
    return use.ru_utime + use.ru_stime


def run(path: Path) -> tuple[int | None, float, float, str]:
    """(exit code, or None when stopped at the timeout; wall seconds; CPU seconds; first line printed)."""
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    t0, c0 = time.perf_counter(), _cpu()
    try:
        done = subprocess.run([sys.executable, "-m", "sheetgen", "check", "--no-cache", str(path)], cwd=ROOT,
                              env=env, capture_output=True, text=True, timeout=TIMEOUT_S)
    except subprocess.TimeoutExpired:
        return None, time.perf_counter() - t0, _cpu() - c0, f"stopped after {TIMEOUT_S:g} s"
    said = (done.stderr or done.stdout).strip().splitlines()
    return done.returncode, time.perf_counter() - t0, _cpu() - c0, said[0] if said else ""


def best_of(path: Path, repeat: int) -> tuple[int | None, float, float, str]:
    runs = [run(path) for _ in range(repeat)]
    return min(runs, key=lambda r: r[1])


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=1)
    ap.add_argument("--only", help="names of the hard cases to run, separated by semicolons (the examples always run)")
    args = ap.parse_args()
    only = {x.strip() for x in args.only.split(";")} if args.only else None

    results = []  # (name, code, wall, cpu, said, kind)
    for path in EXAMPLES:
        code, wall, cpu, said = best_of(path, args.repeat)
        name = str(path.relative_to(ROOT))
        results.append((name, code, wall, cpu, said, "example"))
        print(f"{name:52s} exit {code} {wall:6.2f} s wall {cpu:6.2f} s CPU", flush=True)
    designs = [r for r in results if r[1] == 0]
    if not designs:
        print("no example got a design: no reference")
        return 1
    ref = max(designs, key=lambda r: r[2])
    ref_cpu = max(r[3] for r in designs)
    with tempfile.TemporaryDirectory(prefix="sheetgen-refusal-") as tmp:
        for k, (name, text) in enumerate(HARD.items()):
            if only and name not in only:
                continue
            path = Path(tmp) / f"hard{k}.yaml"
            path.write_text(text, encoding="utf-8")
            code, wall, cpu, said = best_of(path, args.repeat)
            results.append((name, code, wall, cpu, said, "hard"))
            print(f"{name:52s} exit {code} {wall:6.2f} s wall {cpu:6.2f} s CPU", flush=True)

    print(f"\nreference: slowest example design {ref[0]}: {ref[2]:.2f} s wall ({ref_cpu:.2f} s CPU, slowest CPU)")
    print(f"{'refusal':52s} {'exit':>4s} {'wall':>8s} {'ratio':>6s} {'CPU':>7s} {'ratio':>6s}  targets: "
          f"ratio <= {RATIO_TARGET:g}, wall <= {WALL_TARGET_S:g} s")
    misses = 0
    refusals = [r for r in results if r[1] != 0]
    for name, code, wall, cpu, said, kind in refusals:
        ratio, cpu_ratio = wall / ref[2], cpu / ref_cpu
        ok = code == 3 and ratio <= RATIO_TARGET and wall <= WALL_TARGET_S
        misses += not ok
        print(f"{name:52s} {str(code):>4s} {wall:7.2f}s {ratio:5.2f}x {cpu:6.2f}s {cpu_ratio:5.2f}x  "
              f"{'meets both' if ok else 'MISSES'}")
    bad = [r for r in results if r[1] not in (0, 3)]
    print(f"\nrefusals meeting both targets: {len(refusals) - misses} of {len(refusals)}; "
          f"exit other than 0 or 3: {len(bad)} (target 0)")
    for name, code, wall, cpu, said, kind in bad:
        print(f"  {name}: exit {code}: {said}")
    return 1 if bad else 0


if __name__ == "__main__":
    raise SystemExit(main())
