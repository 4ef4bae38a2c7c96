"""The document: owns the Rig being edited, its file path and its undo stack; emits ``changed``.

Widgets never write the rig directly: they call :meth:`Document.apply` with a
new Rig, which pushes one undoable :class:`~sketchpad.commands.RigEdit`.
"""

from __future__ import annotations

import pathlib

from PySide6.QtCore import QObject, Signal
from PySide6.QtGui import QUndoStack

from sketchpad.commands import RigEdit
from solver.model import Rig


class Document(QObject):
    """The sketch being edited: current rig, file path, revision counter and undo stack."""

    changed = Signal(object)  # the new Rig
    path_changed = Signal(object)  # pathlib.Path | None
    started = Signal(object)  # the Rig a new history starts from (new, open, sample): ``replace_all``

    def __init__(self, rig: Rig | None = None, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self._rig = rig if rig is not None else Rig()
        self._path: pathlib.Path | None = None
        self.revision = 0
        self.sketching = False  # True while a half-drawn shape is shown: not worth solving yet
        self.previewing = False  # True while the rig shown is a preview (a drag under way), not an edit
        self.undo_stack = QUndoStack(self)

    # --- state --------------------------------------------------------------------
    @property
    def rig(self) -> Rig:
        return self._rig

    @property
    def path(self) -> pathlib.Path | None:
        return self._path

    def set_path(self, path: pathlib.Path | None) -> None:
        self._path = pathlib.Path(path) if path is not None else None
        self.path_changed.emit(self._path)

    @property
    def is_modified(self) -> bool:
        return not self.undo_stack.isClean()

    # --- edits --------------------------------------------------------------------
    def apply(self, new_rig: Rig, text: str, merge_key: str | None = None, before: Rig | None = None) -> bool:
        """Push one undoable edit to ``new_rig``; returns False (and pushes nothing) if nothing changed.

        ``before`` is the rig the edit started from when it differs from the
        current one (a drag shown through :meth:`preview`): undo returns there.
        """
        start = self._rig if before is None else before
        if new_rig == start:
            if before is not None and self._rig != before:
                self._set_rig(before)  # a drag that ended where it began: drop the preview
            return False
        self.undo_stack.push(RigEdit(self, start, new_rig, text, merge_key))
        return True

    def replace_all(self, rig: Rig, path: pathlib.Path | None = None) -> None:
        """Start over with ``rig`` (new/open): clears undo history, marks clean."""
        self.undo_stack.clear()
        self._set_rig(rig)
        self.set_path(path)
        self.undo_stack.setClean()
        self.started.emit(rig)

    def preview(self, rig: Rig, sketching: bool = False) -> None:
        """Show ``rig`` without touching the undo stack (live drag); the drag's release pushes the command.

        ``sketching`` marks a half-drawn shape (a rope still being clicked through): the live
        solver waits for the finished edit instead of reporting the unfinished rig as failed.
        """
        self._set_rig(rig, sketching, previewing=True)

    def _set_rig(self, rig: Rig, sketching: bool = False, previewing: bool = False) -> None:
        self._rig = rig
        self.previewing = previewing
        self.sketching = sketching
        self.revision += 1
        self.changed.emit(rig)
