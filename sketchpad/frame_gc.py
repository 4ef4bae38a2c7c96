"""Keeps Python's cyclic garbage collector out of drag frames.

A drag step allocates thousands of small objects (a new Rig, the solver's arrays, overlay
entries), so the collector would start a collection in the middle of many frames, and
now and then a full one of the whole heap.  While the document shows a preview (a drag
under way) automatic collection is paused; it resumes, and runs, when the drag ends with
an edit, an undo or a new document.  Reference counting still frees almost everything at
once; only cyclic garbage waits, and a long preview collects the young generation once it
holds ``young_limit`` objects, so memory stays bounded.
"""

from __future__ import annotations

import gc
import logging

from PySide6.QtCore import QObject

log = logging.getLogger(__name__)

#: Young objects a paused preview may hold before the young generation is collected anyway.
YOUNG_LIMIT = 200_000


class FramePacedCollector(QObject):
    """Pauses automatic garbage collection while ``document`` previews, and resumes it after."""

    def __init__(self, document, parent: QObject | None = None, young_limit: int = YOUNG_LIMIT) -> None:
        super().__init__(parent)
        self.document = document
        self.young_limit = int(young_limit)
        self.paused = False  # True while this object has switched automatic collection off
        self.young_collections = 0
        document.changed.connect(self._on_changed)

    def _on_changed(self, _rig=None) -> None:
        if getattr(self.document, "previewing", False):
            if not self.paused and gc.isenabled():
                gc.disable()
                self.paused = True
            elif self.paused and gc.get_count()[0] > self.young_limit:
                gc.collect(0)
                self.young_collections += 1
        else:
            self.resume()

    def resume(self) -> None:
        """Automatic collection on again (only if this object switched it off), and one collection now."""
        if self.paused:
            self.paused = False
            gc.enable()
            gc.collect(1)
