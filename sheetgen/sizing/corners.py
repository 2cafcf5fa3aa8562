"""The design at the corners of its world: supply, transistor gain and temperature at their limits.

Eight corners (supply min and max × gain min and max × −20 °C and the spec's
ambient) run as one batch.  A MOSFET's "gain" corner is its threshold: ``min``
gain is the highest V_GS(th).  At each corner the design must

* reach at least 90 % of the light the same corner gives with the switch driven
  as hard as it can go (gain × 1000): the drive, not the battery, may not dim it;
* keep every LED string at or under its rated current, with the strings' LEDs at
  opposite ends of their colour's forward-voltage bin (one string's all at the bottom,
  the others' at the top, and the reverse), not only with typical LEDs;
* keep the junction under 125 °C, with the heatsink the sheet states.

At nominal supply, with the same worst spread, the dimmest string must carry at least
``STRING_RATIO_MIN`` of the brightest's current, or the strings glow visibly unequal.

The four light times are read at each corner too, each against that corner's
own steady light; ``light_fraction`` says how bright that steady light is
against the nominal one.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from sheetgen.engine import simulate
from sheetgen.engine.measure import LightTimes, light_times
from sheetgen.circuits.loads import kind_of
from sheetgen.inputs.units import format_quantity
from sheetgen.parts import catalog
from sheetgen.sizing import tolerance
from sheetgen.sizing.hover import design_hover_w

if TYPE_CHECKING:
    from sheetgen.sizing.design import Design

COLD_C = -20.0
FULL_LIGHT = 0.90
TJ_LIMIT_C = 125.0
TJ_ROUNDING_C = 0.01  # a heatsink sized to the limit lands on it, give or take the arithmetic
#: With the strings' LEDs at opposite ends of their bin, the dimmest string carries at least this
#: share of the brightest's current at nominal supply (common practice, no source).
STRING_RATIO_MIN = 0.70


@dataclass(frozen=True)
class Corner:
    """One corner's conditions and what the design does there."""

    supply_v: float
    gain: str  # "min" | "max"
    temp_c: float
    times: dict[str, float]
    light_fraction: float  # steady light at this corner / steady light at nominal
    drive_fraction: float  # steady light / the light of a hard-switched stage at this corner
    led_current_max_a: float | None  # the most any string carries: typical LEDs or the worst spread of Vf
    tj_max_c: float
    led_string_max_a: tuple[float, ...] | None = None  # each string's most under either worst spread of Vf


@dataclass(frozen=True)
class StringShare:
    """How LED strings share their current when their LEDs lie at opposite ends of one bin."""

    vf_spread_v: float                # the bin: how far apart two LEDs' forward voltages may lie
    nominal_a: tuple[tuple[float, ...], ...]  # at nominal supply, typical part, 27 °C: each string's
    #                                             current, one row per worst spread (LEDs.mismatches)
    typical_a: tuple[float, ...]      # the same with typical LEDs
    ratio: float                      # dimmest / brightest string at nominal, worst spread
    ratio_min: float                  # what the ratio must reach
    max_a: float                      # the most any string carries at any corner, worst spread
    max_where: str                    # that corner in words
    rated_a: float


def _conditions(spec) -> list[tuple[float, str, float]]:
    supplies = sorted({spec.supply.min_v, spec.supply.max_v})
    temps = sorted({COLD_C, spec.ambient_c})
    return list(itertools.product(supplies, ("min", "max"), temps))


def overrides(design: "Design", conditions) -> dict:
    """Simulator overrides for each condition ``(supply_v, gain, temp_c)``, one row each."""
    nl = design.netlist
    supply = np.array([c[0] for c in conditions], dtype=float)
    dt = np.array([c[2] for c in conditions], dtype=float) - tolerance.T_MODEL_C
    ov: dict = {("VSUPPLY", "level"): supply, ("VFEED", "level"): supply}
    for part in nl.parts:
        if part.kind in ("npn", "pnp"):
            q = catalog.transistor(part.part_number)
            i_op = design.load_current_a if part.role == "switch" else tolerance.INPUT_STAGE_CURRENT_A
            ends = {"min": q.hfe_min_at(i_op), "max": q.hfe_max_at(i_op), "typ": q.hfe_typ_at(i_op)}
            gain = np.array([ends[c[1]] for c in conditions]) / q.hfe_typ_at(i_op)
            tolerance.bipolar_at(ov, part, gain, dt)
        elif part.kind == "nmos":
            lo, hi = catalog.transistor(part.part_number).vgs_th_v
            ends = {"min": tolerance.vto_at(part, hi), "max": tolerance.vto_at(part, lo), "typ": part.model["VTO"]}
            ov[(part.ref, "VTO")] = np.array([ends[c[1]] for c in conditions], dtype=float)
    ov.update(kind_of(design.spec.load).corner_overrides(design.spec.load, nl, dt))
    return ov


def corners(design: "Design") -> tuple[Corner, ...]:
    """Every corner of the design, from one batched transient and two batched operating points.

    The batch's last row is the nominal design (typical card at its own 27 °C),
    whose steady light every ``light_fraction`` is measured against.
    """
    spec, nl = design.spec, design.netlist
    conds = _conditions(spec) + [(spec.supply.nominal_v, "typ", tolerance.T_MODEL_C)]
    n = len(conds)
    ov = overrides(design, conds)
    tr = simulate.transient(nl, overrides=ov, n=n)
    at = nl.release_s * 0.999
    op = simulate.operating_point(nl, at_s=at, overrides=ov, n=n)
    hard = simulate.operating_point(nl, at_s=at, overrides=tolerance.hard_switched(nl, ov, n), n=n)
    kind = kind_of(spec.load)
    steady = kind.light(nl, op.v, ov)
    times: LightTimes = light_times(tr.t_s, kind.light(nl, tr.v, ov), release_s=nl.release_s, full=steady)
    drive = steady / kind.light(nl, hard.v, ov)
    branches = kind.branch_currents(nl, op.v, ov)
    leds = None if branches is None else branches.max(axis=0)
    spread = _spread_currents(design, conds[:-1], at)  # (rows, strings, corners) or None
    worst = None
    if spread is not None:
        worst = spread.max(axis=0)  # each string's most over the spreads: (strings, corners)
        leds = np.maximum(leds[:-1], worst.max(axis=0))
    tj = _junction(design, conds)
    out = []
    nominal_light = steady[-1]
    for k, (supply_v, gain, temp_c) in enumerate(conds[:-1]):
        out.append(Corner(supply_v=supply_v, gain=gain, temp_c=temp_c,
                          times={name: float(getattr(times, name)[k]) for name in LightTimes._fields},
                          light_fraction=float(steady[k] / nominal_light), drive_fraction=float(drive[k]),
                          led_current_max_a=None if leds is None else float(leds[k]), tj_max_c=float(tj[k]),
                          led_string_max_a=None if worst is None else tuple(float(x) for x in worst[:, k])))
    return tuple(out)


def _spread_currents(design: "Design", conds, at_s: float) -> np.ndarray | None:
    """Each string's steady current under each worst spread of Vf at each condition: (spreads, strings, N)."""
    spec, nl = design.spec, design.netlist
    kind = kind_of(spec.load)
    offsets = kind.mismatches(spec.load)
    if offsets is None:
        return None
    rows = [c for c in conds for _ in offsets]
    ov = overrides(design, rows)
    dt = np.array([c[2] for c in rows], dtype=float) - tolerance.T_MODEL_C
    ov.update(kind.spread_overrides(spec.load, nl, dt, np.tile(offsets, (len(conds), 1)).T))
    op = simulate.operating_point(nl, at_s=at_s, overrides=ov, n=len(rows))
    i = kind.branch_currents(nl, op.v, ov)  # (strings, rows)
    return i.reshape(i.shape[0], len(conds), len(offsets)).transpose(2, 0, 1)


def string_share(design: "Design", found: tuple[Corner, ...]) -> StringShare | None:
    """The strings' currents at nominal with their LEDs at opposite ends of the bin, and the worst corner."""
    spec, nl = design.spec, design.netlist
    kind = kind_of(spec.load)
    if kind.mismatches(spec.load) is None or not found:
        return None
    nominal = (spec.supply.nominal_v, "typ", tolerance.T_MODEL_C)
    at = nl.release_s * 0.999
    spread = _spread_currents(design, [nominal], at)[:, :, 0]  # (spreads, strings)
    ov = overrides(design, [nominal])
    op = simulate.operating_point(nl, at_s=at, overrides=ov, n=1)
    typical = kind.branch_currents(nl, op.v, ov)[:, 0]
    worst = max(found, key=lambda c: c.led_current_max_a)
    ratio = float(min(row.min() / row.max() for row in spread))
    return StringShare(vf_spread_v=float(kind.vf_spread_v(spec.load)),
                       nominal_a=tuple(tuple(float(x) for x in row) for row in spread),
                       typical_a=tuple(float(x) for x in typical), ratio=ratio, ratio_min=STRING_RATIO_MIN,
                       max_a=float(worst.led_current_max_a),
                       max_where=f"{worst.supply_v:g} V, {worst.temp_c:g} °C, {worst.gain} gain",
                       rated_a=float(kind.branch_rating_a(spec.load)))


def _junction(design: "Design", conds) -> np.ndarray:
    """Worst junction temperature: a feed hovering half-on at that supply, through the stated thermal path."""
    spec, q = design.spec, design.values.transistor
    power = [design_hover_w(design, supply_v=supply_v) for supply_v, _, _ in conds]
    worst = max(power)
    rth = q.rth_ja_c_per_w
    if spec.ambient_c + worst * rth > TJ_LIMIT_C:
        # The sheet states one heatsink, sized for the worst supply at the spec's ambient (sizing/mounting.py
        # then picks a catalog part at least that good); every corner runs through that same chain.
        rth = (TJ_LIMIT_C - spec.ambient_c) / worst
    return np.array([temp_c + p * rth for p, (_, _, temp_c) in zip(power, conds)])


def failures(design: "Design", found: tuple[Corner, ...], share: StringShare | None = None) -> list[str]:
    """What fails the acceptance rules, worst first, in words a refusal can print."""
    out = []
    if share is not None and len(share.nominal_a[0]) > 1 and share.ratio < share.ratio_min:
        out.append(f"with one string's LEDs at the bottom of their {share.vf_spread_v:g} V bin and another's at "
                   f"the top, the dimmest string carries only {share.ratio:.0%} of the brightest's current at "
                   f"{design.spec.supply.nominal_v:g} V (at least {share.ratio_min:.0%} wanted)")
    rated = kind_of(design.spec.load).branch_rating_a(design.spec.load)
    for c in found:
        where = f"at {c.supply_v:g} V, {c.temp_c:g} °C, {c.gain} gain"
        if c.drive_fraction < FULL_LIGHT:
            out.append(f"{where} the light reaches only {c.drive_fraction:.0%} of full drive")
        if rated is not None and c.led_current_max_a > rated * (1 + 1e-3):
            spread = "" if c.led_string_max_a is None else " with its LEDs at the bottom of their forward-voltage bin"
            out.append(f"{where} an LED string carries {format_quantity(c.led_current_max_a, 'A')}{spread}, over "
                       f"its {format_quantity(rated, 'A')} rating")
        if c.tj_max_c > TJ_LIMIT_C + TJ_ROUNDING_C:
            out.append(f"{where} the junction would reach {c.tj_max_c:.0f} °C")
    return out
