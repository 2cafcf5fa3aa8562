"""The switch's worst steady dissipation: a feed hovering half-on, the switch held part-way along its load line."""

from __future__ import annotations

from sheetgen.circuits.loads import kind_of, rated_current_a
from sheetgen.inputs.spec import Spec


def load_line_peak_w(spec: Spec, *, supply_v: float, r_led_ohm: float | None,
                     current_limit_a: float | None = None) -> float:
    """Largest steady dissipation in the switch as it moves along the load line.

    This is the worst case of a feed that hovers half-way: the transistor holds
    whatever current the base allows, and the rest of the supply lies across it.
    A current stage never passes more than ``current_limit_a``, whatever its base does.
    """
    return kind_of(spec.load).hover_peak_w(spec.load, supply_v=supply_v, series_ohm=r_led_ohm,
                                           current_limit_a=current_limit_a)


def design_hover_w(design, *, supply_v: float) -> float:
    """:func:`load_line_peak_w` for a sized design, its current stage's limit included."""
    load = design.spec.load
    limit = rated_current_a(load) if design.values.r_emitter_ohm else None
    return load_line_peak_w(design.spec, supply_v=supply_v, r_led_ohm=design.values.r_led_ohm, current_limit_a=limit)
