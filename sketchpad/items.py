"""Canvas items: one QGraphicsItem subclass per kind of thing in the sketch, each a view of one model id.

Items never edit the model and never change geometry inside ``paint()``; the
scene (``sketchpad.canvas.SketchScene``) creates them, feeds them model data
through ``set_*`` methods and removes them by key.  Point markers, force arrows
and labels keep their size in screen pixels; rope paths and site features live
in metres.  Rope items also need the current metres-per-pixel (``scale_m_per_px``)
so that pulleys, rings, knots and edge wedges keep a readable size at any zoom.
"""

from __future__ import annotations

import itertools
import logging
import math
from typing import Iterable, Sequence

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import (
    QBrush,
    QColor,
    QFontMetricsF,
    QImage,
    QPainter,
    QPainterPath,
    QPainterPathStroker,
    QPaintEngine,
    QPen,
    QPixmap,
    QPolygonF,
    QTransform,
)
from PySide6.QtWidgets import QGraphicsItem, QGraphicsSimpleTextItem, QStyleOptionGraphicsItem

from sketchpad import theme
from sketchpad.drag_layer import Tracked, Versioned
from sketchpad.geometry import to_scene
from sketchpad.plain_text import tip as plain_tip
from sketchpad.rope_bows import with_bows
from sketchpad.short_text import drawn
from solver.model import Feature, Force, Point, Rope

log = logging.getLogger(__name__)

# --- display units (solver.units when present) --------------------------------------------
try:  # pragma: no cover - depends on which helper has landed
    from solver.units import format_force as _format_force
    from solver.units import format_length as _format_length
except ImportError:  # TODO(lead): drop this fallback once solver/units.py is merged
    _format_force = None
    _format_length = None

FT_IN_M = 0.3048  # NIST SP 811, exact by definition
LBF_IN_N = 4.4482216152605  # NIST SP 811


def fmt_length(metres: float, unit: str) -> str:
    """A length for a person to read, in ``unit`` ("m" or "ft")."""
    if _format_length is not None:
        return _format_length(metres, unit)
    if unit == "ft":
        return f"{metres / FT_IN_M:.1f} ft"
    return f"{metres:.2f} m"


def fmt_force(newtons: float, unit: str) -> str:
    """A force for a person to read, in ``unit`` ("N", "kN" or "lbf")."""
    if _format_force is not None:
        return _format_force(newtons, unit)
    if unit == "kN":
        return f"{newtons / 1000.0:.2f} kN"
    if unit == "lbf":
        return f"{newtons / LBF_IN_N:.0f} lbf"
    return f"{newtons:.0f} N"


# --- small vector helpers (scene coordinates) ------------------------------------------------
def _left(v: QPointF) -> QPointF:
    return QPointF(-v.y(), v.x())


def _unit_xy(x: float, y: float) -> tuple[float, float]:
    """The unit vector along (x, y); (1, 0) for a zero vector."""
    n = math.hypot(x, y)
    return (1.0, 0.0) if n < 1e-12 else (x / n, y / n)


def _tangent_xy(c: tuple, dx: float, dy: float, inside: tuple, r: float) -> tuple[float, float]:
    """Where a rope travelling along (dx, dy) touches a sheave at ``c`` on the side away from ``inside``."""
    nx, ny = -dy, dx
    if nx * inside[0] + ny * inside[1] > 0:
        nx, ny = -nx, -ny
    return (c[0] + nx * r, c[1] + ny * r)


def _arc_xy(cx: float, cy: float, r: float, a: tuple, b: tuple, inside: tuple, steps: int = 10) -> list[tuple[float, float]]:
    """Points (x, y) along the sheave at (cx, cy) from ``a`` to ``b`` going round the outside (away from ``inside``)."""
    a0 = math.atan2(a[1] - cy, a[0] - cx)
    a1 = math.atan2(b[1] - cy, b[0] - cx)
    sweep = (a1 - a0) % (2 * math.pi)
    outside = math.atan2(-inside[1], -inside[0])
    if math.cos(a0 + (sweep - 2 * math.pi) / 2 - outside) > math.cos(a0 + sweep / 2 - outside):
        sweep -= 2 * math.pi
    return [(cx + math.cos(a0 + sweep * t / steps) * r, cy + math.sin(a0 + sweep * t / steps) * r)
            for t in range(1, steps + 1)]


# --- cached text and glyph rendering ----------------------------------------------------------
# A haloed label is nine text draws, and a 50-rope rig has 150 labels on screen, so labels and point
# markers are rendered once into small pixmaps (keyed by what they show and by the quarter-pixel phase
# they land on) and blitted on every repaint.  Only screen-like raster painting at pixel scale uses the
# pixmaps; SVG/PDF exports and scaled renders draw the same text as vectors.
HALO_WIDTH_PX = 3.0
PHASES = 4  # sub-pixel positions per pixel a cached pixmap is rendered for (keeps markers centred)
CACHE_MAX = 4000  # cached paths/pixmaps kept before the caches are cleared
_pixmaps: dict[tuple, tuple[QPixmap, float, float]] = {}
_metrics: dict[str, QFontMetricsF] = {}
_font_keys: dict[int, tuple[object, str]] = {}
_advances: dict[tuple, float] = {}


def drop_oldest(cache: dict, fraction: float = 0.25) -> None:
    """Forget the oldest ``fraction`` of a full cache (insertion order), not all of it: the glyphs and
    labels still on screen are not all rendered again in one frame (a hitch in a long drag)."""
    for key in list(itertools.islice(cache, max(1, int(len(cache) * fraction)))):
        del cache[key]


def font_key(font) -> str:
    """``font.key()``, remembered per font object (theme fonts are long-lived; the entry keeps it alive)."""
    hit = _font_keys.get(id(font))
    if hit is None or hit[0] is not font:
        if len(_font_keys) > CACHE_MAX:
            _font_keys.clear()
        hit = _font_keys[id(font)] = (font, font.key())
    return hit[1]


def font_metrics(font) -> QFontMetricsF:
    """QFontMetricsF of ``font``, built once per font."""
    key = font_key(font)
    fm = _metrics.get(key)
    if fm is None:
        fm = _metrics[key] = QFontMetricsF(font)
    return fm


def text_advance(text: str, font) -> float:
    """``QFontMetricsF(font).horizontalAdvance(text)``, remembered per (text, font): a rope laid out again on
    every drag step measures the same name each time (~40 us of text shaping per call)."""
    key = (text, font_key(font))
    w = _advances.get(key)
    if w is None:
        if len(_advances) > CACHE_MAX:
            drop_oldest(_advances)
        w = _advances[key] = font_metrics(font).horizontalAdvance(text)
    return w


def _paint_halo_text(painter: QPainter, text: str, font, colour: QColor) -> None:
    """The halo as the text drawn in paper colour around itself (8 offsets of half the halo width), then the text.

    Stroking each label's glyph outline with a wide pen cost far more than the labels' number: a PDF
    clips the stroke as a path (900 labels of 48 characters took 8 s) and a screen pixmap of a long
    label took 3 ms; text stays text (linear, small, selectable in a PDF).
    """
    painter.setFont(font)
    painter.setPen(theme.LABEL_HALO)
    for dx, dy in _HALO_OFFSETS:
        painter.drawText(QPointF(dx, dy), text)
    painter.setPen(colour)
    painter.drawText(QPointF(0.0, 0.0), text)


_HALO_OFFSETS = tuple((0.5 * HALO_WIDTH_PX * math.cos(k * math.pi / 4), 0.5 * HALO_WIDTH_PX * math.sin(k * math.pi / 4))
                      for k in range(8))


def pixel_dpr(painter: QPainter, scale: float = 1.0) -> float | None:
    """The device pixel ratio when ``painter`` draws raster pixels at ``scale`` x (world units -> pixels)
    with no rotation, shear or window mapping (the canvas on screen, PNG exports); else None (vectors)."""
    engine = painter.paintEngine()
    if engine is None or engine.type() != QPaintEngine.Raster or painter.viewTransformEnabled():
        return None
    t = painter.worldTransform()
    if t.m12() != 0.0 or t.m21() != 0.0 or t.isAffine() is False:
        return None
    if abs(t.m11() * scale - 1.0) > 1e-6 or abs(t.m22() * scale - 1.0) > 1e-6:
        return None
    return float(painter.device().devicePixelRatioF())


def _render(key: tuple, bounds: QRectF, dpr: float, phase: tuple[float, float], draw) -> tuple[QPixmap, float, float]:
    """A cached pixmap of ``draw(painter)`` (shapes around the origin within ``bounds``) rendered at
    ``dpr`` with the origin ``phase`` device pixels past a pixel corner; returns (pixmap, left, top) with
    left/top the pixmap's corner relative to the origin's pixel corner, in logical pixels."""
    full = (key, dpr, phase)
    hit = _pixmaps.get(full)
    if hit is not None:
        return hit
    if len(_pixmaps) > CACHE_MAX:
        drop_oldest(_pixmaps)
    left = math.floor(bounds.left() * dpr + phase[0]) - 1
    top = math.floor(bounds.top() * dpr + phase[1]) - 1
    w = max(1, math.ceil(bounds.right() * dpr + phase[0]) + 1 - left)
    h = max(1, math.ceil(bounds.bottom() * dpr + phase[1]) + 1 - top)
    image = QImage(w, h, QImage.Format_ARGB32_Premultiplied)
    image.fill(Qt.transparent)
    p = QPainter(image)
    p.setRenderHint(QPainter.Antialiasing, True)
    p.translate(phase[0] - left, phase[1] - top)
    p.scale(dpr, dpr)
    draw(p)
    p.end()
    pix = QPixmap.fromImage(image)
    pix.setDevicePixelRatio(dpr)
    hit = _pixmaps[full] = (pix, left / dpr, top / dpr)
    return hit


def cached_blit_at(x: float, y: float, dpr: float, key: tuple, bounds: QRectF, draw) -> tuple[QPixmap, float, float]:
    """The cached pixmap of ``draw``'s shapes (by ``key``) for their origin at device-independent pixel
    (x, y), and the logical pixel its top-left corner goes to; the origin is placed to a quarter device pixel."""
    dx, dy = x * dpr, y * dpr
    fx, fy = math.floor(dx), math.floor(dy)
    phase = (round((dx - fx) * PHASES) / PHASES, round((dy - fy) * PHASES) / PHASES)
    if phase[0] >= 1.0:
        fx, phase = fx + 1, (0.0, phase[1])
    if phase[1] >= 1.0:
        fy, phase = fy + 1, (phase[0], 0.0)
    pix, left, top = _render(key, bounds, dpr, phase, draw)
    return pix, fx / dpr + left, fy / dpr + top


def blit_cached(painter: QPainter, origin: QPointF, dpr: float, key: tuple, bounds: QRectF, draw) -> None:
    """Draw ``draw``'s shapes (cached by ``key``) with their origin at item point ``origin``, by blitting
    a pixmap; ``painter`` must pass :func:`pixel_dpr`.  The origin is placed to a quarter device pixel."""
    t = painter.worldTransform()
    pix, x, y = cached_blit_at(t.m11() * origin.x() + t.dx(), t.m22() * origin.y() + t.dy(), dpr, key, bounds, draw)
    # only the transform changes for the blit: set it back rather than save and restore the painter's whole
    # state (pen, brush, font, clip), which costs more than the blit (a zoom step blits ~400 pixmaps)
    painter.setWorldTransform(_IDENTITY)
    painter.drawPixmap(QPointF(x, y), pix)
    painter.setWorldTransform(t)


_IDENTITY = QTransform()


_NO_DPR = -1.0


def _draw_halo_text(painter: QPainter, pos: QPointF, text: str, colour: QColor, font, scale: float = 1.0,
                    dpr: float | None = _NO_DPR) -> None:
    """Text with a paper-coloured halo so it stays readable over ropes and water (baseline at ``pos``).

    ``scale`` is the painter's expected world scale inverse (1 for items in pixels, ``m_per_px`` for
    items in metres that scale the painter to pixels themselves); ``dpr`` is :func:`pixel_dpr`'s
    answer when the caller already has it.
    """
    if dpr == _NO_DPR:
        dpr = pixel_dpr(painter, scale)
    if dpr is None:  # vectors (PDF, SVG, scaled renders): drawn as text each time
        painter.save()
        painter.translate(pos)
        if scale != 1.0:
            painter.scale(scale, scale)
        _paint_halo_text(painter, text, font, colour)
        painter.restore()
        return
    blit_cached(painter, pos, dpr, *halo_blit(text, colour, font))


def halo_blit(text: str, colour: QColor, font) -> tuple:
    """(key, bounds, draw) of haloed ``text`` for :func:`blit_cached` (the bounds measure the text: ~15 us)."""
    m = HALO_WIDTH_PX
    return (("halo", text, font_key(font), colour.rgba()), font_metrics(font).boundingRect(text).adjusted(-m, -m, m, m),
            lambda p: _paint_halo_text(p, text, font, colour))


def _drawn_differs(a: Point, b: Point) -> bool:
    """True if two versions of a point differ in more than their position (so the marker must repaint)."""
    return a.kind != b.kind or a.name != b.name


class SketchItem(Versioned, QGraphicsItem):
    """Base of every model view: carries the model ``key`` (kind, id) the scene indexes it by."""

    #: drawn straight onto a drag frame, its pixels are Qt's own (``sketchpad.drag_layer``)
    paints_alike_live = True

    def __init__(self, key: tuple) -> None:
        super().__init__()
        self.key = key
        self.setFlag(QGraphicsItem.ItemIsSelectable, True)

    @property
    def model_id(self):
        return self.key[1]


# --- points ------------------------------------------------------------------------------
class PointItem(SketchItem):
    """Base marker for a point of any kind: position, label and selection halo, in screen pixels."""

    KIND = "point"

    def __init__(self, point: Point) -> None:
        super().__init__(("point", point.id))
        self.setFlag(QGraphicsItem.ItemIgnoresTransformations, True)
        self.setZValue(theme.Z_POINT)
        self.point = point
        self._label: str | None = None  # set_point fills it (and the rects) the first time
        self._label_rect = QRectF()
        self._baseline = QPointF()
        self._bounds = QRectF()
        self._tip = ""
        self.set_point(point)

    @property
    def radius(self) -> float:
        return theme.POINT_RADIUS_PX.get(self.point.kind, 5.0)

    def set_point(self, point: Point) -> None:
        """Show ``point``: move to its position and relabel if needed (a move alone repaints nothing else)."""
        old = self.point
        self.point = point
        label = drawn(point.name)
        if label != self._label:
            self.prepareGeometryChange()
            self._label = label
            fm = font_metrics(theme.font())
            r = self.radius
            w = fm.horizontalAdvance(label)
            self._label_rect = QRectF(r + theme.LABEL_GAP_PX, -r - fm.ascent(), w, fm.height())
            self._baseline = QPointF(self._label_rect.left(), self._label_rect.top() + fm.ascent())
            self._halo = halo_blit(label, theme.LABEL_TEXT, theme.font())
            m = theme.SELECTION_WIDTH_PX + 2
            self._bounds = self.marker_rect().adjusted(-m, -m, m, m).united(self._label_rect.adjusted(-3, -3, 3, 3))
        pos = to_scene(point.x, point.y)
        moved = pos != self.pos()
        if moved:
            self.setPos(pos)
        tip = f"{point.name} ({point.kind})"
        if tip != self._tip:
            self._tip = tip
            self.setToolTip(plain_tip(tip))
        if moved or (old is not point and _drawn_differs(old, point)):
            self.update()  # also renews a device-coordinate cache drawn at the old sub-pixel offset

    def marker_rect(self) -> QRectF:
        r = self.radius
        return QRectF(-r, -r, 2 * r, 2 * r)

    def boundingRect(self) -> QRectF:  # noqa: N802 - Qt name
        return self._bounds

    def shape(self) -> QPainterPath:
        path = QPainterPath()
        path.addEllipse(self.marker_rect().adjusted(-2, -2, 2, 2))
        return path

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem, widget=None) -> None:
        painter.setRenderHint(QPainter.Antialiasing, True)
        selected = self.isSelected()
        dpr = pixel_dpr(painter)
        if dpr is None:
            self._paint_glyph(painter, selected)
        else:  # every marker of a kind looks the same: blit it
            m = theme.SELECTION_WIDTH_PX + 4
            r = self.radius + m
            blit_cached(painter, QPointF(), dpr, ("marker", type(self), self.radius, selected),
                        QRectF(-r, -r, 2 * r, 2 * r), lambda p: self._paint_glyph(p, selected))
        if not self._label:
            return
        if dpr is None:
            _draw_halo_text(painter, self._baseline, self._label, theme.LABEL_TEXT, theme.font(), dpr=dpr)
        else:  # the name's pixmap key and bounds were worked out with the name (a zoom repaints every marker)
            key, bounds, draw = self._halo
            blit_cached(painter, self._baseline, dpr, key, bounds, draw)

    def _paint_glyph(self, painter: QPainter, selected: bool) -> None:
        if selected:
            painter.setPen(theme.pixel_pen(theme.SELECTION, theme.SELECTION_WIDTH_PX))
            painter.setBrush(Qt.NoBrush)
            r = self.radius + 3
            painter.drawEllipse(QRectF(-r, -r, 2 * r, 2 * r))
        self.paint_marker(painter)

    def paint_marker(self, painter: QPainter) -> None:
        """A free point: a small open circle."""
        painter.setPen(theme.pixel_pen(theme.POINT_OUTLINE, theme.POINT_OUTLINE_PX))
        painter.setBrush(theme.POINT_FILL["point"])
        painter.drawEllipse(self.marker_rect())


class FreePointItem(PointItem):
    """A free junction (master point, rope-grab spot, travelling pulley, a hand)."""


class AnchorItem(PointItem):
    """An anchor: a dark square (something solid) with a white eye."""

    def paint_marker(self, painter: QPainter) -> None:
        r = self.radius
        painter.setPen(theme.pixel_pen(theme.POINT_OUTLINE, theme.POINT_OUTLINE_PX))
        painter.setBrush(theme.POINT_FILL["anchor"])
        painter.drawRoundedRect(QRectF(-r, -r, 2 * r, 2 * r), 2.0, 2.0)
        painter.setPen(theme.pixel_pen(theme.POINT_MARK, 1.6))
        painter.setBrush(Qt.NoBrush)
        painter.drawEllipse(QRectF(-r * 0.42, -r * 0.42, r * 0.84, r * 0.84))


class LoadItem(PointItem):
    """The load: an amber diamond with a dot."""

    def paint_marker(self, painter: QPainter) -> None:
        r = self.radius
        poly = QPolygonF([QPointF(0, -r), QPointF(r, 0), QPointF(0, r), QPointF(-r, 0)])
        painter.setPen(theme.pixel_pen(theme.POINT_OUTLINE, theme.POINT_OUTLINE_PX))
        painter.setBrush(theme.POINT_FILL["load"])
        painter.drawPolygon(poly)
        painter.setPen(Qt.NoPen)
        painter.setBrush(theme.POINT_MARK)
        painter.drawEllipse(QRectF(-2, -2, 4, 4))


class HaulItem(PointItem):
    """Where a haul team stands: a green disc with two white chevrons (people pulling)."""

    def paint_marker(self, painter: QPainter) -> None:
        r = self.radius
        painter.setPen(theme.pixel_pen(theme.POINT_OUTLINE, theme.POINT_OUTLINE_PX))
        painter.setBrush(theme.POINT_FILL["haul"])
        painter.drawEllipse(self.marker_rect())
        painter.setPen(theme.pixel_pen(theme.POINT_MARK, 1.5))
        for dx in (-r * 0.35, r * 0.15):
            painter.drawPolyline(
                QPolygonF([QPointF(dx - r * 0.15, -r * 0.4), QPointF(dx + r * 0.2, 0), QPointF(dx - r * 0.15, r * 0.4)])
            )


class PersonItem(PointItem):
    """A rescuer's position (not part of the structure): a violet head-and-shoulders sign."""

    def paint_marker(self, painter: QPainter) -> None:
        r = self.radius
        painter.setPen(theme.pixel_pen(theme.POINT_OUTLINE, 1.0))
        painter.setBrush(theme.POINT_FILL["person"])
        body = QPainterPath()
        body.moveTo(-r, r)
        body.cubicTo(-r, -0.1 * r, r, -0.1 * r, r, r)
        body.closeSubpath()
        painter.drawPath(body)
        painter.drawEllipse(QRectF(-0.42 * r, -r, 0.84 * r, 0.84 * r))


POINT_ITEM_CLASSES: dict[str, type[PointItem]] = {
    "anchor": AnchorItem,
    "load": LoadItem,
    "haul": HaulItem,
    "point": FreePointItem,
    "person": PersonItem,
}


def make_point_item(point: Point) -> PointItem:
    """The marker item for ``point``'s kind."""
    return POINT_ITEM_CLASSES.get(point.kind, FreePointItem)(point)


# --- ropes ---------------------------------------------------------------------------------
class RopeItem(SketchItem):
    """A rope's path with a glyph at every pass: knot (tied), sheave (pulley), ring (sliding),
    wedge (edge) and an arrow beyond the hauled end.  Drawn in metres; glyph sizes follow
    ``scale_m_per_px`` so they keep their size on screen.
    """

    def __init__(self, rope: Rope) -> None:
        super().__init__(("rope", rope.id))
        self.setZValue(theme.Z_ROPE)
        self.rope = rope
        self.colour = theme.rope_colour(0)
        self._path = QPainterPath()
        self._glyphs: list[tuple[str, QPointF, float, QPointF]] = []  # (kind, centre, radius m, direction)
        self._arrow = QPolygonF()
        self._label_pos = QPointF()
        self._label = ""
        self._k = 0.01
        self._bounds = QRectF()
        self._shape = QPainterPath()
        self._shape_due = False
        self._tip = ""
        self._pens: dict[tuple, QPen] = {}
        self._label_w = 0.0
        self._label_px: tuple = (None, 0.0, 0.0, 0.0)  # (name, width, height, bold width) in pixels
        self._shown: tuple | None = None  # what the scene last built this item from (sketchpad.canvas)
        self.bows: dict = {}  # piece index -> the solver's hidden points of a piece the current bows (scene m)

    def set_rope(self, rope: Rope, positions: dict, kinds: dict, colour: QColor, scale_m_per_px: float,
                 bows: dict | None = None) -> None:
        """Rebuild the path from ``rope`` and the scene positions of its points; ``bows`` (piece index -> interior
        scene points, :func:`sketchpad.rope_bows.scene_bows`) draws a piece the current bows along its bow."""
        old_bounds = QRectF(self._bounds)
        self.rope = rope
        self.bows = bows or {}
        if colour != self.colour or not self._pens:
            self.colour = QColor(colour)
            self._pens = {}
        self._k = float(scale_m_per_px)
        self._build(positions, kinds)  # sets self._bounds, read by Qt only through boundingRect()
        if self._bounds != old_bounds:
            new_bounds, self._bounds = self._bounds, old_bounds
            self.prepareGeometryChange()  # Qt must see the old rect here
            self._bounds = new_bounds
        tip = f"{rope.name} ({rope.material})"
        if tip != self._tip:
            self._tip = tip
            self.setToolTip(plain_tip(tip))
        self.update()

    def pen(self, colour: QColor, width: float) -> QPen:
        """A cosmetic pen of this item, built once per (colour, width)."""
        key = (colour.rgba(), width)
        pen = self._pens.get(key)
        if pen is None:
            pen = self._pens[key] = theme.cosmetic_pen(colour, width)
        return pen

    # geometry ----------------------------------------------------------------------
    def _build(self, positions: dict, kinds: dict) -> None:
        """The path, glyphs, haul arrow and label place from the scene positions of the rope's points.

        Plain floats (x, y) with the very operations, in the same order, that QPointF arithmetic does
        (each a double operation: the same bits), ~3x fewer Qt calls: a drag step lays out the dragged
        rope again (tested equal to the QPointF layout)."""
        k = self._k
        hypot = math.hypot
        passes = [p for p in self.rope.path if p.at in positions]
        xy = [positions[p.at].toTuple() for p in passes]
        if self.bows and len(passes) == len(self.rope.path):
            passes, xy = with_bows(passes, xy, self.bows)
        self._glyphs = []
        self._arrow = QPolygonF()
        path = QPainterPath()
        n = len(xy)
        if n == 0:
            self._path = path
            self._finish_bounds()
            return
        path.moveTo(*xy[0])
        longest = (0.0, xy[0], xy[0])
        gap = theme.GLYPH_GAP_PX * k
        for i in range(n):
            px, py = xy[i]
            how = passes[i].how
            marker = theme.POINT_RADIUS_PX.get(kinds.get(passes[i].at, "point"), 5.0) * k
            u_prev = _unit_xy(xy[i - 1][0] - px, xy[i - 1][1] - py) if i > 0 else None
            u_next = _unit_xy(xy[i + 1][0] - px, xy[i + 1][1] - py) if i < n - 1 else None
            if i > 0:
                seg = hypot(px - xy[i - 1][0], py - xy[i - 1][1])
                if seg > longest[0]:
                    longest = (seg, xy[i - 1], xy[i])
            if how is None:  # a hidden point of a bowed piece: the rope runs through it, no glyph
                path.lineTo(px, py)
                continue
            if 0 < i < n - 1 and how in ("pulley", "sliding", "capture"):
                r = (theme.RING_RADIUS_PX if how == "sliding" else theme.PULLEY_RADIUS_PX) * k
                sx, sy = u_prev[0] + u_next[0], u_prev[1] + u_next[1]
                b = (-u_next[1], u_next[0]) if hypot(sx, sy) < 1e-6 else _unit_xy(sx, sy)
                f = marker + gap + r
                c = (px + b[0] * f, py + b[1] * f)
                t_in = _tangent_xy(c, -u_prev[0], -u_prev[1], b, r)
                t_out = _tangent_xy(c, u_next[0], u_next[1], b, r)
                path.lineTo(*t_in)
                for qx, qy in _arc_xy(c[0], c[1], r, t_in, t_out, b):
                    path.lineTo(qx, qy)
                self._glyphs.append((how, QPointF(*c), r, QPointF(*b)))
                continue
            path.lineTo(px, py)
            if n == 1:
                continue  # a rope with one drawn pass (the others at missing points): no direction to draw
            if i == 0 or (i < n - 1 and how == "tied") or (i == n - 1 and how != "hauled"):
                d = u_next if i == 0 else u_prev
                kr = theme.KNOT_RADIUS_PX * k
                f = marker + gap + kr
                self._glyphs.append(("tied", QPointF(px + d[0] * f, py + d[1] * f), kr, QPointF(*d)))
            elif how == "edge":
                s = (u_prev[0] + u_next[0], u_prev[1] + u_next[1]) if (u_prev is not None and u_next is not None) else (0.0, 1.0)
                b = (-u_next[1], u_next[0]) if hypot(s[0], s[1]) < 1e-6 else _unit_xy(s[0], s[1])
                self._glyphs.append(("edge", QPointF(px, py), theme.EDGE_SIZE_PX * k, QPointF(*b)))
            elif i == n - 1 and how == "hauled":
                dx, dy = -u_prev[0], -u_prev[1]
                f = marker + theme.HAUL_ARROW_PX * k
                tx, ty = px + dx * f, py + dy * f
                path.lineTo(tx, ty)
                h = theme.HAUL_ARROW_HEAD_PX * k
                half = h * 0.5
                sx, sy = -dy * half, dx * half
                bx, by = tx - dx * h, ty - dy * h
                g = h * 0.2
                self._arrow = QPolygonF([QPointF(tx + dx * g, ty + dy * g), QPointF(bx + sx, by + sy), QPointF(bx - sx, by - sy)])
        self._path = path
        self._label = drawn(self.rope.name)
        _, a, b2 = longest
        mx, my = (a[0] + b2[0]) * 0.5, (a[1] + b2[1]) * 0.5
        ux, uy = _unit_xy(b2[0] - a[0], b2[1] - a[1])
        nx, ny = -uy, ux
        if ny > 0:  # keep labels above the line on screen
            nx, ny = -nx, -ny
        f = theme.ROPE_LABEL_OFFSET_PX * k
        self._label_pos = QPointF(mx + nx * f, my + ny * f)
        self._finish_bounds()

    def _finish_bounds(self) -> None:
        k = self._k
        rect = self._path.boundingRect()
        for _, c, r, _d in self._glyphs:
            rect = rect.united(QRectF(c.x() - r * 1.5, c.y() - r * 1.5, r * 3, r * 3))
        rect = rect.united(self._arrow.boundingRect())
        if self._label:
            if self._label_px[0] != self._label:  # the name's size in pixels, measured when the name changes
                small = theme.font(theme.SMALL_POINT_SIZE)
                self._label_px = (self._label, text_advance(self._label, small), font_metrics(small).height(),
                                  text_advance(self._label, theme.font(theme.SMALL_POINT_SIZE, bold=True)))
            _name, w, h, self._label_w = self._label_px
            w, h = w * k, h * k
            rect = rect.united(QRectF(self._label_pos.x() - w / 2 - k, self._label_pos.y() - h, w + 2 * k, h * 1.5))
        m = (theme.SELECTION_WIDTH_PX + theme.ROPE_WIDTH_PX) * k
        self._bounds = rect.adjusted(-m, -m, m, m)
        self._shape_due = True  # the hit shape is stroked when Qt first asks for it

    # Qt interface -------------------------------------------------------------------
    def boundingRect(self) -> QRectF:  # noqa: N802
        return self._bounds

    def shape(self) -> QPainterPath:
        if self._shape_due:
            stroker = QPainterPathStroker()
            stroker.setWidth(theme.ROPE_HIT_PX * self._k)
            self._shape = stroker.createStroke(self._path)
            self._shape_due = False
        return self._shape

    def glyph_kinds(self) -> list[str]:
        """The glyphs drawn, in path order (for tests and exports)."""
        return [g[0] for g in self._glyphs] + (["hauled"] if not self._arrow.isEmpty() else [])

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem, widget=None) -> None:
        painter.setRenderHint(QPainter.Antialiasing, True)
        k = self._k
        colour = self.colour
        pen = self.pen
        if self.isSelected():
            painter.setPen(pen(theme.SELECTION, theme.ROPE_WIDTH_PX + 2 * theme.SELECTION_WIDTH_PX))
            painter.setBrush(Qt.NoBrush)
            painter.drawPath(self._path)
        painter.setPen(pen(colour, theme.ROPE_WIDTH_PX))
        painter.setBrush(Qt.NoBrush)
        painter.drawPath(self._path)
        dpr = pixel_dpr(painter, k) if self._glyphs else None
        for kind, c, r, d in self._glyphs:
            if dpr is not None and kind in _BLITTED_GLYPHS:  # on screen: the round part blitted (see _paint_round_glyph)
                blit_cached(painter, c, dpr, ("rope-glyph", kind, colour.rgba()), _GLYPH_BOUNDS[kind],
                            lambda p, kind=kind: self._paint_round_glyph(p, kind, colour))
                if kind == "tied":
                    painter.setPen(pen(theme.POINT_MARK, 1.0))
                    side = _left(d) * (r * 0.6)
                    painter.drawLine(c + side, c - side)
                elif kind == "capture":
                    painter.setPen(Qt.NoPen)
                    painter.setBrush(colour)
                    painter.drawEllipse(c + d * (r * 1.05), r * 0.42, r * 0.42)
                continue
            if kind in ("pulley", "capture"):
                painter.setPen(pen(colour, 1.6))
                painter.setBrush(theme.PULLEY_FILL)
                painter.drawEllipse(c, r * 0.82, r * 0.82)
                painter.setPen(Qt.NoPen)
                painter.setBrush(colour)
                a = theme.PULLEY_AXLE_PX * k
                painter.drawEllipse(c, a, a)
                if kind == "capture":  # the grab's cam: a filled block beside the sheave, away from the rope
                    painter.drawEllipse(c + d * (r * 1.05), r * 0.42, r * 0.42)
            elif kind == "sliding":
                painter.setPen(pen(colour, 1.8))
                painter.setBrush(Qt.NoBrush)
                painter.drawEllipse(c, r, r)
            elif kind == "tied":
                painter.setPen(pen(theme.POINT_OUTLINE, 1.0))
                painter.setBrush(colour)
                painter.drawEllipse(c, r, r)
                painter.setPen(pen(theme.POINT_MARK, 1.0))
                side = _left(d) * (r * 0.6)
                painter.drawLine(c + side, c - side)
            elif kind == "edge":
                side = _left(d) * (r * 0.55)
                base = c + d * r
                painter.setPen(pen(theme.POINT_OUTLINE, 1.0))
                painter.setBrush(theme.EDGE_FILL)
                painter.drawPolygon(QPolygonF([c, base + side, base - side]))
        if not self._arrow.isEmpty():
            painter.setPen(pen(colour, 1.0))
            painter.setBrush(colour)
            painter.drawPolygon(self._arrow)
        if self._label and not getattr(self.scene(), "rope_names_in_overlay", False):  # else the overlay places it
            origin = QPointF(self._label_pos.x() - self._label_w / 2 * k, self._label_pos.y())
            _draw_halo_text(painter, origin, self._label, colour, theme.font(theme.SMALL_POINT_SIZE, bold=True), k)


    def _paint_round_glyph(self, painter: QPainter, kind: str, colour: QColor) -> None:
        """The part of a pass glyph that looks the same whatever the rope's direction (sheave and axle, ring,
        knot disc), drawn in pixels around the origin as :meth:`paint` draws it in metres.

        A glyph keeps its pixel size, so on screen it is rendered once per look (kind, colour) and sub-pixel
        phase into the glyph pixmaps (:func:`blit_cached`) and blitted: an anti-aliased ellipse drawn
        afresh costs Qt ~30 us, and a zoom step repaints every rope (~150 glyphs on a 50-rope rig)."""
        pen = self.pen
        if kind in ("pulley", "capture"):
            r = theme.PULLEY_RADIUS_PX
            painter.setPen(pen(colour, 1.6))
            painter.setBrush(theme.PULLEY_FILL)
            painter.drawEllipse(QPointF(), r * 0.82, r * 0.82)
            painter.setPen(Qt.NoPen)
            painter.setBrush(colour)
            painter.drawEllipse(QPointF(), theme.PULLEY_AXLE_PX, theme.PULLEY_AXLE_PX)
        elif kind == "sliding":
            r = theme.RING_RADIUS_PX
            painter.setPen(pen(colour, 1.8))
            painter.setBrush(Qt.NoBrush)
            painter.drawEllipse(QPointF(), r, r)
        else:  # tied
            r = theme.KNOT_RADIUS_PX
            painter.setPen(pen(theme.POINT_OUTLINE, 1.0))
            painter.setBrush(colour)
            painter.drawEllipse(QPointF(), r, r)


def _glyph_bounds(radius_px: float) -> QRectF:
    """Pixels around a glyph's centre its round part can touch (the widest pen is 1.8 px, plus anti-aliasing)."""
    m = radius_px + 2.0
    return QRectF(-m, -m, 2 * m, 2 * m)


_GLYPH_BOUNDS = {"pulley": _glyph_bounds(theme.PULLEY_RADIUS_PX), "capture": _glyph_bounds(theme.PULLEY_RADIUS_PX),
                 "sliding": _glyph_bounds(theme.RING_RADIUS_PX), "tied": _glyph_bounds(theme.KNOT_RADIUS_PX)}
_BLITTED_GLYPHS = frozenset(_GLYPH_BOUNDS)


# --- forces --------------------------------------------------------------------------------
class ForceItem(SketchItem):
    """An external force the planner put on a free point: an arrow and its size, in screen pixels."""

    def __init__(self, index: int, force: Force, unit: str = "kN", view: str = "plan") -> None:
        super().__init__(("force", index))
        self.setFlag(QGraphicsItem.ItemIgnoresTransformations, True)
        self.setZValue(theme.Z_FORCE)
        self.force = force
        self._text = ""
        self._bounds = QRectF()
        self._shown: tuple | None = None
        self.set_force(force, (0.0, 0.0), unit, view)

    def set_force(self, force: Force, at_xy: tuple[float, float], unit: str, view: str = "plan") -> None:
        """Show ``force`` at ``at_xy`` (site metres), its size and, in plan, its bearing from north; a move
        alone only repositions the item."""
        shown = (force, unit, view)
        if shown != self._shown:
            self._shown = shown
            self.force = force
            text = fmt_force(force.magnitude_N, unit)
            if view == "plan" and force.magnitude_N > 0:
                from solver.directions import bearing_deg, bearing_text

                text += f" → {bearing_text(bearing_deg(force.direction_deg))}"
            self._text = f"{text}  {force.label}".strip() if force.label else text
            d = self._direction()
            tip = d * theme.FORCE_LENGTH_PX
            small = theme.font(theme.SMALL_POINT_SIZE)
            fm = font_metrics(small)
            label = QRectF(tip.x() + 4, tip.y() - fm.ascent(), fm.horizontalAdvance(self._text) + 4, fm.height())
            self._label_at = QPointF(tip.x() + 5, tip.y() + fm.ascent() / 2 - 1)
            self._halo = halo_blit(self._text, theme.FORCE_COLOUR, small)
            m = theme.FORCE_HEAD_PX + theme.SELECTION_WIDTH_PX
            bounds = QRectF(QPointF(0, 0), tip).normalized().adjusted(-m, -m, m, m).united(label)
            if bounds != self._bounds:
                self.prepareGeometryChange()
                self._bounds = bounds
            self.update()
        pos = to_scene(*at_xy)
        if pos != self.pos():
            self.setPos(pos)
            self.update()  # renews a device-coordinate cache drawn at the old sub-pixel offset

    def _direction(self) -> QPointF:
        a = math.radians(self.force.direction_deg)
        return QPointF(math.cos(a), -math.sin(a))  # site y up -> screen y down

    def boundingRect(self) -> QRectF:  # noqa: N802
        return self._bounds

    def shape(self) -> QPainterPath:
        stroker = QPainterPathStroker()
        stroker.setWidth(theme.ROPE_HIT_PX)
        line = QPainterPath()
        line.moveTo(0, 0)
        line.lineTo(self._direction() * theme.FORCE_LENGTH_PX)
        return stroker.createStroke(line)

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem, widget=None) -> None:
        painter.setRenderHint(QPainter.Antialiasing, True)
        d = self._direction()
        tip = d * theme.FORCE_LENGTH_PX
        if self.isSelected():
            painter.setPen(theme.pixel_pen(theme.SELECTION, theme.FORCE_WIDTH_PX + 2 * theme.SELECTION_WIDTH_PX))
            painter.drawLine(QPointF(0, 0), tip)
        painter.setPen(theme.pixel_pen(theme.FORCE_COLOUR, theme.FORCE_WIDTH_PX))
        h = theme.FORCE_HEAD_PX
        painter.drawLine(QPointF(0, 0), tip - d * h * 0.8)
        side = _left(d) * (h * 0.45)
        painter.setBrush(theme.FORCE_COLOUR)
        painter.setPen(Qt.NoPen)
        painter.drawPolygon(QPolygonF([tip, tip - d * h + side, tip - d * h - side]))
        dpr = pixel_dpr(painter)
        if dpr is None:
            _draw_halo_text(painter, self._label_at, self._text, theme.FORCE_COLOUR, theme.font(theme.SMALL_POINT_SIZE),
                            dpr=None)
        else:  # its pixmap key and bounds were worked out with the text
            blit_cached(painter, self._label_at, dpr, *self._halo)


# --- site features ----------------------------------------------------------------------------
class FeatureLabel(Tracked, QGraphicsSimpleTextItem):
    """A feature's name (a child of its :class:`FeatureItem`): its z, flags and parent are tracked by the drag
    layer; what it shows is fingerprinted (``drag_layer.item_version``)."""


class FeatureItem(SketchItem):
    """A site feature in metres: water, boulder, hazard (polygons), bank or note (lines), with its label."""

    def __init__(self, feature: Feature) -> None:
        super().__init__(("feature", feature.id))
        self.setZValue(theme.Z_FEATURE)
        self.feature = feature
        self._path = QPainterPath()
        self._closed = True
        self._label = FeatureLabel(self)
        self._label.setFlag(QGraphicsItem.ItemIgnoresTransformations, True)
        self._label.setFont(theme.font(theme.SMALL_POINT_SIZE))
        self.set_feature(feature)

    def set_feature(self, feature: Feature) -> None:
        self.prepareGeometryChange()
        self.feature = feature
        coords = [to_scene(x, y) for x, y in feature.coords]
        self._closed = feature.polygon is not None
        path = QPainterPath()
        if coords:
            if self._closed:
                path.addPolygon(QPolygonF(coords))
                path.closeSubpath()
            else:
                path.moveTo(coords[0])
                for c in coords[1:]:
                    path.lineTo(c)
        self._path = path
        self._label.setText(drawn(feature.label))
        self._label.setBrush(theme.FEATURE_LABEL.get(feature.kind, theme.LABEL_TEXT))
        self._label.setFont(theme.font(theme.SMALL_POINT_SIZE, italic=True))
        if coords:
            if self._closed:  # inside the top-left corner, where it rarely sits on the rig
                self._label.setPos(QPointF(min(c.x() for c in coords), min(c.y() for c in coords)))
                self._label.setTransform(QTransform.fromTranslate(theme.FEATURE_LABEL_INSET_PX, theme.FEATURE_LABEL_INSET_PX))
            else:  # just below the line's middle vertex
                self._label.setPos(coords[len(coords) // 2])
                self._label.setTransform(QTransform.fromTranslate(0, 2))
        self.setToolTip(plain_tip(f"{feature.label or feature.id} ({feature.kind})"))
        self.update()

    def boundingRect(self) -> QRectF:  # noqa: N802
        r = self._path.boundingRect()
        m = max(r.width(), r.height(), 1.0) * 0.01 + 0.5
        return r.adjusted(-m, -m, m, m)

    def shape(self) -> QPainterPath:
        if self._closed:
            return self._path
        stroker = QPainterPathStroker()
        stroker.setWidth(0.5)
        return stroker.createStroke(self._path)

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem, widget=None) -> None:
        painter.setRenderHint(QPainter.Antialiasing, True)
        kind = self.feature.kind
        if self.isSelected():
            painter.setPen(theme.cosmetic_pen(theme.SELECTION, theme.SELECTION_WIDTH_PX * 2))
            painter.setBrush(Qt.NoBrush)
            painter.drawPath(self._path)
        edge = theme.FEATURE_EDGE.get(kind, theme.FEATURE_EDGE["note"])
        style = Qt.DashLine if kind in ("bank", "note") else Qt.SolidLine
        painter.setPen(theme.cosmetic_pen(edge, theme.FEATURE_EDGE_PX.get(kind, 1.0), style))
        if self._closed:
            brush = QBrush(theme.feature_brush(kind))
            lod = QStyleOptionGraphicsItem.levelOfDetailFromTransform(painter.worldTransform())
            if brush.style() not in (Qt.SolidPattern, Qt.NoBrush) and lod > 0:
                brush.setTransform(QTransform.fromScale(1.0 / lod, 1.0 / lod))  # hatch in screen pixels
            if kind == "hazard":
                painter.fillPath(self._path, theme.FEATURE_FILL["hazard"])
            painter.setBrush(brush)
        else:
            painter.setBrush(Qt.NoBrush)
        painter.drawPath(self._path)


def keys_of(items: Iterable[SketchItem]) -> list[tuple]:
    """The model keys of some items, in order."""
    return [it.key for it in items if isinstance(it, SketchItem)]


def point_ids(keys: Sequence[tuple]) -> list[str]:
    return [k[1] for k in keys if k[0] == "point"]
