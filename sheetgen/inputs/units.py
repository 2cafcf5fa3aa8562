"""Quantities as people write them on a bench sheet, and back again.

Spec files say ``20 mA``, ``4k7`` or ``40 °C``; the engine works in SI base
units (volt, ampere, watt, second, ohm, farad, degree Celsius).  This module is
the one place that turns one into the other, so every message and every sheet
spells values the same way.

Base units are named by the strings ``"V"``, ``"A"``, ``"W"``, ``"s"``,
``"ohm"``, ``"F"`` and ``"degC"``.  Temperatures stay in °C (no offset to
kelvin happens here).

The letter code for resistors and capacitors follows IEC 60062 (the "RKM"
code): the multiplier letter stands where the decimal point would be, so
``4K7`` is 4.7 kΩ, ``R47`` is 0.47 Ω and ``2u2`` is 2.2 µF.
"""

from __future__ import annotations

import math
import re
from decimal import Decimal

from sheetgen.errors import SpecError
from sheetgen.reader.yamltree import excerpt

__all__ = [
    "BASE_UNITS",
    "parse_quantity",
    "format_quantity",
    "rkm_code",
    "rkm_code_farad",
]

MICRO = "\u00b5"  # MICRO SIGN, the character on most keyboards and in most fonts
OMEGA = "\u03a9"  # GREEK CAPITAL OMEGA; Unicode prefers it to U+2126 OHM SIGN
DEGREE = "\u00b0"

#: What each base unit measures, for messages ("is not a current").
BASE_UNITS: dict[str, str] = {
    "V": "voltage",
    "A": "current",
    "W": "power",
    "s": "time",
    "ohm": "resistance",
    "F": "capacitance",
    "degC": "temperature",
}

#: The printed symbol of each base unit.
_SYMBOL = {"V": "V", "A": "A", "W": "W", "s": "s", "ohm": OMEGA, "F": "F", "degC": f"{DEGREE}C"}

#: How a message tells the user to write a quantity of each unit.
_WRITE_IN = {
    "V": ("V",),
    "A": ("A", "mA"),
    "W": ("W",),
    "s": ("s", "ms"),
    "ohm": (OMEGA, f"k{OMEGA}"),
    "F": (f"{MICRO}F",),
    "degC": (f"{DEGREE}C", f"{DEGREE}F"),
}

#: Prefix letter -> power of ten.  Kept as exponents so that "2200 µF" becomes
#: the float nearest 0.0022 (decimal arithmetic), not 2200 * 1e-6.
_PREFIX = {
    "p": -12,
    "n": -9,
    "u": -6,
    "m": -3,
    "": 0,
    "k": 3,
    "K": 3,  # not SI, but "10K" is what half the trade writes
    "M": 6,
    "G": 9,
}

#: Prefixes a hint may keep for each unit: "20 mV" given as a current suggests
#: "20 mA", but "4.7 kΩ" given as a capacitance should not suggest "4.7 kF".
_HINT_PREFIXES = {
    "V": ("", "m"),
    "A": ("", "m", "u"),
    "W": ("", "m"),
    "s": ("", "m"),
    "ohm": ("", "k", "M"),
    "F": ("u", "n", "p", "m"),
    "degC": ("",),
}

#: Unit spellings accepted after the number (after micro/ohm/minus signs are
#: normalised and spaces removed), mapped to (base unit, factor to that unit).
_SPELLINGS: dict[str, tuple[str, float]] = {}
for _unit, _names, _factor in (
    ("V", ("V", "v", "volt", "volts", "VDC", "Vdc", "Vd.c."), 1.0),
    ("A", ("A", "a", "amp", "amps", "ampere", "amperes"), 1.0),
    ("W", ("W", "w", "watt", "watts"), 1.0),
    ("s", ("s", "sec", "secs", "second", "seconds"), 1.0),
    ("ohm", ("ohm", "ohms", "Ohm", "Ohms", "R"), 1.0),
    ("F", ("F", "farad", "farads"), 1.0),
):
    for _name in _names:
        _SPELLINGS[_name] = (_unit, _factor)
#: Spellings that take no prefix.
_PLAIN_SPELLINGS: dict[str, tuple[str, float]] = {
    "min": ("s", 60.0),
    "mins": ("s", 60.0),
    "minute": ("s", 60.0),
    "minutes": ("s", 60.0),
    f"{DEGREE}C": ("degC", 1.0),
    "\u2103": ("degC", 1.0),  # DEGREE CELSIUS as one character
    "degC": ("degC", 1.0),
    "C": ("degC", 1.0),
}

# Each alternative splits its digits one way only, and the rest of the text is taken whole, so a
# match takes time linear in the text however it is written.
_NUMBER = r"[+-]?(?:\d{1,3}(?: \d{3})+(?:\.\d*)?|\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_QUANTITY_RE = re.compile(rf"(?P<num>{_NUMBER})\s*(?P<suffix>.*)", re.DOTALL)
#: The longest quantity read: "1 000 000.000 µF" and its like are far shorter.
QUANTITY_MAX_CHARS = 40
# IEC 60062 letter code: digits, one letter in place of the decimal point, digits.
_RKM_OHM_RE = re.compile(r"^(?P<int>\d*)(?P<letter>[LRrKkMGg])(?P<frac>\d*)$")
_RKM_FARAD_RE = re.compile(r"^(?P<int>\d*)(?P<letter>[pnumF])(?P<frac>\d*)$")
_RKM_OHM_SCALE = {"L": -3, "R": 0, "r": 0, "K": 3, "k": 3, "M": 6, "G": 9, "g": 9}
_RKM_FARAD_SCALE = {"p": -12, "n": -9, "u": -6, "m": -3, "F": 0}


def _normalise(text: str) -> str:
    """Fold the look-alike characters people paste (µ/μ, Ω/Ω, − and odd spaces)."""
    out = text.strip()
    for ch in ("\u00b5", "\u03bc"):  # MICRO SIGN, GREEK SMALL MU
        out = out.replace(ch, "u")
    for ch in ("\u03a9", "\u2126"):  # GREEK CAPITAL OMEGA, OHM SIGN
        out = out.replace(ch, "ohm")
    out = out.replace("\u2212", "-")  # MINUS SIGN
    for ch in ("\u00a0", "\u202f", "\u2009"):  # no-break, narrow no-break, thin
        out = out.replace(ch, " ")
    out = out.replace("\u00ba", DEGREE)  # MASCULINE ORDINAL, often typed for °
    return out


def _example(number: str, unit: str, prefix: str = "", typical: float | None = None) -> str:
    """An example spelling for a hint, keeping the user's number and prefix where sensible.

    Without a sensible prefix of their own, ``typical`` (the key's usual size in the base
    unit) picks one: ``current: 20 Ω`` for an LED hints "20 mA", not "20 A".
    """
    if typical is not None and (prefix == "" or prefix not in _HINT_PREFIXES[unit]):
        try:
            size = abs(float(number.replace(" ", ""))) or 1.0
        except ValueError:
            size = 1.0
        prefix = min(_HINT_PREFIXES[unit], key=lambda x: abs(math.log10(size * 10.0 ** _PREFIX[x] / typical)))
    if prefix not in _HINT_PREFIXES[unit]:
        return f"{number} {_WRITE_IN[unit][0]}"
    if prefix == "u":
        prefix = MICRO
    return f"{number} {prefix}{_SYMBOL[unit]}"


def _write_in(unit: str) -> str:
    return " or ".join(_WRITE_IN[unit])


def _quoted(raw: object) -> str:
    return excerpt(raw)


def _parse(raw: object, unit: str, typical: float | None = None) -> float:
    """Parse one quantity; raise ValueError with a message that lacks only the key."""
    what = BASE_UNITS[unit]
    if isinstance(raw, bool):
        raise ValueError(
            f"YAML read this as {str(raw).lower()} (yes/no/on/off are yes-or-no words), "
            f"not a {what}; write it like {_bare_hint('12', unit)}"
        )
    if isinstance(raw, float) and not math.isfinite(raw):
        raise ValueError(f"{raw} is not a finite number; write a {what} such as {_bare_hint('12', unit)}")
    if isinstance(raw, (int, float)):
        number = _plain_number(raw)
        raise ValueError(f"{number} has no unit; write {_bare_hint(number, unit)}")
    if raw is None:
        raise ValueError(f"has no value; write a {what} such as {_bare_hint('12', unit)}")
    if not isinstance(raw, str):
        kind = {list: "a list", dict: "a mapping", tuple: "a list"}.get(type(raw), type(raw).__name__)
        raise ValueError(f"expected a {what} such as {_bare_hint('12', unit)}, got {kind}")

    if len(raw) > QUANTITY_MAX_CHARS:
        raise ValueError(f"{_quoted(raw)} is {len(raw):,} characters long; a {what} is a number and a unit, "
                         f"such as {_bare_hint('12', unit)}")
    text = _normalise(raw)
    if not text:
        raise ValueError(f"is empty; write a {what} such as {_bare_hint('12', unit)}")
    if re.fullmatch(r"[+-]?\d+,\d+\s*\S*", text):
        raise ValueError(f"{_quoted(raw)} uses a comma; write the decimal mark as a point ({text.replace(',', '.', 1)})")

    compact = text.replace(" ", "")
    if unit == "ohm":
        value = _parse_rkm(compact, _RKM_OHM_RE, _RKM_OHM_SCALE)
        if value is not None:
            return value
        if re.fullmatch(r"\d*m\d*", compact) and compact != "m":
            raise ValueError(
                f"{_quoted(raw)}: a lower-case m is ambiguous in a resistor code; "
                f"write M for megohm ({compact.replace('m', 'M')}) or use mΩ (e.g. 4.7 m{OMEGA})"
            )
    if unit == "F":
        value = _parse_rkm(compact, _RKM_FARAD_RE, _RKM_FARAD_SCALE)
        if value is not None:
            return value

    match = _QUANTITY_RE.fullmatch(text)
    if match is None:
        raise ValueError(f"{_quoted(raw)} is not a {what}; write it like {_bare_hint('12', unit)}")
    number_text = match["num"]
    number = Decimal(number_text.replace(" ", ""))
    suffix = match["suffix"].replace(" ", "")
    if suffix == "":
        raise ValueError(f"{_quoted(raw)} has no unit; write {_bare_hint(number_text, unit)}")

    if unit == "degC" and suffix in (f"{DEGREE}F", "degF", "F", "\u2109"):  # Fahrenheit, converted exactly
        return float((number - 32) * 5 / 9)
    found_unit, factor, prefix = _split_suffix(suffix)
    if found_unit is None:
        # A prefix with no unit symbol: "4.7k" is a resistor value as the trade writes it.
        if unit == "degC" and suffix == "K":
            raise ValueError(f"{_quoted(raw)}: write the temperature in {DEGREE}C or {DEGREE}F (e.g. 40 {DEGREE}C)")
        if suffix in _PREFIX and unit in ("ohm", "F"):
            return _scaled(number, _PREFIX[suffix], 1.0)
        if suffix in _PREFIX:
            raise ValueError(f"{_quoted(raw)} has no unit; write {_example(number_text, unit, suffix)}")
        raise ValueError(
            f'{_quoted(raw)}: unknown unit "{suffix}"; write the {what} in {_write_in(unit)} '
            f"(e.g. {_example(number_text, unit)})"
        )
    if found_unit != unit:
        raise ValueError(
            f"{_quoted(raw)} is not a {what}; write it in {_write_in(unit)} "
            f"(e.g. {_example(number_text, unit, prefix, typical)})"
        )
    return _scaled(number, _PREFIX[prefix], factor)


def _scaled(number: Decimal, exponent: int, factor: float) -> float:
    """number x 10^exponent x factor, rounded once to the nearest float; ValueError past a float's range."""
    value = float(number.scaleb(exponent)) * factor
    if not math.isfinite(value):
        raise ValueError(f"{number} is too large a number to be a setting")
    return value


def _split_suffix(suffix: str) -> tuple[str | None, float, str]:
    """Split "mA" into (base unit, factor, prefix); (None, 1, "") when it is no unit."""
    if suffix in _PLAIN_SPELLINGS:
        found, factor = _PLAIN_SPELLINGS[suffix]
        return found, factor, ""
    for spelling in sorted(_SPELLINGS, key=len, reverse=True):
        if suffix.endswith(spelling):
            prefix = suffix[: -len(spelling)]
            if prefix in _PREFIX:
                found, factor = _SPELLINGS[spelling]
                return found, factor, prefix
    return None, 1.0, ""


def _parse_rkm(compact: str, pattern: re.Pattern[str], scale: dict[str, float]) -> float | None:
    """Read an IEC 60062 letter code ("4K7", "R47", "2u2"); None when it is not one."""
    match = pattern.match(compact)
    if match is None or (match["int"] == "" and match["frac"] == ""):
        return None
    digits = Decimal(f"{match['int'] or '0'}.{match['frac'] or '0'}")
    return _scaled(digits, scale[match["letter"]], 1.0)


def _plain_number(value: int | float) -> str:
    if isinstance(value, float) and value.is_integer() and abs(value) < 1e15:
        return str(int(value))
    return repr(value) if isinstance(value, float) else str(value)


def _bare_hint(number: str, unit: str) -> str:
    """How to write a bare number with its unit: "12 V", "0.02 A (= 20 mA)", "20 A or 20 mA"."""
    first = f"{number} {_WRITE_IN[unit][0]}"
    if _WRITE_IN[unit][0] == _SYMBOL[unit]:
        try:
            pretty = format_quantity(float(number.replace(" ", "")), unit)
        except ValueError:
            pretty = first
        if pretty != first:
            return f"{first} (= {pretty})"
    if len(_WRITE_IN[unit]) > 1:
        return f"{first} or {number} {_WRITE_IN[unit][1]}"
    return first


def parse_quantity(text: object, unit: str, *, key: str, typical: float | None = None) -> float:
    """Read a quantity such as ``20 mA`` or ``4k7`` into the SI base ``unit``.

    The unit must be written: a bare number is refused because a fader sized
    for 20 A instead of 20 mA is the costly kind of typo.  Negative values
    pass; range checks belong to the caller.  Raises ``SpecError`` whose one
    problem starts with ``key``; ``typical`` (the key's usual size, base unit) shapes its hint.
    Temperatures in °F are converted to °C.
    """
    if unit not in BASE_UNITS:
        raise ValueError(f"unknown base unit {unit!r}; expected one of {', '.join(BASE_UNITS)}")
    try:
        return _parse(text, unit, typical)
    except ValueError as exc:
        raise SpecError([f"{key}: {exc}"]) from None


def _round_sig(value: float, digits: int) -> float:
    """Round to ``digits`` significant figures."""
    if value == 0:
        return 0.0
    exponent = math.floor(math.log10(abs(value)))
    return round(value, digits - 1 - exponent)


def _choose_prefix(value: float, unit: str) -> tuple[str, float]:
    """Pick the prefix the trade would print for this value and unit."""
    magnitude = abs(value)
    if unit == "degC" or magnitude == 0:
        return "", 1.0
    if unit == "F":
        # Electrolytics are sold in µF right up to 100 000 µF; small parts in nF and pF.
        if magnitude >= 0.1:
            return "", 1.0
        if magnitude >= 1e-6:
            return MICRO, 1e-6
        if magnitude >= 1e-9:
            return "n", 1e-9
        return "p", 1e-12
    if unit in ("V", "W", "ohm"):
        # 0.65 V, 0.25 W and 0.47 Ω are written plain; only below 0.1 switch to milli.
        if 0.1 <= magnitude < 1000:
            return "", 1.0
        if magnitude >= 1e9 and unit == "ohm":
            return "G", 1e9
        if magnitude >= 1e6 and unit == "ohm":
            return "M", 1e6
        if magnitude >= 1000:
            return "k", 1e3
    # Engineering notation, never above the base unit for currents and times.
    exponent = math.floor(math.log10(magnitude) / 3) * 3
    exponent = max(-12, min(exponent, 0))
    return {0: ("", 1.0), -3: ("m", 1e-3), -6: (MICRO, 1e-6), -9: ("n", 1e-9), -12: ("p", 1e-12)}[exponent]


def _format_number(value: float, digits: int) -> str:
    """Significant figures without trailing zeros; integer parts of 5+ digits grouped by 3."""
    if value == 0:
        return "0"
    exponent = math.floor(math.log10(abs(value)))
    decimals = digits - 1 - exponent
    rounded = round(value, decimals)
    text = f"{rounded:.{max(decimals, 0)}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    sign = "-" if text.startswith("-") else ""
    body = text.lstrip("-")
    whole, _, frac = body.partition(".")
    if len(whole) >= 5:
        groups = []
        while whole:
            groups.insert(0, whole[-3:])
            whole = whole[:-3]
        whole = " ".join(groups)
    if sign and body.strip("0.") == "":
        sign = ""
    return sign + whole + (f".{frac}" if frac else "")


def format_quantity(value: float, unit: str, *, digits: int = 3) -> str:
    """Print a value in the unit's usual trade spelling, e.g. ``4.7 kΩ`` or ``2200 µF``.

    ``digits`` is the number of significant figures; trailing zeros are dropped.
    """
    if unit not in BASE_UNITS:
        raise ValueError(f"unknown base unit {unit!r}; expected one of {', '.join(BASE_UNITS)}")
    if not math.isfinite(value):
        raise ValueError(f"cannot format {value!r} {unit}: not a finite number")
    if digits < 1:
        raise ValueError("digits must be at least 1")
    rounded = _round_sig(float(value), digits)
    prefix, scale = _choose_prefix(rounded, unit)
    symbol = _SYMBOL[unit]
    return f"{_format_number(rounded / scale, digits)} {prefix}{symbol}"


def _rkm(value: float, letters: tuple[tuple[float, str], ...], below: str, digits: int) -> str:
    """Shared letter-code writer: ``letters`` is (scale, letter) from large to small."""
    if not math.isfinite(value) or value <= 0:
        raise ValueError(f"a letter code needs a positive value, got {value!r}")
    rounded = _round_sig(value, digits)
    for scale, letter in letters:
        if rounded >= scale:
            mantissa = rounded / scale
            break
    else:
        scale, letter = letters[-1]
        mantissa = rounded / scale
        # Below the smallest multiplier the letter leads: 0.47 Ω is R47.
        frac = _format_number(mantissa, digits)
        return below + frac.partition(".")[2]
    text = _format_number(mantissa, digits)
    whole, _, frac = text.partition(".")
    if not frac and len(whole) == 1:
        frac = "0"  # 1K0, 1M0: keeps a lone digit from looking like a stray mark
    return f"{whole}{letter}{frac}"


def rkm_code(value_ohm: float, *, digits: int = 3) -> str:
    """IEC 60062 letter code for a resistance: ``4K7``, ``470R``, ``R47``, ``1M0``."""
    return _rkm(value_ohm, ((1e9, "G"), (1e6, "M"), (1e3, "K"), (1.0, "R")), "R", digits)


def rkm_code_farad(value_f: float, *, digits: int = 3, micro: str = "u") -> str:
    """IEC 60062 letter code for a capacitance: ``2u2``, ``470u``, ``4m7`` (4700 µF), ``100n``.

    ``micro`` is the letter for 10⁻⁶; ``u`` by default because it survives
    every printer and parts list, pass ``"µ"`` for the typeset form.
    """
    letters = ((1.0, "F"), (1e-3, "m"), (1e-6, micro), (1e-9, "n"), (1e-12, "p"))
    return _rkm(value_f, letters, "p", digits)
