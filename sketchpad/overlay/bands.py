"""Utilization bands: each rope piece, at its solved position, under a translucent band coloured by its
utilization (tension x safety factor / MBS, ramp in ``theme.UTIL_RAMP``), and a ring at each solved point
the solver moved off its drawn place.  The band half of :class:`sketchpad.overlay.force_item.ForceItem`.
"""

from __future__ import annotations

import math
import operator
from itertools import compress
from operator import is_not
from typing import Mapping

from PySide6.QtCore import QPointF, QRect, Qt
from PySide6.QtGui import QColor, QImage, QPainter, QPainterPath, QPen, QPixmap, QTransform

from sketchpad import theme
from sketchpad.overlay.labels import SLACK_N, Entries, moved_names, scene_positions
from sketchpad.overlay.layer import plain_raster_transform
from sketchpad.retained import RetainedLayer, add_damage
from sketchpad.rope_bows import site_bows
from solver.model import Rig
from solver.result import Result

#: Utilization buckets for the band paths (one path and pen per bucket).
BAND_BUCKETS = 24
BAND_MAX_UTIL = 1.6


def _bucket_colours() -> tuple[list[int], dict[int, int]]:
    """Opaque colour (rgba) of each utilization bucket, and for each colour the first bucket that has it."""
    rgba = [theme.utilization_colour(k / BAND_BUCKETS * BAND_MAX_UTIL).rgba() for k in range(BAND_BUCKETS + 1)]
    first: dict[int, int] = {}
    for k, c in enumerate(rgba):
        first.setdefault(c, k)
    return rgba, first


_BUCKET_RGBA, _BUCKET_ORDER = _bucket_colours()
#: band width (px) of each bucket colour: heavier with use, so greyscale keeps the meaning (theme.band_width_px)
_BUCKET_WIDTH = {c: theme.band_width_px(k / BAND_BUCKETS * BAND_MAX_UTIL) for c, k in _BUCKET_ORDER.items()}


#: The fields of a band piece's (entry, x0, y0, x1, y1) (``ForceItem._retained_bands``).
_PIECE_FIELDS = tuple(operator.itemgetter(i) for i in range(5))


def _band_ends(outs: list, extras: list, bows: dict) -> tuple[dict[int, list], list[int]]:
    """Each colour's band ends in the order of the segments (``outs``: per segment (key, a, b) or None; ``extras``:
    its colour or None), a bowed piece (``bows``: key -> its hidden points) as one short piece per bow segment,
    and per segment where its first end sits in its colour's list."""
    by_colour: dict[int, list] = {}
    where = [0] * len(outs)
    for i, (out, rgba) in enumerate(zip(outs, extras)):
        if out is None or rgba is None:
            continue
        ends = by_colour.get(rgba)
        if ends is None:
            ends = by_colour[rgba] = []
        where[i] = len(ends)
        inner = bows.get(out[0])
        if inner:  # a piece the current bows: its band follows the bow, piece by piece
            run = (out[1], *inner, out[2])
            for a, b in zip(run, run[1:]):
                ends.append(a)
                ends.append(b)
            continue
        ends.append(out[1])
        ends.append(out[2])
    return by_colour, where


class BandState:
    """What :meth:`ForceItem.set_bands` keeps between calls: each piece (key, scene ends) with its colour, where its
    ends sit in its colour's list, and the ring of each solved point the solver moved off its drawn place."""

    def __init__(self) -> None:
        self.pos_names = self.pos_values = self.drawn_names = self.drawn_values = None
        self.pieces = Entries()  # per segment: its piece and colour (rgba, None for slack)
        self.pieces_out: list | None = None  # the pieces as set_bands last returned them
        self.where: list[int] = []  # per segment: index of its first end in its colour's list
        self.by_colour: dict[int, list] = {}
        self.rings = Entries()  # per solved point: its solved place when off the drawn one, else None
        self.bowed = False  # the last bands followed a bow: the next are laid out afresh
        self.bows: tuple = (None, {})  # (Result.water, its bows in scene metres) of the last call


class BandPainting:
    """The band half of :class:`sketchpad.overlay.force_item.ForceItem` (its state is made in ForceItem.__init__)."""

    def set_bands(self, rig: Rig, result: Result,
                  pos: Mapping[str, tuple[float, float]] | None = None) -> list[tuple[object, tuple[float, float], tuple[float, float]]]:
        """One path per utilization colour along the solved pieces; returns the pieces (key, a, b) in scene metres.

        Buckets of the same colour (the ramp stops at its last colour) share one band, drawn once.
        ``pos`` (scene positions of every point, solved ones solved) saves building them again; a
        band whose pieces are those of the last call keeps its path.
        """
        if pos is None:
            pos = scene_positions(rig, result)
        st = self._band_state
        names, values = tuple(pos), tuple(pos.values())
        moved = moved_names(names, values, st.pos_names, st.pos_values)  # points whose scene tuple is another object
        st.pos_names, st.pos_values = names, values
        pos_get = pos.get
        colours = _BUCKET_RGBA
        scale = BAND_BUCKETS / BAND_MAX_UTIL

        def piece(_i, s, _old):
            read = (s.from_point, s.to_point)
            a, b = pos_get(read[0]), pos_get(read[1])
            if a is None or b is None:
                return read, None, None, None
            rgba = None if s.tension_N <= SLACK_N else \
                colours[int(round(min(max(s.utilization, 0.0), BAND_MAX_UTIL) * scale))]
            return read, None, ((s.rope, s.index), a, b), rgba

        # a piece whose record and ends are the last call's objects keeps its piece tuple and colour (the same
        # objects: the placer's obstacle cache compares them by identity)
        entries = st.pieces
        old_outs, old_extras = entries.outs, entries.extras
        todo = entries.update(None, result.segments, moved, piece)
        outs, extras = entries.outs, entries.extras
        if todo is not None and not todo and st.pieces_out is not None:
            pieces = st.pieces_out
        else:
            pieces = st.pieces_out = list(filter(None, outs))
        # the ends of each colour's pieces, in the order of the segments; a drag step that keeps every
        # piece's colour puts the moved ends in place of the old ones
        bows = self._band_bows(result)
        if not bows and not st.bowed and todo is not None and all(
                extras[i] == old_extras[i] and (outs[i] is None) == (old_outs[i] is None) for i in todo):
            by_colour = dict(st.by_colour)
            where = st.where
            copied: set = set()
            for i in todo:
                rgba, out = extras[i], outs[i]
                if rgba is None or out is None:
                    continue
                if rgba not in copied:
                    by_colour[rgba] = list(by_colour[rgba])
                    copied.add(rgba)
                k = where[i]
                by_colour[rgba][k:k + 2] = out[1:]
        else:
            by_colour, st.where = _band_ends(outs, extras, bows)
        st.bowed = bool(bows)
        st.by_colour = by_colour
        old = self._band_paths
        self._band_paths = {}
        self.bands = []
        self.band_ends = []
        for rgba in sorted(by_colour, key=_BUCKET_ORDER.__getitem__):
            ends = by_colour[rgba]
            kept = old.get(rgba)
            moved_ends = None if kept is None or len(kept[0]) != len(ends) else \
                list(compress(range(len(ends)), map(is_not, ends, kept[0])))
            if kept is not None and kept[0] == ends:
                band = kept[1]
            elif moved_ends is not None and len(ends) == kept[1][1].elementCount() and all(
                    ends[k] != ends[k ^ 1] for k in moved_ends):
                # the same number of pieces and none of zero length (a path drops a line to where it already is;
                # without one, element k is end k): the kept path with the moved ends set, as one made afresh
                path = QPainterPath(kept[1][1])
                for k in moved_ends:
                    path.setElementPositionAt(k, *ends[k])
                band = (kept[1][0], path)
            else:
                path = QPainterPath()
                for i in range(0, len(ends) - 1, 2):
                    path.moveTo(*ends[i])
                    path.lineTo(*ends[i + 1])
                colour = QColor.fromRgba(rgba)
                colour.setAlpha(theme.OVERLAY_BAND_ALPHA)
                band = (theme.cosmetic_pen(colour, _BUCKET_WIDTH[rgba], Qt.SolidLine), path)
            self._band_paths[rgba] = (ends, band)
            self.bands.append(band)
            self.band_ends.append(ends)
        drawn = self._drawn_positions(rig)
        drawn_names, drawn_values = tuple(drawn), tuple(drawn.values())
        changed = moved_names(drawn_names, drawn_values, st.drawn_names, st.drawn_values)
        st.drawn_names, st.drawn_values = drawn_names, drawn_values
        solved = tuple(result.points)

        def ring(i, _xy, _old):
            pid = solved[i]
            at, was = pos[pid], drawn.get(pid)
            return (pid,), None, (at if was is not None and at != was and math.dist(at, was) > 1e-6 else None), None

        # a solved point whose solved place (the solver's tuple, which fixes its scene tuple) and drawn place
        # are the objects of the last call keeps its ring
        st.rings.update(solved, tuple(result.points.values()), changed, ring)
        self.moved_points = list(filter(None, st.rings.outs))
        return pieces

    def _band_bows(self, result: Result) -> dict:
        """(rope, piece) -> interior scene points of each piece ``result``'s water bowed (kept for the same water)."""
        water = getattr(result, "water", None)
        if water is None or not water.ropes:
            return {}
        kept = self._band_state.bows
        if kept[0] is water:
            return kept[1]
        bows = {key: tuple((x, -y) for x, y in line[1:-1]) for key, line in site_bows(result).items()}
        self._band_state.bows = (water, bows)
        return bows

    def _drawn_positions(self, rig: Rig) -> dict[str, tuple[float, float]]:
        """Scene positions of the points as drawn (kept while ``rig.points`` is the same tuple)."""
        if self._drawn[0] is not rig.points:
            self._drawn = (rig.points, dict(zip(self._point_ids.values(rig.points),
                                                self._drawn_xy.values(rig.points))))
        return self._drawn[1]

    def _retained_bands(self, m11: float, m22: float, dx: float, dy: float, area: QRect):
        """(image, top-left, alpha) per utilization band, each a retained layer of opaque pieces laid down
        at the band's alpha (see :meth:`_paint_bands_layered`); None when the layers would be too large.

        A band whose pieces are those of the last frame keeps its entries and area; within a band that
        changed, pieces that did not keep theirs (a drag step moves a few pieces of one or two bands).
        """
        if len(self.band_ends) != len(self.bands):
            return None
        frame = (m11, m22, dx, dy)
        area_key = (area.x(), area.y(), area.width(), area.height())
        memo = self._band_memo if self._band_memo.get("_frame") == (frame, area_key) else {}
        new: dict = {"_frame": (frame, area_key)}
        out = []
        total = 0
        live = set()
        for (pen, _path), ends in zip(self.bands, self.band_ends):
            colour = QColor(pen.color())
            alpha = colour.alphaF()
            colour.setAlpha(255)
            rgba = colour.rgba()
            kept = memo.get(rgba)
            width = _BUCKET_WIDTH.get(rgba, theme.OVERLAY_BAND_PX)
            half = width / 2.0
            pad = int(math.ceil(half)) + 3
            if kept is not None and kept[0] == ends:
                _ends, pieces, entries, r, hits = kept
            else:
                flat = self._flat_pens.get(rgba)
                if flat is None:
                    flat = self._flat_pens[rgba] = QPen(colour, width, Qt.SolidLine, Qt.FlatCap, Qt.RoundJoin)

                def piece(sa, ta, sb, tb, flat=flat, rgba=rgba, half=half, pad=pad):
                    a, b = (sa * m11 + dx, ta * m22 + dy), (sb * m11 + dx, tb * m22 + dy)
                    x0, y0 = math.floor(min(a[0], b[0])) - pad, math.floor(min(a[1], b[1])) - pad
                    w, h = math.ceil(abs(a[0] - b[0])) + 2 * pad + 1, math.ceil(abs(a[1] - b[1])) + 2 * pad + 1
                    return (((a, b), QRect(x0, y0, w, h),
                             lambda p, a=a, b=b, f=flat, c=rgba: self._draw_band_piece(p, f, c, half, a, b)),
                            x0, y0, x0 + w - 1, y0 + h - 1)

                if kept is not None and len(kept[0]) == len(ends):
                    # the same number of pieces: set_bands hands on the very end tuples of a piece that did
                    # not move, so only pieces whose ends are other objects are made again
                    old_ends, hits, pieces = kept[0], list(kept[4]), None
                    for i in range(0, len(ends) - 1, 2):
                        ea, eb = ends[i], ends[i + 1]
                        if ea is not old_ends[i] or eb is not old_ends[i + 1]:
                            hits[i // 2] = piece(*ea, *eb)
                else:
                    old_pieces = (kept[1] or {}) if kept is not None else {}
                    pieces = {}
                    for i in range(0, len(ends) - 1, 2):
                        k = (ends[i], ends[i + 1])
                        hit = old_pieces.get(k)
                        if hit is None:
                            hit = piece(*k[0], *k[1])
                        pieces[k] = hit
                    hits = list(pieces.values()) if len(pieces) * 2 == len(ends) else \
                        [pieces[(ends[i], ends[i + 1])] for i in range(0, len(ends) - 1, 2)]  # a piece drawn twice
                if not hits:
                    continue
                # a piece's (entry, x0, y0, x1, y1) fields, read in C over all pieces (~25 us a frame less)
                _first, _x0, _y0, _x1, _y1 = _PIECE_FIELDS
                entries = list(map(_first, hits))
                # the layer's area snapped to 64 px, so a piece moving a little does not resize it
                g = 64
                x0, y0 = min(map(_x0, hits)) // g * g, min(map(_y0, hits)) // g * g
                x1, y1 = max(map(_x1, hits)) // g * g + g, max(map(_y1, hits)) // g * g + g
                r = QRect(x0, y0, x1 - x0, y1 - y0).intersected(area)
            new[rgba] = (list(ends), pieces, entries, r, hits)
            if r.isEmpty():
                continue
            total += r.width() * r.height()
            if total > 2 * area.width() * area.height():
                self._band_memo = new
                return None  # zoomed far in with many bands: layers would cost more than they save
            layer = self._band_layers.get(rgba)
            if layer is None:
                layer = self._band_layers[rgba] = RetainedLayer()
            live.add(rgba)
            out.append((layer.update((m11, m22, dx, dy, rgba), r, entries), r.topLeft(), alpha))
        for rgba in [k for k in self._band_layers if k not in live]:
            gone = self._band_layers.pop(rgba)
            gone.clear()  # its pixels leave the frame: they are damage
            self._lost_damage = add_damage(self._lost_damage, gone.take_damage())
        self._band_memo = new
        return out

    def _draw_band_piece(self, p: QPainter, flat: QPen, rgba: int, half: float, a, b) -> None:
        """One opaque band piece (device px): a flat-capped stroke and a disc at each end (the round caps)."""
        p.setPen(flat)
        p.drawLine(QPointF(*a), QPointF(*b))
        c = int(math.ceil(half)) + 1
        for x, y in (a, b):
            ix, iy = math.floor(x), math.floor(y)
            fx, fy = round((x - ix) * 4) / 4, round((y - iy) * 4) / 4
            if fx >= 1.0:
                ix, fx = ix + 1, 0.0
            if fy >= 1.0:
                iy, fy = iy + 1, 0.0
            p.drawPixmap(ix - c, iy - c, self._band_dot(rgba, fx, fy, half))

    def _paint_bands_layered(self, painter: QPainter) -> bool:
        """The utilization bands, drawn opaque into a layer per band and laid down at the band's alpha.

        Stroking a wide translucent path with round caps costs Qt ~4 ms for a 50-rope rig; the
        same shape is a flat-capped stroke plus a disc at every piece end, which is ~5x cheaper
        when drawn opaque (overlaps merge, so the layer still lays each band down once, as the
        single translucent path did).  Only for raster painting at 1:1 device pixels with a
        plain zoom; returns False (and draws nothing) otherwise, e.g. for SVG or PDF.
        """
        if len(self.band_ends) != len(self.bands) or not self.bands:
            return False
        t = plain_raster_transform(painter)
        if t is None:
            return False
        device = painter.device()
        area = QRect(0, 0, device.width(), device.height())
        rects = []
        for _pen, path in self.bands:
            r = t.mapRect(path.controlPointRect()).toAlignedRect().adjusted(-10, -10, 10, 10).intersected(area)
            rects.append(r)
        if sum(r.width() * r.height() for r in rects) > 2 * area.width() * area.height():
            return False  # zoomed far in with many bands: layers would cost more than they save
        for (pen, path), ends, r in zip(self.bands, self.band_ends, rects):
            if r.isEmpty():
                continue
            half = pen.widthF() / 2.0
            colour = QColor(pen.color())
            alpha = colour.alphaF()
            colour.setAlpha(255)
            layer = QImage(r.size(), QImage.Format_ARGB32_Premultiplied)
            layer.fill(Qt.transparent)
            lp = QPainter(layer)
            lp.setRenderHint(QPainter.Antialiasing, True)
            lp.setTransform(t * QTransform.fromTranslate(-r.left(), -r.top()))
            flat = QPen(colour, pen.widthF(), Qt.SolidLine, Qt.FlatCap, Qt.RoundJoin)
            flat.setCosmetic(True)
            lp.setPen(flat)
            lp.drawPath(path)
            lp.resetTransform()
            rgba = colour.rgba()
            for xy in ends:  # the round caps: one anti-aliased disc per end, placed to a quarter pixel
                d = t.map(QPointF(*xy))
                x, y = d.x() - r.left(), d.y() - r.top()
                ix, iy = math.floor(x), math.floor(y)
                fx, fy = round((x - ix) * 4) / 4, round((y - iy) * 4) / 4
                c = int(math.ceil(half)) + 1
                lp.drawPixmap(ix - c, iy - c, self._band_dot(rgba, fx, fy, half))
            lp.end()
            painter.save()
            painter.resetTransform()
            painter.setOpacity(alpha)
            painter.drawImage(r.topLeft(), layer)
            painter.restore()
        return True

    def _band_dot(self, rgba: int, fx: float, fy: float, radius: float) -> QPixmap:
        """An opaque disc of a band's colour centred (c + fx, c + fy) px in a 2c + 1 px pixmap, c = ceil(radius) + 1."""
        key = (rgba, fx, fy, radius)
        pix = self._band_dots.get(key)
        if pix is None:
            if len(self._band_dots) > 2000:
                self._band_dots.clear()
            c = int(math.ceil(radius)) + 1
            image = QImage(2 * c + 1, 2 * c + 1, QImage.Format_ARGB32_Premultiplied)
            image.fill(Qt.transparent)
            p = QPainter(image)
            p.setRenderHint(QPainter.Antialiasing, True)
            p.setPen(Qt.NoPen)
            p.setBrush(QColor.fromRgba(rgba))
            p.drawEllipse(QPointF(c + fx, c + fy), radius, radius)
            p.end()
            pix = self._band_dots[key] = QPixmap.fromImage(image)
        return pix
