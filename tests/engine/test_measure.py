"""The four light times on waveforms whose answers are known in closed form."""

from __future__ import annotations

import math

import numpy as np
import pytest

from sheetgen.engine.measure import light_times


def test_first_order_step_rises_from_10_to_90_percent_in_tau_ln_9():
    # A first-order step 1 - exp(-t/τ) crosses 10 % at τ ln(10/9) and 90 % at τ ln 10, so its
    # 10-90 % transition lasts τ ln 9 (IEEE Std 181-2011's reference levels; the textbook RC result,
    # e.g. Horowitz & Hill, The Art of Electronics, 3rd ed., section 1.4; section from memory).
    tau, release = 0.7, 10.0
    t = np.linspace(0.0, 20.0, 200_001)
    on = 1.0 - np.exp(-t / tau)
    at_release = 1.0 - math.exp(-release / tau)
    light = np.where(t <= release, on, at_release * np.exp(-(t - release) / tau))
    times = light_times(t, light[None, :], release_s=release, full=np.array([at_release]))
    assert times.delay_on_s[0] == pytest.approx(tau * math.log(10 / 9), rel=0.005)
    assert times.fade_in_s[0] == pytest.approx(tau * math.log(9), rel=0.005)
    assert times.hold_off_s[0] == pytest.approx(tau * math.log(1 / 0.9), rel=0.005)
    assert times.fade_out_s[0] == pytest.approx(tau * math.log(9), rel=0.005)


def test_a_light_that_never_reaches_full_has_no_fade_in():
    t = np.linspace(0.0, 2.0, 2001)
    light = np.minimum(t, 0.5)[None, :]  # stops at half of what full is said to be
    times = light_times(t, light, release_s=1.0, full=np.array([1.0]))
    assert np.isnan(times.fade_in_s[0])
