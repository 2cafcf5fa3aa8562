"""Run a deck in ngspice and read back waveforms: an outside check, never the engine.

Tests and benchmarks use this to compare the tool's own simulator with
ngspice; nothing in the sizing path calls it, and ngspice is optional.
Everything happens in a temporary directory; nothing touches the network.
"""

from __future__ import annotations

import re
import shutil
import subprocess
import tempfile
from pathlib import Path

import numpy as np

#: The program run; found on PATH.
NGSPICE = "ngspice"

_TAIL_LINES = 25


def ngspice_available() -> bool:
    """Whether an ``ngspice`` executable is on PATH."""
    return shutil.which(NGSPICE) is not None


def _tail(text: str) -> str:
    """The last lines of ngspice's chatter: where its error message is."""
    return "\n".join(text.strip().splitlines()[-_TAIL_LINES:])


def _stop_time(deck: str) -> float | None:
    """The ``.tran`` stop time, to tell a finished run from one that gave up."""
    for line in deck.splitlines():
        fields = line.split()
        if len(fields) >= 3 and fields[0].lower() == ".tran":
            try:
                return float(fields[2])
            except ValueError:
                return None
    return None


def _with_control(deck: str, vectors: list[str], out_name: str) -> str:
    """The deck with a ``.control`` block before ``.end`` that writes ``vectors``."""
    lines = deck.rstrip("\n").splitlines()
    if any(line.strip().lower().startswith(".control") for line in lines):
        raise ValueError("deck already has a .control block; pass the deck as exported")
    ends = [i for i, line in enumerate(lines) if line.strip().lower() == ".end"]
    if not ends:
        raise ValueError("deck has no .end line")
    control = [
        ".control",
        "set wr_singlescale",
        "set wr_vecnames",
        "set numdgt=12",
        "run",
        f"wrdata {out_name} {' '.join(vectors)}",
        "quit",
        ".endc",
    ]
    at = ends[-1]
    return "\n".join(lines[:at] + control + lines[at:]) + "\n"


def _ngspice(work: Path, deck: str, timeout_s: float) -> subprocess.CompletedProcess:
    """``ngspice -b`` on ``deck``, written into the folder ``work``, which it runs in."""
    exe = shutil.which(NGSPICE)
    if exe is None:
        raise RuntimeError("ngspice is not installed (not found on PATH)")
    (work / "deck.cir").write_text(deck, encoding="utf-8")
    try:
        return subprocess.run([exe, "-b", "deck.cir"], cwd=work, stdin=subprocess.DEVNULL,
                              capture_output=True, text=True, timeout=timeout_s)
    except subprocess.TimeoutExpired as exc:
        raise RuntimeError(f"ngspice did not finish within {timeout_s:g} s") from exc


def run_transient(deck: str, *, vectors: list[str], timeout_s: float = 120.0) -> dict[str, np.ndarray]:
    """Run ``deck``'s transient in ``ngspice -b``; return time and the asked vectors.

    ``vectors`` are ngspice expressions such as ``v(coll)`` or ``i(vsupply)``;
    the result maps ``"time"`` and each of them, lowercased as asked, to a
    1-D array.  With ``uic`` ngspice stores no t = 0 row, so the first time is
    the first step.  Raises RuntimeError, with the end of ngspice's output,
    when it fails, times out or stops before the ``.tran`` end.
    """
    keys = [v.strip().lower() for v in vectors]
    if not keys:
        raise ValueError("ask for at least one vector")
    bad = [v for v in keys if not v or re.search(r"\s", v)]
    if bad:
        raise ValueError(f"vectors must be single expressions without spaces: {bad}")
    if "time" in keys:
        raise ValueError("time is always returned; do not ask for it")
    controlled = _with_control(deck, keys, "vectors.txt")
    with tempfile.TemporaryDirectory(prefix="sheetgen-ngspice-") as tmp:
        work = Path(tmp)
        proc = _ngspice(work, controlled, timeout_s)
        chatter = (proc.stdout or "") + "\n" + (proc.stderr or "")
        out = work / "vectors.txt"
        if proc.returncode != 0 or not out.exists() or out.stat().st_size == 0:
            raise RuntimeError(
                f"ngspice wrote no data (exit {proc.returncode}); its last words:\n{_tail(proc.stderr or chatter)}"
            )
        with out.open(encoding="utf-8") as fh:
            header = fh.readline().split()
            table = np.loadtxt(fh, ndmin=2)

    if len(header) != 1 + len(keys) or table.shape[1] != 1 + len(keys):
        raise RuntimeError(
            f"ngspice wrote columns {header}, expected time and {keys}; its last words:\n{_tail(chatter)}"
        )
    result = {"time": table[:, 0]}
    for i, key in enumerate(keys, start=1):
        result[key] = table[:, i]
    stop = _stop_time(deck)
    if stop is not None and (table.shape[0] == 0 or result["time"][-1] < stop * (1 - 1e-6)):
        reached = result["time"][-1] if table.shape[0] else 0.0
        raise RuntimeError(f"ngspice stopped at t = {reached:g} s of {stop:g} s; its last words:\n{_tail(chatter)}")
    return result


def run_operating_point(deck: str, *, vectors: list[str], timeout_s: float = 60.0) -> dict[str, float]:
    """Run ``deck``'s DC operating point (``op``) in ``ngspice -b``; return each asked vector's value.

    The deck's own ``.tran`` and ``.print`` lines are dropped, so an exported
    deck can be used as it stands; its sources are taken at their DC values
    (a PWL source at its first point), so set the feed's level in the deck
    first.  Raises RuntimeError, with the end of ngspice's output, when it fails.
    """
    keys = [v.strip().lower() for v in vectors]
    if not keys or any(not v or re.search(r"\s", v) for v in keys):
        raise ValueError(f"vectors must be single expressions without spaces: {keys}")
    kept = [line for line in deck.rstrip("\n").splitlines()
            if not line.strip().lower().startswith((".tran", ".print", ".ic"))]
    if any(line.strip().lower().startswith(".control") for line in kept):
        raise ValueError("deck already has a .control block; pass the deck as exported")
    ends = [i for i, line in enumerate(kept) if line.strip().lower() == ".end"]
    if not ends:
        raise ValueError("deck has no .end line")
    control = [".control", "set numdgt=10", "op", *(f"print {k}" for k in keys), "quit", ".endc"]
    text = "\n".join(kept[:ends[-1]] + control + kept[ends[-1]:]) + "\n"
    with tempfile.TemporaryDirectory(prefix="sheetgen-ngspice-") as tmp:
        proc = _ngspice(Path(tmp), text, timeout_s)
    chatter = (proc.stdout or "") + "\n" + (proc.stderr or "")
    found = {}
    for line in (proc.stdout or "").splitlines():
        m = re.fullmatch(r"\s*(\S+)\s*=\s*([-+0-9.eE]+)\s*", line)
        if m and m[1].lower() in keys:
            found[m[1].lower()] = float(m[2])
    missing = [k for k in keys if k not in found]
    if proc.returncode != 0 or missing:
        raise RuntimeError(f"ngspice gave no operating point for {missing} (exit {proc.returncode}); "
                           f"its last words:\n{_tail(chatter)}")
    return found


__all__ = ["NGSPICE", "ngspice_available", "run_operating_point", "run_transient"]
