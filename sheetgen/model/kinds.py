"""Device kinds: what each kind of part is, in one entry per kind.

Every layer that treats a part by its kind reads it here: the netlist checks
pins against ``pins``, the SPICE writer takes the element letter and the model
card kind, the wiring steps take the lead words, the kit list the shop word.  The physics of a kind lives with the engine
(:mod:`sheetgen.engine.elements`), keyed by the same name.  Adding a kind is
one entry here, one there, and its tests.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping


@dataclass(frozen=True)
class DeviceKind:
    """One kind of part and everything that is true of every part of that kind."""

    name: str                       # the netlist's kind, "npn"
    pins: tuple[str, ...]           # pin names in SPICE element order
    letter: str                     # SPICE element letter, "Q"
    model_kind: str | None          # the model card kind it needs ("NPN"), None for R and C
    item: str                       # what a shop calls it, for the kit list
    lead_words: Mapping[str, str]   # pin -> how a builder finds that lead, in a wiring step
    lead_short: Mapping[str, str]   # pin -> the same lead in a card's fewer words


_BJT_LEADS = {"C": "collector", "B": "base", "E": "emitter"}
_MOS_LEADS = {"D": "drain", "G": "gate", "S": "source"}
_LAMP_LEADS = {"1": "terminal", "2": "other terminal"}

KINDS: dict[str, DeviceKind] = {k.name: k for k in (
    DeviceKind("resistor", ("1", "2"), "R", None, "resistor", {}, {}),
    DeviceKind("capacitor", ("+", "-"), "C", None, "capacitor",
               {"+": "+ lead (longer lead)", "-": "− lead (striped side)"}, {"+": "+", "-": "−"}),
    DeviceKind("diode", ("A", "K"), "D", "D", "diode",
               {"A": "anode (plain end)", "K": "cathode (banded end)"}, {"A": "anode", "K": "cathode"}),
    DeviceKind("led", ("A", "K"), "D", "D", "LED",
               {"A": "anode (longer lead)", "K": "cathode (shorter lead, flat side)"},
               {"A": "anode", "K": "cathode"}),
    DeviceKind("npn", ("C", "B", "E"), "Q", "NPN", "NPN transistor", _BJT_LEADS, _BJT_LEADS),
    DeviceKind("pnp", ("C", "B", "E"), "Q", "PNP", "PNP transistor", _BJT_LEADS, _BJT_LEADS),
    DeviceKind("nmos", ("D", "G", "S"), "X", "NMOS", "N-channel MOSFET", _MOS_LEADS, _MOS_LEADS),
    DeviceKind("lamp", ("1", "2"), "X", "LAMP", "lamp", _LAMP_LEADS, _LAMP_LEADS),
)}


def kind(name: str) -> DeviceKind:
    """The entry for ``name``; a ValueError names the kinds there are."""
    try:
        return KINDS[name]
    except KeyError:
        raise ValueError(f"unknown device kind {name!r} (one of {', '.join(KINDS)})") from None


__all__ = ["DeviceKind", "KINDS", "kind"]
