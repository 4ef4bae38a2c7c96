"""Starting the application: ``ropewright [FILE]`` opens the main window; ``ropewright screenshot``
renders the whole window offscreen with a rig open (for docs, reviews and tests).
"""

from __future__ import annotations

import logging
import os
import pathlib
import sys

log = logging.getLogger(__name__)

EXIT_OK = 0
EXIT_BAD_INPUT = 2


def _application(offscreen: bool = False):
    """The QApplication (created once; offscreen when asked and no platform was chosen)."""
    if offscreen:
        os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from PySide6.QtWidgets import QApplication

    app = QApplication.instance()
    if app is None:
        app = QApplication(sys.argv[:1])
        app.setApplicationName("Ropewright")
        app.setOrganizationName("Ropewright")
    return app


def is_sample(path: str | os.PathLike) -> bool:
    """True if ``path`` is one of the demo rigs shipped in ``samples/`` (never to be overwritten by Save)."""
    from sketchpad.files import samples_dir

    folder = samples_dir()
    if folder is None:
        return False
    try:
        return pathlib.Path(path).resolve().parent == folder.resolve()
    except OSError:
        return False


def open_in_window(window, path: str | os.PathLike, copy: bool = False) -> bool:
    """Load ``path`` into ``window``: a sample (or ``copy``) as an untitled copy, as File ▸ Samples does,
    so Save asks for a new file instead of overwriting it; anything else as the document's file."""
    if copy or is_sample(path):
        return window.files.open_sample(pathlib.Path(path))
    return window.open_path(path)  # a bad file shows a message and leaves an empty sketch


def start_window(path: str | os.PathLike | None = None, copy: bool = False):
    """The shown main window (with ``path`` loaded if given), its first solve waiting for its first paint."""
    from sketchpad.main_window import MainWindow

    window = MainWindow()
    # the drawing appears at once; the forces follow from the worker thread (imports and warm-up)
    window.live.scheduler.first_solve_after_paint(window.view.viewport())
    if path is not None:
        open_in_window(window, path, copy)
    window.show()
    return window


def run_app(path: str | os.PathLike | None = None, copy: bool = False) -> int:
    """Open the main window (with ``path`` loaded if given) and run the event loop; returns the exit code."""
    app = _application()
    window = start_window(path, copy)
    window.files.offer_recovery()  # unsaved work left by a session that did not close cleanly
    return int(app.exec())


def open_cli(args) -> int:
    """``ropewright [FILE]`` / ``ropewright open [FILE]``."""
    path = getattr(args, "rig", None)
    if path is not None and not pathlib.Path(path).exists():
        print(f"ropewright: no such file: {path}", file=sys.stderr)
        return EXIT_BAD_INPUT
    return run_app(path, copy=bool(getattr(args, "copy", False)))


def parse_size(text: str) -> tuple[int, int]:
    """``"1400x900"`` -> (1400, 900); ValueError with a plain message otherwise."""
    try:
        w, h = (int(v) for v in text.lower().split("x"))
    except ValueError:
        raise ValueError(f"size must look like 1400x900, not {text!r}") from None
    if not (200 <= w <= 8000 and 200 <= h <= 8000):
        raise ValueError(f"size {w}x{h} is outside 200..8000 pixels")
    return w, h


def render_window(rig_path, size: tuple[int, int]):
    """The main window with ``rig_path`` open, laid out at ``size`` and grabbed to a QPixmap."""
    app = _application(offscreen=True)
    from sketchpad.main_window import MainWindow
    from solver import limits
    from solver.errors import RigFileError
    from solver.rigfile import load_rig

    rig = load_rig(pathlib.Path(rig_path))  # RigFileError reaches the CLI, which prints it
    problem = limits.drawing_problem(len(rig.points), len(rig.ropes))
    if problem:
        raise RigFileError(problem, where=str(rig_path))
    window = MainWindow()
    window.document.replace_all(rig, pathlib.Path(rig_path))
    window.resize(*size)
    window.show()
    app.processEvents()
    window.view.zoom_to_fit()
    app.processEvents()
    pixmap = window.grab()
    window.close()
    window.deleteLater()
    app.processEvents()
    return pixmap


def screenshot_cli(args) -> int:
    """``ropewright screenshot RIG -o PNG [--size WxH]``."""
    try:
        size = parse_size(args.size)
    except ValueError as exc:
        print(f"ropewright: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    if not pathlib.Path(args.rig).exists():
        print(f"ropewright: no such file: {args.rig}", file=sys.stderr)
        return EXIT_BAD_INPUT
    pixmap = render_window(args.rig, size)
    out = pathlib.Path(args.output)
    if not pixmap.save(str(out)):
        print(f"ropewright: could not write {out}", file=sys.stderr)
        return EXIT_BAD_INPUT
    log.info("wrote %s (%dx%d)", out, pixmap.width(), pixmap.height())
    return EXIT_OK
