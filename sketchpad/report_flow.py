"""The report's page flow: text, headings, boxes and tables laid down page after page, and the page style they
share (sizes in points, ink colours) with the report's own sections (haul plan, failures, moving water)."""

from __future__ import annotations

from typing import Callable

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFont, QFontMetricsF, QPainter

from sketchpad.export import page_font
from sketchpad.pages.table import Table

BODY_PT, SMALL_PT, TABLE_PT, HEAD_PT, TITLE_PT = 9.0, 7.5, 8.0, 11.0, 16.0
INK = QColor("#1d1d1a")
MUTED = QColor("#55554f")
RULE = QColor("#b9ae97")
HEAD_BACK = QColor("#ece7da")
ZEBRA = QColor("#f8f6f0")
LOW_SF = QColor("#b3122e")  # a safety factor below the rig's minimum


class Flow:
    """Top-to-bottom layout on pages of ``content`` (logical px); ``painter`` None measures only."""

    def __init__(self, device, painter: QPainter | None, content: QRectF, footer: Callable[[QPainter, int], None],
                 new_page: Callable[[], None]) -> None:
        self.device, self.painter, self.content = device, painter, content
        self.footer, self._new_page = footer, new_page
        self.page = 1
        self.y = content.top()

    @property
    def left(self) -> float:
        return self.content.left()

    @property
    def width(self) -> float:
        return self.content.width()

    def room(self) -> float:
        return self.content.bottom() - self.y

    def need(self, h: float) -> None:
        if h > self.room() and self.y > self.content.top() + 1:
            self.break_page()

    def break_page(self) -> None:
        if self.painter is not None:
            self.footer(self.painter, self.page)
            self._new_page()
        self.page += 1
        self.y = self.content.top()

    def finish(self) -> int:
        if self.painter is not None:
            self.footer(self.painter, self.page)
        return self.page

    def text_height(self, text: str, font: QFont, width: float | None = None) -> float:
        fm = QFontMetricsF(font, self.device)
        flags = int(Qt.AlignLeft | Qt.AlignTop | Qt.TextWordWrap)
        return fm.boundingRect(QRectF(0, 0, width or self.width, 1e6), flags, text).height()

    def text(self, text: str, font: QFont, colour: QColor = INK, gap: float = 4.0, indent: float = 0.0,
             keep: float = 0.0) -> float:
        """A wrapped paragraph (moved whole to the next page if it does not fit); returns its height."""
        w = self.width - indent
        h = self.text_height(text, font, w)
        self.need(h + keep)
        if self.painter is not None:
            self.painter.setFont(font)
            self.painter.setPen(colour)
            self.painter.drawText(QRectF(self.left + indent, self.y, w, h + 2),
                                  int(Qt.AlignLeft | Qt.AlignTop | Qt.TextWordWrap), text)
        self.y += h + gap
        return h

    def heading(self, text: str) -> None:
        self.y += 6
        self.text(text, page_font(HEAD_PT, bold=True), gap=3, keep=40)
        if self.painter is not None:
            self.painter.setPen(RULE)
            self.painter.drawLine(QPointF(self.left, self.y - 2), QPointF(self.left + self.width, self.y - 2))
        self.y += 2

    def box(self, text: str, font: QFont, back: QColor, colour: QColor) -> None:
        pad = 7.0
        h = self.text_height(text, font, self.width - 2 * pad) + 2 * pad
        self.need(h)
        if self.painter is not None:
            self.painter.setPen(Qt.NoPen)
            self.painter.setBrush(back)
            self.painter.drawRoundedRect(QRectF(self.left, self.y, self.width, h), 4, 4)
            self.painter.setFont(font)
            self.painter.setPen(colour)
            self.painter.drawText(QRectF(self.left + pad, self.y + pad, self.width - 2 * pad, h),
                                  int(Qt.AlignLeft | Qt.AlignTop | Qt.TextWordWrap), text)
        self.y += h + 6

    def block(self, h: float, paint: Callable[[QPainter, QRectF], None]) -> None:
        self.need(h)
        if self.painter is not None:
            paint(self.painter, QRectF(self.left, self.y, self.width, h))
        self.y += h

    def table(self, t: Table) -> None:
        """A table with a shaded header (repeated on a new page), zebra rows, red rows below the safety factor."""
        font, bold = page_font(TABLE_PT), page_font(TABLE_PT, bold=True)
        total = sum(t.widths)
        cols = [self.width * w / total for w in t.widths]
        pad = 4.0
        if t.rows:  # keep the heading with the table's header and first row
            first = max(self.text_height(c, bold, cols[i] - 2 * pad) for i, c in enumerate(t.header)) + \
                max(self.text_height(c, font, cols[i] - 2 * pad) for i, c in enumerate(t.rows[0])) + 4 * pad
            self.need(first + self.text_height(t.title, page_font(HEAD_PT, bold=True)) + 16)
        self.heading(t.title)
        if not t.rows:
            self.text("None in this rig.", page_font(BODY_PT, italic=True), MUTED)
            return

        def row_h(cells, f) -> float:
            return max(self.text_height(c, f, cols[i] - 2 * pad) for i, c in enumerate(cells)) + 2 * pad

        def draw_row(cells, f, back: QColor | None, colour: QColor) -> None:
            h = row_h(cells, f)
            if self.painter is not None:
                p = self.painter
                if back is not None:
                    p.setPen(Qt.NoPen)
                    p.setBrush(back)
                    p.drawRect(QRectF(self.left, self.y, self.width, h))
                p.setFont(f)
                p.setPen(colour)
                x = self.left
                for i, c in enumerate(cells):
                    align = (Qt.AlignRight if i in t.right else Qt.AlignLeft) | Qt.AlignTop | Qt.TextWordWrap
                    p.drawText(QRectF(x + pad, self.y + pad, cols[i] - 2 * pad, h), int(align), c)
                    x += cols[i]
            self.y += h

        head_h = row_h(t.header, bold)
        self.need(head_h + row_h(t.rows[0], font))
        draw_row(t.header, bold, HEAD_BACK, INK)
        for n, cells in enumerate(t.rows):
            h = row_h(cells, font)
            if h > self.room():
                self.break_page()
                draw_row(t.header, bold, HEAD_BACK, INK)
            draw_row(cells, page_font(TABLE_PT, bold=True) if n in t.flagged else font,
                     ZEBRA if n % 2 else None, LOW_SF if n in t.flagged else INK)
        if self.painter is not None:
            self.painter.setPen(RULE)
            self.painter.drawLine(QPointF(self.left, self.y), QPointF(self.left + self.width, self.y))
        self.y += 3
        if t.note:
            self.text(t.note, page_font(SMALL_PT, italic=True), MUTED)
