"""A long fuzz run of the command line: random and mutated specs, events and layouts, real sizing.

    python benchmarks/fuzz_inputs.py [CASES_PER_KIND]      (default 1000)

Prints, per kind of file, the cases run, the exit classes seen, the slowest
case and every case that broke the contract (exit 1, or an exit 2 whose lines
are not ``file:line: [key: ]message``), with the file's text kept under
/tmp for a look.  The suite's own fuzz test (tests/reader/test_fuzz.py) runs a
few hundred derandomised cases with sizing replaced; this one sizes for real,
so valid specs also reach the solver.
"""

from __future__ import annotations

import contextlib
import io
import re
import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests" / "reader"))

from hypothesis import HealthCheck, given, settings  # noqa: E402

from fuzz_inputs import SPEC_SEEDS, events, layouts, specs  # noqa: E402
from sheetgen.cli import main  # noqa: E402

LINE_RE = re.compile(r"^error: (?P<file>.+?):\d+: \S")


def reference_s() -> float:
    """Seconds for `check` of a shipped example, measured in this run: the yardstick for the slowest case."""
    start = time.perf_counter()
    with contextlib.redirect_stderr(io.StringIO()), contextlib.redirect_stdout(io.StringIO()):
        main(["check", str(ROOT / "examples" / "camper-van-step-light.yaml")])
    return time.perf_counter() - start


def run(kind: str, strategy, argv_for, cases: int, reference: float) -> None:
    exits: Counter[int] = Counter()
    slowest = (0.0, "")
    broken: list[tuple[str, str]] = []
    work = Path(tempfile.mkdtemp(prefix=f"sheetgen-fuzz-{kind}-"))
    (work / "van.yaml").write_text(SPEC_SEEDS[0], encoding="utf-8")

    @settings(max_examples=cases, deadline=None, database=None, suppress_health_check=list(HealthCheck))
    @given(text=strategy)
    def case(text):
        nonlocal slowest
        path = work / argv_for["file"]
        path.write_text(text, encoding="utf-8", errors="surrogatepass")
        err = io.StringIO()
        start = time.perf_counter()
        with contextlib.redirect_stderr(err), contextlib.redirect_stdout(io.StringIO()):
            code = main(argv_for["argv"](work, path))
        took = time.perf_counter() - start
        exits[code] += 1
        if took > slowest[0]:
            slowest = (took, text)
        lines = err.getvalue().splitlines()
        clean = code in (0, 3) or (code == 2 and lines and all(LINE_RE.match(x) for x in lines))
        if not clean:
            keep = work / f"broken-{len(broken)}.yaml"
            keep.write_text(text, encoding="utf-8", errors="surrogatepass")
            broken.append((str(keep), "; ".join(lines)[:300]))
        for out in ("out.pdf", "out"):
            target = work / out
            if target.is_dir():
                for p in target.iterdir():
                    p.unlink()
                target.rmdir()
            elif target.exists():
                target.unlink()

    case()
    print(f"{kind}: {sum(exits.values())} cases; exits {dict(sorted(exits.items()))}; "
          f"slowest {slowest[0]:.2f} s ({slowest[0] / reference:.1f} x the example's check)")
    (work / "slowest.yaml").write_text(slowest[1], encoding="utf-8", errors="surrogatepass")
    for path, message in broken:
        print(f"  broken: {path}: {message}")


def main_() -> None:
    cases = int(sys.argv[1]) if len(sys.argv) > 1 else 1000
    reference = reference_s()
    print(f"reference: check of camper-van-step-light.yaml {reference:.2f} s")
    run("spec", specs, {"file": "spec.yaml", "argv": lambda w, p: ["check", str(p)]}, cases, reference)
    run("event", events, {"file": "night.yaml",
                          "argv": lambda w, p: ["pack", str(p), "-o", str(w / "out"), "--jobs", "1"]}, cases,
        reference)
    run("layout", layouts, {"file": "mine.yaml",
                            "argv": lambda w, p: ["build", str(w / "van.yaml"), "--layout", str(p),
                                                  "-o", str(w / "out.pdf")]}, cases, reference)


if __name__ == "__main__":
    main_()
