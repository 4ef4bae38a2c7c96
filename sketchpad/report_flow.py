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
HEAD_ABOVE, HEAD_BELOW = 6.0, 5.0  # space above a heading (not at a page top) and below it, with its rule, px


class Flow:
    """Top-to-bottom layout on pages of ``content`` (logical px); ``painter`` None measures only."""

    def __init__(self, device, painter: QPainter | None, content: QRectF, footer: Callable[[QPainter, int], None],
                 new_page: Callable[[], None]) -> None:
        self.device, self.painter, self.content = device, painter, content
        self.footer, self._new_page = footer, new_page
        self.page = 1
        self.y = content.top()
        self._held: list[str] = []  # headings waiting for the first piece of their content (keep-with-next)

    @property
    def left(self) -> float:
        return self.content.left()

    @property
    def width(self) -> float:
        return self.content.width()

    def room(self) -> float:
        return self.content.bottom() - self.y

    def need(self, h: float) -> None:
        """Room for ``h`` px of content here, else a new page; a heading waiting for this content is placed
        with it (on the new page too), so no heading is left alone at a page foot."""
        if h + self._held_height() > self.room() and self.y > self.content.top() + 1:
            self.break_page()
        self._place_held()

    def _held_height(self) -> float:
        font = page_font(HEAD_PT, bold=True)
        return sum(HEAD_ABOVE + self.text_height(t, font) + HEAD_BELOW for t in self._held)

    def _place_held(self) -> None:
        held, self._held = self._held, []
        font = page_font(HEAD_PT, bold=True)
        for text in held:
            if self.y > self.content.top() + 1:
                self.y += HEAD_ABOVE
            h = self.text_height(text, font)
            if self.painter is not None:
                self.painter.setFont(font)
                self.painter.setPen(INK)
                self.painter.drawText(QRectF(self.left, self.y, self.width, h + 2),
                                      int(Qt.AlignLeft | Qt.AlignTop | Qt.TextWordWrap), text)
                self.painter.setPen(RULE)
                self.painter.drawLine(QPointF(self.left, self.y + h + 1), QPointF(self.left + self.width, self.y + h + 1))
            self.y += h + HEAD_BELOW

    def break_page(self) -> None:
        if self.painter is not None:
            self.footer(self.painter, self.page)
            self._new_page()
        self.page += 1
        self.y = self.content.top()

    def finish(self) -> int:
        self._place_held()
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
        """A section heading with its rule, placed together with the first piece of content that follows it
        (keep-with-next: a paragraph, a figure, or a table's header and first row)."""
        self._held.append(text)

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

    def block(self, h: float, paint: Callable[[QPainter, QRectF], None], least: float | None = None,
              after: float = 0.0) -> float:
        """A figure ``h`` px tall, kept on one page with the ``after`` px that follow it (its caption); with
        ``least``, one that does not fit is drawn shorter (down to ``least`` px) in the room left on the page
        rather than leaving that room blank. Returns the height drawn."""
        room = self.room() - self._held_height() - after
        if least is not None and least <= room < h:
            h = room
        self.need(h + after)
        if self.painter is not None:
            paint(self.painter, QRectF(self.left, self.y, self.width, h))
        self.y += h
        return h

    def table(self, t: Table) -> None:
        """A table with a shaded header (repeated on a new page), zebra rows, red rows below the safety factor."""
        font, bold = page_font(TABLE_PT), page_font(TABLE_PT, bold=True)
        total = sum(t.widths)
        cols = [self.width * w / total for w in t.widths]
        pad = 4.0
        self.heading(t.title)  # placed with the header and first row (need, below)
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
