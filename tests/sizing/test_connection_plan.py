"""The connection plan the wiring steps are worded from: every lead of every part is joined exactly once."""

from __future__ import annotations

from pathlib import Path

import pytest

from sheetgen.inputs.spec import load_spec
from sheetgen.sizing.instructions import Joint, OffBoard, connection_plan
from sheetgen.sizing.size import size

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


@pytest.mark.parametrize("name", ["camper-van-step-light", "model-railway-station"])
def test_every_lead_is_in_one_joint_on_the_net_the_netlist_gives(name):
    design = size(load_spec(EXAMPLES / f"{name}.yaml"))
    seen: dict[tuple[str, str], str] = {}
    for c in connection_plan(design):
        if isinstance(c, (Joint, OffBoard)):
            for lead in c.leads:
                assert (lead.part.ref, lead.pin) not in seen
                seen[(lead.part.ref, lead.pin)] = c.net
    # A net with one lead on the board and no harness wire needs no joint; every other pin is in the plan.
    single = {net for net in {n for p in design.netlist.parts for _, n in p.pins}
              if sum(n == net for p in design.netlist.parts for _, n in p.pins) < 2}
    wired = {net for net, _ in design.topology.wiring}
    expected = {(p.ref, pin): net for p in design.netlist.parts for pin, net in p.pins
                if net not in single or net in wired}
    assert seen == expected
    named: set[str] = set()
    for c in connection_plan(design):
        for lead in getattr(c, "leads", ()):
            assert lead.first == (lead.part.ref not in named)  # "one end" first, "other end" after
            named.add(lead.part.ref)
