"""Reading a build-night event file: who builds which design, and the kits' spares.

The file (YAML; unknown keys are an error, as in a spec)::

    title: Spring build night          # required, one line
    date: 2027-03-20                   # optional, an ISO date
    venue: Community workshop, room 2  # optional, one line
    spares: 10 %                       # optional (default 0 %): extra parts per kit-list line, rounded up
    wires: {always_on: red, ground: black}  # optional: wire colours for every build whose spec names none
    board: perfboard                   # optional: the board every build uses tonight, over its spec's board:
    builds:                            # required, one entry per group building one design
      - spec: cabinet.yaml             # a spec file, relative to this file; or
        builders: [Ana, Bo]            #   names printed on their cards exactly as written
      - design: {supply: 12 V, ...}    # an inline spec (the spec file's keys), instead of spec:
        count: 7                       #   or this many unnamed builders ("Builder 3 of 7");
                                       #   beside builders:, that many unnamed places after the names

Every problem is reported at once, one a line, as ``file:line: key.path: what``
with the build named by its place in the list (``builds[1].count``, from 0),
and a spec that fails says so through its build.  Builders' names are taken
from the file's text itself, never through YAML's type guessing, so "Yes",
"0012" or "null" are names as written, not true, 12 or nothing.
"""

from __future__ import annotations

import datetime as _dt
import os
import re
import unicodedata
from dataclasses import dataclass, replace
from decimal import Decimal, InvalidOperation
from fractions import Fraction
from pathlib import Path

from yaml.nodes import MappingNode, Node, ScalarNode, SequenceNode

from sheetgen.errors import SpecError
from sheetgen.inputs.spec import BOARDS, Spec, Unprintable, load_spec, spec_from_node
from sheetgen.inputs.wires import RUNS, check_wires
from sheetgen.reader.files import read_text
from sheetgen.reader.text import line_problem
from sheetgen.reader.yamltree import Problems, compose, excerpt, mapping, suggest

__all__ = ["Builder", "Build", "Event", "load_event", "parse_event", "NAME_MAX_CHARS", "COUNT_MAX"]

NAME_MAX_CHARS = 60  # two lines on the narrowest card at a readable size
TEXT_MAX_CHARS = 120
COUNT_MAX = 500  # builders in one build: a big club night, not a production run
BUILDERS_MAX = 2000  # over the whole event
_TOP_KEYS = ("title", "date", "venue", "spares", "wires", "board", "builds")
_BUILD_KEYS = ("spec", "design", "builders", "count")
_PERCENT_RE = re.compile(r"\s*(?P<num>\d{1,3}(?:\.\d{1,3})?)\s*%\s*")


@dataclass(frozen=True)
class Builder:
    """One card to print: a builder's name as written, or a numbered place with a line to write it on."""

    name: str | None
    line: int  # where it was written (for an unnamed place, the line of count:)
    number: int  # 1-based within its build
    of: int  # builders in its build

    @property
    def place(self) -> str:
        """How an unnamed card is told apart: "Builder 3 of 7"."""
        return "" if self.name is not None else f"Builder {self.number} of {self.of}"


@dataclass(frozen=True)
class Build:
    """One entry of ``builds:``: a design and the people building it."""

    index: int  # from 0, as messages name it: builds[0]
    line: int
    source: str  # the event file
    spec: Spec
    spec_label: str  # the spec file as written in the event, or "inline design"
    builders: tuple[Builder, ...]

    @property
    def where(self) -> str:
        """``spring.yaml:6: builds[0]``: the build as every message names it."""
        return f"{self.source}:{self.line}: builds[{self.index}]"

    @property
    def named(self) -> bool:
        return any(b.name is not None for b in self.builders)


@dataclass(frozen=True)
class Event:
    """A checked event file."""

    source: str
    title: str
    date: _dt.date | None
    venue: str | None
    spares: Fraction  # 0.1 for "10 %"
    spares_text: str  # as written, for printing
    builds: tuple[Build, ...]
    warnings: tuple[str, ...] = ()  # not errors, but worth a look before printing (a name given twice)

    @property
    def builder_count(self) -> int:
        return sum(len(b.builders) for b in self.builds)


def load_event(path: str | os.PathLike[str], *, topologies: tuple[str, ...] | None = None,
               unprintable: Unprintable | None = None) -> Event:
    """Read and check an event file and every spec it names; all problems raised together.

    ``topologies``, when given, are the names a spec's ``topology:`` may take; ``unprintable``
    checks each spec's title against the sheets' font (``load_spec``).
    """
    source = os.fspath(path)
    return parse_event(read_text(source, what="event"), source=source, folder=Path(source).parent,
                       topologies=topologies, unprintable=unprintable)


def parse_event(text: str, *, source: str, folder: str | os.PathLike[str] = ".",
                topologies: tuple[str, ...] | None = None, unprintable: Unprintable | None = None) -> Event:
    """Check an event given as YAML text; ``spec:`` paths are read relative to ``folder``."""
    problems = Problems(source)
    root = compose(text, source=source)
    if root is None:
        raise SpecError(f"{source}:1: is empty; an event needs at least title: and builds:")
    top = mapping(root, "", _TOP_KEYS, problems)
    for needed in ("title", "builds"):
        if needed not in top and isinstance(root, MappingNode):
            problems.add(root, needed, "is missing" + (
                "; list who builds what, e.g. builds: [{spec: van.yaml, count: 6}]" if needed == "builds" else ""))

    title = _line(top["title"][1], "title", problems) if "title" in top else None
    venue = _line(top["venue"][1], "venue", problems) if "venue" in top else None
    date = _date(top["date"][1], problems) if "date" in top else None
    spares, spares_text = (_spares(top["spares"][1], problems) if "spares" in top else (Fraction(0), "0 %"))
    reader = _SpecReader(source, Path(folder), topologies, unprintable)
    builds = _builds(top["builds"][1], reader, problems) if "builds" in top else ()
    if "wires" in top:
        colours = _wires(top["wires"][1], problems)
        builds = tuple(b if b.spec.wires else replace(b, spec=replace(b.spec, wires=colours)) for b in builds)
    if "board" in top:
        board = _board(top["board"][1], problems)
        if board:
            builds = tuple(replace(b, spec=replace(b.spec, board=board)) for b in builds)
    total = sum(len(b.builders) for b in builds)
    if total > BUILDERS_MAX:
        problems.add(top["builds"][1], "builds", f"{total} builders in all; one pack holds at most {BUILDERS_MAX}")
    problems.raise_if_any()
    return Event(source=source, title=title, date=date, venue=venue, spares=spares, spares_text=spares_text,
                 builds=builds, warnings=_repeated_names(builds))


def _repeated_names(builds: tuple[Build, ...]) -> tuple[str, ...]:
    """A name given twice (ignoring case and Unicode spelling) makes two cards nobody can tell apart."""
    first: dict[str, tuple[Build, Builder]] = {}
    out = []
    for build in builds:
        for b in build.builders:
            if b.name is None:
                continue
            key = unicodedata.normalize("NFC", b.name).casefold().strip()
            if key in first:
                was_build, was = first[key]
                out.append(f"{build.source}:{b.line}: builds[{build.index}].builders[{b.number - 1}]: "
                           f"{excerpt(b.name)} is named already (builds[{was_build.index}].builders[{was.number - 1}], "
                           f"line {was.line}); two cards will carry the same name")
            else:
                first[key] = (build, b)
    return tuple(out)


# ----------------------------------------------------------------- checking
def _text(node: Node, key: str, problems: Problems) -> str | None:
    """A scalar's text exactly as written (after YAML quoting), whatever YAML would have typed it as."""
    if not isinstance(node, ScalarNode):
        problems.add(node, key, "should be a single value, not a list or a mapping")
        return None
    return node.value


def _printable(text: str, node: Node, key: str, problems: Problems, *, limit: int) -> bool:
    """One line of text, no control characters, not too long; the problem is noted when it is not."""
    problem = line_problem(text)
    if problem:
        problems.add(node, key, problem)
        return False
    if len(text) > limit:
        problems.add(node, key, f"is {len(text)} characters long; keep it to {limit}")
        return False
    return True


def _line(node: Node, key: str, problems: Problems) -> str | None:
    text = _text(node, key, problems)
    if text is None or not _printable(text, node, key, problems, limit=TEXT_MAX_CHARS):
        return None
    return text.strip()


def _date(node: Node, problems: Problems) -> _dt.date | None:
    text = _text(node, "date", problems)
    if text is None:
        return None
    try:
        if not re.fullmatch(r"\d{4}-\d{2}-\d{2}", text.strip()):
            raise ValueError
        return _dt.date.fromisoformat(text.strip())
    except ValueError:
        problems.add(node, "date", f"{excerpt(text)} is not a date; write it as year-month-day, e.g. 2027-03-20")
        return None


def _wires(node: Node, problems: Problems) -> tuple[tuple[str, str], ...]:
    """The event's wire colours, each problem on the line of its run."""
    if not isinstance(node, MappingNode):
        problems.add(node, "wires", "must be a mapping of runs to colours, e.g. wires: {always_on: red}")
        return ()
    lines = {k.value: k for k, _ in node.value if isinstance(k, ScalarNode)}
    data = {k.value: (v.value if isinstance(v, ScalarNode) else None) for k, v in node.value
            if isinstance(k, ScalarNode)}
    chosen, found = check_wires(data)
    for run, message in found:
        problems.add(lines.get(run, node) if run else node, f"wires.{run}" if run else "wires", message)
    return tuple((run, chosen[run]) for run in RUNS if run in chosen)


def _board(node: Node, problems: Problems) -> str | None:
    """The night's board for every build: stripboard or perfboard."""
    text = _text(node, "board", problems)
    if text is None:
        return None
    if text.strip().lower() not in BOARDS:
        hint = suggest(text.strip().lower(), BOARDS)
        problems.add(node, "board", f"{excerpt(text)} is not a board; use stripboard or perfboard"
                                    + (f" (did you mean `{hint}`?)" if hint else ""))
        return None
    return text.strip().lower()


def _spares(node: Node, problems: Problems) -> tuple[Fraction, str]:
    text = _text(node, "spares", problems)
    if text is None:
        return Fraction(0), "0 %"
    match = _PERCENT_RE.fullmatch(text)
    if match is None:
        problems.add(node, "spares", f"{excerpt(text)} should be a percentage such as 10 % (extra parts per kit-list "
                                     "line, rounded up)")
        return Fraction(0), "0 %"
    try:
        percent = Fraction(Decimal(match["num"]))
    except InvalidOperation:  # the pattern allows only digits; kept for safety of the conversion
        problems.add(node, "spares", f"{excerpt(text)} is not a number")
        return Fraction(0), "0 %"
    if percent > 100:
        problems.add(node, "spares", f"{match['num']} % is more than 100 %; give the extra share of each line")
        return Fraction(0), "0 %"
    return percent / 100, f"{match['num']} %"


class _SpecReader:
    """Reads the specs an event names, each file once however many builds name it."""

    def __init__(self, source: str, folder: Path, topologies: tuple[str, ...] | None,
                 unprintable: Unprintable | None = None) -> None:
        self.source, self.folder, self.topologies, self.unprintable = source, folder, topologies, unprintable
        self._files: dict[Path, Spec | SpecError] = {}

    def file(self, path: Path) -> Spec:
        path = path if path.is_absolute() else self.folder / path
        key = path.absolute()
        if key not in self._files:
            try:
                self._files[key] = load_spec(path, topologies=self.topologies, unprintable=self.unprintable)
            except SpecError as exc:
                self._files[key] = exc
        got = self._files[key]
        if isinstance(got, SpecError):
            raise got
        return got


def _builds(node: Node, reader: _SpecReader, problems: Problems) -> tuple[Build, ...]:
    if not isinstance(node, SequenceNode) or not node.value:
        problems.add(node, "builds", "should be a list of builds, each with spec: (or design:) and builders: "
                                     "(or count:)")
        return ()
    if len(node.value) > BUILDERS_MAX:  # every build has a builder: refuse before reading any of them
        problems.add(node, "builds", f"lists {len(node.value):,} builds; one pack holds at most {BUILDERS_MAX} "
                                     "builders")
        return ()
    out = []
    for i, item in enumerate(node.value):
        build = _build(item, i, reader, problems)
        if build is not None:
            out.append(build)
    return tuple(out)


def _build(node: Node, i: int, reader: _SpecReader, problems: Problems) -> Build | None:
    key = f"builds[{i}]"
    fields = mapping(node, key, _BUILD_KEYS, problems)
    if not isinstance(node, MappingNode):
        return None
    line = node.start_mark.line + 1
    spec, label = None, ""
    if "spec" in fields and "design" in fields:
        problems.add(fields["design"][0], f"{key}.design", "give spec: (a file) or design: (inline), not both")
    elif "spec" in fields:
        spec, label = _spec_file(fields["spec"][1], key, reader, problems)
    elif "design" in fields:
        spec, label = _inline(fields["design"][1], key, reader, problems)
    else:
        problems.add(node, key, "needs spec: (a spec file, relative to this file) or design: (an inline spec)")
    builders: tuple[Builder, ...] = ()
    if "builders" in fields and "count" in fields:  # the names, then that many unnamed places
        named = _names(fields["builders"][1], key, problems)
        extra = _count(fields["count"][1], key, problems)
        if named and extra:
            total = len(named) + len(extra)
            builders = tuple(Builder(name=b.name, line=b.line, number=k + 1, of=total)
                             for k, b in enumerate((*named, *extra)))
    elif "builders" in fields:
        builders = _names(fields["builders"][1], key, problems)
    elif "count" in fields:
        builders = _count(fields["count"][1], key, problems)
    else:
        problems.add(node, key, "needs builders: (a list of names) or count: (how many unnamed builders)")
    if spec is None or not builders:
        return None
    return Build(index=i, line=line, source=reader.source, spec=spec, spec_label=label, builders=builders)


def _spec_file(node: Node, key: str, reader: _SpecReader, problems: Problems) -> tuple[Spec | None, str]:
    text = _text(node, f"{key}.spec", problems)
    if text is None or not _printable(text, node, f"{key}.spec", problems, limit=4096):
        return None, ""
    if not text.strip().lower().endswith((".yaml", ".yml")):
        # Never read, and so never quote, a file that does not even claim to be a spec.
        problems.add(node, f"{key}.spec", f"{excerpt(text)} is not a spec file; name a .yaml or .yml file")
        return None, text
    try:
        return reader.file(Path(text).expanduser()), text
    except SpecError as exc:
        line = node.start_mark.line + 1
        problems.extend(line, [f"{reader.source}:{line}: {key}.spec: {problem}" for problem in exc.problems])
        return None, text


def _inline(node: Node, key: str, reader: _SpecReader, problems: Problems) -> tuple[Spec | None, str]:
    if not isinstance(node, MappingNode):
        problems.add(node, f"{key}.design", "should be a spec written inline: supply:, load:, fade: ...")
        return None, ""
    try:
        return spec_from_node(node, source=reader.source, key_prefix=f"{key}.design",
                              topologies=reader.topologies, unprintable=reader.unprintable), "inline design"
    except SpecError as exc:
        problems.extend(node.start_mark.line + 1, exc.problems)
        return None, ""


def _names(node: Node, key: str, problems: Problems) -> tuple[Builder, ...]:
    path = f"{key}.builders"
    if not isinstance(node, SequenceNode):
        problems.add(node, path, "should be a list of names, e.g. builders: [Ana, Bo]")
        return ()
    if not node.value:
        problems.add(node, path, "is empty; list the names, or give count: for unnamed builders")
        return ()
    if len(node.value) > COUNT_MAX:
        problems.add(node, path, f"lists {len(node.value)} names; one build holds at most {COUNT_MAX}")
        return ()
    out = []
    for k, item in enumerate(node.value):
        name = _text(item, f"{path}[{k}]", problems)
        if name is None or not _printable(name, item, f"{path}[{k}]", problems, limit=NAME_MAX_CHARS):
            continue
        out.append(Builder(name=name, line=item.start_mark.line + 1, number=k + 1, of=len(node.value)))
    return tuple(out) if len(out) == len(node.value) else ()


def _count(node: Node, key: str, problems: Problems) -> tuple[Builder, ...]:
    path = f"{key}.count"
    text = _text(node, path, problems)
    if text is None:
        return ()
    if node.style is not None or not re.fullmatch(r"[+-]?\d+", text.strip()):
        problems.add(node, path, f"must be a whole number of builders such as 7, got {excerpt(text)}")
        return ()
    if len(text.strip().lstrip("+-").lstrip("0")) > 6:
        problems.add(node, path, f"must be at most {COUNT_MAX}, got {excerpt(text.strip())}")
        return ()
    count = int(text)
    if count < 1:
        problems.add(node, path, f"must be at least 1, got {count}")
        return ()
    if count > COUNT_MAX:
        problems.add(node, path, f"must be at most {COUNT_MAX}, got {count}")
        return ()
    line = node.start_mark.line + 1
    return tuple(Builder(name=None, line=line, number=k + 1, of=count) for k in range(count))
