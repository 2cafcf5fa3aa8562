"""The schematic names every part, marks every test point, keeps text as text and fits its box.

Every topology in the registry is drawn with every load.  The netlists are
built straight from the topology with fixed values (no sizing run), so these
tests stay fast.  Text is read back out of a one-page PDF with
pypdf, the way a reader's search or copy would see it.
"""

from __future__ import annotations

import io
import re
import sys

import pytest

from sheetgen.parts import catalog
from sheetgen.outputs.pdf.schematic import FONT_PT, _layout, part_label, schematic_drawing, schematic_svg
from sheetgen.sizing.size import GATE_CLAMP
from sheetgen.inputs.spec import spec_from_mapping
from sheetgen.circuits.topologies import NPN, TOPOLOGIES, Values, series_branches, window_for

pypdf = pytest.importorskip("pypdf")

LOADS = {
    "2x3 LEDs": {"kind": "led", "current": "20 mA", "vf": "3.1 V", "per_string": 3, "strings": 2},
    "1 LED": {"kind": "led", "current": "10 mA", "vf": "2.9 V"},
    "4x5 LEDs": {"kind": "led", "current": "15 mA", "vf": "3.0 V", "per_string": 5, "strings": 4},
    "lamp": {"kind": "lamp", "power": "3 W"},
    "2 lamps": {"kind": "lamp", "power": "5 W", "count": 2},
}


def _netlist(load: dict, topology=NPN, supply: str = "24 V"):
    spec = spec_from_mapping({"title": "test", "supply": supply, "load": load,
                              "fade": {"in": "1 s", "out": "3 s"}}, source="<test>")
    ground = topology.trigger == "ground"
    if topology.stage.kind == "mosfet":
        q = catalog.transistor("IRLZ44N")
    else:
        q = catalog.transistor("TIP120" if topology.stage.darlington else "BD139")
    # As the sizer does: a zener across the gate where the supply could exceed the gate rating.
    gate_at_risk = q.polarity == "nmos" and spec.supply.max_v > q.vgs_max_v
    values = Values(transistor=q, diode=catalog.diode("1N4007"), r_charge_ohm=4700.0, r_bleed_ohm=10_000.0,
                    r_base_ohm=1200.0, c_timing_f=1000e-6, r_led_ohm=560.0,
                    ratings=(("C1", 35.0, None), ("R6" if ground else "R4", None, 0.5)),
                    input_transistor=catalog.transistor("BC327-40") if ground else None,
                    clamp=catalog.diode(GATE_CLAMP) if gate_at_risk else None)
    return topology.build(spec, values, window_for(1.0, 3.0))


CASES = [(topology, load) for topology in sorted(TOPOLOGIES) for load in sorted(LOADS)]


def _pdf_text(drawing) -> str:
    """Put the drawing alone on a page and read its text back."""
    from reportlab.graphics import renderPDF
    from reportlab.pdfgen import canvas

    out = io.BytesIO()
    page = canvas.Canvas(out, pagesize=(drawing.width + 20, drawing.height + 20))
    renderPDF.draw(drawing, page, 10, 10)
    page.showPage()
    page.save()
    return pypdf.PdfReader(io.BytesIO(out.getvalue())).pages[0].extract_text()


def _expand(text: str) -> set[str]:
    """Every designator the text names, a range such as LED1–LED5 counting for all five."""
    refs = set(re.findall(r"\b(?:LED|LP|TP|R|C|D|Q)\d+\b", text))
    for prefix, a, b in re.findall(r"\b([A-Z]+)(\d+)\u2013\1(\d+)\b", text):
        refs.update(f"{prefix}{n}" for n in range(int(a), int(b) + 1))
    return refs


@pytest.fixture(scope="module", params=CASES, ids=[f"{t}-{load}" for t, load in CASES])
def case(request):
    topology = TOPOLOGIES[request.param[0]]
    netlist = _netlist(LOADS[request.param[1]], topology)
    drawing = schematic_drawing(netlist, topology, max_width_pt=300.0, max_height_pt=260.0)
    return topology, netlist, drawing, _pdf_text(drawing)


def test_every_part_is_named_with_its_value(case):
    _, netlist, _, text = case
    assert {p.ref for p in netlist.parts} <= _expand(text)
    lines = {line.strip() for line in text.splitlines()}
    for part in netlist.parts:
        for value in part_label(part)[1:]:
            assert value in lines, f"{part.ref}: {value!r} missing"


def test_values_are_written_with_units():
    text = _pdf_text(schematic_drawing(_netlist(LOADS["2x3 LEDs"]), NPN, max_width_pt=500, max_height_pt=500))
    for written in ("4.7 k\u03a9", "10 k\u03a9", "1.2 k\u03a9", "560 \u03a9", "1000 \u00b5F", "35 V", "1N4007", "BD139"):
        assert written in text


def test_a_ground_switched_darlington_names_both_transistors_and_the_input_resistors():
    topology = TOPOLOGIES["darlington-ground"]
    text = _pdf_text(schematic_drawing(_netlist(LOADS["2x3 LEDs"], topology), topology,
                                       max_width_pt=600, max_height_pt=500))
    for written in ("TIP120", "BC327-40", "4.7 k\u03a9", "47 k\u03a9", "560 \u03a9", "0.5 W"):
        assert written in text


def test_test_points_and_terminals_are_marked(case):
    topology, netlist, _, text = case
    tags = {label.split()[0] for label, _ in netlist.probes}
    ground = topology.trigger == "ground"
    assert netlist.probes == topology.probes
    emitter = topology.stage.emitter_resistor  # a current stage's emitter is probed too
    assert tags == {f"TP{k}" for k in range(1, 6 + ground + emitter)}
    assert tags <= _expand(text)
    for words in ("+24 V always-on", "(via fuse)", "switched feed", "ground"):
        assert words in text
    assert ("(grounded = on)" in text) == ground


def test_it_fits_the_box(case):
    _, _, drawing, _ = case
    assert 0 < drawing.width <= 300.0 and 0 < drawing.height <= 260.0
    x0, y0, x1, y1 = drawing.getBounds()
    assert x0 >= -0.01 and y0 >= -0.01 and x1 <= drawing.width + 0.01 and y1 <= drawing.height + 0.01


def test_a_roomy_box_does_not_blow_it_up():
    small = schematic_drawing(_netlist(LOADS["1 LED"]), NPN, max_width_pt=2000, max_height_pt=2000)
    bounds = small.getBounds()
    assert bounds[3] - bounds[1] < 400  # natural size: FONT_PT text, not poster size
    assert FONT_PT == pytest.approx(9.0)


@pytest.mark.parametrize("topology,load", CASES)
def test_labels_find_free_places(topology, load):
    pen = _layout(_netlist(LOADS[load], TOPOLOGIES[topology]), TOPOLOGIES[topology])
    assert pen.collisions == []
    for i, a in enumerate(pen.boxes):
        for b in pen.boxes[i + 1:]:
            assert not a.overlaps(b), (a.text, b.text)


def test_svg_keeps_text_as_text_and_is_repeatable():
    netlist = _netlist(LOADS["4x5 LEDs"])
    svg = schematic_svg(netlist, NPN)
    assert svg == schematic_svg(netlist, NPN)
    assert b"<text" in svg and b"LED1\xe2\x80\x93LED5" in svg  # en dash, UTF-8
    assert b"R5, R6" in svg  # the strings not drawn are still named


def test_load_branches_follow_the_netlist():
    netlist = _netlist(LOADS["4x5 LEDs"])
    branches = series_branches(netlist, top="supply", bottom="collector")
    assert [[p.ref for p in b] for b in branches][0] == ["R4", "LED1", "LED2", "LED3", "LED4", "LED5"]
    assert len(branches) == 4
    ground = _netlist(LOADS["4x5 LEDs"], TOPOLOGIES["npn-ground"])
    assert [p.ref for p in series_branches(ground, top="supply", bottom="collector")[0]][0] == "R6"


def test_the_input_stage_sits_on_its_nets():
    """Q2's emitter rises to the rail, its collector drops to the timer row where D1 starts."""
    topology = TOPOLOGIES["npn-ground"]
    pen = _layout(_netlist(LOADS["1 LED"], topology), topology)
    (_, e_y), e_net = pen._pins[("Q2", "E")]
    (_, b_y), b_net = pen._pins[("Q2", "B")]
    (c_x, c_y), c_net = pen._pins[("Q2", "C")]
    (d_x, d_y), d_net = pen._pins[("D1", "A")]
    assert (e_net, b_net, c_net, d_net) == ("supply", "q2_base", "switched", "switched")
    assert e_y > b_y > c_y > d_y and d_x > c_x
    (r4_x, r4_y), _ = pen._pins[("R4", "1")]
    (r5_x, r5_y), _ = pen._pins[("R5", "2")]
    (q_x, _), _ = pen._pins[("Q2", "B")]
    assert r4_y == r5_y == b_y and r4_x < r5_x < q_x  # R5 tees into the base wire between R4 and Q2


@pytest.mark.parametrize("name", ["mosfet", "mosfet-ground"])
def test_a_mosfet_hangs_by_its_gate_and_a_high_supply_clamps_it(name):
    """Q1 is drawn as the MOSFET it is; on 24 V the zener drops from the gate node to ground between R3 and Q1."""
    topology = TOPOLOGIES[name]
    pen = _layout(_netlist(LOADS["lamp"], topology), topology)
    (g_x, g_y), g_net = pen._pins[("Q1", "G")]
    (d_x, d_y), d_net = pen._pins[("Q1", "D")]
    (s_x, s_y), s_net = pen._pins[("Q1", "S")]
    assert (g_net, d_net, s_net) == ("gate", "drain", "0")
    assert d_y > g_y > s_y and d_x == s_x > g_x
    (k_x, k_y), k_net = pen._pins[("D2", "K")]
    (a_x, a_y), a_net = pen._pins[("D2", "A")]
    (r3_x, r3_y), _ = pen._pins[("R3", "2")]
    assert (k_net, a_net) == ("gate", "0")
    assert k_y == g_y == r3_y > a_y and k_x == a_x and r3_x < k_x < g_x
    kinds = {type(e).__name__ for e in pen.drawing.elements}
    assert {"AnalogNFet", "Zener"} <= kinds and not {"BjtNpn"} & kinds

    low = _layout(_netlist(LOADS["lamp"], topology, supply="12 V"), topology)
    assert "D2" not in low.named and "Zener" not in {type(e).__name__ for e in low.drawing.elements}
    assert low.collisions == []


def test_every_topology_has_a_recipe_and_the_engine_stays_clear_of_schemdraw():
    assert all(callable(t.draw) for t in TOPOLOGIES.values())
    code = "import sys, sheetgen.sizing.size, sheetgen.circuits.topologies; print('schemdraw' in sys.modules)"
    import subprocess

    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


def test_the_pen_speaks_the_whole_protocol_and_refuses_a_wrong_net():
    from sheetgen.outputs.pdf.schematic import SchemdrawPen
    from sheetgen.circuits.topologies import Pen

    wanted = {name for name in vars(Pen) if not name.startswith("_")}
    assert wanted <= set(dir(SchemdrawPen))
    netlist = _netlist(LOADS["1 LED"])
    pen = SchemdrawPen()
    pen.start("feed")
    with pytest.raises(ValueError, match="R2 has no pin on net 'feed'"):
        pen.resistor(netlist.part("R2"), "right")
    with pytest.raises(ValueError, match="ground symbol"):
        pen.ground()
    with pytest.raises(ValueError, match="test point"):
        pen.test_point("TP2 timing capacitor", "timer", "up")
    with pytest.raises(ValueError, match="Q1 is drawn as a pnp"):
        pen.pnp(netlist.part("Q1"))
    ground = _netlist(LOADS["1 LED"], TOPOLOGIES["npn-ground"])
    with pytest.raises(ValueError, match="Q2: base is on 'q2_base'"):
        pen.pnp(ground.part("Q2"))


def _guarded(load: dict, topology):
    """The netlist as a 12 V vehicle build has it: the supply guard, the TVS and the over-voltage cut-off."""
    from sheetgen.sizing import protection

    if load.get("per_string", 1) > 3:  # at 11 V no more than three white LEDs fit one string
        load = {**load, "per_string": 3}
    netlist = _netlist(load, topology, supply="12 V")
    spec = spec_from_mapping({"title": "test", "supply": "12 V", "load": load, "install": "vehicle",
                              "fade": {"in": "1 s", "out": "3 s"}}, source="<test>")
    return protection.apply(netlist, spec)


@pytest.mark.parametrize("topology,load", CASES)
def test_the_cards_narrower_drawing_names_everything_and_moves_the_cut_off_clear(topology, load):
    from sheetgen.outputs.pdf.schematic import _element_box, _union

    topo = TOPOLOGIES[topology]
    netlist = _guarded(LOADS[load], topo)
    assert netlist.by_role("cutoff")  # a 12 V vehicle supply has room for the cut-off
    full, narrow = _layout(netlist, topo), _layout(netlist, topo, compact=True)
    assert narrow.collisions == [] and set(narrow.named) >= {p.ref for p in netlist.parts}
    for i, a in enumerate(narrow.boxes):
        for b in narrow.boxes[i + 1:]:
            assert not a.overlaps(b), (a.text, b.text)
    # Narrower than the sheet's drawing, which puts the cut-off beside Q1.
    width = lambda pen: _union([_element_box(e) for e in pen.drawing.elements] + pen.boxes)
    assert width(narrow).x1 - width(narrow).x0 < width(full).x1 - width(full).x0
    # The piece moved apart meets no symbol or wire of the rest; only its own flags join it.
    (first, last), = narrow.pieces
    elements = narrow.drawing.elements
    piece = _union([_element_box(e) for e in elements[first:last]])
    labels = {id(e) for e in elements if type(e).__name__ == "Element"}  # the label holders finish() adds
    for e in elements[:first] + elements[last:]:
        if id(e) not in labels:
            assert not piece.overlaps(_element_box(e)), type(e).__name__
    assert _layout(netlist, topo).pieces == []  # the sheet's drawing leaves it where the recipe put it


def test_the_narrower_drawing_sets_terminal_words_on_short_lines():
    netlist = _netlist(LOADS["1 LED"])
    text = _pdf_text(schematic_drawing(netlist, NPN, max_width_pt=900, max_height_pt=900, compact=True))
    lines = {line.strip() for line in text.splitlines()}
    assert {"+24 V", "always-on", "(via fuse)", "switched", "feed", "ground"} <= lines
