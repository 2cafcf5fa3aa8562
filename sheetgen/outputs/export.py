"""Machine-readable outputs of a Report: the JSON report and the SPICE deck."""

from __future__ import annotations

import json

from sheetgen.sizing.report import Report
from sheetgen.engine.measure import DEFINITIONS
from sheetgen.outputs.spice import spice_deck


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


def report_dict(report: Report) -> dict:
    """The JSON report: the contract's keys first, then the rest of what was computed."""
    d = report.design
    spec = d.spec
    out = {
        "title": spec.title,
        "topology": d.topology.name,
        "parts": [part_entry(p) for p in d.netlist.parts],
        "load_current_a": d.load_current_a,
        "fade_in_s": d.fade_in_s,
        "fade_out_s": d.fade_out_s,
        "release_s": d.netlist.release_s,
        "requested": {"fade_in_s": spec.fade_in_s, "fade_out_s": spec.fade_out_s},
        "definitions": dict(DEFINITIONS),
        "supply": {"nominal_v": spec.supply.nominal_v, "min_v": spec.supply.min_v, "max_v": spec.supply.max_v},
        "ambient_c": spec.ambient_c,
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
            "resistors": [{"ref": r.ref, "power_w": r.power_w, "rating_w": r.rating_w} for r in report.heat.resistors],
        },
        "harness": {"fuse_a": report.harness.fuse_a, "wire_mm2": report.harness.wire_mm2,
                    "wire_awg": report.harness.wire_awg, "max_current_a": report.harness.max_current_a},
        "bench": [{"point": b.label, "net": b.net, "on_v": list(b.on_v), "off_v": list(b.off_v)}
                  for b in report.bench],
        "tolerance": {
            "draws": report.spread.draws,
            "fade_in_s": dict(zip(("p5", "p50", "p95"), report.spread.fade_in_s)),
            "fade_out_s": dict(zip(("p5", "p50", "p95"), report.spread.fade_out_s)),
            "full_brightness_yield": report.spread.full_brightness_yield,
        },
        "tuning": [{"ref": r.ref, "value": r.value, "direction": r.direction, "fade_in_s": r.fade_in_s,
                    "fade_out_s": r.fade_out_s} for r in report.tuning],
        "standby_a": report.standby_a,
        "wiring": list(report.wiring),
        "cautions": list(report.cautions),
        "board": report.board.as_dict() if report.board is not None else None,
        "spice": spice_deck(d.netlist),
    }
    return out


def report_json(report: Report) -> str:
    return json.dumps(report_dict(report), indent=2, ensure_ascii=False)
