"""One YAML reader for every input file: a node tree with lines, composed within bounds.

Specs, events, layouts and the parts catalog are composed into nodes, never
loaded straight into Python objects, because only the tree still knows the
line of each key.  Composing is where hostile input is stopped, each with its
line and the key it sits under, before any value is converted: explicit tags
(``!!int ""``, ``!!python/...``), nesting deeper than any input needs, aliases
that expand to millions of values, over-long values and lone UTF-16
surrogates.  The wording of the common problems (unknown key with a
suggestion, a key given twice, a syntax error quoting its line) lives here
once, so every file says them the same way.
"""

from __future__ import annotations

import difflib
import math
from typing import Any, Callable, Iterable

import yaml
from yaml.composer import Composer
from yaml.constructor import ConstructorError, SafeConstructor
from yaml.resolver import Resolver
from yaml.events import AliasEvent, MappingEndEvent, SequenceEndEvent
from yaml.nodes import MappingNode, Node, ScalarNode, SequenceNode

from sheetgen.errors import SpecError

__all__ = [
    "MAX_DEPTH", "MAX_VALUES", "MAX_SCALAR_CHARS", "Problems", "compose", "excerpt", "suggest",
    "unknown_key", "given_twice", "mapping", "Converter", "LinedDict", "describe", "load_data",
]

#: Levels of nesting; a spec inside an event inside a list is six deep.
MAX_DEPTH = 40
#: Values after aliases are expanded: an event of 2,000 builders and its inline designs stays far below.
MAX_VALUES = 50_000
#: Characters in one value: the longest an input needs is a file path.
MAX_SCALAR_CHARS = 4096
#: Characters of a value quoted back in a message.
EXCERPT_CHARS = 40
#: A whole number larger than this is no count, voltage or size of anything here.
MAX_WHOLE = 10**15


def excerpt(text: Any, limit: int = EXCERPT_CHARS) -> str:
    """A value as a message quotes it: at most ``limit`` characters, control characters escaped."""
    shown = str(text)
    cut = len(shown) > limit
    shown = shown[:limit]
    shown = "".join(ch if ch.isprintable() else f"\\u{ord(ch):04x}" for ch in shown)
    return f'"{shown}…"' if cut else f'"{shown}"'


def suggest(word: str, choices: Iterable[str]) -> str | None:
    """The known name closest to ``word``, if one is close."""
    choices = list(choices)
    lower = str(word).lower()
    for choice in choices:
        if choice.lower() == lower:
            return choice
    close = difflib.get_close_matches(lower, choices, n=1, cutoff=0.6)
    return close[0] if close else None


def unknown_key(name: str, known: Iterable[str]) -> str:
    """The one wording of an unknown key: a suggestion when one is close, else the known keys."""
    known = tuple(known)
    close = suggest(name, known)
    if close:
        return f"unknown key; did you mean `{close}`?"
    return f"unknown key; known keys here: {', '.join(known)}"


def given_twice(first_line: int | None) -> str:
    first = f" (first on line {first_line})" if first_line else ""
    return f"is given twice{first}; keep one"


def describe(node: Node) -> str:
    """A node's shape as a user would say it."""
    if isinstance(node, MappingNode):
        return "a mapping"
    if isinstance(node, SequenceNode):
        return "a list"
    return "a single value"


class Problems:
    """``file:line: key: problem`` lines, reported together in file order."""

    def __init__(self, source: str) -> None:
        self.source = source
        self._found: list[tuple[int, int, str]] = []

    def add(self, node: Node | None, key: str, message: str) -> None:
        line = node.start_mark.line + 1 if node is not None else 0
        where = f"{self.source}:{line}" if line else self.source
        self._found.append((line, len(self._found), f"{where}: {key}: {message}" if key else f"{where}: {message}"))

    def extend(self, line: int, lines: list[str]) -> None:
        for text in lines:
            self._found.append((line, len(self._found), text))

    def __len__(self) -> int:
        return len(self._found)

    def raise_if_any(self) -> None:
        if self._found:
            raise SpecError([text for _, _, text in sorted(self._found)])


def mapping(node: Node, key: str, allowed: tuple[str, ...], problems: Problems) -> dict[str, tuple[Node, Node]]:
    """A mapping's keys with their key and value nodes; unknown or repeated keys are problems."""
    out: dict[str, tuple[Node, Node]] = {}
    if not isinstance(node, MappingNode):
        problems.add(node, key, f"should be a mapping with the keys {', '.join(allowed)}, not {describe(node)}")
        return out
    for k_node, v_node in node.value:
        name = k_node.value if isinstance(k_node, ScalarNode) else None
        path = f"{key}.{name}" if key else str(name)
        if name not in allowed:
            problems.add(k_node, path, unknown_key(str(name), allowed))
        elif name in out:
            problems.add(k_node, path, given_twice(out[name][0].start_mark.line + 1))
        else:
            out[name] = (k_node, v_node)
    return out


# ------------------------------------------------------------------ composing
class _Refused(Exception):
    def __init__(self, node_or_mark, key: str, message: str) -> None:
        super().__init__(message)
        self.mark = getattr(node_or_mark, "start_mark", node_or_mark)
        self.key, self.message = key, message


def _tag_name(tag: str) -> str:
    return tag.replace("tag:yaml.org,2002:", "!!")


try:  # libyaml's parser (events only; the composing below stays ours) reads a large file ten times faster
    from yaml._yaml import CParser as _Parser
except ImportError:  # PyYAML built without libyaml
    from yaml.parser import Parser as _PyParser
    from yaml.reader import Reader as _Reader
    from yaml.scanner import Scanner as _Scanner

    class _Parser(_Reader, _Scanner, _PyParser):  # type: ignore[no-redef]
        def __init__(self, text: str) -> None:
            _Reader.__init__(self, text)
            _Scanner.__init__(self)
            _PyParser.__init__(self)


class _BoundedLoader(Composer, _Parser, SafeConstructor, Resolver):
    """The safe loader's composer with a key path, depth, size, tag and text checks on every node."""

    def __init__(self, text: str) -> None:
        _Parser.__init__(self, text)
        Composer.__init__(self)
        SafeConstructor.__init__(self)
        Resolver.__init__(self)
        self._path: list[str] = []
        self._sizes: dict[int, int] = {}

    def _key(self) -> str:
        out = ""
        for part in self._path:
            out += part if part.startswith("[") or not out else f".{part}"
        return out

    def compose_node(self, parent, index):
        event = self.peek_event()
        if not isinstance(event, AliasEvent):
            if getattr(event, "tag", None) is not None:
                raise _Refused(event.start_mark, self._key(),
                               f"tags are not supported (found {excerpt(_tag_name(event.tag), 30)}); "
                               "write the value plainly")
            if len(self._path) >= MAX_DEPTH:
                raise _Refused(event.start_mark, self._key(),
                               f"nested more than {MAX_DEPTH} levels deep; no input file needs that")
        return super().compose_node(parent, index)

    def compose_scalar_node(self, anchor):
        node = super().compose_scalar_node(anchor)
        if node.style == "":  # libyaml's word for a plain scalar; the pure parser's is None
            node.style = None
        value = node.value
        if len(value) > MAX_SCALAR_CHARS:
            raise _Refused(node, self._key(), f"a value of {len(value):,} characters; at most "
                                              f"{MAX_SCALAR_CHARS:,} are read")
        if any("\ud800" <= ch <= "\udfff" for ch in value):
            raise _Refused(node, self._key(), f"{excerpt(value)} holds a lone UTF-16 surrogate, which is not "
                                              "a character; write the character itself")
        self._sizes[id(node)] = 1
        return node

    def compose_sequence_node(self, anchor):
        start = self.get_event()
        tag = self.resolve(SequenceNode, None, start.implicit)
        node = SequenceNode(tag, [], start.start_mark, None, flow_style=start.flow_style)
        if anchor is not None:
            self.anchors[anchor] = node
        index = 0
        while not self.check_event(SequenceEndEvent):
            self._path.append(f"[{index}]")
            node.value.append(self.compose_node(node, index))
            self._path.pop()
            index += 1
        node.end_mark = self.get_event().end_mark
        self._count(node, node.value)
        return node

    def compose_mapping_node(self, anchor):
        start = self.get_event()
        tag = self.resolve(MappingNode, None, start.implicit)
        node = MappingNode(tag, [], start.start_mark, None, flow_style=start.flow_style)
        if anchor is not None:
            self.anchors[anchor] = node
        while not self.check_event(MappingEndEvent):
            key = self.compose_node(node, None)
            self._path.append(key.value if isinstance(key, ScalarNode) else "?")
            value = self.compose_node(node, key)
            self._path.pop()
            node.value.append((key, value))
        node.end_mark = self.get_event().end_mark
        self._count(node, [n for pair in node.value for n in pair])
        return node

    def _count(self, node: Node, children: list[Node]) -> None:
        """The values ``node`` stands for once aliases are expanded; refused past MAX_VALUES."""
        total = 1
        for child in children:
            size = self._sizes.get(id(child))
            if size is None:  # still being composed: an alias to one of its own parents
                raise _Refused(node, self._key(), "refers to itself through a YAML alias; write the value out")
            total += size
        if total > MAX_VALUES:
            raise _Refused(node, self._key(), f"holds more than {MAX_VALUES:,} values (YAML aliases counted "
                                              "as often as they are used); no input file needs that many")
        self._sizes[id(node)] = total


def compose(text: str, *, source: str) -> Node | None:
    """The file's node tree (None when it is empty); every refusal is a SpecError with its line."""
    loader = _BoundedLoader(text)
    try:
        return loader.get_single_node()
    except _Refused as exc:
        line = exc.mark.line + 1 if exc.mark is not None else None
        where = f"{source}:{line}" if line else source
        raise SpecError(f"{where}: {exc.key}: {exc.message}" if exc.key else f"{where}: {exc.message}") from None
    except yaml.MarkedYAMLError as exc:
        raise SpecError(_syntax_error(exc, text, source)) from None
    except yaml.reader.ReaderError as exc:
        line = text.count("\n", 0, exc.position) + 1
        what = f"the character U+{exc.character:04X}" if isinstance(exc.character, int) else "a byte"
        raise SpecError(f"{source}:{line}: not valid YAML: {what} is not allowed in a YAML file") from None
    except yaml.YAMLError as exc:
        raise SpecError(f"{source}: not valid YAML: {excerpt(exc, 80)}") from None
    finally:
        loader.dispose()


def _syntax_error(exc: yaml.MarkedYAMLError, text: str, source: str) -> str:
    """One line for a YAML syntax error: file, line, what the parser said, the line quoted, a tab hint."""
    mark = exc.problem_mark or exc.context_mark
    what = exc.problem or exc.context or "cannot be read"
    if exc.context and exc.problem and exc.context_mark is not None:
        what = f"{what} ({exc.context} from line {exc.context_mark.line + 1})"
    hint = ""
    if mark is not None:
        lines = text.splitlines()
        line_text = lines[mark.line] if mark.line < len(lines) else ""
        if line_text.strip() and source.lower().endswith((".yaml", ".yml")):
            # Quote the line: the parser knows no key names, the user knows the line.  Only a file
            # named as YAML is quoted, so no other file's contents reach a message.
            hint = f"; at {excerpt(line_text.strip().replace(chr(9), '  '), 60)}"
        if "\t" in what or "\t" in line_text:
            hint += "; YAML does not allow tabs here: indent and separate with spaces"
    where = f"{source}:{mark.line + 1}" if mark is not None else source
    return f"{where}: not valid YAML: {excerpt(what, 120)[1:-1]}{hint}"


# ------------------------------------------------------------------ converting
class LinedDict(dict):
    """A converted mapping that remembers its own line and the line of each key."""

    def __init__(self) -> None:
        super().__init__()
        self.line = 0
        self.key_lines: dict[str, int] = {}


class Converter:
    """Turns a composed tree into dicts, lists and scalars, noting each key's line.

    Keys are taken as written (YAML 1.1 would read ``on``/``off`` as booleans).
    ``add(path, message, line)`` receives each problem; ``lines`` maps every
    key path to its line.
    """

    def __init__(self, add: Callable[[tuple[str, ...], str, int | None], None],
                 lines: dict[tuple[str, ...], int]) -> None:
        self._add = add
        self.lines = lines
        self._constructor = SafeConstructor()

    def convert(self, node: Node, path: tuple[str, ...] = ()) -> Any:
        if isinstance(node, ScalarNode):
            return self._scalar(node, path)
        if isinstance(node, SequenceNode):
            return [self.convert(item, path + (str(i),)) for i, item in enumerate(node.value)]
        if isinstance(node, MappingNode):
            return self._mapping(node, path)
        return None

    def _scalar(self, node: ScalarNode, path: tuple[str, ...]) -> Any:
        line = node.start_mark.line + 1
        try:
            value = self._constructor.construct_object(node, deep=True)
        except ConstructorError as exc:
            self._add(path, f"cannot be read: {exc.problem}", line)
            return None
        except (ValueError, OverflowError):  # 2027-02-30 read as a date, an integer beyond Python's limit
            self._add(path, f"{excerpt(node.value)} cannot be read as the "
                            f"{_tag_name(node.tag).lstrip('!')} YAML takes it for; put it in quotes", line)
            return None
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            return value
        if isinstance(value, float) and not math.isfinite(value):
            self._add(path, f"{excerpt(node.value)} is not a finite number", line)
            return None
        if isinstance(value, int) and abs(value) > MAX_WHOLE:
            self._add(path, f"{excerpt(node.value)} is too large a number for any setting here", line)
            return None
        return value

    def _mapping(self, node: MappingNode, path: tuple[str, ...]) -> dict[str, Any]:
        out = LinedDict()
        out.line = node.start_mark.line + 1
        for key_node, value_node in node.value:
            line = key_node.start_mark.line + 1
            if not isinstance(key_node, ScalarNode):
                self._add(path, "has a key that is not a plain name", line)
                continue
            key = key_node.value  # as written: "on" stays "on", not True
            if key_node.tag == "tag:yaml.org,2002:merge":
                self._add(path, "uses a YAML merge key (<<); write the keys out instead", line)
                continue
            key_path = path + (key,)
            if key in out:
                self._add(key_path, given_twice(self.lines.get(key_path)), line)
                continue
            self.lines[key_path] = line
            out.key_lines[key] = line
            out[key] = self.convert(value_node, key_path)
        return out


def load_data(text: str, *, source: str) -> Any:
    """A whole file as plain data (mappings as LinedDict), or a SpecError listing every problem."""
    root = compose(text, source=source)
    if root is None:
        return None
    found: list[tuple[int, str]] = []

    def add(path: tuple[str, ...], message: str, line: int | None) -> None:
        key = ".".join(path)
        where = f"{source}:{line}" if line else source
        found.append((line or 0, f"{where}: {key}: {message}" if key else f"{where}: {message}"))

    data = Converter(add, {}).convert(root)
    if found:
        raise SpecError([text for _, text in sorted(found)])
    return data
