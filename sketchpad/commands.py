"""Undoable edits: every change to the sketch is one QUndoCommand swapping one Rig for another.

With an immutable Rig a single memento command serves every kind of edit:
``redo()`` sets ``after`` and ``undo()`` sets ``before``, so both paths emit the
same ``Document.changed`` signal.  Nudges and typed-field edits merge by ``merge_key``.
"""

from __future__ import annotations

from typing import Protocol

from PySide6.QtGui import QUndoCommand

from solver.model import Rig


class RigHolder(Protocol):
    """What a command edits: the document, which swaps in a Rig and says so (sketchpad.document.Document)."""

    def _set_rig(self, rig: Rig) -> None: ...

_MERGE_IDS: dict[str, int] = {}


def merge_id_for(key: str) -> int:
    """A stable small integer for a merge key (QUndoCommand.id() must be an int)."""
    return _MERGE_IDS.setdefault(key, 1000 + len(_MERGE_IDS))


class RigEdit(QUndoCommand):
    """Swap the document's rig from ``before`` to ``after``; merges with the next edit of the same key."""

    def __init__(self, document: RigHolder, before: Rig, after: Rig, text: str, merge_key: str | None = None):
        super().__init__(text)
        self._document = document
        self.before = before
        self.after = after
        self._merge_key = merge_key

    def id(self) -> int:  # noqa: A003 - Qt's name
        return merge_id_for(self._merge_key) if self._merge_key else -1

    def mergeWith(self, other: QUndoCommand) -> bool:  # noqa: N802 - Qt's name
        if not isinstance(other, RigEdit) or other._merge_key != self._merge_key or not self._merge_key:
            return False
        self.after = other.after
        return True

    def redo(self) -> None:
        self._document._set_rig(self.after)

    def undo(self) -> None:
        self._document._set_rig(self.before)
