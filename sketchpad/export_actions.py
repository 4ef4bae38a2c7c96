"""File > "Export drawing…" and "Export report…": the menu actions, their save dialogs and messages.

The drawing (:mod:`sketchpad.export`) and the report (:mod:`sketchpad.report`) are written by their
own modules; this one only asks where and says how it went.
"""

from __future__ import annotations

import logging
import pathlib
from typing import Any, Callable

from sketchpad.export import ExportError, export_drawing
from sketchpad.messages import failure_sentence
from sketchpad.report import write_report

log = logging.getLogger(__name__)

DRAWING_FILTER = "PNG picture (*.png);;SVG drawing (*.svg);;PDF page (*.pdf)"
REPORT_FILTER = "PDF report (*.pdf)"


def _ask_save_path(parent, title: str, start: str, filters: str) -> pathlib.Path | None:
    """A save dialog (nothing without a screen: a modal box would wait forever)."""
    from PySide6.QtGui import QGuiApplication
    from PySide6.QtWidgets import QFileDialog

    if QGuiApplication.platformName() in ("offscreen", "minimal"):
        return None
    path, _ = QFileDialog.getSaveFileName(parent, title, start, filters)
    return pathlib.Path(path) if path else None


def _show_message(parent, title: str, text: str, error: bool) -> None:
    from PySide6.QtGui import QGuiApplication

    from sketchpad.plain_text import inform, warn

    if QGuiApplication.platformName() in ("offscreen", "minimal"):
        (log.warning if error else log.info)("%s: %s", title, text)
        return
    (warn if error else inform)(parent, title, text)


class ExportActions:
    """File > "Export drawing…" and "Export report…" for a main window.

    ``ask_path(parent, title, start, filters) -> Path | None`` and
    ``show(parent, title, text, error)`` are the dialogs; tests replace them.
    Exports use the document's current rig, analysed afresh, and never change it.
    """

    def __init__(self, window, ask_path=None, show=None) -> None:
        from PySide6.QtGui import QAction

        self.window = window
        self.ask_path = ask_path or _ask_save_path
        self.show = show or _show_message
        self.last_message = ""
        self._scans = None  # sketchpad.export_scan.ExportScans, made on the first export that needs a scan
        self.action_drawing = QAction("Export &drawing…", window)
        self.action_drawing.setStatusTip("Save the sketch with its forces as a PNG, SVG or PDF page")
        self.action_drawing.triggered.connect(lambda _c=False: self.export_drawing())
        self.action_report = QAction("Export &report…", window)
        self.action_report.setStatusTip("Save a PDF report: drawing, forces, safety factors, assumptions")
        self.action_report.triggered.connect(lambda _c=False: self.export_report())
        menu, before = window.menu_file, getattr(window, "action_quit", None)
        menu.insertSeparator(before)
        menu.insertAction(before, self.action_drawing)
        menu.insertAction(before, self.action_report)
        menu.insertSeparator(before)

    def _start(self, suffix: str) -> str:
        doc = self.window.document
        path = getattr(doc, "path", None)
        if path is not None:
            name = path.name[: -len(".rig.json")] if path.name.endswith(".rig.json") else path.stem
            return str(path.with_name(name + suffix))
        return str(pathlib.Path.home() / ("rig" + suffix))

    def _rig_dir(self) -> pathlib.Path | None:
        path = getattr(self.window.document, "path", None)
        return path.parent if path is not None else None

    def _source(self) -> str | None:
        """The rig file the drawing or report says it came from (None for an unsaved sketch)."""
        path = getattr(self.window.document, "path", None)
        return str(path) if path else None

    def _say(self, text: str, error: bool = False, stay: bool = False) -> None:
        """Tell the user in the status bar (``stay``: until the next message, for an export under way) and, for an
        error, in a message box."""
        self.last_message = text
        try:
            self.window.statusBar().showMessage(text, 0 if stay else 8000)
        except RuntimeError:
            pass
        if error:
            self.show(self.window, "Export", text, True)

    @property
    def busy(self) -> bool:
        """True while an export waits for its slow part on the solve worker (sketchpad.export_scan)."""
        return self._scans is not None and self._scans.running > 0

    def refuse_target(self, path: pathlib.Path, what: str, *checks: Callable[[], None]) -> bool:
        """Refuse, before any computing, what ``checks`` refuse (each raises ExportError: a rig nothing can be drawn
        of, a format the name does not give) and a file the export cannot write (no such folder, not writable, a
        folder by that name); True (and the user told) when refused."""
        try:
            for check in checks:
                check()
        except ExportError as exc:
            self._say(f"Could not export the {what}: {exc}", error=True)
            return True
        why = target_problem(path)
        if why is not None:
            self._say(f"Could not export the {what}: {why}", error=True)
        return why is not None

    def compute_then_write(self, what: str, path: pathlib.Path, compute: Callable, write: Callable[[Any], str],
                           ready: Any = None, scans_rig=None, waiting: str = "failure scan runs first",
                           progress: Callable | None = None, ended: Callable[[], None] | None = None) -> bool:
        """Every export's one path: ``compute()`` (the slow part: analysis, failure scan, haul sweep and plan) on the solve worker,
        then ``write(value)`` on the GUI thread (it returns the status message); with ``ready`` (the value at hand)
        it writes at once. ``scans_rig``: the rig whose scan the worker makes (the What-if dock stands down
        meanwhile). ``progress``: called on the GUI thread with what ``compute(report)`` reports; ``ended()`` once it is over, written or not. The status bar
        says what runs until the export ends; a failure is told in a message box. True while under way (``busy``)."""
        from sketchpad.export_scan import ExportScans, dock_stands_down

        if ready is not None:
            self._written(what, path, write, ready, None, ended)
            return False
        if self._scans is None:
            live = getattr(self.window, "live", None)
            self._scans = ExportScans(getattr(live, "scheduler", None), self.window)
        if scans_rig is not None:
            dock_stands_down(self.window, scans_rig)
        if self._scans.run(compute, lambda value, error: self._written(what, path, write, value, error, ended),
                           progress):
            self._say(f"Exporting the {what}: {waiting} …", stay=True)  # short: the cautions share the status bar
            return True
        try:  # no worker (the window closing): compute here
            value, error = (compute(progress) if progress is not None else compute()), None
        except Exception as exc:  # noqa: BLE001 - told to the user below
            log.exception("export computation failed")
            value, error = None, exc
        self._written(what, path, write, value, error, ended)
        return False

    def _written(self, what: str, path: pathlib.Path, write: Callable[[Any], str], value, error,
                 ended: Callable[[], None] | None = None) -> None:
        """Write the export from its computed ``value`` (GUI thread), or tell why it could not be."""
        try:
            self._write_or_tell(what, path, write, value, error)
        finally:
            if ended is not None:
                ended()

    def _write_or_tell(self, what: str, path: pathlib.Path, write: Callable[[Any], str], value, error) -> None:
        from sketchpad.export_scan import Cancelled, dock_resumes, offer_to_what_if

        if error is None:
            try:
                self._say(write(value))
                offer_to_what_if(self.window, value)
                return
            except Exception as exc:  # noqa: BLE001 - whatever stops the writing, the user is told, nothing else lost
                error = exc
        dock_resumes(self.window)
        self._say(failed_export_text(what, path, error), error=not isinstance(error, Cancelled))

    def export_drawing(self, path: pathlib.Path | str | None = None) -> pathlib.Path | None:
        """Ask where (unless given) and write the drawing of the rig as it is now; None if cancelled or refused
        (the user is told why). The drawing shows the failure scan's areas: the What-if dock's finished scan of
        this rig, else one run on the solve worker, the drawing written when it is back (``busy`` meanwhile) and
        the window answering all the while (sketchpad.export_scan)."""
        from sketchpad.export import format_of, refuse_undrawable
        from sketchpad.export_scan import ready_or_job

        path = path or self.ask_path(self.window, "Export drawing", self._start(".png"), DRAWING_FILTER)
        if not path:
            return None
        path = pathlib.Path(path)
        if not path.suffix:
            path = path.with_suffix(".png")
        rig, rig_dir, source = self.window.document.rig, self._rig_dir(), self._source()
        if self.refuse_target(path, "drawing", lambda: format_of(path), lambda: refuse_undrawable(rig)):
            return None  # what can be refused at once is refused before any scan

        def write(outcome) -> str:
            drawing = export_drawing(rig, path, rig_dir=rig_dir, source=source, result=outcome.result,
                                     scan=outcome.scan)
            if drawing.result.ok:
                return f"Drawing saved to {path}"
            return f"Drawing saved to {path} without forces: {failure_sentence(rig, drawing.result)}"

        ready, job = ready_or_job(self.window, rig)
        self.compute_then_write("drawing", path, job, write, ready, rig)
        return path

    def pdf_path(self, path, title: str, suffix: str, filters: str = REPORT_FILTER) -> pathlib.Path | None:
        """``path``, or the one the user picks (None if cancelled), ending in .pdf."""
        path = path or self.ask_path(self.window, title, self._start(suffix), filters)
        if not path:
            return None
        path = pathlib.Path(path)
        return path if path.suffix.lower() == ".pdf" else path.with_name(path.name + ".pdf")

    def export_report(self, path: pathlib.Path | str | None = None) -> pathlib.Path | None:
        """Ask where (unless given) and write the PDF report; None if cancelled or refused. The failure scan and the
        haul-force sweep and plan run on the solve worker (the What-if dock's finished scan reused), the pages are written
        when they are back (``busy`` meanwhile)."""
        from sketchpad.export import refuse_undrawable
        from sketchpad.export_scan import ready_or_job

        path = self.pdf_path(path, "Export report", "-report.pdf")
        if path is None:
            return None
        rig, rig_dir, source = self.window.document.rig, self._rig_dir(), self._source()
        if self.refuse_target(path, "report", lambda: refuse_undrawable(rig)):
            return None

        def write(outcome) -> str:
            report = write_report(rig, path, outcome.result, rig_dir=rig_dir, source=source, scan=outcome.scan,
                                  solves=outcome.solves)
            extra = "" if report.result.ok else " (the rig did not solve: the report says so and gives no forces)"
            return f"Report saved to {path}, {report.pages} page{'s' if report.pages != 1 else ''}{extra}"

        ready, job = ready_or_job(self.window, rig, report=True)
        self.compute_then_write("report", path, job, write, ready, rig,
                                "failure scan and haul runs first")
        return path


def target_problem(path: pathlib.Path) -> str | None:
    """Why ``path`` cannot be written (in words, naming the place), or None."""
    import os

    folder = path.parent
    if not folder.exists():
        return f"the folder {folder} does not exist"
    if not folder.is_dir():
        return f"{folder} is a file, not a folder"
    if path.is_dir():
        return f"{path} is a folder: choose a file name"
    if not os.access(folder, os.W_OK) or (path.exists() and not os.access(path, os.W_OK)):
        return f"{path} cannot be written here (no permission to write in {folder})"
    return None


def failed_export_text(what: str, path: pathlib.Path, error: BaseException) -> str:
    """What the user reads when an export stops: what, where, why, and that nothing else is lost."""
    from sketchpad.export_scan import Cancelled

    if isinstance(error, Cancelled):
        return f"Export of the {what} cancelled: {path} was not written."
    if isinstance(error, (ExportError, OSError)):
        why = str(error) if not isinstance(error, OSError) else (error.strerror or str(error))
        return f"Could not write the {what} to {path}: {why}. Your rig is unchanged."
    return (f"Could not write the {what} to {path}: the calculation stopped with an error ({error}). "
            "Nothing was written and your rig is unchanged; the error is in the log.")


def install_export_actions(window, ask_path=None, show=None) -> ExportActions:
    """Add "Export drawing…" and "Export report…" to ``window``'s File menu (above Quit)."""
    return ExportActions(window, ask_path, show)


__all__ = ["ExportActions", "install_export_actions"]
