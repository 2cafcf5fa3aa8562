"""The off-board runs (always-on +, switched feed, ground) named by function, with the user's colours.

The topology says which board net each off-board connection lands on; this
module names the run the way every output prints it, so the sheet, the card
and the kit list cannot call one wire by two names.
"""

from __future__ import annotations

from sheetgen.inputs.spec import Spec
from sheetgen.inputs.wires import RUN_NAMES
from sheetgen.model.netlist import GROUND

__all__ = ["NET_RUN", "run_of", "label", "colour"]

#: Board net of each off-board run (every topology lands them on these nets).
NET_RUN = {"supply": "always_on", "feed": "switched", GROUND: "ground"}


def run_of(net: str) -> str:
    """The run an off-board net belongs to."""
    return NET_RUN[net]


def colour(spec: Spec, net: str) -> str | None:
    """The colour the user chose for the run on ``net``, or None."""
    return spec.wire_colour(run_of(net))


def label(spec: Spec, net: str) -> str:
    """"always-on +" or, with a chosen colour, "always-on +, red"."""
    name = RUN_NAMES[run_of(net)]
    chosen = colour(spec, net)
    return f"{name}, {chosen}" if chosen else name
