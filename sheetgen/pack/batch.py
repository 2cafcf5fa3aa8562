"""Sizing and analysing several specs, each distinct one once, side by side on spare cores.

A build night names the same design for several groups, often from different
files; sizing and analysis cost seconds per design, so specs are keyed by
their content (everything but where they were read from) and each distinct
one is sized once.  Designs found in the design cache are read there first;
with more than one job the rest are worked in child processes, one design
each (never more processes than designs left to work); a job's failure comes
back as the same error it raised, and the first failure stops the rest.
"""

from __future__ import annotations

import multiprocessing
import os
import signal
from dataclasses import replace
from typing import Callable, Sequence

from sheetgen.errors import SheetgenError
from sheetgen.sizing.cache import cached_report, store_report
from sheetgen.sizing.report import Report
from sheetgen.inputs.spec import Spec

__all__ = ["spec_key", "distinct", "analyse_all", "default_jobs", "DesignFailed"]

SWAMPED_LOAD_PER_CORE = 2.0  # load average per core past which a second job only waits


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
    """One job per design, no more than the cores this process may use; one job on a swamped machine.

    Measured on two cores: with the machine otherwise about idle, two jobs
    pack in 0.55-0.7 of the time of one; with a load average over 7, two jobs
    took 1.2-1.3 times as long.  So past a load average of twice the cores,
    where a second process only waits, one job is used.
    """
    try:
        cores = len(os.sched_getaffinity(0))
    except AttributeError:  # not on Linux
        cores = os.cpu_count() or 1
    try:
        swamped = os.getloadavg()[0] >= SWAMPED_LOAD_PER_CORE * cores
    except (AttributeError, OSError):  # no load average on this system
        swamped = False
    return 1 if swamped else max(1, min(cores, designs))


def _size_and_analyse(spec: Spec) -> Report:
    from sheetgen.sizing.analyse import analyse
    from sheetgen.sizing.size import size

    return analyse(size(spec))


def _worker_start(parent: int) -> None:
    """Ctrl-C is the parent's to handle: it stops the workers itself, so they never print a traceback.

    SIGTERM (how the parent stops them) ends a worker at once, and on Linux a
    worker is killed with its parent, so none is left blocked on the pool's pipe.
    """
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    die_with_parent(parent)


def die_with_parent(parent: int) -> None:
    """Ask the kernel to kill this process when its parent goes (Linux prctl PR_SET_PDEATHSIG).

    A parent gone before the request was made is seen by its changed pid, and the process ends at once.
    """
    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(1, int(signal.SIGKILL), 0, 0, 0)  # 1 = PR_SET_PDEATHSIG
    except (OSError, AttributeError):  # not Linux: the pool's own checks remain
        pass
    if os.getppid() != parent:
        os._exit(0)


def _job(item: tuple[int, Spec, bool]) -> tuple[int, str, object]:
    """One design in a child process: its report, or the error it raised, never a half-state."""
    index, spec, use_cache = item
    try:
        report = _size_and_analyse(spec)
        if use_cache:
            store_report(spec, report)
        return index, "ok", report
    except Exception as exc:  # handed back to the parent, which raises it as it was
        return index, "error", exc


def analyse_all(specs: Sequence[Spec], *, jobs: int = 1, use_cache: bool = True,
                on_done: Callable[[int], None] | None = None) -> list[Report]:
    """A Report per spec, in the order given (specs should already be distinct).

    ``on_done(index)`` is called as each design finishes, for a progress bar.
    A design that fails raises DesignFailed naming it; the others are stopped.
    """
    reports: list[Report | None] = [cached_report(s) if use_cache else None for s in specs]
    todo = [(k, spec, use_cache) for k, spec in enumerate(specs) if reports[k] is None]
    if on_done is not None:
        for k in (k for k, r in enumerate(reports) if r is not None):
            on_done(k)
    if jobs <= 1 or len(todo) <= 1:
        for item in todo:
            k, status, value = _job(item)
            if status == "error":
                raise DesignFailed(k, value) from value
            reports[k] = value
            if on_done is not None:
                on_done(k)
        return reports
    pool = multiprocessing.get_context().Pool(processes=min(jobs, len(todo)), initializer=_worker_start,
                                           initargs=(os.getpid(),))
    try:
        for k, status, value in pool.imap_unordered(_job, todo):
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
