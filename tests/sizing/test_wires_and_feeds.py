"""Wire colours chosen by the user, neutral run names by default, and the door-switch words."""

from __future__ import annotations

import io
import textwrap
from dataclasses import replace
from pathlib import Path

import pytest
from pypdf import PdfReader

from sheetgen.errors import SpecError
from sheetgen.inputs.event import parse_event
from sheetgen.inputs.spec import load_spec, parse_spec
from sheetgen.outputs.export import report_dict
from sheetgen.outputs.pdf.cards import Card, render_cards
from sheetgen.inputs.layout import load_card_layout
from sheetgen.pack.kit import kit_items
from sheetgen.sizing.analyse import analyse
from sheetgen.sizing.size import size

EXAMPLES = Path(__file__).parent.parent.parent / "examples"
SPEC = """\
supply: 12 V
load: {kind: led, current: 10 mA, vf: 2.0 V}
fade: {in: 1 s, out: 2 s}
"""


def test_colours_are_iec_60757_names_and_codes():
    # IEC 60757 colour codes (from memory): RD red, VT violet, WH white, BK black.
    spec = parse_spec(SPEC + "wires: {always_on: RD, switched: white/VT, ground: black}\n", source="w.yaml")
    assert spec.wires == (("always_on", "red"), ("switched", "white/violet"), ("ground", "black"))


@pytest.mark.parametrize("line, needle", [
    ("  switched: chartreuse\n", "w.yaml:6: wires.switched: \"chartreuse\" is not a wire colour"),
    ("  always_on: green/yellow\n", "w.yaml:6: wires.always_on: green-and-yellow is kept for protective earth"),
    ("  feed: red\n", "w.yaml:6: wires.feed: unknown run"),
])
def test_bad_colours_name_the_key_and_line(line, needle):
    # IEC 60445: green-and-yellow identifies the protective conductor only (from memory).
    with pytest.raises(SpecError) as err:
        parse_spec(SPEC + "wires:\n  ground: black\n" + line, source="w.yaml")
    assert needle in str(err.value)


@pytest.fixture(scope="module")
def coloured(camper_report):
    spec = replace(camper_report.design.spec, wires=(("always_on", "red"), ("switched", "white/violet")))
    return analyse(replace(camper_report.design, spec=spec), draws=20)


def test_chosen_colours_reach_the_steps_kit_list_json_and_card(coloured, tmp_path):
    steps = " ".join(coloured.wiring)
    assert "wire (always-on +, red)" in steps and "wire (white/violet)" in steps
    items = {it.item for it in kit_items(coloured)}
    assert {"wire, red", "wire, white/violet", "wire for the ground run"} <= items
    d = report_dict(coloured)
    assert {w["run"]: w["colour"] for w in d["wires"]} == {"always_on": "red", "switched": "white/violet",
                                                           "ground": None}
    pdf = render_cards([Card(report=coloured, design="A", name="Ana")], load_card_layout("a6-card"),
                       title="t", environ={"SOURCE_DATE_EPOCH": "1700000000"})
    text = " ".join(p.extract_text() for p in PdfReader(io.BytesIO(pdf)).pages)
    assert "always-on +, red" in text and "switched feed, white/violet" in text


def test_no_colour_is_printed_unless_chosen(camper_report):
    steps = " ".join(camper_report.wiring + camper_report.brief.steps)
    for colour in ("red", "yellow", "black"):
        assert f" {colour} " not in steps and f"{colour})" not in steps


def test_event_wires_apply_to_builds_whose_spec_names_none(tmp_path):
    event = textwrap.dedent(f"""\
    title: Night
    wires: {{switched: blue, ground: brown}}
    builds:
      - spec: {EXAMPLES / 'camper-van-step-light.yaml'}
        count: 2
      - design:
          {SPEC.replace(chr(10), chr(10) + '          ').rstrip()}
          wires: {{switched: orange}}
        count: 1
    """)
    ev = parse_event(event, source="night.yaml", folder=tmp_path)
    assert ev.builds[0].spec.wires == (("switched", "blue"), ("ground", "brown"))
    assert ev.builds[1].spec.wires == (("switched", "orange"),)
    with pytest.raises(SpecError, match="night.yaml:2: wires.switched"):
        parse_event(event.replace("switched: blue", "switched: mauve"), source="night.yaml", folder=tmp_path)


@pytest.fixture(scope="module")
def tailgate():
    return analyse(size(load_spec(EXAMPLES / "estate-car-tailgate-ground.yaml")), draws=50)


def test_door_switch_words_quote_the_bench_readings(tailgate):
    bench = {b.net: b for b in tailgate.bench}
    steps = tailgate.wiring
    lamp = next(s for s in steps if "courtesy lamp" in s)
    assert "leave it in" in lamp and "Take its bulb out" in lamp and "Do not cut" in lamp
    test = next(s for s in steps if s.startswith("Test with the door switch"))
    lo, hi = bench["feed"].off_v
    assert f"{lo:.1f}–{hi:.1f} V" in test
    lo, hi = bench["switched"].on_v
    assert f"rises to {lo:.1f}–{hi:.1f} V" in test
    assert steps[-1] == test
    assert any(s.startswith("Door test") for s in tailgate.brief.steps)
