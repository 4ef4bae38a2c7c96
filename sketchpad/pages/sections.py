"""Report sections for the manual and the briefing: the schematic, the rope budget, the gear list and who stands where.

Each table is a :class:`sketchpad.report.Table` built from :mod:`solver.gear` and
:mod:`solver.roles`, so the report, the briefing sheet and the manual print the same rows;
:func:`add_sections` flows them after the report's hardware table.
"""

from __future__ import annotations

from PySide6.QtCore import QRectF, Qt
from PySide6.QtGui import QImage, QPainter

from sketchpad import theme
from solver.model import Rig
from solver.result import Result
from solver.units import format_length

SCHEMATIC_H_PX = 330.0
SCHEMATIC_MAX_H_PX = 520.0
SCHEMATIC_LEAST_PX = 260.0  # the least height a report draws the schematic at to use the room left on a page


def rope_budget_table(rig: Rig, result: Result | None):
    """One row per rope: length used (stretched + tails) against the length carried; short ropes flagged."""
    from sketchpad.pages.table import Table
    from solver.gear import rope_budget

    lu = rig.display.length
    t = Table("Rope lengths", ("Rope", "Stretched", "Tails", "Needed", "Carried", "Spare"), [],
              (2.2, 1.0, 0.8, 1.0, 1.0, 1.6), frozenset({1, 2, 3, 4, 5}),
              note=f"Needed = the rope's pieces as solved (stretched) plus {format_length(rig.settings.tail_m, lu)} "
                   "at each end (tails: knots, the haul team's grip; a setting). A rope with no carried length "
                   "cannot be checked.")
    for n, b in enumerate(rope_budget(rig, result)):
        short = b.short_m
        if short is None:
            spare = "length not given"
        elif short > 0:
            spare = f"SHORT by {format_length(short, lu)}"
            t.flagged.add(n)
        else:
            spare = format_length(-short, lu)
        t.rows.append((b.name, format_length(b.stretched_m, lu), format_length(b.tails_m, lu),
                       format_length(b.needed_m, lu),
                       "—" if b.carried_m is None else format_length(b.carried_m, lu), spare))
    return t


def gear_table(rig: Rig, result: Result | None):
    """The gear list: pulleys, captures, grabs, carabiners, slings and ropes by kind, with how they were counted."""
    from sketchpad.pages.table import Table
    from solver.gear import gear_list

    g = gear_list(rig, result)
    lu = rig.display.length
    t = Table("Gear list", ("Item", "Count", "What"), [], (2.2, 0.7, 4.0), frozenset({1}),
              note="Counted from the drawing, one item per connection: a pulley and a carabiner for every pass over a "
                   "sheave, a grab where a rope is gripped and goes on, a carabiner per tied rope end, a sling for "
                   "every anchor a pulley hangs from. Count again on site and carry spares.")
    for item, count, what in g.rows():
        if item.split(":")[0] in ("Rope", "Cord", "Sling") and ":" in item:
            k = next(k for k in g.ropes if item.endswith(k.name))
            what = f"{format_length(k.needed_m, lu)} needed" + (
                f", {format_length(k.carried_m, lu)} carried" if k.carried_m is not None else ", length not given")
        t.rows.append((item, str(count), what))
    return t


def roles_table(rig: Rig, result: Result | None, zones: list | None = None):
    """Every person on the plan: role, where they stand, and whether that is inside a danger zone (flagged).

    ``zones``: the zones the drawing shows (the computed failure areas once scanned); default the quick shapes."""
    from sketchpad.pages.table import Table
    from solver.roles import placements

    which = ("the area each component's failure sweeps (If something lets go)" if zones is not None
             else "inside of a loaded bight (a quick estimate from a fixed shape)")
    t = Table("People and roles", ("Person", "Role", "Stands", "Danger zones"), [], (1.4, 1.4, 2.6, 2.2),
              note=f"Zones: {which}, and the recoil band along loaded rope (see the drawing). "
                   "Nobody stands in one while the rig is loaded.")
    for n, pl in enumerate(placements(rig, result, zones)):
        t.rows.append((pl.name, pl.role, pl.where, pl.zone_text))
        if pl.in_zone:
            t.flagged.add(n)
    return t


def paint_schematic_block(painter: QPainter, rect: QRectF, rig: Rig, result: Result | None,
                          computed: bool = False) -> None:
    """The schematic with the key under it, framed (a figure for reports and the manual); ``computed``: the
    document's drawing shows computed failure areas, so the key names them as its drawing's key does."""
    from sketchpad.pages.schematic import paint_schematic
    from sketchpad.pages.symbol_key import paint_symbol_key, symbol_key_height

    key_h = symbol_key_height(painter, rect.width(), with_classes=False, computed=computed)
    draw = QRectF(rect.left(), rect.top(), rect.width(), rect.height() - key_h - 4)
    paint_schematic(painter, draw, rig, result)
    painter.setPen(theme.PAGE_RULE)
    painter.setBrush(Qt.NoBrush)
    painter.drawRect(draw)
    paint_symbol_key(painter, QRectF(rect.left(), draw.bottom() + 4, rect.width(), key_h), with_classes=False,
                     computed=computed)


def schematic_block_height(width: float, rig: Rig | None = None, result: Result | None = None,
                           computed: bool = False) -> float:
    """Height of the schematic figure with its key: as tall as the rig's frame asks at ``width`` (px),
    between ``SCHEMATIC_H_PX`` and ``SCHEMATIC_MAX_H_PX``, so a tall rig's strands have room for their labels."""
    from sketchpad.pages.framing import rig_frame
    from sketchpad.pages.symbol_key import symbol_key_height

    h = SCHEMATIC_H_PX
    if rig is not None:
        frame = rig_frame(rig, result)
        h = min(max(width * frame.height() / max(frame.width(), 1e-6), SCHEMATIC_H_PX), SCHEMATIC_MAX_H_PX)
    image = QImage(8, 8, QImage.Format_ARGB32_Premultiplied)
    p = QPainter(image)
    try:
        return h + symbol_key_height(p, width, with_classes=False, computed=computed) + 4
    finally:
        p.end()


def add_sections(flow, rig: Rig, result: Result | None, zones: list | None = None) -> None:
    """The schematic, people and roles, rope lengths and the gear list, flowed into a report."""
    from sketchpad.pages.schematic import caption

    computed = zones is not None and any(z.kind == "failure" for z in zones)
    h = schematic_block_height(flow.width, rig, result, computed)
    # a drawing (text at full size at any height): drawn shorter, down to SCHEMATIC_LEAST_PX, in the room left
    least = min(h, schematic_block_height(flow.width, None, None, computed) - SCHEMATIC_H_PX + SCHEMATIC_LEAST_PX)
    words = caption(rig, result)
    flow.heading("Schematic: strands side by side, tensions in units of the haul force (T)")  # kept with the figure
    flow.block(h, lambda p, r: paint_schematic_block(p, r, rig, result, computed), least=least,
               after=flow.text_height(words, theme.page_font(7.5, italic=True)) + 3)
    flow.y += 3
    flow.text(words, theme.page_font(7.5, italic=True))
    for t in (roles_table(rig, result, zones), rope_budget_table(rig, result), gear_table(rig, result)):
        flow.table(t)


__all__ = ["rope_budget_table", "gear_table", "roles_table", "add_sections", "paint_schematic_block",
           "schematic_block_height"]
