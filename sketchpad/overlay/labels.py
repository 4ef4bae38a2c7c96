"""The overlay's label model: from a Result, the labels a planner reads (what each says, the numbers behind it,
where it hangs) and the anchor arrows, kept per entry of the Result between drag steps.

Each rope piece is labelled with its tension (and stretch, %) in the display unit; the turn at every
redirect, and at a vector-pull hand also the angle off the original line (half the turn); every anchor
with its resultant's size and the share of its allowed load used; the force delivered to each load
against the force it needs; the haul force and what each hauler gives (with the range static friction
allows in ``hold``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from itertools import compress
from operator import is_not
from typing import Callable, Iterable, Mapping

from PySide6.QtGui import QColor

from sketchpad import theme
from sketchpad.overlay.placement import unit_vector
from sketchpad.short_text import drawn
from solver.directions import direction_text
from solver.model import Rig
from solver.pull_needed import need_phrase
from solver.readouts import use_text
from solver.result import Result
from solver.units import format_force

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
HOLD_LABEL = "hold"


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


def scene_xy(xy) -> tuple[float, float]:
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


class Entries:
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


def moved_names(names: tuple, values: tuple, old_names: tuple | None, old_values: tuple | None) -> set | None:
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
        self.parts = {k: Entries() for k in ("t", "a", "n", "l", "h")}

    def dirty_points(self, rig: Rig, pos: Mapping) -> set | None:
        """Ids of the points whose Point object or scene position is not the last call's object, or None
        when the points themselves are others (added, removed, reordered): then every entry is made again."""
        pts, names, values = rig.points, tuple(pos), tuple(pos.values())
        old_pts, old_names, old_values = self.points, self.pos_names, self.pos_values
        self.points, self.pos_names, self.pos_values = pts, names, values
        dirty = moved_names(names, values, old_names, old_values)
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
    labels: list[OverlayLabel] = []
    if "tensions" in layers or "stretch" in layers:
        labels += _tension_labels(state, result, layers, unit, pos, dirty)
    if "angles" in layers:
        labels += _angle_labels(state, rig, result, pos, dirty)
    arrows: list[AnchorArrow] = []
    if "anchors" in layers:
        anchor_holds, haul_holds = result.hold_anchor_range, result.hold_haul_range
        old_anchor_holds, old_haul_holds = state.holds
        state.holds = (anchor_holds, haul_holds)

        def also(changed: set | None) -> set | None:
            return None if dirty is None or changed is None else (dirty | changed if changed else dirty)

        labels += _anchor_labels(state, result, unit, sf, rig.view, pos,
                                 also(_changed_keys(anchor_holds, old_anchor_holds)), arrows)
        labels += _load_labels(state, rig, result, unit, pos, dirty)
        labels += _haul_labels(state, result, unit, pos, also(_changed_keys(haul_holds, old_haul_holds)))
    return labels, arrows


def _tension_labels(state: _LabelState, result: Result, layers: set, unit: str, pos: Mapping, dirty: set | None) -> list:
    """The tension (and stretch) label of every rope piece (see :func:`build_labels`)."""
    pos_get = pos.get

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

    part = state.parts["t"]
    part.update(None, result.segments, dirty, tension)
    return list(filter(None, part.outs))


def _angle_labels(state: _LabelState, rig: Rig, result: Result, pos: Mapping, dirty: set | None) -> list:
    """The turn label of every redirect (and the angle off the line at a vector-pull hand)."""
    points = state.by_id
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
        u1, u2 = unit_vector(prev[0] - at[0], prev[1] - at[1]), unit_vector(nxt[0] - at[0], nxt[1] - at[1])
        outward = unit_vector(-(u1[0] + u2[0]), -(u1[1] + u2[1]))  # away from both legs: outside the bight
        lines = [f"turn {fmt_angle(turn)}"]
        values = {"turn_deg": float(turn)}
        if hand:
            lines.append(f"off line {fmt_angle(turn / 2.0)}")
            values["off_line_deg"] = float(turn) / 2.0
        lab = OverlayLabel(kind="angle", key=key, lines=tuple(lines), values=values,
                           colour=theme.ANGLE_TEXT, priority=30.0 + (5.0 if hand else 0.0),
                           base=at, prefer=outward)
        return read, mkey, lab, None

    part = state.parts["a"]
    part.update(names, tuple(turns.values()), dirty if same else None, angle)
    return list(filter(None, part.outs))


def _anchor_labels(state: _LabelState, result: Result, unit: str, sf: float, view: str, pos: Mapping,
                   dirty: set | None, arrows: list) -> list:
    """The label of every anchor's resultant (its arrow added to ``arrows``); ``dirty`` includes changed holds."""
    points = state.by_id
    anchor_holds = result.hold_anchor_range
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
        mkey = ("n", aid, a.force_N, a.direction_deg, a.utilization, a.capacity_kind, p.name, hold, at, view)
        hit = old.get(mkey)
        if hit is not None:
            return (aid,), mkey, hit[0], hit[1]
        rad = math.radians(a.direction_deg)
        d = (math.cos(rad), -math.sin(rad))  # site CCW-from-east -> scene (y down)
        colour = theme.utilization_colour(a.utilization)
        lines = [f"{drawn(p.name)} {format_force(a.force_N, unit)}", "toward " + direction_text(a.direction_deg, view, a.force_N)]
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

    part = state.parts["n"]
    part.update(names_n, tuple(anchors.values()), dirty, anchor)
    arrows += filter(None, part.extras)
    return list(filter(None, part.outs))


def _load_labels(state: _LabelState, rig: Rig, result: Result, unit: str, pos: Mapping, dirty: set | None) -> list:
    """The label of the force delivered to every load, against the force it needs (and the pull that needs)."""
    points = state.by_id
    view = rig.view
    loads = result.loads
    names_l = tuple(loads)

    def load(i, f, old):
        lid = names_l[i]
        p = points.get(lid)
        if lid not in pos or p is None:
            return (lid,), None, None, None
        need = needs.get(lid)  # the pull needed: solved once the drawing is still
        mkey = ("l", lid, f.force_N, f.direction_deg, p.name, p.required_N, pos[lid], view, need, unit)
        hit = old.get(mkey)
        if hit is not None:
            return (lid,), mkey, hit[0], None
        rad = math.radians(f.direction_deg)
        d = (math.cos(rad), -math.sin(rad))
        lines = [f"to {drawn(p.name)} {format_force(f.force_N, unit)}", "toward " + direction_text(f.direction_deg, view, f.force_N)]
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
    part = state.parts["l"]
    # the needs arrive with the analysis at a pause, on load records a drag step may share: remake when they do
    part.update(names_l, tuple(loads.values()), dirty if not needs else None, load)
    return list(filter(None, part.outs))


def _haul_labels(state: _LabelState, result: Result, unit: str, pos: Mapping, dirty: set | None) -> list:
    """The label of every haul force, with what each hauler gives; ``dirty`` includes changed holds."""
    points = state.by_id
    haul_holds = result.hold_haul_range
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

    part = state.parts["h"]
    part.update(names_h, tuple(haul.values()), dirty, hauled)
    return list(filter(None, part.outs))
