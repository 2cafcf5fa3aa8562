"""Junction temperature of the switch: a junction-case-ambient thermal network.

Two thermal RC sections in a ladder (Cauer form): junction to case (RθJC with
the die's heat capacity) and case to ambient (RθJA − RθJC, or the heatsink path,
with the package's heat capacity).  Power is held constant over each time step
of the electrical trace and the linear network is advanced exactly by the
matrix exponential (by its eigenvectors), so any step size is stable.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Thermal time constants by package, seconds: (junction to case, case to ambient).
#: From memory: a small die settles on its case within tens of
#: milliseconds to a second; a free-air package warms over a minute (TO-92)
#: to several minutes (TO-220).  They shape the curve through a fade, never
#: the steady figure, which follows the datasheet resistances alone.
PACKAGE_TAU_S = {
    "TO-92": (0.05, 60.0),
    "TO-126": (0.2, 150.0),
    "TO-220": (0.5, 300.0),
}


@dataclass(frozen=True)
class Network:
    """Thermal resistances (°C/W) and capacitances (J/°C) of the ladder."""

    r_jc: float
    r_ca: float
    c_j: float
    c_c: float

    @property
    def r_ja(self) -> float:
        return self.r_jc + self.r_ca


def network(*, package: str, rth_jc_c_per_w: float, rth_ja_c_per_w: float) -> Network:
    """The ladder for a part in free air, from its datasheet resistances."""
    tau_jc, tau_ca = PACKAGE_TAU_S.get(package, PACKAGE_TAU_S["TO-220"])
    r_ca = rth_ja_c_per_w - rth_jc_c_per_w
    return Network(r_jc=rth_jc_c_per_w, r_ca=r_ca, c_j=tau_jc / rth_jc_c_per_w, c_c=tau_ca / r_ca)


def junction_temperature(net: Network, *, t_s: np.ndarray, power_w: np.ndarray, ambient_c: float,
                         start_c: float | None = None) -> np.ndarray:
    """Junction temperature over ``t_s`` for dissipation ``power_w`` (same length).

    The state is the rise above ambient of the junction and the case; it starts
    at ``start_c`` (default: ambient, a cold part).
    """
    a = np.array([[-1 / (net.r_jc * net.c_j), 1 / (net.r_jc * net.c_j)],
                  [1 / (net.r_jc * net.c_c), -(1 / net.r_jc + 1 / net.r_ca) / net.c_c]])
    b = np.array([1 / net.c_j, 0.0])
    a_inv_b = np.linalg.solve(a, b)
    rise0 = 0.0 if start_c is None else start_c - ambient_c
    x = np.array([rise0, rise0])
    out = np.empty(len(t_s))
    out[0] = ambient_c + x[0]
    lam, vec = np.linalg.eig(a)  # two real, negative, distinct eigenvalues for any RC ladder
    vec_inv = np.linalg.inv(vec)
    for k in range(1, len(t_s)):
        h = float(t_s[k] - t_s[k - 1])
        e = (vec * np.exp(lam * h)) @ vec_inv
        p = 0.5 * (power_w[k] + power_w[k - 1])
        # x' = A x + b p  →  x(h) = e^{Ah} x0 + (e^{Ah} - I) A^{-1} b p
        x = e @ x + (e - np.eye(2)) @ a_inv_b * p
        out[k] = ambient_c + x[0]
    return out
