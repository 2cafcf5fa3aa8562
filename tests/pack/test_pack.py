"""Build-night packs: the event contract, the kit arithmetic, the three files, names as data, bad input.

The kit list is checked against a count of the designs' parts made here, from
the netlists, not through the kit module.  Packs are written through the
command line with sizing replaced by the session's already-sized reports (real
sizing is the sizer's own tests' business), so every run here costs renders
only.
"""

from __future__ import annotations

import csv
import io
import math
import re
from collections import Counter
from fractions import Fraction
from pathlib import Path

import pytest
from pypdf import PdfReader

from sheetgen.pack import batch
from sheetgen.cli import main
from sheetgen.errors import InfeasibleDesign, SpecError
from sheetgen.inputs.event import load_event, parse_event
from sheetgen.pack.kit import CSV_COLUMNS, WIRE_M_PER_RUN, KitUse, kit_csv, kit_list, spares_for
from sheetgen.inputs.units import format_quantity

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = ROOT / "examples"
EPOCH = "1700000000"


# ------------------------------------------------------------------- helpers
@pytest.fixture
def sized(camper_report, railway_report, monkeypatch):
    """Sizing replaced by the session's reports, looked up by the spec's title; counts the calls.

    Also fixes SOURCE_DATE_EPOCH, so the printed date and the bytes do not depend on the day.
    """
    monkeypatch.setenv("SOURCE_DATE_EPOCH", EPOCH)
    by_title = {r.design.spec.title: r for r in (camper_report, railway_report)}
    calls = []

    def fake(spec):
        calls.append(spec.title)
        if spec.title not in by_title:
            raise InfeasibleDesign(f"no design meets {spec.title}")
        return by_title[spec.title]

    monkeypatch.setattr(batch, "_size_and_analyse", fake)
    return calls


def _event(tmp_path: Path, text: str, name: str = "spring.yaml") -> Path:
    for spec in ("camper-van-step-light.yaml", "model-railway-station.yaml"):
        (tmp_path / spec).write_text((EXAMPLES / spec).read_text(encoding="utf-8"), encoding="utf-8")
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


GOOD = """\
title: Spring build night
date: 2027-03-20
venue: Community workshop, room 2
spares: 10 %
builds:
  - spec: camper-van-step-light.yaml
    builders: [Ana, Zoë, Ødegård, "<b>bold</b>", ../../x, "/etc/passwd", "Yes", "0012"]
  - spec: model-railway-station.yaml
    count: 3
  - spec: camper-van-step-light.yaml
    builders: [Bo]
"""
NAMES = ["Ana", "Zoë", "Ødegård", "<b>bold</b>", "../../x", "/etc/passwd", "Yes", "0012", "Bo"]


def _pack(tmp_path: Path, event: Path, *extra: str) -> int:
    return main(["pack", str(event), "-o", str(tmp_path / "out"), "--jobs", "1", *extra])


def _pdf_text(path: Path) -> str:
    return "\n".join(p.extract_text() for p in PdfReader(path).pages)


# --------------------------------------------------------------- kit list
def test_kit_list_matches_an_independent_count_of_the_netlists(camper_report, railway_report):
    kits = {"A": 4, "B": 3}
    reports = {"A": camper_report, "B": railway_report}
    lines = kit_list([KitUse(report=reports[k], design=k, kits=n) for k, n in kits.items()], spares=Fraction(1, 10))

    # Count refs per thing to buy straight from the netlists.
    expected: Counter = Counter()
    for letter, report in reports.items():
        for part in report.design.netlist.parts:
            if part.kind == "resistor":
                key = ("resistor", format_quantity(part.value, "ohm"), part.rating_w)
            elif part.kind == "capacitor":
                key = ("capacitor", format_quantity(part.value, "F"), part.rating_v)
            elif part.kind == "led":  # "red LED, Vf 2 V at 20 mA": colour, forward voltage, current
                colour_led, vf_at = part.description.split(", ")
                key = ("led", colour_led, tuple(vf_at.split(" at ")))
            else:
                key = (part.kind, part.part_number, None)
            expected[key] += kits[letter]

    got: Counter = Counter()
    for line in lines:
        if line.item == "resistor":
            got[("resistor", line.value, float(line.rating.split()[0]))] += line.needed
        elif line.item.endswith("capacitor"):
            got[("capacitor", line.value, float(line.rating.split()[0]))] += line.needed
        elif "LED" in line.item:
            colour_led = "LED" if line.item == "LED, any colour with this Vf" else line.item
            got[("led", colour_led, (line.value, line.rating.removeprefix("runs at ")))] += line.needed
        elif line.item in ("diode", "NPN transistor", "PNP transistor", "N-channel MOSFET"):
            kind = {"diode": "diode", "NPN transistor": "npn", "PNP transistor": "pnp", "N-channel MOSFET": "nmos"}
            got[(kind[line.item], line.value, None)] += line.needed
    assert got == expected
    board = sum(len(r.design.netlist.parts) * kits[k] for k, r in reports.items())
    assert sum(got.values()) == board

    total_kits = sum(kits.values())
    by_item = {(line.item, line.value): line for line in lines}
    assert sum(line.needed for line in lines if line.item == "blade fuse") == total_kits
    assert sum(line.needed for line in lines if line.item == "in-line fuse holder") == total_kits
    wires = [line for line in lines if line.item.startswith("wire")]
    # No colours chosen in these specs: one line per run, named by what it does (never a fixed colour
    # that clashes with a vehicle's or a boat's own harness convention).
    assert {line.item for line in wires} == {"wire for the always-on + run", "wire for the switched feed run",
                                             "wire for the ground run"}
    assert all(line.unit == "m" and line.needed == WIRE_M_PER_RUN * total_kits for line in wires)
    assert sum(line.needed for line in lines if line.item == "prototype board") == total_kits
    # One screw terminal per off-board run (the topology's wiring list), two more per lamp.
    ways = Counter()
    for letter, report in reports.items():
        lamps = sum(p.kind == "lamp" for p in report.design.netlist.parts)
        ways[f"{len(report.design.topology.wiring) + 2 * lamps}-way"] += kits[letter]
    assert Counter({line.value: line.needed for line in lines if line.item == "screw terminal block"}) == ways
    lamps = sum(kits[k] * sum(p.kind == "lamp" for p in r.design.netlist.parts) for k, r in reports.items())
    assert sum(line.needed for line in lines if line.item == "lamp holder") == lamps
    sinks = sum(kits[k] for k, r in reports.items() if r.heat.heatsink_c_per_w is not None)
    assert sum(line.needed for line in lines if line.item == "insulating kit") == sinks
    for line in lines:
        assert line.spares == math.ceil(line.needed / 10 - 1e-9) and line.total == line.needed + line.spares
    assert by_item[("diode", "1N4007")].designs == ("A", "B")  # one line for both designs


@pytest.mark.parametrize("load, item", [
    ("{kind: led, current: 20 mA, colour: red}", "red LED"),
    ("{kind: led, current: 15 mA, vf: 3 V}", "LED, any colour with this Vf"),
])
def test_an_led_kit_line_names_its_colour_forward_voltage_and_current(load, item):
    from sheetgen.circuits.loads import kind_of
    from sheetgen.inputs.spec import parse_spec
    from sheetgen.model.netlist import Part
    from sheetgen.pack.kit import _part_item

    spec = parse_spec(f"supply: 12 V\nload: {load}\nfade: {{in: 1 s, out: 2 s}}\n", source="k.yaml")

    def series(ref, a, b):
        return Part(ref=ref, kind="resistor", pins=(("1", a), ("2", b)), role="led_series", value=470.0)

    led = next(p for p in kind_of(spec.load).parts(spec.load, top="rail", bottom="sw", first_r=4, series=series)
               if p.kind == "led")
    line = _part_item(led)
    assert line.item == item
    assert line.value == f"Vf {format_quantity(spec.load.vf_v, 'V')}"  # the red's from the catalog
    assert line.rating == f"runs at {format_quantity(spec.load.current_a, 'A')}"


def test_spares_are_exact_not_float_rounded():
    assert spares_for(30, Fraction(1, 10)) == 3  # 30 × 0.1 is 3.0000000000000004 as floats: ceil gives 4
    assert spares_for(100, Fraction(7, 100)) == 7  # and 100 × 0.07 is 7.000000000000001
    assert spares_for(21, Fraction(1, 10)) == 3
    assert spares_for(30, Fraction(7, 100)) == 3  # 2.1 → 3
    assert spares_for(5, Fraction(0)) == 0
    with pytest.raises(ValueError):
        kit_list([], spares=Fraction(-1, 10))


def test_csv_has_the_columns_and_the_lines(camper_report):
    lines = kit_list([KitUse(report=camper_report, design="A", kits=2)], spares=Fraction(1, 4))
    data = kit_csv(lines)
    assert data.startswith(b"\xef\xbb\xbf") and b"\r\n" in data
    rows = list(csv.DictReader(io.StringIO(data.decode("utf-8-sig"), newline="")))
    assert tuple(rows[0]) == CSV_COLUMNS
    assert {"item", "value", "rating", "package", "needed", "spares", "total"} <= set(CSV_COLUMNS)
    assert len(rows) == len(lines)
    for row, line in zip(rows, lines):
        assert row["item"] == line.item and int(row["needed"]) == line.needed
        assert int(row["total"]) == int(row["needed"]) + int(row["spares"])
        assert int(row["spares"]) == math.ceil(int(row["needed"]) / 4)
    assert any(row["note"].startswith("ground; colour as you choose; 2 m per build") for row in rows)


# ----------------------------------------------------------------- event
def test_named_builders_plus_unnamed_places_in_one_build(tmp_path):
    event = load_event(_event(tmp_path, "title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n"
                                        "    builders: [Ana, Bo]\n    count: 3\n"))
    (build,) = event.builds
    assert [b.name for b in build.builders] == ["Ana", "Bo", None, None, None]
    assert [b.place for b in build.builders][2:] == ["Builder 3 of 5", "Builder 4 of 5", "Builder 5 of 5"]
    assert event.builder_count == 5 and event.warnings == ()


def test_a_name_given_twice_warns_naming_both_places(tmp_path, sized, capsys):
    text = ("title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    builders: [Ana, Bo]\n"
            "  - spec: model-railway-station.yaml\n    builders: [ana]\n")
    event = load_event(_event(tmp_path, text))
    assert event.warnings == (f"{tmp_path / 'spring.yaml'}:6: builds[1].builders[0]: \"ana\" is named already "
                              "(builds[0].builders[0], line 4); two cards will carry the same name",)
    assert _pack(tmp_path, tmp_path / "spring.yaml") == 0  # a warning, not an error
    assert capsys.readouterr().err.strip() == f"warning: {event.warnings[0]}"


def test_event_names_are_read_as_written(tmp_path):
    event = load_event(_event(tmp_path, GOOD))
    assert event.title == "Spring build night" and str(event.date) == "2027-03-20"
    assert event.spares == Fraction(1, 10) and event.spares_text == "10 %"
    names = [b.name for build in event.builds for b in build.builders if b.name is not None]
    assert names == NAMES  # "Yes" and "0012" stay text, not true and 12
    counted = event.builds[1].builders
    assert [b.place for b in counted] == ["Builder 1 of 3", "Builder 2 of 3", "Builder 3 of 3"]
    assert event.builds[0].where == f"{tmp_path / 'spring.yaml'}:6: builds[0]"


def test_inline_design_keeps_its_lines(tmp_path):
    text = ("title: t\nbuilds:\n  - design:\n      supply: 12 V\n      load: {kind: led, current: 20 mV, vf: 3 V}\n"
            "      fade: {in: 1 s, out: 2 s}\n    count: 2\n")
    with pytest.raises(SpecError) as err:
        parse_event(text, source="ev.yaml")
    assert err.value.problems[0].startswith("ev.yaml:5: builds[0].design.load.current:")
    good = parse_event(text.replace("20 mV", "20 mA"), source="ev.yaml")
    assert good.builds[0].spec_label == "inline design" and good.builds[0].spec.load.current_a == 0.02


@pytest.mark.parametrize("text, needle", [
    ("title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    count: -3\n",
     "spring.yaml:4: builds[0].count: must be at least 1, got -3"),
    ("title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    builders: [Ana]\n"
     "  - spec: model-railway-station.yaml\n    count: 0\n", "spring.yaml:6: builds[1].count: must be at least 1"),
    ("title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    count: 2.5\n", "builds[0].count: must be a whole"),
    ("title: t\nbuilds:\n  - spec: nowhere.yaml\n    count: 2\n", "spring.yaml:3: builds[0].spec:"),
    ("title: t\nbuilds:\n  - spec: broken.yaml\n    count: 2\n", "spring.yaml:3: builds[0].spec:"),
    ("title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    count: 2\n    colour: red\n",
     "spring.yaml:5: builds[0].colour: unknown key"),
    ("title: t\nvenu: hall\nbuilds:\n  - spec: camper-van-step-light.yaml\n    count: 2\n",
     "spring.yaml:2: venu: unknown key; did you mean `venue`?"),
    ("title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    count: 0\n    builders: [Ana]\n",
     "spring.yaml:4: builds[0].count: must be at least 1"),
    ("title: t\nspares: ten\nbuilds:\n  - spec: camper-van-step-light.yaml\n    count: 2\n",
     "spring.yaml:2: spares: \"ten\" should be a percentage"),
    ("title: t\ndate: 20 March\nbuilds:\n  - spec: camper-van-step-light.yaml\n    count: 2\n",
     "spring.yaml:2: date: \"20 March\" is not a date"),
    ("title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    builders: [Ana, \"\"]\n",
     "spring.yaml:4: builds[0].builders[1]: is empty"),
    ("title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    builders: [\"Ana\\tBo\"]\n",
     "builds[0].builders[0]: must be one line without control characters"),
    ("title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    builders: [山田]\n",
     "spring.yaml:4: builds[0].builders[0]: \"山田\" has characters the card font cannot print"),
    # 田 is U+7530 and 中 U+4E2D: the characters are listed as written, not by code point.
    ("title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    builders: [田中田]\n",
     "\"田中田\" has characters the card font cannot print (田中)"),
    ("title: t\nbuilds: []\n", "spring.yaml:2: builds: should be a list of builds"),
])
def test_bad_events_exit_2_naming_the_build_and_leave_nothing(tmp_path, capsys, sized, text, needle):
    (tmp_path / "broken.yaml").write_text("supply: 12 V\nload: {kind: led, current: 20 mA\n", encoding="utf-8")
    event = _event(tmp_path, text)
    assert _pack(tmp_path, event) == 2
    err = capsys.readouterr().err
    assert needle in err, err
    assert "Traceback" not in err and not sized  # refused before any sizing
    assert not (tmp_path / "out").exists()


def test_a_spec_that_fails_names_its_file_and_line_through_the_build(tmp_path, capsys, sized):
    (tmp_path / "van.yaml").write_text("supply: 12 V\nload: {kind: led, current: 20 mA, vf: 3 V}\n"
                                       "fade: {in: 1 s, out: 2 s}\ncolr: red\n", encoding="utf-8")
    event = _event(tmp_path, "title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    count: 1\n"
                             "  - spec: van.yaml\n    count: 2\n")
    assert _pack(tmp_path, event) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "spring.yaml:5: builds[1].spec:" in err[0] and "van.yaml:4: colr: unknown key" in err[0]


def test_an_infeasible_design_exits_3_naming_the_build(tmp_path, capsys, sized):
    spec = (EXAMPLES / "model-railway-station.yaml").read_text(encoding="utf-8").replace(
        "Model railway station lamp", "Impossible lamp")
    (tmp_path / "impossible.yaml").write_text(spec, encoding="utf-8")
    event = _event(tmp_path, "title: t\nbuilds:\n  - spec: camper-van-step-light.yaml\n    count: 1\n"
                             "  - spec: impossible.yaml\n    builders: [Ana]\n")
    assert _pack(tmp_path, event) == 3
    err = capsys.readouterr().err
    assert "spring.yaml:5: builds[1] (impossible.yaml): no design meets Impossible lamp" in err
    assert not (tmp_path / "out").exists()


def test_output_over_a_file_is_refused(tmp_path, capsys, sized):
    (tmp_path / "out").write_text("not a folder", encoding="utf-8")
    assert _pack(tmp_path, _event(tmp_path, GOOD)) == 2
    assert "is a file, not a folder" in capsys.readouterr().err
    assert (tmp_path / "out").read_text(encoding="utf-8") == "not a folder"


# ------------------------------------------------------------- the files
@pytest.fixture
def packed(tmp_path, sized, capsys):
    event = _event(tmp_path, GOOD)
    assert _pack(tmp_path, event) == 0
    printed = capsys.readouterr()
    return tmp_path / "out", printed, sized


def test_pack_writes_three_files_and_sizes_each_design_once(packed):
    out, printed, calls = packed
    assert sorted(p.name for p in out.iterdir()) == ["booklet.pdf", "cards.pdf", "kit-list.csv"]
    *paths, summary = printed.out.splitlines()
    assert paths == [str(out / n) for n in ("booklet.pdf", "cards.pdf", "kit-list.csv")]
    # The last line counts what was made, each count read back from the files themselves.
    card_pages = len(PdfReader(out / "cards.pdf").pages)
    booklet_pages = len(PdfReader(out / "booklet.pdf").pages)
    kit_rows = len((out / "kit-list.csv").read_text(encoding="utf-8-sig").splitlines()) - 1
    assert summary == (f"2 designs, {len(NAMES) + 3} cards; sheets to print: {card_pages // 2} card sheets "
                       f"(both sides) and {booklet_pages} booklet pages; {kit_rows} kit lines")
    assert sorted(calls) == ["Camper van step light", "Model railway station lamp"]  # builds 0 and 2 share one
    assert printed.err == ""  # no progress bar when stderr is not a terminal


def test_booklet_cover_builds_kit_list_and_every_design_sheet(packed):
    out, _, _ = packed
    reader = PdfReader(out / "booklet.pdf")
    text = " ".join(" ".join(p.extract_text().split()) for p in reader.pages)
    first = " ".join(reader.pages[0].extract_text().split())
    assert "Spring build night" in first and "2027-03-20" in first and "Community workshop, room 2" in first
    for name in NAMES:
        assert name in text, name
    assert "3 unnamed" in text and "Kit list" in text and "Spares: 10 %" in text
    assert "Kit A" in text and "Kit B" in text and "Camper van step light" in text
    assert "Model railway station lamp" in text and "CAUTIONS: read before you start" in text
    rows = list(csv.DictReader(io.StringIO((out / "kit-list.csv").read_text(encoding="utf-8-sig"), newline="")))
    for row in rows:  # the printed kit list is the CSV's
        assert f"{row['item']} {row['value']}".strip() in text or row["item"] in text
    assert f"page 1 of {len(reader.pages)}" in first
    for page in reader.pages:
        assert (float(page.mediabox.width), float(page.mediabox.height)) == pytest.approx((595.28, 841.89), abs=0.01)


def test_the_booklet_names_no_wire_colour_that_nobody_chose(packed):
    out, _, _ = packed
    reader = PdfReader(out / "booklet.pdf")
    kit_page = next(" ".join(p.extract_text().split()) for p in reader.pages if "Kit list" in p.extract_text())
    # Neither the example specs nor the event give wires:, so the CSV names each run, not a colour...
    rows = list(csv.DictReader(io.StringIO((out / "kit-list.csv").read_text(encoding="utf-8-sig"), newline="")))
    assert all("colour as you choose" in row["note"] for row in rows if row["item"].startswith("wire for"))
    # ... and the printed list's note must not invent one.
    assert not re.search(r"\b(red|yellow|black)\b", kit_page), kit_page
    assert f"{WIRE_M_PER_RUN} m per build for each off-board run" in kit_page


def test_cards_one_per_builder_with_names_as_written(packed):
    out, _, _ = packed
    reader = PdfReader(out / "cards.pdf")
    lines = _pdf_text(out / "cards.pdf").splitlines()
    for name in NAMES:
        assert lines.count(name) == 1, name
    assert sum(line in ("BUILDER", "BUILDER 1 OF 3", "BUILDER 2 OF 3", "BUILDER 3 OF 3") for line in lines) == 12
    for page in reader.pages:
        assert (float(page.mediabox.width), float(page.mediabox.height)) == pytest.approx((841.89, 595.28), abs=0.01)


def test_names_never_become_paths_or_markup(packed, tmp_path):
    out, _, _ = packed
    assert sorted(p.name for p in out.iterdir()) == ["booklet.pdf", "cards.pdf", "kit-list.csv"]
    assert not (tmp_path / "x").exists() and not (tmp_path.parent / "x").exists()
    before = {p.name for p in tmp_path.iterdir()}
    assert before == {"out", "spring.yaml", "camper-van-step-light.yaml", "model-railway-station.yaml"}
    for pdf in ("booklet.pdf", "cards.pdf"):  # the booklet sets names in paragraphs, the cards on the page
        text = _pdf_text(out / pdf)
        assert "<b>bold</b>" in text and "&lt;" not in text, pdf


def test_same_event_same_bytes(tmp_path, sized, capsys):
    event = _event(tmp_path, GOOD)
    assert _pack(tmp_path, event) == 0
    first = {p.name: p.read_bytes() for p in (tmp_path / "out").iterdir()}
    assert _pack(tmp_path, event) == 0
    second = {p.name: p.read_bytes() for p in (tmp_path / "out").iterdir()}
    assert first == second and len(first) == 3


def test_a_failure_while_rendering_leaves_nothing_and_keeps_old_files(tmp_path, sized, capsys, monkeypatch):
    event = _event(tmp_path, GOOD)
    out = tmp_path / "out"
    out.mkdir()
    (out / "booklet.pdf").write_bytes(b"last year's booklet")
    (out / "notes.txt").write_text("mine", encoding="utf-8")
    monkeypatch.setattr("sheetgen.outputs.pdf.booklet.render_booklet", lambda *a, **k: 1 / 0)
    assert _pack(tmp_path, event) == 1
    assert "ZeroDivisionError" in capsys.readouterr().err
    assert sorted(p.name for p in out.iterdir()) == ["booklet.pdf", "notes.txt"]
    assert (out / "booklet.pdf").read_bytes() == b"last year's booklet"


def test_a_failure_while_writing_removes_the_folder_it_made(tmp_path, sized, capsys, monkeypatch):
    event = _event(tmp_path, GOOD)

    def full_disk(*_a, **_k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr("sheetgen.outputs.write.os.replace", full_disk)
    assert main(["pack", str(event), "-o", str(tmp_path / "new" / "out"), "--jobs", "1"]) == 2
    assert "No space left on device" in capsys.readouterr().err
    assert not (tmp_path / "new").exists()


def test_progress_bar_on_a_terminal(tmp_path, sized, capsys, monkeypatch):
    event = _event(tmp_path, GOOD)
    monkeypatch.setattr("sys.stderr.isatty", lambda: True, raising=False)
    assert _pack(tmp_path, event) == 0
    assert "sizing 2 designs" in capsys.readouterr().err


def test_designs_sized_side_by_side_come_back_in_order(camper_report, railway_report, monkeypatch):
    import multiprocessing

    if multiprocessing.get_start_method() != "fork":
        pytest.skip("the replaced sizer reaches worker processes only when they are forked")
    by_title = {r.design.spec.title: r for r in (camper_report, railway_report)}
    monkeypatch.setattr(batch, "_size_and_analyse", lambda spec: by_title[spec.title])
    specs = [camper_report.design.spec, railway_report.design.spec]
    done = []
    reports = batch.analyse_all(specs, jobs=2, on_done=done.append)
    assert [r.design.spec.title for r in reports] == [s.title for s in specs] and sorted(done) == [0, 1]
    monkeypatch.setattr(batch, "_size_and_analyse", lambda spec: (_ for _ in ()).throw(
        InfeasibleDesign(f"no {spec.title}")))
    with pytest.raises(batch.DesignFailed) as failed:
        batch.analyse_all(specs, jobs=2, use_cache=False)  # the first call stored both
    assert isinstance(failed.value.error, InfeasibleDesign) and failed.value.index in (0, 1)


def test_identical_specs_from_different_files_are_one_design(camper_report):
    from dataclasses import replace

    spec = camper_report.design.spec
    assert batch.distinct([spec, replace(spec, source="elsewhere.yaml"), replace(spec, title="Other")]) == [
        spec, replace(spec, title="Other")]


def test_the_shipped_example_event_reads(sized):
    event = load_event(EXAMPLES / "events" / "spring-build-night.yaml")
    names = [b.name for build in event.builds for b in build.builders]
    assert "Zoë Fairweather" in names and any("Ødegård" in (n or "") for n in names) and None in names
    assert len({batch.spec_key(b.spec) for b in event.builds}) == len(event.builds) == 3


@pytest.mark.parametrize("load, designs, expected", [
    (0.1, 3, 2),   # an idle two-core machine: both cores
    (1.5, 3, 2),   # busy, but a second process still gets a share
    (4.0, 3, 1),   # twice as much work as cores: a second process only waits
    (7.0, 3, 1),
    (0.1, 1, 1),   # never more processes than designs
])
def test_default_jobs_uses_both_cores_unless_the_machine_is_swamped(monkeypatch, load, designs, expected):
    import os

    monkeypatch.setattr(os, "sched_getaffinity", lambda _pid: {0, 1}, raising=False)
    monkeypatch.setattr(os, "getloadavg", lambda: (load, load, load))
    assert batch.default_jobs(designs) == expected
