"""The training manual: many rigs in one PDF (``ropewright manual RIG... -o manual.pdf``, File ▸ Export manual).

A title page (the manual's title, date, what is in it and the full cautions), a contents page
(each rig's title and the page it starts on), then each rig's report pages (the same pages as
:func:`sketchpad.report.write_report`: drawing and key, system, warnings, tables, plot,
schematic, roles, rope lengths, gear list, assumptions, cautions), numbered through the whole
book ("page n of N" in every footer).  The layout runs twice: the first pass counts every rig's
pages so the contents can give page numbers; ``progress(done, total, title)`` is told as each
rig is analysed and again as it is written (2 × rigs steps).
"""

from __future__ import annotations

import datetime as _dt
import pathlib
from dataclasses import dataclass, field
from typing import Callable, Sequence

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QPainter

from solver.model import Rig
from solver.result import Result

Progress = Callable[[int, int, str], None]
CONTENTS_ROW_PX = 20.0


@dataclass
class Chapter:
    """One rig in the manual: where it came from, its analysis, its layout sizes and its first page."""

    rig: Rig
    result: Result
    source: str | None
    rig_dir: pathlib.Path | None
    title: str
    sizes: tuple[float, float] = (0.0, 0.0)
    plot: tuple | None = None
    pages: int = 0
    first_page: int = 0
    drawing: object = None
    failures: object = None  # the report's "If something lets go" section (sketchpad.report_failures)
    haul: object = None  # the report's haul plan page (sketchpad.haul_report), when there is a load to move


@dataclass
class Manual:
    """What was written: the path, the page count, and each chapter's title and first page."""

    path: pathlib.Path
    pages: int
    contents: list[tuple[str, int]] = field(default_factory=list)
    contents_pages: int = 1


class ManualError(Exception):
    """A manual that cannot be made (no rigs, a rig file that cannot be read): message in words, naming the file."""


def load_chapters(paths: Sequence[str | pathlib.Path], progress: Progress | None = None) -> list[Chapter]:
    """Load and analyse every rig file; ManualError naming the first file that cannot be read."""
    from solver.analysis import analyse
    from solver.errors import RopewrightError
    from solver.rigfile import load_rig

    if not paths:
        raise ManualError("a manual needs at least one rig file")
    chapters = []
    total = 2 * len(paths)
    for i, p in enumerate(paths):
        p = pathlib.Path(p)
        try:
            rig = load_rig(p)
        except RopewrightError as exc:
            text = str(exc)
            raise ManualError(text if p.name in text else f"{p}: {text}") from exc
        except OSError as exc:
            raise ManualError(f"cannot read {p}: {exc.strerror or exc}") from exc
        title = rig.title or p.name
        chapters.append(Chapter(rig, analyse(rig), str(p), p.resolve().parent, title))
        if progress is not None:
            progress(i + 1, total, title)
    return chapters


def chapters_of(rigs: Sequence[tuple[Rig, str | None, pathlib.Path | None]]) -> list[Chapter]:
    """Chapters from rigs already in memory (the app's open document): (rig, source name, folder)."""
    from solver.analysis import analyse

    return [Chapter(r, analyse(r), src, d, r.title or (pathlib.Path(src).name if src else "Untitled rig"))
            for r, src, d in rigs]


def _measure(writer, content: QRectF, chapter: Chapter, when: str) -> None:
    """Pick the chapter's layout as the report does, count its pages, and draw its plot once at that size.

    Counting needs only the plot's height, so each layout tried is measured with a stand-in image
    and the sweep plot is rendered (matplotlib, the slow part) for the chosen layout alone."""
    from sketchpad.export import Drawing
    from sketchpad.report import PAGES_WANTED, Flow, _compose, choose_layout, haul_sweep, plot_image, plot_stand_in

    from sketchpad.haul_report import add_haul_page, plan_for_report
    from sketchpad.report_failures import failure_section

    chapter.drawing = Drawing(chapter.rig, chapter.result, chapter.rig_dir)
    chapter.haul = plan_for_report(chapter.rig) if chapter.result.ok else None
    chapter.failures = failure_section(chapter.rig, chapter.result)
    if chapter.failures is not None:
        chapter.failures.draw_zones_on(chapter.drawing)
        chapter.result = chapter.drawing.result  # person warnings named by the failure that puts them there
    table, drawn, words = haul_sweep(chapter.rig) if chapter.result.ok else (None, 0.0, "")
    stand_in = plot_stand_in(chapter.rig, chapter.result, (table, drawn, words))

    def count(sizes: tuple[float, float]) -> int:
        counter = Flow(writer, None, content, lambda p, n: None, lambda: None)
        _compose(counter, chapter.rig, chapter.result, chapter.drawing, when, chapter.source, stand_in, sizes,
                 chapter.failures)
        if chapter.haul is not None:
            add_haul_page(counter, chapter.rig, chapter.haul)
        return counter.finish()

    chapter.sizes, chapter.pages = choose_layout(count, PAGES_WANTED + (chapter.haul is not None))
    chapter.plot = stand_in
    if stand_in is not None and table is not None:
        chapter.plot = (plot_image(chapter.rig, table, drawn, words, content.width() * 0.92, chapter.sizes[1]),
                        stand_in[1])


def contents_per_page(content: QRectF) -> int:
    """How many contents rows fit on one page (below the heading)."""
    return max(1, int((content.height() - 60.0) // CONTENTS_ROW_PX))


def _paint_title_page(painter: QPainter, content: QRectF, title: str, when: str, chapters: list[Chapter]) -> None:
    from sketchpad.export import INK, MUTED, page_font, wrap_text
    from solver.cautions import FULL_CAUTION

    x, w = content.left(), content.width()
    y = content.top() + content.height() * 0.22
    y += wrap_text(painter, QRectF(x, y, w, 0), title, page_font(26, bold=True), INK, Qt.AlignHCenter) + 10
    y += wrap_text(painter, QRectF(x, y, w, 0), f"{len(chapters)} rig{'s' if len(chapters) != 1 else ''} · made {when} "
                   "with Ropewright, a rope-rigging planning aid", page_font(10), MUTED, Qt.AlignHCenter) + 40
    wrap_text(painter, QRectF(x + w * 0.1, y, w * 0.8, 0), "Read this first", page_font(12, bold=True), INK)
    y += 24
    for para in FULL_CAUTION.split("\n\n"):
        y += wrap_text(painter, QRectF(x + w * 0.1, y, w * 0.8, 0), para, page_font(9.5, bold=True), INK) + 8


def _paint_contents(painter: QPainter, content: QRectF, rows: list[tuple[str, int]], first: bool) -> None:
    from sketchpad.export import INK, RULE, page_font

    x, w, y = content.left(), content.width(), content.top()
    painter.setFont(page_font(16, bold=True))
    painter.setPen(INK)
    painter.drawText(QPointF(x, y + 18), "Contents" if first else "Contents (continued)")
    y += 40
    painter.setPen(RULE)
    painter.drawLine(QPointF(x, y - 8), QPointF(x + w, y - 8))
    font = page_font(10)
    for title, page in rows:
        painter.setFont(font)
        painter.setPen(INK)
        num = str(page)
        r = QRectF(x, y, w, CONTENTS_ROW_PX)
        elided = painter.fontMetrics().elidedText(title, Qt.ElideRight, int(w - 80))
        painter.drawText(r, int(Qt.AlignLeft | Qt.AlignVCenter), elided)
        painter.drawText(r, int(Qt.AlignRight | Qt.AlignVCenter), num)
        tw = painter.fontMetrics().horizontalAdvance(elided)
        painter.setPen(RULE)
        painter.drawLine(QPointF(x + tw + 8, y + CONTENTS_ROW_PX - 6),
                         QPointF(x + w - painter.fontMetrics().horizontalAdvance(num) - 8, y + CONTENTS_ROW_PX - 6))
        y += CONTENTS_ROW_PX


def write_manual(chapters: list[Chapter], path: pathlib.Path | str, title: str = "Rigging manual",
                 now: _dt.datetime | None = None, greyscale: bool = False, progress: Progress | None = None) -> Manual:
    """Write the manual of ``chapters`` to ``path`` (a PDF); ExportError or ManualError in words on failure."""
    from sketchpad.export import MUTED, ExportError, ensure_app, page_font, portrait_writer, require_pdf_name
    from sketchpad.haul_report import add_haul_page
    from sketchpad.report import SMALL_PT, Flow, _compose, page_frame
    from solver.cautions import SHORT_CAUTION

    path = require_pdf_name(path, "a manual")
    if not path.parent.exists():
        raise ExportError(f"the folder {path.parent} does not exist")
    if not chapters:
        raise ManualError("a manual needs at least one rig")
    ensure_app()
    when = (now or _dt.datetime.now()).strftime("%Y-%m-%d %H:%M")
    writer = portrait_writer(path, chapters[0].rig, title, greyscale)
    page_w, page_h = writer.width(), writer.height()
    m, footer_h, content = page_frame(writer)
    # pass 1: count pages
    per_page = contents_per_page(content)
    contents_pages = -(-len(chapters) // per_page)
    page = 1 + contents_pages
    for ch in chapters:
        _measure(writer, content, ch, when)
        ch.first_page = page + 1
        page += ch.pages
    total = page
    n = len(chapters)

    def footer_for(label: str) -> Callable[[QPainter, int], None]:
        def footer(p: QPainter, number: int) -> None:
            p.setFont(page_font(SMALL_PT))
            p.setPen(MUTED)
            r = QRectF(m, page_h - m - footer_h + 8, page_w - 2 * m, footer_h)
            p.drawLine(QPointF(r.left(), r.top() - 3), QPointF(r.right(), r.top() - 3))
            p.drawText(r.adjusted(0, 0, -80, 0), int(Qt.AlignLeft | Qt.AlignTop | Qt.TextWordWrap),
                       f"{title} — {label}. {SHORT_CAUTION}")
            p.drawText(r, int(Qt.AlignRight | Qt.AlignBottom), f"page {number} of {total}")
        return footer

    rows = [(ch.title, ch.first_page) for ch in chapters]
    painter = QPainter()
    if not painter.begin(writer):
        raise ExportError(f"could not write the manual to {path}")
    try:
        painter.setRenderHints(QPainter.Antialiasing | QPainter.TextAntialiasing | QPainter.SmoothPixmapTransform)
        _paint_title_page(painter, content, title, when, chapters)
        footer_for("title page")(painter, 1)
        for c in range(contents_pages):
            writer.newPage()
            _paint_contents(painter, content, rows[c * per_page:(c + 1) * per_page], c == 0)
            footer_for("contents")(painter, 2 + c)
        for i, ch in enumerate(chapters):
            writer.newPage()
            flow = Flow(writer, painter, content, footer_for(ch.title), writer.newPage)
            flow.page = ch.first_page
            _compose(flow, ch.rig, ch.result, ch.drawing, when, ch.source, ch.plot, ch.sizes, ch.failures)
            if ch.haul is not None:
                add_haul_page(flow, ch.rig, ch.haul)
            last = flow.finish()
            if last != ch.first_page + ch.pages - 1:
                raise ExportError(f"the manual's page count changed while writing {ch.title}; nothing usable was written")
            if progress is not None:
                progress(n + i + 1, 2 * n, ch.title)
    finally:
        painter.end()
    return Manual(path, total, rows, contents_pages)


def manual_cli(args) -> int:
    """``ropewright manual RIG... -o OUT.pdf [--title T] [--greyscale]``: exit 0 written, 2 bad input or a file unread,
    3 written but a rig did not solve (its pages say so)."""
    import sys

    from sketchpad.export import EXIT_BAD_INPUT, EXIT_OK, EXIT_SOLVE_FAILED, ExportError

    def say(done: int, total: int, what: str) -> None:
        if not args.no_progress:
            print(f"[{done}/{total}] {what}", file=sys.stderr)

    try:
        if pathlib.Path(args.output).suffix.lower() != ".pdf":
            raise ExportError(f"a manual is a PDF: end the file name '{pathlib.Path(args.output).name}' in .pdf")
        chapters = load_chapters(args.rigs, say)
        manual = write_manual(chapters, args.output, args.title, greyscale=args.greyscale, progress=say)
    except (ExportError, ManualError) as exc:
        print(f"ropewright manual: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    failed = [ch.title for ch in chapters if not ch.result.ok]
    print(f"wrote {args.output}: {manual.pages} pages, {len(chapters)} rigs")
    if failed:
        print(f"ropewright manual: wrote {args.output}, but these rigs did not solve; their pages say so and give "
              f"no forces: {'; '.join(failed)}", file=sys.stderr)
        return EXIT_SOLVE_FAILED
    return EXIT_OK


__all__ = ["write_manual", "load_chapters", "chapters_of", "manual_cli", "Manual", "ManualError", "Chapter"]
