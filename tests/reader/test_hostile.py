"""Hostile and unusual input at the command line: each case exits 2 with its line and a short message.

Every case is one a careless or hostile user can type; each must end in exit 2
(bad input) naming the file, the line and the key, in a message of at most a
few hundred characters, and must write nothing.  The outside reference for
what a valid date, a Unicode scalar value and a direction control are: ISO
8601-1:2019 clause 5.2.2 (calendar dates), The Unicode Standard 15.0 section
3.9 (D76: surrogates are not scalar values, so UTF-8 cannot carry them) and
UAX #9 (Unicode Bidirectional Algorithm) table 1 (explicit direction
formatting characters).
"""

from __future__ import annotations

import os
import re
import stat
from pathlib import Path

import pytest

from sheetgen.cli import main

ROOT = Path(__file__).resolve().parents[2]
SPEC = (ROOT / "examples" / "camper-van-step-light.yaml").read_text(encoding="utf-8")
MESSAGE_MAX = 400  # characters in one error line: a short excerpt, never a whole value
# The nesting and surrogate limits are met by the parser itself when libyaml is installed, in its words.
DEEP = "levels deep|maximum nesting depth"
SURROGATE = "surrogate|invalid Unicode character escape"
LINE_RE = re.compile(r"^error: (?P<file>[^:]+):(?P<line>\d+): (?P<key>[^:]+: )?\S")


def _run(capsys, argv) -> tuple[int, list[str]]:
    code = main(argv)
    err = capsys.readouterr().err.splitlines()
    return code, err


def _files(folder: Path) -> set[str]:
    return {str(p.relative_to(folder)) for p in folder.rglob("*")}


def _assert_refused(code, err, *, needle: str, line: int | None, folder: Path, before: set[str]):
    assert code == 2, err
    assert err and all(len(e) <= MESSAGE_MAX for e in err), err
    assert any(needle in e or re.search(needle, e) for e in err), err
    if line is not None:
        m = LINE_RE.match(err[0])
        assert m and int(m["line"]) == line, err
    assert _files(folder) == before, "a failed run wrote something"


# ----------------------------------------------------------------- spec values and YAML
SPEC_CASES = [
    ("integer of 5,000 digits", SPEC.replace("strings: 2", "strings: " + "7" * 5000), 11, "characters"),
    ("integer of 4,000 digits", SPEC.replace("strings: 2", "strings: " + "7" * 4000), 11, "too large"),
    ("float overflowing to infinity", SPEC.replace("supply: 12 V", "supply: 1e400 V"), 4, "supply"),
    ("bare float overflowing", SPEC.replace("per_string: 3", "per_string: 1.0e+400"), 10, "not a finite number"),
    ("supply string of 3,000 characters", SPEC.replace("supply: 12 V", "supply: " + "1" * 2999 + "V"), 4,
     "characters long"),
    ("supply string with a newline run", SPEC.replace("supply: 12 V", 'supply: "' + "1 " * 1500 + '\\nx"'), 4,
     "supply"),
    ("!!int of nothing", SPEC.replace("strings: 2", 'strings: !!int ""'), 11, "tags are not supported"),
    ("!!float abc", SPEC.replace("strings: 2", "strings: !!float abc"), 11, "tags are not supported"),
    ("!!bool maybe", SPEC.replace("strings: 2", "strings: !!bool maybe"), 11, "tags are not supported"),
    ("!!timestamp text", SPEC.replace("title: Camper van step light", "title: !!timestamp text"), 3,
     "tags are not supported"),
    ("!!int 0x", SPEC.replace("strings: 2", "strings: !!int 0x"), 11, "tags are not supported"),
    ("a python tag", SPEC.replace("strings: 2", "strings: !!python/object:os.system echo"), 11,
     "tags are not supported"),
    ("a local tag", SPEC.replace("strings: 2", "strings: !mine 2"), 11, "tags are not supported"),
    ("nesting 2,000 deep (flow)", SPEC + "extra: " + "[" * 2000 + "]" * 2000 + "\n", 16, DEEP),
    ("nesting 100 deep (block)", SPEC + "".join("  " * k + "k:\n" for k in range(100)), 16 + 40, DEEP),
    ("an impossible calendar date as a title", SPEC.replace("title: Camper van step light", "title: 2027-02-30"),
     3, "title"),
    ("a lone UTF-16 surrogate in the title", SPEC.replace("title: Camper van step light", 'title: "a\\ud800b"'),
     3, SURROGATE),
    ("an alias bomb", SPEC + "a: &a [x, x, x, x, x, x, x, x, x, x]\n"
     + "".join(f"{c}: &{c} [{', '.join(['*' + chr(ord(c) - 1)] * 10)}]\n" for c in "bcdefg"), 20, "aliases"),
    ("an alias to its own parent", SPEC + "loop: &l [*l]\n", 16, "itself"),
    ("a forced topology that does not exist", SPEC + "topology: npm\n", 16, "did you mean `npn`?"),
    ("a title holding a right-to-left override", SPEC.replace("Camper van step light", "Camper \u202e van"), 3,
     "direction control"),
    ("an invisible title", SPEC.replace("Camper van step light", '"\u200b\u200b"'), 3, "invisible"),
]


@pytest.mark.parametrize("text,line,needle", [c[1:] for c in SPEC_CASES], ids=[c[0] for c in SPEC_CASES])
@pytest.mark.parametrize("command", ["check", "size", "build"])
def test_hostile_spec_values_exit_2_with_the_line(tmp_path, capsys, monkeypatch, command, text, line, needle):
    monkeypatch.chdir(tmp_path)
    spec = tmp_path / "van.yaml"
    spec.write_text(text, encoding="utf-8")
    before = _files(tmp_path)
    code, err = _run(capsys, [command, str(spec)])
    _assert_refused(code, err, needle=needle, line=line, folder=tmp_path, before=before)


def test_a_supply_of_thousands_of_characters_is_not_echoed(tmp_path, capsys):
    spec = tmp_path / "van.yaml"
    spec.write_text(SPEC.replace("supply: 12 V", "supply: " + "9" * 3000 + " V"), encoding="utf-8")
    code, err = _run(capsys, ["check", str(spec)])
    assert code == 2 and "9" * 60 not in "\n".join(err), err


# ----------------------------------------------------------------- files that are not files
def test_a_device_as_the_spec_is_refused_unread(tmp_path, capsys):
    code, err = _run(capsys, ["check", "/dev/zero"])
    assert code == 2 and err == ["error: /dev/zero: is not a regular file (a device, pipe or socket); "
                                 "give a spec file"], err


def test_a_fifo_as_the_spec_is_refused_without_waiting(tmp_path, capsys):
    fifo = tmp_path / "spec.yaml"
    os.mkfifo(fifo)
    code, err = _run(capsys, ["check", str(fifo)])  # would block forever if it were opened for reading
    assert code == 2 and "not a regular file" in err[0], err


def test_a_folder_as_the_spec_is_refused(tmp_path, capsys):
    code, err = _run(capsys, ["check", str(tmp_path)])
    assert code == 2 and "is a directory" in err[0], err


def test_a_spec_larger_than_the_limit_is_refused_before_reading(tmp_path, capsys):
    spec = tmp_path / "big.yaml"
    with open(spec, "wb") as handle:
        handle.truncate(50_000_000)  # sparse: costs no disk
    code, err = _run(capsys, ["check", str(spec)])
    assert code == 2 and "bytes" in err[0], err


@pytest.mark.parametrize("target", ["/dev/null", "fifo"])
def test_an_output_that_is_not_a_regular_file_is_refused(tmp_path, capsys, monkeypatch, target):
    monkeypatch.chdir(tmp_path)
    spec = tmp_path / "van.yaml"
    spec.write_text(SPEC, encoding="utf-8")
    if target == "fifo":
        os.mkfifo(tmp_path / "sheet.pdf")
    else:  # a sheet name that leads to the device node
        os.symlink(target, tmp_path / "sheet.pdf")
    target = str(tmp_path / "sheet.pdf")
    mode = os.stat(target).st_mode
    code, err = _run(capsys, ["build", str(spec), "-o", target])
    assert code == 2 and "not a regular file" in err[0], err
    assert os.stat(target).st_mode == mode  # the node is still what it was
    assert not stat.S_ISREG(os.stat(target).st_mode)


def test_pack_into_an_empty_folder_name_is_refused(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    event = tmp_path / "e.yaml"
    (tmp_path / "van.yaml").write_text(SPEC, encoding="utf-8")
    event.write_text("title: t\nbuilds:\n  - spec: van.yaml\n    count: 1\n", encoding="utf-8")
    before = _files(tmp_path)
    code, err = _run(capsys, ["pack", str(event), "-o", ""])
    assert code == 2 and "-o: is empty" in err[0], err
    assert _files(tmp_path) == before


def test_an_event_naming_a_system_file_never_quotes_it(tmp_path, capsys):
    secret = tmp_path / "passwd"
    secret.write_text("root:x:0:0:secret-first-line:/root:/bin/sh\n: [\n", encoding="utf-8")
    event = tmp_path / "e.yaml"
    event.write_text(f"title: t\nbuilds:\n  - spec: {secret}\n    count: 1\n", encoding="utf-8")
    code, err = _run(capsys, ["pack", str(event), "-o", str(tmp_path / "out")])
    assert code == 2 and "secret-first-line" not in "\n".join(err), err
    assert "e.yaml:3: builds[0].spec:" in err[0], err


def test_a_syntax_error_in_a_file_not_named_yaml_is_not_quoted(tmp_path, capsys):
    spec = tmp_path / "notes.txt"
    spec.write_text("private: words here\n  bad: [\n", encoding="utf-8")
    code, err = _run(capsys, ["check", str(spec)])
    assert code == 2 and "private" not in err[0] and ":2: not valid YAML" in err[0], err


# ----------------------------------------------------------------- events
EVENT_HEAD = "title: Spring build night\n"


def _event_case(body: str) -> str:
    return EVENT_HEAD + body


EVENT_CASES = [
    ("an impossible date", _event_case("date: 2027-02-30\nbuilds:\n  - spec: van.yaml\n    count: 1\n"), 2,
     "not a date"),
    ("a count of 5,000 digits", _event_case("builds:\n  - spec: van.yaml\n    count: " + "9" * 5000 + "\n"), 4,
     "characters"),
    ("a count of 4,000 digits", _event_case("builds:\n  - spec: van.yaml\n    count: " + "9" * 4000 + "\n"), 4,
     "at most 500"),
    ("spares of 4,000 digits", _event_case("spares: " + "1" * 4000 + " %\nbuilds:\n  - spec: van.yaml\n"
                                           "    count: 1\n"), 2, "percentage"),
    ("20,000 builds", _event_case("builds:\n" + "  - {spec: van.yaml, count: 1}\n" * 20_000), 3, "values"),
    ("2,001 builds", _event_case("builds:\n" + "  - {spec: van.yaml, count: 1}\n" * 2001), 3, "at most 2000"),
    ("an alias bomb of builders", _event_case(
        "x: &a [n, n, n, n, n, n, n, n, n, n]\n"
        + "".join(f"x{c}: &{c} [{', '.join(['*' + chr(ord(c) - 1)] * 10)}]\n" for c in "bcdefg")
        + "builds:\n  - spec: van.yaml\n    builders: *g\n"), 6, "aliases"),
    ("nesting 2,000 deep", _event_case("builds: " + "[" * 2000 + "]" * 2000 + "\n"), 2, DEEP),
    ("an Arabic name", _event_case("builds:\n  - spec: van.yaml\n    builders: [\u0633\u0627\u0631\u0629]\n"), 4,
     "right-to-left"),
    ("a Hebrew name", _event_case("builds:\n  - spec: van.yaml\n    builders: [\u05e9\u05e8\u05d4]\n"), 4,
     "right-to-left"),
    ("a name of one zero-width space", _event_case("builds:\n  - spec: van.yaml\n    builders: [\"\u200b\"]\n"),
     4, "invisible"),
    ("a name holding a right-to-left override", _event_case(
        "builds:\n  - spec: van.yaml\n    builders: [\"Ana\u202eoB\"]\n"), 4, "direction control"),
    ("a lone surrogate in a name", _event_case("builds:\n  - spec: van.yaml\n    builders: [\"\\udc00\"]\n"), 4,
     SURROGATE),
    ("a tag in the event", _event_case("builds:\n  - spec: van.yaml\n    count: !!int 3\n"), 4,
     "tags are not supported"),
    ("a forced topology that does not exist, inline", _event_case(
        "builds:\n  - design: {supply: 12 V, load: {kind: led, current: 20 mA, vf: 3.1 V}, fade: {in: 1 s, "
        "out: 2 s}, topology: mosfit}\n    count: 1\n"), 3, "did you mean `mosfet`?"),
]


@pytest.mark.parametrize("text,line,needle", [c[1:] for c in EVENT_CASES], ids=[c[0] for c in EVENT_CASES])
def test_hostile_events_exit_2_with_the_line(tmp_path, capsys, text, line, needle):
    (tmp_path / "van.yaml").write_text(SPEC, encoding="utf-8")
    event = tmp_path / "spring.yaml"
    event.write_text(text, encoding="utf-8")
    before = _files(tmp_path)
    code, err = _run(capsys, ["pack", str(event), "-o", str(tmp_path / "out"), "--jobs", "1"])
    _assert_refused(code, err, needle=needle, line=line, folder=tmp_path, before=before)


# ----------------------------------------------------------------- layouts
LAYOUT = (ROOT / "layouts" / "a4-sheet.yaml").read_text(encoding="utf-8")

LAYOUT_CASES = [
    ("a name of 20,000 characters", LAYOUT.replace("name: a4-sheet", "name: " + "n" * 20_000), None, "characters"),
    ("a name of 3,000 characters", LAYOUT.replace("name: a4-sheet", "name: " + "n" * 3000), None,
     "keep it to 60"),
    ("nesting 2,000 deep", LAYOUT + "extra: " + "[" * 2000 + "]" * 2000 + "\n", None, DEEP),
    ("a very narrow column", LAYOUT.replace("columns: {left: 1, right: 1}", "columns: {left: 0.2, right: 5}"),
     None, "narrow"),
    ("a tag", LAYOUT.replace("page: A4", "page: !!str A4"), None, "tags are not supported"),
]


@pytest.mark.parametrize("text,line,needle", [c[1:] for c in LAYOUT_CASES], ids=[c[0] for c in LAYOUT_CASES])
def test_hostile_layouts_exit_2_with_the_line(tmp_path, capsys, monkeypatch, text, line, needle):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "van.yaml").write_text(SPEC, encoding="utf-8")
    layout = tmp_path / "mine.yaml"
    layout.write_text(text, encoding="utf-8")
    before = _files(tmp_path)
    code, err = _run(capsys, ["build", "van.yaml", "--layout", str(layout)])
    expected = next(i + 1 for i, t in enumerate(text.splitlines())
                    if t.startswith(("name:", "extra:", "columns:", "page:")) and needle_key(needle, t))
    _assert_refused(code, err, needle=needle, line=expected if line is None else line, folder=tmp_path,
                    before=before)


def needle_key(needle: str, line_text: str) -> bool:
    """The line each layout case is about: the key its message names."""
    key = {"characters": "name:", "keep it to 60": "name:", DEEP: "extra:", "narrow": "columns:",
           "tags are not supported": "page:"}[needle]
    return line_text.startswith(key)


# ----------------------------------------------------------------- the environment
@pytest.mark.parametrize("epoch,needle", [("99999999999999999999", "after 9999-12-31"),
                                          ("9" * 5000, "not a whole number"), ("-5", "before 1970")])
def test_source_date_epoch_out_of_range_is_refused(tmp_path, capsys, monkeypatch, epoch, needle):
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("SOURCE_DATE_EPOCH", epoch)
    (tmp_path / "van.yaml").write_text(SPEC, encoding="utf-8")
    before = _files(tmp_path)
    code, err = _run(capsys, ["build", "van.yaml"])
    assert code == 2 and needle in err[0] and len(err[0]) <= MESSAGE_MAX, err
    assert _files(tmp_path) == before
