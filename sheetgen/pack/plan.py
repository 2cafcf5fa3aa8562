"""The plan of a build-night pack: which builds share a design, their kit letters, and the cards in order.

Everything here is decided from the checked event and the designs' reports
alone, before any page is drawn, so the plan can be tested without the
command line and the renderers only draw what it says.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

from sheetgen.errors import InfeasibleDesign, SheetgenError, SpecError
from sheetgen.inputs.event import Build, Event
from sheetgen.inputs.spec import Spec
from sheetgen.pack import batch
from sheetgen.pack.kit import KitUse
from sheetgen.sizing.report import Report

__all__ = ["PACK_FILES", "PackDesign", "PlannedCard", "PackPlan", "letters", "plan_pack", "design_failure"]

#: The three files a pack writes, together or not at all.
PACK_FILES = ("booklet.pdf", "cards.pdf", "kit-list.csv")


@dataclass(frozen=True)
class PackDesign:
    """A distinct design of the event: its letter, its report and the builds that use it."""

    letter: str
    report: Report
    builds: tuple[Build, ...]

    @property
    def kits(self) -> int:
        return sum(len(b.builders) for b in self.builds)


@dataclass(frozen=True)
class PlannedCard:
    """One builder's card: the design's letter and report, and who it is for."""

    report: Report
    design: str
    name: str | None  # as written; None for an unnamed place
    place: str  # "Builder 3 of 7" for an unnamed place, else ""
    event: str  # the event's line on the card


@dataclass(frozen=True)
class PackPlan:
    designs: tuple[PackDesign, ...]
    kit_uses: tuple[KitUse, ...]
    cards: tuple[PlannedCard, ...]  # design by design, build by build, builder by builder


def letters(n: int) -> list[str]:
    """Kit letters A, B, ... Z, then AA, AB, ... as spreadsheet columns go."""
    out = []
    for k in range(n):
        text, k = "", k + 1
        while k:
            k, r = divmod(k - 1, 26)
            text = chr(ord("A") + r) + text
        out.append(text)
    return out


def event_line(event: Event) -> str:
    """The event as a card names it: "Spring build night · 2027-03-20"."""
    return " \u00b7 ".join(x for x in (event.title, event.date.isoformat() if event.date else "") if x)


def plan_pack(event: Event, specs: Sequence[Spec], reports: Sequence[Report]) -> PackPlan:
    """The plan for ``specs`` (the event's distinct designs, in order) and their ``reports``."""
    names = letters(len(specs))
    by_key = {batch.spec_key(spec): k for k, spec in enumerate(specs)}
    designs = tuple(PackDesign(letter=names[k], report=reports[k],
                               builds=tuple(b for b in event.builds if by_key[batch.spec_key(b.spec)] == k))
                    for k in range(len(specs)))
    on_card = event_line(event)
    cards = tuple(PlannedCard(report=d.report, design=d.letter, name=b.name, place=b.place, event=on_card)
                  for d in designs for build in d.builds for b in build.builders)
    uses = tuple(KitUse(report=d.report, design=d.letter, kits=d.kits) for d in designs)
    return PackPlan(designs=designs, kit_uses=uses, cards=cards)


def design_failure(event: Event, specs: Sequence[Spec], failed: batch.DesignFailed) -> SheetgenError | Exception:
    """The error to raise when one design of the pack fails: the same kind, naming the first build of it.

    A solver that cannot settle a valid design is an honest refusal of that
    design (exit 3), never an internal error without a name.
    """
    build = next(b for b in event.builds if batch.spec_key(b.spec) == batch.spec_key(specs[failed.index]))
    what = f"{build.where} ({build.spec_label})"
    error = failed.error
    if isinstance(error, SpecError):
        return SpecError([f"{what}: {p}" for p in error.problems])
    if isinstance(error, InfeasibleDesign):
        return InfeasibleDesign(f"{what}: {error}")
    if isinstance(error, SheetgenError):
        return InfeasibleDesign(f"{what}: this design could not be worked out ({error}); change its fade "
                                "times or load and try again")
    return error
