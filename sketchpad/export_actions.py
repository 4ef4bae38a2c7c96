"""File > "Export drawing…" and "Export report…": the menu actions, their save dialogs and messages.

The drawing (:mod:`sketchpad.export`) and the report (:mod:`sketchpad.report`) are written by their
own modules; this one only asks where and says how it went.
"""

from __future__ import annotations

import logging
import pathlib

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

    def _say(self, text: str, error: bool = False) -> None:
        self.last_message = text
        try:
            self.window.statusBar().showMessage(text, 8000)
        except RuntimeError:
            pass
        if error:
            self.show(self.window, "Export", text, True)

    @property
    def busy(self) -> bool:
        """True while an exported drawing waits for its failure scan (sketchpad.export_scan)."""
        return self._scans is not None and self._scans.running > 0

    def export_drawing(self, path: pathlib.Path | str | None = None) -> pathlib.Path | None:
        """Ask where (unless given) and write the drawing of the rig as it is now; None if cancelled or refused
        (the user is told why). The drawing shows the failure scan's areas: the What-if dock's finished scan of
        this rig, else one run on the solve worker, the drawing written when it is back (``busy`` meanwhile) and
        the window answering all the while (sketchpad.export_scan)."""
        from sketchpad.export import format_of, refuse_undrawable
        from sketchpad.export_scan import ExportScans, finished_scan, settled_result

        path = path or self.ask_path(self.window, "Export drawing", self._start(".png"), DRAWING_FILTER)
        if not path:
            return None
        path = pathlib.Path(path)
        if not path.suffix:
            path = path.with_suffix(".png")
        rig, rig_dir, source = self.window.document.rig, self._rig_dir(), self._source()
        try:  # what can be refused at once is refused before any scan
            format_of(path)
            if not path.parent.exists():
                raise ExportError(f"the folder {path.parent} does not exist")
            refuse_undrawable(rig)
        except ExportError as exc:
            self._say(f"Could not export the drawing: {exc}", error=True)
            return None
        done = finished_scan(self.window, rig)
        if done is None:
            if self._scans is None:
                live = getattr(self.window, "live", None)
                self._scans = ExportScans(getattr(live, "scheduler", None), self.window)
            if self._scans.start(rig, lambda outcome: self._write_drawing(rig, path, rig_dir, source, outcome),
                                 settled_result(self.window, rig)):
                self._say("Exporting the drawing: the failure scan runs first …")
                return path
        self._write_drawing(rig, path, rig_dir, source, done)
        return path

    def _write_drawing(self, rig, path: pathlib.Path, rig_dir, source, outcome) -> None:
        """Write the drawing (GUI thread) with a finished scan's outcome (None: analyse and scan here)."""
        try:
            if outcome is not None and outcome.error is not None:
                raise ExportError(f"the failure scan stopped ({outcome.error})")
            drawing = export_drawing(rig, path, rig_dir=rig_dir, source=source,
                                     result=None if outcome is None else outcome.result,
                                     scan=None if outcome is None else outcome.scan)
        except (ExportError, OSError) as exc:
            self._say(f"Could not export the drawing: {exc}", error=True)
            return
        if drawing.result.ok:
            self._say(f"Drawing saved to {path}")
        else:
            self._say(f"Drawing saved to {path} without forces: {failure_sentence(rig, drawing.result)}")
        if outcome is not None:
            from sketchpad.export_scan import offer_to_what_if

            offer_to_what_if(self.window, outcome)

    def pdf_path(self, path, title: str, suffix: str, filters: str = REPORT_FILTER) -> pathlib.Path | None:
        """``path``, or the one the user picks (None if cancelled), ending in .pdf."""
        path = path or self.ask_path(self.window, title, self._start(suffix), filters)
        if not path:
            return None
        path = pathlib.Path(path)
        return path if path.suffix.lower() == ".pdf" else path.with_name(path.name + ".pdf")

    def export_report(self, path: pathlib.Path | str | None = None) -> pathlib.Path | None:
        """Ask where (unless given) and write the PDF report; None if cancelled or failed."""
        path = self.pdf_path(path, "Export report", "-report.pdf")
        if path is None:
            return None
        doc = self.window.document
        try:
            report = write_report(doc.rig, path, rig_dir=self._rig_dir(),
                                  source=self._source())
        except (ExportError, OSError) as exc:
            self._say(f"Could not write the report: {exc}", error=True)
            return None
        extra = "" if report.result.ok else " (the rig did not solve: the report says so and gives no forces)"
        self._say(f"Report saved to {path}, {report.pages} page{'s' if report.pages != 1 else ''}{extra}")
        return path


def install_export_actions(window, ask_path=None, show=None) -> ExportActions:
    """Add "Export drawing…" and "Export report…" to ``window``'s File menu (above Quit)."""
    return ExportActions(window, ask_path, show)


__all__ = ["ExportActions", "install_export_actions"]
