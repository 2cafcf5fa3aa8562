"""The shopping list for a build night: every part of every kit, merged, with spares.

Pure arithmetic over Reports: each design's netlist gives the parts one kit
holds, its harness and heat give the off-board items (board, terminal block,
fuse, fuse holder, wire, lamp holders, a heatsink and its insulating kit where
one is needed), and lines that are the same thing to buy
(same item, value, rating, tolerance and package) are merged across designs.

    needed = parts per kit × kits, summed over the designs that use the line
    spares = ceil(needed × spares fraction)   (exact: the fraction is a Fraction)
    total  = needed + spares

Wire is counted in metres: ``WIRE_M_PER_RUN`` per build for each off-board run
(always-on +, switched feed, ground), one line per run in the colour the spec
chose, or named by the run when it chose none.
"""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass
from fractions import Fraction
from typing import Sequence

from sheetgen.model.kinds import KINDS
from sheetgen.model.netlist import Part
from sheetgen.sizing import runs
from sheetgen.sizing.report import Report
from sheetgen.inputs.units import format_quantity

__all__ = ["KitUse", "KitLine", "KitItem", "kit_items", "spares_for", "kit_list", "kit_csv", "CSV_COLUMNS", "WIRE_M_PER_RUN"]

#: Metres of wire per build for each colour: enough to reach a fuse box, a switch and a ground
#: point in a van or a cabinet (common practice estimate, no source; measure the real runs).
WIRE_M_PER_RUN = 2

CSV_COLUMNS = ("item", "value", "rating", "tolerance", "package", "unit", "needed", "spares", "total", "designs",
               "note")

# Shopping order: board parts by kind, then what goes on or off the board.
_ORDER = ("resistor", "capacitor", "diode", "npn", "pnp", "nmos", "led", "lamp", "board", "terminal block",
          "lamp holder", "heatsink", "insulating kit", "fuse", "fuse holder", "wire")


@dataclass(frozen=True)
class KitUse:
    """One distinct design in the event and how many kits of it are needed."""

    report: Report
    design: str  # its letter in the pack: "A"
    kits: int  # one per builder


@dataclass(frozen=True)
class KitLine:
    """One line of the shopping list."""

    item: str  # "resistor", "electrolytic capacitor", "wire, red"
    value: str  # "33 kΩ", "BC337-40", "0.5 mm² (20 AWG)"; "" when the item has none
    rating: str  # "0.25 W", "35 V", "5 A"
    tolerance: str  # "±5 %"
    package: str  # "axial", "TO-92"
    unit: str  # "pcs" or "m"
    needed: int
    spares: int
    total: int
    designs: tuple[str, ...]  # letters of the designs that use it
    note: str = ""


@dataclass(frozen=True)
class KitItem:
    """One kind of thing in one kit, with how many of it; ``key`` is what merging compares."""

    kind: str  # one of _ORDER, for sorting
    sort_value: float
    item: str
    value: str
    rating: str
    tolerance: str
    package: str
    unit: str
    quantity: int
    note: str = ""

    @property
    def key(self) -> tuple:
        return (self.item, self.value, self.rating, self.tolerance, self.package, self.unit)


def _rating(part: Part) -> str:
    bits = [format_quantity(part.rating_v, "V")] if part.rating_v else []
    bits += [format_quantity(part.rating_w, "W")] if part.rating_w else []
    return ", ".join(bits)


def _part_item(part: Part) -> KitItem:
    """What to buy for one board part, described the way a shop lists it."""
    tolerance = f"±{part.tolerance * 100:g} %" if part.tolerance is not None else ""
    item = KINDS[part.kind].item
    value, sort_value, rating = part.part_number, 0.0, _rating(part)
    if part.kind == "resistor":
        value, sort_value = format_quantity(part.value, "ohm"), float(part.value)
    elif part.kind == "capacitor":
        value, sort_value = format_quantity(part.value, "F"), float(part.value)
        if "electrolytic" in part.description.lower():
            item = "electrolytic capacitor"
    elif part.kind == "diode" and "zener" in part.description.lower():
        item = "zener diode"
    elif part.kind == "led":
        # "white LED, Vf 3 V at 20 mA": bought by colour and forward voltage, and rated for at
        # least the current it runs at.
        colour_led, _, rest = part.description.partition(", ")
        vf, _, current = rest.partition(" at ")
        item = colour_led if colour_led != "LED" else "LED, any colour with this Vf"
        value, rating = vf, f"runs at {current}" if current else ""
    elif part.kind == "lamp":
        value, rating = part.description.replace(" lamp", ""), ""
    return KitItem(kind=part.kind, sort_value=sort_value, item=item, value=value, rating=rating,
                 tolerance=tolerance, package=part.package, unit="pcs", quantity=1)


def kit_items(report: Report) -> tuple[KitItem, ...]:
    """Everything one kit of this design holds, board parts merged, off-board items after them."""
    merged: dict[tuple, KitItem] = {}
    for part in report.design.netlist.parts:
        it = _part_item(part)
        got = merged.get(it.key)
        merged[it.key] = it if got is None else _with_quantity(got, got.quantity + 1)
    h = report.harness
    wire = f"{h.wire_mm2:g} mm² ({h.wire_awg} AWG)"
    extra = [
        KitItem(kind="fuse", sort_value=h.fuse_a, item="blade fuse", value=f"{h.fuse_a:g} A", rating="", tolerance="",
              package="blade", unit="pcs", quantity=1, note="in the always-on feed, near its source"),
        KitItem(kind="fuse holder", sort_value=h.wire_mm2, item="in-line fuse holder", value="blade fuse",
              rating=f"for {wire} wire", tolerance="", package="in-line", unit="pcs", quantity=1),
    ]
    spec = report.design.spec
    n_runs = len(report.design.topology.wiring)
    lamps = [p for p in report.design.netlist.parts if p.kind == "lamp"]
    ways = n_runs + 2 * len(lamps)
    extra += [
        KitItem(kind="board", sort_value=0.0, item="prototype board", value="stripboard or perfboard", rating="",
                tolerance="", package="", unit="pcs", quantity=1, note="one per kit; cut to the parts"),
        KitItem(kind="terminal block", sort_value=ways, item="screw terminal block", value=f"{ways}-way",
                rating=f"for {wire} wire", tolerance="", package="board mount", unit="pcs", quantity=1,
                note="one position per off-board wire" + (", two per lamp" if lamps else "")),
    ]
    for lamp in lamps:
        extra.append(KitItem(kind="lamp holder", sort_value=lamp.rating_w or 0.0, item="lamp holder",
                             value=f"for the {lamp.description}", rating="", tolerance="", package="",
                             unit="pcs", quantity=1, note="rated for the lamp's wattage and base"))
    for net, _what in report.design.topology.wiring:
        chosen = runs.colour(spec, net)
        item = f"wire, {chosen}" if chosen else f"wire for the {runs.label(spec, net)} run"
        how = "" if chosen else "; colour as you choose"
        extra.append(KitItem(kind="wire", sort_value=h.wire_mm2, item=item, value=wire,
                           rating=f"{h.wire_rating_a:g} A", tolerance="", package="", unit="m",
                           quantity=WIRE_M_PER_RUN,
                           note=f"{runs.label(spec, net)}{how}; {WIRE_M_PER_RUN} m per build per run (estimate)"))
    m = report.mounting
    for hw in (m.hardware if m is not None else ()):
        value = hw.part_number or f"{hw.rating_c_per_w:g} °C/W or better"
        item = "heatsink" if hw.kind == "heatsink" else "insulating kit"
        extra.append(KitItem(kind=item, sort_value=hw.rating_c_per_w, item=item, value=value,
                           rating=f"{hw.rating_c_per_w:g} °C/W", tolerance="", package=hw.package, unit="pcs",
                           quantity=1, note=f"for {m.transistor}: {hw.description}"))
    for it in extra:
        got = merged.get(it.key)
        merged[it.key] = it if got is None else _with_quantity(got, got.quantity + it.quantity)
    return tuple(merged.values())


def _with_quantity(it: KitItem, quantity: int) -> KitItem:
    from dataclasses import replace

    return replace(it, quantity=quantity)


def spares_for(needed: int, fraction: Fraction) -> int:
    """ceil(needed × fraction), exactly: 10 % of 20 is 2, never 3 through a float's last digit."""
    return math.ceil(Fraction(needed) * Fraction(fraction))


def kit_list(uses: Sequence[KitUse], *, spares: Fraction) -> tuple[KitLine, ...]:
    """The merged shopping list over every design's kits, in shopping order."""
    if spares < 0:
        raise ValueError(f"spares must not be negative, got {spares}")
    lines: dict[tuple, tuple[KitItem, int, list[str]]] = {}
    for use in uses:
        if use.kits < 0:
            raise ValueError(f"design {use.design}: kits must not be negative, got {use.kits}")
        for it in kit_items(use.report):
            first, needed, designs = lines.get(it.key, (it, 0, []))
            if use.design not in designs:
                designs.append(use.design)
            lines[it.key] = (first, needed + it.quantity * use.kits, designs)
    ordered = sorted(lines.values(), key=lambda e: (_ORDER.index(e[0].kind), e[0].sort_value, e[0].key))
    out = []
    for it, needed, designs in ordered:
        extra = spares_for(needed, spares)
        out.append(KitLine(item=it.item, value=it.value, rating=it.rating, tolerance=it.tolerance,
                           package=it.package, unit=it.unit, needed=needed, spares=extra, total=needed + extra,
                           designs=tuple(designs), note=it.note))
    return tuple(out)


def kit_csv(lines: Sequence[KitLine]) -> bytes:
    """The list as CSV bytes: RFC 4180 quoting and line ends, UTF-8 with a byte-order mark.

    The mark is there because spreadsheet programs otherwise read the file in
    a legacy code page and print "Î©" for "Ω"; every CSV reader that knows
    UTF-8 ("utf-8-sig" in Python) skips it.
    """
    buffer = io.StringIO(newline="")
    writer = csv.writer(buffer, lineterminator="\r\n")
    writer.writerow(CSV_COLUMNS)
    for line in lines:
        writer.writerow([line.item, line.value, line.rating, line.tolerance, line.package, line.unit, line.needed,
                         line.spares, line.total, " ".join(line.designs), line.note])
    return ("\ufeff" + buffer.getvalue()).encode("utf-8")
