"""The report's haul page: load travel against rope paid in, the stroke table and the totals.

Added to the PDF report (:mod:`sketchpad.report`) when the rig has a load a haul could move; the
haul asked for is the rig's ``haul_plan`` entry (defaults otherwise), planned by
:func:`solver.haul_plan.plan_haul` and worded by :mod:`solver.haul_table` like the panel and
``ropewright haul``.
"""

from __future__ import annotations

from PySide6.QtCore import QRectF
from PySide6.QtGui import QPainter

from sketchpad.haul_plot import paint_haul_plot, plot_key
from sketchpad.report import BODY_PT, LOW_SF, MUTED, SMALL_PT, Flow, Table, page_font
from solver import units
from solver.haul_plan import has_load_to_haul, plan_haul
from solver.haul_result import HaulPlan
from solver.haul_settings import haul_settings
from solver.haul_table import HEADER, stroke_rows, summary_lines
from solver.model import Rig

#: Height of the plot on the page, px at 96 dpi.
PLOT_H_PX = 300.0


def plan_for_report(rig: Rig) -> HaulPlan | None:
    """The haul the report shows, or None when the rig has no load a haul could move."""
    if not has_load_to_haul(rig):
        return None
    s = haul_settings(rig)
    return plan_haul(rig, s.travel_m, s.throw_m, spacing_m=s.spacing_m)


def haul_table(rig: Rig, plan: HaulPlan) -> Table:
    """The stroke table as the report lays tables out."""
    rows = stroke_rows(plan, rig.display.length, rig.display.force)
    return Table("Strokes", HEADER, rows, (0.6, 1.0, 1.0, 1.1, 1.1, 1.5, 1.1), right=frozenset({1, 2, 3, 4, 5}),
                 note="Rope paid in and load travel are per stroke. Taken by stretch = rope paid in − ideal MA × "
                      "load travel. The capture's load is what it holds when the team lets go.")


def add_haul_page(flow: Flow, rig: Rig, plan: HaulPlan) -> None:
    """A new page: the haul asked for, the verdict, the plot, the totals and the stroke table."""
    lu = rig.display.length
    flow.break_page()
    flow.heading(f"Haul plan: {units.format_length(plan.target_m, lu)} of load travel in strokes of "
                 f"{units.format_length(plan.throw_m, lu)} of rope")
    if plan.ok:
        flow.text(plan.message[:1].upper() + plan.message[1:] + ".", page_font(BODY_PT, bold=True))
    else:
        flow.text(f"THE HAUL STOPS SHORT: {plan.message}", page_font(BODY_PT, bold=True), LOW_SF)

    def paint(p: QPainter, r: QRectF) -> None:
        paint_haul_plot(p, r, plan, lu)

    flow.need(PLOT_H_PX)
    flow.block(PLOT_H_PX, paint)
    flow.y += 2
    flow.text(plot_key(), page_font(SMALL_PT, italic=True), MUTED)
    for line in summary_lines(rig, plan, lu, rig.display.force):
        flow.text(line, page_font(BODY_PT))
    for w in plan.warnings:
        flow.text("Note: " + w, page_font(BODY_PT), indent=8)
    flow.table(haul_table(rig, plan))
    flow.text("The haul is modelled step by step: rope paid in shortens the hauled rope, the stuck load moves "
              "only when the pull on it reaches the force needed to free it, and at each reset the capture "
              "holds while the travelling grab is slid back. Real ropes, grabs and loads differ: watch the "
              "capture and the anchors at every reset.", page_font(SMALL_PT), MUTED)
