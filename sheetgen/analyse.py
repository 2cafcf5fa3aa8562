"""What a sized design does: the nominal curves every sheet and report shows."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import simulate
from .size import Design


@dataclass(frozen=True)
class Report:
    """Everything the outputs print, computed once.  Renderers only read it."""

    design: Design
    t_s: np.ndarray  # nominal transient time axis
    load_a: np.ndarray  # nominal load current (T,)
    timer_v: np.ndarray  # timing-capacitor voltage (T,)


def analyse(design: Design) -> Report:
    """Simulate the chosen design once at nominal and keep the curves."""
    tr = simulate.transient(design.netlist)
    return Report(design=design, t_s=tr.t_s, load_a=tr.i_source("VSUPPLY")[0], timer_v=tr.v("timer")[0])
