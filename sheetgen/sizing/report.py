"""The Report: everything the outputs print, computed once by ``analyse``.

Renderers and exporters read these objects and never compute physics.  Field
names carry their SI unit.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sheetgen.board.model import Board
from sheetgen.sizing.size import Design
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
class Harness:
    """Off-board wiring: fuse in the always-on feed and the wire it protects."""

    max_current_a: float  # steady load current at maximum supply
    fuse_a: float
    wire_mm2: float
    wire_awg: int
    wire_rating_a: float


@dataclass(frozen=True)
class BenchReading:
    """What a meter (black lead on ground) should show at a test point, min-max."""

    label: str  # "TP2 timing capacitor"
    net: str
    on_v: tuple[float, float]
    off_v: tuple[float, float]


@dataclass(frozen=True)
class TuningRow:
    """Fade times if one part is swapped for its neighbouring standard value."""

    ref: str
    value: float  # the neighbouring value, SI units
    direction: str  # "lower" | "higher"
    fade_in_s: float
    fade_out_s: float


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
    board: Board | None = None  # where every on-board part goes, proven against the netlist
