"""The load's light output from a simulated circuit, in one unit per load kind.

An LED's flux is taken as proportional to its current (common practice, no
source), so an LED load's light is the sum of its string currents, read
through each string's series resistor.  A lamp's light follows its filament
temperature (``engine.light``), summed over the lamps and counted in units of
one lamp at its rated temperature.  Only ratios of these figures are printed.
"""

from __future__ import annotations

from typing import Callable

import numpy as np

from sheetgen.engine import light as filament_light
from sheetgen.model.netlist import Netlist, Overrides, Part


def light(netlist: Netlist, v: Callable[[str], np.ndarray], overrides: Overrides | None = None) -> np.ndarray:
    """Light of the load, shape of ``v(net)``: (N, T) for a transient, (N,) for an operating point."""
    lamps = [p for p in netlist.by_role("load") if p.kind == "lamp"]
    if lamps:
        return sum(filament_light.lamp_light(v(f"{p.ref}:th"), t_ref_k=p.model["THOT"]) for p in lamps)
    return led_currents(netlist, v, overrides).sum(axis=0)


def led_currents(netlist: Netlist, v: Callable[[str], np.ndarray], overrides: Overrides | None = None) -> np.ndarray:
    """Each LED string's current, stacked on a leading axis: (strings, ...) ."""
    out = []
    for r in netlist.by_role("led_series"):
        value = (overrides or {}).get((r.ref, "value"), r.value)
        value = np.asarray(value, dtype=float)
        drop = v(r.net("1")) - v(r.net("2"))
        out.append(drop / (value[:, None] if value.ndim and drop.ndim == 2 else value))
    if not out:
        raise ValueError("an LED load without series resistors: no string current to read")
    return np.stack(out)


def led_strings(netlist: Netlist) -> list[list[Part]]:
    """The LEDs of each string, from its series resistor down, one list per ``led_series`` resistor."""
    by_anode = {p.net("A"): p for p in netlist.parts if p.kind == "led"}
    out = []
    for r in netlist.by_role("led_series"):
        chain, net = [], r.net("2")
        while net in by_anode:
            chain.append(by_anode[net])
            net = chain[-1].net("K")
        out.append(chain)
    return out
