"""The rig report: a short PDF a rescue planner can print and read at a glance, or hand to a team.

``write_report(rig, path)`` lays out, on A4 (metric rigs) or US Letter (imperial
rigs): title, date and notes; the drawing with its forces (the same offscreen
scene as :mod:`sketchpad.export`, so it matches the screen); the mechanical
advantage (nominal, ideal and actual), the pull and pullers needed (:mod:`solver.pull_needed`) and the
warnings; tables of rope pieces (tension, stretch, safety factor = MBS ÷
tension), anchors (resultant, bearing, capacity and its kind, the margin it gives) and hardware
(load at each pulley, carabiner or edge against its MBS); a plot of MA and peak
anchor load against the haul force (:mod:`solver.sweep`, matplotlib Agg); the
assumptions (specs and their sources, friction, motion, safety factor); and the
full safety caution.  Numbers come from ``analyse(rig)`` and are written with
:mod:`solver.units` in the rig's display units.  A rig that does not solve still
gets a report that says so in plain words and gives no forces.

Pages are painted with QPainter on a QPdfWriter at 96 dpi (pixel sizes as on the
screen), zero page margins and our own margins; the layout runs twice, once to
count pages for the "page n of N" footer.
"""

from __future__ import annotations

import datetime as _dt
import io
import logging
import math
import pathlib
from dataclasses import dataclass

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QImage, QPainter

from sketchpad.export import (
    Drawing,
    ExportError,
    ensure_app,
    page_font,
    key_strip_height,
    paint_key_strip,
    portrait_writer,
    refuse_undrawable,
    require_pdf_name,
    run_file_command,
    units_line,
)
from sketchpad.messages import failure_sentence
from sketchpad.pages.table import Table
from sketchpad.report_flow import BODY_PT, INK, LOW_SF, MUTED, RULE, SMALL_PT, TITLE_PT, Flow
from solver.materials import used_hardware_ids, used_material_ids
from solver.model import Rig
from solver.result import Result
from solver.directions import NO_DIRECTION, direction_heading, direction_text
from solver.readouts import capacity_text, ma_long
from solver.units import format_force, format_length, force_to

log = logging.getLogger(__name__)

MARGIN_IN = 0.6  # page margin, inches
DPI = 96.0
#: (drawing height, plot height) tried in turn until the report fits on PAGES_WANTED pages
LAYOUTS = ((400.0, 240.0), (360.0, 220.0), (320.0, 200.0), (280.0, 180.0))
PAGES_WANTED = 3  # the layouts shrink until the report fits on this many pages (if it can)
PLOT_DPI = 200
SWEEP_STEPS = 13
SWEEP_FROM, SWEEP_TO = 0.25, 2.0  # haul force range as fractions of the drawn haul force
FAIL_BACK = QColor(163, 29, 24)
OK_BACK = QColor("#e8f3ec")

MOTION_WORDS = {
    "haul": "haul: every rope moves from its first pass toward its last (load toward haul team); "
            "crossing a pulley the tension rises by 1/efficiency, crossing an edge by e^(μφ) (capstan equation).",
    "lower": "lower: every rope moves from its last pass toward its first; friction at pulleys and edges "
             "now helps hold the load, so the haul end carries less than the load side.",
    "hold": "hold: nothing moves; every pass is taken as frictionless for the forces shown, and the range "
            "static friction allows is given where it matters.",
}


# --- the numbers, as text ----------------------------------------------------------------------
def sf_text(strength_N: float | None, load_N: float) -> str:
    """Safety factor strength ÷ load as ``"12.3:1"`` ("—" if unknown, "slack" if unloaded)."""
    if strength_N is None or not math.isfinite(strength_N):
        return "—"
    if load_N <= 1.0:
        return "slack"
    sf = strength_N / load_N
    return f"{sf:.1f}:1" if sf < 100 else f"{sf:.0f}:1"


def sf_low(rig: Rig, strength_N: float | None, load_N: float) -> bool:
    return strength_N is not None and load_N > 1.0 and strength_N / load_N < float(rig.settings.min_safety_factor)


def _pname(rig: Rig, pid: str) -> str:
    return rig.point(pid).name if rig.has_point(pid) else pid


def _material(rig: Rig, mat_id: str):
    from solver.errors import RopewrightError
    from solver.materials import material_for

    try:
        return material_for(rig, mat_id)
    except (RopewrightError, KeyError):
        return None


def _hardware(rig: Rig, hw_id: str):
    from solver.errors import RopewrightError
    from solver.materials import hardware_for

    try:
        return hardware_for(rig, hw_id)
    except (RopewrightError, KeyError):
        return None




def rope_table(rig: Rig, result: Result) -> Table:
    """One row per straight piece of rope: tension, length, stretch, MBS (× a knot's efficiency where the piece
    ends at a termination, solver.weak_links) and safety factor = that strength ÷ tension."""
    from solver.weak_links import piece_strengths

    fu, lu = rig.display.force, rig.display.length
    strengths = piece_strengths(rig)
    t = Table("Rope pieces", ("Rope", "Piece", "Tension", "Length", "Stretch", "MBS", "Safety factor"), [],
              (1.5, 2.4, 1.0, 0.9, 0.8, 1.0, 1.0), frozenset({2, 3, 4, 5, 6}),
              note=f"Safety factor = rope MBS (× the efficiency of a named knot or termination at the piece's end, "
                   f"listed under Weak links) ÷ tension; the rig asks for at least "
                   f"{rig.settings.min_safety_factor:g}:1 (red below it). Knots not named weaken a rope further.")
    for s in result.segments:
        try:
            rope = rig.rope(s.rope)
        except KeyError:
            continue
        mat = _material(rig, rope.material)
        mbs = mat.mbs_N if mat is not None else None
        piece = strengths.get((s.rope, s.index))
        mbs_text = format_force(mbs, fu) if mbs is not None else "not known"
        if piece is not None and piece.termination is not None:
            mbs, mbs_text = piece.strength_N, f"{mbs_text} × {piece.efficiency:.0%}"
        slack = s.tension_N <= 1.0
        t.rows.append((rope.name, f"{_pname(rig, s.from_point)} → {_pname(rig, s.to_point)}",
                       "slack" if slack else format_force(s.tension_N, fu), format_length(s.length_m, lu),
                       "—" if slack else f"{s.strain * 100:.1f} %", mbs_text, sf_text(mbs, s.tension_N)))
        if sf_low(rig, mbs, s.tension_N):
            t.flagged.add(len(t.rows) - 1)
    return t


def direction_words(rig: Rig, direction_deg: float, force_N: float | None = None) -> str:
    """Which way an anchor is pulled: a bearing from north in plan, words in elevation (solver.directions)."""
    text = direction_text(direction_deg, rig.view, force_N)
    return text if text == NO_DIRECTION or rig.view == "elevation" else f"toward {text}"


def anchor_table(rig: Rig, result: Result) -> Table:
    """One row per anchor: resultant, which way it pulls, capacity and safety factor capacity ÷ resultant."""
    fu = rig.display.force
    t = Table("Anchors", ("Anchor", "Resultant", direction_heading(rig.view, "Pulled"), "Capacity", "Margin"), [],
              (1.5, 1.1, 1.7, 1.3, 1.3), frozenset({1, 3, 4}),
              note="Resultant = vector sum of everything attached. "
                   + ("Bearings are clockwise from north (up the page). " if rig.view == "plan" else "")
                   + f"Margin on a breaking strength: strength ÷ resultant (red below "
                   f"{rig.settings.min_safety_factor:g}:1); on a rated working load: the share used, no factor "
                   "applied (red above 100 %).")
    for aid, a in result.anchors.items():
        extra = ""
        hold = result.hold_anchor_range.get(aid)
        if hold is not None:
            extra = f" (hold {format_force(hold.low, fu)} – {format_force(hold.high, fu)})"
        working = a.capacity_kind == "working" and a.capacity_N is not None
        margin = (f"{100 * a.force_N / a.capacity_N:.0f} % of working load" if working
                  else sf_text(a.capacity_N, a.force_N) + (" on strength" if a.capacity_N is not None else ""))
        t.rows.append((_pname(rig, aid), format_force(a.force_N, fu) + extra,
                       direction_words(rig, a.direction_deg, a.force_N), capacity_text(a, fu), margin))
        if (a.force_N > a.capacity_N) if working else sf_low(rig, a.capacity_N, a.force_N):
            t.flagged.add(len(t.rows) - 1)
    return t


def hardware_table(rig: Rig, result: Result) -> Table:
    """One row per pass with hardware: the load on it (vector sum of the legs) against its MBS."""
    from solver.checks import pass_loads

    fu = rig.display.force
    t = Table("Hardware", ("Where", "Hardware", "Friction", "Load on it", "MBS", "Safety factor"), [],
              (1.9, 2.0, 0.9, 1.0, 1.0, 1.0), frozenset({3, 4, 5}),
              note="Load = vector sum of the rope legs at the pass. Edges are not rated components: pad them.")
    for rope_id, k, at, load in pass_loads(rig, result):
        rope = rig.rope(rope_id)
        hw_id = rope.path[k].hardware or ""
        hw = _hardware(rig, hw_id)
        if hw is None:
            name, friction, mbs = f"{hw_id} (not known)", "—", None
        else:
            name, mbs = hw.name, hw.mbs_N
            friction = (f"η {hw.efficiency:.2f}" if hw.efficiency is not None
                        else f"μ {hw.friction_coefficient:.2f}" if hw.friction_coefficient is not None else "—")
        t.rows.append((f"{rope.name} at {_pname(rig, at)}", name, friction, format_force(load, fu),
                       format_force(mbs, fu) if mbs is not None else "no rating", sf_text(mbs, load)))
        if sf_low(rig, mbs, load):
            t.flagged.add(len(t.rows) - 1)
    return t


def ma_sentence(result: Result) -> str:
    """The three mechanical advantages, each named (solver.readouts)."""
    return ma_long(result)


def haul_sentences(rig: Rig, result: Result) -> list[str]:
    """Haul force, what reaches each load, and the pull (solved) and pullers each load with a force needed takes."""
    from solver.hauling import DEFAULT_PER_PERSON_N
    from solver.pull_needed import need_sentence

    fu = rig.display.force
    out = []
    for hid, f in result.haul.items():
        p = rig.point(hid) if rig.has_point(hid) else None
        team = f" by {p.team} haulers ({format_force(f / p.team, fu)} each)" if p is not None and p.team else ""
        out.append(f"Haul force at {_pname(rig, hid)}: {format_force(f, fu)}{team}.")
    for lid, a in result.loads.items():
        p = rig.point(lid) if rig.has_point(lid) else None
        need = ""
        if p is not None and p.required_N is not None:
            short = a.force_N < p.required_N
            need = f" of {format_force(p.required_N, fu)} needed" + (" — NOT ENOUGH" if short else "")
        out.append(f"Force reaching {_pname(rig, lid)}: {format_force(a.force_N, fu)}{need}.")
        if p is None:
            continue
        need_of = result.needs.get(lid)
        if need_of is not None:
            out.append(f"Pull needed for {p.name} (the rig solved at trial pulls, every haul team and pulling force "
                       f"scaled together, the friction of the motion counted). "
                       + need_sentence(rig, need_of) + " The pull per person is a sustained long-haul figure: "
                       "if the load does not move, stop and re-assess rather than pull harder.")
        elif p.required_N is None:
            out.append(f"No force needed is entered for {p.name}, so the pull needed is not worked out "
                       f"(each puller is taken as {format_force(DEFAULT_PER_PERSON_N, fu)} sustained).")
    return out


def weak_link_lines(rig: Rig, result: Result) -> list[str]:
    """Each knot and rope grab (solver.weak_links), with the efficiency or slip force its margin used."""
    from solver.weak_links import weak_links

    fu = rig.display.force
    out = []
    for w in weak_links(rig, result):
        rope, at = (rig.rope(w.rope).name if w.rope in {r.id for r in rig.ropes} else w.rope), _pname(rig, w.at)
        carried = f"; it carries {format_force(w.force_N, fu)}" if w.force_N is not None else ""
        if w.kind == "termination":
            strength = f" = {format_force(w.strength_N, fu)}" if w.strength_N is not None else ""
            out.append(f"{w.label.capitalize()} on {rope} at {at}: the pieces ending there are taken at "
                       f"{w.efficiency:.0%} of the rope's MBS{strength}{carried} ({w.source}).")
        else:
            held = f"; it holds {format_force(w.force_N, fu)}" if w.force_N is not None else ""
            slips = " — IT WILL SLIDE" if w.force_N is not None and w.slip_N and w.force_N > w.slip_N else ""
            mbs = f", MBS {format_force(w.strength_N, fu)}" if w.strength_N else ""
            out.append(f"Rope grab {w.label} on {rope} at {at}: slips at {format_force(w.slip_N, fu)}{mbs}{held}"
                       f"{slips} ({w.source}).")
    return out


def assumption_lines(rig: Rig) -> list[str]:
    """The model behind the numbers: view, motion and friction, safety factor, and every spec with its source."""
    fu = rig.display.force
    out = [
        "Statics only: the forces hold while the system moves slowly or stands still. Shock loads, a falling "
        "or surging load and moving water add to every number here.",
        "Plan view: seen from above, no gravity; weights are not included unless drawn as forces."
        if rig.view == "plan" else "Elevation view: seen from the side, gravity acts downward on loads with a mass.",
        "Motion and friction — " + MOTION_WORDS.get(rig.settings.motion, rig.settings.motion),
        f"Minimum safety factor: {rig.settings.min_safety_factor:g}:1 (strength ÷ load) for ropes, hardware "
        "and anchors given a breaking strength; an anchor given a rated working load is held to that load "
        "with no further factor; anchors without a capacity are not checked.",
        "Ropes are elastic and tension-only (stretch from each material's curve); anchors do not move; each "
        "straight piece carries one tension.",
    ]
    from sketchpad.report_failures import recoil_assumption

    out.append(recoil_assumption(rig.display.length))
    for mat_id in used_material_ids(rig):
        m = _material(rig, mat_id)
        if m is None:
            out.append(f"Rope {mat_id}: spec not known, so its margins are not checked.")
            continue
        dia = f"{m.diameter_mm:g} mm " if m.diameter_mm else ""
        out.append(f"Rope spec {m.name} ({dia}{m.kind}, MBS {format_force(m.mbs_N, fu)}). Source: "
                   f"{m.source or 'not given'}")
    for hw_id in used_hardware_ids(rig):
        h = _hardware(rig, hw_id)
        if h is None:
            out.append(f"Hardware {hw_id}: spec not known.")
            continue
        bits = []
        if h.efficiency is not None:
            bits.append(f"efficiency {h.efficiency:.2f}")
        if h.friction_coefficient is not None:
            bits.append(f"friction coefficient {h.friction_coefficient:.2f}")
        bits.append(f"MBS {format_force(h.mbs_N, fu)}" if h.mbs_N is not None else "no MBS")
        out.append(f"Hardware {h.name} ({h.kind}; {', '.join(bits)}). Source: {h.source or 'not given'}")
    return out


# --- the haul-force sweep plot -----------------------------------------------------------------
def sweep_target(rig: Rig) -> tuple[str, float, str] | None:
    """(vary text, drawn value N, axis words) for the plot: the first haul team's force, else the first force."""
    for p in rig.points:
        if p.kind == "haul" and p.haul_force:
            return f"haul:{p.id}", float(p.haul_force), f"haul force at {p.name}"
    for i, f in enumerate(rig.forces):
        if f.magnitude_N > 0:
            return f"force:{i + 1}", float(f.magnitude_N), f"force {f.label or 'on ' + _pname(rig, f.at)}"
    return None


def haul_sweep(rig: Rig):
    """(sweep table, drawn value N, axis words) over the haul force, or (None, 0, reason) when there is none."""
    from solver.errors import RopewrightError
    from solver.sweep import sweep, values_between

    target = sweep_target(rig)
    if target is None:
        return None, 0.0, "No plot: the rig has no haul force or external force to vary."
    vary, drawn, words = target
    try:
        table = sweep(rig, vary, values_between(drawn * SWEEP_FROM, drawn * SWEEP_TO, SWEEP_STEPS))
    except RopewrightError as exc:
        return None, 0.0, f"No plot: {exc}"
    if all(r["status"] != "ok" for r in table.rows):
        return None, 0.0, "No plot: the rig did not solve at any haul force in the range."
    return table, drawn, words


def plot_image(rig: Rig, table, drawn: float, words: str, width_px: float, height_px: float) -> QImage | None:
    """MA (actual, ideal) and peak anchor load against the varied force, as a QImage (matplotlib Agg)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fu = rig.display.force
    x = [force_to(v, fu) for v in table.values]
    fig = Figure(figsize=(width_px / DPI, height_px / DPI), dpi=PLOT_DPI)
    FigureCanvasAgg(fig)
    ax1, ax2 = fig.subplots(1, 2)
    ax1.plot(x, table.column("ma_actual"), "o-", ms=3, color="#1c64a8", label="actual MA")
    ax1.plot(x, table.column("ma_ideal"), "--", color="#55554f", label="ideal MA")
    if any(math.isfinite(v) for v in table.column("ma_nominal")):
        ax1.plot(x, table.column("ma_nominal"), ":", color="#1d1d1a", label="nominal MA")
    ax1.set_ylabel("mechanical advantage (:1)")
    ax1.legend(loc="best", fontsize=7)
    peak = [force_to(v, fu) if math.isfinite(v) else math.nan for v in table.column("peak_anchor_N")]
    ax2.plot(x, peak, "o-", ms=3, color="#c2362b", label="peak anchor load")
    ax2.set_ylabel(f"peak anchor load ({fu})")
    for ax in (ax1, ax2):
        ax.set_xlabel(f"{words} ({fu})")
        ax.axvline(force_to(drawn, fu), color="#2f8a57", lw=1, ls=":")
        ax.grid(True, alpha=0.3)
        ax.tick_params(labelsize=7)
        ax.xaxis.label.set_size(8)
        ax.yaxis.label.set_size(8)
    for r in table.failed:
        for ax in (ax1, ax2):
            ax.axvline(force_to(float(r["value"]), fu), color="grey", alpha=0.25, lw=4)
    fig.tight_layout()
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=PLOT_DPI)
    image = QImage.fromData(buf.getvalue(), "PNG")
    return None if image.isNull() else image


def plot_caption(rig: Rig, table, drawn: float, words: str) -> str:
    fu = rig.display.force
    failed = f" Grey bands: {len(table.failed)} values that did not solve." if table.failed else ""
    return (f"Mechanical advantage and peak anchor load as the {words} goes from "
            f"{format_force(drawn * SWEEP_FROM, fu)} to {format_force(drawn * SWEEP_TO, fu)} "
            f"({SWEEP_STEPS} solves); dotted line: as drawn ({format_force(drawn, fu)}).{failed}")


def sweep_plot(rig: Rig, width_px: float, height_px: float) -> tuple[QImage | None, str]:
    """The plot image of MA and peak anchor load against the haul force, and its caption (or why there is none)."""
    table, drawn, words = haul_sweep(rig)
    if table is None:
        return None, words
    return plot_image(rig, table, drawn, words, width_px, height_px), plot_caption(rig, table, drawn, words)


# --- page layout --------------------------------------------------------------------------------
@dataclass
class Report:
    """What was written: the path, the page count and the tables (as text) behind them."""

    path: pathlib.Path
    pages: int
    result: Result
    tables: list[Table]


def _compose(flow: Flow, rig: Rig, result: Result, drawing: Drawing, when: str, source: str | None,
             plot: tuple[QImage | None, str] | None, sizes: tuple[float, float] = LAYOUTS[0],
             failures=None) -> None:
    from solver.cautions import FULL_CAUTION

    fu = rig.display.force
    flow.text(rig.title or (pathlib.Path(source).name if source else "Untitled rig"), page_font(TITLE_PT, bold=True), gap=2)
    flow.text(f"Rig report, {when}" + (f" — {pathlib.Path(source).name}" if source else ""), page_font(BODY_PT), MUTED, gap=1)
    flow.text(units_line(rig) + f". Safety factor asked for: {rig.settings.min_safety_factor:g}:1. "
              f"Motion: {rig.settings.motion}.", page_font(BODY_PT), MUTED, gap=6)
    if result.ok:
        flow.box(f"Solved: equilibrium found in {result.iterations} iterations (largest force imbalance "
                 f"{format_force(result.residual_N, 'N', 3)}). "
                 f"{len(result.warnings)} warning{'s' if len(result.warnings) != 1 else ''}.",
                 page_font(BODY_PT), OK_BACK, INK)
    else:
        flow.box("THE RIG DID NOT SOLVE. " + failure_sentence(rig, result).replace(
                 "No forces are shown: fix the rig and export again.", "") +
                 " This report therefore gives no forces, safety factors, mechanical advantage or haul plan. "
                 "Do not use this rig as drawn: fix the drawing and make a new report.",
                 page_font(BODY_PT + 1, bold=True), FAIL_BACK, QColor("#ffffff"))
    if rig.notes:
        flow.text("Notes: " + rig.notes, page_font(BODY_PT, italic=True), gap=6)

    key_h = key_strip_height(flow.width, drawing) + 8

    def paint_drawing(p: QPainter, r: QRectF) -> None:
        draw_r = QRectF(r.left(), r.top(), r.width(), r.height() - key_h)
        drawing.paint(p, draw_r)
        p.setPen(RULE)
        p.setBrush(Qt.NoBrush)
        p.drawRect(draw_r)
        paint_key_strip(p, QRectF(r.left(), draw_r.bottom() + 6, r.width(), key_h - 6), drawing)

    drawing_h = min(sizes[0] + key_h, max(flow.room() - 150, 260.0 + key_h - 46))
    drawing.fit_into(flow.width, drawing_h - key_h)  # before measuring: the fit decides skipped labels
    flow.block(drawing_h, paint_drawing)
    flow.y += 4
    if drawing.skipped and result.ok:
        flow.text(f"{drawing.skipped} force label{'s' if drawing.skipped != 1 else ''} left off the drawing to "
                  "avoid overlap; every number is in the tables.", page_font(SMALL_PT, italic=True), MUTED)

    if result.ok:
        flow.heading("System")
        flow.text(ma_sentence(result), page_font(BODY_PT, bold=True))
        for line in haul_sentences(rig, result):
            flow.text(line, page_font(BODY_PT))
    flow.heading(f"Warnings ({len(result.warnings)})")
    if not result.warnings:
        flow.text("None found by the checks. That does not make the rig safe: see the cautions.", page_font(BODY_PT))
    for w in result.warnings:
        tag = {"danger": "DANGER", "warning": "Warning", "info": "Note"}.get(w.severity, w.severity)
        colour = LOW_SF if w.severity == "danger" else INK
        flow.text(f"{tag}: {w.message}", page_font(BODY_PT, bold=w.severity == "danger"), colour, indent=8)

    if result.ok:
        from sketchpad.report_water import water_table

        tables = (rope_table(rig, result), anchor_table(rig, result), hardware_table(rig, result),
                  water_table(rig, result))
        for t in (t for t in tables if t is not None):
            flow.table(t)
        if plot is not None:
            image, caption = plot
            flow.heading(f"Mechanical advantage and peak anchor load against the pulling force ({fu})")
            if image is not None:
                cap_h = flow.text_height(caption, page_font(SMALL_PT, italic=True))

                def paint_plot(p: QPainter, r: QRectF) -> None:
                    w = min(r.width(), r.height() * image.width() / max(image.height(), 1))
                    p.drawImage(QRectF(r.left() + (r.width() - w) / 2, r.top(), w, r.height()), image)

                flow.block(sizes[1], paint_plot, after=cap_h + 6)  # a picture of text: never drawn smaller
                flow.y += 2
            flow.text(caption, page_font(SMALL_PT, italic=True), MUTED)
    links = weak_link_lines(rig, result)
    if links:
        flow.heading("Weak links (knots and rope grabs)")
        for line in links:
            flow.text("• " + line, page_font(BODY_PT), indent=4, gap=2)
    if failures is not None:  # "If something lets go" (sketchpad.report_failures)
        failures.add_to(flow)
    from sketchpad.pages.sections import add_sections

    add_sections(flow, rig, result, drawing.zones if drawing.scan else None)  # schematic, people and roles, rope lengths, gear list
    flow.heading("Assumptions")
    for line in assumption_lines(rig):
        flow.text("• " + line, page_font(SMALL_PT), indent=4, gap=2)
    flow.heading("Safety cautions")
    for para in FULL_CAUTION.split("\n\n"):
        flow.text(para, page_font(BODY_PT, bold=True), gap=4)


def plot_stand_in(rig: Rig, result: Result, sweep_data) -> tuple[QImage | None, str] | None:
    """What counting pages needs of the sweep plot without drawing it (matplotlib, the slow part): a 1-px
    image with the plot's caption, (None, why there is no plot), or None for a rig that did not solve."""
    table, drawn, words = sweep_data
    if not result.ok:
        return None
    if table is None:
        return None, words
    return QImage(1, 1, QImage.Format_RGB32), plot_caption(rig, table, drawn, words)


def choose_layout(count, aim: int) -> tuple[tuple[float, float], int]:
    """(drawing, plot) sizes and page count: the first of LAYOUTS that fits ``aim`` pages, else the largest one
    that takes the fewest pages (a smaller drawing that saves no page is not chosen); ``count(sizes)`` -> pages."""
    best: tuple[tuple[float, float], int] | None = None
    for sizes in LAYOUTS:
        total = count(sizes)
        if best is None or total < best[1]:
            best = (sizes, total)
        if total <= aim or total >= aim + 2:  # the smaller layouts save well under a page: that many more stay
            break
    return best


def page_frame(writer) -> tuple[float, float, QRectF]:
    """(margin, footer height, content rect) of a report page, logical px."""
    m, footer_h = MARGIN_IN * DPI, 28.0
    return m, footer_h, QRectF(m, m, writer.width() - 2 * m, writer.height() - 2 * m - footer_h)


def write_report(rig: Rig, path: pathlib.Path | str, result: Result | None = None,
                 rig_dir: pathlib.Path | None = None, source: str | None = None,
                 now: _dt.datetime | None = None, greyscale: bool = False) -> Report:
    """Write the PDF report of ``rig`` (``result`` defaults to ``analyse(rig)``); ExportError in words on failure."""
    path = require_pdf_name(path, "a report")
    if not path.parent.exists():
        raise ExportError(f"the folder {path.parent} does not exist")
    refuse_undrawable(rig)
    ensure_app()
    if result is None:
        from solver.analysis import analyse

        result = analyse(rig)
    drawing = Drawing(rig, result, rig_dir)
    when = (now or _dt.datetime.now()).strftime("%Y-%m-%d %H:%M")
    title = rig.title or "Untitled rig"
    writer = portrait_writer(path, rig, f"Ropewright report: {title}", greyscale)
    page_w, page_h = writer.width(), writer.height()
    m, footer_h, content = page_frame(writer)
    sweep_data = haul_sweep(rig) if result.ok else (None, 0.0, "")
    from sketchpad.haul_report import add_haul_page, haul_table, plan_for_report

    haul = plan_for_report(rig) if result.ok else None  # a page of its own when there is a load to move

    from sketchpad.report_failures import failure_section

    failures = failure_section(rig, result)
    if failures is not None:
        failures.draw_zones_on(drawing)
        result = drawing.result  # person warnings named by the failure that puts them in a zone

    def plot_for(h: float) -> tuple[QImage | None, str] | None:  # the plot drawn at the chosen layout's height
        table, drawn, words = sweep_data
        if table is None or not result.ok:
            return stand_in
        return plot_image(rig, table, drawn, words, content.width() * 0.92, h), stand_in[1]
    from solver.cautions import SHORT_CAUTION

    stand_in = plot_stand_in(rig, result, sweep_data)  # after the failure section: its result is the one shown

    def count(sizes: tuple[float, float]) -> int:  # pass 1: the pages a layout takes (the plot not drawn)
        counter = Flow(writer, None, content, lambda p, n: None, lambda: None)
        _compose(counter, rig, result, drawing, when, source, stand_in, sizes, failures)
        if haul is not None:
            add_haul_page(counter, rig, haul)
        return counter.finish()

    sizes, total = choose_layout(count, PAGES_WANTED + (haul is not None))

    def footer(p: QPainter, n: int) -> None:
        p.setFont(page_font(SMALL_PT))
        p.setPen(MUTED)
        r = QRectF(m, page_h - m - footer_h + 8, page_w - 2 * m, footer_h)
        p.drawLine(QPointF(r.left(), r.top() - 3), QPointF(r.right(), r.top() - 3))
        p.drawText(r, int(Qt.AlignLeft | Qt.AlignTop | Qt.TextWordWrap), f"Ropewright — {title}. {SHORT_CAUTION}")
        p.drawText(r, int(Qt.AlignRight | Qt.AlignBottom), f"page {n} of {total}")

    painter = QPainter()
    if not painter.begin(writer):
        raise ExportError(f"could not write the report to {path}")
    try:
        painter.setRenderHints(QPainter.Antialiasing | QPainter.TextAntialiasing | QPainter.SmoothPixmapTransform)
        flow = Flow(writer, painter, content, footer, writer.newPage)
        _compose(flow, rig, result, drawing, when, source, plot_for(sizes[1]), sizes, failures)
        if haul is not None:
            add_haul_page(flow, rig, haul)
        pages = flow.finish()
    finally:
        painter.end()
    log.info("wrote report %s (%d pages)", path, pages)
    tables = [rope_table(rig, result), anchor_table(rig, result), hardware_table(rig, result)] if result.ok else []
    tables += [haul_table(rig, haul)] if haul is not None else []
    return Report(path, pages, result, tables)


def report_cli(args) -> int:
    """``ropewright report RIG -o OUT.pdf``: exit 0 written, 2 bad input, 3 written but the rig did not solve."""
    def check_output() -> None:
        require_pdf_name(args.output, "a report")

    def write(rig, result, rig_dir) -> None:
        write_report(rig, args.output, result, rig_dir, source=args.rig, greyscale=getattr(args, "greyscale", False))

    return run_file_command("report", args, check_output, write, "but the rig did not solve")


__all__ = ["write_report", "report_cli", "Report", "Table", "rope_table", "anchor_table", "hardware_table",
           "haul_sentences", "ma_sentence", "assumption_lines", "weak_link_lines", "sweep_plot", "direction_words", "sf_text"]
