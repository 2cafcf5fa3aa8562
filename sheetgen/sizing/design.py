"""The sized design: what the sizer chose and what it achieves, read by every analysis after it.

Its own module so that the tolerance draws, the analysis and the sizer, which
uses both, all build on it without importing one another in a circle.
"""

from __future__ import annotations

from dataclasses import dataclass

from sheetgen.circuits.topologies import Topology, Values
from sheetgen.inputs.spec import Spec


@dataclass(frozen=True)
class Design:
    """A sized fader: the chosen parts, its netlist and what it achieves at nominal."""

    spec: Spec
    topology: Topology
    values: Values
    netlist: "object"
    load_current_a: float
    fade_in_s: float
    fade_out_s: float
    overdrive: float
    reasons: tuple[str, ...]
    full_brightness_yield: float = float("nan")  # over the tolerance draws, set once accepted
    delay_on_s: float = float("nan")  # light times per the timing contract (engine.measure)
    hold_off_s: float = float("nan")
    corners: tuple = ()  # sizing.corners.Corner, one per corner, set once accepted
    strings: "object" = None  # sizing.corners.StringShare: LED strings' currents with their Vf spread, or None
