"""Machine-readable outputs of a Report: the JSON report and the SPICE deck."""

from __future__ import annotations

import json

from sheetgen.inputs.wires import RUN_NAMES
from sheetgen.parts import installs
from sheetgen.sizing import runs
from sheetgen.sizing.report import Report
from sheetgen.engine.measure import DEFINITIONS, TIMES
from sheetgen.sizing.size import delay_limits
from sheetgen.outputs.spice import spice_deck


def requested_entry(spec) -> dict:
    """The times asked for, under the report's own keys; a delay only where the spec asks for one."""
    asked = {"delay_on_s": spec.delay_on_s, "fade_in_s": spec.fade_in_s, "hold_off_s": spec.delay_off_s,
             "fade_out_s": spec.fade_out_s}
    return {k: v for k, v in asked.items() if v is not None}


def part_entry(part) -> dict:
    """One physical part as the JSON contract describes it."""
    entry = {
        "ref": part.ref,
        "kind": part.kind,
        "role": part.role,
        "value": part.value,
        "part_number": part.part_number or None,
        "description": part.description,
        "pins": dict(part.pins),
        "rating_v": part.rating_v,
        "rating_w": part.rating_w,
        "tolerance": part.tolerance,
        "package": part.package or None,
    }
    return entry


def hardware_entry(item, *, on: str) -> dict:
    """A heatsink or insulating kit as a part: no pins, its thermal resistance as its rating."""
    return {"ref": item.ref, "kind": item.kind, "role": item.kind, "value": None,
            "part_number": item.part_number or None, "description": item.description, "pins": {},
            "rating_c_per_w": item.rating_c_per_w, "package": item.package, "fits": on,
            "sources": list(item.sources)}


def mounting_entry(m) -> dict | None:
    """The heatsink chain as applied: T_j = T_a + P (R_θJC + R_θCS + R_θSA)."""
    if m is None:
        return None
    return {"transistor": m.transistor, "power_w": m.power_w, "ambient_c": m.ambient_c,
            "rth_jc_c_per_w": m.rth_jc_c_per_w,
            "rth_cs_c_per_w": m.rth_cs_c_per_w, "chain_c_per_w": m.chain_c_per_w,
            "rth_sa_c_per_w": m.heatsink.rating_c_per_w, "needed_sa_c_per_w": m.needed_c_per_w,
            "junction_c": m.junction_c, "heatsink_c": m.sink_c,
            "free_air_junction_c": m.free_air_c if m.free_air_c <= m.tj_max_c else None,
            "tj_max_c": m.tj_max_c}


def abuse_entry(case) -> dict:
    """One simulated supply fault: what is drawn and lit, and every part's worst stress against its limit."""
    return {"name": case.name, "title": case.title, "supply_v": case.supply_v, "duration_s": case.duration_s,
            "supply_a": case.supply_a, "feed_a": case.feed_a, "load_fraction": case.load_fraction,
            "led_max_a": case.led_max_a, "guard": case.guard, "ok": case.ok,
            "stresses": [{"ref": st.ref, "quantity": st.quantity, "value": st.value, "limit": st.limit,
                          "unit": st.unit, "ok": st.ok} for st in case.stresses]}


def fault_entry(case) -> dict:
    """One simulated single fault: the part, how it fails, what the light does and every test point's reading."""
    return {"ref": case.ref, "fault": case.fault, "symptom": case.symptom,
            "readings": [{"point": r.point, "on_v": r.on_v, "off_v": r.off_v} for r in case.readings]}


def install_entry(spec) -> dict:
    """Where the design goes, as applied: its profile's name, the ambient sized for and the wire minimum."""
    place = installs.install(spec.install)
    return {"name": place.name, "title": place.title, "ambient_c": spec.ambient_c,
            "wire_min_mm2": place.wire_min_mm2, "supply_system": spec.system}


def corner_entry(c) -> dict:
    """One corner of supply, gain and temperature, as the JSON contract names its keys."""
    return {"supply_v": c.supply_v, "gain": c.gain, "temp_c": c.temp_c, **c.times,
            "light_fraction": c.light_fraction, "drive_fraction": c.drive_fraction,
            "led_current_max_a": c.led_current_max_a, "tj_max_c": c.tj_max_c,
            "led_string_max_a": list(c.led_string_max_a) if c.led_string_max_a is not None else None}


def led_strings_entry(report: Report) -> dict | None:
    """The LED strings' shares of the current with their LEDs at opposite ends of one forward-voltage bin."""
    share = report.design.strings
    if share is None:
        return None
    drawn = report.spread.strings
    series = report.design.netlist.by_role("led_series")
    return {"vf_spread_v": share.vf_spread_v, "string_resistor_ohm": series[0].value if series else None,
            "nominal_typical_a": list(share.typical_a),
            "nominal_spread_a": [list(row) for row in share.nominal_a],
            "ratio_at_nominal": share.ratio, "ratio_min": share.ratio_min,
            "max_a": share.max_a, "max_at": share.max_where, "rated_a": share.rated_a,
            "draws": None if drawn is None else {"max_a": drawn.max_a, "over_rating": drawn.over_rating,
                                                 "ratio_p5": drawn.ratio_p5, "ratio_min": drawn.ratio_min}}


def report_dict(report: Report) -> dict:
    """The JSON report: the contract's keys first, then the rest of what was computed."""
    d = report.design
    spec = d.spec
    out = {
        "title": spec.title,
        "topology": d.topology.name,
        "parts": [part_entry(p) for p in d.netlist.parts]
                 + [hardware_entry(h, on=report.mounting.transistor) for h in
                    (report.mounting.hardware if report.mounting else ())],
        "load_current_a": d.load_current_a,
        "delay_on_s": d.delay_on_s,
        "fade_in_s": d.fade_in_s,
        "hold_off_s": d.hold_off_s,
        "fade_out_s": d.fade_out_s,
        "release_s": d.netlist.release_s,
        "requested": requested_entry(spec),
        "limits": dict(zip(("delay_on_s", "hold_off_s"), delay_limits(spec))),
        "definitions": dict(DEFINITIONS),
        "corners": [corner_entry(c) for c in d.corners],
        "led_current_a": report.led_current_a,
        "led_rated_a": spec.load.current_a if report.led_current_a is not None else None,
        "led_strings": led_strings_entry(report),
        "supply": {"nominal_v": spec.supply.nominal_v, "min_v": spec.supply.min_v, "max_v": spec.supply.max_v},
        "ambient_c": spec.ambient_c,
        "install": install_entry(spec),
        "overdrive_at_min_supply": d.overdrive,
        "reasons": list(d.reasons),
        "steady_load_a": report.steady_a,
        "heat": {
            "peak_power_w": report.heat.peak_power_w,
            "peak_junction_c": report.heat.peak_junction_c,
            "steady_power_w": report.heat.steady_power_w,
            "heatsink_c_per_w": report.heat.heatsink_c_per_w,
            "hover_power_w": report.heat.hover_power_w,
            "fade_energy_j": report.heat.fade_energy_j,
            "junction_limit_c": report.heat.junction_limit_c,
            "fade_peak_junction_c": report.heat.fade_peak_junction_c,
            "mounting": mounting_entry(report.mounting),
            "resistors": [{"ref": r.ref, "power_w": r.power_w, "rating_w": r.rating_w} for r in report.heat.resistors],
        },
        "wires": [{"run": runs.run_of(net), "name": RUN_NAMES[runs.run_of(net)], "colour": runs.colour(spec, net)}
                  for net, _ in d.topology.wiring],
        "harness": {"fuse_a": report.harness.fuse_a, "wire_mm2": report.harness.wire_mm2,
                    "wire_min_mm2": report.harness.wire_min_mm2,
                    "wire_awg": report.harness.wire_awg, "max_current_a": report.harness.max_current_a},
        "bench": [{"point": b.label, "net": b.net, "on_v": list(b.on_v), "off_v": list(b.off_v)}
                  for b in report.bench],
        "tolerance": {
            "draws": report.spread.draws,
            **{name: dict(zip(("p5", "p50", "p95"), getattr(report.spread, name))) for name in TIMES},
            "full_brightness_yield": report.spread.full_brightness_yield,
        },
        "tuning": [{"ref": r.ref, "value": r.value, "direction": r.direction,
                    **{name: getattr(r, name) for name in TIMES}} for r in report.tuning],
        "standby_a": report.standby_a,
        "abuse": [abuse_entry(c) for c in report.abuse],
        "faults": [fault_entry(c) for c in report.faults],
        "wiring": list(report.wiring),
        "cautions": list(report.cautions),
        "board": report.board.as_dict() if report.board is not None else None,
        "spice": spice_deck(d.netlist, light_full=report.full_light),
    }
    return out


def report_json(report: Report) -> str:
    return json.dumps(report_dict(report), indent=2, ensure_ascii=False)
