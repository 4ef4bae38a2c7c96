"""The haul plan in words and table rows, the same for the command line, the panel and the report.

Every number keeps one meaning wherever it appears: rope paid in (through the team's hands in
that stroke), load travel (in that stroke), haul force peak (the most the team pulled in it),
taken by stretch (rope paid in less ideal MA x load travel) and what the capture holds when
the team lets go.  Written in the user's length and force units (:mod:`solver.units`).
"""

from __future__ import annotations

import math

from solver import units
from solver.haul_result import HaulPlan
from solver.model import Rig

HEADER = ("stroke", "rope paid in", "load travel", "haul force peak", "taken by stretch",
          "capture holds at reset", "ended")
ENDED_WORDS = {"throw": "throw used", "two-blocked": "two-blocked", "target": "travel reached", "stopped": "stopped"}


def stroke_rows(plan: HaulPlan, length_unit: str, force_unit: str) -> list[tuple[str, ...]]:
    """One row of text per stroke, in :data:`HEADER` order."""
    L = lambda m: units.format_length(m, length_unit)  # noqa: E731
    F = lambda n: units.format_force(n, force_unit)  # noqa: E731
    rows = []
    for i, s in enumerate(plan.strokes, start=1):
        held = F(s.capture_N) if s.capture_N is not None else ("no capture" if s.reset else "—")
        if s.capture_slip_m > 0:
            held += f" (slid {L(s.capture_slip_m)})"
        rows.append((str(i), L(s.paid_in_m), L(s.load_travel_m), F(s.haul_force_max_N),
                     L(s.stretch_m) if math.isfinite(s.stretch_m) else "—", held,
                     ENDED_WORDS.get(s.ended_by, s.ended_by)))
    return rows


def summary_lines(rig: Rig, plan: HaulPlan, length_unit: str, force_unit: str) -> list[str]:
    """The totals a rigging lead asks for first, one sentence each."""
    L = lambda m: units.format_length(m, length_unit)  # noqa: E731
    F = lambda n: units.format_force(n, force_unit)  # noqa: E731
    before = (L(plan.paid_in_before_move_m) if plan.paid_in_before_move_m is not None
              else "the load did not move")
    lines = [f"Rope paid in before the load first moves: {before}",
             f"Load travel: {L(plan.load_travel_m)} of {L(plan.target_m)}",
             f"Strokes: {len(plan.strokes)}; resets: {plan.resets}",
             f"Rope through the team's hands: {L(plan.paid_in_m)}"]
    if plan.ma_ideal and plan.load_travel_m > 0:
        lines.append(f"Ideal mechanical advantage {plan.ma_ideal:.2f}:1: without stretch the team would take in "
                     f"{L(plan.ma_ideal * plan.load_travel_m)}")
    if plan.peak_anchor and rig.has_point(plan.peak_anchor):
        a = rig.point(plan.peak_anchor)
        cap = f" (capacity {F(a.capacity_N)})" if a.capacity_N else " (capacity not entered)"
        lines.append(f"Largest anchor load in the haul, resets included: {F(plan.peak_anchor_N)} at {a.name}{cap}")
    team = rig.point(plan.haul).haul_force if plan.haul and rig.has_point(plan.haul) else None
    peak = max((s.haul_force_max_N for s in plan.strokes), default=0.0)
    if team and peak and plan.ok:
        verdict = "enough" if team >= peak else "NOT enough: add haulers or mechanical advantage"
        lines.append(f"Haul team gives {F(team)}; the haul needs up to {F(peak)}: {verdict}")
    elif team and peak:
        lines.append(f"Haul team gives {F(team)}; the most the haul asked of them before it stopped: {F(peak)}")
    return lines
