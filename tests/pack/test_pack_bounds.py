"""Packs at their bounds: long lists flow over pages, the three files change together, signals clean up.

Sizing is replaced by the session's already-sized reports, as in test_pack,
so each pack here costs renders only.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest
from pypdf import PdfReader

from sheetgen.cli import main
from sheetgen.errors import SimulationError
from sheetgen.outputs import write
from sheetgen.pack import batch

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = ROOT / "examples"


@pytest.fixture
def sized(camper_report, railway_report, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    by_title = {r.design.spec.title: r for r in (camper_report, railway_report)}
    monkeypatch.setattr(batch, "_size_and_analyse", lambda spec: by_title[spec.title])


def _event(tmp_path: Path, builds: str) -> Path:
    for spec in ("camper-van-step-light.yaml", "model-railway-station.yaml"):
        (tmp_path / spec).write_text((EXAMPLES / spec).read_text(encoding="utf-8"), encoding="utf-8")
    path = tmp_path / "night.yaml"
    path.write_text("title: Long night\nbuilds:\n" + builds, encoding="utf-8")
    return path


def _names(n: int, width: int = 24) -> str:
    return "[" + ", ".join(f"Builder{k:03d}".ljust(width, "x") for k in range(n)) + "]"


@pytest.mark.parametrize("count", [70, 500])
def test_a_long_builder_list_flows_over_pages(tmp_path, sized, capsys, count):
    event = _event(tmp_path, f"  - spec: camper-van-step-light.yaml\n    builders: {_names(count)}\n"
                             "  - spec: model-railway-station.yaml\n    count: 3\n")
    assert main(["pack", str(event), "-o", str(tmp_path / "out"), "--jobs", "1"]) == 0, capsys.readouterr().err
    text = "".join(p.extract_text() for p in PdfReader(tmp_path / "out" / "booklet.pdf").pages)
    assert "Builder000" in text and f"Builder{count - 1:03d}" in text  # the first and the last name printed


def _files(tmp_path: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted((tmp_path / "out").iterdir())}


def test_a_failed_third_rename_leaves_the_old_pack_whole(tmp_path, sized, monkeypatch, capsys):
    event = _event(tmp_path, "  - spec: camper-van-step-light.yaml\n    builders: [Ana]\n")
    assert main(["pack", str(event), "-o", str(tmp_path / "out"), "--jobs", "1"]) == 0
    old = _files(tmp_path)
    event.write_text(event.read_text(encoding="utf-8").replace("[Ana]", "[Bo, Cy]"), encoding="utf-8")
    real = os.replace
    calls = []

    def failing(src, dst):
        calls.append(dst)
        if str(dst).endswith("kit-list.csv") and not str(src).endswith(".old"):
            raise OSError(28, "No space left on device")
        return real(src, dst)

    monkeypatch.setattr(write.os, "replace", failing)
    assert main(["pack", str(event), "-o", str(tmp_path / "out"), "--jobs", "1"]) == 2
    assert "No space left on device" in capsys.readouterr().err
    assert _files(tmp_path) == old  # booklet and cards put back beside the old kit list; no hidden folder left


def test_two_packs_never_interleave(tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    holder = write._folder_lock(out)
    holder.__enter__()  # another pack is swapping its files in
    done = []
    worker = threading.Thread(target=lambda: done.append(write.atomic_write_files(out, {"a.txt": b"new"})))
    worker.start()
    worker.join(0.5)
    assert not done and not (out / "a.txt").exists()  # waits for the lock
    holder.__exit__(None, None, None)
    worker.join(10)
    assert done and (out / "a.txt").read_bytes() == b"new"


def test_a_solver_failure_on_one_design_names_it_and_exits_3(tmp_path, monkeypatch, capsys, camper_report):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")

    def fake(spec):
        if spec.title == "Model railway station lamp" or "railway" in spec.title.lower():
            raise SimulationError("time step too small at t = 1.2 s")
        return camper_report

    monkeypatch.setattr(batch, "_size_and_analyse", fake)
    event = _event(tmp_path, "  - spec: camper-van-step-light.yaml\n    count: 1\n"
                             "  - spec: model-railway-station.yaml\n    count: 2\n")
    assert main(["pack", str(event), "-o", str(tmp_path / "out"), "--jobs", "1"]) == 3
    err = capsys.readouterr().err
    assert "night.yaml:5: builds[1] (model-railway-station.yaml)" in err and "time step too small" in err, err
    assert not (tmp_path / "out").exists()


def _slow_pack(tmp_path: Path, *extra: str) -> subprocess.Popen:
    """A real pack (real sizing, three designs) in a child process, long enough to be stopped midway."""
    event = EXAMPLES / "events" / "spring-build-night.yaml"
    env = dict(os.environ, SOURCE_DATE_EPOCH="1700000000")
    return subprocess.Popen([sys.executable, "-m", "sheetgen", "pack", str(event), "-o", str(tmp_path / "out"),
                             *extra], stderr=subprocess.PIPE, stdout=subprocess.PIPE, env=env, text=True)


@pytest.mark.parametrize("signum,code", [(signal.SIGTERM, 128 + signal.SIGTERM), (signal.SIGINT, 130)])
def test_a_stopped_pack_leaves_nothing_and_says_so(tmp_path, signum, code):
    child = _slow_pack(tmp_path, "--jobs", "2")
    time.sleep(2.5)
    child.send_signal(signum)
    out, err = child.communicate(timeout=60)
    assert child.returncode == code, err
    assert "Traceback" not in err, err
    assert not (tmp_path / "out").exists()  # the folder it made is gone, and with it every temporary file


def test_workers_go_quietly_with_their_parent(tmp_path):
    child = _slow_pack(tmp_path, "--jobs", "2")
    time.sleep(2.5)
    child.kill()
    out, err = child.communicate(timeout=60)  # the pipe closes only once every worker is gone as well
    assert "Traceback" not in err and "BrokenPipe" not in err, err


def test_a_layout_failure_on_one_design_names_it_and_exits_2(tmp_path, sized, monkeypatch, capsys):
    from reportlab.platypus.doctemplate import LayoutError

    from sheetgen.outputs.pdf import cards as cards_module

    real = cards_module.render_cards

    def fussy(cards, layout, **kw):  # the page setter cannot set the railway design on this layout
        if any("railway" in c.report.design.spec.title.lower() for c in cards):
            raise LayoutError("Flowable too large on page 1")
        return real(cards, layout, **kw)

    monkeypatch.setattr(cards_module, "render_cards", fussy)
    event = _event(tmp_path, "  - spec: camper-van-step-light.yaml\n    count: 1\n"
                             "  - spec: model-railway-station.yaml\n    count: 2\n")
    assert main(["pack", str(event), "-o", str(tmp_path / "out"), "--jobs", "1"]) == 2
    err = capsys.readouterr().err
    assert "night.yaml:5: builds[1] (model-railway-station.yaml): kit B: layouts/a6-card.yaml" in err, err
    assert "LayoutError" in err
    assert not (tmp_path / "out").exists()
