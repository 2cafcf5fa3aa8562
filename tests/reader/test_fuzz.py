"""Property: whatever a spec, event or layout file holds, the command line ends in exit 0, 2 or 3.

Random and mutated files go through ``sheetgen.cli.main`` in this process.  An
exit 2 must come with lines of the contract's form ``file:line: [key: ]message``,
short, naming the file given.  Sizing is replaced by a refusal (exit 3) once
the input has passed every check: what is fuzzed here is the reading, and a
valid spec costs a second of simulation that the solver's own tests spend.
The derandomised run in the suite keeps to a few hundred cases;
``benchmarks/fuzz_inputs.py`` runs thousands with real sizing.
"""

from __future__ import annotations

import re

import pytest
from hypothesis import HealthCheck, given, settings

from fuzz_inputs import SPEC_SEEDS, events, layouts, specs
from sheetgen.cli import main
from sheetgen.errors import InfeasibleDesign

LINE_RE = re.compile(r"^error: (?P<file>.+?):\d+: \S")
FUZZ = settings(max_examples=150, deadline=None, derandomize=True, database=None,
                suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])


@pytest.fixture
def no_sizing(monkeypatch):
    from sheetgen.sizing import size as size_module

    def refuse(spec):
        raise InfeasibleDesign("sizing is not run in the fuzz test")

    monkeypatch.setattr(size_module, "size", refuse)
    monkeypatch.setattr("sheetgen.pack.batch._size_and_analyse", refuse)


def _outcome(capsys, argv, named: str) -> None:
    code = main(argv)
    err = capsys.readouterr().err.splitlines()
    assert code in (0, 2, 3), err
    if code == 2:
        assert err, "exit 2 without a message"
        for line in err:
            m = LINE_RE.match(line)
            assert m and m["file"].endswith(named), line
            assert len(line) < 600, line
    if code == 3:
        assert err and err[0].startswith("cannot meet this spec: ")


@FUZZ
@given(text=specs)
def test_any_spec_file_gives_a_clean_outcome(tmp_path_factory, capsys, no_sizing, text):
    path = tmp_path_factory.mktemp("spec") / "van.yaml"
    path.write_text(text, encoding="utf-8", errors="surrogatepass")
    _outcome(capsys, ["check", str(path)], "van.yaml")


def _beside_a_spec(tmp_path_factory, kind: str, name: str, text: str):
    """A fresh folder holding a valid spec (van.yaml) and the fuzzed file ``name``."""
    folder = tmp_path_factory.mktemp(kind)
    (folder / "van.yaml").write_text(SPEC_SEEDS[0], encoding="utf-8")
    (folder / name).write_text(text, encoding="utf-8", errors="surrogatepass")
    return folder, folder / name


@FUZZ
@given(text=events)
def test_any_event_file_gives_a_clean_outcome(tmp_path_factory, capsys, no_sizing, text):
    folder, path = _beside_a_spec(tmp_path_factory, "event", "night.yaml", text)
    _outcome(capsys, ["pack", str(path), "-o", str(folder / "out"), "--jobs", "1"], "night.yaml")
    assert not (folder / "out").exists()


@FUZZ
@given(text=layouts)
def test_any_layout_file_gives_a_clean_outcome(tmp_path_factory, capsys, no_sizing, text):
    folder, path = _beside_a_spec(tmp_path_factory, "layout", "mine.yaml", text)
    _outcome(capsys, ["build", str(folder / "van.yaml"), "--layout", str(path), "-o", str(folder / "x.pdf")],
             "mine.yaml")
    assert not (folder / "x.pdf").exists()
