"""The readable terminal summary of a Report."""

from __future__ import annotations

from sheetgen.sizing import mounting
from sheetgen.sizing.report import Report
from sheetgen.engine.measure import DEFINITIONS, FULL_MEANS
from sheetgen.outputs.wording import current_stage_words, draws_bin_words, led_dimming_words, led_string_words, watts
from sheetgen.sizing.size import delay_limits
from sheetgen.inputs.units import format_quantity
from sheetgen.outputs.wording import refs_text, standby_text


def _value(part) -> str:
    if part.kind == "resistor":
        w = f", {part.rating_w:g} W" if part.rating_w else ""
        return f"{format_quantity(part.value, 'ohm')}{w}"
    if part.kind == "capacitor":
        v = f", {part.rating_v:g} V" if part.rating_v else ""
        return f"{format_quantity(part.value, 'F')}{v}"
    return part.part_number or part.description


def _led_line(report: Report) -> list[str]:
    return [f"  {words}" for words in (led_dimming_words(report), led_string_words(report)) if words]


def _drive_line(report: Report) -> str:
    d = report.design
    low = d.spec.supply.min_v
    current = current_stage_words(report)
    if current:
        return f"  {current}"
    if d.topology.stage.kind == "mosfet":
        return f"  gate drive at {low:g} V: {d.overdrive:.2f}× the gate voltage its on-resistance is rated at"
    return f"  base drive at {low:g} V and minimum gain: {d.overdrive:.2f}× what saturation needs"


def _parts_lines(report: Report) -> list[str]:
    """One line per part role and value (R1 and R2 stay apart though equal), in aligned columns."""
    groups: dict[tuple, list] = {}
    for p in report.design.netlist.parts:
        key = (p.kind, p.value, p.model.name if p.model else None, p.rating_w, p.rating_v, p.description)
        groups.setdefault(key, []).append(p)
    rows = []
    for group in groups.values():
        p = group[0]
        if p.kind in ("led", "lamp"):  # the description is the value: say it once
            rows.append((refs_text([q.ref for q in group]), p.description, "the load"))
        else:
            rows.append((refs_text([q.ref for q in group]), _value(p), p.description))
    w0 = max(len(r[0]) for r in rows)
    w1 = max(len(r[1]) for r in rows)
    return [f"    {a:<{w0}}  {b:<{w1}}  {c}" for a, b, c in rows]


def _bound(asked: float | None, limit: float) -> str:
    """A delay's target where one was asked for, else its limit."""
    return f"asked {asked:g} s" if asked else f"at most {limit:g} s"


def summary_text(report: Report) -> str:
    d = report.design
    spec = d.spec
    s = spec.supply
    sp = report.spread
    on_max, off_max = delay_limits(spec)
    h = report.heat
    lines = [
        spec.title,
        f"  supply {s.nominal_v:g} V (from {s.min_v:g} to {s.max_v:g} V), ambient up to {spec.ambient_c:g} °C",
        f"  topology: {d.topology.title}",
        f"  load current {format_quantity(d.load_current_a, 'A')} (steady, nominal supply)",
        f"  delay on {d.delay_on_s:6.2f} s  ({_bound(spec.delay_on_s, on_max)}): {DEFINITIONS['delay_on_s']}",
        f"  fade-in  {d.fade_in_s:6.2f} s  (asked {spec.fade_in_s:g} s): {DEFINITIONS['fade_in_s']}",
        f"  hold off {d.hold_off_s:6.2f} s  ({_bound(spec.delay_off_s, off_max)}): {DEFINITIONS['hold_off_s']}",
        f"  fade-out {d.fade_out_s:6.2f} s  (asked {spec.fade_out_s:g} s): {DEFINITIONS['fade_out_s']}",
        f"  ({FULL_MEANS})",
        *_led_line(report),
        _drive_line(report),
        f"  on a real build (parts, gain, supply and ambient over {sp.draws} tolerance draws, 5–95 %): the fade-in "
        f"lasts between {sp.fade_in_s[0]:.1f} s and {sp.fade_in_s[2]:.1f} s, the fade-out between "
        f"{sp.fade_out_s[0]:.1f} s and {sp.fade_out_s[2]:.1f} s; {sp.full_brightness_yield:.1%} reach full brightness",
        *([f"  ({bins})"] if (bins := draws_bin_words(report)) else []),
        f"  Q1 heat at {h.supply_v:g} V, {h.ambient_c:g} °C: peak {watts(h.peak_power_w)} while fading, "
        f"{watts(h.steady_power_w)} fully on; " + _hover_words(report),
        f"  fuse {report.harness.fuse_a:g} A, wire {report.harness.wire_mm2:g} mm² ({report.harness.wire_awg} AWG); "
        f"standby drain {standby_text(report.standby_a)}",
        "",
        "  parts:",
    ]
    lines += _parts_lines(report)
    lines.append("")
    lines += [f"  {r}" for r in d.reasons]
    return "\n".join(lines)


def _hover_words(report: Report) -> str:
    """The hovering-feed junction as the sheet says it: on the heatsink chosen, never a figure past the rating."""
    h, m = report.heat, report.mounting
    if m is None:
        sink = ("no heatsink needed" if h.heatsink_c_per_w is None
                else f"heatsink {h.heatsink_c_per_w:.1f} °C/W or better")
        return f"junction up to {h.peak_junction_c:.0f} °C if the feed hovers ({sink})"
    name = f"{m.heatsink.ref} {m.heatsink.part_number}".strip()
    return (f"junction up to {m.junction_c:.0f} °C if the feed hovers, on heatsink {name} "
            f"({m.heatsink.rating_c_per_w:g} °C/W, needed {m.needed_shown_c_per_w:g} °C/W or better); "
            f"Q1 {mounting.free_air_words(m)}")
