"""The one-page briefing sheet a rigging lead reads to the team on the bank (``ropewright brief RIG -o brief.pdf``).

One portrait page (A4, or US Letter for a rig in feet): the rig up close with its key, the
commands and who does what (roles, where they stand, whether that is inside a danger zone),
the worst loads and the margins they leave, what to watch (the checks' warnings, ropes that
will not reach, people in a zone), the gear totals, the cautions and a sign-off block
(planned by, checked by, time).  Every number is the report's (same tables, same units).
Lists that would run off the page end with "… more in the report".
"""

from __future__ import annotations

import datetime as _dt
import pathlib
from dataclasses import dataclass, field

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QFontMetricsF, QPainter

from sketchpad import theme
from solver.model import Rig
from solver.result import Result

MARGIN_IN = 0.45
DPI = 96.0
TITLE_PT, HEAD_PT, TEXT_PT, SMALL_PT = 14.0, 9.5, 7.8, 6.8
DRAWING_FRACTION = 0.46  # of the content height
SIGN_OFF_H = 58.0
FOOTER_H = 24.0

#: The calls used on the bank, our own wording (common practice, no source).
COMMANDS: tuple[tuple[str, str], ...] = (
    ("STOP", "anyone, any time, for anything that looks or sounds wrong: all hauling stops and holds."),
    ("READY?", "the lead checks anchors, edges and that everyone is clear of the zones; each role answers READY."),
    ("HAUL", "the team pulls steady, hand over hand, until STOP or SET."),
    ("SET", "the grab or capture takes the load; the team eases off slowly."),
    ("RESET", "run the travelling pulleys out again; nobody steps into a zone to do it."),
    ("SLACK", "the team lets rope out under control."),
)


@dataclass
class BriefLayout:
    """What the sheet drew: its section headings, the lines it had to leave off and the drawing used."""

    headings: list[str] = field(default_factory=list)
    left_off: int = 0
    drawing: object = None


def worst_lines(rig: Rig, result: Result) -> list[tuple[str, bool]]:
    """(sentence, flagged) for the MA, the most used anchor, rope piece and hardware (report rows)."""
    from sketchpad.report import anchor_table, hardware_table, ma_sentence, rope_table
    from solver.units import format_force

    if not result.ok:
        return [("The rig did not solve: no loads or margins. Do not use it as drawn.", True)]
    fu = rig.display.force
    out: list[tuple[str, bool]] = [(ma_sentence(result), False)]
    for hid, f in result.haul.items():
        out.append((f"Haul force at {rig.point(hid).name if rig.has_point(hid) else hid}: {format_force(f, fu)}.", False))
    at = anchor_table(rig, result)
    anchors = list(result.anchors.items())
    order = sorted(range(len(anchors)), key=lambda i: -(anchors[i][1].utilization or anchors[i][1].force_N * 1e-9))
    for i in order[:3]:
        row = at.rows[i]
        out.append((f"Anchor {row[0]}: {row[1]}, {row[4]} ({row[3]}).", i in at.flagged))
    rt = rope_table(rig, result)
    if result.segments:
        i = max(range(len(result.segments)), key=lambda j: result.segments[j].tension_N)
        row = rt.rows[i]
        out.append((f"Highest rope tension: {row[2]} on {row[0]} ({row[1]}), safety factor {row[6]}.", i in rt.flagged))
    ht = hardware_table(rig, result)
    if ht.rows:
        def sf(row) -> float:
            try:
                return float(row[5].split(":")[0])
            except ValueError:
                return float("inf")
        i = min(range(len(ht.rows)), key=lambda j: sf(ht.rows[j]))
        row = ht.rows[i]
        out.append((f"Hardest-worked hardware: {row[1]} ({row[0]}), {row[3]}, safety factor {row[5]}.", i in ht.flagged))
    return out


def watch_lines(rig: Rig, result: Result, zones: list | None = None) -> list[tuple[str, bool]]:
    """(sentence, flagged) of what the team must watch: warnings, short ropes, people in a zone, edges."""
    from solver.gear import short_ropes
    from solver.roles import placements
    from solver.units import format_length

    out: list[tuple[str, bool]] = []
    for pl in placements(rig, result, zones):
        if pl.in_zone:
            out.append((f"{pl.name} ({pl.role}) stands INSIDE a danger zone: {', '.join(pl.zones)}. Move them.", True))
    for b in short_ropes(rig, result):
        out.append((f"{b.name} will not reach: needs {format_length(b.needed_m, rig.display.length)}, "
                    f"carries {format_length(b.carried_m, rig.display.length)}.", True))
    for w in result.warnings:
        out.append(((("DANGER: " if w.severity == "danger" else "") + w.message), w.severity in ("danger", "warning")))
    edges = sorted({rig.point(ps.at).name for r in rig.ropes for ps in r.path if ps.how == "edge" and rig.has_point(ps.at)})
    if edges:
        out.append((f"Edges to pad and watch: {', '.join(edges)}.", False))
    out.append(("Watch every anchor, the redirect and the grab as the load comes on; STOP at any movement.", False))
    return out


def role_lines(rig: Rig, result: Result, zones: list | None = None) -> list[tuple[str, bool]]:
    from solver.roles import placements

    out = [(f"{pl.name} — {pl.role}: {pl.where}; {pl.zone_text}.", pl.in_zone) for pl in placements(rig, result, zones)]
    return out or [("No people placed on the plan: give each role a place before hauling.", False)]


def gear_line(rig: Rig, result: Result) -> str:
    from solver.gear import gear_list

    g = gear_list(rig, result)
    ropes = "; ".join(f"{k.count} × {k.name}" for k in g.ropes)
    return (f"{g.pulleys} pulleys, {g.captures} captures, {g.grabs} rope grabs, {g.carabiners} carabiners, "
            f"{g.slings} slings; {ropes}.")


class _Column:
    """Text flowed down one column of the sheet; lines that do not fit are counted, not drawn."""

    def __init__(self, painter: QPainter, rect: QRectF, layout: BriefLayout) -> None:
        self.p, self.rect, self.y, self.layout = painter, rect, rect.top(), layout

    def heading(self, text: str) -> None:
        from sketchpad.export import RULE, page_font, wrap_text

        if self.y + 30 > self.rect.bottom():
            self.layout.left_off += 1
            return
        self.y += 4
        self.y += wrap_text(self.p, QRectF(self.rect.left(), self.y, self.rect.width(), 0), text,
                            page_font(HEAD_PT, bold=True)) + 1
        self.p.setPen(RULE)
        self.p.drawLine(QPointF(self.rect.left(), self.y), QPointF(self.rect.right(), self.y))
        self.y += 3
        self.layout.headings.append(text)

    def lines(self, items: list[tuple[str, bool]], bullet: str = "• ") -> None:
        from sketchpad.export import DANGER_TEXT, INK, MUTED, page_font, wrap_text

        for n, (text, flagged) in enumerate(items):
            font = page_font(TEXT_PT, bold=flagged)
            h = wrap_text(self.p, QRectF(self.rect.left(), 0, self.rect.width() - 8, 0), text, font, draw=False)
            if self.y + h + 14 > self.rect.bottom():
                rest = len(items) - n
                self.layout.left_off += rest
                wrap_text(self.p, QRectF(self.rect.left(), self.y, self.rect.width(), 0),
                          f"… {rest} more in the report.", page_font(SMALL_PT, italic=True), MUTED)
                self.y += 12
                return
            self.p.setFont(font)
            self.p.setPen(DANGER_TEXT if flagged else INK)
            self.p.drawText(QPointF(self.rect.left(), self.y + QFontMetricsF(font).ascent()), bullet)
            self.y += wrap_text(self.p, QRectF(self.rect.left() + 8, self.y, self.rect.width() - 8, 0), text, font,
                                DANGER_TEXT if flagged else INK) + 2


def paint_sign_off(painter: QPainter, rect: QRectF) -> None:
    """Boxes to fill in by hand: planned by, checked by, time."""
    from sketchpad.export import INK, RULE, page_font

    painter.save()
    cols = (("Planned by (name, signature)", 0.4), ("Checked by (name, signature)", 0.4), ("Date and time", 0.2))
    x = rect.left()
    for label, frac in cols:
        w = rect.width() * frac
        box = QRectF(x, rect.top(), w - 6, rect.height())
        painter.setPen(theme.pixel_pen(RULE, 1.0))
        painter.setBrush(Qt.NoBrush)
        painter.drawRect(box)
        painter.setFont(page_font(SMALL_PT, bold=True))
        painter.setPen(INK)
        painter.drawText(box.adjusted(5, 3, -3, 0), int(Qt.AlignLeft | Qt.AlignTop), label)
        painter.setPen(theme.pixel_pen(RULE, 0.8, Qt.DotLine))
        painter.drawLine(QPointF(box.left() + 5, box.bottom() - 12), QPointF(box.right() - 5, box.bottom() - 12))
        x += w
    painter.restore()


def paint_brief(painter: QPainter, page: QRectF, rig: Rig, result: Result, rig_dir: pathlib.Path | None = None,
                when: str = "", source: str | None = None, page_text: str = "page 1 of 1", scan=None) -> BriefLayout:
    """The whole sheet into ``page`` (logical px, margins included); ``scan``: a finished failure scan of ``rig``
    solved as ``result`` (solver.failures.Scan) to draw, else the scan runs here."""
    from sketchpad.export import (DANGER_TEXT, MUTED, RULE, Drawing, key_strip_height, page_font, paint_key_strip,
                                  units_line, wrap_text)
    from solver.cautions import LIMITS_CAUTION, SHORT_CAUTION

    layout = BriefLayout()
    m = MARGIN_IN * DPI
    content = page.adjusted(m, m, -m, -m)
    x, w, y = content.left(), content.width(), content.top()
    title = rig.title or (pathlib.Path(source).name if source else "Untitled rig")
    y += wrap_text(painter, QRectF(x, y, w, 0), f"Briefing: {title}", page_font(TITLE_PT, bold=True)) + 1
    y += wrap_text(painter, QRectF(x, y, w, 0), f"{when} · " + units_line(rig) +
                   (f" · {pathlib.Path(source).name}" if source else ""), page_font(SMALL_PT), MUTED) + 4
    # the rig up close, with its key
    body_h = content.bottom() - FOOTER_H - SIGN_OFF_H - 60 - y
    drawing = Drawing(rig, result, rig_dir, scan_failures=scan is None)
    if scan is not None and drawing.result.ok:
        drawing.use_scan(scan)
    result = drawing.result  # person warnings named by the failure that puts them in a zone
    key_h = key_strip_height(w, drawing) + 6
    draw_h = max(body_h * DRAWING_FRACTION, 180.0)
    layout.drawing = drawing
    draw_r = QRectF(x, y, w, draw_h)
    drawing.paint(painter, draw_r)
    painter.setPen(RULE)
    painter.setBrush(Qt.NoBrush)
    painter.drawRect(draw_r)
    paint_key_strip(painter, QRectF(x, draw_r.bottom() + 5, w, key_h - 5), drawing)
    y = draw_r.bottom() + key_h + 2
    if drawing.skipped and result.ok:
        y += wrap_text(painter, QRectF(x, y, w, 0), f"{drawing.skipped} force labels left off the drawing to avoid "
                       "overlap: the report's tables hold every number.", page_font(SMALL_PT, italic=True), MUTED)
    # two columns, above the cautions and the sign-off
    caution = (f"{SHORT_CAUTION} {LIMITS_CAUTION} Never stand in a marked danger zone or in line with a loaded "
               "rope, redirect or anchor.")
    caution_h = wrap_text(painter, QRectF(x, 0, w, 0), caution, page_font(TEXT_PT, bold=True), draw=False)
    bottom = content.bottom() - FOOTER_H - SIGN_OFF_H - caution_h - 16
    gap = 14.0
    col_w = (w - gap) / 2
    left = _Column(painter, QRectF(x, y, col_w, bottom - y), layout)
    right = _Column(painter, QRectF(x + col_w + gap, y, col_w, bottom - y), layout)
    left.heading("Commands")
    left.lines([(f"{word} — {meaning}", False) for word, meaning in COMMANDS])
    left.heading("Roles and where they stand")
    left.lines(role_lines(rig, result, drawing.zones if drawing.scan else None))
    left.heading("Gear")
    left.lines([(gear_line(rig, result), False)])
    right.heading("Worst loads and margins")
    right.lines(worst_lines(rig, result))
    right.heading("What to watch")
    right.lines(watch_lines(rig, result, drawing.zones if drawing.scan else None))
    # the cautions: always whole, across the page above the sign-off
    painter.setPen(RULE)
    painter.drawLine(QPointF(x, bottom + 3), QPointF(x + w, bottom + 3))
    wrap_text(painter, QRectF(x, bottom + 6, w, 0), caution, page_font(TEXT_PT, bold=True), DANGER_TEXT)
    paint_sign_off(painter, QRectF(x, bottom + caution_h + 12, w, SIGN_OFF_H))
    painter.setFont(page_font(SMALL_PT))
    painter.setPen(MUTED)
    foot = QRectF(x, content.bottom() - FOOTER_H + 6, w, FOOTER_H)
    painter.drawLine(QPointF(foot.left(), foot.top() - 3), QPointF(foot.right(), foot.top() - 3))
    painter.drawText(foot.adjusted(0, 0, -70, 0), int(Qt.AlignLeft | Qt.AlignTop | Qt.TextWordWrap),
                     f"Ropewright briefing — {title}. {SHORT_CAUTION}")
    painter.drawText(foot, int(Qt.AlignRight | Qt.AlignTop), page_text)
    return layout


def write_brief(rig: Rig, path: pathlib.Path | str, result: Result | None = None, rig_dir: pathlib.Path | None = None,
                source: str | None = None, now: _dt.datetime | None = None, greyscale: bool = False,
                scan=None) -> BriefLayout:
    """Write the one-page briefing sheet PDF (``scan``: the rig's failure scan made already, else it runs here);
    ExportError in words when it cannot be written."""
    from sketchpad.export import ExportError, ensure_app, portrait_writer, require_pdf_name

    path = require_pdf_name(path, "a briefing sheet")
    if not path.parent.exists():
        raise ExportError(f"the folder {path.parent} does not exist")
    ensure_app()
    if result is None:
        from solver.analysis import analyse

        result = analyse(rig)
    writer = portrait_writer(path, rig, f"Ropewright briefing: {rig.title or 'rig'}", greyscale)
    painter = QPainter()
    if not painter.begin(writer):
        raise ExportError(f"could not write the briefing sheet to {path}")
    try:
        painter.setRenderHints(QPainter.Antialiasing | QPainter.TextAntialiasing)
        when = (now or _dt.datetime.now()).strftime("%Y-%m-%d %H:%M")
        return paint_brief(painter, QRectF(0, 0, writer.width(), writer.height()), rig, result, rig_dir, when, source,
                           scan=scan)
    finally:
        painter.end()


def brief_cli(args) -> int:
    """``ropewright brief RIG -o OUT.pdf [--greyscale]``: exit 0 written, 2 bad input, 3 written but the rig did not solve."""
    from sketchpad.export import require_pdf_name, run_file_command

    def check_output() -> None:
        require_pdf_name(args.output, "a briefing sheet")

    def write(rig, result, rig_dir) -> None:
        write_brief(rig, args.output, result, rig_dir, source=args.rig, greyscale=getattr(args, "greyscale", False))

    return run_file_command("brief", args, check_output, write, "but the rig did not solve")


__all__ = ["write_brief", "paint_brief", "brief_cli", "COMMANDS", "BriefLayout"]
