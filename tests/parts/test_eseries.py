"""IEC 60063 tables and snapping, checked against published lists and the eseries package.

Sources:
  [g4usp]   qsl.net/g4usp "Component preferred values" — E6/E12/E24 lists (read in the source)
  [eseries] eseries 1.2.1 on PyPI, installed and run here; it rounds by
            linear distance, so nearest() is compared only where both rules agree.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

eseries = pytest.importorskip("eseries")
from eseries import (  # noqa: E402
    E6,
    E12,
    E24,
    E48,
    E96,
    erange,
    find_greater_than_or_equal,
    find_less_than_or_equal,
    find_nearest,
    series,
)

from sheetgen.parts import eseries as es# noqa: E402

PKG = {"E6": E6, "E12": E12, "E24": E24, "E48": E48, "E96": E96}


# --- the tables -------------------------------------------------------------

# [g4usp] printed lists, one decade.
G4USP = {
    "E6": (10, 15, 22, 33, 47, 68),
    "E12": (10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82),
    "E24": (10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
            33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91),
}


@pytest.mark.parametrize("name", sorted(G4USP))
def test_decade_matches_published_list(name):
    # [g4usp]
    assert es.values(name, 10, 99) == tuple(float(v) for v in G4USP[name])


@pytest.mark.parametrize("name", ["E6", "E12", "E24", "E48", "E96"])
def test_decade_matches_eseries_package(name):
    # [eseries] series() gives one decade of mantissas (two digits up to E24, three beyond).
    mantissas = tuple(series(PKG[name]))
    top = 99 if mantissas[0] < 100 else 999
    assert es.values(name, mantissas[0], top) == tuple(float(m) for m in mantissas)


def test_e24_holds_43_not_42():
    # [g4usp]; statemaster.com prints 4.2, a typo
    vals = es.values("E24", 1, 10)
    assert 4.3 in vals and 4.2 not in vals


def test_table_is_stored_not_computed():
    # IEC 60063 (from memory): these members differ from round(10**(k/24), 1).
    computed = {round(10 ** (k / 24), 1) for k in range(24)}
    stored = set(es.values("E24", 1, 9.99))
    for v in (2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2):
        assert v in stored
        assert v not in computed


@pytest.mark.parametrize("lo,hi", [(100, 1000), (1, 1e6), (0.1, 47), (3.3e3, 6.8e4)])
def test_values_match_erange(lo, hi):
    # [eseries] erange(series, lo, hi) includes both ends.
    for name in ("E6", "E12", "E24", "E96"):
        assert es.values(name, lo, hi) == tuple(erange(PKG[name], lo, hi))


# --- exact floats -----------------------------------------------------------

def test_values_are_exact_literals():
    assert 4700.0 in es.values("E12", 4000, 5000)
    assert 0.47 in es.values("E12", 0.1, 1)
    assert es.nearest("E12", 4.7e3) == 4700.0
    assert es.nearest("E24", 0.1 * 47000) == 4700.0
    assert es.above("E12", 4.7e3 * (1 + 1e-12)) == 4700.0
    assert es.below("E12", 4.7e3 * (1 - 1e-12)) == 4700.0
    assert 2.2e-6 in es.values("E6", 1e-6, 1e-5)


# --- below / above ----------------------------------------------------------

GRID = np.geomspace(1.07, 9.3e6, 400)


@pytest.mark.parametrize("name", ["E6", "E12", "E24", "E48", "E96"])
def test_above_below_match_eseries(name):
    # [eseries] find_greater_than_or_equal / find_less_than_or_equal
    for x in GRID:
        assert es.above(name, x) == find_greater_than_or_equal(PKG[name], x)
        assert es.below(name, x) == find_less_than_or_equal(PKG[name], x)


def test_documented_eseries_examples():
    # [eseries] documented examples (pypi.org/project/eseries; read in the source and reproduced)
    assert es.above("E96", 184) == find_greater_than_or_equal(E96, 184) == 187.0
    assert es.nearest("E24", 319) == find_nearest(E24, 319) == 330.0


def test_below_above_on_standard_value():
    assert es.below("E12", 4700) == es.above("E12", 4700) == 4700.0


# --- nearest ----------------------------------------------------------------

@pytest.mark.parametrize("name", ["E6", "E12", "E24", "E48", "E96"])
def test_nearest_agrees_with_eseries_where_rules_agree(name):
    # [eseries] linear rule; compared only where linear and geometric pick the same side.
    compared = 0
    for x in GRID:
        lo, hi = es.below(name, x), es.above(name, x)
        if lo == hi:
            continue
        linear_low = (x - lo) < (hi - x)
        geometric_low = (x / lo) < (hi / x)
        if linear_low != geometric_low:
            continue
        compared += 1
        assert es.nearest(name, x) == find_nearest(PKG[name], x)
    assert compared > 300


def test_nearest_is_geometric_at_3590_and_3610():
    # [eseries] switches at 3600 (linear distance; run here), the geometric mean is 3587.5.
    assert find_nearest(E12, 3590) == 3300.0       # [eseries], linear
    assert es.nearest("E12", 3590) == 3900.0       # ratio 3590/3300 = 1.088 > 3900/3590 = 1.086
    assert find_nearest(E12, 3610) == 3900.0       # [eseries]
    assert es.nearest("E12", 3610) == 3900.0       # both rules agree here
    mid = math.sqrt(3300 * 3900)
    assert es.nearest("E12", mid * 0.999) == 3300.0
    assert es.nearest("E12", mid * 1.001) == 3900.0


# --- neighbours and tolerance -------------------------------------------------

def test_neighbours():
    assert es.neighbours("E12", 4700) == (3900.0, 5600.0)
    assert es.neighbours("E12", 10) == (8.2, 12.0)        # across the decade
    assert es.neighbours("E12", 82) == (68.0, 100.0)
    assert es.neighbours("E24", 1e6) == (910e3, 1.1e6)
    assert es.neighbours("E96", 100) == (97.6, 102.0)


def test_neighbours_needs_a_standard_value():
    with pytest.raises(ValueError):
        es.neighbours("E12", 5000)


@pytest.mark.parametrize("name,tol", [("E6", 0.20), ("E12", 0.10), ("E24", 0.05),
                                      ("E48", 0.02), ("E96", 0.01)])
def test_tolerance(name, tol):
    # [g4usp] E6 ±20 %, E12 ±10 %, E24 ±5 %; [eseries] tolerance()
    assert es.tolerance(name) == tol
    assert es.tolerance(name) == pytest.approx(eseries.tolerance(PKG[name]))


def test_bad_input():
    with pytest.raises(ValueError):
        es.values("E7", 1, 10)
    with pytest.raises(ValueError):
        es.nearest("E12", 0)
    with pytest.raises(ValueError):
        es.values("E12", 10, 1)
    assert es.nearest("e12", 4600) == 4700.0     # series name is case-insensitive
