"""The Report: everything the outputs print, computed once by ``analyse``.

Renderers and exporters read these objects and never compute physics.  Field
names carry their SI unit.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from sheetgen.board.model import Board
from sheetgen.sizing.design import Design
from sheetgen.sizing.tolerance import Spread


@dataclass(frozen=True)
class Curves:
    """Nominal transient at nominal supply: the expected timing plot.

    ``light`` is relative light output (1.0 = steady on): proportional to
    current for LEDs, from the filament temperature for lamps.
    """

    t_s: np.ndarray
    load_a: np.ndarray
    light: np.ndarray
    timer_v: np.ndarray


@dataclass(frozen=True)
class ResistorHeat:
    ref: str
    power_w: float  # steady, fully on, maximum supply
    rating_w: float


@dataclass(frozen=True)
class Heat:
    """How hot the switch gets, at maximum supply and the spec's ambient.

    ``peak_power_w`` is the largest instantaneous dissipation during a normal
    fade; ``hover_power_w`` the worst steady case of a feed that hovers and holds
    the transistor half on (the load-line peak).  ``peak_junction_c`` is the
    junction temperature in that worst case without a heatsink.
    ``heatsink_c_per_w`` is the largest heatsink thermal resistance that keeps the
    junction under ``junction_limit_c``, or None when no heatsink is needed.
    """

    transistor: str
    package: str
    ambient_c: float
    supply_v: float
    peak_power_w: float
    fade_energy_j: float
    steady_power_w: float
    hover_power_w: float
    peak_junction_c: float
    junction_limit_c: float
    heatsink_c_per_w: float | None
    power_t_s: np.ndarray  # Q1 dissipation over the fades at maximum supply
    power_w: np.ndarray
    junction_c: np.ndarray  # junction temperature through those fades, from a cold start
    fade_peak_junction_c: float  # the highest point of junction_c
    resistors: tuple[ResistorHeat, ...]


@dataclass(frozen=True)
class Hardware:
    """A part that is bought and fitted but has no place in the netlist: a heatsink, an insulating kit."""

    ref: str  # "HS1", "MK1"
    kind: str  # "heatsink" | "insulator"
    description: str
    part_number: str  # "" when no catalog part is good enough
    rating_c_per_w: float  # its thermal resistance in the chain
    package: str  # the outline it fits: "TO-220"
    sources: tuple[str, ...] = ()


@dataclass(frozen=True)
class Mounting:
    """Q1 on a heatsink through an insulating kit, and what that chain does at worst case.

    The worst case is the feed hovering half-on at maximum supply and the
    spec's ambient: ``power_w`` steady in Q1.  ``junction_c`` is
    T_a + P (R_θJC + R_θCS + R_θSA) with the parts chosen; ``sink_c`` the
    heatsink's own temperature (what a finger touches); ``free_air_c`` the
    junction without the heatsink, which is only meaningful up to ``tj_max_c``.
    """

    transistor: str  # ref, "Q1"
    heatsink: Hardware
    insulator: Hardware | None
    rth_jc_c_per_w: float
    rth_cs_c_per_w: float  # through the insulating kit, or compound alone when there is none
    power_w: float
    ambient_c: float
    junction_c: float
    sink_c: float
    free_air_c: float
    tj_max_c: float
    needed_c_per_w: float  # the largest R_θSA that keeps the junction under the limit with this kit

    @property
    def needed_shown_c_per_w(self) -> float:
        """The needed R_θSA as printed: rounded down to 0.1 °C/W, so a part of the printed figure is good enough."""
        return math.floor(self.needed_c_per_w * 10.0) / 10.0

    @property
    def chain_c_per_w(self) -> float:
        """R_θJC + R_θCS + R_θSA: junction to air through the heatsink."""
        return self.rth_jc_c_per_w + self.rth_cs_c_per_w + self.heatsink.rating_c_per_w

    @property
    def hardware(self) -> tuple[Hardware, ...]:
        return (self.heatsink,) + ((self.insulator,) if self.insulator else ())


@dataclass(frozen=True)
class Stress:
    """One part's worst figure in one supply fault, beside the limit it must stay under."""

    ref: str
    quantity: str  # "reverse voltage", "VCE", "power", "current", "voltage"
    value: float
    limit: float
    unit: str  # "V", "W", "A"

    @property
    def ok(self) -> bool:
        return self.value <= self.limit


@dataclass(frozen=True)
class AbuseCase:
    """A supply fault simulated at DC with the feed on and off: what is drawn, what lights, what is stressed.

    ``load_fraction`` is the load current with the feed on relative to the
    nominal steady current (0 = dark).  ``stresses`` holds every part's worst
    figure over both feed states; ``worst`` the one closest to its limit.
    """

    name: str  # "reverse" | "jump" | "dump"
    title: str  # "Battery reversed"
    supply_v: float  # the always-on wire's voltage against ground (negative when reversed)
    duration_s: float | None  # how long the standard holds it; None for a steady fault
    supply_a: float  # the largest current drawn from the always-on wire, either feed state
    feed_a: float  # the largest current through the switched-feed wire
    load_fraction: float
    led_max_a: float | None  # the highest LED string current, feed on
    stresses: tuple[Stress, ...]
    guard: str  # which part deals with it, in words

    @property
    def worst(self) -> Stress:
        return max(self.stresses, key=lambda st: st.value / st.limit)

    @property
    def ok(self) -> bool:
        return all(st.ok for st in self.stresses)


@dataclass(frozen=True)
class Harness:
    """Off-board wiring: fuse in the always-on feed and the wire it protects."""

    max_current_a: float  # steady load current at maximum supply
    fuse_a: float
    wire_mm2: float
    wire_awg: int
    wire_rating_a: float
    wire_min_mm2: float = 0.0  # the install's smallest conductor (installs.yaml); wire_mm2 is never below it


@dataclass(frozen=True)
class BenchReading:
    """What a meter (black lead on ground) should show at a test point, min-max."""

    label: str  # "TP2 timing capacitor"
    net: str
    on_v: tuple[float, float]
    off_v: tuple[float, float]


@dataclass(frozen=True)
class FaultReading:
    """A test point's meter reading with one fault in, nominal parts and supply, the meter plugged in there."""

    point: str  # the bench table's label, "TP2 timing capacitor"
    net: str
    on_v: float
    off_v: float
    telling: bool  # outside the good board's bench window: this reading tells the fault from a good board


@dataclass(frozen=True)
class FaultCase:
    """One part failed one way (``sizing.faults``): what the light does and what the test points read.

    ``look`` is the group a sheet files the fault under: ``fuse``, ``never``,
    ``stays``, ``string``, ``dim``, ``bright``, ``fade``, ``none`` (no visible
    change in the light) or ``unknown`` (its simulation did not settle).  ``light_on`` and ``light_off`` are the steady light
    with the feed on and off, relative to a good board's with the feed on.
    ``worked_on`` names the part the circuit was simulated with when this part
    gives the same circuit (an LED of the same string), else "".
    """

    ref: str
    fault: str  # "open" | "short" | "reversed" | "leads_swapped"
    symptom: str
    look: str
    readings: tuple[FaultReading, ...]
    light_on: float
    light_off: float
    worked_on: str = ""

    @property
    def telling(self) -> tuple[FaultReading, ...]:
        return tuple(r for r in self.readings if r.telling)


@dataclass(frozen=True)
class TuningRow:
    """Fade times if one part is swapped for its neighbouring standard value."""

    ref: str
    value: float  # the neighbouring value, SI units
    direction: str  # "lower" | "higher"
    fade_in_s: float
    fade_out_s: float
    delay_on_s: float = float("nan")
    hold_off_s: float = float("nan")


@dataclass(frozen=True)
class Brief:
    """The builder's words again, shortened for a wiring card (same steps, same cautions).

    ``steps`` name leads without their descriptions and join a run of LEDs in
    series into one step; ``leads`` says once how to tell the leads apart.
    """

    steps: tuple[str, ...]
    leads: str
    cautions: tuple[str, ...]
    board_steps: tuple[str, ...] = ()  # the same build told by the board: place, cut, link, wire


@dataclass(frozen=True)
class Report:
    design: Design
    curves: Curves
    steady_a: float  # steady load current, nominal supply
    heat: Heat
    harness: Harness
    bench: tuple[BenchReading, ...]
    spread: Spread
    tuning: tuple[TuningRow, ...]
    standby_a: float  # drawn from the always-on supply with the feed off
    wiring: tuple[str, ...]  # numbered steps, in order, without their numbers
    cautions: tuple[str, ...]
    brief: Brief  # the steps and cautions in a card's words
    mounting: Mounting | None = None  # Q1's heatsink and insulating kit, where one is needed
    abuse: tuple[AbuseCase, ...] = ()  # reversed battery, jump start, load dump, where protection is fitted
    board: Board | None = None  # where every on-board part goes, proven against the netlist
    full_light: float = 1.0  # the steady light at nominal, in its load kind's light units: the deck's 1 V
    led_current_a: float | None = None  # each LED string's steady current at nominal supply
    faults: tuple[FaultCase, ...] = ()  # every single fault: its symptom and the readings that tell it
