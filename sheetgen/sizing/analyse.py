"""What a sized design does: curves, heat, harness and bench readings.

One batched transient covers the nominal and the maximum supply together; DC
operating points give the steady readings.  Everything lands in a Report that
the outputs only read.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from sheetgen.board import layout as board_layout
from sheetgen.parts import catalog
from sheetgen.parts import eseries
from sheetgen.parts import installs
from sheetgen.sizing import abuse
from sheetgen.sizing import faults
from sheetgen.sizing import feeds
from sheetgen.sizing import inrush
from sheetgen.sizing import instructions
from sheetgen.sizing import mounting
from sheetgen.engine import simulate
from sheetgen.engine import thermal
from sheetgen.sizing import tolerance
from sheetgen.model.netlist import GROUND, Part
from sheetgen.engine.measure import light_times
from sheetgen.sizing.report import BenchReading, Curves, Harness, Heat, Report, ResistorHeat, TuningRow
from sheetgen.sizing.design import Design
from sheetgen.sizing.size import C_MAX_F, C_MIN_F, R_BLEED_RANGE, R_CHARGE_RANGE, TJ_LIMIT_C
from sheetgen.sizing.hover import design_hover_w
from sheetgen.circuits.loads import kind_of

#: Blade-fuse ratings in amperes (ISO 8820-3 sizes; from memory).
FUSES_A = (1, 2, 3, 5, 7.5, 10, 15, 20, 25, 30)
FUSE_FACTOR = 1.5  # fuse ≈ 1.25-1.5 × load, so it does not blow on warm-up (visualfoodie.com; tagoverland.co: 1.5×; common practice, no single source)
#: (mm², AWG of at least that copper area, continuous amperes): rule-of-thumb ratings
#: for single cores in free air (type2.com/~keen/west/wire2, read in a secondary source);
#: AWG areas from the Handbook of Electronic Tables (18 AWG 0.823, 20 AWG 0.518 mm²)
#: and, for 16 and 14 AWG (1.31, 2.08 mm²), from memory.
METER_INPUT_OHM = 10e6
#: The parts a tuning table offers swaps for, their series, and the range the sizer itself keeps to.
TUNING_PARTS = (("charge", "E12", R_CHARGE_RANGE), ("bleed", "E12", R_BLEED_RANGE), ("timing", "E6", (C_MIN_F, C_MAX_F)))
WIRES = ((0.5, 20, 5.0), (0.75, 18, 7.0), (1.0, 16, 9.0), (1.5, 14, 13.0))


def analyse(design: Design, *, draws: int = tolerance.DEFAULT_DRAWS, seed: int = tolerance.SEED) -> Report:
    """Simulate the chosen design at nominal and maximum supply and over tolerance draws."""
    spec = design.spec
    nl = design.netlist
    vmax, vnom = spec.supply.max_v, spec.supply.nominal_v
    levels = np.array([vnom, vmax])
    ov = {("VSUPPLY", "level"): levels, ("VFEED", "level"): levels}
    tr = simulate.transient(nl, overrides=ov, n=2)
    on_at = nl.release_s * 0.999
    op_on = simulate.operating_point(nl, at_s=on_at, overrides=ov, n=2)
    load = tr.i_source("VSUPPLY")
    steady = op_on.i_source("VSUPPLY")
    inrush.check_peak(design, load[1], supply_v=float(vmax))

    kind = kind_of(spec.load)
    glow = kind.light(nl, tr.v, ov)
    full = kind.light(nl, op_on.v, ov)
    curves = Curves(t_s=tr.t_s, load_a=load[0], light=glow[0] / full[0], timer_v=tr.v("timer")[0])
    branches = kind.branch_currents(nl, op_on.v, ov)
    led = None if branches is None else float(branches[:, 0].max())
    heat = _heat(design, tr, op_on)
    harness = _harness(float(steady[1]), wire_min_mm2=installs.install(spec.install).wire_min_mm2)
    sample = tolerance.draw(design, n=draws, seed=seed)
    mount = mounting.choose(design, heat)
    bench = _bench(design, sample)
    wiring = mounting.with_steps(instructions.wiring_steps(design, harness), design, mount, short=False)
    board = _board(design, heat)
    brief = instructions.brief(design, harness, heat, board)
    brief = replace(brief, steps=feeds.with_door_test(brief.steps, design, bench, short=True),
                    board_steps=(feeds.with_door_test(brief.board_steps, design, bench, short=True)
                                 if brief.board_steps else ()))
    return Report(design=design, curves=curves, steady_a=float(steady[0]), heat=heat, harness=harness,
                  bench=bench, spread=tolerance.spread(design, sample),
                  tuning=_tuning(design), standby_a=_standby(design),
                  wiring=feeds.with_door_test(wiring, design, bench, short=False),
                  mounting=mount, abuse=abuse.abuse_cases(design),
                  cautions=instructions.cautions(design, heat),
                  brief=brief, board=board, full_light=float(full[0]), led_current_a=led,
                  faults=faults.single_faults(design, bench, fuse_a=harness.fuse_a, meter_ohm=METER_INPUT_OHM))


def _board(design: Design, heat: Heat):
    """The build board: the load off it, and the switch too when it must sit on a chassis heatsink."""
    nl = design.netlist
    off = [p.ref for p in nl.by_role("load")]
    if heat.heatsink_c_per_w is not None:
        off += [p.ref for p in nl.by_role("switch")]
    labels = {net: what.split(" (")[0] for net, what in design.topology.wiring}
    return board_layout(nl, kind=design.spec.board, off_board=tuple(off), source_labels=labels)


def _heat(design: Design, tr, op_on) -> Heat:
    spec = design.spec
    q = design.values.transistor
    switch = design.netlist.by_role("switch")[0].ref
    p = tr.switch_power(switch)[1]  # at maximum supply
    t = tr.t_s
    steady_p = float(np.interp(design.netlist.release_s * 0.999, t, p))
    energy = float(np.sum(0.5 * (p[1:] + p[:-1]) * np.diff(t)) - steady_p * design.netlist.release_s)
    hover = design_hover_w(design, supply_v=spec.supply.max_v)
    tj = spec.ambient_c + hover * q.rth_ja_c_per_w
    sink = None
    if tj > TJ_LIMIT_C:
        sink = (TJ_LIMIT_C - spec.ambient_c) / hover - q.rth_jc_c_per_w - q.rth_cs_c_per_w
    net = thermal.network(package=q.package, rth_jc_c_per_w=q.rth_jc_c_per_w, rth_ja_c_per_w=q.rth_ja_c_per_w)
    tj_curve = thermal.junction_temperature(net, t_s=t, power_w=p, ambient_c=spec.ambient_c)
    resistors = []
    for part in design.netlist.parts:
        if part.kind == "resistor":
            v = op_on.v(part.net("1"))[1] - op_on.v(part.net("2"))[1]
            resistors.append(ResistorHeat(ref=part.ref, power_w=float(v * v / part.value), rating_w=part.rating_w))
    return Heat(transistor=q.part_number, package=q.package, ambient_c=spec.ambient_c,
                supply_v=spec.supply.max_v, peak_power_w=float(p.max()), fade_energy_j=max(energy, 0.0),
                steady_power_w=steady_p, hover_power_w=hover, peak_junction_c=tj, junction_limit_c=TJ_LIMIT_C,
                heatsink_c_per_w=sink, power_t_s=t, power_w=p, junction_c=tj_curve,
                fade_peak_junction_c=float(tj_curve.max()), resistors=tuple(resistors))


def _harness(max_current_a: float, *, wire_min_mm2: float) -> Harness:
    """The fuse for the load and the smallest wire it protects, never below the install's minimum."""
    need = FUSE_FACTOR * max_current_a
    fuse = next((f for f in FUSES_A if f >= need), FUSES_A[-1])
    for mm2, awg, amps in WIRES:
        if amps >= fuse and mm2 >= wire_min_mm2:
            return Harness(max_current_a=max_current_a, fuse_a=fuse, wire_mm2=mm2, wire_awg=awg, wire_rating_a=amps,
                           wire_min_mm2=wire_min_mm2)
    mm2, awg, amps = WIRES[-1]
    return Harness(max_current_a=max_current_a, fuse_a=fuse, wire_mm2=mm2, wire_awg=awg, wire_rating_a=amps,
                   wire_min_mm2=wire_min_mm2)


def _bench(design: Design, sample: tolerance.Draws) -> tuple[BenchReading, ...]:
    """DC readings at each test point, feed on and off, as min-max over the tolerance draws.

    Each reading includes the meter: a digital multimeter's 10 MΩ input from
    the test point to ground (common practice, no source), which matters on
    high-impedance nodes such as an off collector held up only by LED leakage.
    """
    nl = design.netlist
    out = []
    for label, net in nl.probes:
        meter = Part(ref="RMETER", kind="resistor", pins=(("1", net), ("2", GROUND)), role="meter",
                     value=METER_INPUT_OHM)
        probed = replace(nl, parts=nl.parts + (meter,))
        on = simulate.operating_point(probed, at_s=nl.release_s * 0.999, overrides=sample.overrides,
                                      n=sample.n).v(net)
        off = simulate.operating_point(probed, at_s=nl.stop_s, overrides=sample.overrides, n=sample.n).v(net)
        out.append(BenchReading(label=label, net=net, on_v=(float(on.min()), float(on.max())),
                                off_v=(float(off.min()), float(off.max()))))
    return tuple(out)


def _tuning(design: Design) -> tuple[TuningRow, ...]:
    """Fade times with the charge, bleed and timing parts at their neighbouring standard values."""
    nl = design.netlist
    rows = []
    for role, series, (lo, hi) in TUNING_PARTS:
        part = nl.by_role(role)[0]
        lower, higher = eseries.neighbours(series, part.value)
        rows += [(part.ref, v, d) for v, d in ((lower, "lower"), (higher, "higher")) if lo * 0.999 <= v <= hi * 1.001]
    n = len(rows)
    ov: dict = {}
    for k, (ref, value, _) in enumerate(rows):
        arr = ov.setdefault((ref, "value"), np.full(n, nl.part(ref).value))
        arr[k] = value
    tr = simulate.transient(nl, overrides=ov, n=n)
    op = simulate.operating_point(nl, at_s=nl.release_s * 0.999, overrides=ov, n=n)
    light = kind_of(design.spec.load).light
    times = light_times(tr.t_s, light(nl, tr.v, ov), release_s=nl.release_s, full=light(nl, op.v, ov))
    return tuple(TuningRow(ref=ref, value=value, direction=d, fade_in_s=float(times.fade_in_s[k]),
                           fade_out_s=float(times.fade_out_s[k]), delay_on_s=float(times.delay_on_s[k]),
                           hold_off_s=float(times.hold_off_s[k]))
                 for k, (ref, value, d) in enumerate(rows))


def _standby(design: Design) -> float:
    """Current from the always-on supply with the feed off, capacitor leakage included.

    Electrolytic leakage follows the datasheet rule I ≤ 0.01·C·V or 3 µA at rated
    voltage (catalog), scaled by the fraction of the rating actually applied.
    """
    nl = design.netlist
    off = simulate.operating_point(nl, at_s=nl.stop_s)
    total = float(off.i_source("VSUPPLY")[0])
    caps = catalog.capacitors()
    for part in nl.parts:
        if part.kind == "capacitor" and part.rating_v:
            v = abs(float(off.v(part.net("+"))[0] - off.v(part.net("-"))[0]))
            total += caps.leakage_a(part.value, part.rating_v) * v / part.rating_v
    return total
