"""The pack plan without the command line: kit letters, which builds share a kit, the cards in order.

Kit letters follow the spreadsheet column sequence (A..Z, AA..AZ, BA..), the
A1 cell-reference style of ISO/IEC 29500-1 SpreadsheetML (clause 18.17.2.3,
from memory); the expected letters are counted here by hand.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

from sheetgen.errors import InfeasibleDesign, SimulationError, SpecError
from sheetgen.inputs.event import parse_event
from sheetgen.pack import batch
from sheetgen.pack.plan import design_failure, letters, plan_pack

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


def test_letters_run_as_spreadsheet_columns():
    got = letters(28 + 26 * 26)
    assert got[:3] == ["A", "B", "C"] and got[25] == "Z"
    assert got[26:28] == ["AA", "AB"] and got[51] == "AZ" and got[52] == "BA"
    assert got[701] == "ZZ" and got[702] == "AAA"  # 26 + 26*26 = 702 two-letter-or-shorter names
    assert len(set(got)) == len(got)


EVENT = f"""\
title: Spring build night
date: 2027-03-20
builds:
  - spec: {EXAMPLES / 'camper-van-step-light.yaml'}
    builders: [Ana, Bo]
  - spec: {EXAMPLES / 'model-railway-station.yaml'}
    count: 2
  - spec: {EXAMPLES / 'camper-van-step-light.yaml'}
    builders: [Cy]
"""


def _event():
    return parse_event(EVENT, source="night.yaml")


def test_builds_of_one_design_share_its_letter_and_cards_follow_design_order(camper_report, railway_report):
    event = _event()
    specs = batch.distinct([b.spec for b in event.builds])
    plan = plan_pack(event, specs, [camper_report, railway_report])
    assert [d.letter for d in plan.designs] == ["A", "B"]
    assert [len(d.builds) for d in plan.designs] == [2, 1] and [d.kits for d in plan.designs] == [3, 2]
    assert [(c.design, c.name, c.place) for c in plan.cards] == [
        ("A", "Ana", ""), ("A", "Bo", ""), ("A", "Cy", ""),
        ("B", None, "Builder 1 of 2"), ("B", None, "Builder 2 of 2")]
    assert {c.event for c in plan.cards} == {"Spring build night \u00b7 2027-03-20"}
    assert [(u.design, u.kits) for u in plan.kit_uses] == [("A", 3), ("B", 2)]


def test_a_failing_design_is_named_by_its_first_build_with_the_same_exit_class():
    event = _event()
    specs = batch.distinct([b.spec for b in event.builds])
    infeasible = design_failure(event, specs, batch.DesignFailed(1, InfeasibleDesign("too hot")))
    assert isinstance(infeasible, InfeasibleDesign)
    assert str(infeasible).startswith("night.yaml:6: builds[1] (")
    bad = design_failure(event, specs, batch.DesignFailed(0, SpecError(["x: y"])))
    assert isinstance(bad, SpecError) and bad.problems[0].startswith("night.yaml:4: builds[0] (")
    solver = design_failure(event, specs, batch.DesignFailed(0, SimulationError("time step too small")))
    assert isinstance(solver, InfeasibleDesign) and "time step too small" in str(solver)
    bug = KeyError("x")
    assert design_failure(event, specs, batch.DesignFailed(0, bug)) is bug


def test_specs_differing_only_in_their_file_are_one_design(camper_report):
    event = _event()
    moved = replace(event.builds[2], spec=replace(event.builds[2].spec, source="elsewhere.yaml"))
    event = replace(event, builds=(event.builds[0], moved))
    specs = batch.distinct([b.spec for b in event.builds])
    assert len(specs) == 1
    assert [d.kits for d in plan_pack(event, specs, [camper_report]).designs] == [3]
