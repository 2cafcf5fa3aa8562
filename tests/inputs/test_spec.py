"""Spec files: good ones give the right numbers, bad ones name the key and the line.

Sources are named beside each check, with its status: read in the source,
from memory, or common practice with no single source.
"""

from __future__ import annotations

import sys
import textwrap
import types

import pytest

from sheetgen.errors import SpecError
from sheetgen.inputs.spec import (
    LampLoad,
    LedLoad,
    Spec,
    Supply,
    default_supply_span,
    load_spec,
    parse_spec,
    spec_from_mapping,
)

GOOD = """\
title: Rear hatch courtesy light
supply: 12 V
trigger: positive
load:
  kind: led
  current: 20 mA
  vf: 3.1 V
  per_string: 3
  strings: 2
fade:
  in: 1.5 s
  out: 4 s
ambient: 40 °C
"""


def problems_of(text: str) -> list[str]:
    with pytest.raises(SpecError) as info:
        parse_spec(textwrap.dedent(text), source="bad.yaml")
    return info.value.problems


# --- good specs ------------------------------------------------------------------


def test_contract_example_parses():
    # A small complete spec parses to these values.
    spec = parse_spec(GOOD, source="good.yaml")
    assert spec == Spec(
        title="Rear hatch courtesy light",
        supply=Supply(nominal_v=12.0, min_v=11.0, max_v=14.6),
        trigger="positive",
        load=LedLoad(current_a=0.020, vf_v=3.1, per_string=3, strings=2),
        fade_in_s=1.5,
        fade_out_s=4.0,
        ambient_c=40.0,
        topology="auto",
        source="good.yaml",
    )


def test_12_v_default_span_lies_inside_iso_16750_2_operating_codes():
    # ISO 16750-2 Table 1: code D 10.5–16 V, code B 8–16 V (360docs.net copy of
    # BS ISO 16750-2:2010; atecorp.com/compliance-standards/iso/iso-16750-2), read in the source. The span
    # 11.0–14.6 V sits inside code D, hence inside B.
    spec = parse_spec(GOOD, source="good.yaml")
    assert (spec.supply.min_v, spec.supply.max_v) == pytest.approx((11.0, 14.6))
    assert 10.5 <= spec.supply.min_v and spec.supply.max_v <= 16.0


def test_24_v_default_span():
    # 22.0–29.2 V for a 24 V system: the 12 V span scaled by 2 (common practice, no source).
    spec = parse_spec(GOOD.replace("supply: 12 V", "supply: 24 V"), source="good.yaml")
    assert spec.supply == Supply(nominal_v=24.0, min_v=pytest.approx(22.0), max_v=pytest.approx(29.2))


def test_other_nominals_scale_proportionally():
    # min = 11/12 and max = 14.6/12 of nominal (project decision, stated in the docstring).
    low, high = default_supply_span(18.0)
    assert low == pytest.approx(16.5)
    assert high == pytest.approx(21.9)


def test_supply_mapping_form():
    spec = parse_spec(GOOD.replace("supply: 12 V", "supply: {nominal: 12 V, min: 10.5 V, max: 16 V}"), source="g")
    assert spec.supply == Supply(nominal_v=12.0, min_v=10.5, max_v=16.0)


def test_supply_mapping_with_nominal_only_takes_the_default_span():
    spec = parse_spec(GOOD.replace("supply: 12 V", "supply: {nominal: 12 V, max: 15 V}"), source="g")
    assert spec.supply == Supply(nominal_v=12.0, min_v=11.0, max_v=15.0)


def test_delay_is_optional_and_takes_on_and_off():
    """`on:`/`off:` are read as written, not as YAML 1.1 booleans; either may be left out."""
    assert parse_spec(GOOD, source="t.yaml").delay_off_s is None
    spec = parse_spec(GOOD + "delay: {off: 5 s}\n", source="t.yaml")
    assert (spec.delay_on_s, spec.delay_off_s) == (None, 5.0)
    spec = parse_spec(GOOD + "delay:\n  on: 800 ms\n  off: 2 s\n", source="t.yaml")
    assert (spec.delay_on_s, spec.delay_off_s) == (0.8, 2.0)


def test_defaults():
    text = """\
    supply: 12 V
    load: {kind: led, current: 10 mA, vf: 2.0 V}
    fade: {in: 330 ms, out: 2 min}
    """
    spec = parse_spec(textwrap.dedent(text), source="<built-in>")
    assert spec.title == "Untitled fader"
    assert spec.trigger == "positive"
    assert spec.install == "vehicle"
    assert spec.ambient_c == 60.0  # the vehicle profile's cabin air (installs.yaml; tests/parts/test_installs.py)
    assert spec.topology == "auto"
    assert spec.load == LedLoad(current_a=0.010, vf_v=2.0, per_string=1, strings=1)
    assert spec.fade_in_s == pytest.approx(0.33)
    assert spec.fade_out_s == 120.0
    assert spec.source == "<built-in>"


def test_three_white_leds_fit_a_12_v_string():
    # 12 V, 20 mA, 3 white at 3.2 V → 120 Ω: andromeda.df.lu.lv "LED notes",
    # read in the source. 9.6 V < 11.0 V − 1.0 V headroom.
    spec = parse_spec(GOOD.replace("vf: 3.1 V", "vf: 3.2 V"), source="g")
    assert spec.load.per_string == 3


def test_lamp_from_power():
    text = """\
    supply: 24 V
    trigger: ground
    load: {kind: lamp, power: 5 W, count: 2}
    fade: {in: 1 s, out: 3 s}
    topology: darlington
    """
    spec = parse_spec(textwrap.dedent(text), source="g")
    assert spec.load == LampLoad(power_w=5.0, rated_v=24.0, count=2)
    assert spec.trigger == "ground"
    assert spec.topology == "darlington"


def test_lamp_from_current_converts_to_power():
    # P = I·V at the rated voltage: 0.42 A × 12 V = 5.04 W (arithmetic).
    text = """\
    supply: 12 V
    load: {kind: lamp, current: 0.42 A}
    fade: {in: 1 s, out: 3 s}
    """
    spec = parse_spec(textwrap.dedent(text), source="g")
    assert spec.load.power_w == pytest.approx(5.04)
    assert spec.load.rated_v == 12.0


def test_lamp_rated_voltage_given():
    text = """\
    supply: 12 V
    load: {kind: lamp, power: 10 W, rated: 13.5 V}
    fade: {in: 1 s, out: 3 s}
    """
    assert parse_spec(textwrap.dedent(text), source="g").load.rated_v == 13.5


def test_ambient_limits_are_accepted():
    for temp in ("-40 °C", "85 °C"):
        spec = parse_spec(GOOD.replace("40 °C", temp), source="g")
        assert spec.ambient_c == float(temp.split()[0])


def test_load_spec_reads_a_file_with_bom(tmp_path):
    path = tmp_path / "van.yaml"
    path.write_bytes(b"\xef\xbb\xbf" + GOOD.encode("utf-8"))
    spec = load_spec(path)
    assert spec.source == str(path)
    assert spec.fade_out_s == 4.0


def test_spec_from_mapping_without_lines():
    data = {"supply": "12 V", "load": {"kind": "led", "current": "20 mA", "vf": "3.1 V"},
            "fade": {"in": "1 s", "out": "2 s"}}
    assert spec_from_mapping(data, source="event.yaml").load.current_a == 0.020
    data["load"]["current"] = "20 mV"
    with pytest.raises(SpecError) as info:
        spec_from_mapping(data, source="event.yaml")
    assert info.value.problems == [
        'event.yaml: load.current: "20 mV" is not a current; write it in A or mA (e.g. 20 mA)'
    ]


def test_spec_from_mapping_boolean_fade_keys():
    # PyYAML safe_load turns `on:`/`off:` keys into True/False (YAML 1.1).
    data = {"supply": "12 V", "load": {"kind": "led", "current": "20 mA", "vf": "3.1 V"},
            "fade": {True: "1 s", False: "2 s"}}
    with pytest.raises(SpecError) as info:
        spec_from_mapping(data, source="ev")
    assert any("use `in:` and `out:`" in p for p in info.value.problems)


def test_colour_gives_the_catalog_forward_voltage():
    catalog = pytest.importorskip("sheetgen.parts.catalog")
    if not hasattr(catalog, "led_colour"):
        pytest.skip("sheetgen.parts.catalog has no led_colour yet")
    spec = parse_spec(GOOD.replace("vf: 3.1 V", "colour: white"), source="g")
    assert spec.load.colour == "white"
    assert spec.load.vf_v == catalog.led_colour("white").vf_typ_v
    # White 5 mm LEDs: 3.0–3.6 V (robot.lk "5mm LED typical technical data"),
    # read in a secondary source.
    assert 3.0 <= spec.load.vf_v <= 3.6


def _fake_catalog(monkeypatch):
    """A stand-in catalog so the colour path is exercised whatever the real catalog's state."""
    module = types.ModuleType("sheetgen.parts.catalog")

    def led_colour(name):
        table = {"warm white": 3.05}
        key = name.replace("-", " ")
        if key not in table:
            raise KeyError(f"no LED colour {name!r}")
        return types.SimpleNamespace(name=key, vf_typ_v=table[key])

    module.led_colour = led_colour
    monkeypatch.setitem(sys.modules, "sheetgen.parts.catalog", module)


def test_colour_lookup_uses_the_catalog_entry(monkeypatch):
    _fake_catalog(monkeypatch)
    spec = parse_spec(GOOD.replace("vf: 3.1 V", "colour: Warm-White"), source="g")
    assert spec.load.colour == "warm white"
    assert spec.load.vf_v == 3.05


def test_explicit_vf_wins_over_colour(monkeypatch):
    _fake_catalog(monkeypatch)
    spec = parse_spec(GOOD.replace("  vf: 3.1 V\n", "  vf: 2.9 V\n  colour: warm white\n"), source="g")
    assert spec.load.vf_v == 2.9
    assert spec.load.colour == "warm white"


def test_unknown_colour_names_key_and_line(monkeypatch):
    _fake_catalog(monkeypatch)
    (problem,) = problems_of(GOOD.replace("vf: 3.1 V", "colour: ultraviolet"))
    assert problem.startswith("bad.yaml:7: load.colour: ")
    assert "ultraviolet" in problem and "give vf:" in problem


def test_colour_without_catalog_asks_for_vf(monkeypatch):
    # A None entry in sys.modules makes the import fail, as if the catalog were absent.
    monkeypatch.setitem(sys.modules, "sheetgen.parts.catalog", None)
    with pytest.raises(SpecError) as info:
        parse_spec(GOOD.replace("vf: 3.1 V", "colour: white"), source="bad.yaml")
    (problem,) = info.value.problems
    assert problem.startswith("bad.yaml:7: load.colour: ")
    assert "give vf:" in problem


# --- the corpus of bad specs -----------------------------------------------------
# (name, spec text, line, key path the message must name, words it must contain)

BAD_SPECS = [
    ("wrong unit for a current", GOOD.replace("20 mA", "20 mV"), 6, "load.current", "is not a current"),
    ("negative fade time", GOOD.replace("in: 1.5 s", "in: -1 s"), 11, "fade.in", "must be positive"),
    ("zero fade time", GOOD.replace("out: 4 s", "out: 0 s"), 12, "fade.out", "must be positive"),
    ("fade too long", GOOD.replace("out: 4 s", "out: 5 min"), 12, "fade.out", "outside 50 ms to 120 s"),
    ("fade too short", GOOD.replace("in: 1.5 s", "in: 10 ms"), 11, "fade.in", "outside 50 ms to 120 s"),
    ("unknown top-level key", GOOD + "fades: {in: 1 s}\n", 14, "fades", "did you mean `fade`?"),
    ("unknown load key", GOOD.replace("  strings: 2\n", "  strings: 2\n  colur: red\n"), 10, "load.colur",
     "did you mean `colour`?"),
    ("unknown key, nothing close", GOOD + "mounting: roof\n", 14, "mounting", "known keys here"),
    ("lamp key on an LED", GOOD.replace("  strings: 2\n", "  strings: 2\n  power: 1 W\n"), 10, "load.power",
     "for kind: lamp"),
    ("broken YAML", GOOD.replace("in: 1.5 s", "in: [1.5 s"), 12, "out: 4 s", "not valid YAML"),
    ("tab indentation", GOOD.replace("  current: 20 mA", "\tcurrent: 20 mA"), 6, "current: 20 mA", "tabs"),
    ("string longer than the supply", GOOD.replace("per_string: 3", "per_string: 5"), 8, "load.per_string",
     "at most 3 fit"),
    ("one LED too many for 12 V", GOOD.replace("vf: 3.1 V", "vf: 11 V").replace("per_string: 3", "per_string: 1"),
     8, "load.per_string", "not even one LED fits"),
    ("mains voltage", GOOD.replace("supply: 12 V", "supply: 230 V"), 2, "supply", "licensed practice"),
    ("120 V in mapping form", GOOD.replace("supply: 12 V", "supply: {nominal: 120 V}"), 2, "supply.nominal",
     "5–32 V only"),
    ("AC supply", GOOD.replace("supply: 12 V", "supply: 24 VAC"), 2, "supply", "is an AC supply"),
    ("AC word", GOOD.replace("supply: 12 V", "supply: AC"), 2, "supply", "licensed practice"),
    ("supply below range", GOOD.replace("supply: 12 V", "supply: 3.3 V"), 2, "supply", "below the 5 V"),
    ("default span above 32 V", GOOD.replace("supply: 12 V", "supply: 28 V"), 2, "supply", "give the span"),
    ("min above nominal", GOOD.replace("supply: 12 V", "supply: {nominal: 12 V, min: 13 V}"), 2, "supply.min",
     "above the nominal"),
    ("missing supply", GOOD.replace("supply: 12 V\n", ""), 1, "supply", "missing"),
    ("missing load", GOOD.split("load:")[0] + "fade: {in: 1 s, out: 2 s}\n", 1, "load", "missing"),
    ("missing fade", GOOD.split("fade:")[0], 1, "fade", "missing"),
    ("fade written with on/off", GOOD.replace("in: 1.5 s", "on: 1.5 s").replace("out: 4 s", "off: 4 s"), 11,
     "fade.on", "use `in:` and `out:`"),
    ("fade as one number", GOOD.split("fade:")[0] + "fade: 2 s\n", 10, "fade", "in: and out:"),
    ("lamp with power and current", "supply: 12 V\nload:\n  kind: lamp\n  power: 5 W\n  current: 0.4 A\n"
     "fade: {in: 1 s, out: 2 s}\n", 5, "load.current", "not both"),
    ("lamp with neither", "supply: 12 V\nload:\n  kind: lamp\nfade: {in: 1 s, out: 2 s}\n", 2, "load",
     "needs `power:`"),
    ("lamp too big", "supply: 12 V\nload:\n  kind: lamp\n  current: 10 A\nfade: {in: 1 s, out: 2 s}\n", 4,
     "load.current", "120 W"),
    ("bare number for a current", GOOD.replace("20 mA", "0.02"), 6, "load.current", "has no unit"),
    ("bare number for the supply", GOOD.replace("supply: 12 V", "supply: 12"), 2, "supply", "write 12 V"),
    ("per_string zero", GOOD.replace("per_string: 3", "per_string: 0"), 8, "load.per_string", "at least 1"),
    ("per_string not whole", GOOD.replace("per_string: 3", "per_string: 2.5"), 8, "load.per_string",
     "whole number"),
    ("too many strings", GOOD.replace("strings: 2", "strings: 51"), 9, "load.strings", "at most 50"),
    ("ambient out of range", GOOD.replace("40 °C", "120 °C"), 13, "ambient", "outside -40 °C to 85 °C"),
    ("ambient in kelvin", GOOD.replace("40 °C", "300 K"), 13, "ambient", "°C"),
    ("duplicate top-level key", GOOD + "supply: 24 V\n", 14, "supply", "given twice (first on line 2)"),
    ("duplicate nested key", GOOD.replace("  vf: 3.1 V\n", "  vf: 3.1 V\n  current: 30 mA\n"), 8,
     "load.current", "given twice (first on line 6)"),
    ("list where a number belongs", GOOD.replace("20 mA", "[20 mA, 30 mA]"), 6, "load.current", "got a list"),
    ("mapping where text belongs", GOOD.replace("Rear hatch courtesy light", "{a: b}"), 1, "title", "must be text"),
    ("title too long", GOOD.replace("Rear hatch courtesy light", "x" * 121), 1, "title", "keep it to 120"),
    ("unknown load kind", GOOD.replace("kind: led", "kind: bulb"), 5, "load.kind", "did you mean `lamp`?"),
    ("missing kind", GOOD.replace("  kind: led\n", ""), 4, "load", "missing `kind:`"),
    ("LED without vf or colour", GOOD.replace("  vf: 3.1 V\n", ""), 4, "load", "needs `vf:`"),
    ("LED current too high", GOOD.replace("20 mA", "5 A"), 6, "load.current", "outside 1 mA to 3 A"),
    ("vf out of range", GOOD.replace("3.1 V", "0.2 V"), 7, "load.vf", "outside 0.5 V to 12 V"),
    ("bad trigger", GOOD.replace("trigger: positive", "trigger: negative"), 3, "trigger", "did you mean `ground`?"),
    ("trigger as a boolean", GOOD.replace("trigger: positive", "trigger: yes"), 3, "trigger", "must be text"),
    ("bad topology name", GOOD + "topology: two stage!\n", 14, "topology", "not a topology name"),
    ("YAML merge key", "base: &b {kind: led}\n" + GOOD.replace("  kind: led\n", "  <<: *b\n"), 6, "load",
     "merge key"),
    ("delay written with in/out", GOOD + "delay: {out: 5 s}\n", 14, "delay.out", "did you mean `off:`?"),
    ("delay as one number", GOOD + "delay: 5 s\n", 14, "delay", "on: and/or off:"),
    ("delay too long", GOOD + "delay:\n  off: 5 min\n", 15, "delay.off", "outside 100 ms to 60 s"),
    ("delay negative", GOOD + "delay:\n  on: -2 s\n", 15, "delay.on", "must be positive"),
    ("delay in the wrong unit", GOOD + "delay: {off: 5 V}\n", 14, "delay.off", "is not a time"),
]


@pytest.mark.parametrize(("name", "text", "line", "key", "words"), BAD_SPECS, ids=[b[0] for b in BAD_SPECS])
def test_bad_spec_names_key_and_line(name, text, line, key, words):
    problems = problems_of(text)
    matching = [p for p in problems if p.startswith(f"bad.yaml:{line}: ") and key in p and words in p]
    assert matching, f"{name}: no problem at line {line} naming {key!r} with {words!r}; got {problems}"


def test_corpus_is_big_enough():
    # At least 15 bad specs, so that every kind of mistake is covered.
    assert len(BAD_SPECS) >= 15


def test_problems_are_collected_and_sorted_by_line():
    text = GOOD.replace("20 mA", "20 mV").replace("in: 1.5 s", "in: -2 s").replace("40 °C", "400 °C")
    problems = problems_of(text)
    assert [p.split(":")[1] for p in problems] == ["6", "11", "13"]


def test_message_format_is_file_line_key_words():
    (problem,) = problems_of(GOOD.replace("20 mA", "20 mV"))
    assert problem == 'bad.yaml:6: load.current: "20 mV" is not a current; write it in A or mA (e.g. 20 mA)'


def test_broken_yaml_is_one_line():
    problems = problems_of("supply: 12 V\nload: {kind: led\n")
    assert len(problems) == 1
    assert problems[0].startswith("bad.yaml:")


def test_empty_file():
    (problem,) = problems_of("")
    assert "empty" in problem


def test_top_level_list():
    (problem,) = problems_of("- supply: 12 V\n")
    assert problem.startswith("bad.yaml:1: ") and "mapping" in problem


def test_unsafe_tag_is_not_run():
    # A safe loader refuses python/* tags (PyYAML SafeConstructor).
    problems = problems_of(GOOD.replace("Rear hatch courtesy light", "!!python/object/apply:os.system [echo]"))
    assert any(p.startswith("bad.yaml:1: title: ") for p in problems)


def test_recursive_alias_is_refused():
    problems = problems_of(GOOD + "topology: &t [*t]\n")
    assert any("topology" in p and "refers to itself" in p for p in problems)


def test_alias_bomb_is_cut_short():
    # Nested aliases multiply (the "billion laughs" pattern); expansion stops early.
    bomb = "a: &a [x, x, x, x, x, x, x, x, x, x]\n"
    for level in "bcdefg":
        prev = chr(ord(level) - 1)
        bomb += f"{level}: &{level} [{', '.join(['*' + prev] * 10)}]\n"
    problems = problems_of(bomb)
    assert any("more than 50,000 values" in p for p in problems)


def test_mains_message_states_the_covered_range():
    (problem,) = problems_of(GOOD.replace("supply: 12 V", "supply: 230 VAC"))
    assert "low-voltage DC systems of 5–32 V only" in problem
    assert "licensed practice" in problem


def test_missing_file_names_the_path(tmp_path):
    missing = tmp_path / "nope.yaml"
    with pytest.raises(SpecError) as info:
        load_spec(missing)
    assert info.value.problems == [f"{missing}: no such file"]


def test_directory_is_not_a_spec(tmp_path):
    with pytest.raises(SpecError, match="is a directory"):
        load_spec(tmp_path)


def test_non_utf8_file(tmp_path):
    path = tmp_path / "latin1.yaml"
    path.write_bytes(GOOD.replace("°", "\xb0").encode("latin-1"))
    with pytest.raises(SpecError, match="not UTF-8"):
        load_spec(path)


def test_spec_is_frozen():
    spec = parse_spec(GOOD, source="g")
    with pytest.raises(AttributeError):
        spec.fade_in_s = 2.0  # type: ignore[misc]
