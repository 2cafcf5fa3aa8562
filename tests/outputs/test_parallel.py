"""Documents rendered side by side come back in order, as the same bytes, and failures as they were raised."""

from __future__ import annotations

import multiprocessing
import os

import pytest

from sheetgen.errors import SpecError
from sheetgen.outputs.parallel import render_all

pytestmark = pytest.mark.skipif(multiprocessing.get_start_method() != "fork",
                                reason="documents are rendered side by side only where processes fork")


def _document(k: int) -> bytes:
    return f"%PDF-1.4 document {k} from process {os.getpid()}".encode()


def test_every_document_but_the_first_is_made_in_another_process_and_order_is_kept():
    here = os.getpid()
    out = render_all([lambda k=k: _document(k) for k in range(3)], jobs=2)
    assert [b.split(b" from ")[0] for b in out] == [f"%PDF-1.4 document {k}".encode() for k in range(3)]
    assert out[0].endswith(str(here).encode()) and not out[1].endswith(str(here).encode())
    assert out[2].endswith(str(here).encode())  # beyond the jobs asked for: made here, after the others


def test_one_job_renders_here():
    here = str(os.getpid()).encode()
    assert all(b.endswith(here) for b in render_all([lambda: _document(0), lambda: _document(1)], jobs=1))


def test_a_failure_in_a_child_is_raised_as_it_was():
    def bad() -> bytes:
        raise SpecError("layout.yaml:3: margin: too wide")

    with pytest.raises(SpecError, match="margin: too wide"):
        render_all([lambda: b"first", bad], jobs=2)


def test_a_pack_rendered_side_by_side_is_the_same_bytes_as_one_rendered_serially(camper_report, railway_report,
                                                                                 monkeypatch):
    from sheetgen.inputs.layout import load_card_layout
    from sheetgen.outputs.pdf.cards import Card, render_cards

    layout = load_card_layout(None)
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    makers = [lambda r=r: render_cards([Card(report=r, design="A", name=n, place=None, event="")
                                        for n in ("Ana", "Bo")], layout, title="t")
              for r in (camper_report, railway_report)]
    assert render_all(makers, jobs=2) == render_all(makers, jobs=1)
