"""Writing one painted page to PNG, SVG or PDF, in colour or greyscale; the schematic page; ``render --schematic/--greyscale``.

A page is any ``paint(painter, rect)`` callable in logical px at 96 dpi (the screen's scale,
as :mod:`sketchpad.export` lays out drawings): PNGs wider than 1200 px are drawn at a device
pixel ratio above 1, PDFs are one landscape page (A4, or Letter for a rig in feet) with the
export module's margin.  Greyscale: :mod:`sketchpad.pages.greyscale`.
"""

from __future__ import annotations

import pathlib
from typing import Callable

from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QPainter

from sketchpad import theme
from solver.model import Rig
from solver.result import Result

Paint = Callable[[QPainter, QRectF], None]


def write_page(path: pathlib.Path, paint: Paint, size: tuple[int, int], rig: Rig, title: str,
               greyscale: bool = False) -> None:
    """Paint one page into ``path`` (.png, .svg or .pdf by its suffix)."""
    from sketchpad.export import format_of, write_landscape_pdf, write_png, write_svg
    from sketchpad.pages.greyscale import grey_svg_text

    fmt = format_of(path)
    if fmt == "png":
        write_png(path, size, paint, grey=greyscale)
    elif fmt == "svg":
        write_svg(path, size, paint, title)
        if greyscale:
            path.write_text(grey_svg_text(path.read_text(encoding="utf-8")), encoding="utf-8")
    else:
        write_landscape_pdf(path, rig, paint, title, grey=greyscale)


def paint_schematic_page(painter: QPainter, rect: QRectF, rig: Rig, result: Result, title: str, subtitle: str):
    """The schematic on the left, and on the right the title, what T means, the key and the cautions."""
    from sketchpad.export import (INK, MUTED, PAD, PANEL_BACK, RULE, SIDEBAR_FRACTION, SIDEBAR_MAX_PX, SIDEBAR_MIN_PX,
                                  SMALL_PT, TITLE_PT, page_font, units_line, wrap_text)
    from sketchpad.pages.schematic import caption, paint_schematic
    from sketchpad.pages.symbol_key import paint_symbol_key
    from solver.cautions import caution_lines

    side = min(max(rect.width() * SIDEBAR_FRACTION, SIDEBAR_MIN_PX), SIDEBAR_MAX_PX)
    if rect.width() < 2.2 * side:
        side = rect.width() * 0.34
    draw = QRectF(rect.left(), rect.top(), rect.width() - side, rect.height())
    layout = paint_schematic(painter, draw, rig, result)
    panel = QRectF(draw.right(), rect.top(), side, rect.height()).adjusted(0, 0, -0.5, -0.5)
    painter.save()
    painter.setPen(theme.pixel_pen(RULE, 1.0))
    painter.setBrush(PANEL_BACK)
    painter.drawRect(panel)
    inner = panel.adjusted(PAD, PAD, -PAD, -PAD)
    x, w, y = inner.left(), inner.width(), inner.top()
    y += wrap_text(painter, QRectF(x, y, w, 0), title, page_font(TITLE_PT, bold=True)) + 3
    y += wrap_text(painter, QRectF(x, y, w, 0), "Schematic: strands side by side. " + subtitle,
                   page_font(SMALL_PT), MUTED) + 1
    y += wrap_text(painter, QRectF(x, y, w, 0), units_line(rig), page_font(SMALL_PT), MUTED) + 8
    y += wrap_text(painter, QRectF(x, y, w, 0), caption(rig, result), page_font(SMALL_PT + 0.5), INK) + 6
    if layout.skipped:
        y += wrap_text(painter, QRectF(x, y, w, 0), f"{layout.skipped} label{'s' if layout.skipped != 1 else ''} "
                       "left off to avoid overlap: see the report tables.", page_font(SMALL_PT, italic=True), MUTED) + 4
    painter.setPen(theme.pixel_pen(RULE, 1.0))
    painter.drawLine(QPointF(x, y), QPointF(x + w, y))
    y += 6
    y += paint_symbol_key(painter, QRectF(x, y, w, 0), with_classes=False) + 6
    caution = " ".join(caution_lines())
    ch = wrap_text(painter, QRectF(x, 0, w, 0), caution, page_font(SMALL_PT, italic=True), draw=False)
    wrap_text(painter, QRectF(x, inner.bottom() - ch, w, 0), caution, page_font(SMALL_PT, italic=True), INK)
    painter.restore()
    return layout


def render_cli(args) -> int:
    """``ropewright render``: the plain drawing by :func:`sketchpad.export.render_cli`; with ``--schematic`` or
    ``--greyscale`` by :func:`render_pages_cli`."""
    if getattr(args, "schematic", False) or getattr(args, "greyscale", False):
        return render_pages_cli(args)
    from sketchpad.export import render_cli as plain

    return plain(args)


def render_pages_cli(args) -> int:
    """``ropewright render RIG -o OUT [--schematic] [--greyscale]``: the drawing or the schematic, colour or grey."""
    from sketchpad.export import (DEFAULT_SIZE, Drawing, _titles, ensure_app, format_of, paint_page, parse_size,
                                  run_file_command)

    fmt_size: list = []

    def check_output() -> None:
        fmt_size[:] = [format_of(args.output), parse_size(getattr(args, "size", None))]

    def write(rig, result, rig_dir) -> None:
        ensure_app()
        title, subtitle = _titles(rig, args.rig, None)
        if getattr(args, "schematic", False):
            def paint(p: QPainter, r: QRectF) -> None:
                paint_schematic_page(p, r, rig, result, title, subtitle)
        else:
            drawing = Drawing(rig, result, rig_dir)

            def paint(p: QPainter, r: QRectF) -> None:
                paint_page(p, r, drawing, title, subtitle)
        write_page(pathlib.Path(args.output), paint, fmt_size[1] or DEFAULT_SIZE, rig, title,
                   greyscale=bool(getattr(args, "greyscale", False)))

    return run_file_command("render", args, check_output, write, "without forces")


__all__ = ["write_page", "paint_schematic_page", "render_cli", "render_pages_cli"]
