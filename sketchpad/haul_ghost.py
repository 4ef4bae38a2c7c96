"""The rig part-way through a planned haul, drawn over the canvas while the haul scrubber moves.

A preview only: it never touches the document (no undo entry, no live solve).  One path item
draws every rope through the points where the haul plan has them at the scrubbed step, dots
mark the points that moved, and a label by the load says which stroke and how far it has come.
"""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtGui import QBrush, QPainterPath, QPen, QTransform
from PySide6.QtWidgets import QGraphicsItem, QGraphicsPathItem, QGraphicsScene, QGraphicsSimpleTextItem

from sketchpad import theme
from sketchpad.drag_layer import Tracked
from sketchpad.geometry import to_scene
from solver.haul_result import HaulFrame
from solver.model import Rig

#: A point that moved less than this at the scrubbed step gets no dot, m.
MOVED_M = 1e-3
#: Length of the stub each dot is drawn as (a zero-length line draws nothing), m.
DOT_STUB_M = 1e-4


class GhostPath(Tracked, QGraphicsPathItem):
    """A path of the haul preview: ``Tracked`` tells the drag layer when it is added, shown, hidden or restacked,
    so a drag frame need not read the whole scene because the preview exists (what it shows is drawn again
    in every frame's changed area: a path item has no version)."""


class GhostLabel(Tracked, QGraphicsSimpleTextItem):
    """The haul preview's caption: tracked as :class:`GhostPath` is; what it shows is fingerprinted by the drag layer."""


class HaulGhost:
    """Items in ``scene`` showing one haul frame of ``rig``; :meth:`show` moves them, :meth:`hide` hides them."""

    def __init__(self, scene: QGraphicsScene) -> None:
        self.halo = GhostPath()  # a paper-coloured edge under the preview so it reads over the drawing
        halo_pen = QPen(theme.HAUL_GHOST_HALO, theme.HAUL_GHOST_WIDTH_PX + 2 * theme.HAUL_GHOST_HALO_PX)
        halo_pen.setCosmetic(True)
        halo_pen.setCapStyle(Qt.RoundCap)
        halo_pen.setJoinStyle(Qt.RoundJoin)
        self.halo.setPen(halo_pen)
        self.ropes = GhostPath()
        pen = QPen(theme.HAUL_GHOST, theme.HAUL_GHOST_WIDTH_PX)
        pen.setCosmetic(True)
        pen.setCapStyle(Qt.RoundCap)
        pen.setJoinStyle(Qt.RoundJoin)
        self.ropes.setPen(pen)
        self.dots = GhostPath()
        dot_pen = QPen(theme.HAUL_GHOST, theme.HAUL_GHOST_POINT_PX * 2)
        dot_pen.setCosmetic(True)
        dot_pen.setCapStyle(Qt.RoundCap)
        self.dots.setPen(dot_pen)
        self.label = GhostLabel()
        self.label.setFont(theme.font(theme.LABEL_POINT_SIZE, bold=True))
        self.label.setBrush(QBrush(theme.HAUL_GHOST))
        self.label.setFlag(QGraphicsItem.ItemIgnoresTransformations, True)
        self.items = (self.halo, self.ropes, self.dots, self.label)
        for item in self.items:
            item.setZValue(theme.Z_HAUL_GHOST)
            item.setAcceptedMouseButtons(Qt.NoButton)
            item.setVisible(False)
            scene.addItem(item)

    def show(self, rig: Rig, frame: HaulFrame, load_id: str, caption: str) -> None:
        """Draw ``rig``'s ropes through ``frame``'s points (points the frame lacks stay where drawn)."""
        drawn = {p.id: (p.x, p.y) for p in rig.points}
        at = {**drawn, **frame.points}
        ropes = QPainterPath()
        for rope in rig.ropes:
            pts = [at[ps.at] for ps in rope.path if ps.at in at]
            if len(pts) < 2:
                continue
            ropes.moveTo(to_scene(*pts[0]))
            for xy in pts[1:]:
                ropes.lineTo(to_scene(*xy))
        dots = QPainterPath()
        for pid, (x, y) in frame.points.items():
            x0, y0 = drawn.get(pid, (x, y))
            if abs(x - x0) + abs(y - y0) > MOVED_M:
                c = to_scene(x, y)
                dots.moveTo(c)
                dots.lineTo(c.x() + DOT_STUB_M, c.y())  # a round-capped stub: a dot of the pen's width
        self.halo.setPath(ropes)
        self.ropes.setPath(ropes)
        self.dots.setPath(dots)
        self.label.setText(caption)
        if load_id in at:
            self.label.setPos(to_scene(*at[load_id]))
            # beside the load marker, on the side away from its own name label (ignores the view's zoom)
            self.label.setTransform(QTransform.fromTranslate(-self.label.boundingRect().width() - 14, -6))
        for item in self.items:
            item.setVisible(True)

    def hide(self) -> None:
        for item in self.items:
            item.setVisible(False)
