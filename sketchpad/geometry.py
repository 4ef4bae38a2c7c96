"""Site metres <-> scene coordinates: the scene is in metres with y pointing down (scene y = -site y)."""

from __future__ import annotations

from PySide6.QtCore import QPointF


def to_scene(x: float, y: float) -> QPointF:
    """Site (x east, y north, metres) to a scene point."""
    return QPointF(float(x), -float(y))


def to_site(p: QPointF) -> tuple[float, float]:
    """A scene point to site (x, y) metres."""
    return (float(p.x()), -float(p.y()))
