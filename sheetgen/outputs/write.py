"""Writing output files so that a failed build never leaves a file behind.

The bytes go to a temporary file in the target folder (same file system, so
the final rename is atomic), are flushed and fsynced, then ``os.replace``d
over the target.  A reader sees the old file or the whole new one, never half.

A pack writes several files into one folder, and they change together: all
are written into a fresh hidden folder first, then swapped in one by one under
a lock on the target folder (so two packs cannot interleave), and should one
swap fail the ones already made are put back as they were.  A folder made for
them is removed again if the writing fails.  Only regular files are ever
replaced: a device, pipe or socket of the same name is refused.
"""

from __future__ import annotations

import os
import shutil
import stat
import tempfile
from pathlib import Path

from sheetgen.errors import SpecError


def check_writable(path: str | os.PathLike[str]) -> Path:
    """Fail early, before minutes of work, if ``path`` cannot be written; returns it absolute."""
    if not os.fspath(path):
        raise SpecError("-o: is empty; give a file name such as sheet.pdf")
    target = Path(path).expanduser().absolute()
    folder = target.parent
    _refuse_special(target, path)
    if target.is_dir():
        raise SpecError(f"{path}: is a folder; give a file name such as {target / 'sheet.pdf'}")
    if not folder.is_dir():
        raise SpecError(f"{path}: cannot write here: the folder {folder} does not exist")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise SpecError(f"{path}: cannot write here: no permission to create files in {folder}")
    if target.exists() and not os.access(target, os.W_OK):
        raise SpecError(f"{path}: cannot overwrite: the file is read-only")
    return target


def _refuse_special(target: Path, shown) -> None:
    """A name that exists and is not a regular file (nor a folder, said elsewhere) is never replaced."""
    try:
        mode = os.stat(target).st_mode
    except OSError:
        return
    if not stat.S_ISREG(mode) and not stat.S_ISDIR(mode):
        raise SpecError(f"{shown}: is not a regular file (a device, pipe or socket); give a new file name")


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
    if not os.fspath(path).strip():
        raise SpecError("-o: is empty; give a folder for the pack, e.g. -o spring-pack")
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

    The folder (and its missing parents) is made if needed.  The files are
    written and synced in a fresh hidden folder inside it, then swapped in
    under a lock; on any error (or a signal) the new files are removed, the old
    ones put back, and any folder made here removed.
    """
    for name in files:
        if not name or name in (".", "..") or "/" in name or os.sep in name or "\0" in name:
            raise ValueError(f"not a plain file name: {name!r}")  # our own fixed names only, never data
    target = check_folder(folder)
    made: list[Path] = []
    staging: Path | None = None
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
            _refuse_special(target / name, target / name)
        staging = Path(tempfile.mkdtemp(prefix=".pack-", suffix=".part", dir=target))
        for name, data in files.items():
            with open(staging / name, "xb") as handle:
                handle.write(data)
                handle.flush()
                os.fsync(handle.fileno())
            os.chmod(staging / name, 0o666 & ~_umask())
        with _folder_lock(target):
            _swap_in(staging, target, list(files))
    except BaseException as exc:
        if staging is not None:
            shutil.rmtree(staging, ignore_errors=True)
        for d in reversed(made):
            _rmdir(d)
        if isinstance(exc, OSError):
            raise SpecError(f"{folder}: cannot be written ({exc.strerror or exc})") from None
        raise
    shutil.rmtree(staging, ignore_errors=True)
    _fsync_folder(target)
    return [target / name for name in files]


def _rmdir(d: Path) -> None:
    try:
        d.rmdir()
    except OSError:
        pass


def _swap_in(staging: Path, target: Path, names: list[str]) -> None:
    """Rename each staged file over its target, keeping the old one aside; undo them all if one fails."""
    done: list[tuple[str, bool]] = []  # (name, whether an old file was kept aside)
    try:
        for name in names:
            final = target / name
            kept = False
            if final.exists():
                os.link(final, staging / f"{name}.old")  # the old file stays reachable until the end
                kept = True
            os.replace(staging / name, final)
            done.append((name, kept))
    except BaseException:
        for name, kept in reversed(done):
            try:
                if kept:
                    os.replace(staging / f"{name}.old", target / name)
                else:
                    os.unlink(target / name)
            except OSError:
                pass
        raise


class _folder_lock:
    """An exclusive lock on the folder itself (no lock file left behind), where the platform has flock."""

    def __init__(self, folder: Path) -> None:
        self.folder = folder
        self.fd: int | None = None

    def __enter__(self):
        try:
            import fcntl
        except ImportError:  # not on a POSIX system: no lock, the swap is still all or none
            return self
        self.fd = os.open(self.folder, os.O_RDONLY)
        fcntl.flock(self.fd, fcntl.LOCK_EX)
        return self

    def __exit__(self, *exc) -> None:
        if self.fd is not None:
            os.close(self.fd)  # closing releases the lock
