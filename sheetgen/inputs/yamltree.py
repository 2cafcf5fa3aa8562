"""Checking YAML files by their node tree, shared by the event and layout readers.

Both compose a file into nodes (never load it into Python objects), so every
problem can name the line it is on, and report all problems at once.
"""

from __future__ import annotations

import yaml
from yaml.nodes import Node

from sheetgen.errors import SpecError

__all__ = ["Problems", "compose"]


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

    def raise_if_any(self) -> None:
        if self._found:
            raise SpecError([text for _, _, text in sorted(self._found)])


def compose(text: str, *, source: str) -> Node | None:
    """The file's node tree (None when it is empty); a syntax error is raised with its line."""
    try:
        return yaml.compose(text, Loader=yaml.SafeLoader)
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        where = f"{source}:{mark.line + 1}" if mark is not None else source
        raise SpecError(f"{where}: not valid YAML: {exc.problem or exc.context}") from None
    except yaml.YAMLError as exc:
        raise SpecError(f"{source}: not valid YAML: {exc}") from None
