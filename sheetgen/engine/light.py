"""Relative light output of a tungsten filament from its temperature.

Flux rises as V^3.4 (lighting handbooks' incandescent characteristic, from
memory); with R ∝ T^1.2 and radiation ∝ T^4 at steady state, V ∝ T^2.6, so
flux ∝ T^8.8.  The same law is written into the SPICE deck's ``light`` node.
"""

from __future__ import annotations

import numpy as np

EXPONENT = 8.8
T_FLOOR_K = 300.0


def lamp_light(t_k, *, t_ref_k: float):
    """Light of a filament at ``t_k`` relative to one at ``t_ref_k``."""
    return (np.maximum(t_k, 0.0) / t_ref_k) ** EXPONENT


def spice_light_expression(temp_node: str, t_ref_k: float) -> str:
    """An ngspice B-source expression of :func:`lamp_light` on a node whose voltage is the temperature."""
    return f"pwr(max(v({temp_node}),{T_FLOOR_K:g})/{t_ref_k:.6g},{EXPONENT:g})"
