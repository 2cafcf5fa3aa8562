"""Sized and analysed designs kept on disk, so a repeated build or pack does no simulation.

Sizing and analysis cost about a second per design; rendering a sheet from a
Report costs a fraction of that.  An entry is the pickled Report of one design
(or, after ``check``, its sized Design alone), keyed by a hash of everything that
can change it: the spec (not the file it was
read from), the tolerance draws and seed, the package version, the numpy and
Python versions, and the bytes of every module and data file of the layers that
read, size and analyse, so an edit to the catalog or to the engine misses.

An entry is written to a temporary file and renamed into place, and starts with
a digest of its contents: two processes writing the same key each rename a whole
file, a reader sees a whole entry or none, and one that is damaged anyway is
dropped and rebuilt.  Failing to write is never an error: the run goes on
uncached.  The folder is the platform's user cache folder (found by platformdirs)
or ``$SHEETGEN_CACHE_DIR``; once it holds more than ``MAX_BYTES`` the entries used
longest ago are removed.  ``DesignCache`` stores any picklable value, so the
renderer keeps what it derives from a design alone (the schematic) beside it;
``bypass()`` turns every cache of the process off, for ``--no-cache``.
"""

from __future__ import annotations

import functools
import hashlib
import os
import pickle
import sys
import tempfile
import time
from dataclasses import replace
from pathlib import Path

import numpy

from sheetgen import __version__
from sheetgen.inputs.spec import Spec
from sheetgen.sizing import tolerance
from sheetgen.sizing.report import Report
from sheetgen.sizing.design import Design

__all__ = ["ENV_DIR", "MAX_BYTES", "DesignCache", "code_fingerprint", "design_key", "cached_report", "store_report",
           "report_for", "design_for", "bypass"]

ENV_DIR = "SHEETGEN_CACHE_DIR"
MAX_BYTES = 64 * 1024 * 1024  # a Report is about 40 kB: well over a thousand designs
MAGIC = b"sheetgen design cache 1\n"
SUFFIX = ".entry"
STALE_TEMP_S = 3600.0  # a temporary file this old was left by a process that died mid-write
PACKAGE = Path(__file__).resolve().parents[1]
#: what sizing and analysis read: a change to any file here changes every key
LAYERS = ("__init__.py", "errors.py", "reader", "model", "parts", "inputs", "engine", "circuits", "board", "sizing")
FINGERPRINTED = (".py", ".yaml", ".ttf")

_bypassed = False


def bypass(on: bool = True) -> None:
    """Neither read nor write any cache in this process from now on (or again, with ``on=False``)."""
    global _bypassed
    _bypassed = on


def default_folder() -> Path:
    """``$SHEETGEN_CACHE_DIR`` if set, else the platform's user cache folder for sheetgen."""
    chosen = os.environ.get(ENV_DIR, "").strip()
    if chosen:
        return Path(chosen).expanduser()
    import platformdirs

    return Path(platformdirs.user_cache_dir("sheetgen", appauthor=False))


class DesignCache:
    """A folder of entries, one file per key; every method is safe to call from several processes at once."""

    def __init__(self, folder: Path | None = None, *, max_bytes: int = MAX_BYTES) -> None:
        self.folder = Path(folder) if folder is not None else default_folder()
        self.max_bytes = max_bytes

    def _path(self, key: str) -> Path:
        return self.folder / f"{key}{SUFFIX}"

    def get(self, key: str) -> object | None:
        """The value stored under ``key``, or None if there is none or it is damaged (then it is removed)."""
        if _bypassed:
            return None
        path = self._path(key)
        try:
            blob = path.read_bytes()
        except OSError:
            return None
        head, digest, payload = blob[:len(MAGIC)], blob[len(MAGIC):len(MAGIC) + 32], blob[len(MAGIC) + 32:]
        try:
            if head != MAGIC or hashlib.sha256(payload).digest() != digest:
                raise ValueError("damaged entry")
            value = pickle.loads(payload)
        except Exception:  # any damage at all means a miss; the entry is rebuilt
            _remove(path)
            return None
        try:
            os.utime(path)  # most recently used: the last to go when the folder is full
        except OSError:
            pass
        return value

    def put(self, key: str, value: object) -> None:
        """Store ``value`` under ``key`` atomically, then trim the folder to its cap; never raises on disk trouble."""
        if _bypassed:
            return
        payload = pickle.dumps(value, protocol=pickle.HIGHEST_PROTOCOL)
        blob = MAGIC + hashlib.sha256(payload).digest() + payload
        try:
            self.folder.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(prefix=f".{key}.", suffix=".part", dir=self.folder)
        except OSError:
            return
        try:
            with os.fdopen(fd, "wb") as handle:
                handle.write(blob)
            os.replace(tmp, self._path(key))
        except OSError:
            _remove(Path(tmp))
            return
        self._trim(keep=self._path(key))

    def _trim(self, *, keep: Path) -> None:
        """Remove the entries used longest ago until the folder is under its cap, and dead writers' leftovers."""
        entries, now = [], time.time()
        try:
            listing = list(os.scandir(self.folder))
        except OSError:
            return
        for item in listing:
            try:
                stat = item.stat()
            except OSError:
                continue
            if item.name.endswith(SUFFIX):
                entries.append((stat.st_mtime, stat.st_size, Path(item.path)))
            elif item.name.endswith(".part") and now - stat.st_mtime > STALE_TEMP_S:
                _remove(Path(item.path))
        total = sum(size for _, size, _ in entries)
        for _, size, path in sorted(entries):
            if total <= self.max_bytes:
                break
            if path != keep:
                _remove(path)
                total -= size


def _remove(path: Path) -> None:
    try:
        path.unlink()
    except OSError:
        pass


@functools.lru_cache(maxsize=None)
def code_fingerprint(package: Path, layers: tuple[str, ...] = LAYERS) -> str:
    """A hash of every module, data and font file under ``layers`` of the package, with their paths."""
    h = hashlib.sha256()
    for layer in layers:
        top = package / layer
        files = [top] if top.is_file() else sorted(p for p in top.rglob("*") if p.suffix in FINGERPRINTED)
        for path in files:
            h.update(path.relative_to(package).as_posix().encode() + b"\0" + path.read_bytes() + b"\0")
    return h.hexdigest()


def design_key(spec: Spec, *, draws: int = tolerance.DEFAULT_DRAWS, seed: int = tolerance.SEED) -> str:
    """The key of a spec's Report: the same for the same design read from any file, by the same code."""
    parts = (repr(replace(spec, source="")), f"draws={draws}", f"seed={seed}", __version__,
             numpy.__version__, f"{sys.version_info[0]}.{sys.version_info[1]}", code_fingerprint(PACKAGE))
    return hashlib.sha256("\n".join(parts).encode("utf-8")).hexdigest()


def _as_read_from(report: Report, spec: Spec) -> Report:
    """A stored Report with the spec as this run read it (its file name appears on the sheet)."""
    return replace(report, design=replace(report.design, spec=spec))


def cached_report(spec: Spec, cache: DesignCache | None = None, *,
                  draws: int = tolerance.DEFAULT_DRAWS) -> Report | None:
    """The stored Report for ``spec``, or None when it has not been worked out with this code yet."""
    found = (cache or DesignCache()).get(design_key(spec, draws=draws))
    return _as_read_from(found, spec) if isinstance(found, Report) else None


def store_report(spec: Spec, report: Report, cache: DesignCache | None = None, *,
                 draws: int = tolerance.DEFAULT_DRAWS) -> None:
    """Keep ``report`` as the Report of ``spec`` for later runs."""
    (cache or DesignCache()).put(design_key(spec, draws=draws), report)


def report_for(spec: Spec, *, cache: DesignCache | None = None, draws: int | None = None) -> Report:
    """The Report for ``spec`` over ``draws`` tolerance draws (None: the default): stored, or analysed now and stored.

    The sizer's own yield check keeps its fixed draws; ``draws`` sets how many the
    report's spread, bench ranges and band of curves are taken over.
    """
    from sheetgen.sizing.analyse import analyse

    cache = cache or DesignCache()
    draws = tolerance.DEFAULT_DRAWS if draws is None else draws
    found = cached_report(spec, cache, draws=draws)
    if found is not None:
        return found
    report = analyse(design_for(spec, cache=cache), draws=draws)
    store_report(spec, report, cache, draws=draws)
    return report


def design_for(spec: Spec, *, cache: DesignCache | None = None) -> Design:
    """The sized Design for ``spec``: from a stored Report or Design if there is one, else sized now and stored.

    ``check`` sizes without analysing; keeping its Design means a build after it only analyses.
    """
    from sheetgen.sizing.size import size

    cache = cache or DesignCache()
    found = cached_report(spec, cache)
    if found is not None:
        return found.design
    key = "sized-" + design_key(spec)
    design = cache.get(key)
    if isinstance(design, Design):
        return replace(design, spec=spec)
    design = size(spec)
    cache.put(key, design)
    return design
