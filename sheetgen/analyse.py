"""What a sized design does: curves, heat, harness and bench readings.

One batched transient covers the nominal and the maximum supply together; DC
operating points give the steady readings.  Everything lands in a Report that
the outputs only read.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from . import devices, instructions, simulate
from .circuit import GROUND, Part
from .report import BenchReading, Curves, Harness, Heat, Report, ResistorHeat
from .size import TJ_LIMIT_C, Design, load_line_peak_w
from .spec import LampLoad

#: Blade-fuse ratings in amperes (ISO 8820-3 sizes; from memory).
FUSES_A = (1, 2, 3, 5, 7.5, 10, 15, 20, 25, 30)
FUSE_FACTOR = 1.5  # fuse ≈ 1.25-1.5 × load, so it does not blow on warm-up (check-values §7, common practice)
#: (mm², AWG of at least that copper area, continuous amperes): rule-of-thumb ratings
#: for single cores in free air (type2.com/~keen/west/wire2, check-values §7, a*);
#: AWG areas from the Handbook of Electronic Tables (18 AWG 0.823, 20 AWG 0.518 mm²)
#: and, for 16 and 14 AWG (1.31, 2.08 mm²), from memory.
METER_INPUT_OHM = 10e6
WIRES = ((0.5, 20, 5.0), (0.75, 18, 7.0), (1.0, 16, 9.0), (1.5, 14, 13.0))


def analyse(design: Design) -> Report:
    """Simulate the chosen design at nominal and maximum supply and build the Report."""
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

    curves = Curves(t_s=tr.t_s, load_a=load[0], light=_light(design, tr)[0], timer_v=tr.v("timer")[0])
    heat = _heat(design, tr, op_on)
    harness = _harness(float(steady[1]))
    bench = _bench(design)
    return Report(design=design, curves=curves, steady_a=float(steady[0]), heat=heat, harness=harness,
                  bench=bench, wiring=instructions.wiring_steps(design, harness),
                  cautions=instructions.cautions(design, heat))


def _light(design: Design, tr) -> np.ndarray:
    """Relative light output: LED flux follows current, a filament its temperature."""
    load = design.spec.load
    if isinstance(load, LampLoad):
        lamps = design.netlist.by_role("load")
        t_hot = lamps[0].model["THOT"]
        return devices.lamp_light(tr.v(f"{lamps[0].ref}:th"), t_hot_k=t_hot)
    # LED flux is close to proportional to forward current at these levels (common practice, no source).
    i = tr.i_source("VSUPPLY")
    return i / np.max(i[:, tr.t_s <= design.netlist.release_s], axis=1, keepdims=True)


def _heat(design: Design, tr, op_on) -> Heat:
    spec = design.spec
    q = design.values.transistor
    switch = design.netlist.by_role("switch")[0].ref
    p = tr.switch_power(switch)[1]  # at maximum supply
    t = tr.t_s
    steady_p = float(np.interp(design.netlist.release_s * 0.999, t, p))
    energy = float(np.sum(0.5 * (p[1:] + p[:-1]) * np.diff(t)) - steady_p * design.netlist.release_s)
    hover = load_line_peak_w(spec, supply_v=spec.supply.max_v, r_led_ohm=design.values.r_led_ohm)
    tj = spec.ambient_c + hover * q.rth_ja_c_per_w
    sink = None
    if tj > TJ_LIMIT_C:
        sink = (TJ_LIMIT_C - spec.ambient_c) / hover - q.rth_jc_c_per_w - q.rth_cs_c_per_w
    resistors = []
    for part in design.netlist.parts:
        if part.kind == "resistor":
            v = op_on.v(part.net("1"))[1] - op_on.v(part.net("2"))[1]
            resistors.append(ResistorHeat(ref=part.ref, power_w=float(v * v / part.value), rating_w=part.rating_w))
    return Heat(transistor=q.part_number, package=q.package, ambient_c=spec.ambient_c,
                supply_v=spec.supply.max_v, peak_power_w=float(p.max()), fade_energy_j=max(energy, 0.0),
                steady_power_w=steady_p, hover_power_w=hover, peak_junction_c=tj, junction_limit_c=TJ_LIMIT_C,
                heatsink_c_per_w=sink, power_t_s=t, power_w=p, resistors=tuple(resistors))


def _harness(max_current_a: float) -> Harness:
    need = FUSE_FACTOR * max_current_a
    fuse = next((f for f in FUSES_A if f >= need), FUSES_A[-1])
    for mm2, awg, amps in WIRES:
        if amps >= fuse:
            return Harness(max_current_a=max_current_a, fuse_a=fuse, wire_mm2=mm2, wire_awg=awg, wire_rating_a=amps)
    mm2, awg, amps = WIRES[-1]
    return Harness(max_current_a=max_current_a, fuse_a=fuse, wire_mm2=mm2, wire_awg=awg, wire_rating_a=amps)


def _bench(design: Design) -> tuple[BenchReading, ...]:
    """DC readings at each test point with the feed on and off, across the supply range.

    Each reading includes the meter: a digital multimeter's 10 MΩ input from
    the test point to ground (common practice, no source), which matters on
    high-impedance nodes such as an off collector held up only by LED leakage.
    """
    spec = design.spec
    nl = design.netlist
    levels = np.array([spec.supply.min_v, spec.supply.nominal_v, spec.supply.max_v])
    ov = {("VSUPPLY", "level"): levels, ("VFEED", "level"): levels}
    out = []
    for label, net in nl.probes:
        meter = Part(ref="RMETER", kind="resistor", pins=(("1", net), ("2", GROUND)), role="meter",
                     value=METER_INPUT_OHM)
        probed = replace(nl, parts=nl.parts + (meter,))
        on = simulate.operating_point(probed, at_s=nl.release_s * 0.999, overrides=ov, n=3).v(net)
        off = simulate.operating_point(probed, at_s=nl.stop_s, overrides=ov, n=3).v(net)
        out.append(BenchReading(label=label, net=net, on_v=(float(on.min()), float(on.max())),
                                off_v=(float(off.min()), float(off.max()))))
    return tuple(out)
