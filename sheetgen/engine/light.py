"""Light of a tungsten filament: Planck's law weighted by the eye's CIE 1924 photopic V(λ).

A filament's light is the visible part of its thermal radiation, which rises far
faster than the power it takes; the fade it shows follows that, not the current.
One wavelength sum serves three uses: the direct sum, a fast interpolated form for
traces of many draws and samples, and an ngspice B-source expression, so the
solver's light and a deck's light are the same quantity.  The filament is taken as
a grey body (emissivity the same at every visible wavelength), so relative light
does not depend on the emissivity.
"""

from __future__ import annotations

from functools import lru_cache
from importlib import resources

import numpy as np

from sheetgen.model.constants import BOLTZMANN
from sheetgen.reader.yamltree import load_data

PLANCK = 6.62607015e-34  # J·s, CODATA 2018 exact
LIGHT_SPEED = 299_792_458.0  # m/s, exact
K_M = 683.0  # lm/W at 540 THz (about 555 nm): the SI definition of the candela (16th CGPM, 1979)
C1 = 2.0 * np.pi * PLANCK * LIGHT_SPEED**2  # first radiation constant for exitance, W·m²
C2 = PLANCK * LIGHT_SPEED / BOLTZMANN  # second radiation constant, m·K

#: the fast form's table spans these filament temperatures; outside it the direct sum is used
GRID_LO_K, GRID_HI_K = 300.0, 3500.0
_GRID_POINTS = 1200
#: floor on the node voltage in the ngspice expression, so exp() stays far from overflow
SPICE_FLOOR_K = 300.0


@lru_cache(maxsize=None)
def photopic() -> tuple[np.ndarray, np.ndarray]:
    """The shipped CIE 1924 V(λ) table: (wavelengths in metres, V)."""
    name = "cie1924_photopic.yaml"
    text = resources.files("sheetgen.parts.catalog").joinpath(name).read_text(encoding="utf-8")
    data = load_data(text, source=name)
    v = np.asarray(data["values"], dtype=float)
    nm = data["start_nm"] + data["step_nm"] * np.arange(v.size)
    return nm * 1e-9, v


@lru_cache(maxsize=None)
def _terms() -> tuple[np.ndarray, np.ndarray]:
    """Per wavelength: the trapezoid weight V·Δλ·C1/λ⁵ (W/m² per unit Planck factor) and C2/λ (K)."""
    lam, v = photopic()
    dlam = np.full(lam.size, lam[1] - lam[0])
    dlam[[0, -1]] *= 0.5
    return K_M * C1 * v * dlam / lam**5, C2 / lam


def luminous_exitance(t_k) -> np.ndarray:
    """Luminous exitance of a black body at ``t_k`` kelvin, lm/m², by the direct wavelength sum.

    Any array shape; zero at or below 0 K.  Costs one exponential per wavelength
    per element, so long traces should go through :func:`luminous_exitance_fast`.
    """
    w, a = _terms()
    t = np.asarray(t_k, dtype=float)
    with np.errstate(over="ignore", divide="ignore"):
        x = a / np.maximum(t, 1e-300)[..., None]
        m = np.sum(w / np.expm1(x), axis=-1)
    return np.where(t <= 0, 0.0, m)  # NaN stays NaN, so a broken trace is not shown as darkness


@lru_cache(maxsize=None)
def _grid() -> tuple[np.ndarray, np.ndarray]:
    """ln(exitance) against 1/T, on which it is nearly a straight line (Wien's limit)."""
    u = np.linspace(1.0 / GRID_HI_K, 1.0 / GRID_LO_K, _GRID_POINTS)
    return u, np.log(luminous_exitance(1.0 / u))


def luminous_exitance_fast(t_k) -> np.ndarray:
    """:func:`luminous_exitance` by interpolating ln(exitance) in 1/T; the direct sum outside the grid."""
    t = np.asarray(t_k, dtype=float)
    u, ln_m = _grid()
    inside = (t >= GRID_LO_K) & (t <= GRID_HI_K)
    with np.errstate(divide="ignore"):
        m = np.exp(np.interp(1.0 / np.where(inside, t, GRID_LO_K), u, ln_m))
    if not inside.all():
        m = np.where(inside, m, 0.0)
        m[~inside] = luminous_exitance(t[~inside])
    return m


def lamp_light(t_k, *, t_ref_k: float) -> np.ndarray:
    """Relative light of a filament at ``t_k``: 1.0 at ``t_ref_k``, its steady temperature at rated voltage."""
    return luminous_exitance_fast(t_k) / luminous_exitance_fast(float(t_ref_k))


def spice_light_expression(temp_node: str, t_ref_k: float) -> str:
    """An ngspice B-source expression for :func:`lamp_light`, the node voltage read as kelvin.

    The same wavelength sum, term by term: Σ wᵢ / (exp(aᵢ/T) − 1) with wᵢ scaled
    so the sum is 1.0 at ``t_ref_k``, T = max(V(node), 300) so exp never overflows.
    """
    w, a = _terms()
    w = w / luminous_exitance(float(t_ref_k))
    t = f"max(v({temp_node}),{SPICE_FLOOR_K:g})"
    return "+".join(f"{wi:.10g}/(exp({ai:.10g}/{t})-1)" for wi, ai in zip(w, a))
