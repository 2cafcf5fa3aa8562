"""Independent documents rendered side by side on spare cores, with the bytes of a serial run.

A pack's booklet and its cards take about a second each to lay out and share
nothing, so on a machine with two cores they are rendered at once: every
document but the first in a forked child that hands back its bytes, the first
here.  Rendering is a pure function of its inputs, so the bytes are the ones a
serial run writes.  Where processes cannot be forked (Windows, and macOS by
default) or one job is asked for, the documents are rendered one after the other.
"""

from __future__ import annotations

import multiprocessing
import os
import signal
from typing import Callable, Sequence

from sheetgen.errors import SheetgenError
from sheetgen.pack.batch import die_with_parent

__all__ = ["render_all"]


def _can_fork() -> bool:
    return "fork" in multiprocessing.get_all_start_methods() and multiprocessing.get_start_method() == "fork"


def _child(make: Callable[[], bytes], conn, parent: int) -> None:
    # Stopping is the parent's to handle: it terminates its children, which then simply end.
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    die_with_parent(parent)
    try:
        conn.send(("ok", make()))
    except BaseException as exc:  # handed back to the parent, which raises it as it was
        conn.send(("error", exc))
    finally:
        conn.close()


def render_all(makers: Sequence[Callable[[], bytes]], *, jobs: int) -> list[bytes]:
    """The bytes of each maker's document, in order; up to ``jobs`` of them rendered at once."""
    if jobs <= 1 or len(makers) <= 1 or not _can_fork():
        return [make() for make in makers]
    ctx = multiprocessing.get_context("fork")
    children = []
    try:
        for make in makers[1:jobs]:
            receive, send = ctx.Pipe(duplex=False)
            child = ctx.Process(target=_child, args=(make, send, os.getpid()), daemon=True)
            child.start()
            send.close()
            children.append((child, receive))
        out = [makers[0]()]
        for child, receive in children:
            try:
                status, value = receive.recv()
            except EOFError:
                raise SheetgenError(f"a rendering process stopped without a result (exit {child.exitcode})") from None
            if status == "error":
                raise value
            out.append(value)
        out += [make() for make in makers[jobs:]]
        return out
    finally:
        for child, receive in children:
            receive.close()
            if child.is_alive():
                child.terminate()
            child.join()
