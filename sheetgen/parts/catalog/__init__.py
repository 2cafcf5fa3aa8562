"""The parts catalog: transistors, diodes, LED colours, lamp filament, capacitors, resistors.

The figures live in the YAML files beside this module (each file explains its own
syntax at the top and names the source of every figure); this module reads them
once, checks them, and hands out frozen dataclasses.  Model cards describe the
*typical* part; the min/max figures bound the spread a design must survive.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from importlib import resources
from typing import Any, Iterable

from sheetgen.parts import eseries, led_fit
from sheetgen.model.netlist import Model, Part
from sheetgen.errors import SheetgenError, SpecError
from sheetgen.reader.yamltree import load_data, unknown_key

__all__ = [
    "HfePoint",
    "VceSat",
    "Transistor",
    "Diode",
    "LedColour",
    "Filament",
    "CanSize",
    "CapacitorSeries",
    "ResistorRange",
    "UnknownPart",
    "CatalogDataError",
    "HFE_MAX_FACTOR",
    "transistors",
    "transistor",
    "diodes",
    "diode",
    "led_colours",
    "led_colour",
    "filament",
    "capacitors",
    "resistors",
]

#: Where a datasheet states no maximum hFE, the maximum is taken as this many times the
#: minimum (or the largest maximum stated anywhere on the sheet, whichever is greater).
#: Common practice, no source; not a datasheet figure.
HFE_MAX_FACTOR = 3.0

STEFAN_BOLTZMANN = 5.670374419e-8  # W/(m² K⁴), CODATA 2018


class UnknownPart(LookupError, SheetgenError):
    """A part number or LED colour the catalog does not hold."""


class CatalogDataError(ValueError, SheetgenError):
    """A catalog data file is malformed: a bug in the package, not in the user's input."""


# --------------------------------------------------------------------------- data model


@dataclass(frozen=True)
class HfePoint:
    """One DC current gain line of a datasheet: at ``ic_a`` and ``vce_v``."""

    ic_a: float             # collector current, A (magnitude)
    vce_v: float            # collector-emitter voltage of the test, V (magnitude)
    min: float              # guaranteed minimum
    typ: float | None       # typical, where printed
    max: float | None       # guaranteed maximum, where printed


@dataclass(frozen=True)
class VceSat:
    """A saturation voltage limit at a forced gain ``ic_a / ib_a``."""

    ic_a: float             # collector current, A (magnitude)
    ib_a: float             # base current, A (magnitude)
    max_v: float            # datasheet maximum, V (magnitude)


@dataclass(frozen=True)
class Transistor:
    """A switching transistor with its ratings, thermal path, gain table and model card.

    Voltages and currents are magnitudes for every polarity.  ``hfe`` and
    ``vce_sat`` are empty for a MOSFET; ``vgs_th_v``, ``rds_on_ohm`` and
    ``vgs_max_v`` are None for a bipolar part.
    """

    part_number: str
    polarity: str                 # "npn" | "pnp" | "nmos"
    darlington: bool
    package: str                  # "TO-92", "TO-126", "TO-220"
    vmax_v: float                 # VCEO (or VDSS for a MOSFET)
    imax_a: float                 # IC (or ID) continuous
    ipeak_a: float                # ICM (or IDM): the datasheet's peak (pulsed) rating
    pd_free_air_w: float          # at 25 °C ambient, no heatsink
    tj_max_c: float               # maximum junction temperature
    rth_ja_c_per_w: float         # junction to ambient, free air (max)
    rth_jc_c_per_w: float         # junction to case (max)
    rth_cs_c_per_w: float         # case to sink with compound (typical)
    hfe: tuple[HfePoint, ...]
    vce_sat: tuple[VceSat, ...]
    vgs_th_v: tuple[float, float] | None     # MOSFET threshold, min and max
    rds_on_ohm: float | None                 # MOSFET max on-resistance at rds_on_vgs_v
    vgs_max_v: float | None                  # MOSFET gate-source limit
    model: Model                             # typical part, SPICE subset parameters
    sources: tuple[str, ...]
    rds_on_vgs_v: float | None = None        # gate drive at which rds_on_ohm holds
    vgs_th_at_a: float | None = None         # drain current at which vgs_th_v is measured (VDS = VGS)
    pinout: str = ""                         # leads left to right, printed face towards you, leads down: "CBE"

    @property
    def is_bipolar(self) -> bool:
        return self.polarity in ("npn", "pnp")

    def hfe_min_at(self, ic_a: float) -> float:
        """Guaranteed minimum hFE at ``ic_a``, never optimistic.

        Between datasheet points: straight lines in log hFE against log Ic.  Where
        two lines share a current (different Vce), the lower minimum counts.  Above
        the last point the gain falls at least as 1/Ic (high-injection roll-off), or
        along the last segment if that falls faster.  Below the first point the first
        segment is continued if it rises with current (so the value keeps falling),
        otherwise the first value is held.
        """
        return _falling_curve(self._curve("min"), ic_a)

    def hfe_typ_at(self, ic_a: float) -> float:
        """Typical hFE at ``ic_a``, kept between ``hfe_min_at`` and ``hfe_max_at``.

        A point without a printed typical uses the geometric mean of its minimum
        and (rule) maximum; points sharing a current are averaged geometrically.
        Extrapolated like the minimum.
        """
        typ = _falling_curve(self._curve("typ"), ic_a)
        return min(max(typ, self.hfe_min_at(ic_a)), self.hfe_max_at(ic_a))

    def hfe_max_at(self, ic_a: float) -> float:
        """Maximum hFE at ``ic_a``, never pessimistic (a high gain is the risk here).

        A point without a printed maximum takes the greater of HFE_MAX_FACTOR × its
        minimum and the largest maximum printed on the sheet (common practice).
        Between points: log-log lines, the higher value where two share a current;
        outside the table the end values are held.
        """
        return _held_curve(self._curve("max"), ic_a)

    def _curve(self, which: str) -> tuple[tuple[float, float], ...]:
        if not self.hfe:
            raise ValueError(f"{self.part_number} is a MOSFET: it has no hFE")
        return _hfe_curve(self.hfe, which)


@dataclass(frozen=True)
class Diode:
    """A rectifier, Schottky or zener diode: ratings, one forward-voltage limit, model card.

    A zener also carries its breakdown voltage window ``vz_min_v``–``vz_max_v``
    at test current ``iz_a`` (the card's BV and IBV describe the typical part).
    """

    part_number: str
    package: str
    vrrm_v: float           # repetitive peak reverse voltage (a zener: its nominal Vz)
    if_avg_a: float         # average forward current rating
    vf_max_v: float         # maximum forward voltage at vf_at_a
    vf_at_a: float          # test current of vf_max_v
    model: Model
    sources: tuple[str, ...]
    vz_min_v: float | None = None
    vz_max_v: float | None = None
    iz_a: float | None = None


@dataclass(frozen=True)
class LedColour:
    """Forward voltage of one ordinary 5 mm LED of a colour, and a card that matches it."""

    name: str               # lower case, e.g. "warm white"
    vf_typ_v: float         # typical forward voltage at at_a
    vf_max_v: float         # maximum forward voltage at at_a
    at_a: float             # test current
    vf_low_v: float         # typical forward voltage at 1 % of at_a
    tc_v_per_c: float       # temperature coefficient of Vf at at_a, V/°C (negative)
    vf_bin_v: float         # width of one forward-voltage bin at at_a: how far apart two LEDs of one bag may lie
    model: Model            # diode card (IS, N, RS, EG, XTI) through both points, with the tempco
    sources: tuple[str, ...]

    def is_drift(self, dt_c, *, n: float):
        """Factor on a card's IS that moves its Vf by the colour's tempco over ``dt_c`` from 27 °C."""
        return led_fit.is_drift(dt_c, n=n, tc_v_per_c=self.tc_v_per_c)

    def eg_for(self, *, vj_v: float) -> float:
        """EG of a card of this colour whose junction drops ``vj_v`` at its rated current."""
        return led_fit.eg_for(vj_v=vj_v, tc_v_per_c=self.tc_v_per_c)


@dataclass(frozen=True)
class Filament:
    """Tungsten filament of a small low-voltage bulb, as a thermal state.

    The wire is sized from the rating: a straight wire of diameter d and length L
    at ``t_hot_k`` has resistance 4 rho L / (pi d²) = V² / P and radiates
    emissivity · sigma · T⁴ · pi d L = P from its whole surface (coiling, which
    shades part of it, is left out).  Its mass times the specific heat is the
    heat capacity; ``tau_s`` follows per lamp (see filament.yaml).
    """

    t_room_k: float         # cold filament temperature
    t_hot_k: float          # filament temperature at rated voltage
    alpha: float            # R(T) = R_cold (T / t_room_k) ** alpha
    cold_fraction: float    # R_cold / R_hot
    density_kg_m3: float    # tungsten
    specific_heat_j_kg_k: float   # tungsten, mean over room to hot
    resistivity_hot_ohm_m: float  # tungsten at t_hot_k
    emissivity: float       # total emissivity of tungsten at t_hot_k
    sources: tuple[str, ...]

    def hot_resistance_ohm(self, *, power_w: float, rated_v: float) -> float:
        """Resistance at rated voltage: V² / P."""
        return rated_v * rated_v / power_w

    def radiation_k(self, *, power_w: float) -> float:
        """Radiation constant k (W/K⁴) so that k (t_hot⁴ − t_room⁴) is the rated power."""
        return power_w / (self.t_hot_k ** 4 - self.t_room_k ** 4)

    def wire_m(self, *, power_w: float, rated_v: float) -> tuple[float, float]:
        """(diameter, length) of the filament wire, metres, from the rating."""
        flux = self.emissivity * STEFAN_BOLTZMANN * self.t_hot_k ** 4           # W/m² of surface
        d = (4 * self.resistivity_hot_ohm_m * power_w ** 2 / (math.pi ** 2 * rated_v ** 2 * flux)) ** (1 / 3)
        return d, power_w / (flux * math.pi * d)

    def heat_capacity_j_per_k(self, *, power_w: float, rated_v: float) -> float:
        """Filament heat capacity C_th = mass · specific heat, J/K."""
        d, length = self.wire_m(power_w=power_w, rated_v=rated_v)
        return self.density_kg_m3 * math.pi * d * d / 4 * length * self.specific_heat_j_kg_k

    def tau_s(self, *, power_w: float, rated_v: float) -> float:
        """Small-signal time constant at rated voltage: C_th / (4 k t_hot³ + alpha P / t_hot)."""
        slope = 4.0 * self.radiation_k(power_w=power_w) * self.t_hot_k ** 3 + self.alpha * power_w / self.t_hot_k
        return self.heat_capacity_j_per_k(power_w=power_w, rated_v=rated_v) / slope

    def lamp_model(self, *, power_w: float, rated_v: float, name: str = "LAMP") -> Model:
        """A LAMP model card (R0, TROOM, THOT, ALPHA, K, CTH) for a bulb of this rating."""
        if power_w <= 0 or rated_v <= 0:
            raise ValueError("lamp power and rated voltage must be positive")
        r_hot = self.hot_resistance_ohm(power_w=power_w, rated_v=rated_v)
        return Model(
            name=name,
            kind="LAMP",
            params=(
                ("R0", r_hot * self.cold_fraction),
                ("TROOM", self.t_room_k),
                ("THOT", self.t_hot_k),
                ("ALPHA", self.alpha),
                ("K", self.radiation_k(power_w=power_w)),
                ("CTH", self.heat_capacity_j_per_k(power_w=power_w, rated_v=rated_v)),
            ),
        )


@dataclass(frozen=True)
class CanSize:
    """Case of a radial electrolytic: diameter × height for a capacitance and rating."""

    c_f: float
    rated_v: float
    d_mm: float
    h_mm: float


@dataclass(frozen=True)
class CapacitorSeries:
    """The stocked aluminium electrolytics: values, ratings, tolerance, leakage rule."""

    values_f: tuple[float, ...]     # E6, 1 µF to 10 000 µF
    ratings_v: tuple[float, ...]    # 6.3 … 63 V
    tolerance: float                # fraction, 0.20 = ±20 %
    leakage_k: float                # I = k·C·V (C in F, V in V, I in A), after 2 min
    leakage_floor_a: float          # I is never taken below this
    sizes: tuple[CanSize, ...]      # only where a maker's table was read
    sources: tuple[str, ...]

    def leakage_a(self, c_f: float, rated_v: float) -> float:
        """Maximum leakage after 2 minutes at rated voltage and 20 °C, amperes.

        The makers' rule "0.01·C·V µA (C in µF) or 3 µA, whichever is greater";
        k·C·V with C in farads gives amperes directly.
        """
        return max(self.leakage_k * c_f * rated_v, self.leakage_floor_a)

    def rating_for(self, working_v: float, *, derating: float = 0.8) -> float:
        """Smallest stocked rating with ``working_v`` ≤ ``derating`` × rating.

        The 80 % working-voltage margin is common practice, no source.
        """
        for v in self.ratings_v:
            if working_v <= derating * v * (1 + 1e-12):
                return v
        raise ValueError(
            f"no stocked rating covers {working_v:g} V at {derating:.0%}; "
            f"the largest is {self.ratings_v[-1]:g} V"
        )

    def size_mm(self, c_f: float, rated_v: float) -> tuple[float, float] | None:
        """(diameter, height) in mm where a table was read, else None."""
        for s in self.sizes:
            if math.isclose(s.c_f, c_f, rel_tol=1e-6) and math.isclose(s.rated_v, rated_v):
                return (s.d_mm, s.h_mm)
        return None


@dataclass(frozen=True)
class ResistorRange:
    """The stocked through-hole resistors."""

    series: tuple[str, ...]                           # ("E12", "E24")
    powers_w: tuple[float, ...]                       # ascending
    tolerance_by_type: tuple[tuple[str, float], ...]  # ("metal film", 0.01), ...
    package_by_power: tuple[tuple[float, str], ...]   # (0.25, "axial ..."), ...
    derate_start_c: float                             # full rating up to here
    derate_end_c: float                               # zero rating here
    sources: tuple[str, ...]

    def tolerance(self, kind: str) -> float:
        """Tolerance of a resistor type, e.g. ``"metal film"`` → 0.01."""
        key = _norm_name(kind)
        for name, tol in self.tolerance_by_type:
            if name == key:
                return tol
        raise UnknownPart(f"no resistor type {kind!r}; known: "
                          + ", ".join(n for n, _ in self.tolerance_by_type))

    def package(self, power_w: float) -> str:
        """Package of the stocked part rated ``power_w``."""
        for p, pkg in self.package_by_power:
            if math.isclose(p, power_w):
                return pkg
        raise UnknownPart(f"no stocked {power_w:g} W resistor")

    def derated_w(self, rating_w: float, ambient_c: float) -> float:
        """What a part rated ``rating_w`` may dissipate at ``ambient_c``."""
        if ambient_c <= self.derate_start_c:
            return rating_w
        if ambient_c >= self.derate_end_c:
            return 0.0
        span = self.derate_end_c - self.derate_start_c
        return rating_w * (self.derate_end_c - ambient_c) / span

    def power_for(self, dissipation_w: float, *, ambient_c: float = 25.0,
                  margin: float = 2.0) -> float:
        """Smallest stocked rating that carries ``margin`` × ``dissipation_w`` at ``ambient_c``."""
        need = margin * dissipation_w
        for p in self.powers_w:
            if self.derated_w(p, ambient_c) >= need:
                return p
        raise ValueError(f"{dissipation_w:g} W at {ambient_c:g} °C needs more than "
                         f"the largest stocked {self.powers_w[-1]:g} W part")


# --------------------------------------------------------------------------- hFE curves


def _hfe_curve(points: tuple[HfePoint, ...], which: str) -> tuple[tuple[float, float], ...]:
    """(ic, value) pairs for the min, typ or max curve, one per current, ascending."""
    stated = [p.max for p in points if p.max is not None]
    ceiling = max(stated) if stated else 0.0

    def eff_max(p: HfePoint) -> float:
        return p.max if p.max is not None else max(HFE_MAX_FACTOR * p.min, ceiling)

    by_ic: dict[float, list[float]] = {}
    for p in points:
        if which == "min":
            v = p.min
        elif which == "max":
            v = eff_max(p)
        else:
            v = p.typ if p.typ is not None else math.sqrt(p.min * eff_max(p))
        by_ic.setdefault(p.ic_a, []).append(v)
    out = []
    for ic in sorted(by_ic):
        vs = by_ic[ic]
        if which == "min":
            v = min(vs)
        elif which == "max":
            v = max(vs)
        else:
            v = math.exp(sum(math.log(x) for x in vs) / len(vs))
        out.append((ic, v))
    return tuple(out)


def _interp_loglog(curve, x: float) -> float:
    for (x0, y0), (x1, y1) in zip(curve, curve[1:]):
        if x0 <= x <= x1:
            t = (math.log(x) - math.log(x0)) / (math.log(x1) - math.log(x0))
            return math.exp(math.log(y0) + t * (math.log(y1) - math.log(y0)))
    raise AssertionError("x outside curve")


def _slope(a, b) -> float:
    (x0, y0), (x1, y1) = a, b
    return (math.log(y1) - math.log(y0)) / (math.log(x1) - math.log(x0))


def _check_current(ic_a: float) -> float:
    ic_a = float(ic_a)
    if not math.isfinite(ic_a) or ic_a <= 0:
        raise ValueError(f"collector current must be positive, not {ic_a!r}")
    return ic_a


def _falling_curve(curve, ic_a: float) -> float:
    """Interpolate; above the table fall at least as 1/Ic; below, never rise."""
    ic_a = _check_current(ic_a)
    first, last = curve[0], curve[-1]
    if ic_a > last[0]:
        s = _slope(curve[-2], last) if len(curve) > 1 else -1.0
        s = min(s, -1.0)
        return last[1] * (ic_a / last[0]) ** s
    if ic_a < first[0]:
        s = _slope(first, curve[1]) if len(curve) > 1 else 0.0
        s = max(s, 0.0)
        return first[1] * (ic_a / first[0]) ** s
    return _interp_loglog(curve, ic_a) if len(curve) > 1 else first[1]


def _held_curve(curve, ic_a: float) -> float:
    """Interpolate; outside the table hold the end values."""
    ic_a = _check_current(ic_a)
    if ic_a >= curve[-1][0]:
        return curve[-1][1]
    if ic_a <= curve[0][0]:
        return curve[0][1]
    return _interp_loglog(curve, ic_a)


# --------------------------------------------------------------------------- loading


def _read(filename: str) -> Any:
    """One catalog file through the reader every input file goes through: lines, no tags, no key twice."""
    text = resources.files(__name__).joinpath(filename).read_text(encoding="utf-8")
    try:
        return load_data(text, source=filename)
    except SpecError as exc:
        raise CatalogDataError("\n".join(exc.problems)) from None


class _Entry:
    """Strict access to one YAML mapping: every key must be known, and used."""

    def __init__(self, data: Any, where: str, keys: Iterable[str]):
        if not isinstance(data, dict):
            raise CatalogDataError(f"{where}: expected a mapping")
        unknown = [k for k in data if k not in set(keys)]
        if unknown:
            file, _, key = where.partition(" ")
            lines = getattr(data, "key_lines", {})
            raise CatalogDataError("\n".join(
                f"{file}:{lines.get(k, 0)}: {key + '.' if key else ''}{k}: {unknown_key(str(k), tuple(keys))}"
                for k in unknown))
        self.data, self.where = data, where

    def has(self, key: str) -> bool:
        return self.data.get(key) is not None

    def raw(self, key: str) -> Any:
        if key not in self.data:
            raise CatalogDataError(f"{self.where}: missing {key}")
        return self.data[key]

    def num(self, key: str, *, optional: bool = False) -> float | None:
        if optional and not self.has(key):
            return None
        return _number(self.raw(key), f"{self.where}.{key}")

    def text(self, key: str) -> str:
        value = self.raw(key)
        if not isinstance(value, str) or not value.strip():
            raise CatalogDataError(f"{self.where}.{key}: expected text")
        return value.strip()

    def flag(self, key: str) -> bool:
        value = self.raw(key)
        if not isinstance(value, bool):
            raise CatalogDataError(f"{self.where}.{key}: expected true or false")
        return value

    def sources(self) -> tuple[str, ...]:
        value = self.raw("sources")
        if (not isinstance(value, list) or not value
                or not all(isinstance(s, str) and s.strip() for s in value)):
            raise CatalogDataError(f"{self.where}.sources: expected a non-empty list of text")
        return tuple(s.strip() for s in value)


def _number(value: Any, where: str) -> float:
    if isinstance(value, bool):
        raise CatalogDataError(f"{where}: expected a number, not {value!r}")
    try:
        x = float(value)   # YAML 1.1 reads 2e-14 as text; float() takes it
    except (TypeError, ValueError):
        raise CatalogDataError(f"{where}: expected a number, not {value!r}") from None
    if not math.isfinite(x):
        raise CatalogDataError(f"{where}: expected a finite number")
    return x


_MODEL_KINDS = {"D", "NPN", "PNP", "NMOS", "LAMP"}


def _model(data: Any, where: str) -> Model:
    e = _Entry(data, where, ("name", "kind", "params", "body"))
    kind = e.text("kind")
    if kind not in _MODEL_KINDS:
        raise CatalogDataError(f"{where}.kind: {kind!r} is not one of {sorted(_MODEL_KINDS)}")
    if e.has("body"):
        if e.has("params"):
            raise CatalogDataError(f"{where}: a device built of parts has a body, not params")
        return Model(name=e.text("name"), kind=kind, params=(),
                     body=tuple(_inner_part(p, f"{where}.body[{i}]") for i, p in enumerate(_list(data, "body", where))))
    params = e.raw("params")
    if not isinstance(params, dict) or not params:
        raise CatalogDataError(f"{where}.params: expected a mapping of SPICE parameters")
    return Model(
        name=e.text("name"),
        kind=kind,
        params=tuple((str(k), _number(v, f"{where}.params.{k}")) for k, v in params.items()),
    )


def _inner_part(data: Any, where: str) -> Part:
    """One part of a device's equivalent circuit: ``{ref, kind, pins, value | model}``."""
    e = _Entry(data, where, ("ref", "kind", "pins", "value", "model"))
    pins = e.raw("pins")
    if not isinstance(pins, dict):
        raise CatalogDataError(f"{where}.pins: expected a mapping of pin to net")
    try:
        return Part(ref=e.text("ref"), kind=e.text("kind"), role="inner",
                    pins=tuple((str(k), str(v)) for k, v in pins.items()),
                    value=e.num("value", optional=True),
                    model=_model(e.raw("model"), f"{where}.model") if e.has("model") else None)
    except ValueError as exc:
        raise CatalogDataError(f"{where}: {exc}") from None


def _list(data: Any, key: str, where: str) -> list:
    value = data.get(key) if isinstance(data, dict) else None
    if not isinstance(value, list) or not value:
        raise CatalogDataError(f"{where}: expected a non-empty list under {key!r}")
    return value


_TRANSISTOR_KEYS = (
    "part_number", "polarity", "darlington", "package", "vmax_v", "imax_a", "ipeak_a",
    "pd_free_air_w", "tj_max_c", "rth_ja_c_per_w", "rth_jc_c_per_w", "rth_cs_c_per_w",
    "hfe", "vce_sat", "vgs_th_v", "vgs_th_at_a", "rds_on_ohm", "rds_on_vgs_v", "vgs_max_v", "model",
    "sources", "pinout",
)
_POLARITY_MODEL = {"npn": "NPN", "pnp": "PNP", "nmos": "NMOS"}


def _transistor(data: Any, where: str) -> Transistor:
    e = _Entry(data, where, _TRANSISTOR_KEYS)
    polarity = e.text("polarity")
    if polarity not in _POLARITY_MODEL:
        raise CatalogDataError(f"{where}.polarity: {polarity!r} is not npn, pnp or nmos")
    model = _model(e.raw("model"), f"{where}.model")
    if model.kind != _POLARITY_MODEL[polarity]:
        raise CatalogDataError(f"{where}.model.kind {model.kind} does not match {polarity}")
    hfe: list[HfePoint] = []
    sat: list[VceSat] = []
    vgs_th = None
    if polarity == "nmos":
        for key in ("hfe", "vce_sat"):
            if e.has(key):
                raise CatalogDataError(f"{where}: a MOSFET has no {key}")
        th = e.raw("vgs_th_v")
        if not isinstance(th, list) or len(th) != 2:
            raise CatalogDataError(f"{where}.vgs_th_v: expected [min, max]")
        vgs_th = (_number(th[0], f"{where}.vgs_th_v"), _number(th[1], f"{where}.vgs_th_v"))
        for key in ("vgs_th_at_a", "rds_on_ohm", "rds_on_vgs_v", "vgs_max_v"):
            e.num(key)
    else:
        for key in ("vgs_th_v", "vgs_th_at_a", "rds_on_ohm", "rds_on_vgs_v", "vgs_max_v"):
            if e.has(key):
                raise CatalogDataError(f"{where}: a bipolar part has no {key}")
        for i, p in enumerate(_list(data, "hfe", where)):
            pe = _Entry(p, f"{where}.hfe[{i}]", ("ic_a", "vce_v", "min", "typ", "max"))
            hfe.append(HfePoint(ic_a=pe.num("ic_a"), vce_v=pe.num("vce_v"), min=pe.num("min"),
                                typ=pe.num("typ", optional=True),
                                max=pe.num("max", optional=True)))
        for i, s in enumerate(_list(data, "vce_sat", where)):
            se = _Entry(s, f"{where}.vce_sat[{i}]", ("ic_a", "ib_a", "max_v"))
            sat.append(VceSat(ic_a=se.num("ic_a"), ib_a=se.num("ib_a"), max_v=se.num("max_v")))
    t = Transistor(
        part_number=e.text("part_number"),
        polarity=polarity,
        darlington=e.flag("darlington"),
        package=e.text("package"),
        vmax_v=e.num("vmax_v"),
        imax_a=e.num("imax_a"),
        ipeak_a=e.num("ipeak_a"),
        pd_free_air_w=e.num("pd_free_air_w"),
        tj_max_c=e.num("tj_max_c"),
        rth_ja_c_per_w=e.num("rth_ja_c_per_w"),
        rth_jc_c_per_w=e.num("rth_jc_c_per_w"),
        rth_cs_c_per_w=e.num("rth_cs_c_per_w"),
        hfe=tuple(hfe),
        vce_sat=tuple(sat),
        vgs_th_v=vgs_th,
        vgs_th_at_a=e.num("vgs_th_at_a", optional=True),
        rds_on_ohm=e.num("rds_on_ohm", optional=True),
        vgs_max_v=e.num("vgs_max_v", optional=True),
        model=model,
        sources=e.sources(),
        rds_on_vgs_v=e.num("rds_on_vgs_v", optional=True),
        pinout=e.text("pinout"),
    )
    if sorted(t.pinout) != sorted("DGS" if polarity == "nmos" else "BCE"):
        raise CatalogDataError(f"{where}.pinout: {t.pinout!r} must name each lead once")
    if t.ipeak_a < t.imax_a:
        raise CatalogDataError(f"{where}.ipeak_a: below the continuous imax_a")
    for p in t.hfe:
        if p.ic_a <= 0 or p.min <= 0:
            raise CatalogDataError(f"{where}: hFE points need positive current and minimum")
        if (p.typ is not None and p.typ < p.min) or (p.max is not None and p.max < p.min):
            raise CatalogDataError(f"{where}: hFE point at {p.ic_a} A has typ/max below min")
    return t


def _diode(data: Any, where: str) -> Diode:
    e = _Entry(data, where, ("part_number", "package", "vrrm_v", "if_avg_a", "vf_max_v",
                             "vf_at_a", "model", "sources", "vz_min_v", "vz_max_v", "iz_a"))
    model = _model(e.raw("model"), f"{where}.model")
    if model.kind != "D":
        raise CatalogDataError(f"{where}.model.kind must be D")
    return Diode(part_number=e.text("part_number"), package=e.text("package"),
                 vrrm_v=e.num("vrrm_v"), if_avg_a=e.num("if_avg_a"),
                 vf_max_v=e.num("vf_max_v"), vf_at_a=e.num("vf_at_a"),
                 model=model, sources=e.sources(), vz_min_v=e.num("vz_min_v", optional=True),
                 vz_max_v=e.num("vz_max_v", optional=True), iz_a=e.num("iz_a", optional=True))


def _led(data: Any, where: str) -> LedColour:
    e = _Entry(data, where, ("name", "vf_typ_v", "vf_max_v", "at_a", "vf_low_v", "tc_v_per_c",
                             "vf_bin_v", "model", "sources"))
    given = _model(e.raw("model"), f"{where}.model")
    if given.kind != "D" or [k for k, _ in given.params] != ["RS"]:
        raise CatalogDataError(f"{where}.model: kind D with params {{RS}} only; IS, N and EG are fitted")
    vf, at, vf_low, tc = e.num("vf_typ_v"), e.num("at_a"), e.num("vf_low_v"), e.num("tc_v_per_c")
    if not 0 < vf_low < vf or tc >= 0:
        raise CatalogDataError(f"{where}: vf_low_v must lie between 0 and vf_typ_v, tc_v_per_c below 0")
    rs = given["RS"]
    is_a, n = led_fit.fit(vf_hi_v=vf, i_hi_a=at, vf_lo_v=vf_low, i_lo_a=at / 100, rs_ohm=rs)
    eg = led_fit.eg_for(vj_v=vf - at * rs, tc_v_per_c=tc)
    model = Model(name=given.name, kind="D", params=(
        ("IS", float(f"{is_a:.6g}")), ("N", float(f"{n:.6g}")), ("RS", rs),
        ("EG", float(f"{eg:.6g}")), ("XTI", 0.0)))
    led = LedColour(name=_norm_name(e.text("name")), vf_typ_v=vf, vf_max_v=e.num("vf_max_v"), at_a=at,
                    vf_low_v=vf_low, tc_v_per_c=tc, vf_bin_v=e.num("vf_bin_v"), model=model,
                    sources=e.sources())
    if led.vf_max_v < led.vf_typ_v:
        raise CatalogDataError(f"{where}: vf_max_v below vf_typ_v")
    if not 0 < led.vf_bin_v < led.vf_typ_v / 4:
        raise CatalogDataError(f"{where}: vf_bin_v must be above 0 and well below vf_typ_v")
    return led


def _norm_name(name: str) -> str:
    return " ".join(str(name).lower().replace("-", " ").replace("_", " ").split())


def _norm_part(part_number: str) -> str:
    return str(part_number).strip().upper()


def _index(items, key, kind: str) -> dict:
    out: dict = {}
    for item in items:
        k = key(item)
        if k in out:
            raise CatalogDataError(f"duplicate {kind} {k!r}")
        out[k] = item
    return out


@lru_cache(maxsize=None)
def transistors() -> tuple[Transistor, ...]:
    """Every transistor in the catalog, in file order."""
    data = _read("transistors.yaml")
    parts = tuple(_transistor(p, f"transistors.yaml parts[{i}]")
                  for i, p in enumerate(_list(data, "parts", "transistors.yaml")))
    _index(parts, lambda t: _norm_part(t.part_number), "transistor")
    return parts


@lru_cache(maxsize=None)
def _transistor_index() -> dict[str, Transistor]:
    return {_norm_part(t.part_number): t for t in transistors()}


def transistor(part_number: str) -> Transistor:
    """The transistor with this part number (case-insensitive)."""
    try:
        return _transistor_index()[_norm_part(part_number)]
    except KeyError:
        raise UnknownPart(f"no transistor {part_number!r} in the catalog; known: "
                          + ", ".join(t.part_number for t in transistors())) from None


@lru_cache(maxsize=None)
def diodes() -> tuple[Diode, ...]:
    """Every diode in the catalog, in file order."""
    data = _read("diodes.yaml")
    parts = tuple(_diode(p, f"diodes.yaml parts[{i}]")
                  for i, p in enumerate(_list(data, "parts", "diodes.yaml")))
    _index(parts, lambda d: _norm_part(d.part_number), "diode")
    return parts


def diode(part_number: str) -> Diode:
    """The diode with this part number (case-insensitive)."""
    key = _norm_part(part_number)
    for d in diodes():
        if _norm_part(d.part_number) == key:
            return d
    raise UnknownPart(f"no diode {part_number!r} in the catalog; known: "
                      + ", ".join(d.part_number for d in diodes()))


@lru_cache(maxsize=None)
def led_colours() -> tuple[LedColour, ...]:
    """Every LED colour in the catalog, in file order."""
    data = _read("leds.yaml")
    leds = tuple(_led(c, f"leds.yaml colours[{i}]")
                 for i, c in enumerate(_list(data, "colours", "leds.yaml")))
    _index(leds, lambda c: c.name, "LED colour")
    return leds


def led_colour(name: str) -> LedColour:
    """The LED colour of this name; case, hyphens and underscores do not matter."""
    key = _norm_name(name)
    for c in led_colours():
        if c.name == key:
            return c
    raise UnknownPart(f"no LED colour {name!r}; known: "
                      + ", ".join(c.name for c in led_colours()))


@lru_cache(maxsize=None)
def filament() -> Filament:
    """The tungsten filament used for every lamp load."""
    e = _Entry(_read("filament.yaml"), "filament.yaml",
               ("t_room_k", "t_hot_k", "alpha", "cold_fraction", "density_kg_m3", "specific_heat_j_kg_k",
                "resistivity_hot_ohm_m", "emissivity", "sources"))
    t_room, t_hot, alpha = e.num("t_room_k"), e.num("t_hot_k"), e.num("alpha")
    if not 0 < t_room < t_hot:
        raise CatalogDataError("filament.yaml: need 0 < t_room_k < t_hot_k")
    cold = e.num("cold_fraction", optional=True)
    if cold is None:
        cold = (t_room / t_hot) ** alpha
    return Filament(t_room_k=t_room, t_hot_k=t_hot, alpha=alpha, cold_fraction=cold,
                    density_kg_m3=e.num("density_kg_m3"), specific_heat_j_kg_k=e.num("specific_heat_j_kg_k"),
                    resistivity_hot_ohm_m=e.num("resistivity_hot_ohm_m"), emissivity=e.num("emissivity"),
                    sources=e.sources())


@lru_cache(maxsize=None)
def capacitors() -> CapacitorSeries:
    """The stocked electrolytic capacitors."""
    where = "capacitors.yaml"
    e = _Entry(_read(where), where, ("series", "lo_f", "hi_f", "ratings_v", "tolerance",
                                     "leakage_k", "leakage_floor_a", "sizes", "sources"))
    ratings = e.raw("ratings_v")
    if not isinstance(ratings, list) or not ratings:
        raise CatalogDataError(f"{where}.ratings_v: expected a list")
    sizes = []
    for i, s in enumerate(e.raw("sizes") or []):
        se = _Entry(s, f"{where}.sizes[{i}]", ("c_f", "rated_v", "d_mm", "h_mm"))
        sizes.append(CanSize(c_f=se.num("c_f"), rated_v=se.num("rated_v"),
                             d_mm=se.num("d_mm"), h_mm=se.num("h_mm")))
    return CapacitorSeries(
        values_f=eseries.values(e.text("series"), e.num("lo_f"), e.num("hi_f")),
        ratings_v=tuple(sorted(_number(v, f"{where}.ratings_v") for v in ratings)),
        tolerance=e.num("tolerance"),
        leakage_k=e.num("leakage_k"),
        leakage_floor_a=e.num("leakage_floor_a"),
        sizes=tuple(sizes),
        sources=e.sources(),
    )


@lru_cache(maxsize=None)
def resistors() -> ResistorRange:
    """The stocked resistors."""
    where = "resistors.yaml"
    e = _Entry(_read(where), where, ("series", "powers_w", "tolerance_by_type",
                                     "package_by_power", "derate_start_c", "derate_end_c",
                                     "sources"))
    series = e.raw("series")
    if not isinstance(series, list) or not series:
        raise CatalogDataError(f"{where}.series: expected a list")
    for s in series:
        eseries.tolerance(s)      # raises on an unknown series name
    tols = []
    for i, t in enumerate(_list(e.data, "tolerance_by_type", where)):
        te = _Entry(t, f"{where}.tolerance_by_type[{i}]", ("type", "tolerance"))
        tols.append((_norm_name(te.text("type")), te.num("tolerance")))
    pkgs = []
    for i, p in enumerate(_list(e.data, "package_by_power", where)):
        pe = _Entry(p, f"{where}.package_by_power[{i}]", ("power_w", "package"))
        pkgs.append((pe.num("power_w"), pe.text("package")))
    powers = tuple(_number(p, f"{where}.powers_w") for p in _list(e.data, "powers_w", where))
    if list(powers) != sorted(powers):
        raise CatalogDataError(f"{where}.powers_w: must ascend")
    return ResistorRange(
        series=tuple(str(s).upper() for s in series),
        powers_w=powers,
        tolerance_by_type=tuple(tols),
        package_by_power=tuple(pkgs),
        derate_start_c=e.num("derate_start_c"),
        derate_end_c=e.num("derate_end_c"),
        sources=e.sources(),
    )
