"""File ▸ Export drawing's failure scan, kept off the GUI thread.

An exported drawing shows the failure scan's computed areas (what flies where when an anchor, a
pulley or a rope piece lets go, :func:`solver.failures.scan`). A big rig takes seconds to scan,
and run on the GUI thread it froze the window. The export now uses the What-if dock's finished
scan of the very rig being exported when there is one; otherwise the scan (and the analysis, unless
the live solve has the full one of this rig: the numbers on screen) is
queued on the live solve's worker thread (:meth:`sketchpad.live_solve.SolveScheduler.worker`, so
there is never more than one solve at a time) and the drawing is written on the GUI thread (Qt
paints only there) when they are back, and the What-if dock is given the scan (no second scan of the
same rig). The window answers all the while.
"""

from __future__ import annotations

import logging
from dataclasses import dataclass
from typing import Any, Callable

from PySide6.QtCore import QObject, Qt, Signal

from solver.model import Rig
from solver.result import Result

log = logging.getLogger(__name__)


@dataclass(frozen=True)
class ScanOutcome:
    """The rig's analysis and its failure scan (None when the rig did not solve), or the error that stopped them."""

    result: Result | None
    scan: Any = None  # solver.failures.Scan
    error: BaseException | None = None


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


def analyse_and_scan(rig: Rig, intact: Result | None = None) -> ScanOutcome:
    """What the worker runs: the full analysis (unless given as ``intact``), then every component let go
    (a rig that does not solve: no scan)."""
    from solver import failures
    from solver.analysis import analyse

    result = intact if intact is not None else analyse(rig)
    return ScanOutcome(result, failures.scan(rig, result) if result.ok else None)


def offer_to_what_if(window, outcome: ScanOutcome) -> None:
    """Give the What-if dock an export's finished scan, so it does not scan the same rig again."""
    what_if = getattr(window, "what_if", None)
    if what_if is not None and outcome.scan is not None:
        what_if.adopt(outcome.scan)


class _Bridge(QObject):
    """Carries a finished job from the worker thread to the GUI thread (queued signal)."""

    finished = Signal(object, object)  # the GUI-thread callback, ScanOutcome


class ExportScans:
    """Runs export scans on the solve worker and calls back on the GUI thread; ``running`` counts those under way."""

    def __init__(self, scheduler, parent: QObject) -> None:
        self.scheduler = scheduler
        self.running = 0
        self._bridge = _Bridge(parent)
        self._bridge.finished.connect(self._done, Qt.QueuedConnection)

    def start(self, rig: Rig, on_done: Callable[[ScanOutcome], None], intact: Result | None = None) -> bool:
        """Queue the analysis (unless given as ``intact``) and scan of ``rig``; False when there is no worker
        (then the caller scans itself)."""
        worker = self.scheduler.worker() if self.scheduler is not None else None
        if worker is None:
            return False
        bridge = self._bridge

        def work() -> None:
            try:
                outcome = analyse_and_scan(rig, intact)
            except Exception as exc:  # noqa: BLE001 - a scan bug must not take the window down
                log.exception("export scan failed")
                outcome = ScanOutcome(None, None, exc)
            try:
                bridge.finished.emit(on_done, outcome)
            except RuntimeError:  # the window closed while scanning
                pass

        self.running += 1
        worker.submit(work)
        return True

    def _done(self, on_done: Callable[[ScanOutcome], None], outcome: ScanOutcome) -> None:
        self.running -= 1
        on_done(outcome)


__all__ = ["ScanOutcome", "ExportScans", "finished_scan", "settled_result", "analyse_and_scan", "offer_to_what_if"]
