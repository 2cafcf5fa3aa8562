"""The bench readings printed on every sheet hold what ngspice reads on the nominal circuit."""

from __future__ import annotations

import json
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from sheetgen.outputs.spice_run import NGSPICE

EXAMPLES = sorted((Path(__file__).parents[2] / "examples").glob("*.yaml"))
#: A digital multimeter's input, as the readings assume (common practice, no source).
METER_OHM = 10e6


def _operating_point(deck: str, node: str, feed_v: float, tmp: Path) -> float:
    """ngspice's DC operating point of the deck with the feed held at ``feed_v`` and a meter on ``node``."""
    lines = []
    for line in deck.splitlines():
        if line.startswith((".tran", ".print")) or line.strip().lower() == ".end":  # a .subckt's .ends stays
            continue
        if line.startswith("VFEED "):
            line = re.sub(r"PWL\(.*\)", f"DC {feed_v:g}", line)
        lines.append(line)
    out = tmp / f"op_{node}.txt"
    lines += [f"RMETER {node} 0 {METER_OHM:g}", ".control", "set wr_singlescale", "op",
              f"wrdata {out} v({node})", ".endc", ".end"]
    path = tmp / "op.cir"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    proc = subprocess.run([NGSPICE, "-b", str(path)], capture_output=True, text=True, timeout=120)
    assert out.exists(), proc.stdout[-2000:] + proc.stderr[-2000:]
    return float(np.atleast_2d(np.loadtxt(out))[0, -1])


def _feed_levels(deck: str) -> tuple[float, float]:
    """(on, off) levels of the feed, read from its PWL: off at t = 0, on after the first edge."""
    pwl = re.search(r"^VFEED \S+ \S+ PWL\(([^)]*)\)", deck, re.M).group(1).split()
    return float(pwl[3]), float(pwl[1])


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_every_bench_reading_holds_the_nominal_circuit_in_ngspice(path, tmp_path):
    """ngspice 39 (Debian) on the JSON deck, feed held on and off, a 10 MΩ meter at each test point: the
    reading lies inside the sheet's range (spread over the tolerance draws), within 1 % and 1 mV."""
    out = subprocess.run([sys.executable, "-m", "sheetgen", "size", str(path), "--json"],
                         capture_output=True, text=True, check=True)
    d = json.loads(out.stdout)
    deck = d["spice"]
    on_v, off_v = _feed_levels(deck)
    for reading in d["bench"]:
        node = re.sub(r"[^a-z0-9_]+", "_", reading["net"].lower())
        for feed, (lo, hi) in ((on_v, reading["on_v"]), (off_v, reading["off_v"])):
            got = _operating_point(deck, node, feed, tmp_path)
            slack = 0.01 * max(abs(lo), abs(hi)) + 1e-3
            assert lo - slack <= got <= hi + slack, (reading["point"], feed, got, (lo, hi))
