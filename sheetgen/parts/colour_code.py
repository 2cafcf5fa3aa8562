"""Resistor colour bands (IEC 60062), spelt as colour names.

Names, not swatches: a photocopied sheet must still say "yellow violet red
gold".  Parts of ±5 % and wider carry two significant digits (4 bands, or 3
when ±20 % leaves the tolerance band off); ±2 % and closer carry three
(5 bands), as IEC 60062 assigns them.
"""

from __future__ import annotations

import math
from decimal import Decimal

__all__ = ["DIGITS", "bands"]

#: Digit colours 0-9; the same colours are the multiplier 10^digit.
DIGITS = ("black", "brown", "red", "orange", "yellow", "green", "blue", "violet", "grey", "white")

#: Multiplier bands below ×1.
_SUB_UNIT = {-1: "gold", -2: "silver", -3: "pink"}

#: Tolerance (percent) -> band colour; ±20 % has no band.
_TOLERANCE = {
    10.0: "silver",
    5.0: "gold",
    2.0: "red",
    1.0: "brown",
    0.5: "green",
    0.25: "blue",
    0.1: "violet",
    0.05: "orange",
}


def bands(value_ohm: float, tolerance: float) -> tuple[str, ...]:
    """The bands of a ``value_ohm`` resistor of ``tolerance`` (a fraction, 0.05 = ±5 %), first band first.

    Raises ValueError for a value the code cannot show with the tolerance's
    digit count (e.g. 4.75 kΩ at ±5 %) or a tolerance it has no colour for.
    """
    if not math.isfinite(value_ohm) or value_ohm <= 0:
        raise ValueError(f"a colour code needs a positive resistance, got {value_ohm!r}")
    percent = round(tolerance * 100, 6)
    if percent != 20.0 and percent not in _TOLERANCE:
        raise ValueError(f"no IEC 60062 tolerance band for ±{percent:g} %")
    n_digits = 2 if percent >= 5.0 else 3
    exact = Decimal(repr(float(value_ohm)))
    exponent = exact.adjusted() - (n_digits - 1)
    mantissa = exact.scaleb(-exponent)
    whole = mantissa.to_integral_value()
    if abs(mantissa - whole) > Decimal("1e-6"):
        raise ValueError(f"{value_ohm:g} Ω needs more than {n_digits} significant digits for a ±{percent:g} % part")
    if exponent < -3 or exponent > 9:
        raise ValueError(f"{value_ohm:g} Ω is outside the range a colour code can show")
    digits = [DIGITS[int(d)] for d in str(int(whole))]
    multiplier = DIGITS[exponent] if exponent >= 0 else _SUB_UNIT[exponent]
    out = (*digits, multiplier)
    return out if percent == 20.0 else (*out, _TOLERANCE[percent])
