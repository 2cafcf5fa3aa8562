"""The install profile as applied to a sized design: wire minimum, ambient and words."""

from __future__ import annotations

from pathlib import Path

import pytest

from sheetgen.inputs.spec import load_spec
from sheetgen.outputs.export import report_dict
from sheetgen.sizing.analyse import analyse
from sheetgen.sizing.size import size

EXAMPLES = Path(__file__).parent.parent.parent / "examples"


@pytest.fixture(scope="module")
def boat():
    return report_dict(analyse(size(load_spec(EXAMPLES / "boat-saloon-reading-light.yaml")), draws=50))


def test_a_boat_never_gets_wire_below_the_marine_minimum(boat):
    # ISO 10133: 1 mm² smallest conductor on small craft; ABYC E-11: 16 AWG (both from memory).
    # The boat's LEDs draw tens of milliamps: on their own, 0.5 mm² would carry the 1 A fuse.
    assert boat["harness"]["max_current_a"] < 0.5
    assert boat["install"] == {"name": "boat", "title": boat["install"]["title"], "ambient_c": 35.0,
                               "wire_min_mm2": 1.0, "supply_system": "battery-12"}
    assert boat["harness"]["wire_mm2"] >= boat["install"]["wire_min_mm2"]
    assert boat["harness"]["wire_awg"] <= 16


def test_the_words_of_the_place_are_on_the_sheet(boat):
    assert boat["wiring"][0].startswith("Switch off at the battery isolator")
    assert any("ABYC E-11" in c for c in boat["cautions"])
    assert not any("airbag" in c.lower() for c in boat["cautions"])
