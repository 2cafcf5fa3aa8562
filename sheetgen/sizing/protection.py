"""Protection against a vehicle's or boat's supply: one netlist step for any stage.

A battery system is reversed now and then, jump-started from 24 V and
load-dumped by its alternator.  Where the install says so (``protect: true``
in installs.yaml: vehicles and boats) or the spec asks (``protection: true``),
the board gets, whatever stage the sizer chose:

- a series Schottky from the always-on wire to a protected rail: a reversed
  battery finds it blocking, so nothing conducts and the light stays dark;
- a TVS across the rail, with its breakdown above the suppressed load dump
  (it does not try to clamp the alternator's own 35 V), taking fast spikes;
- an over-voltage cut-off: a divider from the rail into the base of a small
  NPN that pulls the output stage's drive (base or gate) to ground above a
  jump-start threshold, so the light goes out instead of overrunning its LEDs
  or lamp, and comes back when the supply falls.  A divider's trip moves with
  V_BE (about ±13 % over −20…+60 °C); where that is wider than the gap between
  charging and jump start (a 24 V system: 29.2 V against 36 V) a zener in the
  divider's upper leg sets the trip instead, to its ±5 % tolerance.

The step only reads the netlist (the rail is whatever hangs on ``supply``;
the drive is the switch's base or gate), so it fits stages added later.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from sheetgen.circuits.loads import rated_current_a
from sheetgen.errors import InfeasibleDesign
from sheetgen.inputs.spec import Spec
from sheetgen.model.netlist import GROUND, Netlist, Part
from sheetgen.parts import catalog, eseries
from sheetgen.parts import installs as profiles
from sheetgen.parts.catalog import Diode
from sheetgen.parts.protective import protective

__all__ = ["wanted", "system_of", "apply", "drop_v", "surge_v", "cutoff_trip_v", "cutoff_zener", "jump_v", "CUTOFF_ROLES", "GUARD_ROLES", "RAIL", "SUPPLY"]

SUPPLY = "supply"  # where the always-on wire lands: the Schottky's anode once protected
RAIL = "rail"  # the protected rail every other part hangs from
IF_DERATE = 0.75  # the series diode carries at most 75 % of its average rating (common practice, no source)
TVS_MARGIN = 1.05  # TVS breakdown at least 5 % above the suppressed load dump it must not clamp
CUTOFF_MARGIN_V = 0.5  # the cut-off trips at least this far above the highest normal supply, below a jump
CUTOFF_VBE_V = 0.6  # the cut-off NPN pulls hard at about this base voltage at 25 °C (common practice, no source)
VBE_TEMPCO_V_PER_C = -0.002  # V_BE falls about 2 mV/°C (Sedra & Smith, Microelectronic Circuits; from memory)
COLD_C = -20.0  # the cold corner of the acceptance contract
R_CUTOFF_BIAS_OHM = 10_000.0  # lower divider resistor (common practice, no source)
R_CUTOFF_ZENER_OHM = 1_000.0  # in series with the cut-off zener: limits its current in a load dump (common practice, no source)
CUTOFF_ZENERS = ("1N4752A",)  # zeners the cut-off may use, by part number, in diodes.yaml
CUTOFF_NPN = "BC337-40"
_DRIVE_PINS = ("B", "G")


def system_of(spec: Spec) -> profiles.System:
    """The supply system the spec's span came from, with its abuse figures (scaled to the spec's voltage)."""
    return profiles.supply_for(profiles.install(spec.install), spec.supply.nominal_v, named=spec.system)


def wanted(spec: Spec) -> bool:
    """Protection goes on where the spec asks, else where the install says (a vehicle's or a boat's battery)."""
    if spec.protection is not None:
        return spec.protection
    return profiles.install(spec.install).protect and system_of(spec).abuse


def surge_v(spec: Spec) -> float:
    """The highest steady voltage the board must survive: the load dump, the jump start or the supply max."""
    if not wanted(spec):
        return spec.supply.max_v
    s = system_of(spec)
    return max(spec.supply.max_v, s.dump_v or 0.0, s.jump_v or 0.0)


def _load_max_a(spec: Spec) -> float:
    return rated_current_a(spec.load) * spec.supply.max_v / spec.supply.nominal_v


def _pick(role: str, ok) -> Diode | None:
    return next((d for r, d in protective() if r == role and ok(d)), None)


def _series_diode(spec: Spec) -> Diode:
    need = _load_max_a(spec)
    d = _pick("reverse_polarity", lambda d: d.if_avg_a * IF_DERATE >= need and d.vrrm_v >= spec.supply.max_v * 1.25)
    if d is None:
        raise InfeasibleDesign(f"a load of {need:.2f} A is more than a series Schottky in the catalog carries with "
                               f"{IF_DERATE:.0%} derating.\nWhat would work: a lighter load, or protection: false and "
                               "a reverse-blocking MOSFET of your own")
    return d


def drop_v(spec: Spec) -> float:
    """The series Schottky's forward drop at the nominal load current (its model card), 0 without protection."""
    if not wanted(spec):
        return 0.0
    m = _series_diode(spec).model
    i = rated_current_a(spec.load)
    return float(m["N"] * 0.025852 * np.log1p(i / m["IS"]) + i * m.get("RS", 0.0))


def _parts_for(spec: Spec) -> tuple[Diode, Diode]:
    """(series Schottky, TVS) sized to the system."""
    dump, jump = _dump_jump(spec)
    tvs = _pick("surge", lambda d: d.vz_min_v >= TVS_MARGIN * dump and d.vrrm_v >= jump)
    if tvs is None:
        raise InfeasibleDesign(f"no catalog TVS suits a {spec.supply.nominal_v:g} V system (load dump {dump:.0f} V, "
                               f"jump start {jump:.0f} V).\nWhat would work: a 12 V or 24 V system, or "
                               "protection: false and a guard of your own")
    return _series_diode(spec), tvs


def _dump_jump(spec: Spec) -> tuple[float, float]:
    s = system_of(spec)
    return s.dump_v or spec.supply.max_v * 1.5, s.jump_v or spec.supply.max_v * 1.5


def jump_v(spec: Spec) -> float | None:
    """The jump-start voltage the protected board must ride through, or None without protection."""
    return _dump_jump(spec)[1] if wanted(spec) else None


def _vbe(t_c: float) -> float:
    return CUTOFF_VBE_V + VBE_TEMPCO_V_PER_C * (t_c - 25.0)


def cutoff_trip_v(spec: Spec) -> float | None:
    """The rail voltage at which the cut-off pulls the drive down (nominal, 25 °C), or None if none fits.

    The threshold is a divider into the cut-off NPN's base, so it moves with
    V_BE: it must stay above the highest normal supply at the spec's ambient
    and below the jump-start voltage at −20 °C.  The geometric middle of that
    window is taken; a 24 V system's window is too narrow and gets no cut-off.
    """
    _, jump = _dump_jump(spec)
    lo = (spec.supply.max_v + CUTOFF_MARGIN_V) * CUTOFF_VBE_V / _vbe(spec.ambient_c)
    hi = (jump - CUTOFF_MARGIN_V) * CUTOFF_VBE_V / _vbe(COLD_C)
    return float(np.sqrt(lo * hi)) if lo < hi else None


def cutoff_zener(spec: Spec) -> Diode | None:
    """The zener that sets the cut-off's trip where a plain divider cannot, or None.

    The trip is V_Z + V_BE + R_series · V_BE / R_bias.  Its lowest (the
    zener's printed minimum, V_BE at the spec's ambient) must clear the highest
    normal supply, and its highest (printed maximum, V_BE at −20 °C) must stay
    under the jump start, each by CUTOFF_MARGIN_V.  A zener above about 6 V
    rises with temperature, which only widens that window; it is left out.
    """
    if cutoff_trip_v(spec) is not None:
        return None
    _, jump = _dump_jump(spec)
    for number in CUTOFF_ZENERS:
        z = catalog.diode(number)
        lo = z.vz_min_v + _vbe(spec.ambient_c) * (1 + R_CUTOFF_ZENER_OHM / R_CUTOFF_BIAS_OHM)
        hi = z.vz_max_v + _vbe(COLD_C) * (1 + R_CUTOFF_ZENER_OHM / R_CUTOFF_BIAS_OHM)
        if lo >= spec.supply.max_v + CUTOFF_MARGIN_V and hi <= jump - CUTOFF_MARGIN_V:
            return z
    return None


def _divider(netlist: Netlist, trip_v: float, jump_v: float, npn) -> tuple[float, float]:
    """(upper, lower) divider resistors: the trip ratio, stiff enough to sink the stage's drive in a jump start.

    In a jump start the feed pushes about V_jump / (R_charge + R_base) into
    the drive node the cut-off holds down; the cut-off's base current above the
    trip, (V_jump - V_trip) / R_upper, must be twice that over its minimum gain.
    Stages without those roles keep the lightest divider.
    """
    ratio = trip_v / CUTOFF_VBE_V - 1.0
    upper = R_CUTOFF_BIAS_OHM * ratio
    charge, base = netlist.by_role("charge"), netlist.by_role("base")
    if charge and base:
        i_drive = jump_v / (charge[0].value + base[0].value)
        i_base = 2.0 * i_drive / npn.hfe_min_at(max(i_drive, 1e-4))
        upper = min(upper, (jump_v - trip_v) / i_base)
    upper = eseries.below("E24", upper)
    return upper, eseries.below("E24", upper / ratio)


def _next(prefix: str, netlist: Netlist) -> int:
    taken = [int(p.ref[len(prefix):]) for p in netlist.parts
             if p.ref.startswith(prefix) and p.ref[len(prefix):].isdigit()]
    return max(taken, default=0) + 1


def _diode_part(ref: str, d: Diode, anode: str, cathode: str, role: str, description: str) -> Part:
    return Part(ref=ref, kind="diode", pins=(("A", anode), ("K", cathode)), role=role, model=d.model,
                part_number=d.part_number, description=description, rating_v=d.vrrm_v, package=d.package)


def apply(netlist: Netlist, spec: Spec) -> Netlist:
    """The netlist with its protection added, or unchanged when the spec's supply needs none."""
    if not wanted(spec) or netlist.by_role("reverse_polarity"):
        return netlist
    schottky, tvs = _parts_for(spec)
    dump, jump = _dump_jump(spec)
    moved = tuple(replace(p, pins=tuple((pin, RAIL if net == SUPPLY else net) for pin, net in p.pins))
                  for p in netlist.parts)
    d, r, q = _next("D", netlist), _next("R", netlist), _next("Q", netlist)
    added: tuple[Part, ...] = (
        _diode_part(f"D{d}", schottky, SUPPLY, RAIL, "reverse_polarity",
                    f"series Schottky: a reversed battery finds it blocking, so nothing draws current; "
                    f"{schottky.if_avg_a:g} A, {schottky.vrrm_v:g} V"),
        _diode_part(f"D{d + 1}", tvs, GROUND, RAIL, "surge",
                    f"TVS, breakdown {tvs.vz_min_v:g}-{tvs.vz_max_v:g} V: takes fast spikes on the supply; the "
                    f"alternator's own {dump:g} V load-dump clamp stays below it"),
    )
    trip, zener = cutoff_trip_v(spec), cutoff_zener(spec)
    if trip is not None or zener is not None:
        switch = netlist.by_role("switch")[0]
        drive = next(n for p, n in switch.pins if p in _DRIVE_PINS)
        npn = catalog.transistor(CUTOFF_NPN)
        if zener is not None:
            trip = zener.vrrm_v + CUTOFF_VBE_V * (1 + R_CUTOFF_ZENER_OHM / R_CUTOFF_BIAS_OHM)
            added += (
                Part(ref=f"R{r}", kind="resistor", pins=(("1", RAIL), ("2", "cut_z")), role="cutoff_series",
                     value=R_CUTOFF_ZENER_OHM, description="cut-off zener's series resistor: limits its current "
                     "in a load dump", rating_w=0.25, tolerance=0.05, package="axial"),
                _diode_part(f"D{d + 2}", zener, "cut_b", "cut_z", "cutoff_zener",
                            f"{zener.vrrm_v:g} V zener: sets the cut-off's trip to within its "
                            f"{zener.vz_min_v:g}-{zener.vz_max_v:g} V"),
            )
            bias = R_CUTOFF_BIAS_OHM
        else:
            r_top, bias = _divider(netlist, trip, jump, npn)
            added += (Part(ref=f"R{r}", kind="resistor", pins=(("1", RAIL), ("2", "cut_b")), role="cutoff_series",
                           value=r_top, description="cut-off divider, upper: sets the trip voltage", rating_w=0.25,
                           tolerance=0.05, package="axial"),)
        added += (
            Part(ref=f"R{r + 1}", kind="resistor", pins=(("1", "cut_b"), ("2", GROUND)), role="cutoff_bias",
                 value=bias, description="cut-off divider, lower: holds the cut-off off at normal "
                 "supply", rating_w=0.25, tolerance=0.05, package="axial"),
            Part(ref=f"Q{q}", kind="npn", pins=(("C", drive), ("B", "cut_b"), ("E", GROUND)), role="cutoff",
                 model=npn.model, part_number=npn.part_number,
                 description=f"over-voltage cut-off: above about {trip:.0f} V on the rail (a {jump:g} V jump "
                             f"start, a load dump) it holds {switch.ref} off, so the light goes out instead of "
                             "overrunning",
                 rating_v=npn.vmax_v, rating_w=npn.pd_free_air_w, package=npn.package),
        )
    label = f"TP{len(netlist.probes) + 1} protected rail"
    return replace(netlist, parts=moved + added, probes=netlist.probes + ((label, RAIL),))


CUTOFF_ROLES = ("cutoff", "cutoff_series", "cutoff_zener", "cutoff_bias")
#: Every part the supply guard adds, by role.
GUARD_ROLES = ("reverse_polarity", "surge") + CUTOFF_ROLES
