"""Writing output files so that a failed build never leaves a file behind.

The bytes go to a temporary file in the target folder (same file system, so
the final rename is atomic), are flushed and fsynced, then ``os.replace``d
over the target.  A reader sees the old file or the whole new one, never half.

A pack writes several files into one folder: all of them are written to
temporary files first and renamed only when every one is complete, and a
folder made for them is removed again if the writing fails.
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


def check_folder(path: str | os.PathLike[str]) -> Path:
    """Fail early if ``path`` cannot be an output folder: it is one we can write, or one we can make."""
    folder = Path(path).expanduser().absolute()
    if folder.exists() and not folder.is_dir():
        raise SpecError(f"{path}: is a file, not a folder; give a folder for the pack, e.g. {folder.stem}-pack")
    probe = folder
    while not probe.exists():
        probe = probe.parent
    if not probe.is_dir():
        raise SpecError(f"{path}: cannot be made: {probe} is a file, not a folder")
    if not os.access(probe, os.W_OK | os.X_OK):
        raise SpecError(f"{path}: cannot write here: no permission to create files in {probe}")
    return folder


def atomic_write_files(folder: str | os.PathLike[str], files: dict[str, bytes]) -> list[Path]:
    """Write every file of ``files`` (plain names, no folders) into ``folder``, all or none.

    The folder (and its missing parents) is made if needed.  Nothing is
    renamed into place until every file is written and synced; on any error the
    temporary files, and any folder made here, are removed again.
    """
    for name in files:
        if not name or name in (".", "..") or "/" in name or os.sep in name or "\0" in name:
            raise ValueError(f"not a plain file name: {name!r}")  # our own fixed names only, never data
    target = check_folder(folder)
    made: list[Path] = []
    temps: list[tuple[str, Path]] = []
    try:
        missing = []
        probe = target
        while not probe.exists():
            missing.append(probe)
            probe = probe.parent
        for d in reversed(missing):
            d.mkdir()
            made.append(d)
        for name in files:
            if (target / name).is_dir():
                raise SpecError(f"{target / name}: is a folder; move it out of the way to write the {name}")
        for name, data in files.items():
            fd, tmp = tempfile.mkstemp(prefix=f".{name}.", suffix=".part", dir=target)
            temps.append((tmp, target / name))
            with os.fdopen(fd, "wb") as handle:
                handle.write(data)
                handle.flush()
                os.fsync(handle.fileno())
            os.chmod(tmp, 0o666 & ~_umask())
        for tmp, final in temps:
            os.replace(tmp, final)
    except BaseException as exc:
        for tmp, _ in temps:
            try:
                os.unlink(tmp)
            except FileNotFoundError:
                pass
        for d in reversed(made):
            try:
                d.rmdir()
            except OSError:
                pass
        if isinstance(exc, OSError):
            raise SpecError(f"{folder}: cannot be written ({exc.strerror or exc})") from None
        raise
    _fsync_folder(target)
    return [final for _, final in temps]
