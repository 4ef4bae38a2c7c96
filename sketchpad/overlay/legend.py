"""The widgets fixed on the viewport over the canvas: the legend (ramp, mechanical advantage, haul summary)
and the banner naming why a solve failed."""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRect, QRectF, QSize, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPainter, QPixmap
from PySide6.QtWidgets import QLabel, QWidget

from sketchpad import legend_key, theme
from sketchpad.items import text_advance
from sketchpad.summary_words import sentences
from solver.model import Rig
from solver.readouts import ma_short
from solver.result import Result

# --- screen-fixed widgets on the viewport ------------------------------------------------------------------
class Banner(QLabel):
    """A red banner across the top of the canvas naming why the solve failed."""

    def __init__(self, parent: QWidget) -> None:
        super().__init__(parent)
        self.setWordWrap(True)
        self.setTextFormat(Qt.PlainText)
        self.setFont(theme.font(theme.LABEL_POINT_SIZE + 1, bold=True))
        self.setStyleSheet(f"QLabel {{ background: {theme.BANNER_BACK.name(QColor.HexArgb)}; "
                           f"color: {theme.BANNER_TEXT.name()}; padding: 7px 10px; border-radius: 4px; }}")
        self.setAttribute(Qt.WA_TransparentForMouseEvents, True)
        self.hide()

    def place(self) -> None:
        from sketchpad.hint_bar import top_strip_width

        m = theme.BANNER_MARGIN_PX
        self.setFixedWidth(top_strip_width(self.parentWidget().rect().width()))
        self.adjustSize()
        self.move(m, m)


class Legend(QWidget):
    """Bottom-right key: the utilization ramp, zone hatches and the system summary lines.

    The widget itself is never shown: it holds the key's size and place on the viewport, and the
    view paints it as part of its own frame (``SketchView.foreground_painters``, :meth:`paint_on`),
    which saves Qt a second paint pass of a child widget on every frame of a drag.
    """

    def __init__(self, parent: QWidget) -> None:
        super().__init__(parent)
        self.setAttribute(Qt.WA_TransparentForMouseEvents, True)
        self.lines: list[str] = []
        self.show_zones = True
        self.grey = False
        self.zone_names = theme.DRAWN_ZONE_NAMES  # (kind, name) of each zone swatch in the key
        self.font = theme.font(theme.OVERLAY_POINT_SIZE)
        self.title_font = theme.font(theme.OVERLAY_POINT_SIZE, bold=True)
        self.fm = QFontMetricsF(self.font)
        self._pixmap: QPixmap | None = None
        self._pixmap_key: tuple | None = None
        self._frame_pix: tuple | None = None  # (key, pixmap) of the key without its lines
        self._line_pix: dict = {}  # (text, fraction of a px, dpr) -> pixmap of one summary line
        #: How many frames and text lines were rendered into pixmaps (the rest were reused): what tests read.
        self.render_counts: dict[str, int] = {"frames": 0, "lines": 0}
        self.shown = False  # whether the view paints the key (the widget stays hidden)
        self._areas: tuple | None = None  # (lines, frame, areas) of the last call of areas()
        self.hide()

    TITLE = legend_key.TITLE
    TICKS = (0.0, 0.5, 1.0, 1.5)

    def set_content(self, lines: list[str], show_zones: bool, grey: bool) -> None:
        lines = list(lines)
        if (lines, show_zones, grey) == (self.lines, self.show_zones, self.grey) and self.shown:
            return  # nothing new to say (most drag steps)
        self.lines, self.show_zones, self.grey = lines, show_zones, grey
        self.resize(self.sizeHint())
        self.place()
        # repaint through the viewport: a legend-only update costs Qt a second paint pass of the
        # viewport under the (translucent) legend; as part of the viewport's region it comes free
        self.parentWidget().update(self.geometry())

    def sizeHint(self) -> QSize:  # noqa: N802
        pad, lh = 8, self.fm.height()
        # advances remembered per (text, font): a drag step changes a number or two of the lines
        w = max([theme.LEGEND_RAMP_W_PX + 24, text_advance(self.TITLE, self.title_font)]
                + [text_advance(t, self.font) for t in self.lines]
                + ([legend_key.rows_width(legend_key.rows_for(self.zone_names), lambda t: text_advance(t, self.font))]
                   if self.show_zones else []))
        rows = legend_key.rows_height(legend_key.rows_for(self.zone_names), lh, self.show_zones)
        h = lh + 4 + theme.LEGEND_RAMP_H_PX + lh + 6 + rows + len(self.lines) * lh
        return QSize(int(w + 2 * pad), int(h + 2 * pad))

    def place(self) -> None:
        vp = self.parentWidget().rect()
        m = theme.LEGEND_MARGIN_PX
        self.move(vp.width() - self.width() - m, vp.height() - self.height() - m)

    def set_shown(self, on: bool) -> None:
        """Show or hide the key (the viewport repaints where it is)."""
        if bool(on) != self.shown:
            self.shown = bool(on)
            self.parentWidget().update(self.geometry())

    def areas(self) -> list[tuple[QRect, tuple]]:
        """The viewport px :meth:`paint_on` paints in, in parts, each with what fixes its pixels: the box with the
        title, ramp and zone key, then one band per summary line (a drag step mostly changes a number or two)."""
        if not self.shown:
            return []
        g = self.geometry()
        frame = (g.x(), g.y(), g.width(), g.height(), self.show_zones, self.zone_names, self.grey, len(self.lines))
        last = self._areas
        if last is not None and last[0] is self.lines and last[1] == frame:
            return last[2]  # set_content hands in a new list when the lines change
        y0 = self._lines_top()
        lh = self.fm.height()
        out = [(g, frame)]
        for i, line in enumerate(self.lines):  # a band per line, a little taller than the line (anti-aliased glyphs)
            top = math.floor(y0 + i * lh) - 2
            out.append((QRect(g.x(), g.y() + top, g.width(), math.ceil(lh) + 4), (frame, line)))
        self._areas = (self.lines, frame, out)
        return out

    def paint_on(self, painter: QPainter, dpr: float | None) -> None:
        """Paint the key at its place, ``painter`` in viewport pixels: on screen (``dpr``) blitted from a
        pixmap put together again only when the key changes, else (a scaled or vector render) as vectors.

        The pixmap is the key's frame (box, title, ramp, zone swatches) and one cached pixmap per text
        line: a drag step that changes the MA or a load's force renders that one line, not the whole key.
        """
        if not self.shown:
            return
        if dpr is None:
            painter.save()
            painter.translate(self.x(), self.y())
            self._paint(painter)
            painter.restore()
            return
        key = (tuple(self.lines), self.show_zones, self.zone_names, self.grey, self.width(), self.height(), dpr)
        if self._pixmap is None or self._pixmap_key != key:
            self._pixmap, self._pixmap_key = self._assembled(dpr), key
        painter.drawPixmap(self.x(), self.y(), self._pixmap)

    def _assembled(self, dpr: float) -> QPixmap:
        """The key as one pixmap: the cached frame with each line's cached pixmap laid over it."""
        pix = self._blank(self.width(), self.height(), dpr)
        p = QPainter(pix)
        frame_key = (self.show_zones, self.zone_names, self.grey, self.width(), self.height(), dpr)
        if self._frame_pix is None or self._frame_pix[0] != frame_key:
            frame = self._blank(self.width(), self.height(), dpr)
            fp = QPainter(frame)
            self._paint_frame(fp)
            fp.end()
            self._frame_pix = (frame_key, frame)
            self.render_counts["frames"] += 1
        p.drawPixmap(0, 0, self._frame_pix[1])
        lines: dict = {}
        y = self._lines_top()
        lh = self.fm.height()
        for line in self.lines:
            top = math.floor(y)
            lkey = (line, y - top, dpr)
            lp = self._line_pix.get(lkey)
            if lp is None:
                lp = self._blank(math.ceil(self.LINE_PAD + self.fm.horizontalAdvance(line) + 2), math.ceil(lh) + 2, dpr)
                tp = QPainter(lp)
                self._paint_line(tp, line, y - top)
                tp.end()
                self.render_counts["lines"] += 1
            lines[lkey] = lp
            p.drawPixmap(0, top, lp)
            y += lh
        self._line_pix = lines  # the lines of this key only: a changed number's old line is let go
        p.end()
        return pix

    @staticmethod
    def _blank(w: float, h: float, dpr: float) -> QPixmap:
        pix = QPixmap(max(1, round(w * dpr)), max(1, round(h * dpr)))
        pix.setDevicePixelRatio(dpr)
        pix.fill(Qt.transparent)
        return pix

    LINE_PAD = 8.0  # px from the key's left edge to its text

    def _paint(self, p: QPainter) -> None:
        """The whole key as vectors (exports, scaled renders): frame, then the lines."""
        self._paint_frame(p)
        y = self._lines_top()
        for line in self.lines:
            self._paint_line(p, line, y)
            y += self.fm.height()

    def _lines_top(self) -> float:
        """Top (px in the key) of the first summary line: below the title, the ramp and the zone swatches."""
        lh = self.fm.height()
        y = self.LINE_PAD + lh + 4 + theme.LEGEND_RAMP_H_PX + 3 + lh + 3
        return y + legend_key.rows_height(legend_key.rows_for(self.zone_names), lh, self.show_zones)

    def _paint_line(self, p: QPainter, line: str, y: float) -> None:
        p.setFont(self.font)
        p.setPen(theme.OVERLAY_LABEL_TEXT)
        p.drawText(QPointF(self.LINE_PAD, y + self.fm.ascent()), line)

    def _paint_frame(self, p: QPainter) -> None:
        p.setRenderHint(QPainter.Antialiasing, True)
        p.setPen(theme.pixel_pen(theme.LEGEND_EDGE, 1.0))
        p.setBrush(theme.LEGEND_BACK)
        p.drawRoundedRect(QRectF(self.rect()).adjusted(0.5, 0.5, -0.5, -0.5), 5, 5)
        pad, lh = self.LINE_PAD, self.fm.height()
        y = pad
        p.setFont(self.title_font)
        p.setPen(theme.OVERLAY_LABEL_TEXT)
        p.drawText(QPointF(pad, y + self.fm.ascent()), self.TITLE)
        y += lh + 4
        ramp = QRectF(pad, y, theme.LEGEND_RAMP_W_PX, theme.LEGEND_RAMP_H_PX)
        top = self.TICKS[-1]
        legend_key.paint_wedge(p, ramp, top, self.grey)
        p.setFont(self.font)
        p.setPen(theme.pixel_pen(theme.OVERLAY_LABEL_TEXT, 1.0))
        for u in self.TICKS:
            x = ramp.left() + ramp.width() * u / top
            p.drawLine(QPointF(x, ramp.bottom()), QPointF(x, ramp.bottom() + 3))
            text = f"{u * 100:.0f}%" + ("+" if u == top else "")
            tw = self.fm.horizontalAdvance(text)
            p.drawText(QPointF(min(max(x - tw / 2, 2), self.width() - tw - 2), ramp.bottom() + 3 + self.fm.ascent()), text)
        y = ramp.bottom() + 3 + lh + 3
        if self.show_zones:
            legend_key.paint_rows(p, legend_key.rows_for(self.zone_names), pad, y, lh, self.fm.ascent())


def summary_lines(rig: Rig, result: Result) -> list[str]:
    """The system in a few lines: MA nominal/ideal/actual, then sentences (sketchpad.summary_words)."""
    out = []
    if result.ma_actual is not None:  # a drag step leaves nominal and ideal to the analysis at the pause
        out.append(ma_short(result))
    return out + sentences(rig, result)
