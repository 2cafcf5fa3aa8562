"""Heatsinks as parts: the thermal chain against datasheet figures, and honest words about heat."""

from __future__ import annotations

import textwrap

import pytest

from sheetgen.inputs.spec import parse_spec
from sheetgen.outputs.export import report_dict
from sheetgen.pack.kit import kit_items
from sheetgen.sizing.analyse import analyse
from sheetgen.sizing.size import size


def _lamp(power_w: float, sizer):
    text = f"""\
    supply: 12 V
    load: {{kind: lamp, power: {power_w} W}}
    fade: {{in: 0.5 s, out: 3 s}}
    ambient: 40 °C
    install: building
    """
    return analyse(sizer(parse_spec(textwrap.dedent(text), source="lamp.yaml")), draws=20)


@pytest.fixture(scope="module")
def lamp15(lamp_sizing):
    return _lamp(15.0, lamp_sizing)


def test_junction_follows_the_series_chain_with_the_named_figures(lamp15):
    # T_j = T_a + P (R_θJC + R_θCS + R_θSA), the series thermal path of any power-device text
    # (e.g. onsemi AN1040/D, Mounting Considerations for Power Semiconductors). Figures:
    #   R_θJC 1.92 °C/W max: onsemi TIP120/D Rev. 9 (November 2014), thermal characteristics;
    #   R_θCS 1.3 °C/W: greased mica on TO-220, AN1040/D order of magnitude (from memory);
    #   R_θSA 8.0 °C/W: Aavid Thermalloy 531202B02500G, 5.0 W at 40 °C rise (distributor listing).
    m = lamp15.mounting
    assert lamp15.design.values.transistor.part_number == "TIP120"
    assert m.heatsink.part_number == "531202B02500G"
    assert (m.rth_jc_c_per_w, m.rth_cs_c_per_w, m.heatsink.rating_c_per_w) == (1.92, 1.3, 8.0)
    expected = 40.0 + lamp15.heat.hover_power_w * (1.92 + 1.3 + 40.0 / 5.0)
    assert m.junction_c == pytest.approx(expected, rel=1e-9)
    assert m.junction_c <= 125.0
    assert m.sink_c == pytest.approx(40.0 + lamp15.heat.hover_power_w * 8.0)
    # The chosen heatsink is the smallest good enough: the catalog's weaker 6030 (66 °C at 5 W) is not.
    assert 40.0 + lamp15.heat.hover_power_w * (1.92 + 1.3 + 66.0 / 5.0) > 125.0


def test_heatsink_and_kit_are_parts_in_the_json_and_kit_list(lamp15):
    d = report_dict(lamp15)
    sink = [p for p in d["parts"] if p["kind"] == "heatsink"]
    kit = [p for p in d["parts"] if p["kind"] == "insulator"]
    assert len(sink) == 1 and sink[0]["rating_c_per_w"] == 8.0 and sink[0]["part_number"] == "531202B02500G"
    assert len(kit) == 1 and kit[0]["rating_c_per_w"] == 1.3
    assert sink[0]["sources"] and kit[0]["sources"]
    items = {it.item: it for it in kit_items(lamp15)}
    assert items["heatsink"].value == "531202B02500G"
    assert "insulating kit" in items


def test_temperatures_are_printed_the_same_everywhere_and_never_past_the_rating(lamp15):
    # TIP120 Tj(max) 150 °C: onsemi TIP120/D Rev. 9. Free air the hovering feed would put the
    # junction far past it, so the words say so instead of printing a figure.
    m = lamp15.mounting
    assert m.free_air_c > 150.0
    text = " ".join(lamp15.cautions)
    assert "would exceed its 150 °C rating without the heatsink" in text
    assert f"{m.free_air_c:.0f} °C" not in text
    assert f"heatsink up to {m.sink_c:.0f} °C, junction {m.junction_c:.0f} °C" in text
    steps = " ".join(lamp15.wiring)
    assert "insulating kit MK1" in steps and "must read open" in steps
    assert lamp15.wiring.index(next(s for s in lamp15.wiring if s.startswith("Mount Q1"))) == 1


def test_no_heatsink_when_free_air_will_do(camper_report):
    assert camper_report.mounting is None
    assert not [p for p in report_dict(camper_report)["parts"] if p["kind"] in ("heatsink", "insulator")]
