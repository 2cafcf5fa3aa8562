"""A command imports only what it uses: sizing and checking never load the PDF stack.

Each case runs in a fresh interpreter, so what is in ``sys.modules`` afterwards
is exactly what that command pulled in.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
CAMPER = ROOT / "examples" / "camper-van-step-light.yaml"
PDF_STACK = {"reportlab", "schemdraw", "svglib", "matplotlib", "PIL", "lxml"}

_PROBE = r"""
import contextlib, io, json, sys
{body}
print(json.dumps(sorted({{name.split(".")[0] for name in sys.modules}})))
"""


def _loaded(body: str) -> set[str]:
    out = subprocess.run([sys.executable, "-c", _PROBE.format(body=body)], check=True, capture_output=True,
                         text=True, cwd=ROOT).stdout
    return set(json.loads(out.splitlines()[-1]))


@pytest.mark.parametrize("command", [["check"], ["size"], ["size", "--json"]])
def test_check_and_size_do_not_load_the_pdf_stack(command):
    loaded = _loaded("from sheetgen.cli import main\n"
                     "with contextlib.redirect_stdout(io.StringIO()):\n"
                     f"    assert main({command[:1] + [str(CAMPER)] + command[1:]!r}) == 0")
    assert "sheetgen" in loaded and not loaded & PDF_STACK, sorted(loaded & PDF_STACK)
    assert "tqdm" not in loaded  # the progress bar is the pack's


def test_the_engine_and_the_analysis_do_not_load_the_pdf_stack():
    loaded = _loaded("import sheetgen.engine.simulate, sheetgen.sizing.analyse, sheetgen.sizing.cache")
    assert "numpy" in loaded and not loaded & PDF_STACK, sorted(loaded & PDF_STACK)


def test_help_loads_no_numerics():
    loaded = _loaded("from sheetgen.cli import parser\nparser().format_help()")
    assert not loaded & (PDF_STACK | {"numpy", "scipy", "yaml"})
