"""The symbol key printed on every page that has a drawing: each symbol drawn by the plan's own item code.

Point markers come from :func:`sketchpad.items.make_point_item` (``paint_marker``), pass glyphs
(pulley, capture, rope grab, sliding ring, edge) from a small :class:`sketchpad.items.RopeItem`
laid out in pixels, the force arrow from :class:`sketchpad.items.ForceItem`, danger zones from
``theme.zone_brushes`` and the rope-use classes from :mod:`sketchpad.pages.greyscale` (colour band
plus the rail pattern that carries the same meaning without colour).  So the key cannot drift
from what the plan draws.
"""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QFontMetricsF, QPainter

from sketchpad import theme
from solver.model import Force, Pass, Point, Rope

#: The words of every entry, in key order (the contract the page tests read).
ENTRIES: tuple[tuple[str, str], ...] = (
    ("anchor", "anchor"), ("load", "load"), ("haul", "haul team"), ("point", "free point"), ("person", "person"),
    ("pulley", "pulley"), ("capture", "capture"), ("grab", "rope grab / knot"), ("sliding", "sliding ring"),
    ("edge", "edge"), ("force", "force"), ("bight", "inside of bight"), ("recoil", "recoil band"),
)
KEY_TITLE = "Key"
GLYPH_W = 26.0  # px given to each symbol
ROW_H = 22.0
TEXT_PT = 7.0
POINT_KINDS = ("anchor", "load", "haul", "point", "person")
PASS_KINDS = ("pulley", "capture", "grab", "sliding", "edge")


def _font():
    return theme.page_font(TEXT_PT)


def paint_point_symbol(painter: QPainter, centre: QPointF, kind: str) -> None:
    """A point kind's marker as the plan draws it."""
    from sketchpad.items import make_point_item

    item = make_point_item(Point(id="key", kind=kind, x=0.0, y=0.0))
    painter.save()
    painter.translate(centre)
    scale = min(1.0, 9.0 / theme.POINT_RADIUS_PX[kind])
    painter.scale(scale, scale)
    item.paint_marker(painter)
    painter.restore()


def _pass_item(how: str):
    """A three-pass rope (tied, ``how``, tied) laid out in px with only its middle glyph kept."""
    from PySide6.QtCore import QPointF as P

    from sketchpad.items import RopeItem

    middle = "tied" if how == "grab" else how
    rope = Rope(id="key", material="key", path=(Pass("a"), Pass("m", middle, None), Pass("b")))
    item = RopeItem(rope)
    positions = {"a": P(-40.0, 14.0), "m": P(0.0, 0.0), "b": P(40.0, 14.0)}
    item.set_rope(rope, positions, {"a": "point", "m": "point", "b": "point"}, theme.rope_colour(0), 1.0)
    item._glyphs = [g for g in item._glyphs if abs(g[1].x()) < 20]  # the middle glyph only
    item._label = ""
    return item


def paint_pass_symbol(painter: QPainter, centre: QPointF, how: str) -> None:
    """A pass glyph (pulley, capture, grab, sliding ring, edge) as the plan's rope item draws it."""
    item = _pass_item(how)
    painter.save()
    painter.setClipRect(QRectF(centre.x() - GLYPH_W / 2, centre.y() - ROW_H / 2, GLYPH_W, ROW_H))
    if item._glyphs:
        c = item._glyphs[0][1]
        painter.translate(centre - c)
        item.paint(painter, None)
    else:  # a capture on a build whose rope item has no capture glyph: the sheave and the grab's cam
        item = _pass_item("pulley")
        c, r, d = item._glyphs[0][1], item._glyphs[0][2], item._glyphs[0][3]
        painter.translate(centre - c)
        item.paint(painter, None)
        painter.setPen(Qt.NoPen)
        painter.setBrush(item.colour)
        painter.drawEllipse(c + d * (r * 1.05), r * 0.42, r * 0.42)
    painter.restore()


def paint_force_symbol(painter: QPainter, centre: QPointF) -> None:
    """The drawn-force arrow as the plan's force item draws it (shortened)."""
    from sketchpad.items import ForceItem

    item = ForceItem(0, Force(at="key", magnitude_N=1.0, direction_deg=0.0))
    item._text = "F"  # an empty label would write an empty text path into a PDF
    painter.save()
    left = centre.x() - GLYPH_W / 2 + 1
    painter.setClipRect(QRectF(left - 1, centre.y() - ROW_H / 2, theme.FORCE_LENGTH_PX * 0.5 + 2, ROW_H))  # arrow only
    painter.translate(left, centre.y())
    painter.scale(0.5, 0.5)
    item.paint(painter, None)
    painter.restore()


def paint_zone_symbol(painter: QPainter, centre: QPointF, kind: str) -> None:
    """A danger-zone swatch: its translucent fill and its hatch (the hatch direction tells the two apart)."""
    fill, hatch = theme.zone_brushes(kind)
    box = QRectF(centre.x() - 10, centre.y() - 6, 20, 12)
    painter.save()
    painter.setPen(theme.pixel_pen(theme.ZONE_COLOURS[kind], 1.0, Qt.DashLine))
    painter.setBrush(fill)
    painter.drawRect(box)
    painter.setBrush(hatch)
    painter.drawRect(box)
    painter.restore()


def paint_symbol(painter: QPainter, centre: QPointF, kind: str) -> None:
    """One entry's symbol centred on ``centre`` (px)."""
    painter.setRenderHint(QPainter.Antialiasing, True)
    if kind in POINT_KINDS:
        paint_point_symbol(painter, centre, kind)
    elif kind in PASS_KINDS:
        paint_pass_symbol(painter, centre, kind)
    elif kind == "force":
        paint_force_symbol(painter, centre)
    elif kind in ("bight", "recoil"):
        paint_zone_symbol(painter, centre, kind)
    else:
        from sketchpad.pages.greyscale import paint_class_swatch

        paint_class_swatch(painter, QRectF(centre.x() - 11, centre.y() - 5, 22, 10), kind)


def entries(with_classes: bool = True) -> list[tuple[str, str]]:
    """Every key entry (kind, words): the symbols, then the rope-use classes."""
    from sketchpad.pages.greyscale import class_entries

    return list(ENTRIES) + (class_entries() if with_classes else [])


def paint_symbol_key(painter: QPainter, rect: QRectF, with_classes: bool = True, draw: bool = True) -> float:
    """The key in rows inside ``rect``'s width from its top; returns the height used (px)."""
    font = _font()
    fm = QFontMetricsF(font)
    x, y = rect.left(), rect.top()
    painter.save()
    painter.setFont(font)
    for kind, words in entries(with_classes):
        w = GLYPH_W + 3 + fm.horizontalAdvance(words) + 10
        if x + w > rect.right() and x > rect.left():
            x, y = rect.left(), y + ROW_H
        if draw:
            paint_symbol(painter, QPointF(x + GLYPH_W / 2, y + ROW_H / 2), kind)
            painter.setFont(font)
            painter.setPen(theme.PAGE_INK)
            painter.drawText(QPointF(x + GLYPH_W + 3, y + ROW_H / 2 + fm.ascent() / 2 - 1), words)
        x += w
    painter.restore()
    return y + ROW_H - rect.top()


def symbol_key_height(painter: QPainter, width: float, with_classes: bool = True) -> float:
    """Height the key takes in ``width`` px."""
    return paint_symbol_key(painter, QRectF(0, 0, width, 0), with_classes, draw=False)


__all__ = ["ENTRIES", "paint_symbol_key", "symbol_key_height", "paint_symbol", "entries"]
