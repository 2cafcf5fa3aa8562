"""The design cache: a repeated build simulates nothing, and the cache never hands back a wrong design.

Each test has an empty cache folder of its own (conftest points SHEETGEN_CACHE_DIR
at a temporary folder), so none writes into the user's real cache.
"""

from __future__ import annotations

import shutil
import subprocess
import sys
import textwrap
from dataclasses import replace
from pathlib import Path

import pytest

from sheetgen.cli import main
from sheetgen.engine import simulate
from sheetgen.inputs.spec import load_spec
from sheetgen.sizing import cache
from sheetgen.sizing.cache import DesignCache, design_key

ROOT = Path(__file__).resolve().parents[2]
CAMPER = ROOT / "examples" / "camper-van-step-light.yaml"
EPOCH = "1700000000"


def _no_simulation(monkeypatch) -> None:
    """From here on, any simulation at all fails the run."""
    def refuse(*_args, **_kwargs):
        raise AssertionError("simulated although the design was in the cache")

    monkeypatch.setattr(simulate, "transient", refuse)
    monkeypatch.setattr(simulate, "operating_point", refuse)


def _entries(folder: Path) -> list[Path]:
    return sorted(folder.glob("*.entry"))


# ------------------------------------------------------------------ repeated runs
def test_a_repeated_build_simulates_nothing_and_writes_the_same_bytes(tmp_path, monkeypatch, design_cache_folder):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", EPOCH)
    assert main(["build", str(CAMPER), "-o", str(tmp_path / "first.pdf")]) == 0
    assert cache.cached_report(load_spec(CAMPER)) is not None
    _no_simulation(monkeypatch)
    assert main(["build", str(CAMPER), "-o", str(tmp_path / "again.pdf")]) == 0
    assert (tmp_path / "again.pdf").read_bytes() == (tmp_path / "first.pdf").read_bytes()
    assert main(["check", str(CAMPER)]) == 0 and main(["size", str(CAMPER), "--json"]) == 0
    # --no-cache neither reads nor writes: it must simulate, and here simulating fails the run
    assert main(["build", str(CAMPER), "-o", str(tmp_path / "fresh.pdf"), "--no-cache"]) == 1
    assert not (tmp_path / "fresh.pdf").exists()


def test_a_build_after_a_check_only_analyses(tmp_path, monkeypatch):
    assert main(["check", str(CAMPER)]) == 0

    def refuse(_spec):
        raise AssertionError("sized again although check had sized this design")

    monkeypatch.setattr("sheetgen.sizing.size.size", refuse)
    assert main(["build", str(CAMPER), "-o", str(tmp_path / "van.pdf")]) == 0
    _no_simulation(monkeypatch)
    assert main(["check", str(CAMPER)]) == 0


def test_the_same_design_from_another_file_is_found_and_named_as_read(tmp_path, monkeypatch):
    first = cache.report_for(load_spec(CAMPER))
    copy = tmp_path / "my-van.yaml"
    shutil.copy(CAMPER, copy)
    _no_simulation(monkeypatch)
    again = cache.report_for(load_spec(copy))
    assert again.design.spec.source == str(copy)  # the sheet names the file this run read
    assert (again.design.values, again.design.fade_in_s) == (first.design.values, first.design.fade_in_s)


def test_a_repeated_pack_simulates_nothing_and_writes_the_same_bytes(tmp_path, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", EPOCH)
    event = tmp_path / "night.yaml"
    event.write_text(textwrap.dedent(f"""\
        title: Harbour club build night
        builds:
          - spec: {CAMPER}
            count: 3
          - spec: {ROOT / "examples" / "model-railway-station.yaml"}
            count: 2
        """), encoding="utf-8")
    assert main(["pack", str(event), "-o", str(tmp_path / "a")]) == 0
    _no_simulation(monkeypatch)
    assert main(["pack", str(event), "-o", str(tmp_path / "b")]) == 0
    for name in ("booklet.pdf", "cards.pdf", "kit-list.csv"):
        assert (tmp_path / "b" / name).read_bytes() == (tmp_path / "a" / name).read_bytes(), name


# ------------------------------------------------------------------ corruption
def test_a_truncated_entry_is_rebuilt(tmp_path, monkeypatch, design_cache_folder):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", EPOCH)
    assert main(["build", str(CAMPER), "-o", str(tmp_path / "first.pdf")]) == 0
    (entry,) = design_cache_folder.glob(design_key(load_spec(CAMPER)) + ".entry")
    whole = entry.read_bytes()
    entry.write_bytes(whole[: len(whole) // 2])
    assert cache.cached_report(load_spec(CAMPER)) is None and not entry.exists()  # dropped, not believed
    assert main(["build", str(CAMPER), "-o", str(tmp_path / "rebuilt.pdf")]) == 0
    assert entry.exists() and cache.cached_report(load_spec(CAMPER)) is not None  # whole again
    assert (tmp_path / "rebuilt.pdf").read_bytes() == (tmp_path / "first.pdf").read_bytes()


@pytest.mark.parametrize("damage", [
    lambda b: b[:10],                                  # cut inside the header
    lambda b: b[:-1],                                  # one byte short
    lambda b: b[:-5] + bytes([b[-5] ^ 0xFF]) + b[-4:],  # one byte changed
    lambda b: b"",                                     # empty
    lambda b: b"not an entry at all",
])
def test_any_damaged_entry_is_a_miss(tmp_path, damage):
    c = DesignCache(tmp_path)
    c.put("k", {"fade": [1.5, 4.0]})
    path = tmp_path / "k.entry"
    path.write_bytes(damage(path.read_bytes()))
    assert c.get("k") is None and not path.exists()
    c.put("k", {"fade": [1.5, 4.0]})
    assert c.get("k") == {"fade": [1.5, 4.0]}


# ------------------------------------------------------------------ invalidation
def _package_copy(tmp_path: Path) -> Path:
    copy = tmp_path / "sheetgen"
    shutil.copytree(cache.PACKAGE, copy, ignore=shutil.ignore_patterns("__pycache__"))
    return copy


def test_a_catalog_change_misses_the_cache(tmp_path, monkeypatch):
    copy = _package_copy(tmp_path)
    monkeypatch.setattr(cache, "PACKAGE", copy)
    spec = load_spec(CAMPER)
    c = DesignCache(tmp_path / "c")
    c.put(design_key(spec), "sized with the old catalog")
    assert c.get(design_key(spec)) == "sized with the old catalog"
    yaml_file = copy / "parts" / "catalog" / "transistors.yaml"
    text = yaml_file.read_text(encoding="utf-8")
    assert "rth_cs_c_per_w: 0.5" in text
    yaml_file.write_text(text.replace("rth_cs_c_per_w: 0.5", "rth_cs_c_per_w: 0.6", 1), encoding="utf-8")
    cache.code_fingerprint.cache_clear()
    try:
        assert c.get(design_key(spec)) is None
    finally:
        cache.code_fingerprint.cache_clear()


def test_an_engine_change_misses_and_a_pdf_change_does_not(tmp_path, monkeypatch):
    copy = _package_copy(tmp_path)
    monkeypatch.setattr(cache, "PACKAGE", copy)
    spec = load_spec(CAMPER)
    try:
        before = design_key(spec)
        with open(copy / "outputs" / "pdf" / "sheet.py", "a", encoding="utf-8") as f:
            f.write("\n# drawing only\n")
        cache.code_fingerprint.cache_clear()
        assert design_key(spec) == before
        with open(copy / "engine" / "simulate.py", "a", encoding="utf-8") as f:
            f.write("\n# a changed solver\n")
        cache.code_fingerprint.cache_clear()
        assert design_key(spec) != before
    finally:
        cache.code_fingerprint.cache_clear()


def test_draws_and_the_spec_itself_are_in_the_key():
    spec = load_spec(CAMPER)
    key = design_key(spec)
    assert design_key(replace(spec, source="elsewhere.yaml")) == key
    assert design_key(spec, draws=100) != key
    assert design_key(replace(spec, fade_in_s=spec.fade_in_s * 1.01)) != key
    assert design_key(replace(spec, ambient_c=spec.ambient_c + 1)) != key


# ------------------------------------------------------------------ two processes
WRITER = r"""
import sys
from sheetgen.sizing.cache import DesignCache
c = DesignCache(sys.argv[1])
payload = sys.argv[2].encode() * 400_000
for _ in range(25):
    c.put("shared", payload)
"""


def test_two_processes_writing_the_same_key_leave_one_whole_entry(tmp_path):
    folder = tmp_path / "c"
    writers = [subprocess.Popen([sys.executable, "-c", WRITER, str(folder), letter]) for letter in "ab"]
    c = DesignCache(folder)
    wholes = {b"a" * 400_000, b"b" * 400_000}
    reads, found = 0, False
    while any(w.poll() is None for w in writers):
        value = c.get("shared")
        # once an entry exists a reader always sees a whole one: renamed into place, never half-written
        assert value in wholes or (value is None and not found)
        found, reads = found or value is not None, reads + 1
    assert [w.wait() for w in writers] == [0, 0]
    assert c.get("shared") in wholes
    assert [p.name for p in folder.iterdir()] == ["shared.entry"]  # no temporary file left behind


# ------------------------------------------------------------------ folder and cap
def test_the_cap_removes_the_entries_used_longest_ago(tmp_path):
    import os

    c = DesignCache(tmp_path, max_bytes=4 * 110_000)
    for k, name in enumerate("abcd"):
        c.put(name, bytes(100_000))
        os.utime(tmp_path / f"{name}.entry", (1_000_000 + k, 1_000_000 + k))
    c.get("a")  # used again: now the most recent
    c.put("e", bytes(100_000))
    assert sorted(p.stem for p in _entries(tmp_path)) == ["a", "c", "d", "e"]


def test_a_cache_that_cannot_be_written_is_skipped(tmp_path):
    blocker = tmp_path / "not-a-folder"
    blocker.write_text("a file where the cache folder would go", encoding="utf-8")
    c = DesignCache(blocker / "designs")
    c.put("k", 1)  # no error: the run goes on uncached
    assert c.get("k") is None


def test_the_folder_follows_the_variable_then_the_platform(monkeypatch, tmp_path):
    monkeypatch.setenv("SHEETGEN_CACHE_DIR", str(tmp_path / "here"))
    assert DesignCache().folder == tmp_path / "here"
    monkeypatch.delenv("SHEETGEN_CACHE_DIR")
    if not sys.platform.startswith("linux"):
        pytest.skip("the XDG rule below is the Linux convention")
    # XDG Base Directory Specification (freedesktop.org): user cache files go under
    # $XDG_CACHE_HOME, default ~/.cache (from memory).
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    assert DesignCache().folder == tmp_path / "xdg" / "sheetgen"


def test_bypass_neither_reads_nor_writes(tmp_path):
    c = DesignCache(tmp_path)
    c.put("kept", 1)
    cache.bypass()
    c.put("new", 2)
    assert c.get("kept") is None and not (tmp_path / "new.entry").exists()
    cache.bypass(False)
    assert c.get("kept") == 1


def test_the_fingerprint_covers_every_layer_that_sizing_reads():
    """A new folder below sizing must join the key, or a change to it would serve stale Reports."""
    from sheetgen.sizing import cache

    below_sizing = {p.name for p in cache.PACKAGE.iterdir()
                    if p.is_dir() and (p / "__init__.py").exists() and p.name not in ("pack", "outputs")}
    assert below_sizing <= set(cache.LAYERS)
