"""Install profiles: the supply, air, wire and words of each place a fader goes.

The figures live in ``catalog/installs.yaml`` with their sources; this module
only reads and checks them, so adding a kind of install or a supply system is
an edit to that file alone.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from functools import lru_cache

from sheetgen.parts.catalog import CatalogDataError, _Entry, _list, _read

__all__ = ["System", "Install", "systems", "installs", "install", "system", "supply_for"]


@dataclass(frozen=True)
class System:
    """A kind of supply and the span it swings over in normal use."""

    name: str  # "battery-12"
    title: str  # "12 V lead-acid battery with charging"
    nominal_v: float
    min_v: float
    max_v: float
    abuse: bool  # a battery that can be reversed, jump-started or load-dumped
    sources: tuple[str, ...]
    jump_v: float | None = None  # jump start: this voltage for jump_s (abuse systems only)
    jump_s: float | None = None
    dump_v: float | None = None  # suppressed load dump: this voltage for dump_s through dump_ohm
    dump_s: float | None = None
    dump_ohm: float | None = None


@dataclass(frozen=True)
class Install:
    """One place a fader goes: its default ambient, smallest wire and its words."""

    name: str  # the spec's install: word
    title: str
    ambient_c: float  # default design ambient, °C
    wire_min_mm2: float  # smallest harness conductor allowed there
    protect: bool  # supply protection by default (a vehicle's or a boat's battery and alternator)
    supplies: tuple[str, ...]  # system names, first preferred
    isolate: str  # "disconnect the battery" or "unplug the supply", sheet words
    isolate_short: str  # the same on a card
    cautions: tuple[tuple[str, str | None], ...]  # (sheet, card) pairs for this place only
    sources: tuple[str, ...]


_SYSTEM_KEYS = ("name", "title", "nominal_v", "min_v", "max_v", "abuse", "sources", "jump_v", "jump_s", "dump_v",
                "dump_s", "dump_ohm")
_ABUSE_KEYS = ("jump_v", "jump_s", "dump_v", "dump_s", "dump_ohm")
_INSTALL_KEYS = ("name", "title", "ambient_c", "wire_min_mm2", "protect", "supplies", "isolate", "isolate_short",
                 "cautions", "sources")
_FILE = "installs.yaml"


@lru_cache(maxsize=None)
def _profiles() -> tuple[dict[str, System], dict[str, Install]]:
    top = _Entry(_read(_FILE), _FILE, ("systems", "installs"))
    systems: dict[str, System] = {}
    for i, raw in enumerate(_list(top.data, "systems", _FILE)):
        e = _Entry(raw, f"{_FILE}.systems[{i}]", _SYSTEM_KEYS)
        abuse = e.flag("abuse")
        if abuse and not all(e.has(k) for k in _ABUSE_KEYS):
            raise CatalogDataError(f"{e.where}: an abuse system needs {', '.join(_ABUSE_KEYS)}")
        figures = {k: e.num(k, optional=True) for k in _ABUSE_KEYS}
        s = System(name=e.text("name"), title=e.text("title"), nominal_v=e.num("nominal_v"), min_v=e.num("min_v"),
                   max_v=e.num("max_v"), abuse=abuse, sources=e.sources(), **figures)
        if not s.min_v <= s.nominal_v <= s.max_v:
            raise CatalogDataError(f"{e.where}: min_v <= nominal_v <= max_v does not hold")
        systems[s.name] = s
    found: dict[str, Install] = {}
    for i, raw in enumerate(_list(top.data, "installs", _FILE)):
        where = f"{_FILE}.installs[{i}]"
        e = _Entry(raw, where, _INSTALL_KEYS)
        supplies = tuple(str(x) for x in _list(e.data, "supplies", where))
        unknown = [x for x in supplies if x not in systems]
        if unknown or not supplies:
            raise CatalogDataError(f"{where}.supplies: unknown or missing systems {unknown}")
        cautions = []
        for k, c in enumerate(e.raw("cautions") or []):
            ce = _Entry(c, f"{where}.cautions[{k}]", ("sheet", "card"))
            cautions.append((ce.text("sheet"), ce.text("card") if ce.has("card") else None))
        found[e.text("name")] = Install(
            name=e.text("name"), title=e.text("title"), ambient_c=e.num("ambient_c"),
            wire_min_mm2=e.num("wire_min_mm2"), protect=e.flag("protect"), supplies=supplies, isolate=e.text("isolate"),
            isolate_short=e.text("isolate_short"), cautions=tuple(cautions), sources=e.sources())
    return systems, found


def systems() -> tuple[System, ...]:
    """Every supply system, in file order."""
    return tuple(_profiles()[0].values())


def installs() -> tuple[Install, ...]:
    """Every install profile, in file order."""
    return tuple(_profiles()[1].values())


def install(name: str) -> Install:
    """The profile of one install by its spec word."""
    try:
        return _profiles()[1][name]
    except KeyError:
        raise LookupError(f"no install profile {name!r}") from None


def system(name: str) -> System:
    """A supply system by its name."""
    try:
        return _profiles()[0][name]
    except KeyError:
        raise LookupError(f"no supply system {name!r}") from None


def supply_for(place: Install, nominal_v: float, *, named: str | None = None) -> System:
    """The system a supply of ``nominal_v`` is at this install; with none at that voltage, the nearest scaled.

    ``named`` forces one system (a spec's ``supply: {system: ...}``); it is
    scaled the same way when its nominal voltage differs from the spec's.
    """
    if named is not None:
        base = system(named)
    else:
        candidates = [system(n) for n in place.supplies]
        # the first of the install's systems at that voltage, else the nearest in ratio, scaled
        base = next((s for s in candidates if abs(s.nominal_v - nominal_v) < 1e-9), None) or min(
            candidates, key=lambda s: abs(math.log(s.nominal_v / nominal_v)))
    if abs(base.nominal_v - nominal_v) < 1e-9:
        return base
    k = nominal_v / base.nominal_v

    def scaled(v: float | None) -> float | None:
        return None if v is None else round(v * k, 6)

    return replace(base, title=f"{nominal_v:g} V {base.title.split(' ', 2)[-1]}", nominal_v=nominal_v,
                   min_v=scaled(base.min_v), max_v=scaled(base.max_v), jump_v=scaled(base.jump_v),
                   dump_v=scaled(base.dump_v))
