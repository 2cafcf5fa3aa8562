"""The build sheet: every block's content, numbers equal to the JSON report's, fonts, paper, bytes, files.

Text is pulled out of the PDF with pypdf and compared with the Report as
``sheetgen.outputs.export.report_dict`` gives it, formatted the way the sheet formats
it, so a number that drifts between the JSON and the page fails here.  The
pages themselves are also looked at by a person (pdftoppm) when blocks change.
"""

from __future__ import annotations

import io
import re
from pathlib import Path

import pytest
from pypdf import PdfReader

from sheetgen.sizing.analyse import analyse
from sheetgen.cli import main
from sheetgen.errors import InfeasibleDesign, SpecError
from sheetgen.outputs.export import report_dict
from sheetgen.engine.measure import DEFINITIONS
from sheetgen.outputs.pdf import blocks
from sheetgen.parts.colour_code import bands
from sheetgen.inputs.blocknames import Entry
from sheetgen.inputs.layout import BLOCK_NAMES, load_layout, parse_layout, shipped_layouts
from sheetgen.outputs.pdf.sheet import FOOTER_TEXT, build_sheet, render_sheet, sheet_date
from sheetgen.sizing.size import size
from sheetgen.inputs.spec import load_spec
from sheetgen.inputs.units import format_quantity, rkm_code, rkm_code_farad

ROOT = Path(__file__).resolve().parents[2]
CAMPER = ROOT / "examples" / "camper-van-step-light.yaml"
EPOCH = {"SOURCE_DATE_EPOCH": "1700000000"}  # 2023-11-14 22:13:20 UTC
EN_DASH = "\u2013"


@pytest.fixture(scope="module")
def report():
    return analyse(size(load_spec(CAMPER)))


@pytest.fixture(scope="module")
def data(report):
    return report_dict(report)


@pytest.fixture(scope="module")
def pdf_bytes(report):
    return render_sheet(report, load_layout("a4-sheet"), environ=EPOCH)


@pytest.fixture(scope="module")
def text(pdf_bytes):
    """All the sheet's text, whitespace folded to single spaces."""
    reader = PdfReader(io.BytesIO(pdf_bytes))
    return " ".join(" ".join(page.extract_text().split()) for page in reader.pages)


def _expand_ranges(text: str) -> str:
    """``LED1–LED6`` in the parts list stands for LED1 … LED6: spell the run out for searching."""
    def run(m):
        prefix, a, b = m[1], int(m[2]), int(m[4])
        return " ".join(f"{prefix}{k}" for k in range(a, b + 1))
    return re.sub(r"\b([A-Z]+)(\d+)" + EN_DASH + r"\s?([A-Z]+)\s?(\d+)\b", run, text)


# ------------------------------------------------------------------- blocks
def test_summary_prints_requested_and_achieved_fades_with_definitions(text, data):
    assert f"{format_quantity(data['fade_in_s'], 's')} achieved" in text
    assert f"{format_quantity(data['fade_out_s'], 's')} achieved" in text
    assert f"asked {format_quantity(data['requested']['fade_in_s'], 's')}" in text
    assert f"asked {format_quantity(data['requested']['fade_out_s'], 's')}" in text
    for definition in DEFINITIONS.values():
        assert " ".join(definition.split()) in text
    assert format_quantity(data["steady_load_a"], "A") in text
    assert f"{data['overdrive_at_min_supply']:.2f} ×" in text
    sup = data["supply"]
    assert f"sized for {format_quantity(sup['min_v'], 'V')} to {format_quantity(sup['max_v'], 'V')}" in text
    for reason in data["reasons"]:
        assert " ".join(reason.split()) in text


def test_parts_list_values_codes_ratings_and_bands(report, text, data):
    for part in data["parts"]:
        if part["kind"] == "resistor":
            assert format_quantity(part["value"], "ohm") in text
            assert rkm_code(part["value"]) in text
            assert " ".join(bands(part["value"], part["tolerance"])) in text
            assert format_quantity(part["rating_w"], "W") in text
        if part["kind"] == "capacitor":
            assert format_quantity(part["value"], "F") in text  # "1000 µF"
            assert rkm_code_farad(part["value"]) in text  # "1m0"
            assert format_quantity(part["rating_v"], "V") in text
        if part["part_number"]:
            assert part["part_number"] in text
    assert "±5 %" in text and "±20 %" in text


def test_every_part_reference_appears_in_the_parts_list(text, data):
    parts_text = _expand_ranges(text.split("Parts list", 1)[1])
    for part in data["parts"]:
        assert re.search(rf"\b{part['ref']}\b", parts_text), part["ref"]


def test_heat_figures_equal_the_report(report, text, data):
    h = data["heat"]
    assert format_quantity(h["peak_power_w"], "W") in text
    assert blocks.watts(h["steady_power_w"]) in text
    assert format_quantity(h["hover_power_w"], "W") in text
    assert blocks.joules(h["fade_energy_j"]) in text
    assert f"{h['peak_junction_c']:.0f} °C" in text
    assert ("Not needed" in text) == (h["heatsink_c_per_w"] is None)
    for r in h["resistors"]:
        assert re.search(rf"{r['ref']} {re.escape(blocks.watts(r['power_w']))} "
                         rf"{re.escape(format_quantity(r['rating_w'], 'W'))}", text), r["ref"]


def test_bench_readings_table(text, data):
    for row in data["bench"]:
        on = blocks.volts_range(tuple(row["on_v"]))
        off = blocks.volts_range(tuple(row["off_v"]))
        assert f"{row['point']} {on} {off}" in text


def test_faults_block_prints_every_symptom_and_the_readings_that_tell_it(report, text):
    assert "If it does not work" in text
    rows, unseen = blocks._fault_rows(report)
    assert rows and {c.ref for _, cases, _ in rows for c in cases} | {c.ref for c in unseen} == \
        {c.ref for c in report.faults}
    faults_text = text.split("If it does not work", 1)[1]
    for symptom, cases, telling in rows:
        assert " ".join((symptom[:1].upper() + symptom[1:] + ".").split()) in faults_text, symptom
        if cases[0].look != "fuse":
            for r in telling:
                reading = f"{r.point.split()[0]} {blocks._volts(r.on_v)} / {blocks._volts(r.off_v)}"
                assert " ".join(reading.split()) in faults_text, reading
    if unseen:
        closing = faults_text.split("check these by eye", 1)[1]
        for case in unseen:
            assert re.search(rf"\b{case.ref}\b", _expand_ranges(closing)), case.ref


def test_wiring_steps_numbered_and_harness_stated(text, data):
    for k, step in enumerate(data["wiring"], start=1):
        assert f"{k}. {' '.join(step.split())}" in text
    hz = data["harness"]
    assert f"Fuse {hz['fuse_a']:g} A" in text
    assert f"{hz['wire_mm2']:g} mm² ({hz['wire_awg']} AWG)" in text


def test_cautions_boxed_on_the_sheet_and_footer_on_every_page(pdf_bytes, text, data):
    assert "CAUTIONS" in text
    for caution in data["cautions"]:
        assert " ".join(caution.split()) in text
    pages = PdfReader(io.BytesIO(pdf_bytes)).pages
    for n, page in enumerate(pages, start=1):
        page_text = " ".join(page.extract_text().split())
        assert FOOTER_TEXT in page_text
        assert f"page {n} of {len(pages)}" in page_text
        assert "Camper van step light" in page_text  # the title block


def test_timing_plot_marks_both_fade_points(text, data):
    # Each panel marks where the light crosses the two reference levels (the timing contract).
    assert f"10 % at {format_quantity(data['delay_on_s'], 's')}" in text
    assert f"90 % at {format_quantity(data['delay_on_s'] + data['fade_in_s'], 's')}" in text
    assert f"90 % at {format_quantity(data['hold_off_s'], 's')}" in text
    assert f"10 % at {format_quantity(data['hold_off_s'] + data['fade_out_s'], 's')}" in text
    assert "load current (mA)" in text and "time since the feed switched on (s)" in text


def test_tuning_and_spread_rows(text, data):
    for row in data["tuning"]:
        assert format_quantity(row["fade_out_s"], "s") in text
    p5, p95 = data["tolerance"]["fade_in_s"]["p5"], data["tolerance"]["fade_in_s"]["p95"]
    assert blocks.spread_text((p5, 0.0, p95)) in text


def test_schematic_block_carries_the_vector_drawing(report, text):
    from reportlab.graphics.shapes import Drawing

    block = blocks.schematic_block(report, blocks.Frame(width_pt=500.0, height_pt=300.0 / 0.42))
    block.wrap(500.0, 700.0)
    drawing = block.items[0]._made[1]
    assert isinstance(drawing, Drawing) and drawing.height <= 300.0 + 1e-6 and drawing.width <= 500.0 + 1e-6
    assert "TP2" in text and "BC337-40" in text


# ---------------------------------------------------------- fonts and paper
def test_every_font_is_embedded_and_the_glyphs_exist(pdf_bytes, text):
    from sheetgen.outputs.pdf.fonts import BOLD, REGULAR, SHEET_GLYPHS, missing_glyphs

    reader = PdfReader(io.BytesIO(pdf_bytes))
    seen = set()
    for page in reader.pages:
        for font in page["/Resources"]["/Font"].values():
            font = font.get_object()
            seen.add(font["/BaseFont"])
            assert "/FontFile2" in font["/FontDescriptor"], font["/BaseFont"]
    assert seen and all("DejaVuSans" in name for name in seen)
    assert missing_glyphs(SHEET_GLYPHS, font=REGULAR) == "" and missing_glyphs(SHEET_GLYPHS, font=BOLD) == ""
    for glyph in ("µF", "Ω", "°C", "±", "×", EN_DASH):
        assert glyph in text


@pytest.mark.parametrize("name, size_pt", [("a4-sheet", (595.28, 841.89)), ("letter-sheet", (612.0, 792.0))])
def test_page_size_of_each_shipped_layout(report, name, size_pt):
    reader = PdfReader(io.BytesIO(render_sheet(report, load_layout(name), environ=EPOCH)))
    for page in reader.pages:
        box = page.mediabox
        assert (float(box.width), float(box.height)) == pytest.approx(size_pt, abs=0.01)


# ------------------------------------------------------------- reproducible
def test_same_input_same_bytes_and_the_epoch_date(report, pdf_bytes, text):
    assert render_sheet(report, load_layout("a4-sheet"), environ=EPOCH) == pdf_bytes
    assert "2023-11-14" in text
    assert sheet_date({}) is not None and str(sheet_date(EPOCH)) == "2023-11-14"
    with pytest.raises(SpecError, match="SOURCE_DATE_EPOCH"):
        sheet_date({"SOURCE_DATE_EPOCH": "yesterday"})


# ------------------------------------------------------------- atomic write
def test_a_failing_build_leaves_no_file(report, tmp_path, monkeypatch):
    def broken(*_a, **_k):
        raise RuntimeError("a block that cannot draw")

    monkeypatch.setitem(blocks.SHEET_BLOCKS.makers, "heat", Entry(broken))
    out = tmp_path / "sheet.pdf"
    with pytest.raises(RuntimeError):
        build_sheet(report, load_layout("a4-sheet"), out, environ=EPOCH)
    assert list(tmp_path.iterdir()) == []


def test_a_failing_build_keeps_the_old_file(report, tmp_path, monkeypatch):
    out = tmp_path / "sheet.pdf"
    out.write_bytes(b"old sheet")
    monkeypatch.setitem(blocks.SHEET_BLOCKS.makers, "parts", Entry(lambda *_a, **_k: 1 / 0))
    with pytest.raises(ZeroDivisionError):
        build_sheet(report, load_layout("a4-sheet"), out, environ=EPOCH)
    assert out.read_bytes() == b"old sheet" and [p.name for p in tmp_path.iterdir()] == ["sheet.pdf"]


def test_build_writes_the_file_and_returns_its_path(report, tmp_path, pdf_bytes):
    out = build_sheet(report, load_layout("a4-sheet"), tmp_path / "van.pdf", environ=EPOCH)
    assert out == tmp_path / "van.pdf" and out.read_bytes() == pdf_bytes
    assert [p.name for p in tmp_path.iterdir()] == ["van.pdf"]


# ---------------------------------------------------------------- command line
def test_cli_infeasible_spec_exits_3_and_writes_nothing(tmp_path, monkeypatch, capsys):
    def infeasible(_spec):
        raise InfeasibleDesign("the timing capacitor would exceed 10 000 µF")

    monkeypatch.setattr("sheetgen.sizing.size.size", infeasible)
    assert main(["build", str(CAMPER), "-o", str(tmp_path / "x.pdf")]) == 3
    assert list(tmp_path.iterdir()) == []


def test_demo_writes_its_sheet_in_the_current_folder_and_prints_the_path(report, tmp_path, monkeypatch, capsys):
    from sheetgen.inputs.demo import OUTPUT, demo_spec

    assert demo_spec().title.startswith("Camper van")  # the built-in spec passes the spec checker
    seen = []
    monkeypatch.setattr("sheetgen.sizing.size.size", lambda spec: seen.append(spec) or report.design)
    monkeypatch.setattr("sheetgen.sizing.analyse.analyse", lambda design, **_: report)
    monkeypatch.chdir(tmp_path)
    assert main(["demo"]) == 0
    assert seen and seen[0] == demo_spec()
    printed = capsys.readouterr().out.strip()
    assert printed == str(tmp_path / OUTPUT) and (tmp_path / OUTPUT).read_bytes()[:5] == b"%PDF-"


def test_build_defaults_to_the_spec_name_in_the_current_folder(report, tmp_path, monkeypatch, capsys):
    monkeypatch.setattr("sheetgen.sizing.size.size", lambda spec: report.design)
    monkeypatch.setattr("sheetgen.sizing.analyse.analyse", lambda design, **_: report)
    monkeypatch.chdir(tmp_path)
    assert main(["build", str(CAMPER), "--layout", "letter-sheet"]) == 0
    assert capsys.readouterr().out.strip() == str(tmp_path / "camper-van-step-light.pdf")
    page = PdfReader(tmp_path / "camper-van-step-light.pdf").pages[0]
    assert float(page.mediabox.width) == pytest.approx(612.0)


@pytest.mark.parametrize("command", ["build", "demo"])
def test_help_of_the_sheet_commands(command, capsys):
    with pytest.raises(SystemExit) as done:
        main([command, "--help"])
    assert done.value.code == 0 and "usage: sheetgen" in capsys.readouterr().out


@pytest.mark.parametrize("args, needle", [
    (["build", "/nonexistent/van.yaml"], "/nonexistent/van.yaml: no such file"),
    (["build", str(CAMPER), "-o", "/nonexistent/folder/van.pdf"], "does not exist"),
    (["build", str(CAMPER), "--layout", "a5-sheet"], "no shipped layout is named \"a5-sheet\""),
])
def test_cli_bad_input_exits_2_with_one_clear_line(tmp_path, monkeypatch, capsys, args, needle):
    monkeypatch.chdir(tmp_path)
    assert main(args) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and needle in err[0]
    assert list(tmp_path.iterdir()) == []


def test_cli_layout_file_with_a_typo_names_file_line_and_key(tmp_path, monkeypatch, capsys):
    text = (ROOT / "layouts" / "a4-sheet.yaml").read_text(encoding="utf-8").replace("  - parts\n", "  - prats\n")
    bad = tmp_path / "mine.yaml"
    bad.write_text(text, encoding="utf-8")
    line = text.splitlines().index("  - prats") + 1
    monkeypatch.chdir(tmp_path)
    assert main(["build", str(CAMPER), "--layout", str(bad)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and f"mine.yaml:{line}:" in err[0] and "prats" in err[0] and "parts" in err[0]
    assert [p.name for p in tmp_path.iterdir()] == ["mine.yaml"]


# ------------------------------------------------------------------- layouts
def test_shipped_layouts_load_and_name_every_block_once():
    from sheetgen.inputs.layout import CARD_BLOCK_NAMES, CardLayout

    assert set(shipped_layouts()) >= {"a4-sheet", "letter-sheet", "a6-card", "4x6-card"}
    for name in shipped_layouts():
        layout = load_layout(name)
        assert layout.name == name
        if isinstance(layout, CardLayout):  # a card places its own blocks over its two sides
            # the board takes half a side: only the board card carries it
            wanted = set(CARD_BLOCK_NAMES) - ({"board"} if name != "board-card" else set())
            assert sorted(layout.front + layout.back) == sorted(wanted)
        else:
            assert sorted(b.name for b in layout.blocks) == sorted(BLOCK_NAMES)


def test_a_built_package_carries_every_module_and_the_top_level_layouts(tmp_path):
    """One source of truth without a symbolic link: the wheel maps layouts/ into the package.

    Every module and data file under sheetgen/ must reach the wheel too (the
    package list in pyproject.toml is written out, so a new folder must join it).
    """
    import subprocess
    import sys
    import zipfile

    import shutil

    assert not (ROOT / "sheetgen" / "layouts").exists()
    tree = tmp_path / "tree"  # a copy, so the build leaves nothing behind in the checkout
    tree.mkdir()
    for name in ("pyproject.toml", "README.md"):
        shutil.copy(ROOT / name, tree / name)
    for name in ("sheetgen", "layouts"):
        shutil.copytree(ROOT / name, tree / name, ignore=shutil.ignore_patterns("__pycache__"))
    subprocess.run([sys.executable, "-m", "pip", "wheel", "-q", "--no-deps", "-w", str(tmp_path), str(tree)],
                   check=True, capture_output=True)
    (wheel,) = tmp_path.glob("sheetgen-*.whl")
    with zipfile.ZipFile(wheel) as archive:
        names = set(archive.namelist())
        for name in shipped_layouts():
            packaged = archive.read(f"sheetgen/layouts/{name}.yaml").decode("utf-8")
            assert packaged == (ROOT / "layouts" / f"{name}.yaml").read_text(encoding="utf-8")
    source = {p.relative_to(ROOT).as_posix() for p in (ROOT / "sheetgen").rglob("*")
              if p.is_file() and "__pycache__" not in p.parts}
    assert source <= names, sorted(source - names)


@pytest.mark.parametrize("snippet, key, line", [
    ("name: x\npage: A5\nblocks: [cautions]\n", "page", 2),
    ("name: x\npage: A4\nmargin: 10 mm\nblocks: [cautions]\n", "margin", 3),
    ("name: x\npage: A4\nmargins: 10\nblocks: [cautions]\n", "margins", 3),
    ("name: x\npage: A4\nblocks:\n  - cautions\n  - {block: heat, column: left}\n", "blocks[2].column", 5),
    ("name: x\npage: A4\nblocks:\n  - summary\n", "blocks", 4),
    ("name: x\npage: A4\nblocks:\n  - cautions\n  - cautions\n", "blocks[2]", 5),
    ("name: x\npage: A4\ncolumns: {left: 0}\nblocks: [cautions]\n", "columns.left", 3),
])
def test_layout_problems_name_file_key_and_line(snippet, key, line):
    with pytest.raises(SpecError) as err:
        parse_layout(snippet, source="mine.yaml")
    assert any(p.startswith(f"mine.yaml:{line}: {key}") for p in err.value.problems), err.value.problems


def test_layout_dataclasses_are_frozen():
    layout = load_layout("letter-sheet")
    with pytest.raises(AttributeError):
        layout.page_size = "A4"
    assert layout.page_size_pt == (612.0, 792.0)


# ------------------------------------------------------------- colour code
@pytest.mark.parametrize("value, tolerance, expected", [
    # resistorcolorcodes.org/chart worked examples (read in the source)
    (4700.0, 0.05, ("yellow", "violet", "red", "gold")),
    (10.0, 0.01, ("brown", "black", "black", "gold", "brown")),
    # digits and multipliers from instrumentationtools.com IEC 60062 table; gold ×0.1, silver ×0.01
    # (kodekata.net/resistorcolorcode.html; read in the source)
    (130.0, 0.05, ("brown", "orange", "brown", "gold")),
    (6800.0, 0.05, ("blue", "grey", "red", "gold")),
    (4.7, 0.05, ("yellow", "violet", "gold", "gold")),
    (0.47, 0.10, ("yellow", "violet", "silver", "silver")),
    (1e6, 0.05, ("brown", "black", "green", "gold")),
    (100.0, 0.20, ("brown", "black", "brown")),  # ±20 %: no tolerance band (kodekata.net; read in the source)
    (4990.0, 0.01, ("yellow", "white", "white", "brown", "brown")),
])
def test_colour_bands_follow_iec_60062(value, tolerance, expected):
    assert bands(value, tolerance) == expected


def test_colour_bands_refuse_what_the_code_cannot_show():
    with pytest.raises(ValueError):
        bands(4750.0, 0.05)  # three significant digits need a 5-band (±2 % or better) part
    with pytest.raises(ValueError):
        bands(1000.0, 0.03)
    with pytest.raises(ValueError):
        bands(-1.0, 0.05)


def test_refs_text_runs_and_lists():
    assert blocks.refs_text(["R4", "R5"]) == "R4, R5"
    assert blocks.refs_text([f"LED{k}" for k in range(1, 7)]) == f"LED1{EN_DASH}LED6"
    assert blocks.refs_text(["LED1", "LED3", "LED4"]) == "LED1, LED3, LED4"
