"""IEC 60063 preferred numbers (the E series) and snapping values onto them.

The mantissas are stored as printed in the standard, not computed: several E24
members (2.7 3.0 3.3 3.6 3.9 4.3 4.7 8.2) are not round(10**(k/24)), so any
formula gives some of them wrong.

Values are built from their decimal text (``float("47e2")``), so a standard value
comes out as the same double as its literal: 4.7 kΩ is exactly ``4700.0`` and
0.47 Ω is exactly ``0.47``.

``nearest`` measures distance by ratio (geometric), which is how the series are
spaced and how tolerances work.  The ``eseries`` package on PyPI uses linear
distance instead, so the two disagree between the geometric and the arithmetic
midpoint of two neighbours (E12: 3590 is nearer 3900 by ratio, nearer 3300
linearly).
"""

from __future__ import annotations

import math
from functools import lru_cache

__all__ = [
    "SERIES",
    "values",
    "nearest",
    "below",
    "above",
    "neighbours",
    "is_standard",
    "tolerance",
]

# Mantissas per decade, as printed in IEC 60063 (E48 and E96 with three digits).
_MANTISSAS: dict[str, tuple[int, ...]] = {
    "E6": (10, 15, 22, 33, 47, 68),
    "E12": (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82),
    "E24": (10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
            33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91),
    "E48": (100, 105, 110, 115, 121, 127, 133, 140, 147, 154, 162, 169,
            178, 187, 196, 205, 215, 226, 237, 249, 261, 274, 287, 301,
            316, 332, 348, 365, 383, 402, 422, 442, 464, 487, 511, 536,
            562, 590, 619, 649, 681, 715, 750, 787, 825, 866, 909, 953),
    "E96": (100, 102, 105, 107, 110, 113, 115, 118, 121, 124, 127, 130,
            133, 137, 140, 143, 147, 150, 154, 158, 162, 165, 169, 174,
            178, 182, 187, 191, 196, 200, 205, 210, 215, 221, 226, 232,
            237, 243, 249, 255, 261, 267, 274, 280, 287, 294, 301, 309,
            316, 324, 332, 340, 348, 357, 365, 374, 383, 392, 402, 412,
            422, 432, 442, 453, 464, 475, 487, 499, 511, 523, 536, 549,
            562, 576, 590, 604, 619, 634, 649, 665, 681, 698, 715, 732,
            750, 768, 787, 806, 825, 845, 866, 887, 909, 931, 953, 976),
}

# The tolerance each series was laid out for (IEC 60063).
_TOLERANCE = {"E6": 0.20, "E12": 0.10, "E24": 0.05, "E48": 0.02, "E96": 0.01}

#: Names of the stored series, coarsest first.
SERIES: tuple[str, ...] = tuple(_MANTISSAS)

# Relative slack when comparing with a standard value, so that 0.1 * 47000
# (= 4700.000000000001) still counts as 4700.
_REL = 1e-9


def _series(series: str) -> str:
    name = str(series).strip().upper()
    if name not in _MANTISSAS:
        raise ValueError(f"unknown E series {series!r}; known: {', '.join(SERIES)}")
    return name


def _positive(x: float, what: str = "value") -> float:
    x = float(x)
    if not math.isfinite(x) or x <= 0.0:
        raise ValueError(f"{what} must be a positive finite number, not {x!r}")
    return x


@lru_cache(maxsize=None)
def _decade_values(name: str, exponent: int) -> tuple[float, ...]:
    """The series' values in the decade [10**exponent, 10**(exponent+1))."""
    mantissas = _MANTISSAS[name]
    shift = exponent - (len(str(mantissas[0])) - 1)
    return tuple(float(f"{m}e{shift}") for m in mantissas)


def values(series: str, lo: float, hi: float) -> tuple[float, ...]:
    """Every value of ``series`` within [lo, hi], ascending, across all decades."""
    name = _series(series)
    lo = _positive(lo, "lo")
    hi = _positive(hi, "hi")
    if hi < lo:
        raise ValueError(f"hi ({hi}) is below lo ({lo})")
    first = math.floor(math.log10(lo)) - 1
    last = math.floor(math.log10(hi)) + 1
    out: list[float] = []
    for exponent in range(first, last + 1):
        for v in _decade_values(name, exponent):
            if lo * (1 - _REL) <= v <= hi * (1 + _REL):
                out.append(v)
    return tuple(out)


def _around(name: str, x: float) -> tuple[float, ...]:
    # Two decades either side always hold the neighbours of x.
    return values(name, x / 100.0, x * 100.0)


def below(series: str, x: float) -> float:
    """The largest value of ``series`` not above ``x``."""
    name = _series(series)
    x = _positive(x)
    return max(v for v in _around(name, x) if v <= x * (1 + _REL))


def above(series: str, x: float) -> float:
    """The smallest value of ``series`` not below ``x``."""
    name = _series(series)
    x = _positive(x)
    return min(v for v in _around(name, x) if v >= x * (1 - _REL))


def nearest(series: str, x: float) -> float:
    """The value of ``series`` nearest ``x`` by ratio; an exact tie goes up.

    Unlike ``eseries.find_nearest`` (linear distance), the switch point between
    two neighbours a < b is their geometric mean sqrt(a*b).
    """
    lo, hi = below(series, x), above(series, x)
    if lo == hi:
        return lo
    return lo if x / lo < hi / x else hi


def is_standard(series: str, x: float) -> bool:
    """Whether ``x`` is (to float noise) a member of ``series``."""
    lo = below(series, x)
    return abs(lo - float(x)) <= _REL * float(x)


def neighbours(series: str, x: float) -> tuple[float, float]:
    """The values just below and just above the standard value ``x``.

    ``x`` must itself be in the series; a tuning table steps from it to the
    adjacent members, never to ``x`` again.
    """
    name = _series(series)
    x = _positive(x)
    if not is_standard(name, x):
        raise ValueError(f"{x!r} is not a value of {name}")
    vals = _around(name, x)
    centre = min(range(len(vals)), key=lambda i: abs(vals[i] - x))
    return vals[centre - 1], vals[centre + 1]


def tolerance(series: str) -> float:
    """The fractional tolerance the series is laid out for (E12 -> 0.10)."""
    return _TOLERANCE[_series(series)]
