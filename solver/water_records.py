"""The Result of a rig solved in water, in the user's terms: hidden points folded back into their ropes.

``solver.water`` solves an augmented rig (wet runs cut by hidden points into short ropes); this module
turns its Result into the user's: one segment record per drawn rope piece (a bowed piece reports its
largest tension, its curved length), anchors that also carry the drag lumped at their end of a wet
rope, the turn at each middle pass from the bowed directions, and ``Result.water`` with each bowed rope
and the drag on each body.  Hidden ids never appear.
"""

from __future__ import annotations

import math
from dataclasses import replace
from typing import Mapping

import numpy as np

from solver.failure_rig import pass_key
from solver.records import anchor_record
from solver.result import Result, SegmentResult, record
from solver.water_drag import body_drag
from solver.water_result import BodyDrag, WaterResult, WetRope
from solver.water_site import point_sides


def _anchor(fx: float, fy: float, old, sf: float):
    return anchor_record(fx, fy, old.capacity_N, sf, old.capacity_kind)


def _user_id(plan, aug_id: str) -> str:
    from solver.water_forces import HIDDEN

    if not aug_id.startswith(HIDDEN):
        return aug_id
    if aug_id in plan.rope_map:
        return plan.rope_map[aug_id][0]
    for c in plan.chains:
        if aug_id in c.hidden:
            return c.rope
    return aug_id


def _told(rig, plan, text: str) -> str:
    """``text`` with every hidden point named as a place on its rope (hidden ids never reach a person)."""
    import re

    from solver.water_forces import HIDDEN

    if HIDDEN not in text:
        return text

    def name(m: "re.Match[str]") -> str:
        rope = _user_id(plan, m.group(1))
        return f'a point of rope "{rig.rope(rope).name}" in the water' if rope != m.group(1) else "a point in the water"

    text = re.sub(r'point "(' + re.escape(HIDDEN) + r'[^"]*)"( \(rope "[^"]*" in the water\))?', name, text)
    return re.sub(re.escape(HIDDEN) + r"[^\s\"]*", "the rope in the water", text)


def _segments(rig, plan, aug: Result) -> tuple[list[SegmentResult], dict]:
    part_of = {key: ((c.rope, c.piece), j) for c in plan.chains for j, key in enumerate(c.parts)}
    found: dict[tuple[str, int], list[tuple[int, SegmentResult]]] = {}
    out: list[SegmentResult] = []
    for seg in aug.segments:
        user, offset, run = plan.rope_map.get(seg.rope, (seg.rope, 0, -1))
        chain = part_of.get((seg.rope, seg.index))
        if chain is not None:  # a segment of a cut piece, in its place along the piece
            found.setdefault(chain[0], []).append((chain[1], seg))
            continue
        if run < 0:
            out.append(seg)
        else:
            out.append(record(SegmentResult, rope=user, index=seg.index + offset, from_point=seg.from_point,
                              to_point=seg.to_point, tension_N=seg.tension_N, length_m=seg.length_m,
                              strain=seg.strain, utilization=seg.utilization, run=run))
    by_chain = {key: [seg for _, seg in sorted(parts, key=lambda p: p[0])] for key, parts in found.items()}
    for c in plan.chains:
        parts = by_chain.get((c.rope, c.piece), [])
        if not parts:
            continue
        worst = max(parts, key=lambda s: s.tension_N)
        length = sum(s.length_m for s in parts)
        unstretched = sum(s.length_m / (1.0 + s.strain) for s in parts)
        # the piece's mean strain: its length over its unstretched length (so length / (1 + strain) = L0)
        out.append(record(SegmentResult, rope=c.rope, index=c.piece, from_point=c.a, to_point=c.b,
                          tension_N=worst.tension_N, length_m=length, strain=length / unstretched - 1.0,
                          utilization=worst.utilization, run=c.run))
    order = {r.id: i for i, r in enumerate(rig.ropes)}
    out.sort(key=lambda s: (order.get(s.rope, len(order)), s.index))
    return out, by_chain


def _deflections(rig, plan, aug: Result, at: Mapping[str, tuple[float, float]]) -> dict[str, float]:
    """Turn (degrees) at every middle pass; ropes that were cut get theirs from the solved (bowed) directions."""
    cut = {c.rope for c in plan.chains}
    turns = {k: v for k, v in aug.deflection_deg.items() if k.split("@", 1)[0] in {r.id for r in rig.ropes}
             and k.split("@", 1)[0] not in cut}
    chain_nodes = {(c.rope, c.piece): [c.a, *c.hidden, c.b] for c in plan.chains}
    for rope in rig.ropes:
        if rope.id not in cut:
            continue
        for k in range(1, len(rope.path) - 1):
            before = chain_nodes.get((rope.id, k - 1), [rope.path[k - 1].at, rope.path[k].at])
            after = chain_nodes.get((rope.id, k), [rope.path[k].at, rope.path[k + 1].at])
            u = np.subtract(at[before[-1]], at[before[-2]])
            w = np.subtract(at[after[1]], at[after[0]])
            nu, nw = float(np.hypot(*u)), float(np.hypot(*w))
            if nu > 0 and nw > 0:
                c = float(np.dot(u, w)) / (nu * nw)
                turns[pass_key(rope, k)] = math.degrees(math.acos(max(-1.0, min(1.0, c))))
    return turns


def _wet_ropes(plan, ff, at, by_chain, segments: list[SegmentResult]) -> list[WetRope]:
    from solver.water_forces import _drag_forces

    _, info = _drag_forces(plan, ff, at)
    out = []
    for c in plan.chains:
        nodes, seg_f = info[(c.rope, c.piece)]
        parts = by_chain.get((c.rope, c.piece), [])
        fr = [0.0, *c.ts, 1.0]
        i0 = int(np.argmin([abs(t - c.wet[0][0]) for t in fr]))
        i1 = int(np.argmin([abs(t - c.wet[-1][1]) for t in fr]))
        tens = [s.tension_N for s in parts] or [0.0]
        a, b = nodes[0], nodes[-1]
        chord = b - a
        L = float(np.hypot(*chord)) or 1.0
        sag = float(np.max(np.abs(chord[0] * (nodes[:, 1] - a[1]) - chord[1] * (nodes[:, 0] - a[0])) / L)) if len(nodes) else 0.0
        f = seg_f.sum(axis=0)
        out.append(WetRope(c.rope, c.piece, c.a, c.b, tuple(map(tuple, nodes.tolist())), i0, i1,
                           tens[min(i0, len(tens) - 1)], tens[min(max(i1 - 1, 0), len(tens) - 1)],
                           float(np.hypot(*f)), float(f[0]), float(f[1]), True, sag))
    return out


def user_result(rig, plan, ff, aug: Result, forces: Mapping[str, np.ndarray], gap: float, rounds: int) -> Result:
    """``aug`` (the augmented rig's Result) told in ``rig``'s own points and ropes, with ``Result.water``."""
    from solver.water_forces import ACCEPT_REL, _scale

    user_ids = {p.id for p in rig.points}
    at = dict(aug.points) if aug.points else {p.id: p.xy for p in plan.rig.points}
    points = {k: v for k, v in at.items() if k in user_ids}
    segments, by_chain = _segments(rig, plan, aug) if aug.segments else ([], {})
    sf = rig.settings.min_safety_factor
    fixed = {p.id for p in rig.points if p.is_fixed}
    body_ids = {p.id for p in plan.wet_bodies}
    rope_share = dict(forces)
    for pid in body_ids:  # a stuck body's own drag is not delivered by the rig: keep only the rope's share
        p = rig.point(pid)
        if pid in rope_share:
            rope_share[pid] = rope_share[pid] - body_drag(ff.velocity_at(np.array(at[pid]))[0],
                                                          float(p.wetted_area_m2), str(p.drag_shape))
    anchors = dict(aug.anchors)
    loads = dict(aug.loads)
    for pid in fixed:
        f = rope_share.get(pid)
        if f is None or not (f[0] or f[1]):
            continue
        for table in (anchors, loads):
            if pid in table:
                old = table[pid]
                table[pid] = _anchor(old.fx_N + float(f[0]), old.fy_N + float(f[1]), old, sf)
    warnings = [replace(w, subject=_user_id(plan, w.subject), message=_told(rig, plan, w.message))
                for w in aug.warnings]
    status, message, subject = aug.status, _told(rig, plan, aug.message), _user_id(plan, aug.subject)
    residual = max(aug.residual_N, gap) if math.isfinite(aug.residual_N) else aug.residual_N
    if status == "ok" and gap > ACCEPT_REL * _scale(rig, forces, aug):
        status = "diverged"
        message = (f"the current's push on the ropes did not settle after {rounds} solves (the drag of the solved "
                   f"shape still differs by {gap:.3g} N from the drag used); the bowed ropes are not reliable")
    if status in ("mechanism", "diverged"):
        gone = [p.name for p in plan.wet_bodies if not p.is_fixed and ff.feature_at(p.x, p.y) is not None
                and ff.feature_at(*at[p.id]) is None]
        if gone:
            message = (f"{', '.join(gone)} swings out of the moving water (downstream of its tether, like a pendulum "
                       f"to the bank) where the current no longer holds its rope out: {message}")
    bodies = []
    for p in plan.wet_bodies:
        v = ff.velocity_at(np.array(at[p.id]))[0]
        f = body_drag(v, float(p.wetted_area_m2), str(p.drag_shape))
        bodies.append(BodyDrag(p.id, float(np.hypot(*f)), float(f[0]), float(f[1]), float(np.hypot(*v)),
                               ff.feature_at(*at[p.id])))
    water = WaterResult(tuple(_wet_ropes(plan, ff, at, by_chain, segments)) if aug.points else (),
                        tuple(bodies), rounds, gap, tuple(point_sides(rig).items()))
    return replace(aug, status=status, message=message, subject=subject, residual_N=residual, points=points,
                   segments=tuple(segments), anchors=anchors, loads=loads,
                   deflection_deg=_deflections(rig, plan, aug, at) if aug.points else {},
                   warnings=tuple(warnings) + tuple(plan.notes), water=water)
