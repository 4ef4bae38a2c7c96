"""The widgets Qt paints over a viewport, found once and kept until an event to one of the widgets involved.

A drag frame painted over the last one on screen redraws, every frame, where a widget lies over the
viewport (Qt paints that widget over every frame again: a translucent banner would be laid down twice
over pixels the frame left as they were; ``sketchpad.drag_layer``).  Finding them (:func:`widget_rects`)
walks the viewport's children and, for the viewport and each ancestor, the siblings stacked above it
(~0.4 ms a frame in a main window), yet they change only when a widget is added, removed, shown,
hidden, moved, resized, restacked or reparented, and Qt sends each of those to a widget it knows:

- ``ChildAdded`` / ``ChildRemoved`` to the parent (a widget made, reparented or deleted);
- ``Show`` / ``Hide`` (and ``ShowToParent`` / ``HideToParent``) to the widget shown or hidden, or to
  each visible child of a parent shown or hidden;
- ``Move`` / ``Resize`` to a visible widget whose geometry changed (a hidden one gets them when shown,
  before its ``Show``);
- ``ZOrderChange`` to the widget raised, lowered or stacked under another;
- ``ParentChange`` to a widget given a new parent or made a window (``setWindowFlags`` reparents).

:class:`WidgetsOver` filters the events of the viewport, its ancestors up to the window and every
direct child of them (the candidates, shown or not), and forgets its answer on any of those events
(but a child added to or removed from a candidate, which stays inside the candidate's rect, and a
move or resize of a hidden widget, which gets ``Show`` before it is seen); the next frame walks the
widgets again.  Tested equal to :func:`widget_rects` after each kind of change.
"""

from __future__ import annotations

import shiboken6
from PySide6.QtCore import QEvent, QObject, QRect, Qt
from PySide6.QtWidgets import QWidget

#: Events after which the widgets over the viewport, their order or their places may differ (see the module doc).
CHANGES = frozenset({
    QEvent.ChildAdded, QEvent.ChildRemoved, QEvent.Show, QEvent.Hide, QEvent.ShowToParent, QEvent.HideToParent,
    QEvent.Move, QEvent.Resize, QEvent.ZOrderChange, QEvent.ParentChange, QEvent.ParentAboutToChange,
})


def widget_rects(vp: QWidget) -> list[QRect]:
    """Viewport px of every visible widget Qt paints over the viewport after it, every time it paints it (a
    translucent banner would be laid down twice over pixels a frame left as they were)."""
    rects = []
    whole = vp.rect()
    for c in vp.children():
        if isinstance(c, QWidget) and c.isVisible() and not c.isWindow():
            rects.append(c.geometry())
    w = vp
    while not w.isWindow():  # widgets stacked above the viewport or one of its ancestors, overlapping it
        parent = w.parentWidget()
        if parent is None:
            break
        kids = parent.findChildren(QWidget, "", Qt.FindDirectChildrenOnly)  # in stacking order, bottom first
        for c in kids[kids.index(w) + 1:]:
            if c.isVisible() and not c.isWindow():
                r = QRect(vp.mapFrom(parent, c.geometry().topLeft()), c.geometry().size()).intersected(whole)
                if not r.isEmpty():
                    rects.append(r)
        w = parent
    return rects


class WidgetsOver:
    """:func:`widget_rects` of one viewport, kept until an event that may change it (see the module doc)."""

    def __init__(self, vp: QWidget) -> None:
        self.vp = vp
        self._rects: tuple[QRect, ...] | None = None
        self._filter: _Filter | None = None
        self._chain: frozenset[int] = frozenset()  # C++ addresses of the viewport and its ancestors
        self.walks = 0  # how many times the widgets were walked (for tests)

    def rects(self) -> tuple[QRect, ...]:
        """The viewport px of the widgets painted over it (as :func:`widget_rects`)."""
        rects = self._rects
        if rects is None:
            self._watch()  # first: an event from here on forgets what is read below
            self.walks += 1
            rects = self._rects = tuple(widget_rects(self.vp))
        return rects

    def forget(self) -> None:
        """Walk the widgets again at the next call of :meth:`rects`."""
        self._rects = None

    def _watch(self) -> None:
        """Filter the events of the viewport, its ancestors and their direct children (and nothing else), with a
        new filter object: the last one goes, and Qt drops a deleted filter from every object it watched."""
        if self._filter is not None:
            self._filter.owner = None
            shiboken6.delete(self._filter)
        self._filter = f = _Filter(self)
        chain = []
        w = self.vp
        while w is not None:
            chain.append(w)
            w.installEventFilter(f)
            for c in w.children():
                if isinstance(c, QWidget):
                    c.installEventFilter(f)
            if w.isWindow():
                break
            w = w.parentWidget()
        self._chain = frozenset(shiboken6.getCppPointer(w)[0] for w in chain)

    def _event(self, obj, kind) -> None:
        if kind in _CHILDREN and shiboken6.getCppPointer(obj)[0] not in self._chain:
            return  # a child of a widget beside the viewport's ancestors: inside that widget's own rect
        if kind in _GEOMETRY and not obj.isVisible():
            return  # a hidden widget is not over the viewport; when shown it gets ``Show`` after these
        self._rects = None


#: Of :data:`CHANGES`: the ones that matter only from some widgets (``WidgetsOver._event``).
_CHILDREN = frozenset({QEvent.ChildAdded, QEvent.ChildRemoved})
_GEOMETRY = frozenset({QEvent.Move, QEvent.Resize})


class _Filter(QObject):
    """The event filter of one :meth:`WidgetsOver._watch`: tells its owner of every event in :data:`CHANGES`."""

    def __init__(self, owner: WidgetsOver) -> None:
        super().__init__()
        self.owner = owner

    def eventFilter(self, obj, event) -> bool:  # noqa: N802
        owner = self.owner
        if owner is not None and owner._rects is not None:
            kind = event.type()
            if kind in CHANGES:
                owner._event(obj, kind)
        return False


__all__ = ["CHANGES", "WidgetsOver", "widget_rects"]
