"""Reading an input file within bounds, before any parser sees it.

A spec, event, layout or catalog file is small text.  Anything else named in
its place (a device such as ``/dev/zero``, a pipe that never ends, a folder, a
file of gigabytes) is refused from its ``stat`` before it is opened, so it can
neither hang the tool nor fill its memory.
"""

from __future__ import annotations

import os
import stat

from sheetgen.errors import SpecError

__all__ = ["MAX_FILE_BYTES", "read_text"]

#: The largest input file read: a spec is under 2 kB; an event naming 2,000 builders under 100 kB.
MAX_FILE_BYTES = 1_000_000


def read_text(path: str | os.PathLike[str], *, what: str, shown: str | None = None) -> str:
    """The UTF-8 text of a regular file of at most MAX_FILE_BYTES; any other case is a SpecError.

    ``what`` names the kind of file in messages ("spec", "event", "layout");
    ``shown`` is how the file is named in them (default: the path).
    """
    source = os.fspath(path)
    name = source if shown is None else shown
    if not source:
        raise SpecError(f"{name or '(empty)'}: no file named; give the path of a {what} file")
    try:
        info = os.stat(source)
    except FileNotFoundError:
        raise SpecError(f"{name}: no such file") from None
    except OSError as exc:
        raise SpecError(f"{name}: cannot be read ({exc.strerror or exc})") from None
    _check_regular(info, name, what)
    try:
        # O_NONBLOCK: should the name have become a pipe since the stat, opening it cannot hang.
        fd = os.open(source, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        raise SpecError(f"{name}: cannot be read ({exc.strerror or exc})") from None
    with os.fdopen(fd, "rb") as handle:
        _check_regular(os.fstat(handle.fileno()), name, what)
        try:
            raw = handle.read(MAX_FILE_BYTES + 1)
        except OSError as exc:
            raise SpecError(f"{name}: cannot be read ({exc.strerror or exc})") from None
    if len(raw) > MAX_FILE_BYTES:
        raise SpecError(f"{name}: is larger than {MAX_FILE_BYTES:,} bytes; a {what} file is short text")
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        raise SpecError(f"{name}:{line}: is not UTF-8 text (bad byte at offset {exc.start}); "
                        "save it as UTF-8") from None


def _check_regular(info: os.stat_result, name: str, what: str) -> None:
    if stat.S_ISDIR(info.st_mode):
        raise SpecError(f"{name}: is a directory, not a {what} file")
    if not stat.S_ISREG(info.st_mode):
        raise SpecError(f"{name}: is not a regular file (a device, pipe or socket); give a {what} file")
    if info.st_size > MAX_FILE_BYTES:
        raise SpecError(f"{name}: is {info.st_size:,} bytes; a {what} file is at most {MAX_FILE_BYTES:,} bytes")
