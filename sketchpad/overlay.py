"""The force overlay: the solver's Result drawn over the sketch by a few items that paint many labels.

What a planner sees after every solve:

* each rope piece, at its solved position, under a translucent band coloured by its
  utilization (tension x safety factor / MBS, ramp in ``theme.UTIL_RAMP``) and
  labelled with its tension (and stretch, %) in the display unit;
* the turn at every redirect, and at a vector-pull hand also the angle off the
  original line (half the turn);
* an arrow at every anchor showing the resultant's direction, with its size and the
  share of the anchor's allowed load used; the force delivered to each load against
  the force it needs; the haul force and what each hauler gives (with the range
  static friction allows in ``hold``);
* danger zones (``solver.danger``) as hatched translucent areas;
* a legend with the ramp, mechanical advantage (actual / ideal) and the haul summary.

Labels keep their size in screen pixels: the items live in scene metres, and
labels are painted in device space at pixel offsets from their anchor point.  A
greedy placer (:func:`place_labels`) runs whenever the result or the zoom
changes (never inside ``paint``): most important labels first, each tries several
offsets along and either side of its piece, then a leader line farther out, else it
is skipped and counted.  A failed solve shows a banner with the named reason and
keeps the last good overlay, greyed.
"""

from __future__ import annotations

import logging
import math
import operator
from dataclasses import dataclass, field
from itertools import compress
from operator import is_not
from typing import Callable, Iterable, Mapping

from PySide6.QtCore import QEvent, QObject, QPointF, QRect, QRectF, QSize, Qt
from PySide6.QtGui import (
    QAction,
    QBrush,
    QColor,
    QFontMetricsF,
    QImage,
    QPaintEngine,
    QPainter,
    QPainterPath,
    QPen,
    QPixmap,
    QPolygonF,
    QRegion,
    QTransform,
)
from PySide6.QtWidgets import QGraphicsItem, QLabel, QWidget

from sketchpad import legend_key, theme
from sketchpad.drag_layer import Versioned
from sketchpad.items import blit_cached, cached_blit_at, drop_oldest, pixel_dpr, text_advance
from sketchpad.retained import RetainedLayer, add_damage
from sketchpad.short_text import drawn
from solver.directions import direction_text
from solver.model import Rig
from solver.readouts import ma_short, use_text
from solver.result import Result
from solver.pull_needed import need_phrase
from solver.units import format_force

log = logging.getLogger(__name__)

#: Overlay layers the View menu toggles, with their menu text.
LAYERS: dict[str, str] = {
    "tensions": "Rope &tensions",
    "angles": "Turn &angles",
    "anchors": "Anchor, &load and haul forces",
    "zones": "&Danger zones",
    "stretch": "Rope &stretch",
}
#: Middle passes whose turn is labelled (tied passes are knots and grabs, not redirects).
TURNING_HOWS = frozenset({"pulley", "sliding", "edge", "capture"})
#: Pieces carrying less than this (N) are labelled "slack".
SLACK_N = 1.0
#: Utilization buckets for the band paths (one path and pen per bucket).
BAND_BUCKETS = 24
BAND_MAX_UTIL = 1.6
#: Placer tuning, in screen pixels.
MARKER_CLEAR_PX = 11.0  # keep labels off point markers
GRID_CELL_PX = 56.0
ROPE_SAMPLE_PX = 10.0
MAX_SAMPLES_PER_PIECE = 160
LEADER_STEPS_PX = (26.0, 52.0)
HOLD_LABEL = "hold"
PIXMAP_CACHE_MAX = 4000  # rendered labels kept for repaints


# --- the label model ---------------------------------------------------------------------------
@dataclass
class OverlayLabel:
    """One label: what it says (lines), the numbers behind it, where it hangs, and where the placer put it."""

    kind: str  # "tension", "angle", "anchor", "load", "haul"
    key: object  # (rope id, piece) | pass key "rope@point" | point id
    lines: tuple[str, ...]
    values: Mapping[str, float]
    colour: QColor  # border (utilization colour for ropes and anchors)
    priority: float
    base: tuple[float, float]  # scene metres: the point on the piece or the point it is about
    end: tuple[float, float] | None = None  # piece labels: the piece's other end (scene metres)
    prefer: tuple[float, float] = (0.0, -1.0)  # point labels: preferred direction (scene, unit)
    # placement (screen pixels, relative to the anchor ``at``), set by place_labels
    placed: bool = False
    at: tuple[float, float] = (0.0, 0.0)  # scene metres the pixel rect hangs from
    rect: tuple[float, float, float, float] = (0.0, 0.0, 0.0, 0.0)  # x, y, w, h px relative to ``at``
    leader: bool = False
    static: list = field(default_factory=list, repr=False)

    @property
    def text(self) -> str:
        return "\n".join(self.lines)


@dataclass
class AnchorArrow:
    """An anchor resultant: where (scene metres), which way (scene unit vector), colour."""

    point_id: str
    base: tuple[float, float]
    direction: tuple[float, float]
    colour: QColor


def _scene(xy) -> tuple[float, float]:
    return (float(xy[0]), -float(xy[1]))


def scene_positions(rig: Rig, result: Result) -> dict[str, tuple[float, float]]:
    """Scene position (metres, y down) of every point of ``rig``: where the solver put it, else where it is drawn.

    A solved position given as the very tuple of the last call keeps its scene tuple (the solver hands
    on the tuples of points a drag step did not move), so unchanged points keep equal, identical positions.
    When the solved points and the rig's points are the last call's names in the same order, only the
    solved tuples and Point objects that are other objects are worked out again (a drag step moves a
    few); the answer is always a new dict, equal to one made afresh (kept for the next call: callers
    read it and never change it).
    """
    solved = result.points
    names, values = tuple(solved), tuple(solved.values())
    pts = rig.points
    m_names, m_values, m_made, m_pts, m_pos = _scene_memo
    if m_pos is not None and names == m_names and len(pts) == len(m_pts):
        made = m_made
        moved = list(compress(range(len(values)), map(is_not, values, m_values)))
        if moved:
            made = dict(m_made)
            for i in moved:
                xy = values[i]
                made[names[i]] = (float(xy[0]), -float(xy[1]))
        changed = list(compress(range(len(pts)), map(is_not, pts, m_pts)))
        if all(pts[i].id == m_pts[i].id for i in changed):
            pos = dict(m_pos)
            for i in moved:
                pid = names[i]
                pos[pid] = made[pid]
            for i in changed:
                p = pts[i]
                if p.id not in made:
                    pos[p.id] = (float(p.x), -float(p.y))
            _scene_memo[:] = [names, values, made, pts, pos]
            return pos
    else:
        memo_src = dict(zip(m_names, m_values))
        made = {}
        for pid, xy in solved.items():
            made[pid] = m_made[pid] if memo_src.get(pid) is xy else (float(xy[0]), -float(xy[1]))
    pos = {}
    found = 0
    for p in pts:  # in the rig's order: solved where solved, else as drawn
        pid = p.id
        hit = made.get(pid)
        if hit is None:
            pos[pid] = (float(p.x), -float(p.y))
        else:
            pos[pid] = hit
            found += 1
    if found != len(made):
        pos.update(made)  # a solved point the rig no longer has (a greyed result of an older rig) stays
    _scene_memo[:] = [names, values, made, pts, pos]
    return pos


def _bucket_colours() -> tuple[list[int], dict[int, int]]:
    """Opaque colour (rgba) of each utilization bucket, and for each colour the first bucket that has it."""
    rgba = [theme.utilization_colour(k / BAND_BUCKETS * BAND_MAX_UTIL).rgba() for k in range(BAND_BUCKETS + 1)]
    first: dict[int, int] = {}
    for k, c in enumerate(rgba):
        first.setdefault(c, k)
    return rgba, first


_BUCKET_RGBA, _BUCKET_ORDER = _bucket_colours()
#: band width (px) of each bucket colour: heavier with use, so greyscale keeps the meaning (theme.band_width_px)
_BUCKET_WIDTH = {c: theme.band_width_px(k / BAND_BUCKETS * BAND_MAX_UTIL) for c, k in _BUCKET_ORDER.items()}


def _unit(dx: float, dy: float) -> tuple[float, float]:
    n = math.hypot(dx, dy)
    return (0.0, -1.0) if n < 1e-12 else (dx / n, dy / n)


class PerPoint:
    """One value per point of ``rig.points``, made again only for the points whose Point object changed.

    A drag step hands over a new ``rig.points`` tuple that shares every Point object but the moved
    one, so a per-point table (scene positions, name boxes) is patched, not rebuilt; the answer is a
    new list (the last one is never changed in place) equal to making every value afresh.
    """

    def __init__(self, make: Callable) -> None:
        self._make = make
        self._points: tuple | None = None
        self._values: list = []

    def values(self, points: tuple) -> list:
        if points is self._points:
            return self._values
        old, make = self._points, self._make
        if old is not None and len(old) == len(points):
            values = list(self._values)  # a copy: the last answer is never changed in place
            for i in compress(range(len(points)), map(is_not, points, old)):  # only the changed Point objects
                values[i] = make(points[i])
        else:
            values = [make(p) for p in points]
        self._points, self._values = points, values
        return values


#: the last call of scene_positions: names and tuples of result.points, their scene positions (a dict in that
#: order), rig.points and the answer (None before the first call); nothing in it is changed in place
_scene_memo: list = [(), (), {}, (), None]


_pass_keys_for: list = [None, {}]  # (rig.ropes, pass keys) of the last call: a drag keeps the ropes


def pass_keys(rig: Rig) -> dict[str, tuple[str, int]]:
    """Deflection keys of ``Result.deflection_deg`` ("rope@point", "rope@point#2") -> (rope id, pass index)."""
    if _pass_keys_for[0] is rig.ropes:
        return dict(_pass_keys_for[1])
    out: dict[str, tuple[str, int]] = {}
    for rope in rig.ropes:
        counts: dict[str, int] = {}
        for j in range(1, len(rope.path) - 1):
            at = rope.path[j].at
            counts[at] = counts.get(at, 0) + 1
            key = f"{rope.id}@{at}" if counts[at] == 1 else f"{rope.id}@{at}#{counts[at]}"
            out[key] = (rope.id, j)
    _pass_keys_for[:] = [rig.ropes, dict(out)]
    return out


def fmt_percent(fraction: float, digits: int = 0) -> str:
    return f"{fraction * 100:.{digits}f} %"


def fmt_angle(deg: float) -> str:
    return f"{deg:.0f}°" if abs(deg) >= 10 else f"{deg:.1f}°"


class _Entries:
    """Per entry of a Result's part (by position: the n-th segment, the n-th turn, ...) what the last call made of it.

    Kept for each entry: the record or number it was made from, the ids of the points it reads, what it
    made (a label, a band piece) with an extra (an anchor arrow, a band colour) and the key of the
    numbers it shows.  A drag step hands on the records and positions of what it did not move
    (DEVELOPERS.md, "Unchanged objects are handed on"), so only entries whose record, point or position
    is another object are made again; the rest keep what they made without a look at their numbers.
    """

    __slots__ = ("names", "values", "reads", "by_point", "outs", "extras", "keys", "by_key")

    def __init__(self) -> None:
        self.names: tuple | None = None  # the entries' keys (a dict's keys), or None for a tuple of records
        self.values: tuple | None = None  # what each entry was made from (records, turns)
        self.reads: list = []  # per entry: the ids of the points it reads
        self.by_point: dict[str, list[int]] = {}  # point id -> the entries that read it
        self.outs: list = []  # per entry: what it made, or None
        self.extras: list = []  # per entry: its extra, or None
        self.keys: list = []  # per entry: the key of its numbers, or None
        self.by_key: dict = {}  # key of numbers -> (out, extra): equal numbers at the same place, the same objects

    def update(self, names, values: tuple, dirty, make: Callable) -> list[int] | None:
        """Bring the entries up to ``values`` (named ``names``): ``make(i, value, by_key)`` -> (points read, key,
        out, extra) for each entry whose value is not the last one's object or that reads a ``dirty`` point
        (None: every entry), ``by_key`` being the last call's (out, extra) by key.  Returns the entries made
        again, or None when every entry was."""
        n = len(values)
        old_by_key = self.by_key
        if dirty is None or self.values is None or len(self.values) != n or names != self.names:
            todo = range(n)
            self.reads, self.outs, self.extras, self.keys = [()] * n, [None] * n, [None] * n, [None] * n
            by_key, regroup = {}, True
        else:
            todo = set(compress(range(n), map(is_not, values, self.values)))
            by_point = self.by_point
            for pid in dirty:
                hit = by_point.get(pid)
                if hit is not None:
                    todo.update(hit)
            self.values = values
            if not todo:
                return []
            todo = sorted(todo)
            self.reads, self.outs, self.extras, self.keys = list(self.reads), list(self.outs), list(self.extras), \
                list(self.keys)
            by_key, regroup = dict(old_by_key), False
        reads, outs, extras, keys = self.reads, self.outs, self.extras, self.keys
        for i in todo:
            read, key, out, extra = make(i, values[i], old_by_key)
            if not regroup and read != reads[i]:
                regroup = True
            if keys[i] is not None:
                by_key.pop(keys[i], None)
            reads[i], outs[i], extras[i], keys[i] = read, out, extra, key
            if key is not None:
                by_key[key] = (out, extra)
        if regroup:
            by_point: dict[str, list[int]] = {}
            for i, read in enumerate(reads):
                for pid in read:
                    by_point.setdefault(pid, []).append(i)
            self.by_point = by_point
        self.names, self.values, self.by_key = names, values, by_key
        return None if isinstance(todo, range) else todo


def _moved(names: tuple, values: tuple, old_names: tuple | None, old_values: tuple | None) -> set | None:
    """The names whose value is not the very object it was (``old_*``, the same names in the same order),
    or None when the names are others."""
    if old_names is None or names != old_names:
        return None
    return set(compress(names, map(is_not, values, old_values)))


class _LabelState:
    """What :func:`build_labels` keeps between calls in its ``memo``: the rig's points, the scene positions and
    the parts of the label model as the last call saw them."""

    __slots__ = ("points", "by_id", "pos_names", "pos_values", "ropes", "forces", "holds", "parts")

    def __init__(self) -> None:
        self.points: tuple | None = None
        self.by_id: dict = {}
        self.pos_names: tuple | None = None
        self.pos_values: tuple | None = None
        self.ropes = self.forces = None
        self.holds: tuple = (None, None)  # result.hold_anchor_range, result.hold_haul_range
        self.parts = {k: _Entries() for k in ("t", "a", "n", "l", "h")}

    def dirty_points(self, rig: Rig, pos: Mapping) -> set | None:
        """Ids of the points whose Point object or scene position is not the last call's object, or None
        when the points themselves are others (added, removed, reordered): then every entry is made again."""
        pts, names, values = rig.points, tuple(pos), tuple(pos.values())
        old_pts, old_names, old_values = self.points, self.pos_names, self.pos_values
        self.points, self.pos_names, self.pos_values = pts, names, values
        dirty = _moved(names, values, old_names, old_values)
        if dirty is None or old_pts is None or len(old_pts) != len(pts):
            self.by_id = {p.id: p for p in pts}
            return None
        changed = list(compress(range(len(pts)), map(is_not, pts, old_pts)))
        if changed:
            if any(pts[i].id != old_pts[i].id for i in changed):
                self.by_id = {p.id: p for p in pts}
                return None
            self.by_id = by_id = dict(self.by_id)
            for i in changed:
                p = pts[i]
                by_id[p.id] = p
                dirty.add(p.id)
        return dirty


def _changed_keys(new: Mapping, old: Mapping | None) -> set | None:
    """Keys whose value in ``new`` is not the very object it is in ``old`` (None when there is no ``old``)."""
    if old is None:
        return None
    if new is old or (not new and not old):
        return set()
    return {k for k in new.keys() | old.keys() if new.get(k) is not old.get(k)}


def build_labels(rig: Rig, result: Result, layers: Iterable[str], memo: dict | None = None,
                 pos: Mapping[str, tuple[float, float]] | None = None) -> tuple[list[OverlayLabel], list[AnchorArrow]]:
    """Labels and anchor arrows for an ok ``result`` of ``rig`` with the ``layers`` shown (numbers from the Result).

    ``memo`` (a dict the caller keeps between calls) keeps what the last call made: an entry whose
    record (segment, turn, anchor, load, haul force) and points are the very objects of the last call
    keeps its label without a look at its numbers, so a drag step costs in proportion to the part it
    moved; an entry made again whose numbers, names and positions are those of a label of the last
    call gets that label.  ``pos`` is :func:`scene_positions` of ``rig`` and ``result`` when the caller has it.
    """
    layers = set(layers)
    unit = rig.display.force
    sf = float(rig.settings.min_safety_factor)
    context = (unit, sf, frozenset(layers), rig.view)
    state = memo.get("_state") if memo is not None and memo.get("_context") == context else None
    if state is None:
        state = _LabelState()
        if memo is not None:
            memo.clear()
            memo.update(_context=context, _state=state)
    if pos is None:
        pos = scene_positions(rig, result)
    dirty = state.dirty_points(rig, pos)
    points = state.by_id
    pos_get = pos.get
    parts = state.parts
    labels: list[OverlayLabel] = []

    if "tensions" in layers or "stretch" in layers:
        def tension(_i, s, old):
            read = (s.from_point, s.to_point)
            a, b = pos_get(read[0]), pos_get(read[1])
            if a is None or b is None:
                return read, None, None, None
            key = ("t", s.rope, s.index, s.tension_N, s.strain, s.utilization, a, b)
            hit = old.get(key)
            if hit is not None:  # the piece's label of the last call: same numbers, same place
                return read, key, hit[0], None
            lines = []
            slack = s.tension_N <= SLACK_N
            if "tensions" in layers:
                lines.append("slack" if slack else format_force(s.tension_N, unit))
            if "stretch" in layers and not slack:
                lines.append(f"{s.strain * 100:.1f} % stretch")
            if not lines:
                return read, None, None, None
            lab = OverlayLabel(
                kind="tension", key=(s.rope, s.index), lines=tuple(lines),
                values={"tension_N": s.tension_N, "strain": s.strain, "utilization": s.utilization},
                colour=theme.utilization_colour(s.utilization), priority=50.0 + 10.0 * min(s.utilization, 3.0),
                base=a, end=b)
            return read, key, lab, None

        part = parts["t"]
        part.update(None, result.segments, dirty, tension)
        labels += filter(None, part.outs)

    if "angles" in layers:
        same = rig.ropes is state.ropes and rig.forces is state.forces
        state.ropes, state.forces = rig.ropes, rig.forces
        turns = result.deflection_deg
        names = tuple(turns)
        found: dict = {}

        def angle(i, turn, old):
            if not found:
                found.update(keys=pass_keys(rig), ropes={r.id: r for r in rig.ropes},
                             forced={f.at for f in rig.forces if f.magnitude_N > 0})
            key = names[i]
            keys = found["keys"]
            if key not in keys or not math.isfinite(turn):
                return (), None, None, None
            rope_id, j = keys[key]
            rope = found["ropes"][rope_id]
            ps = rope.path[j]
            read = (ps.at, rope.path[j - 1].at, rope.path[j + 1].at)
            if ps.how not in TURNING_HOWS or ps.at not in pos:
                return read, None, None, None
            at = pos[ps.at]
            prev, nxt = pos.get(read[1], at), pos.get(read[2], at)
            point = points.get(ps.at)
            hand = point is not None and not point.is_fixed and ps.at in found["forced"]
            mkey = ("a", key, turn, at, prev, nxt, hand)
            hit = old.get(mkey)
            if hit is not None:
                return read, mkey, hit[0], None
            u1, u2 = _unit(prev[0] - at[0], prev[1] - at[1]), _unit(nxt[0] - at[0], nxt[1] - at[1])
            outward = _unit(-(u1[0] + u2[0]), -(u1[1] + u2[1]))  # away from both legs: outside the bight
            lines = [f"turn {fmt_angle(turn)}"]
            values = {"turn_deg": float(turn)}
            if hand:
                lines.append(f"off line {fmt_angle(turn / 2.0)}")
                values["off_line_deg"] = float(turn) / 2.0
            lab = OverlayLabel(kind="angle", key=key, lines=tuple(lines), values=values,
                               colour=theme.ANGLE_TEXT, priority=30.0 + (5.0 if hand else 0.0),
                               base=at, prefer=outward)
            return read, mkey, lab, None

        part = parts["a"]
        part.update(names, tuple(turns.values()), dirty if same else None, angle)
        labels += filter(None, part.outs)

    arrows: list[AnchorArrow] = []
    if "anchors" in layers:
        anchor_holds, haul_holds = result.hold_anchor_range, result.hold_haul_range
        old_anchor_holds, old_haul_holds = state.holds
        state.holds = (anchor_holds, haul_holds)

        def also(changed: set | None) -> set | None:
            return None if dirty is None or changed is None else (dirty | changed if changed else dirty)

        anchors = result.anchors
        names_n = tuple(anchors)

        def anchor(i, a, old):
            aid = names_n[i]
            p = points.get(aid)
            if aid not in pos or p is None:
                return (aid,), None, None, None
            hold = anchor_holds.get(aid)
            at = pos[aid]
            # the numbers the label and arrow show (hashing the frozen record itself is slower)
            mkey = ("n", aid, a.force_N, a.direction_deg, a.utilization, a.capacity_kind, p.name, hold, at, rig.view)
            hit = old.get(mkey)
            if hit is not None:
                return (aid,), mkey, hit[0], hit[1]
            rad = math.radians(a.direction_deg)
            d = (math.cos(rad), -math.sin(rad))  # site CCW-from-east -> scene (y down)
            colour = theme.utilization_colour(a.utilization)
            lines = [f"{drawn(p.name)} {format_force(a.force_N, unit)}", "toward " + direction_text(a.direction_deg, rig.view, a.force_N)]
            if a.utilization is not None:
                lines.append(use_text(a, sf))
            else:
                lines.append("capacity not known")
            values = {"force_N": a.force_N, "direction_deg": a.direction_deg}
            if a.utilization is not None:
                values["utilization"] = a.utilization
            if hold is not None:
                lines.append(f"{HOLD_LABEL} {format_force(hold.low, unit)} – {format_force(hold.high, unit)}")
                values.update(hold_low_N=hold.low, hold_high_N=hold.high)
            arrow = AnchorArrow(aid, at, d, colour) if a.force_N > SLACK_N else None
            lab = OverlayLabel(kind="anchor", key=aid, lines=tuple(lines), values=values, colour=colour,
                               priority=90.0 + min(a.utilization or 0.0, 3.0), base=at, prefer=d)
            return (aid,), mkey, lab, arrow

        part = parts["n"]
        part.update(names_n, tuple(anchors.values()), also(_changed_keys(anchor_holds, old_anchor_holds)), anchor)
        labels += filter(None, part.outs)
        arrows += filter(None, part.extras)

        loads = result.loads
        names_l = tuple(loads)

        def load(i, f, old):
            lid = names_l[i]
            p = points.get(lid)
            if lid not in pos or p is None:
                return (lid,), None, None, None
            need = needs.get(lid)  # the pull needed: solved once the drawing is still
            mkey = ("l", lid, f.force_N, f.direction_deg, p.name, p.required_N, pos[lid], rig.view, need, unit)
            hit = old.get(mkey)
            if hit is not None:
                return (lid,), mkey, hit[0], None
            rad = math.radians(f.direction_deg)
            d = (math.cos(rad), -math.sin(rad))
            lines = [f"to {drawn(p.name)} {format_force(f.force_N, unit)}", "toward " + direction_text(f.direction_deg, rig.view, f.force_N)]
            values = {"force_N": f.force_N, "direction_deg": f.direction_deg}
            colour = QColor(theme.UTIL_RAMP[0][1])
            if p.required_N is not None:
                enough = f.force_N >= p.required_N
                lines.append(f"needs {format_force(p.required_N, unit)}" + ("" if enough else " — short"))
                if need is not None and not enough:
                    lines.append(need_phrase(rig, need))
                values["required_N"] = float(p.required_N)
                colour = QColor(theme.UTIL_RAMP[0][1] if enough else theme.UTIL_RAMP[-1][1])
            lab = OverlayLabel(kind="load", key=lid, lines=tuple(lines), values=values, colour=colour,
                               priority=95.0, base=pos[lid], prefer=(-d[0], -d[1]))
            return (lid,), mkey, lab, None

        needs = result.needs
        part = parts["l"]
        # the needs arrive with the analysis at a pause, on load records a drag step may share: remake when they do
        part.update(names_l, tuple(loads.values()), dirty if not needs else None, load)
        labels += filter(None, part.outs)

        haul = result.haul
        names_h = tuple(haul)

        def hauled(i, force, old):
            hid = names_h[i]
            p = points.get(hid)
            if hid not in pos or p is None:
                return (hid,), None, None, None
            hold = haul_holds.get(hid)
            mkey = ("h", hid, force, p.name, p.team, hold, pos[hid])
            hit = old.get(mkey)
            if hit is not None:
                return (hid,), mkey, hit[0], None
            lines = [f"haul {format_force(force, unit)}"]
            values = {"force_N": float(force)}
            if p.team:
                each = force / p.team
                lines.append(f"{p.team} × {format_force(each, unit)} each")
                values.update(team=float(p.team), per_hauler_N=each)
            if hold is not None:
                lines.append(f"{HOLD_LABEL} {format_force(hold.low, unit)} – {format_force(hold.high, unit)}")
                values.update(hold_low_N=hold.low, hold_high_N=hold.high)
            lab = OverlayLabel(kind="haul", key=hid, lines=tuple(lines), values=values,
                               colour=QColor(theme.POINT_FILL["haul"]), priority=94.0, base=pos[hid])
            return (hid,), mkey, lab, None

        part = parts["h"]
        part.update(names_h, tuple(haul.values()), also(_changed_keys(haul_holds, old_haul_holds)), hauled)
        labels += filter(None, part.outs)
    return labels, arrows


# --- the greedy placer ----------------------------------------------------------------------------
CELL_MEMO_SIZE = 4096  # rects whose grid cells a _Grid remembers before it forgets them all


class _Grid:
    """Uniform-grid spatial hash of pixel rects and rope sample points.

    Each cell holds its rects (and points) as a dict of how many times each is in it: taking one out is a
    dict look-up, not a search of the cell's list (a drag step takes out and puts back every label it keeps
    and the samples of every moved piece), and what the placer asks -- any rect hit, any point inside --
    does not depend on the order or the counts.
    """

    def __init__(self, cell: float = GRID_CELL_PX) -> None:
        self.cell = cell
        self.rects: dict[tuple[int, int], dict[tuple[float, float, float, float], int]] = {}
        self.points: dict[tuple[int, int], dict[tuple[float, float, object], int]] = {}
        self._cell_memo: dict[tuple, list[tuple[int, int]]] = {}

    def _cells(self, x: float, y: float, w: float, h: float) -> list[tuple[int, int]]:
        c = self.cell
        i0, i1 = math.floor(x / c), math.floor((x + w) / c)
        j0, j1 = math.floor(y / c), math.floor((y + h) / c)
        if i0 == i1 and j0 == j1:
            return [(i0, j0)]
        return [(i, j) for i in range(i0, i1 + 1) for j in range(j0, j1 + 1)]

    def cells_of(self, r) -> list[tuple[int, int]]:
        """:meth:`_cells` of the rect ``r`` (x, y, w, h px), remembered by its numbers: a label that stays put
        is looked up, added and taken out again at the same rect on every drag step."""
        cells = self._cell_memo.get(r)
        if cells is None:
            if len(self._cell_memo) > CELL_MEMO_SIZE:
                self._cell_memo.clear()
            cells = self._cell_memo[r] = self._cells(*r)
        return cells

    def add_rect(self, r) -> None:
        rects = self.rects
        for k in self.cells_of(r):
            cell = rects.get(k)
            if cell is None:
                rects[k] = {r: 1}
            else:
                cell[r] = cell.get(r, 0) + 1

    def add_point(self, x: float, y: float, owner: object) -> None:
        c = self.cell
        k = (math.floor(x / c), math.floor(y / c))
        cell = self.points.get(k)
        e = (x, y, owner)
        if cell is None:
            self.points[k] = {e: 1}
        else:
            cell[e] = cell.get(e, 0) + 1

    @staticmethod
    def _take(cell: dict, e) -> None:
        n = cell[e]  # KeyError: it was never put in (as list.remove's ValueError did)
        if n == 1:
            del cell[e]
        else:
            cell[e] = n - 1

    def remove_rect(self, r) -> None:
        rects = self.rects
        for k in self.cells_of(r):
            self._take(rects[k], r)

    def remove_point(self, x: float, y: float, owner: object) -> None:
        c = self.cell
        self._take(self.points[(math.floor(x / c), math.floor(y / c))], (x, y, owner))

    def hits_rect(self, r) -> bool:
        # the cells worked out inline (the same ones :meth:`_cells` gives): the placer tries thousands of
        # candidate rects per zoom step, most of them once, so remembering them would cost more than it saves
        x, y, w, h = r
        x1, y1 = x + w, y + h
        rects = self.rects
        c = self.cell
        j0, j1 = math.floor(y / c), math.floor(y1 / c)
        for i in range(math.floor(x / c), math.floor(x1 / c) + 1):
            for j in range(j0, j1 + 1):
                cell = rects.get((i, j))
                if cell is None:
                    continue
                for (ox, oy, ow, oh) in cell:
                    if x < ox + ow and ox < x1 and y < oy + oh and oy < y1:
                        return True
        return False

    def hits_of(self, r) -> dict:
        """The rects :meth:`hits_rect` finds for ``r``, each with how many times its cell holds it."""
        x, y, w, h = r
        x1, y1 = x + w, y + h
        rects = self.rects
        c = self.cell
        out = {}
        j0, j1 = math.floor(y / c), math.floor(y1 / c)
        for i in range(math.floor(x / c), math.floor(x1 / c) + 1):
            for j in range(j0, j1 + 1):
                cell = rects.get((i, j))
                if cell is None:
                    continue
                for o, count in cell.items():
                    ox, oy, ow, oh = o
                    if x < ox + ow and ox < x1 and y < oy + oh and oy < y1:
                        out[o] = count
        return out

    def crossings(self, r, own: object) -> int:
        x, y, w, h = r
        x1, y1 = x + w, y + h
        n = 0
        points = self.points
        for k in self._cells(x, y, w, h):
            cell = points.get(k)
            if cell is None:
                continue
            for (px, py, owner), m in cell.items():
                if owner != own and x <= px <= x1 and y <= py <= y1:
                    n += m
        return n


def _plain_raster_transform(painter: QPainter):
    """The painter's world transform when it paints raster pixels 1:1 with a plain zoom and pan (no
    rotation, view transform, device pixel ratio or opacity), else None: what the retained layers need."""
    engine = painter.paintEngine()
    t = painter.worldTransform()
    if (engine is None or engine.type() != QPaintEngine.Raster or painter.viewTransformEnabled()
            or painter.device().devicePixelRatioF() != 1.0 or t.m12() != 0.0 or t.m21() != 0.0
            or not t.isAffine() or painter.opacity() != 1.0):
        return None
    return t


def _half_extent(nx: float, ny: float, w: float, h: float) -> float:
    """Distance from a w x h rect's centre to its edge along the unit direction (nx, ny)."""
    return abs(nx) * w / 2.0 + abs(ny) * h / 2.0


def _rotate(v: tuple[float, float], deg: float) -> tuple[float, float]:
    c, s = math.cos(math.radians(deg)), math.sin(math.radians(deg))
    return (v[0] * c - v[1] * s, v[0] * s + v[1] * c)


#: Point-label directions tried, best first, as (degrees from the preferred one, cos, sin).
_ROTATIONS = tuple((deg, math.cos(math.radians(deg)), math.sin(math.radians(deg)))
                   for deg in (0.0, 40.0, -40.0, 90.0, -90.0, 140.0, -140.0, 180.0))


def _candidates(lab: OverlayLabel, to_px: Callable, w: float, h: float):
    """Candidate (anchor scene point, centre px, anchor px, leader) for one label, best first."""
    gap = theme.OVERLAY_LABEL_GAP_PX
    if lab.end is not None:
        a, b = to_px(lab.base), to_px(lab.end)
        u = _unit(b[0] - a[0], b[1] - a[1])
        n = (-u[1], u[0])
        if n[1] > 0 or (n[1] == 0 and n[0] < 0):  # first try above / right of the piece
            n = (-n[0], -n[1])
        d = gap + _half_extent(n[0], n[1], w, h)
        for extra, leader in ((0.0, False),) + tuple((s, True) for s in LEADER_STEPS_PX):
            for t in (0.5, 0.36, 0.64, 0.22, 0.78):
                base_s = (lab.base[0] + (lab.end[0] - lab.base[0]) * t, lab.base[1] + (lab.end[1] - lab.base[1]) * t)
                bp = (a[0] + (b[0] - a[0]) * t, a[1] + (b[1] - a[1]) * t)
                for side in (1.0, -1.0):
                    c = (bp[0] + n[0] * side * (d + extra), bp[1] + n[1] * side * (d + extra))
                    yield base_s, c, bp, leader
    else:
        bp = to_px(lab.base)
        r = MARKER_CLEAR_PX
        px, py = lab.prefer
        dirs = []  # the eight directions and their clearances, the same at every leader step
        for rot, c, s in _ROTATIONS:
            v = (px * c - py * s, px * s + py * c)
            d0 = r + gap + _half_extent(v[0], v[1], w, h)
            dirs.append((v, d0, theme.ANCHOR_ARROW_PX if lab.kind == "anchor" and rot == 0.0 else 0.0))
        for extra, leader in ((0.0, False),) + tuple((s, True) for s in LEADER_STEPS_PX):
            for v, d0, arrow in dirs:
                d = d0 + extra + arrow
                yield lab.base, (bp[0] + v[0] * d, bp[1] + v[1] * d), bp, leader


def _marker_rect(x: float, y: float) -> tuple[float, float, float, float]:
    return (x - MARKER_CLEAR_PX, y - MARKER_CLEAR_PX, 2 * MARKER_CLEAR_PX, 2 * MARKER_CLEAR_PX)


def _piece_samples(pa: tuple[float, float], pb: tuple[float, float]):
    """Pixel points every ``ROPE_SAMPLE_PX`` along a piece (both ends included)."""
    length = math.hypot(pb[0] - pa[0], pb[1] - pa[1])
    n = int(min(MAX_SAMPLES_PER_PIECE, max(1, length // ROPE_SAMPLE_PX)))
    return [(pa[0] + (pb[0] - pa[0]) * (k / n), pa[1] + (pb[1] - pa[1]) * (k / n)) for k in range(n + 1)]


class ObstacleCache:
    """The placer's obstacles (point names, markers, rope pieces) in pixels, kept between placements at one transform.

    Between two drag steps only the moved part of the rig changes, so the spatial hash is updated by
    difference (obstacles gone are taken out, new ones put in) instead of being built again.  The
    grid holds exactly what :func:`place_labels` would build from scratch, each distinct obstacle once.
    A list as long as the last one is compared entry by entry by identity (the overlay hands on the
    very tuples of what a drag step did not move), so a step costs in proportion to what it moved.
    """

    def __init__(self) -> None:
        self.frame: tuple | None = None
        self.grid = _Grid()
        self._samples: dict = {}
        self._kinds = [self._Kind(self._add_box, self._remove_box), self._Kind(self._add_marker, self._remove_marker),
                       self._Kind(self._add_piece, self._remove_piece)]
        self._to_px: Callable | None = None
        self.kept = _KeptLabels()  # the labels the last placement left in the grid
        self.added: list = []  # rects of the boxes and markers put in by the last update

    class _Kind:
        """One kind of obstacle: the last list handed in and how many times each distinct entry is in it."""

        def __init__(self, add: Callable, remove: Callable) -> None:
            self.add, self.remove = add, remove
            self.last: list | None = None
            self.counts: dict = {}

        def update(self, new: list) -> None:
            last, counts = self.last, self.counts
            self.last = new
            if new is last:
                return
            if last is not None and len(last) == len(new):
                changed = [(last[i], new[i]) for i in compress(range(len(new)), map(is_not, last, new))]
                for o, _n in changed:
                    c = counts[o] - 1
                    if c:
                        counts[o] = c
                    else:
                        del counts[o]
                        self.remove(o)
                for _o, n in changed:
                    c = counts.get(n, 0)
                    counts[n] = c + 1
                    if not c:
                        self.add(n)
                return
            fresh: dict = {}
            for e in new:
                fresh[e] = fresh.get(e, 0) + 1
            for e in counts.keys() - fresh.keys():
                self.remove(e)
            for e in fresh.keys() - counts.keys():
                self.add(e)
            self.counts = fresh

    def update(self, frame: tuple, to_px: Callable, markers, pieces, boxes) -> _Grid:
        """The grid holding ``markers``, ``pieces`` and ``boxes`` at ``frame``; a list object handed in
        again (the caller keeps its lists while nothing in them changes) is taken as unchanged."""
        if frame != self.frame:
            self.frame, self.grid, self._samples = frame, _Grid(), {}
            for kind in self._kinds:
                kind.last, kind.counts = None, {}
            self.kept.reset()
        self._to_px = to_px
        self.added = []
        for kind, new in zip(self._kinds, (boxes, markers, pieces)):
            kind.update(new if isinstance(new, list) else list(new))
        return self.grid

    def _box_rect(self, box) -> tuple:
        xy, (bx, by, bw, bh) = box
        x, y = self._to_px(xy)
        return (x + bx, y + by, bw, bh)

    def _add_box(self, box) -> None:
        r = self._box_rect(box)
        self.grid.add_rect(r)
        self.added.append(r)

    def _remove_box(self, box) -> None:
        self.grid.remove_rect(self._box_rect(box))

    def _add_marker(self, m) -> None:
        r = _marker_rect(*self._to_px(m))
        self.grid.add_rect(r)
        self.added.append(r)

    def _remove_marker(self, m) -> None:
        self.grid.remove_rect(_marker_rect(*self._to_px(m)))

    def _add_piece(self, piece) -> None:
        owner, a, b = piece
        pts = self._samples[piece] = _piece_samples(self._to_px(a), self._to_px(b))
        for x, y in pts:
            self.grid.add_point(x, y, owner)

    def _remove_piece(self, piece) -> None:
        for x, y in self._samples.pop(piece):
            self.grid.remove_point(x, y, piece[0])


def place_labels(labels: list[OverlayLabel], to_px: Callable[[tuple[float, float]], tuple[float, float]],
                 size_of: Callable[[OverlayLabel], tuple[float, float]],
                 markers: Iterable[tuple[float, float]] = (),
                 pieces: Iterable[tuple[object, tuple[float, float], tuple[float, float]]] = (),
                 boxes: Iterable[tuple[tuple[float, float], tuple[float, float, float, float]]] = (),
                 previous: Mapping[tuple, tuple] | None = None, obstacles: ObstacleCache | None = None,
                 frame: tuple | None = None, keep_hidden: bool = False) -> int:
    """Greedy placement in screen pixels; returns how many labels were skipped.

    Most important first (``priority``).  Each label takes its first candidate that
    overlaps no placed label and no point marker and crosses no other rope; failing
    that, the first that only crosses ropes; failing that, one farther out with a
    leader line; else it is skipped.  ``markers`` are scene points, ``pieces``
    (owner key, scene a, scene b) the solved rope pieces, ``boxes`` (scene point,
    pixel rect relative to it) other text already on the canvas (point names).
    ``previous`` (from :func:`placement_memo` at the same zoom) keeps a label where it
    was when its text and its piece or point moved less than ``KEEP_PX``, so labels do
    not jump about during a drag and only the moved ones are placed again.
    ``obstacles`` (kept by the caller) with ``frame`` (what fixes ``to_px``: zoom and pan) holds the
    obstacles between calls and updates them by difference; same placement, less work per drag step.
    ``keep_hidden`` (during a drag) skips again, without searching, a label ``previous`` skipped: the
    moved part of a crowded rig would otherwise search every spot for its hidden labels on every
    step; they get their full search when the drag pauses (``previous`` then leaves them out).
    """
    same_frame = obstacles is not None and frame is not None and obstacles.frame == frame
    if obstacles is not None and frame is not None:
        kept = obstacles.kept
        grid = obstacles.update(frame, to_px, markers, pieces, boxes)
        try:
            if same_frame and kept.follows(labels, previous):
                return kept.place(labels, to_px, size_of, previous, grid, obstacles.added, keep_hidden)
            kept.clear(grid)
            placed: list = []
            skipped = _place(labels, to_px, size_of, previous, grid, placed, same_frame, keep_hidden)
            kept.took(labels, placed, previous)
            return skipped
        except BaseException:
            obstacles.frame = None  # the grid's labels are not known: build it again next time
            raise
    grid = _Grid()
    for xy, (bx, by, bw, bh) in boxes:
        x, y = to_px(xy)
        grid.add_rect((x + bx, y + by, bw, bh))
    for m in markers:
        grid.add_rect(_marker_rect(*to_px(m)))
    for owner, a, b in pieces:
        for x, y in _piece_samples(to_px(a), to_px(b)):
            grid.add_point(x, y, owner)
    return _place(labels, to_px, size_of, previous, grid, [], same_frame, keep_hidden)


def _place(labels, to_px, size_of, previous, grid: _Grid, placed: list, same_frame: bool,
           keep_hidden: bool = False) -> int:
    """:func:`place_labels` once the obstacles are in ``grid``: each label placed is added to it and to ``placed``
    as (label, rect, whether it was searched for)."""
    hits = grid.hits_rect
    skipped = 0
    ordered = sorted(labels, key=_PRIORITY, reverse=True)  # stable: equal priorities keep their order
    todo = []
    for lab in ordered:
        lab.placed = False
        memo = previous.get((lab.kind, lab.key)) if previous else None
        if keep_hidden and memo is not None and memo[3] is None:
            skipped += 1  # hidden at the last drag step: stays hidden until the drag pauses
            continue
        # the very label object of the last call at the same transform sits where it sat (build_labels
        # hands out the same object only for the same text and position)
        if memo is not None and ((same_frame and len(memo) > 6 and memo[6] is lab) or (
                memo[0] == lab.lines and _near(memo[1], to_px(lab.base)) and (
                lab.end is None or _near(memo[2], to_px(lab.end))))):
            at, rect, leader = memo[3], memo[4], memo[5]
            if at is None:  # it was skipped last time and nothing changed: skip again without searching
                skipped += 1
                continue
            ax, ay = to_px(at)
            r = (ax + rect[0], ay + rect[1], rect[2], rect[3])
            if not hits(r):
                grid.add_rect(r)
                placed.append((lab, r, False))
                lab.placed, lab.at, lab.rect, lab.leader = True, at, rect, leader
                continue
        todo.append(lab)
    for lab in todo:
        if _search(lab, to_px, size_of, grid, placed) is None:
            skipped += 1
    return skipped


def _search(lab: OverlayLabel, to_px, size_of, grid: _Grid, placed: list):
    """Place ``lab`` at its first candidate that hits nothing in ``grid`` and crosses no other rope, else the first
    that only crosses ropes, else one with a leader; add it to ``grid`` and ``placed``.  Returns its rect or None."""
    hits = grid.hits_rect
    w, h = size_of(lab)
    fallback = None
    own = lab.key if lab.kind == "tension" else None
    for base_s, c, bp, leader in _candidates(lab, to_px, w, h):
        r = (c[0] - w / 2.0, c[1] - h / 2.0, w, h)
        if hits(r):
            continue
        crossing = grid.crossings(r, own) > 0
        if not crossing or leader:
            choice = (base_s, r, bp, leader)
            break
        if fallback is None:
            fallback = (base_s, r, bp, leader)
    else:
        choice = fallback
    if choice is None:
        return None
    base_s, r, bp, leader = choice
    grid.add_rect(r)
    placed.append((lab, r, True))
    lab.placed = True
    lab.at = base_s
    lab.rect = (r[0] - bp[0], r[1] - bp[1], r[2], r[3])
    lab.leader = leader
    return r


class _KeptLabels:
    """The labels the last placement left in an :class:`ObstacleCache`'s grid, so that the next placement at the
    same zoom and pan looks again only at the labels that changed.

    Why that gives the placement :func:`place_labels` makes from scratch with the last call's memo: the
    labels a placement leaves placed overlap neither each other nor an obstacle (each was tested against
    all of them).  A label object of the last call (same slot, same entry in the memo) is placed where
    it was, unless -- when its turn comes, most important first -- its rect hits an obstacle that is new
    in this call or a label placed before it in this call that is not one of those still rects.  So only
    the labels that are new objects, and the ones such a label or new obstacle displaces, are tested;
    the rect of a label that was searched for is not its anchor plus offset to the last bit, so such a
    label is tested once more at the next call.  Skipped labels of the last call stay skipped.
    """

    def __init__(self) -> None:
        self.labels: list | None = None  # the labels of the last call
        self.memo: dict | None = None  # the placement memo made for them (remember)
        self.previous: dict | None = None  # the memo the last call was handed
        self.rects: dict[int, tuple] = {}  # id(label) -> its rect in the grid, for every placed label
        self.owner: dict[tuple, OverlayLabel] = {}  # rect in the grid -> the placed label
        self.loose: dict[int, OverlayLabel] = {}  # labels placed by a search at the last call
        self.slot: dict[int, int] = {}  # id(label) -> its index in labels
        self.touched: tuple | None = None  # (labels placed again, labels gone) by the last incremental call

    def follows(self, labels: list, previous) -> bool:
        """Whether ``labels`` and ``previous`` continue the last call: its memo, as many labels."""
        return self.memo is not None and previous is self.memo and len(labels) == len(self.labels)

    def clear(self, grid: _Grid) -> None:
        """Take the last call's labels out of ``grid`` (of the same frame) and forget them."""
        for r in self.rects.values():
            grid.remove_rect(r)
        self.reset()

    def reset(self) -> None:
        self.labels = self.memo = self.previous = self.touched = None
        self.rects, self.owner, self.loose, self.slot = {}, {}, {}, {}

    def took(self, labels: list, placed: list, previous) -> None:
        """Remember a placement from scratch: ``placed`` (label, rect, searched) is in the grid."""
        self.labels, self.previous, self.memo, self.touched = labels, previous, None, None
        self.rects = {id(lab): r for lab, r, _s in placed}
        self.owner = {r: lab for lab, r, _s in placed}
        self.loose = {id(lab): lab for lab, _r, searched in placed if searched}
        self.slot = dict(zip(map(id, labels), range(len(labels))))

    def remember(self, labels: list, memo: dict) -> None:
        """``memo`` is :func:`placement_memo` of the last call's ``labels``: the next call may continue from it
        (only when labels are distinct objects with distinct keys, as build_labels makes them)."""
        if labels is self.labels and len(memo) == len(labels) == len(self.slot):
            self.memo = memo
        else:
            self.memo = None

    def memo_for(self, labels: list, to_px, previous) -> dict | None:
        """:func:`placement_memo` of the last call's ``labels`` with ``previous``, made from the labels it placed
        again (None when the last call was not incremental with these)."""
        if self.touched is None or labels is not self.labels or previous is not self.previous:
            return None
        again, gone = self.touched
        out = dict(previous)
        for o in gone:
            key = (o.kind, o.key)
            m = out.get(key)
            if m is not None and m[6] is o:
                del out[key]
        out.update(placement_memo(again, to_px, previous))
        return out if len(out) == len(labels) else None  # keys not distinct: the fresh memo decides which label wins

    def place(self, labels: list, to_px, size_of, previous, grid: _Grid, added: list, keep_hidden: bool) -> int:
        """:func:`_place` for ``labels`` continuing the last call (see the class docstring); returns how many are skipped."""
        last, n = self.labels, len(labels)
        rects, owner, slot = self.rects, self.owner, self.slot
        changed = list(compress(range(n), map(is_not, labels, last)))

        def drop(lab) -> None:
            r = rects.pop(id(lab), None)
            if r is not None:
                del owner[r]
                grid.remove_rect(r)

        gone = [last[i] for i in changed]
        for o in gone:
            drop(o)
            self.loose.pop(id(o), None)
            slot.pop(id(o), None)
        active = [labels[i] for i in changed]
        for i in changed:
            slot[id(labels[i])] = i
        for lab in self.loose.values():  # searched for last time: tested again
            drop(lab)
            active.append(lab)
        self.loose = loose = {}
        displaced = {}
        for r in added:  # new obstacles: a still label they hit goes to the search
            for hit in grid.hits_of(r):
                lab = owner.get(hit)
                if lab is not None:
                    displaced[id(lab)] = lab
        for lab in displaced.values():
            drop(lab)

        def order(lab):
            return (-lab.priority, slot[id(lab)])

        active.sort(key=order)
        todo = list(displaced.values())
        for lab in active:
            lab.placed = False
            memo = previous.get((lab.kind, lab.key))
            if keep_hidden and memo is not None and memo[3] is None:
                continue
            if memo is not None and ((len(memo) > 6 and memo[6] is lab) or (
                    memo[0] == lab.lines and _near(memo[1], to_px(lab.base)) and (
                    lab.end is None or _near(memo[2], to_px(lab.end))))):
                at, rect, leader = memo[3], memo[4], memo[5]
                if at is None:
                    continue
                ax, ay = to_px(at)
                r = (ax + rect[0], ay + rect[1], rect[2], rect[3])
                mine, later = order(lab), []
                for hit, count in grid.hits_of(r).items():
                    other = owner.get(hit)
                    if other is None or count > 1 or order(other) < mine:
                        break  # an obstacle, or a label placed before this one
                    later.append(other)  # a still label after this one: it will not fit where it was
                else:
                    grid.add_rect(r)
                    rects[id(lab)], owner[r] = r, lab
                    lab.placed, lab.at, lab.rect, lab.leader = True, at, rect, leader
                    for other in later:
                        drop(other)
                        todo.append(other)
                    continue
            todo.append(lab)
        todo.sort(key=order)
        found: list = []
        for lab in todo:
            lab.placed = False
            r = _search(lab, to_px, size_of, grid, found)
            if r is not None:
                rects[id(lab)], owner[r] = r, lab
                loose[id(lab)] = lab
        self.labels, self.previous, self.memo = labels, previous, None
        seen = set(map(id, active))
        self.touched = (active + [lab for lab in todo if id(lab) not in seen], gone)
        return n - len(rects)


KEEP_PX = 0.75
_PRIORITY = operator.attrgetter("priority")
LEADER_DOT_PX = 1.8  # radius of the dot a leader starts from


#: The fields of a band piece's (entry, x0, y0, x1, y1) (``ForceItem._retained_bands``).
_PIECE_FIELDS = tuple(operator.itemgetter(i) for i in range(5))


def _pixmap_entry(kind: str, pix: QPixmap, x: float, y: float) -> tuple:
    """A retained-layer entry (``sketchpad.retained``) blitting ``pix`` with its top-left at (x, y) device px."""
    return ((kind, pix.cacheKey(), x, y), QRect(math.floor(x) - 1, math.floor(y) - 1, pix.width() + 3, pix.height() + 3),
            (pix, QPointF(x, y)))


def _arrow_bounds(direction: tuple[float, float]) -> QRectF:
    """Pixels (relative to the anchor) an anchor arrow along the unit ``direction`` can touch: shaft and head."""
    dx, dy = direction
    a = (dx * MARKER_CLEAR_PX, dy * MARKER_CLEAR_PX)
    b = (dx * theme.ANCHOR_ARROW_PX, dy * theme.ANCHOR_ARROW_PX)
    m = max(theme.ANCHOR_ARROW_HEAD_PX * 0.5, theme.ANCHOR_ARROW_WIDTH_PX) + 2.0
    return QRectF(min(a[0], b[0]), min(a[1], b[1]), abs(b[0] - a[0]), abs(b[1] - a[1])).adjusted(-m, -m, m, m)


def _leader_end(x: float, y: float, w: float, h: float) -> tuple[float, float]:
    """The point of a label box (x, y, w, h px, relative to its anchor) nearest the anchor: where the leader ends."""
    return (min(max(0.0, x), x + w), min(max(0.0, y), y + h))


def _near(a, b) -> bool:
    return a is not None and abs(a[0] - b[0]) <= KEEP_PX and abs(a[1] - b[1]) <= KEEP_PX


def placement_memo(labels: Iterable[OverlayLabel], to_px, previous: Mapping[tuple, tuple] | None = None) -> dict[tuple, tuple]:
    """Where each label went (or that it was skipped), for :func:`place_labels`'s ``previous`` at the same zoom.

    ``previous`` (this function's answer for the same ``to_px``) lends its entry to the very label object
    it was made for when the label sits where the entry says: the same numbers, no ``to_px`` again.
    """
    out = {}
    for l in labels:
        key = (l.kind, l.key)
        at = l.at if l.placed else None
        m = previous.get(key) if previous is not None else None
        if m is not None and m[6] is l and m[3] == at and m[4] == l.rect and m[5] == l.leader:
            out[key] = m
        else:
            out[key] = (l.lines, to_px(l.base), None if l.end is None else to_px(l.end), at, l.rect, l.leader, l)
    return out


# --- shapely -> QPainterPath --------------------------------------------------------------------------
def geometry_path(geom) -> QPainterPath:
    """A shapely (Multi)Polygon in site metres as a scene QPainterPath (holes by odd-even fill)."""
    path = QPainterPath()
    path.setFillRule(Qt.OddEvenFill)
    polys = getattr(geom, "geoms", None)
    for poly in (polys if polys is not None else [geom]):
        if poly.is_empty or not hasattr(poly, "exterior"):
            continue
        for ring in (poly.exterior, *poly.interiors):
            pts = [QPointF(x, -y) for x, y in ring.coords]
            path.addPolygon(QPolygonF(pts))
            path.closeSubpath()
    return path


# --- the items --------------------------------------------------------------------------------------
class _LayerItem(Versioned, QGraphicsItem):
    """Base of the overlay items: never selectable, never hit by clicks, scene coordinates in metres."""

    def __init__(self) -> None:
        super().__init__()
        self.setAcceptedMouseButtons(Qt.NoButton)
        self.setFlag(QGraphicsItem.ItemIsSelectable, False)
        self._rect = QRectF()
        self.grey = False

    def boundingRect(self) -> QRectF:  # noqa: N802
        return self._rect

    def shape(self) -> QPainterPath:
        return QPainterPath()  # clicks go to the sketch underneath

    def set_rect(self, rect: QRectF) -> None:
        if rect != self._rect:
            self.prepareGeometryChange()
            self._rect = rect


class ZoneItem(_LayerItem):
    """Danger zones: one hatched translucent path per kind (the union of its zones)."""

    def __init__(self) -> None:
        super().__init__()
        self.paths: dict[str, QPainterPath] = {}
        self._brushes = {k: theme.zone_brushes(k) for k in theme.ZONE_COLOURS}
        grey = QColor(theme.OVERLAY_GREY)
        grey.setAlpha(theme.ZONE_HATCH_ALPHA)
        self._grey_brush = QBrush(grey, Qt.BDiagPattern)
        self._pens = {k: theme.cosmetic_pen(c, theme.ZONE_EDGE_PX, Qt.DashLine) for k, c in theme.ZONE_COLOURS.items()}
        self._grey_pen = theme.cosmetic_pen(theme.OVERLAY_GREY, theme.ZONE_EDGE_PX, Qt.DashLine)

    def set_zones(self, zones) -> None:
        from shapely.ops import unary_union

        by_kind: dict[str, list] = {}
        for z in zones:
            by_kind.setdefault(z.kind, []).append(z.geometry)
        self.paths = {k: geometry_path(unary_union(g)) for k, g in by_kind.items()}
        rect = QRectF()
        for p in self.paths.values():
            rect = rect.united(p.boundingRect())
        self.set_rect(rect.adjusted(-1, -1, 1, 1) if not rect.isNull() else QRectF())
        self.update()

    def paint(self, painter: QPainter, option, widget=None) -> None:
        for kind in theme.ZONE_COLOURS:  # recoil under bight / failure areas
            path = self.paths.get(kind)
            if path is None:
                continue
            fill, hatch = self._brushes.get(kind, self._brushes["bight"])
            if self.grey:
                painter.setPen(self._grey_pen)
                painter.setBrush(self._grey_brush)
                painter.drawPath(path)
                continue
            painter.setPen(Qt.NoPen)
            painter.setBrush(fill)
            painter.drawPath(path)
            painter.setPen(self._pens.get(kind, self._grey_pen))
            painter.setBrush(hatch)
            # hatch patterns follow the device, so they stay the same density at every zoom
            painter.drawPath(path)


class _BandState:
    """What :meth:`ForceItem.set_bands` keeps between calls: each piece (key, scene ends) with its colour, where its
    ends sit in its colour's list, and the ring of each solved point the solver moved off its drawn place."""

    def __init__(self) -> None:
        self.pos_names = self.pos_values = self.drawn_names = self.drawn_values = None
        self.pieces = _Entries()  # per segment: its piece and colour (rgba, None for slack)
        self.pieces_out: list | None = None  # the pieces as set_bands last returned them
        self.where: list[int] = []  # per segment: index of its first end in its colour's list
        self.by_colour: dict[int, list] = {}
        self.rings = _Entries()  # per solved point: its solved place when off the drawn one, else None


class ForceItem(_LayerItem):
    """Utilization bands, anchor arrows, solved-point rings and every label, painted by one item."""

    def __init__(self) -> None:
        super().__init__()
        self.bands: list[tuple[QPen, QPainterPath]] = []
        self.band_ends: list[list[tuple[float, float]]] = []  # both ends of every piece of each band (scene)
        self._band_dots: dict[tuple, QPixmap] = {}
        self._draw: list[tuple] = []
        self._draw_for: list | None = None
        self._draw_grey = False
        # per placed label object: (label, at, rect, leader, grey, m_per_px, its _draw entry, its scene bounds)
        self._label_draw: dict[int, tuple] = {}
        self._grey_band_pen = theme.cosmetic_pen(theme.OVERLAY_GREY, theme.OVERLAY_BAND_PX)
        self.labels: list[OverlayLabel] = []
        self.arrows: list[AnchorArrow] = []
        self.moved_points: list[tuple[float, float]] = []
        self.fail_point: tuple[float, float] | None = None
        self.font = theme.font(theme.OVERLAY_POINT_SIZE)
        self.fm = QFontMetricsF(self.font)
        self._pens: dict[int, QPen] = {}
        self._back = QBrush(theme.OVERLAY_LABEL_BACK)
        self._text_pen = QPen(theme.OVERLAY_LABEL_TEXT)
        self._leader_pen = theme.pixel_pen(theme.OVERLAY_LEADER, 1.0)
        self._ring_pen = theme.pixel_pen(theme.OVERLAY_LEADER, 1.3)
        self._fail_pen = theme.pixel_pen(theme.BANNER_BACK, 3.0)
        self._size_cache: dict[str, tuple[float, float]] = {}
        self._pixmap_cache: dict[tuple, QPixmap] = {}
        self._box_cache: dict[tuple, QImage] = {}  # label boxes by size and colour (label_pixmap)
        self._retained_marks = RetainedLayer()  # rings, arrows, leaders, labels as last painted
        self._band_layers: dict[int, RetainedLayer] = {}  # per band colour
        # retained-layer entries of the last frame, by what they show: (frame, rings, arrows, labels)
        self._entry_memo: tuple = (None, {}, {}, {})
        self._marks_last: tuple | None = None  # the last frame's inputs and entry list
        self._band_memo: dict = {}
        self._flat_pens: dict[int, QPen] = {}
        self._band_paths: dict[int, tuple] = {}  # per colour: (piece ends, (pen, path)) of the last set_bands
        self._band_state = _BandState()  # what the last set_bands made of each piece and solved point
        self._drawn: tuple = (None, {})
        self._drawn_xy = PerPoint(lambda p: _scene(p.xy))
        self._point_ids = PerPoint(operator.attrgetter("id"))
        self._prepared: tuple | None = None  # (what it was prepared for, prepare_retained's result) until painted
        self._lost_damage = QRegion()  # where band layers that went had pixels (take_damage)

    # --- building (outside paint) ---------------------------------------------------------------
    def pen_for(self, colour: QColor, width: float) -> QPen:
        key = (colour.rgba(), width)
        pen = self._pens.get(key)
        if pen is None:
            pen = self._pens[key] = theme.pixel_pen(colour, width)
        return pen

    def set_bands(self, rig: Rig, result: Result,
                  pos: Mapping[str, tuple[float, float]] | None = None) -> list[tuple[object, tuple[float, float], tuple[float, float]]]:
        """One path per utilization colour along the solved pieces; returns the pieces (key, a, b) in scene metres.

        Buckets of the same colour (the ramp stops at its last colour) share one band, drawn once.
        ``pos`` (scene positions of every point, solved ones solved) saves building them again; a
        band whose pieces are those of the last call keeps its path.
        """
        if pos is None:
            pos = scene_positions(rig, result)
        st = self._band_state
        names, values = tuple(pos), tuple(pos.values())
        moved = _moved(names, values, st.pos_names, st.pos_values)  # points whose scene tuple is another object
        st.pos_names, st.pos_values = names, values
        pos_get = pos.get
        colours = _BUCKET_RGBA
        scale = BAND_BUCKETS / BAND_MAX_UTIL

        def piece(_i, s, _old):
            read = (s.from_point, s.to_point)
            a, b = pos_get(read[0]), pos_get(read[1])
            if a is None or b is None:
                return read, None, None, None
            rgba = None if s.tension_N <= SLACK_N else \
                colours[int(round(min(max(s.utilization, 0.0), BAND_MAX_UTIL) * scale))]
            return read, None, ((s.rope, s.index), a, b), rgba

        # a piece whose record and ends are the last call's objects keeps its piece tuple and colour (the same
        # objects: the placer's obstacle cache compares them by identity)
        entries = st.pieces
        old_outs, old_extras = entries.outs, entries.extras
        todo = entries.update(None, result.segments, moved, piece)
        outs, extras = entries.outs, entries.extras
        if todo is not None and not todo and st.pieces_out is not None:
            pieces = st.pieces_out
        else:
            pieces = st.pieces_out = list(filter(None, outs))
        # the ends of each colour's pieces, in the order of the segments; a drag step that keeps every
        # piece's colour puts the moved ends in place of the old ones
        if todo is not None and all(extras[i] == old_extras[i] and (outs[i] is None) == (old_outs[i] is None)
                                    for i in todo):
            by_colour = dict(st.by_colour)
            where = st.where
            copied: set = set()
            for i in todo:
                rgba, out = extras[i], outs[i]
                if rgba is None or out is None:
                    continue
                if rgba not in copied:
                    by_colour[rgba] = list(by_colour[rgba])
                    copied.add(rgba)
                k = where[i]
                by_colour[rgba][k:k + 2] = out[1:]
        else:
            by_colour = {}
            where = st.where = [0] * len(outs)
            for i, (out, rgba) in enumerate(zip(outs, extras)):
                if out is None or rgba is None:
                    continue
                ends = by_colour.get(rgba)
                if ends is None:
                    ends = by_colour[rgba] = []
                where[i] = len(ends)
                ends.append(out[1])
                ends.append(out[2])
        st.by_colour = by_colour
        old = self._band_paths
        self._band_paths = {}
        self.bands = []
        self.band_ends = []
        for rgba in sorted(by_colour, key=_BUCKET_ORDER.__getitem__):
            ends = by_colour[rgba]
            kept = old.get(rgba)
            moved_ends = None if kept is None or len(kept[0]) != len(ends) else \
                list(compress(range(len(ends)), map(is_not, ends, kept[0])))
            if kept is not None and kept[0] == ends:
                band = kept[1]
            elif moved_ends is not None and len(ends) == kept[1][1].elementCount() and all(
                    ends[k] != ends[k ^ 1] for k in moved_ends):
                # the same number of pieces and none of zero length (a path drops a line to where it already is;
                # without one, element k is end k): the kept path with the moved ends set, as one made afresh
                path = QPainterPath(kept[1][1])
                for k in moved_ends:
                    path.setElementPositionAt(k, *ends[k])
                band = (kept[1][0], path)
            else:
                path = QPainterPath()
                for i in range(0, len(ends) - 1, 2):
                    path.moveTo(*ends[i])
                    path.lineTo(*ends[i + 1])
                colour = QColor.fromRgba(rgba)
                colour.setAlpha(theme.OVERLAY_BAND_ALPHA)
                band = (theme.cosmetic_pen(colour, _BUCKET_WIDTH[rgba], Qt.SolidLine), path)
            self._band_paths[rgba] = (ends, band)
            self.bands.append(band)
            self.band_ends.append(ends)
        drawn = self._drawn_positions(rig)
        drawn_names, drawn_values = tuple(drawn), tuple(drawn.values())
        changed = _moved(drawn_names, drawn_values, st.drawn_names, st.drawn_values)
        st.drawn_names, st.drawn_values = drawn_names, drawn_values
        solved = tuple(result.points)

        def ring(i, _xy, _old):
            pid = solved[i]
            at, was = pos[pid], drawn.get(pid)
            return (pid,), None, (at if was is not None and at != was and math.dist(at, was) > 1e-6 else None), None

        # a solved point whose solved place (the solver's tuple, which fixes its scene tuple) and drawn place
        # are the objects of the last call keeps its ring
        st.rings.update(solved, tuple(result.points.values()), changed, ring)
        self.moved_points = list(filter(None, st.rings.outs))
        return pieces

    def _drawn_positions(self, rig: Rig) -> dict[str, tuple[float, float]]:
        """Scene positions of the points as drawn (kept while ``rig.points`` is the same tuple)."""
        if self._drawn[0] is not rig.points:
            self._drawn = (rig.points, dict(zip(self._point_ids.values(rig.points),
                                                self._drawn_xy.values(rig.points))))
        return self._drawn[1]

    def label_size(self, lab: OverlayLabel) -> tuple[float, float]:
        text = lab.text
        size = self._size_cache.get(text)
        if size is None:
            pad = theme.OVERLAY_LABEL_PAD_PX
            w = max(self.fm.horizontalAdvance(line) for line in lab.lines) + 2 * pad
            h = self.fm.height() * len(lab.lines) + 2 * pad
            size = self._size_cache[text] = (math.ceil(w), math.ceil(h))
        return size

    def label_pixmap(self, lab: OverlayLabel, colour: QColor) -> QPixmap:
        """The label's box and text rendered once and blitted on every repaint (cached by text and colour)."""
        key = (lab.lines, colour.rgba(), lab.kind == "angle" and not self.grey)
        pix = self._pixmap_cache.get(key)
        if pix is not None:
            return pix
        if len(self._pixmap_cache) > PIXMAP_CACHE_MAX:
            drop_oldest(self._pixmap_cache)
        w, h = self.label_size(lab)
        # the box alone (an anti-aliased rounded rect costs ~75 us, the text ~15 us) is shared by every
        # label of its size and colour: during a drag a changed number mostly keeps the label's size
        image = self._label_box(w, h, colour).copy()
        p = QPainter(image)
        p.setRenderHint(QPainter.Antialiasing, True)
        p.setRenderHint(QPainter.TextAntialiasing, True)
        self._paint_label_text(p, lab, QRectF(0.0, 0.0, w, h))
        p.end()
        pix = self._pixmap_cache[key] = QPixmap.fromImage(image)
        return pix

    def _label_box(self, w: float, h: float, colour: QColor) -> QImage:
        """A transparent (w + 1) x (h + 1) px image holding a label's box in ``colour``, cached by size and colour."""
        key = (w, h, colour.rgba())
        image = self._box_cache.get(key)
        if image is None:
            if len(self._box_cache) > PIXMAP_CACHE_MAX:
                drop_oldest(self._box_cache)
            image = QImage(int(w) + 1, int(h) + 1, QImage.Format_ARGB32_Premultiplied)
            image.fill(Qt.transparent)
            p = QPainter(image)
            p.setRenderHint(QPainter.Antialiasing, True)
            p.setRenderHint(QPainter.TextAntialiasing, True)
            self._paint_label_box(p, QRectF(0.0, 0.0, w, h), colour)
            p.end()
            self._box_cache[key] = image
        return image

    def paint_label_vector(self, painter: QPainter, lab: OverlayLabel, box: QRectF, colour: QColor) -> None:
        """A label's rounded box (border in ``colour``) and its text lines, drawn as vectors in ``box`` (device px).

        :meth:`label_pixmap` draws the same in two steps on screen; print and SVG (``sketchpad.export``) draw it directly.
        """
        self._paint_label_box(painter, box, colour)
        self._paint_label_text(painter, lab, box)

    def _paint_label_box(self, painter: QPainter, box: QRectF, colour: QColor) -> None:
        half = theme.OVERLAY_LABEL_BORDER_PX / 2.0
        painter.setPen(self.pen_for(colour, theme.OVERLAY_LABEL_BORDER_PX))
        painter.setBrush(self._back)
        painter.drawRoundedRect(box.adjusted(half, half, -half, -half), 3.0, 3.0)

    def _paint_label_text(self, painter: QPainter, lab: OverlayLabel, box: QRectF) -> None:
        painter.setFont(self.font)
        angle = lab.kind == "angle" and not self.grey
        painter.setPen(self.pen_for(theme.ANGLE_TEXT, 1.0) if angle else self._text_pen)
        pad, lh, ascent = theme.OVERLAY_LABEL_PAD_PX, self.fm.height(), self.fm.ascent()
        for i, line in enumerate(lab.lines):
            painter.drawText(QPointF(box.left() + pad, box.top() + pad + i * lh + ascent), line)

    @staticmethod
    def label_box(lab: OverlayLabel, t: QTransform) -> tuple[QPointF, QRectF]:
        """A placed label's anchor point and box in device px, ``t`` mapping scene metres to the device."""
        p = t.map(QPointF(*lab.at))
        x, y, w, h = lab.rect
        return p, QRectF(p.x() + x, p.y() + y, w, h)

    def paint_leader(self, painter: QPainter, anchor: QPointF, box: QRectF) -> None:
        """The leader from a label's anchor point to the nearest point of its box, with a dot on the anchor (device px)."""
        painter.save()
        painter.translate(anchor)
        ex, ey = _leader_end(box.left() - anchor.x(), box.top() - anchor.y(), box.width(), box.height())
        self._draw_leader(painter, ex, ey)
        painter.restore()

    def _draw_leader_at(self, painter: QPainter, x: float, y: float, ex: float, ey: float) -> None:
        """A leader from (x, y) to (x + ex, y + ey) px."""
        painter.translate(x, y)
        self._draw_leader(painter, ex, ey)
        painter.translate(-x, -y)

    def _draw_leader(self, painter: QPainter, ex: float, ey: float) -> None:
        """A leader from the origin (the dot) to (ex, ey) px."""
        painter.setPen(self._leader_pen)
        painter.drawLine(QPointF(0.0, 0.0), QPointF(ex, ey))
        painter.setBrush(theme.OVERLAY_LEADER)
        painter.drawEllipse(QPointF(0.0, 0.0), LEADER_DOT_PX, LEADER_DOT_PX)

    def set_labels(self, labels: list[OverlayLabel], arrows: list[AnchorArrow], m_per_px: float) -> None:
        self.labels, self.arrows = labels, arrows
        self.refresh_rect(m_per_px)

    def refresh_rect(self, m_per_px: float) -> None:
        """The item's bounding rect (scene metres) around bands, arrows, placed labels and the failure ring,
        and the list of label blits :meth:`paint` draws."""
        xs0, ys0, xs1, ys1 = [], [], [], []  # the union of the parts' rects, in plain floats
        for _pen, path in self.bands:
            r = path.boundingRect()
            if not r.isNull():
                xs0.append(r.left()), ys0.append(r.top()), xs1.append(r.right()), ys1.append(r.bottom())
        reach = (theme.ANCHOR_ARROW_PX + theme.ANCHOR_ARROW_HEAD_PX) * m_per_px
        if self.arrows and reach > 0:
            xs, ys = [a.base[0] for a in self.arrows], [a.base[1] for a in self.arrows]
            xs0.append(min(xs) - reach), ys0.append(min(ys) - reach), xs1.append(max(xs) + reach), ys1.append(max(ys) + reach)
        draw, bounds = self._label_entries(m_per_px)
        if bounds:
            bx0, by0, bx1, by1 = zip(*bounds)
            xs0.append(min(bx0)), ys0.append(min(by0)), xs1.append(max(bx1)), ys1.append(max(by1))
        pad = (theme.FAIL_RING_PX + theme.BAND_MAX_PX) * m_per_px
        if self.fail_point is not None and pad > 0:
            fx, fy = self.fail_point
            xs0.append(fx - pad), ys0.append(fy - pad), xs1.append(fx + pad), ys1.append(fy + pad)
        if xs0:
            x0, y0, x1, y1 = min(xs0) - pad, min(ys0) - pad, max(xs1) + pad, max(ys1) + pad
            self.set_rect(QRectF(x0, y0, x1 - x0, y1 - y0))
        else:
            self.set_rect(QRectF())
        self._draw = draw
        self._draw_for, self._draw_grey = self.labels, self.grey
        self.update()

    def _label_entries(self, m_per_px: float) -> tuple[list[tuple], list[tuple]]:
        """What paint() blits for each placed label -- anchor (scene), box offset and size (px), leader,
        pixmap -- and the scene bounds (x0, y0, x1, y1) of each placed label box that has a size.

        A label object placed where it was at the last call, at the same zoom and greyness, keeps its
        entry and bounds (a label object's lines and colour never change, so neither does its pixmap);
        only the labels the placer moved and new label objects are worked out again."""
        grey = self.grey
        last, kept = self._label_draw, {}
        draw, bounds = [], []
        for lab in self.labels:
            if not lab.placed:
                continue
            at, rect, leader = lab.at, lab.rect, lab.leader
            c = last.get(id(lab))
            if (c is None or c[0] is not lab or c[1] != at or c[2] != rect or c[3] != leader or c[4] != grey
                    or c[5] != m_per_px):
                x, y, w, h = rect
                entry = (at[0], at[1], x, y, w, h, leader,
                         self.label_pixmap(lab, theme.OVERLAY_GREY if grey else lab.colour))
                box = None
                if w > 0 or h > 0:
                    lx, ly = at[0] + x * m_per_px, at[1] + y * m_per_px
                    box = (lx, ly, lx + w * m_per_px, ly + h * m_per_px)
                c = (lab, at, rect, leader, grey, m_per_px, entry, box)
            kept[id(lab)] = c
            draw.append(c[6])
            if c[7] is not None:
                bounds.append(c[7])
        self._label_draw = kept
        return draw, bounds

    # --- painting -----------------------------------------------------------------------------------
    def paint(self, painter: QPainter, option, widget=None) -> None:
        painter.setRenderHint(QPainter.Antialiasing, True)
        if not self.grey and self._paint_retained(painter):
            return
        if self.grey:
            painter.setOpacity(theme.OVERLAY_GREY_OPACITY)
        if self.grey or not self._paint_bands_layered(painter):
            for pen, path in self.bands:
                painter.setPen(self._grey_band_pen if self.grey else pen)
                painter.drawPath(path)
        t = painter.worldTransform()
        painter.setWorldTransform(QTransform())
        painter.setBrush(Qt.NoBrush)
        painter.setPen(self._ring_pen)
        r = theme.OVERLAY_SOLVED_POINT_PX
        dpr = pixel_dpr(painter)
        if dpr is None:  # SVG, PDF: vector rings
            for m in self.moved_points:
                painter.drawEllipse(t.map(QPointF(*m)), r, r)
        else:  # every ring looks the same: blit it
            reach = r + 2.0
            bounds = QRectF(-reach, -reach, 2 * reach, 2 * reach)
            for m in self.moved_points:
                blit_cached(painter, t.map(QPointF(*m)), dpr, ("solved-ring", r), bounds, self._draw_ring)
        for arrow in self.arrows:
            self._paint_arrow(painter, t, arrow, dpr)
        painter.setFont(self.font)
        if self._draw_for is self.labels and self._draw_grey == self.grey:  # prepared by refresh_rect
            for ax, ay, x, y, w, h, leader, pix in self._draw:
                px, py = t.map(ax, ay)
                if leader:
                    if dpr is None:
                        self.paint_leader(painter, QPointF(px, py), QRectF(px + x, py + y, w, h))
                    else:  # a leader depends only on its box offset: blit it (a translucent slanted
                        # line costs Qt's raster engine ~50 us when drawn directly, a blit ~3 us)
                        ex, ey = _leader_end(x, y, w, h)
                        blit_cached(painter, QPointF(px, py), dpr, ("leader", ex, ey),
                                    QRectF(min(ex, 0.0), min(ey, 0.0), abs(ex), abs(ey)).adjusted(-3, -3, 3, 3),
                                    lambda p, ex=ex, ey=ey: self._draw_leader(p, ex, ey))
                painter.drawPixmap(QPointF(px + x, py + y), pix)
            labels = ()
        else:
            labels = self.labels
        for lab in labels:
            if not lab.placed:
                continue
            p, box = self.label_box(lab, t)
            colour = theme.OVERLAY_GREY if self.grey else lab.colour
            if lab.leader:
                self.paint_leader(painter, p, box)
            painter.drawPixmap(box.topLeft(), self.label_pixmap(lab, colour))
        if self.fail_point is not None:
            painter.setOpacity(1.0)
            painter.setPen(self._fail_pen)
            painter.setBrush(Qt.NoBrush)
            painter.drawEllipse(t.map(QPointF(*self.fail_point)), theme.FAIL_RING_PX, theme.FAIL_RING_PX)

    def _paint_retained(self, painter: QPainter) -> bool:
        """On screen: bands, rings, arrows, leaders and labels kept in retained layers (``sketchpad.retained``)
        and redrawn only where something changed, then laid down in the order :meth:`paint` draws them.

        A drag step changes the labels and bands of the moved part of the rig only, so the frame
        costs in proportion to that.  Only for raster painting at 1:1 device pixels with a plain
        zoom (not greyed); returns False (and draws nothing) otherwise.  The layers are brought up
        to date by :meth:`prepare_retained`, which a drag frame calls before it paints (to learn
        where the frame changed); here it hands over what it prepared.
        """
        t = _plain_raster_transform(painter)
        if t is None:
            self._prepared = None
            return False
        device = painter.device()
        ready = self.prepare_retained(t, QRect(0, 0, device.width(), device.height()))
        self._prepared = None  # used once: the next frame prepares again
        if ready is None:
            return False
        bands, marks, used, origin = ready
        painter.save()
        painter.resetTransform()
        for image, at, alpha in bands:
            painter.setOpacity(alpha)
            painter.drawImage(at, image)
        painter.setOpacity(1.0)
        if not used.isEmpty():
            painter.drawImage(used.topLeft() + origin, marks, used)
        painter.restore()
        return True

    def prepare_retained(self, t: QTransform, area: QRect):
        """Bring the retained layers up to date for a frame over ``area`` (device px, from 0, 0) at the plain
        zoom and pan ``t`` (see :func:`_plain_raster_transform`): (band layers, marks image, its used part,
        the area's top-left), or None when such a frame is painted without them (greyed, labels not prepared, layers too large).

        What changed goes into the layers' damage (:meth:`take_damage`).  The result is kept for the
        paint of the same frame, which takes it (a second call with nothing changed returns it too).
        """
        key = (t.m11(), t.m22(), t.dx(), t.dy(), area.x(), area.y(), area.width(), area.height(), self._ver, self.grey,
               id(self.labels), id(self.bands), id(self.moved_points), id(self.arrows))
        prepared = self._prepared
        if prepared is not None and prepared[0] == key:
            return prepared[1]
        ready = None
        if not self.grey and self._draw_for is self.labels and self._draw_grey == self.grey:
            m11, m22, dx, dy = t.m11(), t.m22(), t.dx(), t.dy()
            bands = self._retained_bands(m11, m22, dx, dy, area)
            if bands is not None:
                marks = self._retained_marks.update((m11, m22, dx, dy), area, self._mark_entries(m11, m22, dx, dy))
                ready = (bands, marks, self._retained_marks.used(), area.topLeft())
        self._prepared = (key, ready)
        return ready

    def take_damage(self):
        """Device px where the retained layers' pixels changed since the last call (``RetainedLayer.take_damage``),
        including the places of band layers that went; then forgotten."""
        damage = self._retained_marks.take_damage().united(self._lost_damage)
        for layer in self._band_layers.values():
            damage = damage.united(layer.take_damage())
        self._lost_damage = QRegion()
        return damage

    def _mark_entries(self, m11: float, m22: float, dx: float, dy: float) -> list:
        """(key, device box, op) of the solved-point rings, anchor arrows, leaders and labels, in paint order.

        An entry depends only on the frame's transform and on what it shows, so entries are kept
        from the last frame (a drag step changes a few of them); with nothing rebuilt since the last
        frame (the same lists of rings, arrows and labels) the last frame's list itself is returned.
        """
        frame = (m11, m22, dx, dy)
        last = self._marks_last
        if (last is not None and last[0] == frame and last[1] is self.moved_points and last[2] is self.arrows
                and last[3] is self._draw):
            return last[4]
        _frame, rings, arrows, labels = self._entry_memo if self._entry_memo[0] == frame else (None, {}, {}, {})
        new_rings, new_arrows, new_labels = {}, {}, {}
        out = []
        r = theme.OVERLAY_SOLVED_POINT_PX
        reach = r + 2.0
        ring_bounds = QRectF(-reach, -reach, 2 * reach, 2 * reach)
        for m in self.moved_points:
            e = rings.get(m)
            if e is None:
                pix, x, y = cached_blit_at(m[0] * m11 + dx, m[1] * m22 + dy, 1.0, ("solved-ring", r), ring_bounds,
                                           self._draw_ring)
                e = _pixmap_entry("ring", pix, x, y)
            new_rings[m] = e
            out.append(e)
        # arrows and leaders differ in direction and length from one to the next and from one drag step
        # to the next: they are drawn straight into the layer (only where it is redrawn), not rendered
        # into a pixmap first and blitted (~85 us per new one)
        for arrow in self.arrows:
            hit = arrows.get(id(arrow))  # build_labels hands out the same arrow object while it is unchanged
            if hit is None or hit[0] is not arrow:
                colour = arrow.colour
                x, y = arrow.base[0] * m11 + dx, arrow.base[1] * m22 + dy
                box = _arrow_bounds(arrow.direction).translated(x, y).toAlignedRect().adjusted(-1, -1, 1, 1)
                hit = (arrow, (("arrow", x, y, arrow.direction, colour.rgba()), box,
                               lambda p, o=QPointF(x, y), d=arrow.direction, c=colour: self._draw_arrow(p, o, d, c)))
            new_arrows[id(arrow)] = hit
            out.append(hit[1])
        for item in self._draw:
            es = labels.get(item)
            if es is None:
                ax, ay, x, y, w, h, leader, pix = item
                px, py = ax * m11 + dx, ay * m22 + dy
                es = []
                if leader:
                    ex, ey = _leader_end(x, y, w, h)
                    box = QRectF(px + min(ex, 0.0), py + min(ey, 0.0), abs(ex), abs(ey)).adjusted(-3, -3, 3, 3)
                    es.append((("leader", px, py, ex, ey), box.toAlignedRect(),
                               lambda p, px=px, py=py, ex=ex, ey=ey: self._draw_leader_at(p, px, py, ex, ey)))
                es.append(_pixmap_entry("label", pix, px + x, py + y))
            new_labels[item] = es
            out.extend(es)
        self._entry_memo = (frame, new_rings, new_arrows, new_labels)
        self._marks_last = (frame, self.moved_points, self.arrows, self._draw, out)
        return out

    def _retained_bands(self, m11: float, m22: float, dx: float, dy: float, area: QRect):
        """(image, top-left, alpha) per utilization band, each a retained layer of opaque pieces laid down
        at the band's alpha (see :meth:`_paint_bands_layered`); None when the layers would be too large.

        A band whose pieces are those of the last frame keeps its entries and area; within a band that
        changed, pieces that did not keep theirs (a drag step moves a few pieces of one or two bands).
        """
        if len(self.band_ends) != len(self.bands):
            return None
        frame = (m11, m22, dx, dy)
        area_key = (area.x(), area.y(), area.width(), area.height())
        memo = self._band_memo if self._band_memo.get("_frame") == (frame, area_key) else {}
        new: dict = {"_frame": (frame, area_key)}
        out = []
        total = 0
        live = set()
        for (pen, _path), ends in zip(self.bands, self.band_ends):
            colour = QColor(pen.color())
            alpha = colour.alphaF()
            colour.setAlpha(255)
            rgba = colour.rgba()
            kept = memo.get(rgba)
            width = _BUCKET_WIDTH.get(rgba, theme.OVERLAY_BAND_PX)
            half = width / 2.0
            pad = int(math.ceil(half)) + 3
            if kept is not None and kept[0] == ends:
                _ends, pieces, entries, r, hits = kept
            else:
                flat = self._flat_pens.get(rgba)
                if flat is None:
                    flat = self._flat_pens[rgba] = QPen(colour, width, Qt.SolidLine, Qt.FlatCap, Qt.RoundJoin)

                def piece(sa, ta, sb, tb, flat=flat, rgba=rgba, half=half, pad=pad):
                    a, b = (sa * m11 + dx, ta * m22 + dy), (sb * m11 + dx, tb * m22 + dy)
                    x0, y0 = math.floor(min(a[0], b[0])) - pad, math.floor(min(a[1], b[1])) - pad
                    w, h = math.ceil(abs(a[0] - b[0])) + 2 * pad + 1, math.ceil(abs(a[1] - b[1])) + 2 * pad + 1
                    return (((a, b), QRect(x0, y0, w, h),
                             lambda p, a=a, b=b, f=flat, c=rgba: self._draw_band_piece(p, f, c, half, a, b)),
                            x0, y0, x0 + w - 1, y0 + h - 1)

                if kept is not None and len(kept[0]) == len(ends):
                    # the same number of pieces: set_bands hands on the very end tuples of a piece that did
                    # not move, so only pieces whose ends are other objects are made again
                    old_ends, hits, pieces = kept[0], list(kept[4]), None
                    for i in range(0, len(ends) - 1, 2):
                        ea, eb = ends[i], ends[i + 1]
                        if ea is not old_ends[i] or eb is not old_ends[i + 1]:
                            hits[i // 2] = piece(*ea, *eb)
                else:
                    old_pieces = (kept[1] or {}) if kept is not None else {}
                    pieces = {}
                    for i in range(0, len(ends) - 1, 2):
                        k = (ends[i], ends[i + 1])
                        hit = old_pieces.get(k)
                        if hit is None:
                            hit = piece(*k[0], *k[1])
                        pieces[k] = hit
                    hits = list(pieces.values()) if len(pieces) * 2 == len(ends) else \
                        [pieces[(ends[i], ends[i + 1])] for i in range(0, len(ends) - 1, 2)]  # a piece drawn twice
                if not hits:
                    continue
                # a piece's (entry, x0, y0, x1, y1) fields, read in C over all pieces (~25 us a frame less)
                _first, _x0, _y0, _x1, _y1 = _PIECE_FIELDS
                entries = list(map(_first, hits))
                # the layer's area snapped to 64 px, so a piece moving a little does not resize it
                g = 64
                x0, y0 = min(map(_x0, hits)) // g * g, min(map(_y0, hits)) // g * g
                x1, y1 = max(map(_x1, hits)) // g * g + g, max(map(_y1, hits)) // g * g + g
                r = QRect(x0, y0, x1 - x0, y1 - y0).intersected(area)
            new[rgba] = (list(ends), pieces, entries, r, hits)
            if r.isEmpty():
                continue
            total += r.width() * r.height()
            if total > 2 * area.width() * area.height():
                self._band_memo = new
                return None  # zoomed far in with many bands: layers would cost more than they save
            layer = self._band_layers.get(rgba)
            if layer is None:
                layer = self._band_layers[rgba] = RetainedLayer()
            live.add(rgba)
            out.append((layer.update((m11, m22, dx, dy, rgba), r, entries), r.topLeft(), alpha))
        for rgba in [k for k in self._band_layers if k not in live]:
            gone = self._band_layers.pop(rgba)
            gone.clear()  # its pixels leave the frame: they are damage
            self._lost_damage = add_damage(self._lost_damage, gone.take_damage())
        self._band_memo = new
        return out

    def _draw_band_piece(self, p: QPainter, flat: QPen, rgba: int, half: float, a, b) -> None:
        """One opaque band piece (device px): a flat-capped stroke and a disc at each end (the round caps)."""
        p.setPen(flat)
        p.drawLine(QPointF(*a), QPointF(*b))
        c = int(math.ceil(half)) + 1
        for x, y in (a, b):
            ix, iy = math.floor(x), math.floor(y)
            fx, fy = round((x - ix) * 4) / 4, round((y - iy) * 4) / 4
            if fx >= 1.0:
                ix, fx = ix + 1, 0.0
            if fy >= 1.0:
                iy, fy = iy + 1, 0.0
            p.drawPixmap(ix - c, iy - c, self._band_dot(rgba, fx, fy, half))

    def _paint_bands_layered(self, painter: QPainter) -> bool:
        """The utilization bands, drawn opaque into a layer per band and laid down at the band's alpha.

        Stroking a wide translucent path with round caps costs Qt ~4 ms for a 50-rope rig; the
        same shape is a flat-capped stroke plus a disc at every piece end, which is ~5x cheaper
        when drawn opaque (overlaps merge, so the layer still lays each band down once, as the
        single translucent path did).  Only for raster painting at 1:1 device pixels with a
        plain zoom; returns False (and draws nothing) otherwise, e.g. for SVG or PDF.
        """
        if len(self.band_ends) != len(self.bands) or not self.bands:
            return False
        t = _plain_raster_transform(painter)
        if t is None:
            return False
        device = painter.device()
        area = QRect(0, 0, device.width(), device.height())
        rects = []
        for _pen, path in self.bands:
            r = t.mapRect(path.controlPointRect()).toAlignedRect().adjusted(-10, -10, 10, 10).intersected(area)
            rects.append(r)
        if sum(r.width() * r.height() for r in rects) > 2 * area.width() * area.height():
            return False  # zoomed far in with many bands: layers would cost more than they save
        for (pen, path), ends, r in zip(self.bands, self.band_ends, rects):
            if r.isEmpty():
                continue
            half = pen.widthF() / 2.0
            colour = QColor(pen.color())
            alpha = colour.alphaF()
            colour.setAlpha(255)
            layer = QImage(r.size(), QImage.Format_ARGB32_Premultiplied)
            layer.fill(Qt.transparent)
            lp = QPainter(layer)
            lp.setRenderHint(QPainter.Antialiasing, True)
            lp.setTransform(t * QTransform.fromTranslate(-r.left(), -r.top()))
            flat = QPen(colour, pen.widthF(), Qt.SolidLine, Qt.FlatCap, Qt.RoundJoin)
            flat.setCosmetic(True)
            lp.setPen(flat)
            lp.drawPath(path)
            lp.resetTransform()
            rgba = colour.rgba()
            for xy in ends:  # the round caps: one anti-aliased disc per end, placed to a quarter pixel
                d = t.map(QPointF(*xy))
                x, y = d.x() - r.left(), d.y() - r.top()
                ix, iy = math.floor(x), math.floor(y)
                fx, fy = round((x - ix) * 4) / 4, round((y - iy) * 4) / 4
                c = int(math.ceil(half)) + 1
                lp.drawPixmap(ix - c, iy - c, self._band_dot(rgba, fx, fy, half))
            lp.end()
            painter.save()
            painter.resetTransform()
            painter.setOpacity(alpha)
            painter.drawImage(r.topLeft(), layer)
            painter.restore()
        return True

    def _band_dot(self, rgba: int, fx: float, fy: float, radius: float) -> QPixmap:
        """An opaque disc of a band's colour centred (c + fx, c + fy) px in a 2c + 1 px pixmap, c = ceil(radius) + 1."""
        key = (rgba, fx, fy, radius)
        pix = self._band_dots.get(key)
        if pix is None:
            if len(self._band_dots) > 2000:
                self._band_dots.clear()
            c = int(math.ceil(radius)) + 1
            image = QImage(2 * c + 1, 2 * c + 1, QImage.Format_ARGB32_Premultiplied)
            image.fill(Qt.transparent)
            p = QPainter(image)
            p.setRenderHint(QPainter.Antialiasing, True)
            p.setPen(Qt.NoPen)
            p.setBrush(QColor.fromRgba(rgba))
            p.drawEllipse(QPointF(c + fx, c + fy), radius, radius)
            p.end()
            pix = self._band_dots[key] = QPixmap.fromImage(image)
        return pix

    def _draw_ring(self, painter: QPainter) -> None:
        painter.setPen(self._ring_pen)
        painter.setBrush(Qt.NoBrush)
        r = theme.OVERLAY_SOLVED_POINT_PX
        painter.drawEllipse(QPointF(0.0, 0.0), r, r)

    def _paint_arrow(self, painter: QPainter, t: QTransform, arrow: AnchorArrow, dpr: float | None = None) -> None:
        colour = theme.OVERLAY_GREY if self.grey else arrow.colour
        base = t.map(QPointF(*arrow.base))
        if dpr is not None:  # on screen: arrows that did not change (most, during a drag) are blitted
            blit_cached(painter, base, dpr, ("anchor-arrow", arrow.direction, colour.rgba()), _arrow_bounds(arrow.direction),
                        lambda p: self._draw_arrow(p, QPointF(0.0, 0.0), arrow.direction, colour))
            return
        self._draw_arrow(painter, base, arrow.direction, colour)

    def _draw_arrow(self, painter: QPainter, base: QPointF, direction: tuple[float, float], colour: QColor) -> None:
        dx, dy = direction
        start = QPointF(base.x() + dx * MARKER_CLEAR_PX, base.y() + dy * MARKER_CLEAR_PX)
        tip = QPointF(base.x() + dx * theme.ANCHOR_ARROW_PX, base.y() + dy * theme.ANCHOR_ARROW_PX)
        hd = theme.ANCHOR_ARROW_HEAD_PX
        neck = QPointF(tip.x() - dx * hd, tip.y() - dy * hd)
        painter.setPen(self.pen_for(colour, theme.ANCHOR_ARROW_WIDTH_PX))
        painter.drawLine(start, neck)
        nx, ny = -dy, dx
        head = QPolygonF([tip, QPointF(neck.x() + nx * hd * 0.5, neck.y() + ny * hd * 0.5),
                          QPointF(neck.x() - nx * hd * 0.5, neck.y() - ny * hd * 0.5)])
        painter.setPen(self.pen_for(colour, 1.0))
        painter.setBrush(colour)
        painter.drawPolygon(head)


# --- screen-fixed widgets on the viewport ------------------------------------------------------------------
class Banner(QLabel):
    """A red banner across the top of the canvas naming why the solve failed."""

    def __init__(self, parent: QWidget) -> None:
        super().__init__(parent)
        self.setWordWrap(True)
        self.setTextFormat(Qt.PlainText)
        self.setFont(theme.font(theme.LABEL_POINT_SIZE + 1, bold=True))
        self.setStyleSheet(f"QLabel {{ background: {theme.BANNER_BACK.name(QColor.HexArgb)}; "
                           f"color: {theme.BANNER_TEXT.name()}; padding: 7px 10px; border-radius: 4px; }}")
        self.setAttribute(Qt.WA_TransparentForMouseEvents, True)
        self.hide()

    def place(self) -> None:
        from sketchpad.hint_bar import top_strip_width

        m = theme.BANNER_MARGIN_PX
        self.setFixedWidth(top_strip_width(self.parentWidget().rect().width()))
        self.adjustSize()
        self.move(m, m)


class Legend(QWidget):
    """Bottom-right key: the utilization ramp, zone hatches and the system summary lines.

    The widget itself is never shown: it holds the key's size and place on the viewport, and the
    view paints it as part of its own frame (``SketchView.foreground_painters``, :meth:`paint_on`),
    which saves Qt a second paint pass of a child widget on every frame of a drag.
    """

    def __init__(self, parent: QWidget) -> None:
        super().__init__(parent)
        self.setAttribute(Qt.WA_TransparentForMouseEvents, True)
        self.lines: list[str] = []
        self.show_zones = True
        self.grey = False
        self.zone_names = theme.DRAWN_ZONE_NAMES  # (kind, name) of each zone swatch in the key
        self.font = theme.font(theme.OVERLAY_POINT_SIZE)
        self.title_font = theme.font(theme.OVERLAY_POINT_SIZE, bold=True)
        self.fm = QFontMetricsF(self.font)
        self._pixmap: QPixmap | None = None
        self._pixmap_key: tuple | None = None
        self._frame_pix: tuple | None = None  # (key, pixmap) of the key without its lines
        self._line_pix: dict = {}  # (text, fraction of a px, dpr) -> pixmap of one summary line
        self.shown = False  # whether the view paints the key (the widget stays hidden)
        self._areas: tuple | None = None  # (lines, frame, areas) of the last call of areas()
        self.hide()

    TITLE = legend_key.TITLE
    TICKS = (0.0, 0.5, 1.0, 1.5)

    def set_content(self, lines: list[str], show_zones: bool, grey: bool) -> None:
        lines = list(lines)
        if (lines, show_zones, grey) == (self.lines, self.show_zones, self.grey) and self.shown:
            return  # nothing new to say (most drag steps)
        self.lines, self.show_zones, self.grey = lines, show_zones, grey
        self.resize(self.sizeHint())
        self.place()
        # repaint through the viewport: a legend-only update costs Qt a second paint pass of the
        # viewport under the (translucent) legend; as part of the viewport's region it comes free
        self.parentWidget().update(self.geometry())

    def sizeHint(self) -> QSize:  # noqa: N802
        pad, lh = 8, self.fm.height()
        # advances remembered per (text, font): a drag step changes a number or two of the lines
        w = max([theme.LEGEND_RAMP_W_PX + 24, text_advance(self.TITLE, self.title_font)]
                + [text_advance(t, self.font) for t in self.lines]
                + ([legend_key.rows_width(legend_key.rows_for(self.zone_names), lambda t: text_advance(t, self.font))]
                   if self.show_zones else []))
        rows = legend_key.rows_height(legend_key.rows_for(self.zone_names), lh, self.show_zones)
        h = lh + 4 + theme.LEGEND_RAMP_H_PX + lh + 6 + rows + len(self.lines) * lh
        return QSize(int(w + 2 * pad), int(h + 2 * pad))

    def place(self) -> None:
        vp = self.parentWidget().rect()
        m = theme.LEGEND_MARGIN_PX
        self.move(vp.width() - self.width() - m, vp.height() - self.height() - m)

    def set_shown(self, on: bool) -> None:
        """Show or hide the key (the viewport repaints where it is)."""
        if bool(on) != self.shown:
            self.shown = bool(on)
            self.parentWidget().update(self.geometry())

    def areas(self) -> list[tuple[QRect, tuple]]:
        """The viewport px :meth:`paint_on` paints in, in parts, each with what fixes its pixels: the box with the
        title, ramp and zone key, then one band per summary line (a drag step mostly changes a number or two)."""
        if not self.shown:
            return []
        g = self.geometry()
        frame = (g.x(), g.y(), g.width(), g.height(), self.show_zones, self.zone_names, self.grey, len(self.lines))
        last = self._areas
        if last is not None and last[0] is self.lines and last[1] == frame:
            return last[2]  # set_content hands in a new list when the lines change
        y0 = self._lines_top()
        lh = self.fm.height()
        out = [(g, frame)]
        for i, line in enumerate(self.lines):  # a band per line, a little taller than the line (anti-aliased glyphs)
            top = math.floor(y0 + i * lh) - 2
            out.append((QRect(g.x(), g.y() + top, g.width(), math.ceil(lh) + 4), (frame, line)))
        self._areas = (self.lines, frame, out)
        return out

    def paint_on(self, painter: QPainter, dpr: float | None) -> None:
        """Paint the key at its place, ``painter`` in viewport pixels: on screen (``dpr``) blitted from a
        pixmap put together again only when the key changes, else (a scaled or vector render) as vectors.

        The pixmap is the key's frame (box, title, ramp, zone swatches) and one cached pixmap per text
        line: a drag step that changes the MA or a load's force renders that one line, not the whole key.
        """
        if not self.shown:
            return
        if dpr is None:
            painter.save()
            painter.translate(self.x(), self.y())
            self._paint(painter)
            painter.restore()
            return
        key = (tuple(self.lines), self.show_zones, self.zone_names, self.grey, self.width(), self.height(), dpr)
        if self._pixmap is None or self._pixmap_key != key:
            self._pixmap, self._pixmap_key = self._assembled(dpr), key
        painter.drawPixmap(self.x(), self.y(), self._pixmap)

    def _assembled(self, dpr: float) -> QPixmap:
        """The key as one pixmap: the cached frame with each line's cached pixmap laid over it."""
        pix = self._blank(self.width(), self.height(), dpr)
        p = QPainter(pix)
        frame_key = (self.show_zones, self.zone_names, self.grey, self.width(), self.height(), dpr)
        if self._frame_pix is None or self._frame_pix[0] != frame_key:
            frame = self._blank(self.width(), self.height(), dpr)
            fp = QPainter(frame)
            self._paint_frame(fp)
            fp.end()
            self._frame_pix = (frame_key, frame)
        p.drawPixmap(0, 0, self._frame_pix[1])
        lines: dict = {}
        y = self._lines_top()
        lh = self.fm.height()
        for line in self.lines:
            top = math.floor(y)
            lkey = (line, y - top, dpr)
            lp = self._line_pix.get(lkey)
            if lp is None:
                lp = self._blank(math.ceil(self.LINE_PAD + self.fm.horizontalAdvance(line) + 2), math.ceil(lh) + 2, dpr)
                tp = QPainter(lp)
                self._paint_line(tp, line, y - top)
                tp.end()
            lines[lkey] = lp
            p.drawPixmap(0, top, lp)
            y += lh
        self._line_pix = lines  # the lines of this key only: a changed number's old line is let go
        p.end()
        return pix

    @staticmethod
    def _blank(w: float, h: float, dpr: float) -> QPixmap:
        pix = QPixmap(max(1, round(w * dpr)), max(1, round(h * dpr)))
        pix.setDevicePixelRatio(dpr)
        pix.fill(Qt.transparent)
        return pix

    LINE_PAD = 8.0  # px from the key's left edge to its text

    def _paint(self, p: QPainter) -> None:
        """The whole key as vectors (exports, scaled renders): frame, then the lines."""
        self._paint_frame(p)
        y = self._lines_top()
        for line in self.lines:
            self._paint_line(p, line, y)
            y += self.fm.height()

    def _lines_top(self) -> float:
        """Top (px in the key) of the first summary line: below the title, the ramp and the zone swatches."""
        lh = self.fm.height()
        y = self.LINE_PAD + lh + 4 + theme.LEGEND_RAMP_H_PX + 3 + lh + 3
        return y + legend_key.rows_height(legend_key.rows_for(self.zone_names), lh, self.show_zones)

    def _paint_line(self, p: QPainter, line: str, y: float) -> None:
        p.setFont(self.font)
        p.setPen(theme.OVERLAY_LABEL_TEXT)
        p.drawText(QPointF(self.LINE_PAD, y + self.fm.ascent()), line)

    def _paint_frame(self, p: QPainter) -> None:
        p.setRenderHint(QPainter.Antialiasing, True)
        p.setPen(theme.pixel_pen(theme.LEGEND_EDGE, 1.0))
        p.setBrush(theme.LEGEND_BACK)
        p.drawRoundedRect(QRectF(self.rect()).adjusted(0.5, 0.5, -0.5, -0.5), 5, 5)
        pad, lh = self.LINE_PAD, self.fm.height()
        y = pad
        p.setFont(self.title_font)
        p.setPen(theme.OVERLAY_LABEL_TEXT)
        p.drawText(QPointF(pad, y + self.fm.ascent()), self.TITLE)
        y += lh + 4
        ramp = QRectF(pad, y, theme.LEGEND_RAMP_W_PX, theme.LEGEND_RAMP_H_PX)
        top = self.TICKS[-1]
        legend_key.paint_wedge(p, ramp, top, self.grey)
        p.setFont(self.font)
        p.setPen(theme.pixel_pen(theme.OVERLAY_LABEL_TEXT, 1.0))
        for u in self.TICKS:
            x = ramp.left() + ramp.width() * u / top
            p.drawLine(QPointF(x, ramp.bottom()), QPointF(x, ramp.bottom() + 3))
            text = f"{u * 100:.0f}%" + ("+" if u == top else "")
            tw = self.fm.horizontalAdvance(text)
            p.drawText(QPointF(min(max(x - tw / 2, 2), self.width() - tw - 2), ramp.bottom() + 3 + self.fm.ascent()), text)
        y = ramp.bottom() + 3 + lh + 3
        if self.show_zones:
            legend_key.paint_rows(p, legend_key.rows_for(self.zone_names), pad, y, lh, self.fm.ascent())


def summary_lines(rig: Rig, result: Result) -> list[str]:
    """The system in a few lines: MA nominal/ideal/actual, then sentences (sketchpad.summary_words)."""
    from sketchpad.summary_words import sentences

    out = []
    if result.ma_actual is not None:  # a drag step leaves nominal and ideal to the analysis at the pause
        out.append(ma_short(result))
    return out + sentences(rig, result)


# --- the controller -----------------------------------------------------------------------------------
class ResultOverlay(QObject):
    """Shows Results on a SketchView: zone and force items in its scene, banner and legend on its viewport."""

    def __init__(self, view, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.view = view
        self.scene = view.sketch_scene
        self.layers: dict[str, bool] = {name: True for name in LAYERS}
        self.zones_item = ZoneItem()
        self.zones_item.setZValue(theme.Z_FEATURE + 1.0)  # under the ropes, over the water
        self.zones_item.setCacheMode(QGraphicsItem.DeviceCoordinateCache)  # hatching is slow; pans reuse it
        self.scene.addItem(self.zones_item)
        self.force_item = ForceItem()
        self.scene.add_overlay_item(self.force_item)
        from sketchpad.water_layer import WaterItem

        self.water_item = WaterItem()  # the current's arrows and the ropes it bows
        self.scene.addItem(self.water_item)
        self.banner = Banner(view.viewport())
        self.legend = Legend(view.viewport())
        view.foreground_painters.append(self.legend.paint_on)
        view.foreground_areas.append(self.legend.areas)
        view.fit_reserves.append(lambda: (self.legend.width() + theme.LEGEND_MARGIN_PX,
                                          self.legend.height() + theme.LEGEND_MARGIN_PX) if self.legend.shown else (0, 0))
        view.viewport().installEventFilter(self)
        from sketchpad.zoom_pacing import ZoomPacer

        self.zoom_pacer = ZoomPacer(self)  # a wheel gesture re-places the labels once, when it stops
        self.rig: Rig | None = None  # the rig the drawn overlay belongs to
        self.result: Result | None = None  # the result drawn (the last good one when greyed)
        self.failed: Result | None = None  # the current failed result, if any
        self.zones: list = []
        self.pieces: list = []
        self.skipped = 0
        self.layer_actions: dict[str, QAction] = {}
        self._memo: dict = {}
        self._memo_scale = 0.0
        self._label_memo: dict = {}  # build_labels' reuse of unchanged labels between solves
        self._obstacles = ObstacleCache()  # the placer's obstacles, updated by difference between solves
        self._zones_due = True
        self._keep_hidden = False
        self._summary: list[str] = []  # summary_lines of the result drawn
        self._name_fm = QFontMetricsF(theme.font())
        self._name_box_cache: dict[tuple[str, str], tuple[float, float, float, float]] = {}
        self._name_box_of = PerPoint(self._name_box)  # name box of each point of the last rig
        self._markers_for: tuple = (None, None, [])  # (rig.points, result, markers) of the last call
        self._pos: tuple = (None, {})  # (result, its scene_positions) of the last rebuild

    # --- public -------------------------------------------------------------------------------------
    @property
    def labels(self) -> list[OverlayLabel]:
        """The label model (numbers and texts as drawn), for tests and reports."""
        return self.force_item.labels

    @property
    def greyed(self) -> bool:
        return self.force_item.grey

    @property
    def banner_text(self) -> str:
        return self.banner.text() if not self.banner.isHidden() else ""

    def show_result(self, rig: Rig, result: Result, good_rig: Rig | None = None, good: Result | None = None,
                    settled: bool = True) -> None:
        """Draw ``result`` of ``rig``; if it failed, the banner names why and ``good`` (of ``good_rig``) is drawn greyed.

        ``settled`` is False for drag-time results: danger zones are then left as they were and
        redrawn with the settled result that follows once the drag pauses (``SolveScheduler``).
        """
        self._zones_due = settled or self.result is None
        self._keep_hidden = not settled  # a drag step: labels hidden at the last step stay hidden
        if settled:  # give labels skipped during a drag another try
            self._memo = {k: v for k, v in self._memo.items() if v[3] is not None}
        from sketchpad.live_solve import failure_text

        if result.ok:
            self.failed = None
            self.rig, self.result = rig, result
            self.banner.hide()
        else:
            self.failed = result
            self.rig, self.result = (good_rig, good) if good is not None and good.ok else (None, None)
            self.banner.setText(failure_text(result, rig) + ("  (last good result shown grey)" if self.result else ""))
            self.banner.place()
            self.banner.show()
        fail_point = None
        if not result.ok and result.subject and rig.has_point(result.subject):
            fail_point = _scene(rig.point(result.subject).xy)
        self.force_item.fail_point = fail_point
        self.water_item.show(rig, self.result)
        self.rebuild()

    def set_layer(self, name: str, on: bool) -> None:
        if name not in self.layers:
            raise KeyError(name)
        self.layers[name] = bool(on)
        act = self.layer_actions.get(name)
        if act is not None and act.isChecked() != bool(on):
            act.setChecked(bool(on))
        self.rebuild()

    def make_layer_actions(self, parent: QObject) -> dict[str, QAction]:
        """Checkable actions (one per layer) for the View menu."""
        for name, text in LAYERS.items():
            act = QAction(text, parent)
            act.setCheckable(True)
            act.setChecked(self.layers[name])
            act.setObjectName(f"action_layer_{name}")
            self.layer_actions[name] = act
            act.toggled.connect(self._layers_from_actions)  # no-argument slot: reads every action
        return self.layer_actions

    def _layers_from_actions(self) -> None:
        wanted = {n: a.isChecked() for n, a in self.layer_actions.items()}
        if any(self.layers[n] != on for n, on in wanted.items()):
            self.layers.update(wanted)
            self.rebuild()

    # --- building -------------------------------------------------------------------------------------
    def rebuild(self) -> None:
        """Labels, bands, zones and legend from the current rig and result, then place labels."""
        grey = self.failed is not None
        for item in (self.force_item, self.zones_item):
            if item.grey != grey:  # a new look: Qt's cache of the item and the drag layer's still image must follow
                item.grey = grey
                item.update()
        if self.result is None or self.rig is None:
            self.force_item.bands, self.force_item.moved_points = [], []
            self.force_item.set_labels([], [], self._m_per_px())
            self.zones_item.set_zones([])
            self.legend.set_shown(False)
            self.scene.set_rope_names_in_overlay(False)  # the rope items name themselves again
            return
        rig, result = self.rig, self.result
        pos = scene_positions(rig, result)
        self._pos = (result, pos)
        self.pieces = self.force_item.set_bands(rig, result, pos)
        labels, arrows = build_labels(rig, result, [k for k, on in self.layers.items() if on], self._label_memo, pos)
        if self.layers["anchors"]:  # overloaded pulleys and edges marked like anchors (made again once a drag pauses)
            from sketchpad.hardware_marks import hardware_labels

            if getattr(self, "_zones_due", True) or not hasattr(self, "_hw_labels"):
                self._hw_labels = hardware_labels(rig, result, pos)
            labels = labels + self._hw_labels if self._hw_labels else labels
        from sketchpad.rope_names import rope_name_labels  # names placed with the numbers, never under them

        pieces_labelled = self.layers["tensions"] or self.layers["stretch"]
        if pieces_labelled:
            labels = labels + rope_name_labels(rig, pos, self.__dict__.setdefault("_name_memo", {}))
        self.scene.set_rope_names_in_overlay(pieces_labelled)
        self.force_item.labels, self.force_item.arrows = labels, arrows
        if self.layers["zones"] and not getattr(self, "_zones_due", True):
            pass  # a drag step: zones follow the settled result
        elif self.layers["zones"]:
            from solver.danger import danger_zones

            try:
                self.zones = danger_zones(rig, result)
            except Exception:  # noqa: BLE001 - a zone bug must not hide the forces
                log.exception("danger zones failed")
                self.zones = []
            self.zones_item.set_zones(self.zones)
        else:
            self.zones = []
            self.zones_item.set_zones(self.zones)
        self._zones_due = True
        self._summary = summary_lines(rig, result)
        self.relayout()
        self.legend.set_shown(True)

    def _update_legend(self) -> None:
        """The legend's lines: the system summary, how many labels the placer hid, and a failed solve."""
        lines = list(self._summary)
        if self.skipped:
            lines.append(f"{self.skipped} label{'s' if self.skipped != 1 else ''} hidden to avoid overlap: zoom in")
        grey = self.failed is not None
        if grey:
            lines.append(getattr(self, "grey_reason", "solve failed: last good result, greyed"))
        self.legend.set_content(lines, self.layers["zones"], grey)

    def _m_per_px(self) -> float:
        return 1.0 / max(self.view.px_per_m, 1e-12)

    def relayout(self) -> None:
        """Place the labels for the current zoom (pixel offsets are pan-invariant, so only zoom re-places)."""
        t = self.view.transform()
        m11, dx, dy = t.m11(), t.dx(), t.dy()

        def to_px(p: tuple[float, float]) -> tuple[float, float]:
            return (p[0] * m11 + dx, p[1] * m11 + dy)

        markers, boxes = [], []
        if self.rig is not None:
            boxes = self._name_boxes(self.rig)
            markers = self._markers(self.rig, self.result)
        previous = self._memo if self._memo_scale == m11 else None
        frame = (m11, t.m22(), dx, dy)
        same = self._obstacles.frame == frame  # the last memo was made with this very to_px
        self.skipped = place_labels(self.force_item.labels, to_px, self.force_item.label_size, markers, self.pieces,
                                    boxes, previous, self._obstacles, frame,
                                    keep_hidden=self._keep_hidden)
        labels, kept = self.force_item.labels, self._obstacles.kept
        memo = kept.memo_for(labels, to_px, previous if same else None)
        self._memo = memo if memo is not None else placement_memo(labels, to_px, previous if same else None)
        kept.remember(labels, self._memo)
        self._memo_scale = m11
        self.force_item.refresh_rect(self._m_per_px())
        if self.result is not None and self.rig is not None:
            self._update_legend()  # after a zoom too: how many labels are hidden changes with it

    def _markers(self, rig: Rig, result: Result | None) -> list[tuple[float, float]]:
        """Scene points of every marker: each point where it is drawn and, if the solver moved it, where it was solved."""
        if self._markers_for[0] is rig.points and self._markers_for[1] is result:
            return self._markers_for[2]
        markers = list(self.force_item._drawn_positions(rig).values())
        if result is not None:
            if self._pos[0] is result:  # scene_positions' tuples: the same objects for points that did not move
                pos = self._pos[1]
                markers += [pos[pid] for pid in result.points]
            else:
                markers += [(float(x), -float(y)) for x, y in result.points.values()]
        markers = list(dict.fromkeys(markers))  # a fixed point's solved place is its drawn one
        self._markers_for = (rig.points, result, markers)
        return markers

    def _name_boxes(self, rig: Rig) -> list:
        """Pixel rects of the point names the canvas draws beside each marker (sketchpad.items.PointItem):
        (scene point, rect relative to it) per point, made again only for points that changed."""
        if len(self._name_box_cache) > 4 * len(rig.points) + 64:
            self._name_box_cache.clear()
        boxes = self._name_box_of.values(rig.points)
        at = getattr(self.scene, "shown_at", None)  # points drawn where the solver put them (sketchpad.ghosts)
        if at:
            boxes = [(_scene(at[p.id]), b[1]) if p.id in at else b for p, b in zip(rig.points, boxes)]
        return boxes

    def _name_box(self, p) -> tuple:
        key = (p.name, p.kind)
        box = self._name_box_cache.get(key)
        if box is None:
            fm = self._name_fm
            r = theme.POINT_RADIUS_PX.get(p.kind, 5.0)
            box = self._name_box_cache[key] = (r + theme.LABEL_GAP_PX, -r - fm.ascent(), fm.horizontalAdvance(drawn(p.name)),
                                               fm.height())
        return (_scene(p.xy), box)

    def eventFilter(self, obj, event) -> bool:  # noqa: N802
        if event.type() == QEvent.Resize:
            self.legend.place()
            if not self.banner.isHidden():
                self.banner.place()
        return False
