"""Heatsinks and insulating kits as bought: their thermal resistances with sources.

Read from ``catalog/heatsinks.yaml``; choosing one for a design is the
sizing layer's job (``sizing/mounting.py``).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

from sheetgen.parts.catalog import CatalogDataError, _Entry, _list, _read

__all__ = ["Heatsink", "Insulator", "heatsinks", "insulator_for"]


@dataclass(frozen=True)
class Heatsink:
    """A heatsink: R_θSA in natural convection with one device on it."""

    part_number: str
    maker: str
    outline: str  # the package it takes: "TO-220"
    rating_c_per_w: float  # heatsink to ambient
    description: str
    sources: tuple[str, ...]


@dataclass(frozen=True)
class Insulator:
    """An insulating mounting kit: R_θCS through it with thermal compound."""

    name: str
    outline: str
    rating_c_per_w: float  # case to heatsink
    contents: str
    sources: tuple[str, ...]


_FILE = "heatsinks.yaml"


@lru_cache(maxsize=None)
def _data() -> tuple[tuple[Heatsink, ...], tuple[Insulator, ...]]:
    top = _Entry(_read(_FILE), _FILE, ("heatsinks", "insulators"))
    sinks, kits = [], []
    for i, raw in enumerate(_list(top.data, "heatsinks", _FILE)):
        e = _Entry(raw, f"{_FILE}.heatsinks[{i}]", ("part_number", "maker", "outline", "rating_c_per_w",
                                                     "description", "sources"))
        sinks.append(Heatsink(part_number=str(e.raw("part_number")), maker=e.text("maker"), outline=e.text("outline"),
                              rating_c_per_w=e.num("rating_c_per_w"), description=e.text("description"),
                              sources=e.sources()))
    for i, raw in enumerate(_list(top.data, "insulators", _FILE)):
        e = _Entry(raw, f"{_FILE}.insulators[{i}]", ("name", "outline", "rating_c_per_w", "contents", "sources"))
        kits.append(Insulator(name=e.text("name"), outline=e.text("outline"), rating_c_per_w=e.num("rating_c_per_w"),
                              contents=e.text("contents"), sources=e.sources()))
    if any(s.rating_c_per_w <= 0 for s in sinks) or any(k.rating_c_per_w <= 0 for k in kits):
        raise CatalogDataError(f"{_FILE}: thermal resistances must be positive")
    return tuple(sinks), tuple(kits)


def heatsinks(outline: str) -> tuple[Heatsink, ...]:
    """The heatsinks for a package, best (lowest °C/W) last."""
    return tuple(sorted((s for s in _data()[0] if s.outline == outline), key=lambda s: -s.rating_c_per_w))


def insulator_for(outline: str) -> Insulator | None:
    """The insulating kit for a package, or None when the catalog has none."""
    return next((k for k in _data()[1] if k.outline == outline), None)
