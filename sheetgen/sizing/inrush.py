"""The switch's peak current against its datasheet peak rating (ICM or IDM).

A cold filament draws many times its hot current until it warms; the fade's
soft start limits that surge, but whatever the simulation shows flowing through
the switch at the highest supply must stay under the part's pulsed rating.
"""

from __future__ import annotations

import numpy as np

from sheetgen.errors import InfeasibleDesign
from sheetgen.parts import catalog
from sheetgen.inputs.units import format_quantity


def check_peak(design, load_a: np.ndarray, *, supply_v: float) -> float:
    """The largest simulated load current of ``load_a``; refuse if it passes the switch's ICM/IDM."""
    peak = float(np.max(np.abs(load_a)))
    q = catalog.transistor(design.netlist.by_role("switch")[0].part_number)
    if peak > q.ipeak_a:
        rating = "IDM" if q.polarity == "nmos" else "ICM"
        raise InfeasibleDesign(
            f"{design.spec.title}: the switch {q.part_number} would carry a peak of "
            f"{format_quantity(peak, 'A')} at {supply_v:g} V while the load warms, over its {rating} "
            f"of {format_quantity(q.ipeak_a, 'A')}; a longer fade-in, a smaller lamp or a part "
            "with a higher peak rating would work")
    return peak
