"""What a Darlington's equivalent circuit costs the batched solver (run on demand, not a test).

    python benchmarks/bench_darlington.py [DRAWS]

The Darlington stage is simulated as its datasheet's equivalent circuit (two transistors, two
resistors and a diode inside the package).  This times a batched transient of the same fader
twice in one run: with the TIP120 as that circuit, and with a single transistor of the same
total gain in its place, and prints the ratio (target: at most 1.2).
"""

from __future__ import annotations

import sys
import time
from dataclasses import replace

import numpy as np


def _best_of(fn, repeat: int) -> float:
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def main(draws: int) -> None:
    from sheetgen.circuits.topologies import TOPOLOGIES, Values, window_for
    from sheetgen.engine import simulate
    from sheetgen.inputs.spec import parse_spec
    from sheetgen.model.netlist import Model
    from sheetgen.parts import catalog

    spec = parse_spec("supply: 12 V\nload: {kind: led, current: 30 mA, vf: 3.0 V, per_string: 3, strings: 3}\n"
                      "fade: {in: 1 s, out: 4 s}\n", source="bench")
    q = catalog.transistor("TIP120")
    values = Values(transistor=q, diode=catalog.diode("1N4007"), r_charge_ohm=10e3, r_bleed_ohm=10e3,
                    r_base_ohm=47e3, c_timing_f=47e-6, r_led_ohm=100.0)
    darlington = TOPOLOGIES["darlington"].build(spec, values, window_for(1.0, 4.0))
    # The same fader with one transistor of the product gain in the package's place.
    qd, qo = (next(p for p in q.model.body if p.ref == r) for r in ("QD", "QO"))
    flat_params = tuple((k, qd.model["BF"] * qo.model["BF"] if k == "BF" else v) for k, v in qo.model.params)
    flat = Model(name="FLAT", kind="NPN", params=flat_params)
    single = replace(darlington, parts=tuple(replace(p, model=flat) if p.ref == "Q1" else p
                                             for p in darlington.parts))
    rng = np.random.default_rng(1)
    ov = {("C1", "value"): 47e-6 * rng.uniform(0.8, 1.2, draws), ("R3", "value"): 47e3 * rng.uniform(0.95, 1.05, draws)}
    t_d = _best_of(lambda: simulate.transient(darlington, overrides=ov, n=draws), 3)
    t_s = _best_of(lambda: simulate.transient(single, overrides=ov, n=draws), 3)
    print(f"{draws} draws, batched transient")
    print(f"TIP120 as its equivalent circuit: {t_d * 1000:.0f} ms")
    print(f"one transistor of the same gain:  {t_s * 1000:.0f} ms")
    print(f"ratio:                            {t_d / t_s:.2f}  (target ≤ 1.2)")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 200)
