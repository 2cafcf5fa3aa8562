"""Wire colours the user chooses for the three off-board runs, checked.

Harness colour conventions differ between cars, trucks, boats and buildings
(yellow is a switched feed in one, a bilge pump or an airbag loop in another),
so sheetgen names the runs by what they do and prints a colour only where the
user gave one::

    wires: {always_on: red, switched: white/violet, ground: black}

A colour is a name or a two-letter code of IEC 60757 (``red``, ``RD``), or a
base colour with a tracer stripe written ``base/stripe``.  Green-and-yellow is
refused for the two positive runs: IEC 60445 keeps it for protective earth.
"""

from __future__ import annotations

from typing import Any

__all__ = ["RUNS", "RUN_NAMES", "COLOURS", "check_wires"]

#: The off-board runs by what they do, and the neutral words printed for each.
RUNS = ("always_on", "switched", "ground")
RUN_NAMES = {"always_on": "always-on +", "switched": "switched feed", "ground": "ground"}

#: IEC 60757 colour codes (from memory): code -> name.
COLOURS = {
    "BK": "black", "BN": "brown", "RD": "red", "OG": "orange", "YE": "yellow", "GN": "green", "BU": "blue",
    "VT": "violet", "GY": "grey", "WH": "white", "PK": "pink", "TQ": "turquoise", "GD": "gold", "SR": "silver",
}
_ALIASES = {"purple": "violet", "gray": "grey", "light blue": "blue", "tan": "brown"}
_EARTH = {"green-yellow", "green/yellow", "yellow/green", "gnye", "gn/ye", "ye/gn"}
MAX_CHARS = 30


def _one(word: str) -> str | None:
    """A single colour as its IEC 60757 name, or None."""
    w = word.strip().lower()
    if w.upper() in COLOURS:
        return COLOURS[w.upper()]
    w = _ALIASES.get(w, w)
    return w if w in COLOURS.values() else None


def check_wires(value: Any) -> tuple[dict[str, str], list[tuple[str | None, str]]]:
    """The chosen colours by run, and the problems as ``(run or None, message)``.

    Each colour comes back written as IEC 60757 names (``white/violet``).
    """
    problems: list[tuple[str | None, str]] = []
    if not isinstance(value, dict):
        return {}, [(None, "must be a mapping of runs to colours, e.g. wires: {always_on: red, ground: black}")]
    chosen: dict[str, str] = {}
    for run, colour in value.items():
        if run not in RUNS:
            problems.append((str(run), f"unknown run; the runs are {', '.join(RUNS)}"))
            continue
        if not isinstance(colour, str) or not colour.strip():
            problems.append((run, "must be a colour name such as red or white/violet"))
            continue
        text = colour.strip()
        if len(text) > MAX_CHARS or "\n" in text:
            problems.append((run, f"keep a colour to one line of {MAX_CHARS} characters"))
            continue
        if text.lower().replace(" ", "") in _EARTH:
            if run != "ground":
                problems.append((run, "green-and-yellow is kept for protective earth (IEC 60445); choose another"))
                continue
            chosen[run] = "green/yellow"
            continue
        parts = [_one(p) for p in text.split("/")]
        if len(parts) > 2 or any(p is None for p in parts):
            problems.append((run, f'"{text}" is not a wire colour; use IEC 60757 names (red, black, white, '
                                  'violet ...) or a base colour with a stripe, e.g. white/violet'))
            continue
        chosen[run] = "/".join(p for p in parts if p)
    return chosen, problems
