"""Real parts: seeded random draws over tolerances, supply and ambient, in one batch.

Every draw is a full parameter set for the same netlist, passed to the
simulator as overrides, so N draws cost one batched run:

* resistors uniform within their tolerance, the timing capacitor within its own;
* each bipolar transistor's gain log-uniform between the catalog's minimum and
  maximum at the operating current (BF of the typical card scaled by the drawn
  ratio); a MOSFET's threshold uniform over the catalog's range;
* each LED's forward voltage drawn on its own, uniform over one forward-voltage bin
  of its colour (the catalog's vf_bin_v) centred on the stated value, so every
  string's forward voltage, and its share of the current, is drawn apart from the
  others'; plus the colour's temperature coefficient of Vf over the drawn ambient;
* the supply uniform between the spec's minimum and maximum (feed and always-on
  alike);
* ambient uniform over the 25 °C below the spec's worst case, which moves the
  transistor's Vbe by −2 mV/°C and its gain by +0.5 %/°C from 27 °C (common
  practice, no source), applied as IS and BF of the card.

Every draw must keep every LED string at or under its rated current (``string_currents``).

"Full brightness" for a draw means its steady on current is at least 90 % of
the current the same draw carries with the switch driven as hard as it can go
(gain × 1000): the drive, not the battery, must not be what dims the light.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from sheetgen.parts import catalog
from sheetgen.engine import devices, simulate
from sheetgen.engine.devices import VT_NOMINAL
from sheetgen.engine.measure import light_times
from sheetgen.circuits.loads import kind_of

if TYPE_CHECKING:
    from sheetgen.sizing.design import Design

DEFAULT_DRAWS = 500
SEED = 60062  # fixed, so the same spec gives the same report
FULL_BRIGHTNESS = 0.90
YIELD_REQUIRED = 0.99
VBE_TC_V_PER_C = -2e-3
HFE_TC_PER_C = 0.005
AMBIENT_SPAN_C = 25.0
T_MODEL_C = 27.0
HARD_GAIN = 1000.0  # "driven as hard as it can go": the switch's gain a thousandfold
INPUT_STAGE_CURRENT_A = 0.01  # an input stage carries only the charge current, milliamps


@dataclass(frozen=True)
class Draws:
    """N parameter sets as simulator overrides, with the drawn supply and ambient."""

    n: int
    overrides: dict
    supply_v: np.ndarray
    ambient_c: np.ndarray


def draw(design: "Design", *, n: int = DEFAULT_DRAWS, seed: int = SEED) -> Draws:
    """Seeded draws over every toleranced quantity of ``design``."""
    rng = np.random.default_rng(seed)
    spec = design.spec
    nl = design.netlist
    ov: dict = {}
    for part in nl.parts:
        if part.kind in ("resistor", "capacitor") and part.tolerance:
            ov[(part.ref, "value")] = part.value * rng.uniform(1 - part.tolerance, 1 + part.tolerance, n)
    supply = rng.uniform(spec.supply.min_v, spec.supply.max_v, n)
    ov[("VSUPPLY", "level")] = supply
    ov[("VFEED", "level")] = supply
    ambient = rng.uniform(spec.ambient_c - AMBIENT_SPAN_C, spec.ambient_c, n)
    dt = ambient - T_MODEL_C

    for part in nl.parts:
        if part.kind in ("npn", "pnp"):
            i_op = design.load_current_a if part.role == "switch" else INPUT_STAGE_CURRENT_A
            _draw_bipolar(rng, ov, part, catalog.transistor(part.part_number), i_op, dt)
        elif part.kind == "nmos":
            ov[(part.ref, "VTO")] = vto_at(part, rng.uniform(*catalog.transistor(part.part_number).vgs_th_v, n))

    ov.update(kind_of(spec.load).draw_overrides(spec.load, nl, rng, n, dt))
    return Draws(n=n, overrides=ov, supply_v=supply, ambient_c=ambient)


def _draw_bipolar(rng, ov: dict, part, q, i_op: float, dt: np.ndarray) -> None:
    """Gain log-uniform between the catalog's minimum and maximum, plus its temperature drift."""
    lo, hi = q.hfe_min_at(i_op), q.hfe_max_at(i_op)
    gain = np.exp(rng.uniform(np.log(lo), np.log(hi), dt.size)) / q.hfe_typ_at(i_op)
    bipolar_at(ov, part, gain, dt)


def vto_at(part, vgs_th_v):
    """A MOSFET's VTO for datasheet thresholds ``vgs_th_v``: the card's equation inverted at the test current."""
    q = catalog.transistor(part.part_number)
    return devices.mosfet_vto(vgs_th_v, at_a=q.vgs_th_at_a, kp=part.model["KP"], n=part.model["N"])


def bipolar_at(ov: dict, part, gain: np.ndarray, dt: np.ndarray) -> None:
    """Overrides for a bipolar part at ``gain`` × its typical card and ``dt`` °C from the card's 27 °C."""
    ov.update(part.gain_overrides(gain * (1 + HFE_TC_PER_C * dt) ** len(part.model.junctions())))
    for prefix, card in part.model.junctions():  # every junction's Vbe drifts
        nf = card.get("NF", 1.0)
        ov[(part.ref, f"{prefix}IS")] = card["IS"] * np.exp(-VBE_TC_V_PER_C * dt / (nf * VT_NOMINAL))


def full_brightness_yield(design: "Design", draws: Draws) -> float:
    """Fraction of draws whose steady current reaches 90 % of what a hard switch would give."""
    nl = design.netlist
    at = nl.release_s * 0.999
    real = simulate.operating_point(nl, at_s=at, overrides=draws.overrides, n=draws.n).i_source("VSUPPLY")
    hard = hard_switched(nl, draws.overrides, draws.n)
    ideal = simulate.operating_point(nl, at_s=at, overrides=hard, n=draws.n).i_source("VSUPPLY")
    return float(np.mean(real >= FULL_BRIGHTNESS * ideal))


def string_currents(design: "Design", draws: Draws) -> np.ndarray | None:
    """Each LED string's steady current with the feed on, over the draws: (strings, N), or None."""
    nl = design.netlist
    op = simulate.operating_point(nl, at_s=nl.release_s * 0.999, overrides=draws.overrides, n=draws.n)
    return kind_of(design.spec.load).branch_currents(nl, op.v, draws.overrides)


@dataclass(frozen=True)
class StringDraws:
    """The LED strings' currents over the draws, each string's LEDs drawn apart from the others'."""

    max_a: float            # the most any string carried in any draw
    over_rating: float      # fraction of draws in which some string carried more than its rating
    ratio_p5: float         # 5th percentile over the draws of dimmest / brightest string
    ratio_min: float        # the least of it in any draw


def string_draws(currents: np.ndarray | None, rated_a: float | None) -> StringDraws | None:
    """Summary of :func:`string_currents` against the strings' rating; None for a single string or no rating."""
    if currents is None or rated_a is None:
        return None
    top, low = currents.max(axis=0), currents.min(axis=0)
    ratio = np.where(top > 0, low / np.where(top > 0, top, 1.0), 1.0)
    return StringDraws(max_a=float(top.max()), over_rating=float(np.mean(top > rated_a * (1 + 1e-3))),
                       ratio_p5=float(np.percentile(ratio, 5)), ratio_min=float(ratio.min()))


def hard_switched(netlist, ov: dict, n: int) -> dict:
    """The same overrides with the switch's gain (or a MOSFET's KP) raised a thousandfold:
    the stage driven as hard as it can go, the reference "full brightness" is read against."""
    hard = dict(ov)
    switch = netlist.by_role("switch")[0]
    if switch.kind == "nmos":
        hard[(switch.ref, "KP")] = np.full(n, switch.model["KP"] * HARD_GAIN)
    else:
        for prefix, card in switch.model.junctions():
            hard[(switch.ref, f"{prefix}BF")] = ov.get((switch.ref, f"{prefix}BF"), np.full(n, card["BF"])) * HARD_GAIN
    return hard


@dataclass(frozen=True)
class Spread:
    """Percentiles of the fade times over the draws, the yield, and the band of curves."""

    draws: int
    delay_on_s: tuple[float, float, float]  # p5, p50, p95
    fade_in_s: tuple[float, float, float]
    hold_off_s: tuple[float, float, float]
    fade_out_s: tuple[float, float, float]
    full_brightness_yield: float
    t_s: np.ndarray
    load_p5_a: np.ndarray
    load_p95_a: np.ndarray
    strings: StringDraws | None = None


def spread(design: "Design", draws: Draws) -> Spread:
    """One batched transient over all draws: fade-time percentiles and the 5-95 % band."""
    nl = design.netlist
    tr = simulate.transient(nl, overrides=draws.overrides, n=draws.n)
    load = tr.i_source("VSUPPLY")
    op = simulate.operating_point(nl, at_s=nl.release_s * 0.999, overrides=draws.overrides, n=draws.n)
    light = kind_of(design.spec.load).light
    times = light_times(tr.t_s, light(nl, tr.v, draws.overrides), release_s=nl.release_s,
                        full=light(nl, op.v, draws.overrides))

    def pct(x):
        x = np.where(np.isfinite(x), x, np.inf)  # an unfinished fade counts as the slowest
        p = np.percentile(x, [5, 50, 95])
        return tuple(float(v) for v in p)

    kind = kind_of(design.spec.load)
    strings = string_draws(kind.branch_currents(nl, op.v, draws.overrides), kind.branch_rating_a(design.spec.load))
    return Spread(draws=draws.n, delay_on_s=pct(times.delay_on_s), fade_in_s=pct(times.fade_in_s),
                  hold_off_s=pct(times.hold_off_s), fade_out_s=pct(times.fade_out_s),
                  full_brightness_yield=full_brightness_yield(design, draws), t_s=tr.t_s,
                  load_p5_a=np.percentile(load, 5, axis=0), load_p95_a=np.percentile(load, 95, axis=0),
                  strings=strings)
