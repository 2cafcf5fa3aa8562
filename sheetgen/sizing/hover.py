"""The switch's worst steady dissipation: a feed hovering half-on, the switch held part-way along its load line."""

from __future__ import annotations

import numpy as np

from sheetgen.inputs.spec import LedLoad, Spec
from sheetgen.parts import catalog


def load_line_peak_w(spec: Spec, *, supply_v: float, r_led_ohm: float | None,
                     current_limit_a: float | None = None) -> float:
    """Largest steady dissipation in the switch as it moves along the load line.

    This is the worst case of a feed that hovers half-way: the transistor holds
    whatever current the base allows, and the rest of the supply lies across it.
    A current stage never passes more than ``current_limit_a``, whatever its base does.
    """
    load = spec.load
    if isinstance(load, LedLoad):
        # LED string as an ideal drop n·Vf plus its resistor; P = I (V - nVf - I R), largest at I = (V - nVf) / 2R.
        r_total = r_led_ohm / load.strings
        headroom = max(supply_v - load.per_string * load.vf_v, 0.0)
        i = headroom / (2.0 * r_total)
        if current_limit_a is not None:
            i = min(i, current_limit_a)
        return i * (headroom - i * r_total)
    f = catalog.filament()
    # Steady states of the filament along its own I-V curve (radiation balances V·I).
    t = np.linspace(f.t_room_k * 1.01, f.t_hot_k * 1.3, 2000)
    p_rated = load.power_w
    r_hot = load.rated_v**2 / p_rated
    r = r_hot * (t / f.t_hot_k) ** f.alpha
    p = p_rated * (t**4 - f.t_room_k**4) / (f.t_hot_k**4 - f.t_room_k**4)
    i = np.sqrt(p / r) * load.count
    v_lamp = np.sqrt(p * r)
    p_q = (supply_v - v_lamp) * i
    return float(np.max(np.where(v_lamp <= supply_v, p_q, 0.0)))


def design_hover_w(design, *, supply_v: float) -> float:
    """:func:`load_line_peak_w` for a sized design, its current stage's limit included."""
    limit = design.spec.load.current_a * design.spec.load.strings if design.values.r_emitter_ohm else None
    return load_line_peak_w(design.spec, supply_v=supply_v, r_led_ohm=design.values.r_led_ohm, current_limit_a=limit)
