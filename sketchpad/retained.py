"""A device-pixel layer of many small drawables that is redrawn only where they changed since the last frame.

During a drag most overlay labels, arrows and bands are exactly where they were in the last
frame (only the moved part of the rig changes), yet a full repaint draws them all again.  A
:class:`RetainedLayer` keeps the last frame's pixels and, given this frame's drawables in paint
order (each with a key that fixes its pixels and the device rectangle it can touch), clears and
redraws only the rectangles of drawables that appeared or went away, so a frame costs in
proportion to what changed.  The pixels equal those of drawing every drawable afresh in order
(source-over compositing is associative; up to 8-bit rounding), and the layer is composited
where the drawables would have been drawn.  A new frame geometry (zoom, pan, size) redraws it all.

Each layer also keeps the device rectangles where its pixels changed since a consumer last took
them (:meth:`RetainedLayer.take_damage`): a frame drawn over the last one on screen repaints only
there (``sketchpad.drag_layer``).
"""

from __future__ import annotations

from functools import reduce
from itertools import compress
from operator import is_not, itemgetter, not_
from typing import Callable, Iterable, Union

from PySide6.QtCore import QPointF, QRect, Qt
from PySide6.QtGui import QImage, QPainter, QPixmap, QRegion

#: Redraw the whole layer when the changed rectangles cover more than this share of it.
MAX_DIRTY_FRACTION = 0.35
#: Damage kept as more rectangles than this is kept as their bounding rectangle (nobody took it for long).
MAX_DAMAGE_RECTS = 64

#: A drawable's operation: a pixmap blitted with its top-left at a point, or a callable painting
#: (device px, the painter translated to the layer's area).
Op = Union[tuple[QPixmap, QPointF], Callable[[QPainter], None]]


class RetainedLayer:
    """One transparent ARGB image over ``area`` (device px) holding the last frame's drawables."""

    def __init__(self) -> None:
        self.image: QImage | None = None
        self.frame: tuple | None = None
        self._entries: list | None = None
        self._ids: dict[int, tuple] | None = {}  # id -> entry of the last frame's entries (None: not made)
        self._used: QRect | None = None
        self._union: QRect | None = None  # the union of the last frame's entry boxes (device px; None: not known)
        self._damage = QRegion()  # device px whose pixels changed since take_damage
        self.full_redraws = 0  # counters for tests and benchmarks
        self.partial_redraws = 0

    @property
    def keys(self) -> list[tuple]:
        """The last frame's keys in paint order."""
        return [e[0] for e in self._entries or ()]

    def update(self, frame: tuple, area: QRect, entries: Iterable[tuple[tuple, QRect, Op]]) -> QImage:
        """The layer for this frame: ``entries`` are (key, device rect it can touch, op) in paint order.

        The very list object of the last call, handed in again, is taken as unchanged (callers
        build a new list for a new frame and never change one they handed in); so is the very entry
        object of the last call (callers keep the entries of what did not change), and only the
        other entries are compared by key.

        ``frame`` (with ``area``) names everything besides the keys that fixes the pixels (transform,
        size, colours); a different frame redraws everything.  Equal keys must mean equal pixels.
        """
        if not isinstance(entries, list):
            entries = list(entries)
        full_key = (frame, area.x(), area.y(), area.width(), area.height())
        if entries is self._entries and self.image is not None and self.frame == full_key:
            return self.image  # the caller's very list of the last frame (a still frame)
        last, last_ids, last_frame = self._entries, self._ids, self.frame
        self._entries, self._ids = entries, None  # the id map is made when a frame needs it
        if self.image is None or self.frame != full_key or last is None:
            return self._redraw_all(full_key, area, entries, last, last_frame)
        if len(entries) == len(last):
            # place by place, in C: callers keep the entries of what did not change where they were, so the few
            # places holding another object are what went and what came.  An entry that only changed place shows
            # in both with its own key, which _changed_boxes matches: the same difference of keys (a multiset)
            # as comparing every entry, so the same dirty boxes
            differ = list(map(is_not, entries, last))
            gone, came = list(compress(last, differ)), list(compress(entries, differ))
            dirty = _changed_boxes(gone, came)
            if gone or came:
                self._union, self._used = _union_after(self._union, gone, came), None
        else:
            if last_ids is None:
                last_ids = dict(zip(map(id, last), last))
            ids = self._ids = dict(zip(map(id, entries), entries))
            if len(ids) == len(entries) and len(last_ids) == len(last):  # no entry object twice in a list
                gone = list(compress(last_ids.values(), map(not_, map(ids.__contains__, last_ids))))
                came = list(compress(entries, map(not_, map(last_ids.__contains__, ids))))
                dirty = _changed_boxes(gone, came)
                if gone or came:
                    self._union, self._used = _union_after(self._union, gone, came), None
            else:
                dirty = _changed_boxes(last, entries)
                self._union, self._used = None, None
        if not dirty:
            return self.image  # nothing changed
        if sum(b.width() * b.height() for b in dirty) > MAX_DIRTY_FRACTION * area.width() * area.height():
            return self._redraw_all(full_key, area, entries, last, last_frame)
        region = QRegion()
        for b in dirty:
            region = region.united(b)
        region = region.intersected(area)
        if region.isEmpty():
            return self.image
        self.partial_redraws += 1
        self._add_damage(region)
        p = QPainter(self.image)
        p.translate(-area.x(), -area.y())
        p.setClipRegion(region)
        p.setCompositionMode(QPainter.CompositionMode_Source)
        p.fillRect(region.boundingRect(), Qt.transparent)
        p.setCompositionMode(QPainter.CompositionMode_SourceOver)
        p.setRenderHint(QPainter.Antialiasing, True)
        # the entries whose box meets the region, in paint order, picked in C (most of a frame's entries do not)
        for op in map(_OP, compress(entries, map(region.intersects, map(_BOX, entries)))):
            _draw(p, op)
        p.end()
        return self.image

    def _redraw_all(self, full_key: tuple, area: QRect, entries: list, last: list | None, last_frame: tuple | None) -> QImage:
        self.full_redraws += 1
        if self.image is not None:  # the old drawables go wherever they were, the new ones come wherever they are
            self._add_damage(_device_used(last, last_frame))
        self._add_damage(_device_used(entries, full_key))
        image = self.image
        if image is None or image.width() != area.width() or image.height() != area.height():
            image = QImage(max(1, area.width()), max(1, area.height()), QImage.Format_ARGB32_Premultiplied)
        image.fill(Qt.transparent)
        p = QPainter(image)
        p.translate(-area.x(), -area.y())
        p.setRenderHint(QPainter.Antialiasing, True)
        for _key, _box, op in entries:
            _draw(p, op)
        p.end()
        self.image, self.frame = image, full_key
        self._used = self._union = None
        return image

    def used(self) -> QRect:
        """The part of the image (image px) any drawable can touch: outside it the layer is transparent,
        so compositing this part alone is exact (labels on a wide rig cover a band of the view)."""
        if self._used is None:
            if not self._entries or self.image is None or self.frame is None:
                self._used = QRect()
            else:
                _frame, ax, ay, aw, ah = self.frame
                if self._union is None:
                    self._union = reduce(QRect.united, [e[1] for e in self._entries])
                self._used = self._union.translated(-ax, -ay).intersected(QRect(0, 0, aw, ah))
        return self._used

    def clear(self) -> None:
        """Forget the pixels (the next update redraws everything)."""
        if self.image is not None:
            self._add_damage(_device_used(self._entries, self.frame))
        self.image, self.frame, self._entries, self._ids, self._used, self._union = None, None, None, {}, None, None

    def take_damage(self) -> QRegion:
        """The device px where the layer's pixels changed since the last call (or since it was made), and forget them.

        A frame composited over the last one needs redrawing only there, as far as this layer goes.
        """
        damage, self._damage = self._damage, QRegion()
        return damage

    def _add_damage(self, r) -> None:
        self._damage = add_damage(self._damage, r)


def add_damage(damage: QRegion, r) -> QRegion:
    """``damage`` with ``r`` (a QRect or QRegion) added; kept as its bounding rectangle past ``MAX_DAMAGE_RECTS``
    rectangles (damage nobody takes for long must not grow without end)."""
    if r.isEmpty():
        return damage
    d = damage.united(r)
    if d.rectCount() > MAX_DAMAGE_RECTS:
        d = QRegion(d.boundingRect())
    return d


def _union_after(union: QRect | None, gone: list, came: list) -> QRect | None:
    """The union of the entry boxes after ``gone`` left and ``came`` came, from ``union`` before (None: not known).

    Exact, without reading the entries that stayed: when every box that went lies strictly inside ``union``
    on all four sides, each side of ``union`` is reached by an entry that stayed, so the union of those is
    ``union`` itself; otherwise it is not known (None: worked out from all entries when asked)."""
    if union is None:
        return None
    for e in gone:
        b = e[1]
        if b.isNull():
            continue  # QRect.united ignores it
        if b.isEmpty():
            return None  # a negative size: its edges are not left() and right() (none of ours)
        if not (b.left() > union.left() and b.top() > union.top() and b.right() < union.right()
                and b.bottom() < union.bottom()):
            return None
    for e in came:
        union = union.united(e[1])
    return union


def _device_used(entries: list | None, frame: tuple | None) -> QRect:
    """Device px any of ``entries`` can touch inside the layer's area named by ``frame`` (empty without both)."""
    if not entries or frame is None:
        return QRect()
    _frame, ax, ay, aw, ah = frame
    return reduce(QRect.united, [e[1] for e in entries]).intersected(QRect(ax, ay, aw, ah))


def _changed_boxes(gone: list, came: list) -> list[QRect]:
    """The boxes of the drawables in ``gone`` and ``came`` whose keys the other list does not match, one for one
    (a drawable shown twice is two drawables: one of them going leaves the other)."""
    if not gone or not came:
        return [e[1] for e in gone] + [e[1] for e in came]
    left: dict = {}
    for e in gone:
        k = e[0]
        left[k] = left.get(k, 0) + 1
    dirty = []
    for e in came:
        k = e[0]
        n = left.get(k, 0)
        if n:
            left[k] = n - 1  # an equal drawable was there: same pixels
        else:
            dirty.append(e[1])
    for e in gone:
        k = e[0]
        n = left.get(k, 0)
        if n:
            left[k] = n - 1
            dirty.append(e[1])
    return dirty


_BOX, _OP = itemgetter(1), itemgetter(2)


def _draw(p: QPainter, op: Op) -> None:
    if callable(op):
        op(p)
    else:
        p.drawPixmap(op[1], op[0])
