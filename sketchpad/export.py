"""Drawing exports: the site, the rig and the force overlay as drawn on screen, to PNG, SVG or PDF.

Nothing here draws a rope or a label of its own: an offscreen
:class:`~sketchpad.canvas.SketchScene` is synced to the rig (the same items the
canvas shows), the overlay's own items (:class:`~sketchpad.overlay.ZoneItem`,
:class:`~sketchpad.overlay.ForceItem`) are filled from ``analyse(rig)`` with the
overlay's label builder and placer, and the scene is painted with
``scene.render(painter, target, source)`` — no QGraphicsView involved.  Around it
this module paints what the screen shows in the view's corners and what a page
needs: a grid, a scale bar, a north arrow, a key (point kinds, ropes, the
utilization ramp, danger zones), a title block with the system summary and the
warnings, and the two caution lines (solver.cautions.caution_lines).

Every device is laid out at 96 logical pixels per inch (the screen's scale), so
theme sizes given in pixels and fonts in points keep their proportions: a PNG
larger than about 1200 px wide is drawn at a device pixel ratio above 1 (crisper,
not smaller), SVG uses ``setResolution(96)`` and PDF pages are in points with zero
margins (A4 for metric rigs, US Letter for imperial ones, landscape).
"""

from __future__ import annotations

import datetime as _dt
import logging
import math
import os
import pathlib
import sys
from typing import Iterable

from PySide6.QtCore import QMarginsF, QPointF, QRectF, QSize, Qt
from PySide6.QtGui import (
    QColor,
    QFontMetricsF,
    QImage,
    QLinearGradient,
    QPageLayout,
    QPageSize,
    QPainter,
    QPen,
)

from sketchpad import theme
from sketchpad.glyphs import paint_north_arrow
from sketchpad.messages import failure_sentence
from sketchpad.pages.framing import Fit
from sketchpad.pages.wrapped_text import wrap_text
from sketchpad.short_text import drawn
from solver.model import Rig
from solver.result import Result

log = logging.getLogger(__name__)

EXIT_OK, EXIT_BAD_INPUT, EXIT_SOLVE_FAILED = 0, 2, 3

DEFAULT_SIZE = (1600, 1100)
FORMATS = ("png", "svg", "pdf")
SCREEN_DPI = 96.0  # logical pixels per inch on every device (the screen's scale)
POINTS_PER_INCH = 72.0
DPM_96 = round(SCREEN_DPI / 0.0254)  # dots per metre of a 96-dpi image
LOGICAL_WIDTH_PX = 1200.0  # a PNG wider than this is drawn at a device pixel ratio above 1
MAX_SIZE_PX = 12000
MIN_SIZE_PX = 200

SIDEBAR_FRACTION = 0.24  # right-hand panel of a full drawing page
SIDEBAR_MIN_PX, SIDEBAR_MAX_PX = 250.0, 330.0
PAD = 10.0  # inner padding of panels
TITLE_PT, HEAD_PT, TEXT_PT, SMALL_PT = 13, 9, 8, 7
MAX_SIDEBAR_WARNINGS = 8
INK = theme.PAGE_INK
MUTED = theme.PAGE_MUTED
RULE = theme.PAGE_RULE
PANEL_BACK = QColor("#fffefa")
FAIL_BACK = QColor(163, 29, 24)
DANGER_TEXT = QColor("#9c1238")
WARNING_TEXT = QColor("#8a4b00")

class ExportError(Exception):
    """An export that cannot be written: unknown format, bad size, folder missing (message in words)."""


def refuse_undrawable(rig: Rig) -> None:
    """ExportError in words for a rig too big to draw in reasonable time (solver.limits.drawing_problem)."""
    from solver import limits

    problem = limits.drawing_problem(len(rig.points), len(rig.ropes))
    if problem:
        raise ExportError(problem)


# --- the drawing ---------------------------------------------------------------------------


class Drawing:
    """A rig, its Result and the canvas scene showing both, ready to fit into any rectangle.

    ``result`` defaults to ``solver.analysis.analyse(rig)``; a failed result draws
    the sketch with no forces, a red ring at the point it names and the reason in
    the title block.
    """

    def __init__(self, rig: Rig, result: Result | None = None, rig_dir: pathlib.Path | None = None,
                 layers: Iterable[str] | None = None, scan_failures: bool = False) -> None:
        from sketchpad.canvas import SketchScene
        from sketchpad.overlay import LAYERS, ZoneItem

        if result is None:
            from solver.analysis import analyse

            result = analyse(rig)
        self.rig, self.result = rig, result
        self.layers = list(LAYERS) if layers is None else list(layers)
        self.scene = SketchScene()
        self.scene.sync(rig)
        if result.ok:  # as on the canvas: free points where the solver put them, bowed ropes along their bows
            from sketchpad.rope_bows import scene_bows
            from sketchpad.solved_places import moved_free_points

            self.scene.set_solved(moved_free_points(rig, result))
            self.scene.set_bows(scene_bows(rig, result))
        self.scene.clearSelection()
        self._background(rig, rig_dir)
        self.zones_item = ZoneItem()
        self.zones_item.setZValue(theme.Z_FEATURE + 1.0)  # as on the canvas: under the ropes, over the water
        self.scene.addItem(self.zones_item)
        self.force_item = print_force_item()
        self.scene.add_overlay_item(self.force_item)
        from sketchpad.water_layer import WaterItem

        self.water_item = WaterItem()  # the current's arrows and the ropes it bows
        self.water_item.add_to(self.scene, under=self.force_item)
        self.water_item.show(rig, result)
        self.zones: list = []
        self.scan = None  # the failure scan drawn (solver.failures.Scan), once one is
        self.pieces: list = []
        self.skipped = 0
        self.fit: Fit | None = None
        if result.ok:
            if "zones" in self.layers:
                from solver.danger import danger_zones

                try:
                    self.zones = danger_zones(rig, result)
                except Exception:  # noqa: BLE001 - a zone bug must not hide the forces
                    log.exception("danger zones failed")
            self.zones_item.set_zones(self.zones)
            if scan_failures:
                from solver.failures import scan

                self.use_scan(scan(rig, result))
        elif result.subject and rig.has_point(result.subject):
            p = rig.point(result.subject)
            self.force_item.fail_point = (p.x, -p.y)

    @property
    def computed_zones(self) -> bool:
        """Whether the zones drawn are a failure scan's computed areas (not the fixed quick shapes)."""
        return any(z.kind == "failure" for z in self.zones)

    def use_scan(self, scan) -> None:
        """Draw a failure scan's computed areas (solver.failures.Scan) in place of the fixed bight shapes, and
        give the person warnings the failures' names, so drawing, key and warnings tell one story."""
        from solver.failure_warnings import plan_zones
        from solver.scan_warnings import scanned_result

        if not scan.ok:
            return  # no scan (the reason is the scan's): the quick shapes stay, worded as the quick estimate
        self.scan = scan
        self.result = scanned_result(self.result, scan)
        if "zones" in self.layers:
            self.zones = plan_zones(scan)
            self.zones_item.set_zones(self.zones)

    def _background(self, rig: Rig, rig_dir: pathlib.Path | None) -> None:
        if rig.site.image is None:
            return
        from sketchpad.background import BackgroundItem

        item = BackgroundItem()
        item.set_image(rig.site.image, rig_dir)
        if item.isVisible():
            self.scene.set_background_item(item)
            item.setZValue(theme.Z_BACKGROUND - 1.0)
        else:
            log.warning("the site picture could not be read; exported without it")

    # --- layout ----------------------------------------------------------------------------
    def fit_into(self, width: float, height: float) -> Fit:
        """Choose scale and source rect so the rig (or the rig's print frame) fills ``width`` x ``height`` px.

        Asked again for the size it last fitted, it keeps that fit (placing a large rig's labels is the
        slow part of a page: a report measures its pages with the same fit it then draws).
        """
        from sketchpad.pages.framing import fit_frame

        width, height = max(width, 40.0), max(height, 40.0)
        last = getattr(self, "fit", None)
        if last is not None and last.size == (width, height):
            return last
        self.skipped = 0
        self.fit = fit_frame(self, width, height)
        return self.fit

    def _place(self, k: float) -> None:
        """Overlay labels and glyph sizes for ``k`` px per metre (the canvas does this on every zoom)."""
        from sketchpad.overlay import build_labels, place_labels

        from sketchpad.pages.names import declutter_names, name_boxes_of

        m_per_px = 1.0 / k
        self.scene.set_scale(m_per_px)
        self.water_item.set_scale(m_per_px)
        declutter_names(self.scene, self.rig, k)  # a page cannot be zoomed: names kept apart
        if not self.result.ok:
            self.force_item.bands, self.force_item.moved_points = [], []
            self.force_item.set_labels([], [], m_per_px)
            return
        rig, result = self.rig, self.result
        self.pieces = self.force_item.set_bands(rig, result)
        labels, arrows = build_labels(rig, result, self.layers)
        from sketchpad.water_labels import shown, water_labels  # wet-end tensions and the current's push, placed too

        labels += shown(water_labels(rig, result, {}), self.layers.__contains__)
        self.force_item.labels, self.force_item.arrows = labels, arrows

        def to_px(p: tuple[float, float]) -> tuple[float, float]:
            return (p[0] * k, p[1] * k)

        markers = [(p.x, -p.y) for p in rig.points] + [(x, -y) for x, y in result.points.values()]
        from sketchpad.pages.framing import feature_label_boxes

        self.skipped = place_labels(labels, to_px, self.force_item.label_size, markers, self.pieces,
                                    name_boxes_of(self.scene, rig) + self._rope_name_boxes() + feature_label_boxes(self.scene, k)
                                    + self.water_item.text_boxes())  # the current's speeds and river sides
        self.force_item.refresh_rect(m_per_px)

    def _rope_name_boxes(self) -> list:
        """Pixel rects of the rope names the rope items draw (so force labels keep off them)."""
        fm = QFontMetricsF(theme.font(theme.SMALL_POINT_SIZE, bold=True))
        out = []
        for r in self.rig.ropes:
            item = self.scene.item_for(("rope", r.id))
            pos, text = getattr(item, "_label_pos", None), getattr(item, "_label", "")
            if pos is None or not text:
                continue
            w = fm.horizontalAdvance(text)
            out.append(((pos.x(), pos.y()), (-w / 2 - 2, -fm.ascent() - 2, w + 4, fm.height() + 4)))
        return out

    # --- painting ---------------------------------------------------------------------------
    def paint(self, painter: QPainter, target: QRectF) -> None:
        """Paper, grid and the scene (site, rig, overlay) into ``target`` (logical px), fitted if not yet."""
        if self.fit is None or abs(self.fit.size[0] - target.width()) > 0.5 or abs(self.fit.size[1] - target.height()) > 0.5:
            self.fit_into(target.width(), target.height())
        fit = self.fit
        painter.save()
        painter.setClipRect(target)
        painter.fillRect(target, theme.PAPER)
        self._paint_grid(painter, target, fit)
        painter.setRenderHints(QPainter.Antialiasing | QPainter.TextAntialiasing | QPainter.SmoothPixmapTransform)
        self.scene.render(painter, target, fit.source, Qt.IgnoreAspectRatio)
        from sketchpad.pages.framing import paint_inset
        from sketchpad.pages.greyscale import paint_drawing_rails

        paint_drawing_rails(painter, target, self)
        paint_inset(painter, target, self)
        painter.restore()

    def grid_step_m(self, px_per_m: float) -> float:
        """Minor grid spacing (metres) at ``px_per_m``, a round number of display units, as on the canvas."""
        from sketchpad.canvas import nice_step, unit_metres

        u = unit_metres(self.rig.display.length)
        return nice_step(theme.GRID_MIN_SPACING_PX * 1.4 / (px_per_m * u)) * u

    def _paint_grid(self, painter: QPainter, target: QRectF, fit: Fit) -> None:
        step = self.grid_step_m(fit.px_per_m)
        src, k = fit.source, fit.px_per_m
        painter.save()
        painter.setRenderHint(QPainter.Antialiasing, False)
        for spacing, colour in ((step, theme.GRID_MINOR), (step * theme.GRID_MAJOR_EVERY, theme.GRID_MAJOR)):
            painter.setPen(QPen(colour, 0.8))
            x = math.ceil(src.left() / spacing) * spacing
            while x <= src.right():
                px = target.left() + (x - src.left()) * k
                painter.drawLine(QPointF(px, target.top()), QPointF(px, target.bottom()))
                x += spacing
            y = math.ceil(src.top() / spacing) * spacing
            while y <= src.bottom():
                py = target.top() + (y - src.top()) * k
                painter.drawLine(QPointF(target.left(), py), QPointF(target.right(), py))
                y += spacing
        painter.restore()

    def scale_bar_m(self) -> float:
        """Scale bar length in metres: a round number of display units near 140 px."""
        from sketchpad.canvas import nice_step, unit_metres

        k = self.fit.px_per_m if self.fit else 20.0
        u = unit_metres(self.rig.display.length)
        return nice_step(140.0 / (k * u) * 0.7) * u


def print_force_item():
    """The overlay's ForceItem, painting its labels as boxes and text rather than cached pixmaps.

    On screen the overlay blits each label from a pixmap cache (fast repaints); on
    paper and in SVG that would be blurry, unsearchable bitmaps, so this subclass
    lets the overlay paint bands, rings, arrows and the failure ring and then paints
    each placed label as vectors, with the overlay's own pens, fonts and sizes.
    """
    from PySide6.QtGui import QTransform

    from sketchpad.overlay import ForceItem

    class PrintForceItem(ForceItem):
        def paint(self, painter: QPainter, option, widget=None) -> None:
            t = painter.worldTransform()
            labels = self.labels
            self.labels = []
            try:
                super().paint(painter, option, widget)
            finally:
                self.labels = labels
            painter.setWorldTransform(QTransform())
            painter.setOpacity(theme.OVERLAY_GREY_OPACITY if self.grey else 1.0)
            for lab in labels:
                if not lab.placed:
                    continue
                p, box = self.label_box(lab, t)
                painter.save()
                if lab.leader:
                    self.paint_leader(painter, p, box)
                self.paint_label_vector(painter, lab, box, theme.OVERLAY_GREY if self.grey else lab.colour)
                painter.restore()

    return PrintForceItem()


# --- page furniture ------------------------------------------------------------------------
page_font = theme.page_font  # a fresh copy of the app's face at a size in points, for drawings and reports


def paint_scale_bar(painter: QPainter, left: QPointF, length_m: float, px_per_m: float, unit: str) -> float:
    """A two-tone scale bar ``length_m`` long with its length written above; returns its width (px)."""
    from solver.units import format_length

    w = length_m * px_per_m
    h = theme.SCALE_BAR_HEIGHT_PX
    x0, y0 = left.x(), left.y()
    painter.setPen(theme.pixel_pen(theme.HUD_TEXT, 1.0))
    for i in range(2):
        painter.setBrush(theme.HUD_TEXT if i == 0 else theme.PAPER)
        painter.drawRect(QRectF(x0 + i * w / 2, y0, w / 2, h))
    painter.setFont(page_font(TEXT_PT))
    fm = QFontMetricsF(painter.font())
    painter.setPen(theme.HUD_TEXT)
    painter.drawText(QPointF(x0, y0 - 4), format_length(length_m, unit))
    painter.drawText(QPointF(x0 - fm.horizontalAdvance("0") / 2, y0 + h + fm.ascent() + 2), "0")
    return w


def paint_ramp(painter: QPainter, rect: QRectF, grey: bool = False) -> float:
    """The rope-use ramp (tension x SF / MBS) with ticks, title above; returns the height used."""
    from sketchpad.overlay import Legend

    fm = QFontMetricsF(page_font(SMALL_PT))
    y = rect.top()
    painter.setFont(page_font(SMALL_PT, bold=True))
    painter.setPen(INK)
    painter.drawText(QPointF(rect.left(), y + fm.ascent()), Legend.TITLE)
    y += fm.height() + 3
    ramp = QRectF(rect.left(), y, min(rect.width() - 12, 190.0), theme.LEGEND_RAMP_H_PX)
    top = Legend.TICKS[-1]
    grad = QLinearGradient(ramp.topLeft(), ramp.topRight())
    for u, c in theme.UTIL_RAMP:
        grad.setColorAt(min(u / top, 1.0), theme.OVERLAY_GREY if grey else c)
    painter.setPen(Qt.NoPen)
    painter.setBrush(grad)
    painter.drawRect(ramp)
    painter.setFont(page_font(SMALL_PT))
    painter.setPen(theme.pixel_pen(INK, 1.0))
    for u in Legend.TICKS:
        x = ramp.left() + ramp.width() * u / top
        painter.drawLine(QPointF(x, ramp.bottom()), QPointF(x, ramp.bottom() + 3))
        text = f"{u * 100:.0f}%" + ("+" if u == top else "")
        tw = fm.horizontalAdvance(text)
        painter.drawText(QPointF(min(max(x - tw / 2, rect.left()), ramp.right() + 12 - tw), ramp.bottom() + 3 + fm.ascent()), text)
    return ramp.bottom() + 3 + fm.height() - rect.top()


def rope_lines(rig: Rig) -> list[tuple[QColor, str]]:
    """(colour, "name: material") of every rope, in the order and colours the canvas uses."""
    from solver.materials import material_for
    from solver.errors import RopewrightError

    out = []
    for i, r in enumerate(rig.ropes):
        try:
            mat = material_for(rig, r.material).name
        except (RopewrightError, KeyError):
            mat = f"{r.material} (spec not known)"
        out.append((theme.rope_colour(i), f"{drawn(r.name)}: {mat}"))
    return out


def paint_rope_key(painter: QPainter, rect: QRectF, rig: Rig) -> float:
    """A coloured line and the name and material of each rope; returns the height used."""
    y = rect.top()
    for colour, text in rope_lines(rig):
        painter.setPen(theme.pixel_pen(colour, theme.ROPE_WIDTH_PX + 0.6))
        fm = QFontMetricsF(page_font(SMALL_PT))
        painter.drawLine(QPointF(rect.left(), y + fm.height() / 2), QPointF(rect.left() + 20, y + fm.height() / 2))
        y += wrap_text(painter, QRectF(rect.left() + 26, y, rect.width() - 26, 0), text, page_font(SMALL_PT))
    return y - rect.top()


def status_lines(rig: Rig, result: Result) -> list[str]:
    """What the title block says about the solve: the overlay's summary, or the failure in words."""
    from sketchpad.overlay import summary_lines

    if result.ok:
        return summary_lines(rig, result)
    return [failure_sentence(rig, result)]


def units_line(rig: Rig) -> str:
    view = "plan view (seen from above)" if rig.view == "plan" else "elevation view (seen from the side)"
    return f"Lengths in {rig.display.length}, forces in {rig.display.force}; {view}"


def paint_sidebar(painter: QPainter, rect: QRectF, drawing: Drawing, title: str, subtitle: str) -> None:
    """The right-hand panel of a drawing page: title block, solve summary, scale, key, warnings, caution."""
    from solver.cautions import caution_lines

    caution = " ".join(caution_lines())
    rig, result = drawing.rig, drawing.result
    painter.save()
    painter.setPen(theme.pixel_pen(RULE, 1.0))
    painter.setBrush(PANEL_BACK)
    painter.drawRect(rect)
    inner = rect.adjusted(PAD, PAD, -PAD, -PAD)
    x, w = inner.left(), inner.width()
    y = inner.top()
    y += wrap_text(painter, QRectF(x, y, w, 0), title, page_font(TITLE_PT, bold=True)) + 3
    y += wrap_text(painter, QRectF(x, y, w, 0), subtitle, page_font(SMALL_PT), MUTED) + 1
    y += wrap_text(painter, QRectF(x, y, w, 0), units_line(rig), page_font(SMALL_PT), MUTED) + 8
    # solve summary
    if result.ok:
        for line in status_lines(rig, result):
            y += wrap_text(painter, QRectF(x, y, w, 0), line, page_font(TEXT_PT, bold=line.startswith("MA ")))
        if drawing.skipped:
            y += wrap_text(painter, QRectF(x, y, w, 0),
                           f"{drawing.skipped} force label{'s' if drawing.skipped != 1 else ''} left off "
                           f"to avoid overlap: see the report tables.", page_font(SMALL_PT, italic=True), MUTED)
    else:
        text = failure_sentence(rig, result)
        h = wrap_text(painter, QRectF(x + 6, y + 5, w - 12, 0), text, page_font(TEXT_PT, bold=True), draw=False)
        painter.setPen(Qt.NoPen)
        painter.setBrush(FAIL_BACK)
        painter.drawRoundedRect(QRectF(x, y, w, h + 10), 4, 4)
        wrap_text(painter, QRectF(x + 6, y + 5, w - 12, 0), text, page_font(TEXT_PT, bold=True), theme.BANNER_TEXT)
        y += h + 10
    y += 10
    # north arrow and scale bar
    s = theme.NORTH_ARROW_PX
    paint_north_arrow(painter, QPointF(x + s * 0.5, y + s * 0.6), s, rig.view == "elevation",
                      page_font(TEXT_PT, bold=True))
    fm = QFontMetricsF(page_font(TEXT_PT))
    if drawing.fit is not None:
        paint_scale_bar(painter, QPointF(x + s + 14, y + fm.height() + 4), drawing.scale_bar_m(),
                        drawing.fit.px_per_m, rig.display.length)
    y += s + fm.height() + 8
    # key
    painter.setPen(theme.pixel_pen(RULE, 1.0))
    painter.drawLine(QPointF(x, y), QPointF(x + w, y))
    y += 6
    from sketchpad.pages.symbol_key import paint_symbol_key

    from sketchpad.pages.zone_names import paint_failure_key

    y += paint_symbol_key(painter, QRectF(x, y, w, 0), computed=drawing.computed_zones) + 4
    y += paint_failure_key(painter, QRectF(x, y, w, 0), drawing.zones) + 2
    y += paint_rope_key(painter, QRectF(x, y, w, 0), rig) + 6
    if result.ok:
        y += paint_ramp(painter, QRectF(x, y, w, 0)) + 4
    # caution at the bottom; warnings fill what is left above it
    caution_h = wrap_text(painter, QRectF(x, 0, w, 0), caution, page_font(SMALL_PT, italic=True), draw=False)
    bottom = inner.bottom() - caution_h - 6
    # danger first (a person in a failure's path), then warnings, then notes: the room may run out
    warnings = sorted(result.warnings, key=lambda wn: {"danger": 0, "warning": 1}.get(wn.severity, 2))
    if warnings:
        y += 4
        painter.setPen(theme.pixel_pen(RULE, 1.0))
        painter.drawLine(QPointF(x, y), QPointF(x + w, y))
        y += 5
        y += wrap_text(painter, QRectF(x, y, w, 0), f"Warnings ({len(warnings)})", page_font(HEAD_PT, bold=True)) + 2
        shown = 0
        for wn in warnings[:MAX_SIDEBAR_WARNINGS]:
            colour = DANGER_TEXT if wn.severity == "danger" else WARNING_TEXT if wn.severity == "warning" else INK
            text = ("DANGER: " if wn.severity == "danger" else "") + wn.message
            h = wrap_text(painter, QRectF(x, y, w, 0), text, page_font(SMALL_PT), draw=False)
            if y + h > bottom - 14:
                break
            y += wrap_text(painter, QRectF(x, y, w, 0), text, page_font(SMALL_PT), colour) + 2
            shown += 1
        if shown < len(warnings):
            wrap_text(painter, QRectF(x, y, w, 0), f"… and {len(warnings) - shown} more in the report.",
                      page_font(SMALL_PT, italic=True), MUTED)
    wrap_text(painter, QRectF(x, inner.bottom() - caution_h, w, 0), caution, page_font(SMALL_PT, italic=True), INK)
    painter.restore()


def paint_key_strip(painter: QPainter, rect: QRectF, drawing: Drawing) -> None:
    """The key under a drawing (reports): north arrow, scale bar, rope-use ramp, then every symbol in rows."""
    from sketchpad.pages.symbol_key import paint_symbol_key

    rig = drawing.rig
    painter.save()
    s = theme.NORTH_ARROW_PX * 0.8
    x, y = rect.left(), rect.top()
    paint_north_arrow(painter, QPointF(x + s * 0.5, y + s * 0.6), s, rig.view == "elevation",
                      page_font(TEXT_PT, bold=True))
    fm = QFontMetricsF(page_font(TEXT_PT))
    x += s + 14
    if drawing.fit is not None:
        x += paint_scale_bar(painter, QPointF(x, y + fm.height() + 6), drawing.scale_bar_m(), drawing.fit.px_per_m,
                             rig.display.length) + 24
    ramp_w = 200.0
    if drawing.result.ok:
        paint_ramp(painter, QRectF(rect.right() - ramp_w, y, ramp_w, 0))
    from sketchpad.pages.zone_names import paint_failure_key

    y += s + fm.height() + 4
    y += paint_symbol_key(painter, QRectF(rect.left(), y, rect.width(), 0), computed=drawing.computed_zones)
    paint_failure_key(painter, QRectF(rect.left(), y, rect.width(), 0), drawing.zones)
    painter.restore()


def key_strip_height(width: float, drawing: Drawing | None = None) -> float:
    """Height :func:`paint_key_strip` takes in ``width`` px (with ``drawing``'s failure-area names, if any)."""
    from sketchpad.pages.symbol_key import symbol_key_height
    from sketchpad.pages.zone_names import paint_failure_key

    image = QImage(8, 8, QImage.Format_ARGB32_Premultiplied)
    painter = QPainter(image)
    try:
        computed = drawing is not None and drawing.computed_zones
        names = 0.0 if drawing is None else paint_failure_key(painter, QRectF(0, 0, width, 0), drawing.zones, False)
        return theme.NORTH_ARROW_PX * 0.8 + QFontMetricsF(page_font(TEXT_PT)).height() + 4 + \
            symbol_key_height(painter, width, computed=computed) + names
    finally:
        painter.end()


def paint_page(painter: QPainter, rect: QRectF, drawing: Drawing, title: str, subtitle: str) -> None:
    """A whole drawing page into ``rect`` (logical px): the drawing on the left, the panel on the right."""
    side = min(max(rect.width() * SIDEBAR_FRACTION, SIDEBAR_MIN_PX), SIDEBAR_MAX_PX)
    if rect.width() < 2.2 * side:  # a tall narrow page: keep the drawing usable
        side = rect.width() * 0.34
    draw_rect = QRectF(rect.left(), rect.top(), rect.width() - side, rect.height())
    drawing.paint(painter, draw_rect)
    paint_sidebar(painter, QRectF(draw_rect.right(), rect.top(), side, rect.height()).adjusted(0, 0, -0.5, -0.5),
                  drawing, title, subtitle)


# --- devices -------------------------------------------------------------------------------
def page_size_for(rig: Rig) -> QPageSize:
    """US Letter for a rig shown in feet, A4 otherwise."""
    return QPageSize(QPageSize.Letter if rig.display.length == "ft" else QPageSize.A4)


def _titles(rig: Rig, source: str | None, now: _dt.datetime | None) -> tuple[str, str]:
    when = (now or _dt.datetime.now()).strftime("%Y-%m-%d %H:%M")
    title = rig.title or (pathlib.Path(source).name if source else "Untitled rig")
    sub = f"Drawn {when}" + (f" from {pathlib.Path(source).name}" if source else "") + " · Ropewright planning aid"
    return title, sub


def write_png(path: pathlib.Path, size: tuple[int, int], paint, grey: bool = False) -> None:
    """``paint(painter, rect)`` into a PNG of ``size`` pixels (wider than 1200 px at a device pixel ratio above 1),
    8-bit grey when ``grey``."""
    w, h = size
    dpr = max(1.0, w / LOGICAL_WIDTH_PX)
    image = QImage(w, h, QImage.Format_ARGB32_Premultiplied)
    image.setDotsPerMeterX(DPM_96)
    image.setDotsPerMeterY(DPM_96)
    image.fill(theme.PAPER)
    image.setDevicePixelRatio(dpr)
    painter = QPainter(image)
    try:
        paint(painter, QRectF(0, 0, w / dpr, h / dpr))
    finally:
        painter.end()
    image.setDevicePixelRatio(1.0)
    if grey:
        image = image.convertToFormat(QImage.Format_Grayscale8)
    if not image.save(str(path), "PNG"):
        raise ExportError(f"could not write the picture to {path}")


def write_svg(path: pathlib.Path, size: tuple[int, int], paint, title: str, description: str = "") -> None:
    """``paint(painter, rect)`` into an SVG of ``size`` pixels at 96 dpi (QSvgGenerator)."""
    from PySide6.QtSvg import QSvgGenerator

    w, h = size
    lw, lh = w / max(1.0, w / LOGICAL_WIDTH_PX), h / max(1.0, w / LOGICAL_WIDTH_PX)
    gen = QSvgGenerator()
    gen.setFileName(str(path))
    gen.setResolution(int(SCREEN_DPI))
    gen.setSize(QSize(w, h))
    gen.setViewBox(QRectF(0, 0, lw, lh))
    gen.setTitle(title)
    gen.setDescription(description)
    painter = QPainter()
    if not painter.begin(gen):
        raise ExportError(f"could not write the drawing to {path}")
    try:
        paint(painter, QRectF(0, 0, lw, lh))
    finally:
        painter.end()


def render_png(drawing: Drawing, path: pathlib.Path, size: tuple[int, int], title: str, subtitle: str) -> None:
    """The drawing page as a PNG of ``size`` pixels."""
    write_png(path, size, lambda p, r: paint_page(p, r, drawing, title, subtitle))


def render_svg(drawing: Drawing, path: pathlib.Path, size: tuple[int, int], title: str, subtitle: str) -> None:
    """The drawing page as an SVG of ``size`` pixels at 96 dpi."""
    write_svg(path, size, lambda p, r: paint_page(p, r, drawing, title, subtitle), title, subtitle)


def pdf_writer(path: pathlib.Path, page: QPageSize, orientation, title: str):
    """A QPdfWriter on ``page`` with zero margins at 96 dpi (so pixel sizes match the screen)."""
    from PySide6.QtGui import QPdfWriter

    writer = QPdfWriter(str(path))
    writer.setResolution(int(SCREEN_DPI))
    writer.setPageLayout(QPageLayout(page, orientation, QMarginsF(0, 0, 0, 0), QPageLayout.Point))
    writer.setTitle(title)
    writer.setCreator("Ropewright")
    return writer


def portrait_writer(path: pathlib.Path, rig: Rig, title: str, grey: bool = False):
    """A portrait page writer (A4, or Letter for imperial rigs), writing grey levels when ``grey``."""
    writer = pdf_writer(path, page_size_for(rig), QPageLayout.Portrait, title)
    if grey:
        from sketchpad.pages.greyscale import set_pdf_grey

        set_pdf_grey(writer)
    return writer


def write_landscape_pdf(path: pathlib.Path, rig: Rig, paint, title: str, grey: bool = False) -> None:
    """``paint(painter, rect)`` on one landscape page (A4, or Letter for imperial rigs) inside a printer margin."""
    writer = pdf_writer(path, page_size_for(rig), QPageLayout.Landscape, title)
    if grey:
        from sketchpad.pages.greyscale import set_pdf_grey

        set_pdf_grey(writer)
    painter = QPainter()
    if not painter.begin(writer):
        raise ExportError(f"could not write the PDF to {path}")
    try:
        margin = 0.3 * SCREEN_DPI  # printers cannot print to the very edge
        paint(painter, QRectF(0, 0, writer.width(), writer.height()).adjusted(margin, margin, -margin, -margin))
    finally:
        painter.end()


def render_pdf(drawing: Drawing, path: pathlib.Path, title: str, subtitle: str) -> None:
    """One landscape page (A4, or Letter for imperial rigs), zero margins."""
    write_landscape_pdf(path, drawing.rig, lambda p, r: paint_page(p, r, drawing, title, subtitle), title)


def format_of(path: pathlib.Path | str) -> str:
    """``png``, ``svg`` or ``pdf`` from the file name; ExportError in words otherwise."""
    ext = pathlib.Path(path).suffix.lower().lstrip(".")
    if ext not in FORMATS:
        raise ExportError(f"cannot tell what to write from '{pathlib.Path(path).name}': "
                          f"end the file name in .png, .svg or .pdf")
    return ext


def parse_size(text: str | None) -> tuple[int, int]:
    """``"WxH"`` pixels (default 1600x1100); ExportError in words when unreadable or out of range."""
    if not text:
        return DEFAULT_SIZE
    parts = text.lower().replace("×", "x").split("x")
    try:
        w, h = (int(p.strip()) for p in parts)
    except ValueError:
        raise ExportError(f"--size '{text}' is not WIDTHxHEIGHT in pixels, e.g. 1600x1100") from None
    if not (MIN_SIZE_PX <= w <= MAX_SIZE_PX and MIN_SIZE_PX <= h <= MAX_SIZE_PX):
        raise ExportError(f"--size '{text}': each side must be {MIN_SIZE_PX} to {MAX_SIZE_PX} pixels")
    return w, h


def export_drawing(rig: Rig, path: pathlib.Path | str, size: tuple[int, int] | None = None,
                   result: Result | None = None, rig_dir: pathlib.Path | None = None,
                   source: str | None = None, now: _dt.datetime | None = None,
                   layers: Iterable[str] | None = None, scan=None) -> Drawing:
    """Write the rig, its site and its forces to ``path`` (.png, .svg or .pdf); returns the Drawing used.

    ``result`` defaults to ``analyse(rig)``; ``size`` (pixels) applies to PNG and SVG; ``scan``: a finished
    failure scan of ``rig`` solved as ``result`` (solver.failures.Scan) to draw, else the scan runs here.
    Raises ExportError in words if the format is unknown or the file cannot be written.
    """
    path = pathlib.Path(path)
    fmt = format_of(path)
    if not path.parent.exists():
        raise ExportError(f"the folder {path.parent} does not exist")
    refuse_undrawable(rig)
    ensure_app()
    drawing = Drawing(rig, result, rig_dir, layers, scan_failures=scan is None)
    if scan is not None and drawing.result.ok:
        drawing.use_scan(scan)
    title, subtitle = _titles(rig, source, now)
    if fmt == "png":
        render_png(drawing, path, size or DEFAULT_SIZE, title, subtitle)
    elif fmt == "svg":
        render_svg(drawing, path, size or DEFAULT_SIZE, title, subtitle)
    else:
        render_pdf(drawing, path, title, subtitle)
    log.info("wrote %s", path)
    return drawing


# --- command line --------------------------------------------------------------------------
def ensure_app():
    """The running Q(Gui)Application, or a new offscreen QApplication when there is no screen."""
    from PySide6.QtWidgets import QApplication

    app = QApplication.instance()
    if app is None:
        if not os.environ.get("QT_QPA_PLATFORM") and not (os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY")):
            os.environ["QT_QPA_PLATFORM"] = "offscreen"
        app = QApplication(sys.argv[:1])
    return app


def load_for_cli(rig_path: str) -> tuple[Rig, Result]:
    """Load and analyse a rig for the CLI (RigFileError and OSError pass up to the caller)."""
    from solver.analysis import analyse
    from solver.rigfile import load_rig

    rig = load_rig(rig_path)
    return rig, analyse(rig)


def rig_error_text(rig_path: str, exc: Exception) -> str:
    """The rig file's problem in words, naming the file once."""
    text = str(exc)
    name = pathlib.Path(rig_path).name
    return text if name in text else f"{rig_path}: {text}"


def require_pdf_name(path, what: str) -> pathlib.Path:
    """``path`` as a Path; ExportError in words (``what``: "a report", "a manual", ...) unless it ends in .pdf."""
    path = pathlib.Path(path)
    if path.suffix.lower() != ".pdf":
        raise ExportError(f"{what} is a PDF: end the file name '{path.name}' in .pdf")
    return path


def run_file_command(command: str, args, check_output, write, failed_note: str) -> int:
    """Shared shell of ``render`` and ``report``: load and solve ``args.rig``, write ``args.output``.

    ``check_output()`` refuses a bad output name (ExportError); ``write(rig, result, rig_dir)``
    writes the file.  Every failure is one line naming the file and the problem; exit 0 written,
    2 bad input, 3 written but the rig did not solve (``failed_note`` says what that means).
    """
    from solver.errors import RopewrightError

    prefix = f"ropewright {command}"
    try:
        check_output()
        rig, result = load_for_cli(args.rig)
        write(rig, result, pathlib.Path(args.rig).resolve().parent)
    except ExportError as exc:
        print(f"{prefix}: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except RopewrightError as exc:
        print(f"{prefix}: {rig_error_text(args.rig, exc)}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except OSError as exc:
        print(f"{prefix}: cannot read {args.rig}: {exc.strerror or exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    if not result.ok:
        print(f"{prefix}: wrote {args.output} {failed_note}: {failure_sentence(rig, result)}", file=sys.stderr)
        return EXIT_SOLVE_FAILED
    print(f"wrote {args.output}")
    return EXIT_OK


def render_cli(args) -> int:
    """``ropewright render RIG -o OUT.(png|svg|pdf) [--size WxH]``: exit 0 written, 2 bad input, 3 solve failed."""
    sized = getattr(args, "size", None)
    fmt_size: list = []

    def check_output() -> None:
        fmt_size[:] = [format_of(args.output), parse_size(sized)]
        if sized and fmt_size[0] == "pdf":
            print("ropewright render: --size is for PNG and SVG; the PDF is a landscape page", file=sys.stderr)

    def write(rig, result, rig_dir) -> None:
        export_drawing(rig, args.output, fmt_size[1], result, rig_dir, source=args.rig)

    return run_file_command("render", args, check_output, write, "without forces")


__all__ = ["Drawing", "ExportError", "export_drawing", "render_cli", "paint_page", "paint_key_strip",
           "parse_size", "format_of", "page_size_for", "pdf_writer", "ensure_app", "DEFAULT_SIZE"]
