"""The folders are layers: a module imports only from its own folder and the ones below it.

The order is the one DEVELOPERS.md gives; this test reads every module's imports
(including those inside functions) and fails on any that reaches upwards, and on
a drawing or PDF library imported outside ``outputs/pdf``.
"""

from __future__ import annotations

import ast
from pathlib import Path

PACKAGE = Path(__file__).resolve().parents[1] / "sheetgen"

#: lowest first; a layer may import every layer before it
LAYERS = ["errors", "reader", "model", "parts", "inputs", "engine", "circuits", "board", "sizing", "pack", "outputs",
          "cli"]
PDF_LIBRARIES = {"reportlab", "schemdraw", "svglib"}


def _layer(module: str) -> str:
    """``sheetgen.sizing.size`` -> ``sizing``; ``sheetgen`` itself (its version) -> ``errors``."""
    parts = module.split(".")
    if len(parts) == 1 or parts[1] in ("__main__",):
        return "errors" if len(parts) == 1 else "cli"
    return parts[1].removesuffix(".py")


def _imports(path: Path) -> list[tuple[int, str]]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            found.append((node.lineno, node.module))
        elif isinstance(node, ast.Import):
            found.extend((node.lineno, alias.name) for alias in node.names)
    return found


def _own_module(path: Path) -> str:
    rel = path.relative_to(PACKAGE.parent).with_suffix("")
    return ".".join(p for p in rel.parts if p != "__init__")


def test_no_module_imports_a_higher_layer():
    wrong = []
    for path in sorted(PACKAGE.rglob("*.py")):
        own = _layer(_own_module(path))
        for line, module in _imports(path):
            if module.split(".")[0] != "sheetgen":
                continue
            if own == "__main__":
                continue
            target = _layer(module)
            if LAYERS.index(target) > LAYERS.index(own):
                wrong.append(f"{path.relative_to(PACKAGE)}:{line}: {own} imports {module}")
    assert not wrong, "\n".join(wrong)


def test_only_the_pdf_renderers_import_drawing_libraries():
    wrong = []
    for path in sorted(PACKAGE.rglob("*.py")):
        if PACKAGE / "outputs" / "pdf" in path.parents:
            continue
        for line, module in _imports(path):
            if module.split(".")[0] in PDF_LIBRARIES:
                wrong.append(f"{path.relative_to(PACKAGE)}:{line}: imports {module}")
    assert not wrong, "\n".join(wrong)


def test_every_layer_in_the_table_is_a_folder():
    folders = {p.name for p in PACKAGE.iterdir() if p.is_dir() and (p / "__init__.py").exists()}
    assert folders == set(LAYERS) - {"errors", "cli"}
