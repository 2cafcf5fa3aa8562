"""The board: key in a spec and an event, the JSON contract, and the drawing's labels against the JSON."""

from __future__ import annotations

import io
import json
import re
from pathlib import Path

import pytest
from pypdf import PdfReader

from sheetgen.cli import main
from sheetgen.errors import SpecError
from sheetgen.inputs.event import parse_event
from sheetgen.inputs.layout import load_layout
from sheetgen.inputs.spec import parse_spec
from sheetgen.outputs.export import report_dict
from sheetgen.outputs.pdf.sheet import render_sheet

EXAMPLES = Path(__file__).parents[2] / "examples"
SPEC = "supply: 12 V\nload: {kind: led, current: 20 mA, vf: 3.1 V}\nfade: {in: 1 s, out: 4 s}\n"
EPOCH = {"SOURCE_DATE_EPOCH": "1800000000"}


def _name(row: int, col: int) -> str:
    """The drawing's hole name, written out here on its own: row letter A.., column number from 1."""
    return f"{chr(ord('A') + row)}{col + 1}"


# ------------------------------------------------------------------ inputs
def test_board_defaults_to_stripboard_and_takes_perfboard():
    assert parse_spec(SPEC, source="s.yaml").board == "stripboard"
    assert parse_spec(SPEC + "board: Perfboard\n", source="s.yaml").board == "perfboard"


@pytest.mark.parametrize("value, needle", [
    ("veroboard", 's.yaml:4: board: "veroboard" is not a board; use stripboard'),
    ("stripbord", "did you mean `stripboard`?"),
    ("[a, b]", "s.yaml:4: board: must be stripboard or perfboard, got a list"),
])
def test_a_bad_board_names_the_key_and_line(value, needle):
    with pytest.raises(SpecError) as err:
        parse_spec(SPEC + f"board: {value}\n", source="s.yaml")
    assert any(needle in p for p in err.value.problems), err.value.problems


def test_a_bad_board_exits_2(tmp_path, capsys):
    spec = tmp_path / "s.yaml"
    spec.write_text(SPEC + "board: cardboard\n", encoding="utf-8")
    assert main(["check", str(spec)]) == 2
    assert "s.yaml:4: board:" in capsys.readouterr().err


def test_an_event_board_applies_to_every_build_and_is_checked():
    text = ("title: t\nboard: perfboard\nbuilds:\n  - design:\n      supply: 12 V\n"
            "      load: {kind: led, current: 20 mA, vf: 3 V}\n      fade: {in: 1 s, out: 2 s}\n    count: 2\n")
    event = parse_event(text, source="ev.yaml")
    assert event.builds[0].spec.board == "perfboard"
    with pytest.raises(SpecError) as err:
        parse_event(text.replace("board: perfboard", "board: plank"), source="ev.yaml")
    assert err.value.problems[0].startswith("ev.yaml:2: board:")


# ----------------------------------------------------------------- outputs
def test_json_board_follows_the_contract(camper_report):
    board = json.loads(json.dumps(report_dict(camper_report)))["board"]
    assert board["kind"] == "stripboard" and board["pitch_mm"] == 2.54
    assert isinstance(board["rows"], int) and isinstance(board["cols"], int)
    assert all(len(h) == 2 for h in board["cuts"])
    assert all(set(link) == {"from", "to"} for link in board["links"])
    parts = {p["ref"]: p for p in report_dict(camper_report)["parts"]}
    for p in board["placements"]:
        assert set(p) == {"ref", "holes"} and set(p["holes"]) == set(parts[p["ref"]]["pins"])
    assert {"supply", "feed", "0"} <= {w["net"] for w in board["offboard"]}
    assert all(set(w) == {"net", "hole", "label"} for w in board["offboard"])
    assert board["off_board_parts"] == [r for r, p in parts.items() if p["role"] == "load"]


@pytest.fixture(scope="module")
def sheet_pdf(camper_report):
    return render_sheet(camper_report, load_layout("a4-sheet"), environ=EPOCH)


def _placed_words(page) -> list[tuple[str, float, float]]:
    """Every text run on a page with its position (x, y in points), as pypdf reads the page."""
    found = []

    def visit(text, cm, tm, font, size):
        if text.strip():
            x = cm[0] * tm[4] + cm[2] * tm[5] + cm[4]
            y = cm[1] * tm[4] + cm[3] * tm[5] + cm[5]
            found.append((text.strip(), x, y))

    page.extract_text(visitor_text=visit)
    return found


def test_the_drawings_labels_match_the_json(camper_report, sheet_pdf):
    board = report_dict(camper_report)["board"]
    rows, cols = board["rows"], board["cols"]
    page = next(p for p in PdfReader(io.BytesIO(sheet_pdf)).pages if "Component side" in p.extract_text())
    runs = _placed_words(page)
    y_of = lambda prefix: next(y for t, _, y in runs if t.startswith(prefix))  # noqa: E731
    top, middle, bottom = y_of("Component side"), y_of("Copper side"), y_of("Cut the copper")
    assert f"{rows} × {cols} holes" in next(t for t, _, _ in runs if t.startswith("Component side"))
    letters = [chr(ord("A") + r) for r in range(rows)]
    for hi, lo, order in ((top, middle, range(1, cols + 1)), (middle, bottom, range(cols, 0, -1))):
        view = [(t, x, y) for t, x, y in runs if lo < y < hi]
        numbers = sorted((x, t) for t, x, _ in view if t.isdigit())
        assert [t for _, t in numbers] == [str(c) for c in order], "copper side mirrored: column 1 at the right"
        row_names = sorted(((-y, t) for t, x, y in view if re.fullmatch(r"[A-Z]{1,2}", t) and x < 20 + min(
            x for _, x, _ in view)))
        assert [t for _, t in row_names] == letters

    text = " ".join(p.extract_text() for p in PdfReader(io.BytesIO(sheet_pdf)).pages)
    flat = " ".join(text.split())
    cuts = ", ".join(_name(r, c) for r, c in sorted(board["cuts"], key=lambda h: (h[1], h[0])))
    assert f"Cut the copper at {cuts}" in flat
    for link in board["links"]:
        assert f"{_name(*link['from'])}\u2013{_name(*link['to'])}" in flat
    for w in board["offboard"]:
        assert f"{w['label']} at {_name(*w['hole'])}" in flat
    for p in board["placements"]:
        if len(p["holes"]) == 2:
            a, b = sorted(tuple(h) for h in p["holes"].values())
            assert f"{p['ref']} at {_name(*a)}\u2013{_name(*b)}" in flat


def test_the_card_steps_place_parts_by_hole(camper_report):
    steps = camper_report.brief.board_steps
    board = report_dict(camper_report)["board"]
    r1 = next(p for p in board["placements"] if p["ref"] == "R1")
    a, b = sorted(tuple(h) for h in r1["holes"].values())
    assert any(f"R1 at {_name(*a)}\u2013{_name(*b)}" in s for s in steps)
    assert any(s.startswith("Cut the copper at") for s in steps)
    assert not any(s.startswith("Join ") for s in steps), "the board replaces the join steps"
    # the strings of three LEDs in series, wired off the board (the camper van's two strings)
    assert any("Off the board: LED1\u2013LED6; wire LED1\u2013LED3, LED4\u2013LED6 in series" in s for s in steps)


def test_the_board_card_draws_the_board_and_its_steps(tmp_path):
    out = tmp_path / "cards.pdf"
    assert main(["build", str(EXAMPLES / "model-railway-station.yaml"), "--layout", "board-card", "-o",
                 str(out)]) == 0
    text = "\n".join(p.extract_text() for p in PdfReader(out).pages)
    assert "Component side" in text and "Copper side" in text and "Cut the copper at" in " ".join(text.split())
