"""The four times a builder sees, read from the load's relative light output.

Reference levels are the 10 % and 90 % of IEEE Std 181-2011 ("IEEE Standard for
Transitions, Pulses, and Related Waveforms": transition duration is read between
the 10 % and 90 % reference levels; the clause number not checked here).  Light is relative: 1.0 is the
steady light with the feed on.

* ``delay_on_s``: feed on → light first reaches the low level (darkness first);
* ``fade_in_s``: light from the low level to the high level (the visible fade-in);
* ``hold_off_s``: feed off → light first falls below the high level (still at full);
* ``fade_out_s``: light from the high level until it falls below the low level and
  stays there (the visible fade-out).

Crossings are interpolated linearly between time points; NaN marks a crossing
that does not happen inside the simulated window.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

LOW = 0.10
HIGH = 0.90
TIMES = ("delay_on_s", "fade_in_s", "hold_off_s", "fade_out_s")

_low, _high = f"{LOW:.0%}".replace("%", " %"), f"{HIGH:.0%}".replace("%", " %")
DEFINITIONS = {
    "delay_on_s": f"from the feed switching on until the light first reaches {_low} of full",
    "fade_in_s": f"the light rising from {_low} to {_high} of full",
    "hold_off_s": f"from the feed switching off until the light first falls below {_high} of full",
    "fade_out_s": f"the light falling from {_high} to {_low} of full",
}
#: What "full" means on every page that prints the definitions.
FULL_MEANS = "full: the steady light with the feed on"


class LightTimes(NamedTuple):
    """The four times, each of shape (N,)."""

    delay_on_s: np.ndarray
    fade_in_s: np.ndarray
    hold_off_s: np.ndarray
    fade_out_s: np.ndarray


def _first_crossing_up(t: np.ndarray, y: np.ndarray, level: float) -> np.ndarray:
    """First time each row of ``y`` (N, T) reaches ``level``; NaN if never."""
    above = y >= level
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


def _first_crossing_down(t: np.ndarray, y: np.ndarray, level: float) -> np.ndarray:
    """First time each row falls below ``level``; NaN if never."""
    return _first_crossing_up(t, -y, -level)


def _last_crossing_down(t: np.ndarray, y: np.ndarray, level: float) -> np.ndarray:
    """Time after which each row stays below ``level``; NaN if it never gets there."""
    above = y > level
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


def light_times(t_s: np.ndarray, light: np.ndarray, *, release_s: float, full: np.ndarray) -> LightTimes:
    """The four times (N,) from light traces (N, T) in any unit, ``full`` (N,) in the same unit.

    Each row is read against its own ``full`` (its steady light with the feed
    on), so the times describe the shape of the fade; how bright it gets is a
    separate figure.
    """
    rel = light / np.asarray(full, dtype=float)[:, None]
    on = t_s <= release_s
    t_on, rel_on = t_s[on], rel[:, on]
    t10 = _first_crossing_up(t_on, rel_on, LOW)
    t90 = _first_crossing_up(t_on, rel_on, HIGH)
    off = t_s >= release_s
    t_off, rel_off = t_s[off] - release_s, rel[:, off]
    hold = _first_crossing_down(t_off, rel_off, HIGH)
    gone = _last_crossing_down(t_off, rel_off, LOW)
    return LightTimes(delay_on_s=t10, fade_in_s=t90 - t10, hold_off_s=hold, fade_out_s=gone - hold)


def steady_light(t_s: np.ndarray, light: np.ndarray, *, release_s: float) -> np.ndarray:
    """Each row's light just before the feed goes off: the steady light with the feed on (N,)."""
    k = int(np.searchsorted(t_s, release_s, side="right")) - 1
    return light[:, max(k, 0)]
