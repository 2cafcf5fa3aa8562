"""What a line of text a user gives (a title, a venue, a builder's name) must be to print as written.

Control characters break lines; direction controls (U+202E and its kin) make a
name print differently from how it reads in the file; a name of only
zero-width or blank characters prints as nothing.  Right-to-left scripts
would print unjoined and in the wrong order, since the page setter lays text
out left to right, so they are refused with a clear word instead.
"""

from __future__ import annotations

import unicodedata

__all__ = ["line_problem"]

#: Marks, embeddings, overrides and isolates of the Unicode Bidirectional Algorithm (UAX #9, table 1).
_DIRECTION_CONTROLS = frozenset("\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069")
#: Characters that draw nothing though Unicode files them as letters or symbols.
_BLANK_LETTERS = frozenset("\u115f\u1160\u3164\uffa0\u2800")
_INVISIBLE_CATEGORIES = ("Cf", "Zs", "Zl", "Zp", "Mn", "Me", "Cc")


def line_problem(text: str) -> str | None:
    """Why ``text`` cannot be printed as one line as written, or None when it can."""
    bad = sorted({ch for ch in text if unicodedata.category(ch) == "Cc"})
    if bad:
        return f"must be one line without control characters (found {_codes(bad)})"
    controls = sorted({ch for ch in text if ch in _DIRECTION_CONTROLS})
    if controls:
        return f"holds a text direction control ({_codes(controls)}); write it without"
    if not text.strip() or all(ch in _BLANK_LETTERS or unicodedata.category(ch) in _INVISIBLE_CATEGORIES
                               for ch in text):
        return "is empty or made only of invisible characters"
    if any(unicodedata.bidirectional(ch) in ("R", "AL") for ch in text):
        return ("is in a right-to-left script (Arabic, Hebrew ...), which the sheets and cards cannot set in "
                "reading order; write it in Latin, Greek or Cyrillic letters")
    return None


def _codes(chars) -> str:
    return ", ".join(f"U+{ord(ch):04X}" for ch in chars)
