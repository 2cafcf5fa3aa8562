"""Writing an output file so that a failed build never leaves a file behind.

The bytes go to a temporary file in the target folder (same file system, so
the final rename is atomic), are flushed and fsynced, then ``os.replace``d
over the target.  A reader sees the old file or the whole new one, never half.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from sheetgen.errors import SpecError


def check_writable(path: str | os.PathLike[str]) -> Path:
    """Fail early, before minutes of work, if ``path`` cannot be written; returns it absolute."""
    target = Path(path).expanduser().absolute()
    folder = target.parent
    if target.is_dir():
        raise SpecError(f"{path}: is a folder; give a file name such as {target / 'sheet.pdf'}")
    if not folder.is_dir():
        raise SpecError(f"{path}: cannot write here: the folder {folder} does not exist")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise SpecError(f"{path}: cannot write here: no permission to create files in {folder}")
    if target.exists() and not os.access(target, os.W_OK):
        raise SpecError(f"{path}: cannot overwrite: the file is read-only")
    return target


def atomic_write(path: str | os.PathLike[str], data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically; on any error nothing new is left on disk."""
    target = check_writable(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, target)
    except BaseException as exc:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        if isinstance(exc, OSError):
            raise SpecError(f"{path}: cannot be written ({exc.strerror or exc})") from None
        raise
    _fsync_folder(target.parent)
    return target


def _umask() -> int:
    """The process umask (mkstemp makes files 0600; a sheet should get the usual permissions)."""
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _fsync_folder(folder: Path) -> None:
    """Make the rename itself durable where the platform allows opening a folder."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)
