"""A forced topology plays by the automatic choice's rules, and loads too big to hover safely are refused."""

from __future__ import annotations

import pytest

from sheetgen.cli import main
from sheetgen.errors import InfeasibleDesign
from sheetgen.inputs.spec import parse_spec
from sheetgen.sizing.analyse import analyse
from sheetgen.sizing.size import C_MAX_F, HOVER_MAX_W, load_line_peak_w, size

TWO_LAMPS = "title: two stop lamps\nsupply: 12 V\nload: {kind: lamp, power: 21 W, count: 2}\n" \
            "fade: {in: 1 s, out: 3 s}\n"


def test_a_forced_stage_says_forced_and_keeps_the_capacitor_and_tuning_limits():
    spec = parse_spec("supply: 12 V\nload: {kind: led, current: 20 mA, vf: 3.1 V, per_string: 3, strings: 2}\n"
                      "fade: {in: 1.5 s, out: 4 s}\ntopology: npn\n", source="forced.yaml")
    report = analyse(size(spec))
    d = report.design
    assert d.reasons[0] == "Single NPN, low side forced by topology: npn in the spec"
    assert "simplest" not in " ".join(d.reasons)
    assert d.values.c_timing_f <= C_MAX_F * 1.0001
    c1 = d.netlist.by_role("timing")[0].ref
    assert all(t.value <= C_MAX_F * 1.001 for t in report.tuning if t.ref == c1)


def test_two_21_w_lamps_are_refused_even_with_the_mosfet_forced(tmp_path, capsys):
    spec = parse_spec(TWO_LAMPS + "topology: mosfet\n", source="lamps.yaml")
    # A switch in series with a resistance R dissipates at most V²/4R (maximum power transfer theorem;
    # Horowitz & Hill, The Art of Electronics, 3rd ed., ch. 1, from memory).  Even with both filaments
    # hot (R = 12²/42 W = 3.43 Ω) that is 14.6²/(4 · 3.43) = 15.5 W at 14.6 V; cooler filaments only add.
    assert load_line_peak_w(spec, supply_v=14.6, r_led_ohm=None) >= 14.6**2 / (4 * 12**2 / 42) * 0.999
    with pytest.raises(InfeasibleDesign, match=f"more than the {HOVER_MAX_W:g} W this tool designs for"):
        size(spec)
    path = tmp_path / "lamps.yaml"
    path.write_text(TWO_LAMPS + "topology: mosfet\n", encoding="utf-8")
    assert main(["build", str(path), "-o", str(tmp_path / "lamps.pdf")]) == 3
    err = capsys.readouterr().err
    assert "hovers half-on" in err and "split the load" in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["lamps.yaml"]
