"""Footprints on a 0.1 in board: how far apart a part's leads may land, and how much room its body takes.

The figures live in ``catalog/footprints.yaml`` with their sources; this module
reads them once and answers one question per part: which hole spacings (in
pitches) it accepts and how wide its body is.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from importlib import resources

from sheetgen.errors import SpecError
from sheetgen.model.netlist import Part
from sheetgen.parts.catalog import CatalogDataError
from sheetgen.reader.yamltree import load_data


@dataclass(frozen=True)
class Footprint:
    """What a part needs on the board.

    ``spans`` are the allowed distances between its first and last lead, in
    pitches, best first; ``spacing_mm`` is the range of lead spacings (mm) the
    part accepts, which those spans honour.  ``body_mm`` is (across, along)
    the line of its leads; ``style`` tells a drawing what to draw.
    """

    name: str
    style: str  # "axial" | "inline" | "radial" | "led"
    leads: int
    spans: tuple[int, ...]
    spacing_mm: tuple[float, float]
    body_mm: tuple[float, float]
    upright: bool = False  # an axial part may stand on end, leads one pitch apart

    def allows(self, distance_mm: float, *, pitch_mm: float) -> bool:
        """Whether leads ``distance_mm`` apart (first to last) suit this part."""
        if self.upright and abs(distance_mm - pitch_mm) < 1e-6:
            return True
        lo, hi = self.spacing_mm
        return lo - 1e-6 <= distance_mm <= hi + 1e-6


@dataclass(frozen=True)
class _Data:
    pitch_mm: float
    axial: tuple[dict, ...]
    inline: tuple[dict, ...]
    radial: tuple[tuple[float, float], ...]
    radial_bend_mm: float
    cases: tuple[tuple[float, tuple[tuple[float, float], ...]], ...]
    led: dict


_KEYS = {"pitch_mm", "axial", "inline", "radial", "radial_bend_mm", "cases", "led", "sources"}


@lru_cache(maxsize=1)
def _data() -> _Data:
    text = resources.files("sheetgen.parts.catalog").joinpath("footprints.yaml").read_text(encoding="utf-8")
    try:
        raw = load_data(text, source="footprints.yaml")
    except SpecError as exc:
        raise CatalogDataError("\n".join(exc.problems)) from None
    if not isinstance(raw, dict) or set(raw) != _KEYS:
        raise CatalogDataError(f"footprints.yaml: keys must be {sorted(_KEYS)}")
    cases = tuple(sorted((float(c["rated_v"]), tuple((float(a), float(b)) for a, b in c["sizes"]))
                         for c in raw["cases"]))
    return _Data(pitch_mm=float(raw["pitch_mm"]), axial=tuple(raw["axial"]), inline=tuple(raw["inline"]),
                 radial=tuple((float(r["diameter_mm"]), float(r["spacing_mm"])) for r in raw["radial"]),
                 radial_bend_mm=float(raw["radial_bend_mm"]), cases=cases, led=dict(raw["led"]))


def pitch_mm() -> float:
    return _data().pitch_mm


def _spans(lo_mm: float, hi_mm: float, pitch: float) -> tuple[int, ...]:
    first = max(1, math.ceil(lo_mm / pitch - 1e-9))
    last = math.floor(hi_mm / pitch + 1e-9)
    return tuple(range(first, last + 1))


def can_diameter_mm(c_f: float, rated_v: float) -> float:
    """The case diameter of an electrolytic of this capacitance and rating."""
    cases = _data().cases
    row = next((sizes for v, sizes in cases if v >= rated_v - 1e-9), cases[-1][1])
    return next((d for c_max, d in row if c_f <= c_max * (1 + 1e-9)), row[-1][1])


def footprint(part: Part, *, package: str = "") -> Footprint:
    """The footprint of a netlist part; ``package`` overrides the part's own (a transistor's case)."""
    d = _data()
    p = d.pitch_mm
    if part.kind in ("resistor", "diode"):
        power = part.rating_w or 0.25
        rows = [a for a in d.axial if part.kind in a["kinds"]]
        if part.kind == "resistor":
            rows = sorted(rows, key=lambda a: a["max_power_w"])
            row = next((a for a in rows if a["max_power_w"] >= power - 1e-9), rows[-1])
        else:
            row = rows[0]
        lo, hi = float(row["min_span_mm"]), float(row["max_span_mm"])
        spans = _spans(lo, hi, p)[:3]
        upright = bool(row["upright"])
        return Footprint(name=row["name"], style="axial", leads=2, spans=((1,) if upright else ()) + spans,
                         spacing_mm=(lo, hi), body_mm=tuple(float(x) for x in row["body_mm"]), upright=upright)
    if part.kind == "capacitor":
        dia = can_diameter_mm(part.value or 0.0, part.rating_v or 16.0)
        spacing = next((s for dd, s in d.radial if dd >= dia - 1e-9), d.radial[-1][1])
        lo, hi = spacing - d.radial_bend_mm, spacing + d.radial_bend_mm
        spans = _spans(lo, hi, p)
        if not spans:
            raise CatalogDataError(f"footprints.yaml: no hole spacing suits a {spacing} mm radial lead")
        return Footprint(name=f"radial {dia:g} mm", style="radial", leads=2, spans=spans, spacing_mm=(lo, hi),
                         body_mm=(dia, dia))
    if part.kind == "led":
        s = float(d.led["spacing_mm"])
        return Footprint(name="5 mm LED", style="led", leads=2, spans=(round(s / p),), spacing_mm=(s, s),
                         body_mm=(float(d.led["body_mm"]),) * 2)
    if part.kind in ("npn", "pnp", "nmos"):
        case = package or part.package
        row = next((r for r in d.inline if case in r["packages"]), None)
        if row is None:
            raise CatalogDataError(f"footprints.yaml: no footprint for package {case!r} ({part.ref})")
        pitch, bend = float(row["pitch_mm"]), float(row["bend_mm"])
        lo, hi = 2 * (pitch - bend), 2 * (pitch + bend)
        return Footprint(name=row["name"], style="inline", leads=3, spans=_spans(lo, hi, p), spacing_mm=(lo, hi),
                         body_mm=tuple(float(x) for x in row["body_mm"]))
    raise CatalogDataError(f"footprints.yaml: no footprint for a {part.kind} ({part.ref})")
