"""An export's slow parts (analysis, failure scan, haul sweep and plan) kept off the GUI thread.

Every File ▸ Export (drawing, report, briefing sheet, manual) shows the failure scan's computed
areas (what flies where when an anchor, a pulley or a rope piece lets go, :func:`solver.failures.scan`);
the report and the manual also plot a haul-force sweep and plan the haul stroke by stroke. A big rig takes seconds for these, and run on
the GUI thread they froze the window. An export now goes in two steps: *compute* on the live solve's
worker thread (:meth:`sketchpad.live_solve.SolveScheduler.worker`, so there is never more than one
solve at a time), then *write* on the GUI thread (Qt paints only there) when the numbers are back.
The What-if dock's finished scan of the very rig being exported is used when there is one, and the
live solve's full analysis of it (the numbers on screen) is never done again. While the worker scans
the rig on screen, the What-if dock stands down (no second scan of the same rig at once) and shows
the export's scan when it is back. The window answers all the while.
"""

from __future__ import annotations

import logging
from dataclasses import dataclass
from typing import Any, Callable

from PySide6.QtCore import QObject, Qt, Signal

from solver.model import Rig
from solver.result import Result

log = logging.getLogger(__name__)


class Cancelled(Exception):
    """The user cancelled an export while its slow part ran: nothing is written."""


@dataclass(frozen=True)
class ScanOutcome:
    """The rig's analysis, its failure scan (None when the rig did not solve) and the report's haul sweep and plan
    (:class:`sketchpad.report.ReportSolves`; None when not asked for or the rig did not solve)."""

    result: Result | None
    scan: Any = None  # solver.failures.Scan
    solves: Any = None


def finished_scan(window, rig: Rig) -> ScanOutcome | None:
    """The What-if dock's finished scan when it was made for this very ``rig`` (the document unchanged since)."""
    s = getattr(getattr(window, "what_if", None), "scan", None)
    if s is None or s.rig is not rig:
        return None
    return ScanOutcome(s.intact, s)


def settled_result(window, rig: Rig) -> Result | None:
    """The live solve's full analysis of this very ``rig`` (the numbers on screen), or None."""
    sched = getattr(getattr(window, "live", None), "scheduler", None)
    if sched is None or sched.rig is not rig or not sched.settled:
        return None
    return sched.result


def prepare(rig: Rig, intact: Result | None = None, scan=None, report: bool = False) -> ScanOutcome:
    """What the worker runs for one rig: the full analysis (unless given as ``intact``), every component let go
    (unless given as ``scan``; a rig that does not solve: no scan) and, for a ``report``, its haul sweep and plan."""
    from solver import failures
    from solver.analysis import analyse

    result = intact if intact is not None else analyse(rig)
    if not result.ok:
        return ScanOutcome(result)
    if scan is None:
        scan = failures.scan(rig, result)
    if not report:
        return ScanOutcome(result, scan)
    from sketchpad.report import report_solves

    return ScanOutcome(result, scan, report_solves(rig))


def ready_or_job(window, rig: Rig, report: bool = False) -> tuple[ScanOutcome | None, Callable[[], ScanOutcome]]:
    """(everything an export of ``rig`` needs when the What-if dock has it already, else None; the job that
    computes what is missing, reusing the dock's scan and the analysis on screen)."""
    done = finished_scan(window, rig)
    if done is not None and not report:
        return done, lambda: done
    intact = done.result if done is not None else settled_result(window, rig)
    made = done.scan if done is not None else None
    return None, lambda: prepare(rig, intact, made, report)


def offer_to_what_if(window, outcome) -> None:
    """Give the What-if dock an export's finished scan, so it does not scan the same rig again."""
    what_if = getattr(window, "what_if", None)
    scan = getattr(outcome, "scan", None)
    if what_if is not None and scan is not None:
        what_if.adopt(scan)


def dock_stands_down(window, rig: Rig) -> None:
    """The export is about to scan the rig on screen on the worker: the What-if dock stops its own scan of it (one
    scan at a time) and waits for the export's."""
    what_if = getattr(window, "what_if", None)
    intact = settled_result(window, rig)
    if what_if is not None and intact is not None and hasattr(what_if, "await_export"):
        what_if.await_export(intact)


def dock_resumes(window) -> None:
    """The export's scan did not come back: the What-if dock scans for itself again."""
    what_if = getattr(window, "what_if", None)
    if what_if is not None and hasattr(what_if, "export_gone"):
        what_if.export_gone()


class _Bridge(QObject):
    """Carries a finished job and its progress from the worker thread to the GUI thread (queued signals)."""

    finished = Signal(object, object, object)  # the GUI-thread callback, the value, the error (or None)
    progress = Signal(object, object)  # the GUI-thread callback, its arguments


class ExportScans:
    """Runs exports' slow parts on the solve worker and calls back on the GUI thread; ``running`` counts those under
    way."""

    def __init__(self, scheduler, parent: QObject) -> None:
        self.scheduler = scheduler
        self.running = 0
        self._bridge = _Bridge(parent)
        self._bridge.finished.connect(self._done, Qt.QueuedConnection)
        self._bridge.progress.connect(lambda cb, args: cb(*args), Qt.QueuedConnection)

    def available(self) -> bool:
        """Whether there is a worker to run on (none once the window closed, or without a live solve)."""
        return self.scheduler is not None and self.scheduler.worker() is not None

    def run(self, compute: Callable[..., Any], on_done: Callable[[Any, BaseException | None], None],
            progress: Callable[..., None] | None = None) -> bool:
        """Queue ``compute()`` (given ``report(*args)`` when ``progress`` is, which calls ``progress(*args)`` on the
        GUI thread); ``on_done(value, error)`` on the GUI thread after. False when there is no worker."""
        worker = self.scheduler.worker() if self.scheduler is not None else None
        if worker is None:
            return False
        bridge = self._bridge

        def report(*args) -> None:
            try:
                bridge.progress.emit(progress, args)
            except RuntimeError:  # the window closed
                pass

        def work() -> None:
            value, error = None, None
            try:
                value = compute(report) if progress is not None else compute()
            except Cancelled as exc:  # the user's choice, told in the status bar
                error = exc
            except Exception as exc:  # noqa: BLE001 - a scan bug must not take the window down: the user is told
                log.exception("export computation failed")
                error = exc
            try:
                bridge.finished.emit(on_done, value, error)
            except RuntimeError:  # the window closed while scanning
                pass

        self.running += 1
        worker.submit(work)
        return True

    def _done(self, on_done: Callable[[Any, BaseException | None], None], value, error) -> None:
        self.running -= 1
        on_done(value, error)


__all__ = ["ScanOutcome", "ExportScans", "finished_scan", "settled_result", "prepare", "Cancelled",
           "ready_or_job", "offer_to_what_if", "dock_stands_down", "dock_resumes"]
