"""Every example's corners rebuilt in ngspice with ngspice's own temperature model.

The sizer moves a transistor to a corner by scaling its card's gain and saturation
current by rules of its own (−2 mV/°C on V_BE, +0.5 %/°C on gain).  Here ngspice
does the temperature itself: each deck carries only the corner's supply and the
catalog's minimum or maximum gain at 27 °C, plus a ``.temp`` line, and ngspice's
SPICE temperature equations (XTI, EG, XTB on the cards; EG fitted to the colour's
Vf temperature coefficient on the LED cards) move V_BE, gain and V_f.  The light
is read as the acceptance contract reads it (LED light ∝ current, common
practice): the steady current with the feed held on, over the same deck with the
switch's gain raised a thousandfold.

Checks, per corner (supply min/max × gain min/max × −20 °C and the spec's ambient):
* ngspice's light is at least 90 % of the hard-switched light, and within 0.01 of
  the sizer's own figure;
* no string in ngspice carries more than its rated current, nor more than the
  sizer's worst figure (which also puts the strings' LEDs at opposite ends of
  their forward-voltage bin, so it may only be higher).
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

from sheetgen.inputs.spec import load_spec
from sheetgen.outputs.spice import spice_deck
from sheetgen.outputs.spice_run import run_operating_point
from sheetgen.parts import catalog
from sheetgen.sizing import corners, tolerance
from sheetgen.sizing.size import size

EXAMPLES = sorted(p for p in (Path(__file__).parents[2] / "examples").glob("*.yaml")
                  if load_spec(p).load.kind == "led")

#: ngspice and the sizer agree on the light fraction to this (ngspice 39 against our solver, same cards)
LIGHT_AGREEMENT = 0.01


def _deck(design, supply_v: float, gain: str, temp_c: float, *, hard: bool) -> str:
    """The exported deck at one corner, the feed held at its on level, temperature left to ngspice."""
    nl = design.netlist
    ov = {("VSUPPLY", "level"): np.array([supply_v]), ("VFEED", "level"): np.array([supply_v])}
    for part in nl.parts:
        if part.kind in ("npn", "pnp"):
            q = catalog.transistor(part.part_number)
            i_op = design.load_current_a if part.role == "switch" else tolerance.INPUT_STAGE_CURRENT_A
            end = q.hfe_min_at(i_op) if gain == "min" else q.hfe_max_at(i_op)
            factor = end / q.hfe_typ_at(i_op) * (tolerance.HARD_GAIN if hard and part.role == "switch" else 1.0)
            ov.update(part.gain_overrides(np.array([factor])))
    deck = spice_deck(nl, overrides=ov)
    feed = next(s for s in nl.sources if s.name == "VFEED")
    on = float(np.interp(nl.release_s * 0.999, [t for t, _ in feed.shape], [f for _, f in feed.shape]))
    deck, n = re.subn(r"^(VFEED \S+ \S+) PWL\(.*\)$", rf"\g<1> DC {on * supply_v:g}", deck, flags=re.M)
    assert n == 1
    return deck.replace("\n.end\n", f"\n.temp {temp_c:g}\n.end\n")


def _string_currents(design, deck: str) -> np.ndarray:
    """Each string's current in ngspice, from the voltage across its series resistor."""
    rs = design.netlist.by_role("led_series")
    nets = [dict(r.pins) for r in rs]
    got = run_operating_point(deck, vectors=sorted({f"v({p[k]})" for p in nets for k in ("1", "2")}))
    return np.array([(got[f"v({p['1']})"] - got[f"v({p['2']})"]) / r.value for p, r in zip(nets, rs)])


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_ngspice_keeps_every_corner_bright_and_within_the_led_rating(path):
    design = size(load_spec(path))
    rated = design.spec.load.current_a
    assert design.corners
    for c in design.corners:
        real = _string_currents(design, _deck(design, c.supply_v, c.gain, c.temp_c, hard=False))
        hard = _string_currents(design, _deck(design, c.supply_v, c.gain, c.temp_c, hard=True))
        where = f"{c.supply_v:g} V, {c.gain} gain, {c.temp_c:g} °C"
        light = real.sum() / hard.sum()
        assert light >= corners.FULL_LIGHT, where
        assert light == pytest.approx(c.drive_fraction, abs=LIGHT_AGREEMENT), where
        assert real.max() <= rated * (1 + 1e-3), where
        assert real.max() <= c.led_current_max_a * (1 + 1e-3), where
