"""A lamp design's simulated inrush against the switch's datasheet peak rating (ICM/IDM).

The peak ratings are in transistors.yaml with their datasheets (onsemi TIP120/D ICM 8 A,
onsemi TIP31/D ICM 5 A, ST BD135/BD139 ICM 3 A, ...; from memory where marked there).
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest

from sheetgen.errors import InfeasibleDesign
from sheetgen.engine import simulate
from sheetgen.inputs.spec import parse_spec
from sheetgen.parts import catalog
from sheetgen.sizing import inrush
from sheetgen.sizing.size import size

EXAMPLE = Path(__file__).resolve().parents[2] / "examples" / "refused" / "garage-bench-lamp-21w.yaml"


@pytest.fixture(scope="module")
def lamp_design(lamp_sizing):
    return lamp_sizing(parse_spec(EXAMPLE.read_text(encoding="utf-8"), source=str(EXAMPLE)))


def _peak_at_max_supply(design) -> float:
    v = design.spec.supply.max_v
    ov = {("VSUPPLY", "level"): np.array([v]), ("VFEED", "level"): np.array([v])}
    return float(np.max(simulate.transient(design.netlist, overrides=ov, n=1).i_source("VSUPPLY")))


def test_lamp_inrush_stays_under_the_switch_peak_rating(lamp_design):
    q = catalog.transistor(lamp_design.netlist.by_role("switch")[0].part_number)
    peak = _peak_at_max_supply(lamp_design)
    hot = lamp_design.spec.load.power_w / lamp_design.spec.load.rated_v
    # the soft start keeps the surge far below a bare cold filament's 14× (lamptech.co.uk,
    # Starting Characteristics), and under the datasheet ICM of the part chosen
    assert hot * 0.9 < peak < q.ipeak_a
    assert inrush.check_peak(lamp_design, np.array([peak]), supply_v=lamp_design.spec.supply.max_v) == peak


def test_a_switch_rated_below_the_inrush_is_refused_by_name(lamp_design, monkeypatch):
    ref = lamp_design.netlist.by_role("switch")[0]
    q = catalog.transistor(ref.part_number)
    peak = _peak_at_max_supply(lamp_design)
    weak = dataclasses.replace(q, ipeak_a=0.9 * peak)
    monkeypatch.setattr(catalog, "transistor", lambda number: weak)
    with pytest.raises(InfeasibleDesign, match=rf"{q.part_number}.*(ICM|IDM)"):
        inrush.check_peak(lamp_design, np.array([peak]), supply_v=lamp_design.spec.supply.max_v)


def test_every_transistor_states_a_peak_rating_at_or_above_its_continuous_one():
    for t in catalog.transistors():
        assert t.ipeak_a >= t.imax_a, t.part_number
    # onsemi TIP120/D: IC 5 A continuous, ICM 8 A peak (from memory)
    assert (catalog.transistor("TIP120").imax_a, catalog.transistor("TIP120").ipeak_a) == (5.0, 8.0)
