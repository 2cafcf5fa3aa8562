"""Shared test plumbing: the one rule for tests that need ngspice, and a design cache away from home.

Mark such a test ``@pytest.mark.requires_ngspice``.  Without ngspice on PATH it
is skipped on a workstation, but fails when ``CI=true``: CI must not go green
by silently skipping the outside check.
"""

from __future__ import annotations

import os
import shutil
import tempfile

import pytest


#: the session's design cache: set before any fixture of any scope runs, so no test writes into the user's
SESSION_CACHE = tempfile.mkdtemp(prefix="sheetgen-test-cache-")


def pytest_configure(config: pytest.Config) -> None:
    os.environ["SHEETGEN_CACHE_DIR"] = SESSION_CACHE
    config.addinivalue_line(
        "markers",
        "requires_ngspice: runs ngspice; skipped when it is missing, failed when CI=true",
    )


def pytest_unconfigure(config: pytest.Config) -> None:
    shutil.rmtree(SESSION_CACHE, ignore_errors=True)


def pytest_runtest_setup(item: pytest.Item) -> None:
    if item.get_closest_marker("requires_ngspice") is None:
        return
    from sheetgen.outputs.spice_run import ngspice_available

    if ngspice_available():
        return
    if os.environ.get("CI", "").strip().lower() == "true":
        pytest.fail("ngspice is required when CI=true, but it is not on PATH", pytrace=False)
    pytest.skip("ngspice is not installed")


@pytest.fixture(autouse=True)
def design_cache_folder(tmp_path_factory, monkeypatch):
    """Every test gets an empty design cache of its own, outside its tmp_path; fixtures shared across tests
    use the session's (set in pytest_configure)."""
    from sheetgen.sizing import cache

    folder = tmp_path_factory.mktemp("design-cache")
    monkeypatch.setenv("SHEETGEN_CACHE_DIR", str(folder))
    monkeypatch.setattr(cache, "_bypassed", False)  # a test's --no-cache ends with the test
    return folder


# Sized designs shared by the card and pack tests: sizing and analysis cost seconds per design,
# so each is done once per session.  Two small examples: two LED strings, and a single LED.
@pytest.fixture(scope="session")
def camper_report():
    from pathlib import Path

    from sheetgen.sizing.analyse import analyse
    from sheetgen.sizing.size import size
    from sheetgen.inputs.spec import load_spec

    return analyse(size(load_spec(Path(__file__).parent.parent / "examples" / "camper-van-step-light.yaml")))


@pytest.fixture(scope="session")
def railway_report():
    from pathlib import Path

    from sheetgen.sizing.analyse import analyse
    from sheetgen.sizing.size import size
    from sheetgen.inputs.spec import load_spec

    return analyse(size(load_spec(Path(__file__).parent.parent / "examples" / "model-railway-station.yaml")))


@pytest.fixture(scope="session")
def lamp_sizing():
    """A lamp design, for checks of heat, inrush, heatsinks and wiring that only a lamp reaches.

    Under light-based timing every stage here keeps a lamp dark, then snaps it
    on, so the sizer refuses every lamp spec (tests/sizing/test_size.py checks
    the refusal).  Until a lamp stage exists these checks have no design to run on.
    """
    pytest.skip("no lamp design: the sizer refuses lamps under light-based timing (examples/refused/README.md)")
