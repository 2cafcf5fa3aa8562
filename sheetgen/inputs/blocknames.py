"""The block names layouts may use: one table the layout reader checks against and a renderer fills.

The table lives below the renderers so that reading (and checking) a layout never
imports a PDF library.  Each renderer registers one function per name with
``@TABLE.register(name)``; a test checks every name has exactly one.  Adding a
block is a name here and its registered function there.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

__all__ = ["BlockTable", "Entry", "SHEET_BLOCKS", "CARD_BLOCKS"]


@dataclass(frozen=True)
class Entry:
    """A registered block: the function that makes it and how the renderer places it."""

    maker: Callable  # (report, frame) -> Flowable; the renderer defines what a frame is
    whole: bool = False  # moves to the next page rather than split


class BlockTable:
    """Names in the order layouts document them; ``makers`` is filled by the renderer at import."""

    def __init__(self, names: tuple[str, ...]) -> None:
        self.names = names
        self.makers: dict[str, Entry] = {}

    def register(self, name: str, *, whole: bool = False) -> Callable[[Callable], Callable]:
        if name not in self.names:
            raise KeyError(f"block '{name}' is not in the table ({', '.join(self.names)})")

        def add(maker: Callable) -> Callable:
            if name in self.makers:
                raise KeyError(f"block '{name}' is registered twice")
            self.makers[name] = Entry(maker, whole)
            return maker
        return add

    def entry(self, name: str) -> Entry:
        return self.makers[name]


#: Blocks of a build sheet (``blocks:`` in a sheet layout).
SHEET_BLOCKS = BlockTable(("summary", "schematic", "parts", "timing", "heat", "bench", "faults", "tuning",
                           "wiring", "cautions", "board"))

#: Blocks of a wiring card (``front:`` and ``back:`` in a card layout).
CARD_BLOCKS = BlockTable(("schematic", "parts", "harness", "steps", "readings", "cautions", "board"))
