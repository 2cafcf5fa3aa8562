"""Citations name the published source, never a file that is not part of the repository.

A reader of a test or a catalog entry must be able to follow its source from the
comment alone, so no file may point at notes kept outside the project.
"""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SKIP_DIRS = {".git", ".venv", "__pycache__", ".pytest_cache", "build", "dist"}
#: spelled in pieces so that this file does not match itself
FORBIDDEN = ("check" + "-values", "../" + "shared", "shared" + "/reference")


def _files() -> list[Path]:
    found = []
    for path in ROOT.rglob("*"):
        rel = path.relative_to(ROOT)
        if any(part in SKIP_DIRS or part.endswith(".egg-info") for part in rel.parts):
            continue
        if path.is_file():
            found.append(path)
    return found


def test_the_walk_sees_the_package_and_the_tests():
    names = {p.relative_to(ROOT).as_posix() for p in _files()}
    assert "sheetgen/sizing/size.py" in names and "tests/test_citations.py" in names


@pytest.mark.parametrize("needle", FORBIDDEN)
def test_no_file_points_outside_the_repository(needle):
    hits = []
    for path in _files():
        text = path.read_bytes().decode("utf-8", errors="replace").lower()
        hits.extend(f"{path.relative_to(ROOT)}:{n}" for n, line in enumerate(text.splitlines(), 1)
                    if needle in line)
    assert not hits, f"{needle!r} in " + ", ".join(hits)
