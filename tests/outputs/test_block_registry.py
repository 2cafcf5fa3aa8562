"""Every block name a layout may use has exactly one registered maker, and reading a layout needs no PDF library."""

from __future__ import annotations

import subprocess
import sys

import pytest

from sheetgen.inputs.blocknames import BlockTable, CARD_BLOCKS, SHEET_BLOCKS


def test_every_sheet_and_card_block_name_is_registered_by_its_renderer():
    import sheetgen.outputs.pdf.blocks  # noqa: F401  (registers the sheet blocks)
    import sheetgen.outputs.pdf.cards  # noqa: F401  (registers the card blocks)

    assert set(SHEET_BLOCKS.makers) == set(SHEET_BLOCKS.names)
    assert set(CARD_BLOCKS.makers) == set(CARD_BLOCKS.names)
    assert {n for n, e in SHEET_BLOCKS.makers.items() if e.whole} == {"schematic", "parts", "timing", "board"}


def test_a_name_outside_the_table_or_registered_twice_is_refused_at_import():
    table = BlockTable(("one",))
    table.register("one")(lambda report, frame: None)
    with pytest.raises(KeyError, match="twice"):
        table.register("one")(lambda report, frame: None)
    with pytest.raises(KeyError, match="not in the table"):
        table.register("two")


def test_reading_every_shipped_layout_imports_no_pdf_library():
    code = ("import sys; from sheetgen.inputs.layout import load_layout, shipped_layouts\n"
            "[load_layout(n) for n in shipped_layouts()]\n"
            "print(sorted(m for m in sys.modules if m.split('.')[0] in ('reportlab', 'schemdraw', 'svglib')))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "[]"
