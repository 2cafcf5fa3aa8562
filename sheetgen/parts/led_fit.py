"""An LED's diode card fitted to two datasheet points and its forward-voltage tempco.

Two points on the forward curve (the rated current and 1 % of it) fix the
emission coefficient N and IS once the series resistance RS is chosen; the
temperature coefficient of Vf goes into the card as the SPICE diode's EG with
XTI = 0.  ngspice scales IS(T) = IS exp((T/TNOM − 1) EG / (N Vt(T))), so at a
fixed current Vj(T) = (T/TNOM) Vj − (T/TNOM − 1) EG and dVf/dT = (Vj − EG)/TNOM:
EG = Vj − TNOM · dVf/dT gives the stated coefficient exactly.  EG here is a
fitting constant, not the die's band gap.
"""

from __future__ import annotations

import math

from sheetgen.model.constants import T_NOMINAL_K, VT_NOMINAL


def fit(*, vf_hi_v: float, i_hi_a: float, vf_lo_v: float, i_lo_a: float, rs_ohm: float) -> tuple[float, float]:
    """(IS, N) of a junction behind ``rs_ohm`` that passes both points at 27 °C."""
    vj_hi, vj_lo = vf_hi_v - i_hi_a * rs_ohm, vf_lo_v - i_lo_a * rs_ohm
    # exact for I = IS (exp(Vj / N Vt) − 1): solve N by fixed point from the logarithm form
    n = (vj_hi - vj_lo) / (VT_NOMINAL * math.log(i_hi_a / i_lo_a))
    for _ in range(50):
        is_a = i_hi_a / math.expm1(vj_hi / (n * VT_NOMINAL))
        n = (vj_hi - vj_lo) / (VT_NOMINAL * (math.log1p(i_hi_a / is_a) - math.log1p(i_lo_a / is_a)))
    return i_hi_a / math.expm1(vj_hi / (n * VT_NOMINAL)), n


def eg_for(*, vj_v: float, tc_v_per_c: float) -> float:
    """The card's EG (with XTI = 0) that makes the junction voltage drift by ``tc_v_per_c``."""
    return vj_v - T_NOMINAL_K * tc_v_per_c


def forward_v(i_a: float, *, is_a: float, n: float, rs_ohm: float) -> float:
    """Forward voltage of the card at 27 °C and current ``i_a``."""
    return n * VT_NOMINAL * math.log1p(i_a / is_a) + i_a * rs_ohm


def is_drift(dt_c, *, n, tc_v_per_c):
    """Factor on IS that moves Vf by ``tc_v_per_c · dt_c`` in a solver that stays at 27 °C.

    Works on numpy arrays as well as floats (the tolerance draws' ambient).
    """
    import numpy as np
    return np.exp(-tc_v_per_c * np.asarray(dt_c) / (n * VT_NOMINAL))
