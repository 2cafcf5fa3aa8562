"""Device models for the user's load: an LED string fitted to the stated forward
voltage, or a tungsten lamp fitted to its rating."""

from __future__ import annotations

import math

from sheetgen.parts import catalog
from sheetgen.model.netlist import Model
from sheetgen.engine.devices import VT_NOMINAL
from sheetgen.inputs.spec import LampLoad, LedLoad


def led_model(load: LedLoad) -> Model:
    """A diode card that drops exactly ``load.vf_v`` at ``load.current_a``.

    The emission coefficient and series resistance come from the catalog colour
    (the named one, or the one whose typical forward voltage is nearest), so the
    curve has a realistic slope; IS is then solved so the stated point holds.
    """
    if load.colour:
        colour = catalog.led_colour(load.colour)
    else:
        colour = min(catalog.led_colours(), key=lambda c: abs(c.vf_typ_v - load.vf_v))
    n = colour.model["N"]
    # A power LED is a bigger die: its series resistance falls as its rated current rises, so the
    # catalog card's resistance (a 5 mm part at its test current) is scaled by at_a / current
    # (common practice, no source).
    rs = colour.model.get("RS", 0.0) * min(1.0, colour.at_a / load.current_a)
    v_junction = load.vf_v - load.current_a * rs
    is_a = load.current_a / math.expm1(v_junction / (n * VT_NOMINAL))
    # Named by what the spec says it is: its forward voltage, and its colour where one is given.
    named = f"_{load.colour.upper().replace(' ', '_')}" if load.colour else ""
    whole, _, fraction = f"{load.vf_v:g}".partition(".")
    name = f"LED{named}_{whole}V{fraction}"  # 3.1 V white: LED_WHITE_3V1, as the RKM code writes it
    # EG (XTI = 0) keeps the colour's temperature coefficient of Vf in the card ngspice reads.
    eg = float(f"{colour.eg_for(vj_v=v_junction):.6g}")
    return Model(name=name, kind="D", params=(("IS", float(f"{is_a:.6g}")), ("N", n), ("RS", rs),
                                              ("EG", eg), ("XTI", 0.0)))


def lamp_model(load: LampLoad) -> Model:
    """A filament card: hot resistance from the rating, cold from the resistance law.

    The radiation constant K makes the rated power balance at the hot
    temperature; the heat capacity is the mass of a wire sized from the rating
    times tungsten's specific heat, so a 21 W filament warms slower than a 5 W one.
    """
    f = catalog.filament()
    r_hot = load.rated_v**2 / load.power_w
    r0 = r_hot / (f.t_hot_k / f.t_room_k) ** f.alpha
    k = load.power_w / (f.t_hot_k**4 - f.t_room_k**4)
    cth = f.heat_capacity_j_per_k(power_w=load.power_w, rated_v=load.rated_v)
    name = f"LAMP_{load.rated_v:g}V_{load.power_w:g}W".replace(".", "P")
    params = (("R0", float(f"{r0:.6g}")), ("TROOM", f.t_room_k), ("THOT", f.t_hot_k),
              ("ALPHA", f.alpha), ("K", float(f"{k:.6g}")), ("CTH", float(f"{cth:.6g}")))
    return Model(name=name, kind="LAMP", params=params)


def rated_current_a(load: LedLoad | LampLoad) -> float:
    """The load's own rated current: per string times strings, or lamp power / rated V."""
    if isinstance(load, LedLoad):
        return load.current_a * load.strings
    return load.count * load.power_w / load.rated_v
