"""A rope's layout on plain floats (RopeItem._build) is bit for bit the layout QPointF arithmetic makes.

The reference below is the layout as it was written with QPointF operations (each a double
operation in Qt); the float version must do the same operations in the same order, so the path
elements, glyphs, haul arrow, label place and bounds must be equal exactly, on the 50-rope rig and
on random ropes with every kind of pass, straight-through sheaves and points on top of each other.
"""

from __future__ import annotations

import math
import random

from PySide6.QtCore import QPointF
from PySide6.QtGui import QColor, QPainterPath, QPolygonF

from sketchpad import theme
from sketchpad.geometry import to_scene
from sketchpad.items import RopeItem
from solver.model import Pass, Rope
from tests.bench.fifty_ropes import fifty_rope_rig


def _unit(v: QPointF) -> QPointF:
    n = math.hypot(v.x(), v.y())
    return QPointF(1.0, 0.0) if n < 1e-12 else QPointF(v.x() / n, v.y() / n)


def _left(v: QPointF) -> QPointF:
    return QPointF(-v.y(), v.x())


def _tangent(c: QPointF, direction: QPointF, inside: QPointF, r: float) -> QPointF:
    n = _left(direction)
    if n.x() * inside.x() + n.y() * inside.y() > 0:
        n = -n
    return c + n * r


def _arc(c: QPointF, r: float, a: QPointF, b: QPointF, inside: QPointF, steps: int = 10) -> list:
    cx, cy = c.x(), c.y()
    a0 = math.atan2(a.y() - cy, a.x() - cx)
    a1 = math.atan2(b.y() - cy, b.x() - cx)
    sweep = (a1 - a0) % (2 * math.pi)
    outside = math.atan2(-inside.y(), -inside.x())

    def mid_score(sw: float) -> float:
        return math.cos(a0 + sw / 2 - outside)

    if mid_score(sweep - 2 * math.pi) > mid_score(sweep):
        sweep -= 2 * math.pi
    return [(cx + math.cos(a0 + sweep * t / steps) * r, cy + math.sin(a0 + sweep * t / steps) * r)
            for t in range(1, steps + 1)]


def qpointf_layout(rope: Rope, positions: dict, kinds: dict, k: float) -> tuple:
    """(path, glyphs, arrow, label place) of ``rope`` laid out with QPointF arithmetic (the reference)."""
    passes = [p for p in rope.path if p.at in positions]
    pts = [QPointF(positions[p.at]) for p in passes]
    glyphs, arrow, path = [], QPolygonF(), QPainterPath()
    n = len(pts)
    if n == 0:
        return path, glyphs, arrow, None
    path.moveTo(pts[0])
    longest = (0.0, pts[0], pts[0])
    for i in range(n):
        p = pts[i]
        how = passes[i].how
        marker = theme.POINT_RADIUS_PX.get(kinds.get(passes[i].at, "point"), 5.0) * k
        u_prev = _unit(pts[i - 1] - p) if i > 0 else None
        u_next = _unit(pts[i + 1] - p) if i < n - 1 else None
        if i > 0:
            seg = math.hypot(*(p - pts[i - 1]).toTuple())
            if seg > longest[0]:
                longest = (seg, pts[i - 1], p)
        if 0 < i < n - 1 and how in ("pulley", "sliding"):
            r = (theme.PULLEY_RADIUS_PX if how == "pulley" else theme.RING_RADIUS_PX) * k
            s = u_prev + u_next
            b = _left(u_next) if math.hypot(s.x(), s.y()) < 1e-6 else _unit(s)
            c = p + b * (marker + theme.GLYPH_GAP_PX * k + r)
            t_in = _tangent(c, -u_prev, b, r)
            t_out = _tangent(c, u_next, b, r)
            path.lineTo(t_in)
            for qx, qy in _arc(c, r, t_in, t_out, b):
                path.lineTo(qx, qy)
            glyphs.append((how, c, r, b))
            continue
        path.lineTo(p)
        if i == 0 or (i < n - 1 and how == "tied") or (i == n - 1 and how != "hauled"):
            d = u_next if i == 0 else u_prev
            kr = theme.KNOT_RADIUS_PX * k
            glyphs.append(("tied", p + d * (marker + theme.GLYPH_GAP_PX * k + kr), kr, d))
        elif how == "edge":
            s = (u_prev + u_next) if (u_prev is not None and u_next is not None) else QPointF(0, 1)
            b = _left(u_next) if math.hypot(s.x(), s.y()) < 1e-6 else _unit(s)
            glyphs.append(("edge", p, theme.EDGE_SIZE_PX * k, b))
        elif i == n - 1 and how == "hauled":
            d = -u_prev
            tip = p + d * (marker + theme.HAUL_ARROW_PX * k)
            path.lineTo(tip)
            h = theme.HAUL_ARROW_HEAD_PX * k
            side = _left(d) * (h * 0.5)
            base = tip - d * h
            arrow = QPolygonF([tip + d * (h * 0.2), base + side, base - side])
    _, a, b2 = longest
    mid = (a + b2) * 0.5
    normal = _left(_unit(b2 - a))
    if normal.y() > 0:
        normal = -normal
    return path, glyphs, arrow, mid + normal * (theme.ROPE_LABEL_OFFSET_PX * k)


def _elements(path: QPainterPath) -> list:
    return [(path.elementAt(i).type, path.elementAt(i).x, path.elementAt(i).y) for i in range(path.elementCount())]


def assert_laid_out_as_reference(rope: Rope, positions: dict, kinds: dict, k: float) -> None:
    item = RopeItem(rope)
    item.set_rope(rope, positions, kinds, QColor(20, 90, 160), k)
    path, glyphs, arrow, label_pos = qpointf_layout(rope, positions, kinds, k)
    assert _elements(item._path) == _elements(path), rope.id  # exact: the same double operations
    assert [(g[0], g[1].toTuple(), g[2], g[3].toTuple()) for g in item._glyphs] == \
        [(g[0], g[1].toTuple(), g[2], g[3].toTuple()) for g in glyphs], rope.id
    assert [item._arrow.at(i).toTuple() for i in range(item._arrow.size())] == \
        [arrow.at(i).toTuple() for i in range(arrow.size())], rope.id
    if label_pos is not None:
        assert item._label_pos.toTuple() == label_pos.toTuple(), rope.id


def test_the_fifty_rope_rigs_ropes_are_laid_out_as_with_qpointf_arithmetic(qapp):
    rig = fifty_rope_rig()
    positions = {p.id: to_scene(p.x, p.y) for p in rig.points}
    kinds = {p.id: p.kind for p in rig.points}
    for k in (0.04, 0.013):
        for rope in rig.ropes:
            assert_laid_out_as_reference(rope, positions, kinds, k)


def test_random_ropes_with_every_pass_kind_are_laid_out_as_with_qpointf_arithmetic(qapp):
    rng = random.Random(17)
    point_kinds = list(theme.POINT_RADIUS_PX) + ["unknown"]
    for case in range(300):
        n = rng.randrange(2, 8)
        ids = [f"P{i}" for i in range(n)]
        positions, kinds = {}, {}
        for i, pid in enumerate(ids):
            if i and rng.random() < 0.1:  # on top of the last point
                positions[pid] = QPointF(positions[ids[i - 1]])
            elif i > 1 and rng.random() < 0.1:  # straight through: the sheave's two sides cancel
                a, b = positions[ids[i - 2]], positions[ids[i - 1]]
                positions[pid] = QPointF(2 * b.x() - a.x(), 2 * b.y() - a.y())
            else:
                positions[pid] = QPointF(rng.uniform(-30, 30), rng.uniform(-30, 30))
            kinds[pid] = rng.choice(point_kinds)
        hows = [rng.choice(("tied", "pulley", "sliding", "edge")) for _ in ids]
        if rng.random() < 0.5:
            hows[-1] = "hauled"
        path = tuple(Pass(pid, how) for pid, how in zip(ids, hows))
        if rng.random() < 0.2 and n > 2:
            positions.pop(ids[rng.randrange(n)])  # a pass at a point not drawn (two or more stay: one alone
            # has no direction for its knot, in either layout)
        rope = Rope(f"r{case}", "m", path)
        assert_laid_out_as_reference(rope, positions, kinds, rng.choice((0.05, 0.02, 0.0071)))


def test_a_rope_with_one_drawn_pass_lays_out_without_glyphs(qapp):
    # The canvas leaves out passes at points it cannot find; a rope left with one pass has no
    # direction for a knot or an arrow: it must lay out (a bare point, its name) instead of raising.
    item = RopeItem(Rope(id="r", material="lin", path=(Pass(at="A"), Pass(at="B", how="hauled"))))
    item.set_rope(item.rope, {"A": to_scene(2.0, 3.0)}, {"A": "anchor"}, QColor("red"), 0.05)
    assert item._path.elementCount() >= 1 and item._glyphs == [] and item._arrow.isEmpty()
    assert item.boundingRect().contains(to_scene(2.0, 3.0))
