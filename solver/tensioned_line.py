"""Tensioned lines between two anchors with a load across them (a highline): the leg-force factor.

A rope (not a sling) that runs from one anchor through a free point to another anchor
and carries a load across it there is a tensioned line, not a two-leg anchor: the
ASME B30.9 sling-angle advice does not fit it (its legs are nearly straight by design).
What a rigger needs is how many times the load across the line each leg carries, the
**leg-force factor** T ÷ P.  For a point load P square to a line whose sides each make
angle θ with the straight line, T = P / (2 sin θ) (statics of a two-force node, the
vector-pull relation of check-values.md); the check reports the solved tensions, so
unequal sides are covered too.  Forces in N, angles in degrees.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from solver.danger import pieces, positions
from solver.model import Rig
from solver.result import Result, Warning_

#: Leg-force factor above which a tensioned line is warned about: each leg carrying more than twice the
#: load across it, i.e. each side within 14.5 deg of straight (T = P / (2 sin θ)).  Our threshold:
#: no standard gives one for rescue highlines.
LINE_FACTOR_WARN = 2.0
#: Material kinds that make a tensioned line (a sling through a master point is a two-leg anchor).
LINE_KINDS = frozenset({"rope", "cord"})
#: A load across the line below this (N) gives no factor worth reporting.
MIN_LOAD_N = 1.0


@dataclass(frozen=True)
class LinePoint:
    """A free point in the middle of a rope whose two neighbouring passes are anchors."""

    point: str
    rope: str
    anchors: tuple[str, str]
    pieces: tuple[int, int]  # piece indices of the two legs along the rope


def _kind(rig: Rig, material_id: str) -> str | None:
    from solver.checks import _material  # the spec lookup the other checks use (embedded, then library)

    mat = _material(rig, material_id)
    return None if mat is None else mat.kind


def line_points(rig: Rig) -> list[LinePoint]:
    """Every free point that a rope of a line kind passes through between two anchors."""
    pts = {p.id: p for p in rig.points}
    out = []
    for rope in rig.ropes:
        path = rope.path
        if len(path) < 3 or _kind(rig, rope.material) not in LINE_KINDS:
            continue
        for k in range(1, len(path) - 1):
            here, before, after = pts.get(path[k].at), pts.get(path[k - 1].at), pts.get(path[k + 1].at)
            if here is None or before is None or after is None:
                continue
            if here.is_fixed or not here.is_structural or before.kind != "anchor" or after.kind != "anchor":
                continue
            if path[k - 1].how != "tied" or path[k + 1].how != "tied":
                continue  # a leg running on over a pulley at its anchor is a redirect, not a line end
            out.append(LinePoint(here.id, rope.id, (before.id, after.id), (k - 1, k)))
    return out


def is_line_leg_pair(rig: Rig, point_id: str, anchor_1: str, anchor_2: str) -> bool:
    """True when the two legs from ``point_id`` to these anchors are one tensioned line passing through it."""
    return any(lp.point == point_id and set(lp.anchors) == {anchor_1, anchor_2} for lp in line_points(rig))


def leg_factors(rig: Rig, result: Result) -> list[tuple[LinePoint, float, float, float, float]]:
    """(line point, load across N, leg 1 tension N, leg 2 tension N, factor = larger leg ÷ load) of a solved rig."""
    if not result.ok:
        return []
    pos = positions(rig, result)
    tens = {(s.rope, s.index): float(s.tension_N) for s in result.segments}
    out = []
    for lp in line_points(rig):
        t1, t2 = tens.get((lp.rope, lp.pieces[0])), tens.get((lp.rope, lp.pieces[1]))
        if t1 is None or t2 is None:
            continue
        here = np.asarray(pos[lp.point])
        u = [np.asarray(pos[a]) - here for a in lp.anchors]
        n = [float(np.hypot(*d)) for d in u]
        if min(n) == 0.0:
            continue
        load = float(np.hypot(*(t1 * u[0] / n[0] + t2 * u[1] / n[1])))  # what the legs hold up together
        if load < MIN_LOAD_N:
            continue
        out.append((lp, load, t1, t2, max(t1, t2) / load))
    return out


def check_tensioned_lines(rig: Rig, result: Result) -> list[Warning_]:
    """A warning for each tensioned line whose legs carry more than LINE_FACTOR_WARN × the load across it."""
    from solver.units import format_force

    def force(n: float) -> str:
        return format_force(n, rig.display.force)

    def name(pid: str) -> str:
        return rig.point(pid).name if rig.has_point(pid) else pid

    out = []
    for lp, load, t1, t2, factor in leg_factors(rig, result):
        if factor <= LINE_FACTOR_WARN:
            continue
        theta = math.degrees(math.asin(min(1.0, 1.0 / (2.0 * factor))))
        rope = rig.rope(lp.rope).name
        out.append(Warning_(
            "line-leg-factor", f"{lp.rope},{lp.point}",
            f"{rope} is a tensioned line: at {name(lp.point)} each leg carries up to {factor:.2f} × the "
            f"{force(load)} across it ({force(t1)} to {name(lp.anchors[0])}, {force(t2)} to "
            f"{name(lp.anchors[1])}); as if each side were {theta:.0f}° off straight (T = P / (2 sin θ)). "
            f"A tighter line multiplies it further: give the line more sag, or check both anchors and the "
            f"rope for these leg forces.",
            "warning"))
    return out
