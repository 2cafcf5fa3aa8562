"""Write every example's outputs into one folder, for a before/after comparison.

A refactoring that should change no behaviour must leave these bytes alone:

    python tools/snapshot_outputs.py /tmp/before      # on the old tree
    python tools/snapshot_outputs.py /tmp/after       # on the new tree
    diff -r /tmp/before /tmp/after && echo identical

For each spec in ``examples/`` it writes the JSON report, the terminal summary,
the A4 sheet and the A6 card sheet; for each event in ``examples/events/`` the
pack.  ``SOURCE_DATE_EPOCH`` is fixed, so the PDFs are deterministic.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
EPOCH = "1767225600"  # 2026-01-01T00:00:00Z


def _run(args: list[str], stdout_to: Path | None = None) -> None:
    env = dict(os.environ, SOURCE_DATE_EPOCH=EPOCH)
    done = subprocess.run([sys.executable, "-m", "sheetgen.cli", *args], env=env, cwd=ROOT,
                          capture_output=True, text=True)
    if done.returncode != 0:
        raise SystemExit(f"sheetgen {' '.join(args)} exited {done.returncode}:\n{done.stderr}")
    if stdout_to is not None:
        stdout_to.write_text(done.stdout, encoding="utf-8")


def main(out: str) -> None:
    folder = Path(out).resolve()
    folder.mkdir(parents=True, exist_ok=True)
    for spec in sorted((ROOT / "examples").glob("*.yaml")):
        stem = spec.stem
        _run(["size", str(spec), "--json"], folder / f"{stem}.json")
        _run(["size", str(spec)], folder / f"{stem}.txt")
        _run(["build", str(spec), "-o", str(folder / f"{stem}.pdf")])
        _run(["build", str(spec), "--layout", "a6-card", "-o", str(folder / f"{stem}-cards.pdf")])
    for event in sorted((ROOT / "examples" / "events").glob("*.yaml")):
        _run(["pack", str(event), "-o", str(folder / f"pack-{event.stem}")])
    print(folder)


if __name__ == "__main__":
    if len(sys.argv) != 2:
        raise SystemExit("usage: python tools/snapshot_outputs.py OUT_FOLDER")
    main(sys.argv[1])
