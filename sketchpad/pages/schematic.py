"""The schematic: the rig drawn the way the trade teaches mechanical advantage, generated from the rig and its Result.

Points sit where the solver put them (as drawn when the solve failed; a narrow rig is spread across the box,
up to ``STRETCH`` times, so it is not to scale), and every strand of rope
between the same two points is drawn beside the others (``theme.SCHEMATIC_GAP_PX`` apart), so a
Z shows its three strands; a pulley or capture is a sheave the strands wrap; each strand is
labelled along its length with its tension in units of the haul force by the strand count
(``solver.nominal_ma.strand_count``: 1T, 2T, 3T ...) beside the real tension the solver found.
Labels run along their strand (so side-by-side strands keep their own) and are placed greedily:
a label that would cover another label, a point or a sheave moves along its strand, or is left
off and counted.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPainter, QPainterPath, QPolygonF, QTransform

from sketchpad import theme
from solver.model import Rig
from solver.result import Result

MARGIN_PX = 28.0
LABEL_PT = 6.5
BUNDLE_ANGLE_DEG = 4.0  # pieces this close to parallel ...
BUNDLE_APART_PX = 6.0  # ... and this close to one line are drawn side by side
STRETCH = 3.0  # largest ratio of the two axes' scales (the schematic is not to scale)
T_STEPS = (0.5, 0.36, 0.64, 0.24, 0.76, 0.15, 0.85, 0.3, 0.7)


@dataclass
class Strand:
    """One piece of rope as the schematic draws it (page px)."""

    rope: str
    index: int
    colour: QColor
    a: QPointF
    b: QPointF
    text: str
    bundle: int = 0  # strands between the same two points share a bundle


@dataclass
class SchematicLayout:
    """What a painted schematic holds: its strands, sheaves, the placed label outlines and how many were left off."""

    strands: list[Strand] = field(default_factory=list)
    sheaves: list[tuple[QPointF, float]] = field(default_factory=list)
    labels: list[QPolygonF] = field(default_factory=list)
    label_texts: list[str] = field(default_factory=list)
    skipped: int = 0
    ma_nominal: float | None = None


def positions(rig: Rig, result: Result | None) -> dict[str, tuple[float, float]]:
    """Site positions: solved when the rig solved, else as drawn."""
    pos = {p.id: (p.x, p.y) for p in rig.points}
    if result is not None and result.ok:
        pos.update(result.points)
    return pos


def t_units(rig: Rig) -> dict[tuple[str, int], float | None]:
    """Each piece's tension in haul-force units by strand count, keyed (rope id, piece index)."""
    from solver.nominal_ma import strand_count

    count = strand_count(rig)
    out: dict[tuple[str, int], float | None] = {}
    for r in rig.ropes:
        for run in r.runs():
            u = None if count is None else count.run_units.get((r.id, run.index))
            for i in run.piece_indices:
                out[(r.id, i)] = u
    return out


def t_text(u: float | None) -> str:
    """``"3T"`` (or ``"2.5T"`` when the count is not whole; ``""`` when the strand count has none)."""
    if u is None:
        return ""
    return f"{u:.0f}T" if abs(u - round(u)) < 1e-6 else f"{u:.1f}T"


def _page_transform(rig: Rig, result: Result | None, rect: QRectF):
    from sketchpad.pages.framing import rig_frame

    frame = rig_frame(rig, result)
    kx = (rect.width() - 2 * MARGIN_PX) / max(frame.width(), 1e-6)
    ky = (rect.height() - 2 * MARGIN_PX) / max(frame.height(), 1e-6)
    # not to scale: a narrow rig is spread across the box (at most STRETCH times), so its strands have room
    kx, ky = min(kx, STRETCH * ky), min(ky, STRETCH * kx)
    cx, cy = frame.center().x(), frame.center().y()

    def to_px(x: float, y: float) -> QPointF:
        return QPointF(rect.center().x() + (x - cx) * kx, rect.center().y() + (-y - cy) * ky)

    return to_px, min(kx, ky)


def _bundles(ends: list[tuple[QPointF, QPointF]]) -> list[list[int]]:
    """Indices of pieces drawn on one line and overlapping along it (a Z drawn straight, or strands between the
    same two points): each group is drawn side by side."""
    parent = list(range(len(ends)))

    def root(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    sin_max = math.sin(math.radians(BUNDLE_ANGLE_DEG))
    for i, (a, b) in enumerate(ends):
        d = b - a
        n = math.hypot(d.x(), d.y())
        if n < 1e-9:
            continue
        u = d / n
        for j in range(i + 1, len(ends)):
            c, e = ends[j]
            f = e - c
            m = math.hypot(f.x(), f.y())
            if m < 1e-9 or abs(u.x() * f.y() - u.y() * f.x()) / m > sin_max:
                continue  # not parallel
            mid = (c + e) / 2 - a
            if abs(u.x() * mid.y() - u.y() * mid.x()) > BUNDLE_APART_PX:
                continue  # parallel but on another line
            t0, t1 = sorted((QPointF.dotProduct(c - a, u), QPointF.dotProduct(e - a, u)))
            if min(t1, n) - max(t0, 0.0) > 0.1 * min(n, m):
                parent[root(j)] = root(i)
    groups: dict[int, list[int]] = {}
    for i in range(len(ends)):
        groups.setdefault(root(i), []).append(i)
    return list(groups.values())


def strands_of(rig: Rig, result: Result | None, to_px) -> tuple[list[Strand], dict[str, QPointF]]:
    """Every piece as a strand, offset sideways from the others drawn on the same line."""
    from solver.units import format_force

    pos = positions(rig, result)
    px = {pid: to_px(*xy) for pid, xy in pos.items()}
    units = t_units(rig)
    seg = {(s.rope, s.index): s for s in result.segments} if result is not None and result.ok else {}
    pieces = [(ri, r, i) for ri, r in enumerate(rig.ropes) for i in range(len(r.path) - 1)
              if r.path[i].at in px and r.path[i + 1].at in px and r.path[i].at != r.path[i + 1].at]
    ends = [(px[r.path[i].at], px[r.path[i + 1].at]) for _, r, i in pieces]
    out = []
    gap = theme.SCHEMATIC_GAP_PX
    for bundle, members in enumerate(_bundles(ends)):
        n = len(members)
        a0, b0 = ends[members[0]]
        d = b0 - a0
        length = math.hypot(d.x(), d.y()) or 1.0
        normal = QPointF(-d.y() / length, d.x() / length)
        for j, k in enumerate(members):
            ri, r, i = pieces[k]
            off = normal * ((j - (n - 1) / 2) * gap)
            a, b = ends[k][0] + off, ends[k][1] + off
            parts = [t_text(units.get((r.id, i)))]
            s = seg.get((r.id, i))
            if s is not None:
                parts.append(format_force(s.tension_N, rig.display.force))
            text = "  ".join(p for p in parts if p)
            out.append(Strand(r.id, i, theme.rope_colour(ri), a, b, text, bundle))
    return out, px


def _unit(v: QPointF) -> QPointF:
    n = math.hypot(v.x(), v.y())
    return v / n if n > 1e-9 else QPointF(0.0, 0.0)


def _sheaves(rig: Rig, strands: list[Strand], px: dict[str, QPointF]) -> list[tuple[QPointF, float, QColor, str]]:
    """(centre, radius px, rope colour, how) of every pulley or capture, hung beside its point (away from
    the strands, as the plan draws it); the two strands are carried on to the sheave's rim."""
    by_piece = {(s.rope, s.index): s for s in strands}
    kinds = {p.id: p.kind for p in rig.points}
    out = []
    for ri, r in enumerate(rig.ropes):
        for i in range(1, len(r.path) - 1):
            ps = r.path[i]
            if ps.how not in ("pulley", "capture") or ps.at not in px:
                continue
            here = px[ps.at]
            s_in, s_out = by_piece.get((r.id, i - 1)), by_piece.get((r.id, i))
            if s_in is None or s_out is None:
                continue
            u_in, u_out = _unit(s_in.a - s_in.b), _unit(s_out.b - s_out.a)  # from here toward each far end
            away = _unit(-(u_in + u_out))
            if away.manhattanLength() == 0:
                away = QPointF(-u_out.y(), u_out.x())
            off_in, off_out = s_in.b - here, s_out.a - here
            radius = max(math.hypot((off_in - off_out).x(), (off_in - off_out).y()) / 2, theme.SCHEMATIC_GAP_PX * 0.45)
            marker = theme.POINT_RADIUS_PX.get(kinds.get(ps.at, "point"), 5.0)
            shift = away * (marker + 2.0 + radius)  # both strands carried on alike: side-by-side strands stay parallel
            centre = here + (off_in + off_out) / 2 + shift
            s_in.b = here + off_in + shift
            s_out.a = here + off_out + shift
            out.append((centre, radius, theme.rope_colour(ri), ps.how))
    return out


def _label_polygon(fm: QFontMetricsF, text: str, a: QPointF, b: QPointF, t: float,
                   beside: float = 0.0) -> tuple[QPolygonF, QTransform]:
    """The label's outline (page px) on the strand at fraction ``t`` (``beside`` px off it), along it, upright."""
    d = b - a
    ang = math.degrees(math.atan2(d.y(), d.x()))
    if ang > 90:
        ang -= 180
    elif ang < -90:
        ang += 180
    c = a + d * t
    w, h = fm.horizontalAdvance(text) + 6, fm.height() + 1
    tr = QTransform()
    tr.translate(c.x(), c.y())
    tr.rotate(ang)
    tr.translate(0.0, beside)
    return tr.map(QPolygonF(QRectF(-w / 2, -h / 2, w, h))), tr


def _overlaps(poly: QPolygonF, others: list[QPainterPath]) -> bool:
    path = QPainterPath()
    path.addPolygon(poly)
    return any(path.intersects(o) for o in others)


def paint_schematic(painter: QPainter, rect: QRectF, rig: Rig, result: Result | None) -> SchematicLayout:
    """The schematic of ``rig`` into ``rect`` (page px); returns what was drawn (labels for checks)."""
    from sketchpad.pages.symbol_key import paint_point_symbol

    layout = SchematicLayout()
    to_px, _k = _page_transform(rig, result, rect)
    strands, px = strands_of(rig, result, to_px)
    layout.strands = strands
    sheaves = _sheaves(rig, strands, px)
    painter.save()
    painter.setClipRect(rect)
    painter.fillRect(rect, theme.PAPER)
    painter.setRenderHint(QPainter.Antialiasing, True)
    _paint_strands(painter, strands)
    layout.sheaves.extend(_paint_sheaves(painter, sheaves))
    _paint_rings_and_edges(painter, rig, px)
    structural = [p for p in rig.points if p.is_structural]
    for p in structural:
        paint_point_symbol(painter, px[p.id], p.kind)
    force_boxes = _paint_forces(painter, rig, px)
    _paint_haul_arrows(painter, rig, px)
    obstacles = _label_obstacles(structural, px, layout.sheaves, force_boxes)
    placed: list[QPainterPath] = []
    _place_point_names(painter, structural, px, obstacles, placed, layout)
    _place_strand_labels(painter, strands, obstacles, placed, layout)
    painter.restore()
    from solver.nominal_ma import nominal_ma

    layout.ma_nominal = nominal_ma(rig)
    return layout


def _paint_strands(painter: QPainter, strands: list[Strand]) -> None:
    """Every strand as a straight line in its rope's colour."""
    for s in strands:
        painter.setPen(theme.pixel_pen(s.colour, theme.SCHEMATIC_STRAND_PX))
        painter.drawLine(s.a, s.b)


def _paint_sheaves(painter: QPainter, sheaves: list[tuple[QPointF, float, QColor, str]]) -> list[tuple[QPointF, float]]:
    """Each sheave as a wheel with its axle (a capture with its grab's dot); returns (centre, radius px) of each."""
    drawn = []
    for centre, radius, colour, how in sheaves:
        painter.setPen(theme.pixel_pen(colour, 1.6))
        painter.setBrush(theme.PULLEY_FILL)
        painter.drawEllipse(centre, radius, radius)
        painter.setPen(Qt.NoPen)
        painter.setBrush(colour)
        painter.drawEllipse(centre, theme.PULLEY_AXLE_PX, theme.PULLEY_AXLE_PX)
        if how == "capture":
            painter.drawEllipse(centre + QPointF(0, -radius - 3), 3.0, 3.0)
        drawn.append((centre, radius))
    return drawn


def _paint_haul_arrows(painter: QPainter, rig: Rig, px: dict[str, QPointF]) -> None:
    """An arrow past each hauled end, along its last strand, showing the pull."""
    for ri, r in enumerate(rig.ropes):
        if r.is_hauled and len(r.path) >= 2 and r.path[-1].at in px and r.path[-2].at in px:
            tip_from, end = px[r.path[-2].at], px[r.path[-1].at]
            d = end - tip_from
            n = math.hypot(d.x(), d.y()) or 1.0
            u = d / n
            tip = end + u * 26
            painter.setPen(theme.pixel_pen(theme.rope_colour(ri), 1.6))
            painter.drawLine(end + u * 10, tip)
            side = QPointF(-u.y(), u.x()) * 4.5
            painter.setBrush(theme.rope_colour(ri))
            painter.drawPolygon(QPolygonF([tip + u * 3, tip - u * 6 + side, tip - u * 6 - side]))


def _label_obstacles(structural: list, px: dict[str, QPointF], sheaves: list[tuple[QPointF, float]],
                     force_boxes: list[QRectF]) -> list[QPainterPath]:
    """What no label may cover: point markers, sheaves and the forces' arrows and texts (page px)."""
    obstacles: list[QPainterPath] = []
    for p in structural:
        c = px[p.id]
        r = theme.POINT_RADIUS_PX.get(p.kind, 5.0)
        ob = QPainterPath()
        ob.addEllipse(c, r + 1, r + 1)
        obstacles.append(ob)
    for centre, radius in sheaves:
        ob = QPainterPath()
        ob.addEllipse(centre, radius + 1, radius + 1)
        obstacles.append(ob)
    for box in force_boxes:
        ob = QPainterPath()
        ob.addRect(box)
        obstacles.append(ob)
    return obstacles


def _place_point_names(painter: QPainter, structural: list, px: dict[str, QPointF], obstacles: list[QPainterPath],
                       placed: list[QPainterPath], layout: SchematicLayout) -> None:
    """Point names first (most important), beside their marker in the first free of six places, else counted
    as left off; each drawn name is added to ``placed``."""
    name_font = theme.page_font(LABEL_PT + 0.5)
    nfm = QFontMetricsF(name_font)
    painter.setFont(name_font)
    for p in structural:
        c = px[p.id]
        r = theme.POINT_RADIUS_PX.get(p.kind, 5.0) + 3
        w, h = nfm.horizontalAdvance(p.name) + 4, nfm.height()
        for dx, dy in ((r, -h - 1), (r, 1), (-r - w, -h - 1), (-r - w, 1), (-w / 2, r), (-w / 2, -r - h)):
            box = QRectF(c.x() + dx, c.y() + dy, w, h)
            path = QPainterPath()
            path.addRect(box)
            if not any(path.intersects(o) for o in obstacles + placed):
                painter.setPen(theme.PAGE_INK)
                painter.drawText(box.adjusted(2, 0, 0, 0), int(Qt.AlignLeft | Qt.AlignVCenter), p.name)
                placed.append(path)
                layout.labels.append(QPolygonF(box))
                layout.label_texts.append(p.name)
                break
        else:
            layout.skipped += 1


def _place_strand_labels(painter: QPainter, strands: list[Strand], obstacles: list[QPainterPath],
                         placed: list[QPainterPath], layout: SchematicLayout) -> None:
    """Each strand's label along its strand, at the first of ``T_STEPS`` (on it, then beside it) that covers
    nothing placed and no other bundle's strand; a strand too short or with no free place is counted as left off."""
    font = theme.page_font(LABEL_PT, bold=True)
    fm = QFontMetricsF(font)
    painter.setFont(font)
    strand_paths = []
    for s in strands:
        sp = QPainterPath(s.a)
        sp.lineTo(s.b)
        strand_paths.append(sp)
    for si, s in enumerate(strands):
        if not s.text:
            continue
        length = math.hypot((s.b - s.a).x(), (s.b - s.a).y())
        if length < fm.horizontalAdvance(s.text) + 8:
            layout.skipped += 1
            continue
        others = obstacles + placed + [q for j, q in enumerate(strand_paths) if strands[j].bundle != s.bundle]
        for t, side in [(t, 0.0) for t in T_STEPS] + [(t, d) for d in (1.0, -1.0) for t in T_STEPS]:
            poly, tr = _label_polygon(fm, s.text, s.a, s.b, t, side * (fm.height() / 2 + 3))
            if _overlaps(poly, others + ([] if side == 0 else [strand_paths[si]])):
                continue
            painter.save()
            painter.setTransform(tr, True)
            w, h = fm.horizontalAdvance(s.text) + 6, fm.height() + 1
            box = QRectF(-w / 2, -h / 2, w, h)
            painter.setPen(theme.pixel_pen(s.colour, 1.0))
            painter.setBrush(theme.OVERLAY_LABEL_BACK)
            painter.drawRoundedRect(box, 3, 3)
            painter.setPen(theme.SCHEMATIC_T_TEXT)
            painter.drawText(box, int(Qt.AlignCenter), s.text)
            painter.restore()
            path = QPainterPath()
            path.addPolygon(poly)
            placed.append(path)
            layout.labels.append(poly)
            layout.label_texts.append(s.text)
            break
        else:
            layout.skipped += 1


def _paint_rings_and_edges(painter: QPainter, rig: Rig, px: dict[str, QPointF]) -> None:
    """A ring round each sliding pass and a wedge under each edge pass, in the rope's colour."""
    for ri, r in enumerate(rig.ropes):
        colour = theme.rope_colour(ri)
        for ps in r.path[1:-1]:
            if ps.at not in px:
                continue
            c = px[ps.at]
            if ps.how == "sliding":
                painter.setPen(theme.pixel_pen(colour, 1.8))
                painter.setBrush(Qt.NoBrush)
                painter.drawEllipse(c, theme.RING_RADIUS_PX + 2, theme.RING_RADIUS_PX + 2)
            elif ps.how == "edge":
                painter.setPen(theme.pixel_pen(theme.POINT_OUTLINE, 1.0))
                painter.setBrush(theme.EDGE_FILL)
                h = theme.EDGE_SIZE_PX * 0.8
                painter.drawPolygon(QPolygonF([c, c + QPointF(-h * 0.45, h), c + QPointF(h * 0.45, h)]))


def _paint_forces(painter: QPainter, rig: Rig, px: dict[str, QPointF]) -> list[QRectF]:
    """Each drawn force as the plan's arrow with its size; returns the boxes they take (label obstacles)."""
    from solver.units import format_force

    boxes = []
    font = theme.page_font(LABEL_PT)
    fm = QFontMetricsF(font)
    for f in rig.forces:
        if f.at not in px or f.magnitude_N <= 0:
            continue
        a = math.radians(f.direction_deg)
        u = QPointF(math.cos(a), -math.sin(a))
        start = px[f.at] + u * 8
        tip = start + u * theme.FORCE_LENGTH_PX
        painter.setPen(theme.pixel_pen(theme.FORCE_COLOUR, theme.FORCE_WIDTH_PX))
        painter.drawLine(start, tip - u * theme.FORCE_HEAD_PX * 0.8)
        side = QPointF(-u.y(), u.x()) * (theme.FORCE_HEAD_PX * 0.45)
        painter.setPen(Qt.NoPen)
        painter.setBrush(theme.FORCE_COLOUR)
        painter.drawPolygon(QPolygonF([tip, tip - u * theme.FORCE_HEAD_PX + side, tip - u * theme.FORCE_HEAD_PX - side]))
        text = format_force(f.magnitude_N, rig.display.force) + (f" {f.label}" if f.label else "")
        box = QRectF(tip.x() + (4 if u.x() >= 0 else -fm.horizontalAdvance(text) - 4), tip.y() - fm.height() / 2,
                     fm.horizontalAdvance(text), fm.height())
        painter.setFont(font)
        painter.setPen(theme.FORCE_COLOUR)
        painter.drawText(box, int(Qt.AlignLeft | Qt.AlignVCenter), text)
        line = QRectF(start, tip).normalized().adjusted(-4, -4, 4, 4)
        boxes += [box, line]
    return boxes


def caption(rig: Rig, result: Result | None) -> str:
    """The sentence under a schematic: what T means and the three MAs."""
    from solver.readouts import ma_long

    t = ("Not to scale. T = the haul team's pull. Each strand shows its tension by strand count (frictionless, "
         "parallel strands) beside the tension the solver found with friction and stretch.")
    if result is not None and result.ok:
        try:
            return t + " " + ma_long(result)
        except Exception:  # noqa: BLE001 - the wording helper is optional here
            return t
    return t + " The rig did not solve: strand counts only."


__all__ = ["paint_schematic", "SchematicLayout", "t_units", "t_text", "caption", "strands_of"]
