"""Fade times measured on simulated load current, by the contract's definitions.

``fade_in_s``: from the trigger being applied (t = 0) until the load current
first reaches 90 % of its steady on value.  ``fade_out_s``: from the trigger
being removed until the load current falls to 10 % of that steady value and
stays below.  Crossings are interpolated linearly between time points.
"""

from __future__ import annotations

import numpy as np

FADE_IN_LEVEL = 0.90
FADE_OUT_LEVEL = 0.10

DEFINITIONS = {
    "fade_in_s": "from the feed switching on until the load current first reaches 90 % of its steady on value",
    "fade_out_s": "from the feed switching off until the load current falls to 10 % of that steady value",
}


def _first_crossing_up(t: np.ndarray, y: np.ndarray, level: np.ndarray) -> np.ndarray:
    """First time each row of ``y`` (N, T) reaches ``level`` (N,); NaN if never."""
    above = y >= level[:, None]
    hit = above.any(axis=1)
    k = np.argmax(above, axis=1)
    km = np.maximum(k - 1, 0)
    rows = np.arange(y.shape[0])
    y0, y1 = y[rows, km], y[rows, k]
    t0, t1 = t[km], t[k]
    frac = np.where(y1 != y0, (level - y0) / np.where(y1 != y0, y1 - y0, 1.0), 0.0)
    out = t0 + np.clip(frac, 0.0, 1.0) * (t1 - t0)
    out = np.where(k == 0, t[0], out)
    return np.where(hit, out, np.nan)


def _last_crossing_down(t: np.ndarray, y: np.ndarray, level: np.ndarray) -> np.ndarray:
    """Time after which each row stays below ``level``; NaN if it never gets there."""
    above = y > level[:, None]
    never_above = ~above.any(axis=1)
    last = y.shape[1] - 1 - np.argmax(above[:, ::-1], axis=1)
    ends_above = above[:, -1]
    nxt = np.minimum(last + 1, y.shape[1] - 1)
    rows = np.arange(y.shape[0])
    y0, y1 = y[rows, last], y[rows, nxt]
    t0, t1 = t[last], t[nxt]
    frac = np.where(y1 != y0, (y0 - level) / np.where(y1 != y0, y0 - y1, 1.0), 0.0)
    out = t0 + np.clip(frac, 0.0, 1.0) * (t1 - t0)
    out = np.where(never_above, t[0], out)
    return np.where(ends_above, np.nan, out)


def fade_times(t_s: np.ndarray, load_a: np.ndarray, *, release_s: float, steady_a: np.ndarray):
    """Fade-in and fade-out times (N,) from load current traces (N, T).

    ``steady_a`` is each row's steady on current.  NaN marks a fade that does
    not complete inside the simulated window.
    """
    steady = np.asarray(steady_a, dtype=float)
    on = t_s <= release_s
    t_in = _first_crossing_up(t_s[on], load_a[:, on], FADE_IN_LEVEL * steady)
    off = t_s >= release_s
    t_out = _last_crossing_down(t_s[off], load_a[:, off], FADE_OUT_LEVEL * steady) - release_s
    return t_in, t_out
