"""Sizing and analysing several specs, each distinct one once, side by side on spare cores.

A build night names the same design for several groups, often from different
files; sizing and analysis cost seconds per design, so specs are keyed by
their content (everything but where they were read from) and each distinct
one is sized once.  With more than one job the distinct designs are worked
in child processes, one design each; a job's failure comes back as the same
error it raised, and the first failure stops the rest.
"""

from __future__ import annotations

import multiprocessing
import os
import signal
from dataclasses import replace
from typing import Callable, Sequence

from sheetgen.errors import SheetgenError
from sheetgen.sizing.report import Report
from sheetgen.inputs.spec import Spec

__all__ = ["spec_key", "distinct", "analyse_all", "default_jobs", "DesignFailed"]


class DesignFailed(SheetgenError):
    """One design of a batch could not be sized or analysed.

    ``index`` is its place in the batch, ``error`` what sizing raised (an
    InfeasibleDesign, usually), so the caller can name the build it belongs to.
    """

    def __init__(self, index: int, error: Exception) -> None:
        super().__init__(str(error))
        self.index = index
        self.error = error


def spec_key(spec: Spec) -> Spec:
    """What makes two specs the same design: every field but the file it came from."""
    return replace(spec, source="")


def distinct(specs: Sequence[Spec]) -> list[Spec]:
    """The first spec of each distinct design, in order of first appearance."""
    seen: dict[Spec, Spec] = {}
    for spec in specs:
        seen.setdefault(spec_key(spec), spec)
    return list(seen.values())


def default_jobs(designs: int) -> int:
    """One job per design, no more than the cores this process may use."""
    try:
        cores = len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        cores = os.cpu_count() or 1
    return max(1, min(cores, designs))


def _size_and_analyse(spec: Spec) -> Report:
    from sheetgen.sizing.analyse import analyse
    from sheetgen.sizing.size import size

    return analyse(size(spec))


def _worker_start() -> None:
    """Ctrl-C is the parent's to handle: it stops the workers itself, so they never print a traceback.

    SIGTERM (how the parent stops them) ends a worker at once, and on Linux a
    worker is killed with its parent, so none is left writing to a closed pipe.
    """
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    _die_with_parent()


def _die_with_parent() -> None:
    """Ask the kernel to kill this process when its parent goes (Linux prctl PR_SET_PDEATHSIG)."""
    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(1, int(signal.SIGKILL), 0, 0, 0)  # 1 = PR_SET_PDEATHSIG
    except (OSError, AttributeError):  # not Linux: the pool's own checks remain
        pass


def _job(item: tuple[int, Spec]) -> tuple[int, str, object]:
    """One design in a child process: its report, or the error it raised, never a half-state."""
    index, spec = item
    try:
        return index, "ok", _size_and_analyse(spec)
    except Exception as exc:  # handed back to the parent, which raises it as it was
        return index, "error", exc


def analyse_all(specs: Sequence[Spec], *, jobs: int = 1,
                on_done: Callable[[int], None] | None = None) -> list[Report]:
    """A Report per spec, in the order given (specs should already be distinct).

    ``on_done(index)`` is called as each design finishes, for a progress bar.
    A design that fails raises DesignFailed naming it; the others are stopped.
    """
    reports: list[Report | None] = [None] * len(specs)
    if jobs <= 1 or len(specs) <= 1:
        for k, spec in enumerate(specs):
            try:
                reports[k] = _size_and_analyse(spec)
            except Exception as exc:
                raise DesignFailed(k, exc) from exc
            if on_done is not None:
                on_done(k)
        return reports
    pool = multiprocessing.get_context().Pool(processes=min(jobs, len(specs)), initializer=_worker_start)
    try:
        for k, status, value in pool.imap_unordered(_job, list(enumerate(specs))):
            if status == "error":
                raise DesignFailed(k, value)
            reports[k] = value
            if on_done is not None:
                on_done(k)
        pool.close()
    except BaseException:
        pool.terminate()  # an error or Ctrl-C: stop the other designs now rather than wait for them
        raise
    finally:
        pool.join()
    return reports
