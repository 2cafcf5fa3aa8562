"""Reading a fader spec (YAML) into frozen dataclasses.

Everything a user can get wrong in a spec file is caught here, all at once,
and reported one problem a line as ``file:line: key.path: what is wrong``, so
the sizer downstream can trust every number it is given.

The YAML is composed with a safe loader into a node tree first (never loaded
straight into Python objects), because only the tree still knows the line of
each key and whether a key was written twice.  Mapping keys are taken as they
were written, so the YAML 1.1 habit of reading ``on``/``off``/``yes``/``no`` as
booleans cannot silently turn ``fade: {on: .., off: ..}`` into nonsense.
"""

from __future__ import annotations

import difflib
import math
import os
import re
from dataclasses import dataclass
from typing import Any, Callable

import yaml

from sheetgen.errors import SpecError
from sheetgen.inputs.units import format_quantity, parse_quantity
from sheetgen.inputs.wires import RUNS, check_wires
from sheetgen.parts import installs as profiles
from sheetgen.reader.files import read_text
from sheetgen.reader.text import line_problem
from sheetgen.reader.yamltree import Converter, compose, excerpt, suggest, unknown_key

#: Given a text, the characters of it the sheets' font cannot draw, in the order written ("" when none).
Unprintable = Callable[[str], str]

__all__ = [
    "Supply",
    "LedLoad",
    "LampLoad",
    "Spec",
    "load_spec",
    "parse_spec",
    "spec_from_mapping",
    "spec_from_node",
    "default_supply_span",
    "COVERED_MIN_V",
    "COVERED_MAX_V",
    "HEADROOM_V",
]

#: The supply range sheetgen sizes for: low-voltage DC, 12 V and 24 V systems
#: with their charging swing.  Everything above is refused, not sized.
COVERED_MIN_V = 5.0
COVERED_MAX_V = 32.0
#: A supply's ``min:`` may sit below the covered range: a 5 V USB port is allowed to sag to
#: 4.40 V (USB 2.0, 7.2.1, low-power port; from memory), so the floor for ``min:`` is lower.
SUPPLY_MIN_FLOOR_V = 4.0
#: Volts an LED string must leave free at the lowest supply for the
#: transistor's saturation voltage and the string's series resistor.
HEADROOM_V = 1.0

DEFAULT_TITLE = "Untitled fader"
TITLE_MAX_CHARS = 120

_OUT_OF_SCOPE = (
    "sheetgen covers low-voltage DC systems of 5–32 V only; "
    "mains and other high-voltage work is for licensed practice"
)
_AC_RE = re.compile(r"(?i)(?<![a-z])(?:v\s*)?a\.?c\.?(?![a-z])|~|\bmains\b")
_YAML_BOOL_WORDS = {"on", "off", "yes", "no", "y", "n", "true", "false"}


@dataclass(frozen=True)
class Supply:
    """The always-on feed: the voltage it is named by and the span it really swings over."""

    nominal_v: float  # the system's name: 12 V, 24 V
    min_v: float  # lowest it runs at (engine off, battery low); sizes the LED headroom
    max_v: float  # highest (charging); sizes dissipation and part voltage ratings


@dataclass(frozen=True)
class LedLoad:
    """LED strings switched together by the fader, each with its own series resistor."""

    current_a: float  # per string
    vf_v: float  # one LED, typical
    per_string: int = 1  # LEDs in series in one string
    strings: int = 1  # parallel strings
    colour: str | None = None  # catalog colour name when given
    kind: str = "led"


@dataclass(frozen=True)
class LampLoad:
    """Identical incandescent lamps in parallel."""

    power_w: float  # one lamp, at rated_v
    rated_v: float
    count: int = 1  # identical lamps in parallel
    kind: str = "lamp"


@dataclass(frozen=True)
class Spec:
    """What the user asked for, checked and in SI units."""

    title: str
    supply: Supply
    trigger: str  # "positive" | "ground"
    load: LedLoad | LampLoad
    fade_in_s: float  # the visible fade-in: light from 10 % to 90 % of full
    fade_out_s: float  # the visible fade-out: light from 90 % to 10 % of full
    ambient_c: float = 25.0  # worst-case air temperature around the box (default: the install's)
    topology: str = "auto"  # "auto" or the name of a topology to force
    install: str = "vehicle"  # where it goes: vehicle | boat | building | bench (profile in parts/catalog/installs.yaml)
    board: str = "stripboard"  # what the builder solders on: stripboard (copper strips) | perfboard (a pad per hole)
    source: str = ""  # file path or "<built-in>", for messages
    system: str = "battery-12"  # the supply system its span was taken from (installs.yaml)
    wires: tuple[tuple[str, str], ...] = ()  # (run, colour) the user chose: always_on, switched, ground
    protection: bool | None = None  # supply-abuse protection: None = where the supply system needs it
    delay_on_s: float | None = None  # a deliberate wait in the dark before the fade-in; None = as short as it comes
    delay_off_s: float | None = None  # a deliberate hold at full after the feed goes; None = as short as it comes

    def wire_colour(self, run: str) -> str | None:
        """The colour chosen for an off-board run, or None (the sheet then names the run only)."""
        return dict(self.wires).get(run)


def default_supply_span(nominal_v: float, install: str = "vehicle", system: str | None = None) -> tuple[float, float]:
    """The (min, max) a system of this nominal voltage swings over when the user gives no span.

    The span comes from the install's supply systems (``installs.yaml``): in a
    vehicle a 12 V system spans 11.0–14.6 V, inside ISO 16750-2's 10.5–16 V and
    8–16 V operating codes; a 24 V one 22.0–29.2 V; a 5 V USB port on a bench
    4.75–5.25 V.  A nominal voltage no system of the install has takes the
    first system scaled proportionally (18 V in a vehicle: 16.5–21.9 V).
    """
    s = profiles.supply_for(profiles.install(install), nominal_v, named=system)
    return s.min_v, s.max_v


# ---------------------------------------------------------------------------
# Reading YAML into plain data with line numbers


def load_spec(path: str | os.PathLike[str], *, topologies: tuple[str, ...] | None = None,
              unprintable: Unprintable | None = None) -> Spec:
    """Read and check a spec file; every problem in it is raised in one ``SpecError``.

    ``topologies`` are the names ``topology:`` may take (besides auto), when the
    caller knows the registry; a name outside it is then refused with its line.
    ``unprintable``, when the caller will print the spec, gives the characters of a
    text the sheets' font cannot draw (``inputs/`` cannot see the font); a title
    holding any is refused with its line, rather than printed as boxes.
    """
    source = os.fspath(path)
    return parse_spec(read_text(source, what="spec"), source=source, topologies=topologies,
                      unprintable=unprintable)


def parse_spec(text: str, *, source: str, topologies: tuple[str, ...] | None = None,
               unprintable: Unprintable | None = None) -> Spec:
    """Check a spec given as YAML text; ``source`` names it in messages."""
    problems = _Problems(source, topologies=topologies, unprintable=unprintable)
    root = compose(text, source=source)
    if root is None:
        data: Any = None
    else:
        problems.lines[()] = root.start_mark.line + 1
        data = Converter(problems.add_at, problems.lines).convert(root, ())
    return _build(data, problems)


def spec_from_mapping(data: dict, *, source: str) -> Spec:
    """Check a spec already loaded into Python data (an inline spec in an event file).

    Line numbers are not known here, so messages name the key path only.
    """
    return _build(data, _Problems(source))


def spec_from_node(node: yaml.Node, *, source: str, key_prefix: str,
                   topologies: tuple[str, ...] | None = None, unprintable: Unprintable | None = None) -> Spec:
    """Check a spec that sits inside another YAML file (an event's inline design).

    ``node`` is the composed mapping from that file, so problems keep its real
    line numbers; each key path is printed after ``key_prefix``
    (``builds[2].design``), so the message says which spec it is about.
    """
    problems = _Problems(source, key_prefix=key_prefix, topologies=topologies, unprintable=unprintable)
    problems.lines[()] = node.start_mark.line + 1
    return _build(Converter(problems.add_at, problems.lines).convert(node, ()), problems)


# ---------------------------------------------------------------------------
# Checking


class _Problems:
    """Collects problems with their lines so they can be reported together, in file order."""

    def __init__(self, source: str, *, key_prefix: str = "", topologies: tuple[str, ...] | None = None,
                 unprintable: Unprintable | None = None) -> None:
        self.source = source
        self.topologies = topologies  # the registry's names, when the caller gave them
        self.unprintable = unprintable  # the characters the sheets' font lacks, when the caller gave the font
        self.key_prefix = key_prefix  # the spec's own place in a larger file, e.g. "builds[2].design"
        self.lines: dict[tuple[str, ...], int] = {}
        self._items: list[tuple[int, int, str]] = []

    def key(self, path: tuple[str, ...]) -> str:
        """The key path as printed: the prefix, then the path inside the spec."""
        return ".".join(((self.key_prefix,) if self.key_prefix else ()) + tuple(path))

    def _line_of(self, path: tuple[str, ...]) -> int | None:
        for end in range(len(path), -1, -1):
            line = self.lines.get(path[:end])
            if line is not None:
                return line
        return None

    def _where(self, path: tuple[str, ...], line: int | None) -> tuple[int, str]:
        if line is None:
            line = self._line_of(path)
        where = f"{self.source}:{line}" if line is not None else self.source
        return (line or 0), where

    def add(self, path: tuple[str, ...], message: str, *, line: int | None = None) -> None:
        """Record a problem about the key at ``path``."""
        order, where = self._where(path, line)
        key = self.key(path)
        text = f"{where}: {key}: {message}" if key else f"{where}: {message}"
        self._items.append((order, len(self._items), text))

    def add_at(self, path: tuple[str, ...], message: str, line: int | None) -> None:
        """``add`` as the tree converter calls it."""
        self.add(path, message, line=line)

    def add_keyed(self, path: tuple[str, ...], message: str) -> None:
        """Record a message that already starts with the key path (from units)."""
        order, where = self._where(path, None)
        self._items.append((order, len(self._items), f"{where}: {message}"))

    def raise_if_any(self) -> None:
        if self._items:
            raise SpecError([text for _, _, text in sorted(self._items)])

    def count(self) -> int:
        return len(self._items)


def _describe(value: Any) -> str:
    """Name a YAML value's type the way a user would."""
    if value is None:
        return "nothing"
    if isinstance(value, bool):
        return "true/false"
    if isinstance(value, (int, float)):
        return "a number"
    if isinstance(value, str):
        return "text"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, dict):
        return "a mapping"
    return f"a {type(value).__name__}"


def _key_name(key: Any) -> str:
    return key if isinstance(key, str) else str(key).lower()


def _check_keys(
    p: _Problems,
    mapping: dict,
    path: tuple[str, ...],
    known: tuple[str, ...],
    *,
    elsewhere: dict[str, str] | None = None,
) -> None:
    """Report unknown keys, suggesting the known key each resembles."""
    for key in mapping:
        name = _key_name(key)
        if isinstance(key, str) and key in known:
            continue
        key_path = path + (name,)
        if path == ("fade",) and name.lower() in _YAML_BOOL_WORDS:
            p.add(key_path, "unknown key; use `in:` and `out:` (YAML 1.1 reads on/off as true/false)")
            continue
        if elsewhere and name in elsewhere:
            p.add(key_path, f"does not apply here; {elsewhere[name]}")
            continue
        if not isinstance(key, str):
            p.add(key_path, "unknown key; YAML read this key as true/false (on/off/yes/no do that); rename it")
        else:
            p.add(key_path, unknown_key(name, known))


def _quantity(p: _Problems, value: Any, path: tuple[str, ...], unit: str, *,
              typical: float | None = None) -> float | None:
    try:
        return parse_quantity(value, unit, key=p.key(path), typical=typical)
    except SpecError as exc:
        for problem in exc.problems:
            p.add_keyed(path, problem)
        return None


def _in_range(
    p: _Problems, value: float | None, path: tuple[str, ...], unit: str, low: float, high: float, why: str = ""
) -> float | None:
    if value is None:
        return None
    if not math.isfinite(value) or not low <= value <= high:
        shown = format_quantity(value, unit) if math.isfinite(value) else str(value)
        span = f"{format_quantity(low, unit)} to {format_quantity(high, unit)}"
        p.add(path, f"{shown} is outside {span}{why}")
        return None
    return value


def _whole(p: _Problems, mapping: dict, path: tuple[str, ...], default: int, low: int, high: int | None) -> int | None:
    """A count such as per_string: a whole number within bounds."""
    key = path[-1]
    if key not in mapping:
        return default
    value = mapping[key]
    if isinstance(value, bool) or not isinstance(value, int):
        p.add(path, f"must be a whole number such as {default}, got {_describe(value)} ({value!r})")
        return None
    if value < low:
        p.add(path, f"must be at least {low}, got {value}")
        return None
    if high is not None and value > high:
        p.add(path, f"must be at most {high}, got {value}")
        return None
    return value


def _text(p: _Problems, mapping: dict, path: tuple[str, ...]) -> str | None:
    value = mapping[path[-1]]
    if not isinstance(value, str):
        p.add(path, f"must be text, got {_describe(value)}; put it in quotes if YAML read it as something else")
        return None
    return value.strip()


def _voltage(p: _Problems, value: Any, path: tuple[str, ...], *, floor_v: float = COVERED_MIN_V) -> float | None:
    """A DC voltage inside the covered range (down to ``floor_v``); AC and mains are refused outright."""
    if isinstance(value, str) and _AC_RE.search(value):
        p.add(path, f'{excerpt(value)} is an AC supply; {_OUT_OF_SCOPE}')
        return None
    volts = _quantity(p, value, path, "V")
    if volts is None:
        return None
    if volts > COVERED_MAX_V:
        p.add(path, f"{format_quantity(volts, 'V')} is above the 32 V this tool covers; {_OUT_OF_SCOPE}")
        return None
    if volts < floor_v:
        p.add(path, f"{format_quantity(volts, 'V')} is below the {format_quantity(floor_v, 'V')} this tool covers "
                    "(low-voltage DC, 5–32 V systems)")
        return None
    return volts


_TOP_KEYS = ("title", "supply", "trigger", "load", "fade", "delay", "ambient", "topology", "install", "board",
             "wires", "protection")
INSTALLS = tuple(i.name for i in profiles.installs())
BOARDS = ("stripboard", "perfboard")
_SUPPLY_KEYS = ("nominal", "min", "max", "system")
_LED_KEYS = ("kind", "current", "vf", "colour", "color", "per_string", "strings")
_LAMP_KEYS = ("kind", "power", "current", "rated", "count")
_FADE_KEYS = ("in", "out")
_DELAY_KEYS = ("on", "off")
#: The longest deliberate wait a delay may ask for: the timing capacitor holds its charge that long.
DELAY_MAX_S = 60.0
_TRIGGERS = ("positive", "ground")
_TRIGGER_HINTS = {
    "negative": "ground",
    "gnd": "ground",
    "earth": "ground",
    "low": "ground",
    "0v": "ground",
    "plus": "positive",
    "+": "positive",
    "high": "positive",
    "live": "positive",
}
_KIND_HINTS = {"bulb": "lamp", "incandescent": "lamp", "filament": "lamp", "halogen": "lamp", "leds": "led"}


def _build(data: Any, p: _Problems) -> Spec:
    """Check plain data (from YAML or a caller) and return the Spec, or raise every problem."""
    if data is None:
        p.lines.setdefault((), 1)
        p.add((), "the spec is empty; it needs at least supply:, load: and fade:")
        p.raise_if_any()
    if not isinstance(data, dict):
        p.add((), f"the spec must be a mapping of keys (supply:, load:, fade: ...), got {_describe(data)}")
        p.raise_if_any()

    _check_keys(p, data, (), _TOP_KEYS)
    title = _title(p, data)
    install = _install(p, data)
    supply, system = _supply(p, data, install)
    trigger = _trigger(p, data)
    load = _load(p, data, supply)
    fade_in_s, fade_out_s = _fade(p, data)
    delay_on_s, delay_off_s = _delay(p, data)
    ambient_c = _ambient(p, data, install)
    topology = _topology(p, data)
    wires = _wires(p, data)
    protection = _protection(p, data)
    board = board_kind(p, data.get("board"), ("board",)) if "board" in data else "stripboard"
    p.raise_if_any()
    return Spec(
        title=title,
        supply=supply,
        trigger=trigger,
        load=load,
        fade_in_s=fade_in_s,
        fade_out_s=fade_out_s,
        ambient_c=ambient_c,
        topology=topology,
        install=install,
        board=board,
        source=p.source,
        system=system,
        wires=wires,
        protection=protection,
        delay_on_s=delay_on_s,
        delay_off_s=delay_off_s,
    )


def _title(p: _Problems, data: dict) -> str:
    if "title" not in data or data["title"] is None:
        return DEFAULT_TITLE
    title = _text(p, data, ("title",))
    if title is None:
        return DEFAULT_TITLE
    if not title:
        p.add(("title",), "is empty; leave the key out or write a title")
    elif "\n" in title or "\r" in title:
        p.add(("title",), "must be one line")
    elif line_problem(title):
        p.add(("title",), line_problem(title))
        return DEFAULT_TITLE
    elif len(title) > TITLE_MAX_CHARS:
        p.add(("title",), f"is {len(title)} characters long; keep it to {TITLE_MAX_CHARS}")
    elif p.unprintable is not None and p.unprintable(title):
        p.add(("title",), f"{excerpt(title)} has characters the sheets' font cannot print ({p.unprintable(title)}); "
                          "it covers Latin, Greek and Cyrillic letters: write the title in those")
    return title


def _supply(p: _Problems, data: dict, install: str) -> tuple[Supply | None, str]:
    """The supply and the name of the system its default span comes from (the install's, or ``system:``)."""
    path = ("supply",)
    place = profiles.install(install)
    if "supply" not in data:
        p.add(path, "missing; write the system voltage, e.g. supply: 12 V")
        return None, place.supplies[0]
    raw = data["supply"]
    named = None
    if isinstance(raw, dict):
        _check_keys(p, raw, path, _SUPPLY_KEYS)
        named = _system(p, raw)
        if "nominal" not in raw:
            p.add(path, "missing `nominal:`; e.g. supply: {nominal: 12 V, min: 11 V, max: 14.6 V}")
            return None, place.supplies[0]
        nominal = _voltage(p, raw["nominal"], path + ("nominal",))
        low = _voltage(p, raw["min"], path + ("min",), floor_v=SUPPLY_MIN_FLOOR_V) if "min" in raw else None
        high = _voltage(p, raw["max"], path + ("max",)) if "max" in raw else None
        if nominal is None or ("min" in raw and low is None) or ("max" in raw and high is None):
            return None, place.supplies[0]
        given_low, given_high = "min" in raw, "max" in raw
    else:
        nominal = _voltage(p, raw, path)
        if nominal is None:
            return None, place.supplies[0]
        given_low = given_high = False
    chosen = profiles.supply_for(place, nominal, named=named)
    low = low if given_low else chosen.min_v
    high = high if given_high else chosen.max_v
    return _supply_span(p, path, nominal, low, high, given_low, given_high), chosen.name


def _system(p: _Problems, raw: dict) -> str | None:
    """A ``system:`` name inside the supply mapping, checked against installs.yaml."""
    if "system" not in raw:
        return None
    name = _text(p, raw, ("supply", "system"))
    if name is None:
        return None
    known = tuple(s.name for s in profiles.systems())
    if name.lower() not in known:
        close = difflib.get_close_matches(name.lower(), known, n=1)
        hint = f"; did you mean `{close[0]}`?" if close else ""
        p.add(("supply", "system"), f'"{name}" is not a supply system; use one of {", ".join(known)}{hint}')
        return None
    return name.lower()


def _supply_span(p: _Problems, path: tuple[str, ...], nominal: float, low: float, high: float,
                 given_low: bool, given_high: bool) -> Supply | None:

    failed = False
    for given, value, name in ((given_low, low, "min"), (given_high, high, "max")):
        floor = SUPPLY_MIN_FLOOR_V if name == "min" else COVERED_MIN_V
        if given or floor <= value <= COVERED_MAX_V:
            continue
        shown_nominal = format_quantity(nominal, "V")
        clamp_low = format_quantity(max(low, COVERED_MIN_V), "V")
        clamp_high = format_quantity(min(high, COVERED_MAX_V), "V")
        p.add(
            path,
            f"a {shown_nominal} system usually swings {format_quantity(low, 'V')} to "
            f"{format_quantity(high, 'V')}, and its {name} is outside the 5–32 V this tool covers; "
            f"give the span, e.g. supply: {{nominal: {shown_nominal}, min: {clamp_low}, max: {clamp_high}}}",
        )
        failed = True
    if failed:
        return None
    if low > nominal:
        p.add(path + ("min",), f"{format_quantity(low, 'V')} is above the nominal {format_quantity(nominal, 'V')}")
        return None
    if high < nominal:
        p.add(path + ("max",), f"{format_quantity(high, 'V')} is below the nominal {format_quantity(nominal, 'V')}")
        return None
    return Supply(nominal_v=nominal, min_v=low, max_v=high)


def _trigger(p: _Problems, data: dict) -> str:
    path = ("trigger",)
    if "trigger" not in data:
        return "positive"
    value = _text(p, data, path)
    if value is None:
        return "positive"
    word = value.lower()
    if word in _TRIGGERS:
        return word
    suggestion = _TRIGGER_HINTS.get(word) or next(iter(difflib.get_close_matches(word, _TRIGGERS, n=1)), None)
    hint = f"; did you mean `{suggestion}`?" if suggestion else ""
    p.add(
        path,
        f'{excerpt(value)} is not a trigger; use positive (the feed rises to the supply when on) '
        f"or ground (it is pulled to 0 V when on){hint}",
    )
    return "positive"


def _load(p: _Problems, data: dict, supply: Supply | None) -> LedLoad | LampLoad | None:
    path = ("load",)
    if "load" not in data:
        p.add(path, "missing; describe the load, e.g. load: {kind: led, current: 20 mA, vf: 3.1 V}")
        return None
    raw = data["load"]
    if not isinstance(raw, dict):
        p.add(path, f"must be a mapping with kind: led or kind: lamp, got {_describe(raw)}")
        return None
    if "kind" not in raw:
        p.add(path, "missing `kind:`; write kind: led or kind: lamp")
        return None
    kind = _text(p, raw, path + ("kind",))
    if kind is None:
        return None
    kind = kind.lower()
    if kind in _LOAD_READERS:
        return _LOAD_READERS[kind](p, raw, path, supply)
    names = tuple(_LOAD_READERS)
    suggestion = _KIND_HINTS.get(kind) or next(iter(difflib.get_close_matches(kind, names, n=1)), None)
    hint = f"; did you mean `{suggestion}`?" if suggestion else ""
    p.add(path + ("kind",), f'{excerpt(kind)} is not a load kind; use {" or ".join(names)}{hint}')
    return None


def _led(p: _Problems, raw: dict, path: tuple[str, ...], supply: Supply | None) -> LedLoad | None:
    lamp_only = {"power": "power is for kind: lamp; an LED load takes current:",
                 "rated": "rated is for kind: lamp", "count": "count is for kind: lamp; LEDs use strings:"}
    _check_keys(p, raw, path, _LED_KEYS, elsewhere=lamp_only)
    before = p.count()

    current = None
    if "current" in raw:
        current = _quantity(p, raw["current"], path + ("current",), "A", typical=0.02)
        current = _in_range(p, current, path + ("current",), "A", 1e-3, 3.0, " (per string)")
    else:
        p.add(path, "missing `current:` (per string), e.g. current: 20 mA")

    colour = None
    colour_vf = None
    spelt = "color" if "color" in raw else "colour"  # either spelling; the message names the one written
    if "color" in raw and "colour" in raw:
        p.add(path + ("color",), "is given twice, as colour: and color:; keep one")
    elif spelt in raw:
        name = _text(p, raw, path + (spelt,))
        if name:
            colour, colour_vf = _colour_vf(p, name.lower(), path + (spelt,), vf_given="vf" in raw)
        elif name == "":
            p.add(path + (spelt,), "is empty; name an LED colour or give vf:")

    vf = None
    if "vf" in raw:
        vf = _quantity(p, raw["vf"], path + ("vf",), "V")
        vf = _in_range(p, vf, path + ("vf",), "V", 0.5, 12.0, " (forward voltage of one LED)")
    elif spelt not in raw:
        p.add(path, "needs `vf:` (one LED's forward voltage, e.g. vf: 3.1 V) or `colour:` (e.g. colour: white)")
    else:
        vf = colour_vf

    per_string = _whole(p, raw, path + ("per_string",), 1, 1, None)
    strings = _whole(p, raw, path + ("strings",), 1, 1, 50)

    if p.count() != before or current is None or vf is None or per_string is None or strings is None:
        return None
    if supply is not None:
        available = supply.min_v - HEADROOM_V
        if per_string * vf >= available:
            fit = max(math.ceil(available / vf) - 1, 0)
            fits = f"at most {fit} fit in a string" if fit else "not even one LED fits"
            p.add(
                path + ("per_string",),
                f"{per_string} × {format_quantity(vf, 'V')} = {format_quantity(per_string * vf, 'V')} "
                f"does not fit: the supply can fall to {format_quantity(supply.min_v, 'V')} and the fader needs "
                f"{format_quantity(HEADROOM_V, 'V')} of that; {fits}",
            )
            return None
    return LedLoad(current_a=current, vf_v=vf, per_string=per_string, strings=strings, colour=colour)


def _colour_vf(p: _Problems, colour: str, path: tuple[str, ...], *, vf_given: bool) -> tuple[str, float | None]:
    """The catalog's name for an LED colour and its typical forward voltage (None if unknown)."""
    try:
        from sheetgen.parts.catalog import led_colour
    except ImportError:
        if not vf_given:
            p.add(path, "the LED catalog is not available in this install; give vf: instead")
        return colour, None
    try:
        entry = led_colour(colour)
    except (KeyError, LookupError, ValueError) as exc:
        detail = exc.args[0] if exc.args and isinstance(exc.args[0], str) else ""
        p.add(path, f'{excerpt(colour)} is not an LED colour in the catalog' + (f" ({detail})" if detail else "")
              + "; give vf: instead")
        return colour, None
    return str(getattr(entry, "name", colour)), float(entry.vf_typ_v)


def _lamp(p: _Problems, raw: dict, path: tuple[str, ...], supply: Supply | None) -> LampLoad | None:
    led_only = {"vf": "vf is for kind: led", "colour": "colour is for kind: led",
                "per_string": "per_string is for kind: led", "strings": "strings is for kind: led; lamps use count:"}
    _check_keys(p, raw, path, _LAMP_KEYS, elsewhere=led_only)
    before = p.count()

    if "rated" in raw:
        rated = _voltage(p, raw["rated"], path + ("rated",))
    else:
        rated = supply.nominal_v if supply is not None else None

    power = None
    if "power" in raw and "current" in raw:
        p.add(path + ("current",), "give power: or current:, not both (power is rated power at rated voltage)")
    elif "power" in raw:
        power = _quantity(p, raw["power"], path + ("power",), "W")
        power = _in_range(p, power, path + ("power",), "W", 0.1, 100.0, " (one lamp)")
    elif "current" in raw:
        current = _quantity(p, raw["current"], path + ("current",), "A")
        if current is not None and current <= 0:
            p.add(path + ("current",), f"must be positive, got {format_quantity(current, 'A')}")
        elif current is not None and rated is not None:
            power = current * rated
            if not 0.1 <= power <= 100.0:
                p.add(
                    path + ("current",),
                    f"{format_quantity(current, 'A')} at {format_quantity(rated, 'V')} is "
                    f"{format_quantity(power, 'W')}, outside 0.1 W to 100 W (one lamp)",
                )
                power = None
    else:
        p.add(path, "a lamp needs `power:` (e.g. power: 5 W) or `current:` (e.g. current: 0.42 A)")

    count = _whole(p, raw, path + ("count",), 1, 1, 50)
    if p.count() != before or power is None or rated is None or count is None:
        return None
    return LampLoad(power_w=power, rated_v=rated, count=count)


#: The reader of each load kind's keys, by the name ``load: kind:`` takes; each returns the kind's
#: spec type, whose behaviour lives in ``circuits.loads.LOAD_KINDS`` under the same name.
_LOAD_READERS = {LedLoad.kind: _led, LampLoad.kind: _lamp}


def _fade(p: _Problems, data: dict) -> tuple[float | None, float | None]:
    path = ("fade",)
    example = "e.g. fade: {in: 1.5 s, out: 4 s}"
    if "fade" not in data:
        p.add(path, f"missing; give the fade-in and fade-out times, {example}")
        return None, None
    raw = data["fade"]
    if not isinstance(raw, dict):
        p.add(path, f"must be a mapping with in: and out:, {example}; got {_describe(raw)}")
        return None, None
    _check_keys(p, raw, path, _FADE_KEYS)
    # fade: {on: .., off: ..} has already been told to use in/out; don't repeat it.
    wrote_on_off = any(_key_name(key).lower() in _YAML_BOOL_WORDS for key in raw)
    times = []
    for key in _FADE_KEYS:
        key_path = path + (key,)
        if key not in raw:
            if not wrote_on_off:
                p.add(path, f"missing `{key}:`; {example}")
            times.append(None)
            continue
        seconds = _quantity(p, raw[key], key_path, "s")
        if seconds is not None and seconds <= 0:
            p.add(key_path, f"must be positive, got {format_quantity(seconds, 's')}")
            seconds = None
        times.append(_in_range(p, seconds, key_path, "s", 0.05, 120.0))
    return times[0], times[1]


def _delay(p: _Problems, data: dict) -> tuple[float | None, float | None]:
    """The optional deliberate waits: dark before the fade-in (``on``), at full before the fade-out (``off``)."""
    path = ("delay",)
    example = "e.g. delay: {off: 5 s} to stay at full for 5 s after the feed goes"
    if data.get("delay") is None:
        return None, None
    raw = data["delay"]
    if not isinstance(raw, dict) or not raw:
        p.add(path, f"must be a mapping with on: and/or off:, {example}; got {_describe(raw)}")
        return None, None
    unknown = {k: v for k, v in raw.items() if _key_name(k) not in _DELAY_KEYS}
    for key in unknown:
        name = _key_name(key)
        hint = {"in": "on", "out": "off"}.get(name.lower())
        p.add(path + (name,), f"unknown key; did you mean `{hint}:`? (delay takes on: and off:)" if hint
              else unknown_key(name, _DELAY_KEYS))
    times = []
    for key in _DELAY_KEYS:
        if key not in raw:
            times.append(None)
            continue
        key_path = path + (key,)
        seconds = _quantity(p, raw[key], key_path, "s")
        if seconds is not None and seconds <= 0:
            p.add(key_path, f"must be positive (leave it out for no wait), got {format_quantity(seconds, 's')}")
            seconds = None
        times.append(_in_range(p, seconds, key_path, "s", 0.1, DELAY_MAX_S))
    return times[0], times[1]


def _ambient(p: _Problems, data: dict, install: str) -> float:
    """The spec's ambient, or the install's default (installs.yaml: a vehicle cabin is hotter than a bench)."""
    default = profiles.install(install).ambient_c
    if "ambient" not in data:
        return default
    value = _quantity(p, data["ambient"], ("ambient",), "degC")
    value = _in_range(p, value, ("ambient",), "degC", -40.0, 85.0, " (the range the part ratings are taken over)")
    return default if value is None else value


def _install(p: _Problems, data: dict) -> str:
    if "install" not in data:
        return "vehicle"
    value = _text(p, data, ("install",))
    if value is None:
        return "vehicle"
    if value.lower() not in INSTALLS:
        close = difflib.get_close_matches(value.lower(), INSTALLS, n=1)
        hint = f"; did you mean `{close[0]}`?" if close else ""
        p.add(("install",), f'{excerpt(value)} is not a place; use one of {", ".join(INSTALLS)}{hint}')
        return "vehicle"
    return value.lower()


def _wires(p: _Problems, data: dict) -> tuple[tuple[str, str], ...]:
    if "wires" not in data:
        return ()
    chosen, problems = check_wires(data["wires"])
    for run, message in problems:
        p.add(("wires",) if run is None else ("wires", run), message)
    return tuple((run, chosen[run]) for run in RUNS if run in chosen)


def _protection(p: _Problems, data: dict) -> bool | None:
    """``protection: auto`` (the default), or true / false (YAML also reads on/off and yes/no so)."""
    value = data.get("protection", "auto")
    if isinstance(value, bool):
        return value
    if isinstance(value, str) and value.strip().lower() == "auto":
        return None
    p.add(("protection",), f"must be auto, true or false, got {_describe(value)}")
    return None


def board_kind(p: _Problems, value: Any, path: tuple[str, ...]) -> str:
    """``board:``: stripboard or perfboard (an event file checks its own key with this too)."""
    if not isinstance(value, str):
        p.add(path, f"must be stripboard or perfboard, got {_describe(value)}")
        return "stripboard"
    word = value.strip().lower()
    if word in BOARDS:
        return word
    close = difflib.get_close_matches(word, BOARDS, n=1, cutoff=0.5)
    hint = f"; did you mean `{close[0]}`?" if close else ""
    p.add(path, f'"{value}" is not a board; use stripboard (copper strips along the rows) or perfboard '
                f"(a pad per hole){hint}")
    return "stripboard"


def _topology(p: _Problems, data: dict) -> str:
    if "topology" not in data:
        return "auto"
    name = _text(p, data, ("topology",))
    if name is None:
        return "auto"
    if not re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9_\-]{0,40}", name):
        p.add(("topology",), f"{excerpt(name)} is not a topology name; write auto or a name made of letters, "
                             "digits, - and _")
        return "auto"
    if p.topologies is not None and name != "auto" and name.removesuffix("-ground") not in p.topologies:
        close = suggest(name, p.topologies)
        hint = f"; did you mean `{close}`?" if close else ""
        p.add(("topology",), f'"{name}" is not one of: auto, {", ".join(p.topologies)}{hint}')
        return "auto"
    return name
