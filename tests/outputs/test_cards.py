"""Wiring cards: names as written, one card per builder, paper, cut marks, both sides, fitting, layouts.

Text is pulled out of the PDF with pypdf; the cut marks are read from the page
content streams as the line segments they are drawn with and compared with the
corners the card layout puts the cards at.  The cards themselves are also looked
at by a person (pdftoppm) when their blocks change.
"""

from __future__ import annotations

import io
import re
from dataclasses import replace

import pytest
from pypdf import PdfReader
from pypdf.generic import ContentStream

from sheetgen.sizing import instructions
from sheetgen.cli import main
from sheetgen.errors import SpecError
from sheetgen.outputs.pdf.cards import (CARD_PAD_MM, MARK_LENGTH_MM, MARK_OFFSET_MM, PT_PER_MM, Card, card_sides,
                                   cut_marks, fit_card, render_cards)
from sheetgen.inputs.layout import CARD_BLOCK_NAMES, CardLayout, load_card_layout, load_layout, parse_layout

EPOCH = {"SOURCE_DATE_EPOCH": "1700000000"}
NAMES = ["Ana", "Zoë Ødegård", "<b>Bo</b> & <i>", "../../etc/passwd", "Yes", "Łukasz Żółć", "Ан Ли"]


@pytest.fixture(scope="module")
def a6() -> CardLayout:
    return load_card_layout("a6-card")


@pytest.fixture(scope="module")
def cards(camper_report, railway_report):
    """Seven named camper cards (an odd count: one sheet is half full) and three numbered railway cards."""
    out = [Card(report=camper_report, design="A", name=n, event="Spring build night \u00b7 2027-03-20") for n in NAMES]
    out += [Card(report=railway_report, design="B", place=f"Builder {k} of 3") for k in (1, 2, 3)]
    return out


@pytest.fixture(scope="module")
def pdf(cards, a6) -> bytes:
    return render_cards(cards, a6, title="Spring build night", environ=EPOCH)


@pytest.fixture(scope="module")
def pages(pdf):
    return PdfReader(io.BytesIO(pdf)).pages


def _text(page) -> str:
    return page.extract_text()


def _segments(page) -> list[tuple[float, float, float, float]]:
    """Every straight segment drawn as ``x1 y1 m x2 y2 l`` in the page's own content stream."""
    ops = ContentStream(page.get_contents(), page.pdf).operations
    out, start = [], None
    for operands, op in ops:
        if op == b"m":
            start = tuple(float(v) for v in operands)
        elif op == b"l" and start is not None:
            end = tuple(float(v) for v in operands)
            out.append((*start, *end))
            start = end
        else:
            start = None if op not in (b"m", b"l") else start
    return out


def _form_calls(page) -> int:
    return sum(1 for _, op in ContentStream(page.get_contents(), page.pdf).operations if op == b"Do")


# ------------------------------------------------------------------ names
def test_every_name_appears_exactly_as_written(pages):
    text = "\n".join(_text(p) for p in pages)
    for name in NAMES:
        assert name in text.splitlines(), name  # a line of its own: not merged, not marked up, not escaped
    assert "&lt;" not in text and "&amp;" not in text


def test_one_card_per_builder_and_sheets_never_mix_designs(pages, cards, a6):
    fronts = [p for p in pages if "fronts" in _text(p)]
    assert sum(_text(p).count("BUILDER") for p in fronts) == len(cards)
    # Seven A cards take four sheets of two; three B cards two more.
    assert len(fronts) == 4 + 2 and len(pages) == 2 * len(fronts)
    for page in fronts:
        titles = {t for t in ("Camper van step light", "Model railway station lamp") if t in _text(page)}
        assert len(titles) == 1


def test_numbered_cards_say_their_place_and_leave_a_line_for_the_name(pages):
    text = "\n".join(_text(p) for p in pages)
    for k in (1, 2, 3):
        assert f"BUILDER {k} OF 3" in text
    assert text.count("Name") >= 3


def test_backs_carry_no_names_and_sit_behind_either_flip(pages, a6):
    backs = [p for p in pages if "backs" in _text(p)]
    for page in backs:
        text = _text(page)
        assert not any(name in text for name in NAMES)
        assert "Wiring steps" in text and "CAUTIONS" in text
        # A 2 x 1 grid: one card's back must be printed in both places its front can land behind.
        assert _form_calls(page) == a6.per_sheet


def test_fonts_are_embedded_and_cover_the_names(pdf):
    from sheetgen.outputs.pdf.fonts import BOLD, missing_glyphs

    reader = PdfReader(io.BytesIO(pdf))
    seen = set()
    for page in reader.pages:
        fonts = dict(page["/Resources"].get("/Font", {}))
        for xobject in page["/Resources"].get("/XObject", {}).values():
            fonts.update(xobject.get_object().get("/Resources", {}).get("/Font", {}))
        for font in fonts.values():
            font = font.get_object()
            seen.add(font["/BaseFont"])
            assert "/FontFile2" in font["/FontDescriptor"], font["/BaseFont"]
    assert seen and all("DejaVuSans" in name for name in seen)
    assert all(missing_glyphs(name, font=BOLD) == "" for name in NAMES)


# ----------------------------------------------------------- paper and marks
@pytest.mark.parametrize("name, size_pt, grid", [("a6-card", (841.89, 595.28), (2, 1)),
                                                  ("4x6-card", (792.0, 612.0), (2, 1))])
def test_cards_are_set_landscape_two_to_a_sheet_of_the_layouts_paper(camper_report, name, size_pt, grid):
    layout = load_card_layout(name)
    assert layout.grid == grid
    reader = PdfReader(io.BytesIO(render_cards([Card(report=camper_report, name="Ana")], layout, title="t",
                                               environ=EPOCH)))
    for page in reader.pages:
        assert (float(page.mediabox.width), float(page.mediabox.height)) == pytest.approx(size_pt, abs=0.01)
    w, h = layout.card_pt
    assert (w / PT_PER_MM, h / PT_PER_MM) == pytest.approx(layout.card_mm)
    for slot in layout.slots():  # every card on the paper, clear of the least margin
        assert slot.x_pt >= layout.margins_mm * PT_PER_MM - 0.01
        assert slot.x_pt + w <= size_pt[0] - layout.margins_mm * PT_PER_MM + 0.01


def test_cut_marks_at_every_card_corner_on_fronts_only(pages, a6, camper_report, railway_report):
    # Each sheet's marks are those of the card its design is set on (the camper's is A6's larger card).
    on = {"Camper van step light": fit_card(camper_report, a6).layout,
          "Model railway station lamp": fit_card(railway_report, a6).layout}
    assert on["Camper van step light"] == a6.larger and on["Model railway station lamp"] == a6
    for page in pages:
        layout = next(lay for title, lay in on.items() if title in _text(page))
        slots = layout.slots()
        segments = _segments(page)
        front = "fronts" in _text(page)
        cards_here = _text(page).count("BUILDER") if front else 0
        for slot in slots[:cards_here]:
            for mark in cut_marks(slot, layout):
                assert any(all(abs(a - b) < 0.01 for a, b in zip(mark, seg)) for seg in segments), mark
        marks = [seg for seg in segments if any(all(abs(a - b) < 0.01 for a, b in zip(m, seg))
                                                for slot in slots for m in cut_marks(slot, layout))]
        assert len(marks) == 8 * cards_here  # an empty place on a half sheet gets no marks, a back none at all
    # Each mark starts outside its corner and runs away from the card, along one of its edges.
    for layout in (a6, a6.larger):
        _marks_stay_outside(layout)


def _marks_stay_outside(layout):
    w, h = layout.card_pt
    for slot in layout.slots():
        for x1, y1, x2, y2 in cut_marks(slot, layout):
            for x, y in ((x1, y1), (x2, y2)):
                inside = slot.x_pt < x < slot.x_pt + w and slot.y_pt < y < slot.y_pt + h
                assert not inside
            length = abs(x2 - x1) + abs(y2 - y1)
            assert 0 < length <= MARK_LENGTH_MM * PT_PER_MM + 1e-6
            assert (x1 == x2 and x1 in (slot.x_pt, slot.x_pt + w)) or (y1 == y2 and y1 in (slot.y_pt, slot.y_pt + h))
            gap = min(abs(x1 - cx) + abs(y1 - cy) for cx in (slot.x_pt, slot.x_pt + w)
                      for cy in (slot.y_pt, slot.y_pt + h))
            assert gap == pytest.approx(MARK_OFFSET_MM * PT_PER_MM)


def test_neighbouring_marks_do_not_touch_in_the_gap(a6):
    left, right = a6.slots()[:2]
    reach = max(max(x1, x2) for x1, _, x2, _ in cut_marks(left, a6))
    start = min(min(x1, x2) for x1, _, x2, _ in cut_marks(right, a6))
    assert reach < start


# --------------------------------------------------------------- fitting
@pytest.mark.parametrize("name", ["a6-card", "4x6-card"])
@pytest.mark.parametrize("which", ["camper_report", "railway_report"])
def test_both_sides_fit_without_shrinking_or_dropping_a_step(which, name, request):
    layout = load_card_layout(name)
    for report in (request.getfixturevalue(which),):
        fitted = fit_card(report, layout)
        w, h = fitted.layout.card_pt
        sides = fitted.sides
        assert set(sides) == {"front", "back"}
        placed = sides["front"].blocks + sides["back"].blocks
        assert sorted(placed) == sorted(layout.front + layout.back)  # every block once, order kept
        assert placed == layout.front + layout.back
        for side in sides.values():
            assert side.shrink == 1.0 and not side.steps_cut
            assert side.scale >= 0.78  # a body of 7 pt or more
            assert side.height_pt <= h - 2 * CARD_PAD_MM * PT_PER_MM


def test_a_design_too_long_for_the_card_keeps_the_first_steps_and_points_to_the_rest(camper_report, a6):
    long = replace(camper_report, brief=replace(camper_report.brief, steps=camper_report.brief.steps * 4))
    sides = card_sides(long, a6)
    side = next(s for s in sides.values() if "steps" in s.blocks)
    assert side.steps_cut and side.shrink == 1.0
    reader = PdfReader(io.BytesIO(render_cards([Card(report=long, name="Ana")], a6, title="t", environ=EPOCH)))
    text = " ".join(" ".join(p.extract_text().split()) for p in reader.pages)
    match = re.search(r"Steps (\d+)\u2013(\d+): see Wiring on the design's build sheet", text)
    assert match and int(match[2]) == len(long.brief.steps)
    assert f"{int(match[1]) - 1}. " in text  # the steps before it are all there


def test_same_cards_same_bytes(cards, a6, pdf):
    assert render_cards(cards, a6, title="Spring build night", environ=EPOCH) == pdf


# ----------------------------------------------------------- card wording
def _expand(text: str) -> set[str]:
    refs = set(re.findall(r"\b[A-Z]+\d+\b", text))
    for prefix, a, b in re.findall(r"\b([A-Z]+)(\d+)(?:\u2013| to )[A-Z]+(\d+)\b", text):
        refs |= {f"{prefix}{k}" for k in range(int(a), int(b) + 1)}
    return refs


def test_the_short_steps_still_wire_every_part(camper_report, railway_report):
    for report in (camper_report, railway_report):
        said = _expand(" ".join(report.brief.steps))
        assert {p.ref for p in report.design.netlist.parts} <= said
        assert len(report.brief.steps) < len(report.wiring) or len(report.design.netlist.by_role("load")) == 1


def test_card_cautions_are_the_sheets_less_the_two_the_card_says_elsewhere(camper_report):
    d, heat = camper_report.design, camper_report.heat
    # The supply guard's fitting caution stays off the card too: its steps name each banded end.
    guarded = 1 if d.netlist.by_role("reverse_polarity") else 0
    assert len(instructions.cautions(d, heat, short=True)) == len(instructions.cautions(d, heat)) - 2 - guarded
    assert camper_report.brief.steps[0].startswith("Disconnect the battery")
    assert "Fuse" in camper_report.brief.cautions[0]


# ----------------------------------------------------------------- layouts
def test_shipped_card_layouts_place_every_card_block():
    # the board takes half a side: it has a card of its own, and the small cards keep every other block
    for name, blocks in (("a6-card", set(CARD_BLOCK_NAMES) - {"board"}), ("4x6-card", set(CARD_BLOCK_NAMES) - {"board"}),
                         ("board-card", set(CARD_BLOCK_NAMES))):
        layout = load_layout(name)
        assert isinstance(layout, CardLayout) and sorted(layout.front + layout.back) == sorted(blocks)


_CARD = "name: mine\npage: A4\ncard: A6\n"


@pytest.mark.parametrize("snippet, key, line", [
    (_CARD + "front: [parts, cautions]\nback: [stesp]\n", "back[1]", 5),
    (_CARD + "front: [parts, cautions]\nback: [parts]\n", "back[1]", 5),
    (_CARD + "front: [parts]\n", "front", 4),
    ("name: mine\npage: A4\ncard: A7\nfront: [cautions]\n", "card", 3),
    ("name: mine\npage: A4\ncard: {width: 90 mm}\nfront: [cautions]\n", "card.height", 3),
    (_CARD + "gap: 2 mm\nfront: [cautions]\n", "gap", 4),
    (_CARD + "front: [cautions]\nblocks: [summary]\n", "blocks", 5),
    (_CARD + "front: [cautions]\nbalance: maybe\n", "balance", 5),
    # Below 6 pt: the footer line needs 83 mm of card; cautions on the front need 70 mm of height.
    ("name: mine\npage: A4\ncard: {width: 80 mm, height: 120 mm}\nfront: [parts]\nback: [cautions]\n",
     "card.width", 3),
    ("name: mine\npage: A4\ncard:\n  width: 90 mm\n  height: 65 mm\nfront: [cautions]\n", "card.height", 5),
    (_CARD + "front: [cautions]\nlarger: {card: A6}\n", "larger.card", 5),
    (_CARD + "front: [cautions]\nlarger: {card: {width: 128 mm, height: 140 mm}}\n", "larger.card", 5),
    (_CARD + "front: [cautions]\nlarger: {margins: 8 mm}\n", "larger.card", 5),
    (_CARD + "front: [cautions]\nlarger: {card: {width: 128 mm, height: 184 mm}, gap: 50 mm}\n", "larger.gap", 5),
    (_CARD + "front: [cautions]\nlarger: 128 mm\n", "larger", 5),
    # An empty card beside a larger one is named, not compared (the fuzz test found it).
    ("name: mine\npage: A4\ncard:\nfront: [cautions]\nlarger: {card: A6}\n", "card", 3),
])
def test_card_layout_problems_name_file_key_and_line(snippet, key, line):
    with pytest.raises(SpecError) as err:
        parse_layout(snippet, source="mine.yaml")
    assert any(p.startswith(f"mine.yaml:{line}: {key}") for p in err.value.problems), err.value.problems


def test_a_card_too_small_for_6_pt_says_the_least_that_works():
    with pytest.raises(SpecError) as err:
        parse_layout("name: tiny\npage: A4\ncard: {width: 70 mm, height: 62 mm}\nfront: [cautions]\n",
                     source="tiny.yaml")
    wide, tall = err.value.problems
    assert wide.startswith("tiny.yaml:3: card.width: 70 mm is too narrow") and "at least 83 mm wide" in wide
    assert tall.startswith("tiny.yaml:3: card.height: 62 mm is too short") and "at least 70 mm tall" in tall
    # The least that works is accepted: with the cautions on the back the header is shorter (60 mm).
    parse_layout("name: least\npage: A4\ncard: {width: 83 mm, height: 70 mm}\nfront: [cautions]\n", source="l.yaml")
    parse_layout("name: least\npage: A4\ncard: {width: 83 mm, height: 60 mm}\nfront: [harness]\n"
                 "back: [cautions]\n", source="l.yaml")


def test_the_least_card_figures_are_what_the_renderer_sets(camper_report):
    """The reader's bounds (inputs/layout.py) measured again with the renderer and the catalog's words."""
    from types import SimpleNamespace as NS

    from reportlab.pdfbase.pdfmetrics import stringWidth

    from sheetgen.inputs import layout as L
    from sheetgen.outputs.pdf import cards as C
    from sheetgen.outputs.pdf.fonts import REGULAR, register
    from sheetgen.outputs.pdf.sheet import FOOTER_TEXT
    from sheetgen.parts import installs
    from sheetgen.sizing import mounting

    register()
    footer_mm = stringWidth(FOOTER_TEXT, REGULAR, C.MIN_TEXT_PT) / PT_PER_MM
    assert footer_mm <= L.CARD_FOOTER_LINE_MM < footer_mm + 0.1
    assert (C._FRONT_HEAD_PT, C._BACK_HEAD_PT, C._FOOT_PT, C.CARD_PAD_MM) == (
        L.CARD_FRONT_HEAD_PT, L.CARD_BACK_HEAD_PT, L.CARD_FOOT_PT, L.CARD_PAD_MM)
    # The longest card cautions: the fuse (first on every card), a heatsink with its kit and its heat
    # at three-figure temperatures, the install with the longest card cautions, and a 24 V guard's
    # warning that it has no cut-off.  (A lamp's would add one; the sizer refuses lamps for now.)
    fuse = camper_report.brief.cautions[0]
    m = NS(heatsink=NS(ref="HS1", part_number="", rating_c_per_w=9.9), insulator=object(), junction_c=150.0,
           sink_c=125.0, free_air_c=200.0, tj_max_c=150.0)
    heat = [card for _, card in mounting.heat_cautions(NS(peak_junction_c=200.0), m)]
    place = max(([card for _, card in installs.install(n).cautions if card]
                 for n in ("vehicle", "boat", "building", "bench")), key=lambda texts: sum(map(len, texts)))
    guarded = NS(netlist=NS(by_role=lambda r: [NS(ref="D2")] if r in ("reverse_polarity", "surge") else []))
    guard = [card for _, card in instructions.guard_cautions(guarded) if card]
    worst = (fuse, *heat, *place, *guard)
    assert fuse.startswith("Fuse") and len(worst) == 6
    width = (L.CARD_MIN_WIDTH_MM - 2 * L.CARD_PAD_MM) * PT_PER_MM
    block = C._cautions(NS(brief=NS(cautions=worst)), C._Frame(C._styles(C.SCALES[-1]), width, 0.0, None, None))
    cautions_mm = block.wrap(width, 1e6)[1] / PT_PER_MM
    assert cautions_mm <= L.CARD_CAUTIONS_MM < cautions_mm + 0.5
    assert C._styles(C.SCALES[-1]).caution.fontSize >= C.MIN_TEXT_PT


def test_a_card_of_the_least_size_sets_a_real_design_at_6_pt(railway_report):
    least = parse_layout("name: least\npage: A4\ncard: {width: 83 mm, height: 70 mm}\nfront: [cautions]\n",
                         source="least.yaml")
    pdf = render_cards([Card(report=railway_report, design="A", name="Ana")], least, title="t", environ=EPOCH)
    assert _smallest_text_pt(pdf) >= 6.0 - 1e-6
    assert all(side.shrink == 1.0 for side in fit_card(railway_report, least).sides.values())
    # A design that cannot be set at 6 pt on a card is refused, naming the layout; nothing is shrunk.
    small = parse_layout("name: small\npage: A4\ncard: {width: 90 mm, height: 90 mm}\nfront: [schematic, cautions]\n",
                         source="small.yaml")
    with pytest.raises(SpecError, match=r"small.yaml: card: 90 × 90 mm cannot set the card of 'Model railway"):
        fit_card(railway_report, small)


def test_a_card_too_big_for_the_paper_is_refused():
    with pytest.raises(SpecError, match="does not fit on A4"):
        parse_layout("name: big\npage: A4\ncard: {width: 200 mm, height: 200 mm}\nfront: [cautions]\n",
                     source="big.yaml")


def test_a_smaller_card_sets_four_to_a_sheet():
    layout = parse_layout("name: four\npage: A4\ncard: {width: 94 mm, height: 134 mm}\nmargins: 6 mm\n"
                          "gap: 8 mm\nfront: [schematic, parts, harness]\nback: [steps, readings, cautions]\n",
                          source="four.yaml")
    assert layout.grid == (2, 2) and layout.sheet_size_pt == pytest.approx((595.2756, 841.8898))


# ------------------------------------------------------------ command line
def test_build_with_a_card_layout_writes_a_sheet_of_cards(camper_report, tmp_path, monkeypatch, capsys):
    from pathlib import Path

    camper = Path(__file__).parents[2] / "examples" / "camper-van-step-light.yaml"
    monkeypatch.setattr("sheetgen.sizing.size.size", lambda spec: camper_report.design)
    monkeypatch.setattr("sheetgen.sizing.analyse.analyse", lambda design, **_: camper_report)
    monkeypatch.chdir(tmp_path)
    assert main(["build", str(camper), "--layout", "a6-card"]) == 0
    out = tmp_path / "camper-van-step-light-cards.pdf"
    assert capsys.readouterr().out.strip() == str(out)
    reader = PdfReader(out)
    fronts = [p for p in reader.pages if "fronts" in p.extract_text()]
    assert len(fronts) == 1 and fronts[0].extract_text().count("Name") == load_card_layout("a6-card").per_sheet
    assert [p.name for p in tmp_path.iterdir()] == [out.name]


@pytest.mark.parametrize("args, needle", [
    (["--layout", "a6-card"], "a6-card is a card layout"),
    (["--cards", "a4-sheet"], "a4-sheet is a sheet layout"),
    (["--cards", "a7-card"], "no shipped layout is named \"a7-card\""),
])
def test_pack_refuses_the_wrong_kind_of_layout(tmp_path, capsys, args, needle):
    from pathlib import Path

    event = Path(__file__).parents[2] / "examples" / "events" / "spring-build-night.yaml"
    assert main(["pack", str(event), "-o", str(tmp_path / "out"), *args]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and needle in err[0]
    assert not (tmp_path / "out").exists()


def _smallest_text_pt(pdf: bytes) -> float:
    """The smallest size any text is drawn at, forms included: font size × the text and page matrices."""
    import math

    sizes = []

    def visit(text, cm, tm, _font, size):
        if text.strip():
            scale_y = math.hypot(tm[2] * cm[0] + tm[3] * cm[2], tm[2] * cm[1] + tm[3] * cm[3])
            sizes.append(size * scale_y)

    for page in PdfReader(io.BytesIO(pdf)).pages:
        page.extract_text(visitor_text=visit)
    return min(sizes)


@pytest.fixture(scope="module")
def cabinet_report():
    from pathlib import Path

    from sheetgen.inputs.spec import load_spec
    from sheetgen.sizing.analyse import analyse
    from sheetgen.sizing.size import size

    return analyse(size(load_spec(Path(__file__).resolve().parents[2] / "examples" / "workshop-cabinet.yaml")))


@pytest.mark.parametrize("layout", ["a6-card", "4x6-card"])
@pytest.mark.parametrize("which", ["camper_report", "railway_report", "cabinet_report"])  # 6, 1 and 20 LEDs
def test_nothing_on_a_card_is_printed_below_6_pt(which, layout, request):
    # 6 pt is the smallest text these sheets allow (common practice for printed instructions, no source).
    report = request.getfixturevalue(which)
    pdf = render_cards([Card(report=report, design="A", name="Ana", event="Spring build night \u00b7 2027-03-20")],
                       load_card_layout(layout), title="t", environ=EPOCH)
    assert _smallest_text_pt(pdf) >= 6.0 - 1e-6, report.design.spec.title


def test_many_strings_are_drawn_as_one_and_a_note_when_that_reads_larger(cabinet_report, a6):
    from sheetgen.outputs.pdf.schematic import schematic_svg

    d = cabinet_report.design
    svg = schematic_svg(d.netlist, d.topology, compact=True).decode("utf-8")
    assert "+ 3 strings" in svg and "the same:" in svg  # 4 strings: one drawn, the note names the other three
    assert all(s.shrink == 1.0 for s in card_sides(cabinet_report, a6).values())


def test_a_long_event_name_gives_way_but_its_date_prints_whole(cabinet_report, a6):
    # The building design: it fits A6 itself, so its header is set on the A6 card's width.
    event = "Spring build night of the coast and river model railway and camper van clubs \u00b7 2027-03-20"
    pdf = render_cards([Card(report=cabinet_report, design="A", name="Ana", event=event)], a6, title="t",
                       environ=EPOCH)
    text = PdfReader(io.BytesIO(pdf)).pages[0].extract_text()
    assert "\u2026 \u00b7 2027-03-20" in text and "Spring build night" in text
    assert _smallest_text_pt(pdf) >= 6.0 - 1e-6


def _example_reports():
    """Every example spec and the built-in demo, sized and analysed."""
    from pathlib import Path

    from sheetgen.inputs.demo import demo_spec
    from sheetgen.inputs.spec import load_spec
    from sheetgen.sizing.analyse import analyse
    from sheetgen.sizing.size import size

    specs = [load_spec(p) for p in sorted((Path(__file__).resolve().parents[2] / "examples").glob("*.yaml"))]
    return [analyse(size(spec)) for spec in specs + [demo_spec()]]


@pytest.fixture(scope="module")
def example_reports():
    return _example_reports()


def test_every_example_and_the_demo_print_nothing_below_6_pt_on_either_small_card(example_reports):
    # 6 pt is the smallest text these sheets allow (common practice for printed instructions, no source).
    from pathlib import Path

    assert len(example_reports) == len(list((Path(__file__).resolve().parents[2] / "examples").glob("*.yaml"))) + 1
    for name in ("a6-card", "4x6-card"):
        layout = load_card_layout(name)
        for report in example_reports:
            title = report.design.spec.title
            card = Card(report=report, design="A", name="Ana", event="Spring build night \u00b7 2027-03-20")
            pdf = render_cards([card], layout, title="t", environ=EPOCH)
            assert _smallest_text_pt(pdf) >= 6.0 - 1e-6, (name, title)
            fitted = fit_card(report, layout)
            assert fitted.layout in (layout, layout.larger), (name, title)
            for side in fitted.sides.values():  # every step on the card, nothing shrunk
                assert side.legible and side.shrink == 1.0 and not side.steps_cut, (name, title)
            text = " ".join(" ".join(p.extract_text().split()) for p in PdfReader(io.BytesIO(pdf)).pages)
            assert (fitted.moved_from is not None) == ("this design does not fit" in text), (name, title)


@pytest.mark.parametrize("name", ["a6-card", "4x6-card"])
def test_a_design_too_full_for_the_small_card_moves_to_the_larger_and_its_sheets_say_so(camper_report,
                                                                                        railway_report, name):
    layout = load_card_layout(name)
    own, big = fit_card(railway_report, layout), fit_card(camper_report, layout)
    assert own.layout == layout and own.note == ""
    # The camper's guard and cut-off with its thirteen steps need more than one small card at 6 pt.
    assert not all(s.legible and not s.steps_cut for s in card_sides(camper_report, layout).values())
    assert big.layout == layout.larger and big.moved_from == layout
    assert big.layout.front == layout.front and big.layout.back == layout.back
    w, h = big.layout.card_pt
    assert w > layout.card_pt[0] and h > layout.card_pt[1] and big.layout.per_sheet == 2
    pdf = render_cards([Card(report=camper_report, name="Ana"), Card(report=railway_report, name="Bo")], layout,
                       title="t", environ=EPOCH)
    pages = PdfReader(io.BytesIO(pdf)).pages
    assert len(pages) == 4
    small_w, small_h = (round(x, 1) for x in layout.card_mm)
    large_w, large_h = (round(x, 1) for x in big.layout.card_mm)
    for page in pages[:2]:  # the camper's front and back: the note on each, outside the cards
        assert f"set on {large_w:g} \u00d7 {large_h:g} mm cards: this design does not fit {small_w:g} \u00d7 " \
               f"{small_h:g} mm with every step at 6 pt" in " ".join(page.extract_text().split())
        assert (float(page.mediabox.width), float(page.mediabox.height)) == pytest.approx(big.layout.sheet_size_pt)
    for page in pages[2:]:
        assert "this design does not fit" not in page.extract_text()


def test_long_names_two_letter_kits_and_long_titles_stay_at_6_pt(cabinet_report):
    layout = load_card_layout("4x6-card")  # the narrower of the two
    name = "W" * 60  # NAME_MAX_CHARS of the widest capital
    long = replace(cabinet_report, design=replace(cabinet_report.design, spec=replace(
        cabinet_report.design.spec, title="Workshop cabinet light over the long bench by the window " * 2)))
    pdf = render_cards([Card(report=long, design="AB", name=name)], layout, title="Spring build night " * 8,
                       environ=EPOCH)
    assert _smallest_text_pt(pdf) >= 6.0 - 1e-6
    text = PdfReader(io.BytesIO(pdf)).pages[0].extract_text()
    assert "".join(line for line in text.splitlines() if set(line) == {"W"}) == name  # whole, on its lines
    assert "AB" in PdfReader(io.BytesIO(pdf)).pages[1].extract_text()
