"""Protective diodes as bought (series Schottky, TVS), read from ``catalog/protection.yaml``.

They are ordinary catalog diodes with a role; the small 1 A Schottky is the
one already in ``diodes.yaml``.
"""

from __future__ import annotations

from functools import lru_cache

from sheetgen.parts import catalog
from sheetgen.parts.catalog import CatalogDataError, Diode, _diode, _list, _read

__all__ = ["protective", "find", "ROLES"]

ROLES = ("reverse_polarity", "surge")
_FILE = "protection.yaml"
#: Parts of diodes.yaml that also serve here, with their protective role.
_SHARED = (("1N5819", "reverse_polarity"),)


@lru_cache(maxsize=None)
def protective() -> tuple[tuple[str, Diode], ...]:
    """(role, diode) for every protective part, smallest rating first within a role."""
    out = [(role, catalog.diode(number)) for number, role in _SHARED]
    for i, raw in enumerate(_list(_read(_FILE), "parts", _FILE)):
        where = f"{_FILE}.parts[{i}]"
        if not isinstance(raw, dict) or raw.get("role") not in ROLES:
            raise CatalogDataError(f"{where}.role: expected one of {', '.join(ROLES)}")
        out.append((raw["role"], _diode({k: v for k, v in raw.items() if k != "role"}, where)))
    return tuple(sorted(out, key=lambda rd: (ROLES.index(rd[0]), rd[1].vrrm_v, rd[1].if_avg_a)))


def find(part_number: str) -> Diode:
    """Any catalog diode by part number: a protective one from this file or one of diodes.yaml."""
    for _, d in protective():
        if d.part_number == part_number:
            return d
    return catalog.diode(part_number)
