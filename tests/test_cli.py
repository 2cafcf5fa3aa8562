"""The command line: exit codes, error lines, the JSON report contract and its SPICE deck."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from sheetgen.cli import main
from sheetgen.engine.measure import TIMES, light_times
from sheetgen.outputs.spice_run import run_transient

EXAMPLES = sorted((Path(__file__).parent.parent / "examples").glob("*.yaml"))

BAD = {
    "wrong-unit.yaml": ("supply: 12 V\nload: {kind: led, current: 20 mV, vf: 3 V}\nfade: {in: 1 s, out: 2 s}\n",
                        "load.current", ":2:"),
    "negative-time.yaml": ("supply: 12 V\nload: {kind: led, current: 20 mA, vf: 3 V}\nfade:\n  in: -1 s\n  out: 2 s\n",
                           "fade.in", ":4:"),
    "unknown-key.yaml": ("supply: 12 V\ncolour: red\nload: {kind: led, current: 20 mA, vf: 3 V}\n"
                         "fade: {in: 1 s, out: 2 s}\n", "colour", ":2:"),
    "broken.yaml": ("supply: 12 V\nload: {kind: led, current: 20 mA\nfade: {in: 1 s, out: 2 s}\n", "", ":"),
    "mains.yaml": ("supply: 230 V\nload: {kind: lamp, power: 5 W}\nfade: {in: 1 s, out: 2 s}\n", "supply", ":1:"),
    "too-long-string.yaml": ("supply: 12 V\nload: {kind: led, current: 20 mA, vf: 3.1 V, per_string: 4}\n"
                             "fade: {in: 1 s, out: 2 s}\n", "per_string", ":2:"),
    "on-off.yaml": ("supply: 12 V\nload: {kind: led, current: 20 mA, vf: 3 V}\nfade: {on: 1 s, off: 2 s}\n",
                    "fade", ":3:"),
    "bare-number.yaml": ("supply: 12\nload: {kind: led, current: 20 mA, vf: 3 V}\nfade: {in: 1 s, out: 2 s}\n",
                         "supply", ":1:"),
    "bad-install.yaml": ("supply: 12 V\ninstall: plane\nload: {kind: led, current: 20 mA, vf: 3 V}\n"
                         "fade: {in: 1 s, out: 2 s}\n", "install", ":2:"),
}


@pytest.mark.parametrize("name", sorted(BAD))
def test_bad_specs_exit_2_naming_key_and_line(tmp_path, capsys, name):
    text, key, line = BAD[name]
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    assert main(["size", str(path)]) == 2
    err = capsys.readouterr().err
    assert name in err and key in err and line in err
    assert "Traceback" not in err


def test_missing_spec_file_exits_2(capsys):
    assert main(["check", "/nonexistent/van.yaml"]) == 2
    assert "/nonexistent/van.yaml" in capsys.readouterr().err


def test_impossible_fade_exits_3_with_the_limit(tmp_path, capsys):
    path = tmp_path / "lamp.yaml"
    path.write_text("supply: 12 V\nload: {kind: lamp, power: 3 W}\nfade: {in: 3 s, out: 10 s}\ntopology: npn\n",
                    encoding="utf-8")
    assert main(["check", str(path)]) == 3
    err = capsys.readouterr().err
    assert "cannot meet this spec" in err and "µF" in err and "What would work" in err


@pytest.mark.parametrize("command", [[], ["size"], ["check"]])
def test_help_on_every_command(command):
    out = subprocess.run([sys.executable, "-m", "sheetgen.cli", *command, "--help"], capture_output=True, text=True)
    assert out.returncode == 0 and "usage: sheetgen" in out.stdout


def test_summary_names_the_fades_and_definitions(capsys):
    assert main(["size", str(EXAMPLES[0])]) == 0
    out = capsys.readouterr().out
    assert "fade-in" in out and "90 %" in out and "10 %" in out


@pytest.fixture(scope="module")
def camper_json():
    path = Path(__file__).parent.parent / "examples" / "camper-van-step-light.yaml"
    out = subprocess.run([sys.executable, "-m", "sheetgen.cli", "size", str(path), "--json"],
                         capture_output=True, text=True, check=True)
    return json.loads(out.stdout)


def test_json_report_contract(camper_json):
    d = camper_json
    for key in ("topology", "parts", "load_current_a", "fade_in_s", "fade_out_s", "release_s", "spice"):
        assert key in d
    refs = {p["ref"] for p in d["parts"]}
    assert {"D1", "R1", "C1", "R2", "R3", "Q1"} <= refs
    for p in d["parts"]:
        assert p["pins"] and all(isinstance(v, str) for v in p["pins"].values())
        assert p["part_number"] or p["description"]
    c1 = next(p for p in d["parts"] if p["ref"] == "C1")
    assert 1e-6 <= c1["value"] <= 10e-3  # SI base units: farads
    assert "VSUPPLY" in d["spice"] and ".tran" in d["spice"]


@pytest.mark.requires_ngspice
def test_json_deck_runs_in_ngspice_and_agrees(camper_json):
    """ngspice 39 (Debian) runs the exported deck as it stands and confirms the reported times within 2 %."""
    d = camper_json
    data = run_transient(d["spice"], vectors=["i(vsupply)", "v(light)"])
    t, i = data["time"], -data["i(vsupply)"]
    steady = np.interp(d["release_s"] * 0.999, t, i)
    # The deck's own light node, read with the contract's levels, gives the report's four times.
    times = light_times(t, data["v(light)"][None, :], release_s=d["release_s"], full=np.ones(1))
    for name in TIMES:
        assert getattr(times, name)[0] == pytest.approx(d[name], rel=0.02), name
    assert np.interp(d["release_s"] * 0.999, t, data["v(light)"]) == pytest.approx(1.0, rel=0.01)
    assert steady == pytest.approx(d["load_current_a"], rel=0.01)


@pytest.mark.requires_ngspice
def test_deck_runs_as_it_stands_in_batch_mode(camper_json, tmp_path):
    deck = tmp_path / "deck.cir"
    deck.write_text(camper_json["spice"], encoding="utf-8")
    out = subprocess.run(["ngspice", "-b", str(deck)], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stdout[-2000:] + out.stderr[-2000:]


@pytest.mark.parametrize("example", EXAMPLES, ids=lambda p: p.stem)
def test_every_example_can_be_met(example, capsys):
    assert main(["check", str(example)]) == 0


RAILWAY = Path(__file__).parent.parent / "examples" / "model-railway-station.yaml"


def test_draws_sets_how_many_tolerance_draws_the_report_is_taken_over(capsys):
    assert main(["size", str(RAILWAY), "--json", "--draws", "120"]) == 0
    report = json.loads(capsys.readouterr().out)
    assert report["tolerance"]["draws"] == 120
    spread = report["tolerance"]["fade_in_s"]
    assert spread["p5"] <= spread["p50"] <= spread["p95"]


@pytest.mark.parametrize("value", ["10", "many", "1e9"])
def test_draws_outside_its_range_is_bad_input(value, capsys):
    with pytest.raises(SystemExit) as stop:
        main(["size", str(RAILWAY), "--draws", value])
    assert stop.value.code == 2
    assert "--draws" in capsys.readouterr().err


def test_build_takes_draws_too(tmp_path, capsys):
    out = tmp_path / "railway.pdf"
    assert main(["build", str(RAILWAY), "--draws", "60", "-o", str(out)]) == 0
    assert out.read_bytes().startswith(b"%PDF")


def test_a_signal_rebuilt_by_a_library_still_exits_128_plus_its_number(monkeypatch, capsys):
    """reportlab re-raises an exception from inside a paragraph as type(exc)(its own message),
    so the signal number cannot ride on the exception (reportlab.lib.utils.rl_reraise)."""
    import signal

    from sheetgen import cli

    def interrupted(_args):
        try:
            cli._stop(signal.SIGTERM, None)
        except cli._Stopped as exc:
            raise type(exc)("paragraph text '<para>x</para>' caused exception 2") from exc
        return 0

    monkeypatch.setattr(cli, "cmd_check", interrupted)
    assert main(["check", "no-such.yaml"]) == 128 + signal.SIGTERM
    assert "stopped; nothing new was written" in capsys.readouterr().err


@pytest.mark.requires_ngspice
@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_every_example_deck_gives_its_four_times_in_ngspice(path):
    """ngspice 39 (Debian) alone, on the deck's own `light` node read at 10 % and 90 %, gives the report's times."""
    out = subprocess.run([sys.executable, "-m", "sheetgen", "size", str(path), "--json"],
                         capture_output=True, text=True, check=True)
    d = json.loads(out.stdout)
    data = run_transient(d["spice"], vectors=["v(light)"])
    times = light_times(data["time"], data["v(light)"][None, :], release_s=d["release_s"], full=np.ones(1))
    for name in TIMES:
        assert getattr(times, name)[0] == pytest.approx(d[name], rel=0.02), name
    for corner in d["corners"]:  # and no LED string over its rating at any corner
        assert corner["led_current_max_a"] <= d["led_rated_a"] * 1.001
