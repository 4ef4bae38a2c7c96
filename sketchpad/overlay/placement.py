"""The overlay's label placement: where each label goes on screen, as pure geometry in pixels (no Qt).

A greedy placer (:func:`place_labels`) runs whenever the result or the zoom changes (never inside
``paint``): most important labels first, each tries several offsets along and either side of its
piece, then a leader line farther out, else it is skipped and counted.  Obstacles (point names,
markers, rope pieces) live in a uniform grid (:class:`_Grid`), kept between drag steps by
difference (:class:`ObstacleCache`), and a drag step's placement continues the last one
(:class:`_KeptLabels`).  A label is anything with the fields of :class:`Placeable`.
"""

from __future__ import annotations

import math
import operator
from itertools import compress
from operator import is_not
from typing import Callable, Iterable, Mapping, Protocol

from sketchpad.glyph_sizes import ANCHOR_ARROW_PX, OVERLAY_LABEL_GAP_PX

#: Placer tuning, in screen pixels.
MARKER_CLEAR_PX = 11.0  # keep labels off point markers
GRID_CELL_PX = 56.0
ROPE_SAMPLE_PX = 10.0
MAX_SAMPLES_PER_PIECE = 160
LEADER_STEPS_PX = (26.0, 52.0)
#: A label whose text is the same and whose piece or point moved less than this (px) stays where it was.
KEEP_PX = 0.75
_PRIORITY = operator.attrgetter("priority")


class Placeable(Protocol):
    """What the placer reads and sets on a label (:class:`sketchpad.overlay.labels.Placeable`)."""

    kind: str
    key: object
    lines: tuple[str, ...]
    priority: float
    base: tuple[float, float]
    end: tuple[float, float] | None
    prefer: tuple[float, float]
    placed: bool
    at: tuple[float, float]
    rect: tuple[float, float, float, float]
    leader: bool


def unit_vector(dx: float, dy: float) -> tuple[float, float]:
    """The unit vector along (dx, dy); straight up the screen for a zero vector."""
    n = math.hypot(dx, dy)
    return (0.0, -1.0) if n < 1e-12 else (dx / n, dy / n)


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


def _half_extent(nx: float, ny: float, w: float, h: float) -> float:
    """Distance from a w x h rect's centre to its edge along the unit direction (nx, ny)."""
    return abs(nx) * w / 2.0 + abs(ny) * h / 2.0


def _rotate(v: tuple[float, float], deg: float) -> tuple[float, float]:
    c, s = math.cos(math.radians(deg)), math.sin(math.radians(deg))
    return (v[0] * c - v[1] * s, v[0] * s + v[1] * c)


#: Point-label directions tried, best first, as (degrees from the preferred one, cos, sin).
_ROTATIONS = tuple((deg, math.cos(math.radians(deg)), math.sin(math.radians(deg)))
                   for deg in (0.0, 40.0, -40.0, 90.0, -90.0, 140.0, -140.0, 180.0))


def _candidates(lab: Placeable, to_px: Callable, w: float, h: float):
    """Candidate (anchor scene point, centre px, anchor px, leader) for one label, best first."""
    gap = OVERLAY_LABEL_GAP_PX
    if lab.end is not None:
        a, b = to_px(lab.base), to_px(lab.end)
        u = unit_vector(b[0] - a[0], b[1] - a[1])
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
            dirs.append((v, d0, ANCHOR_ARROW_PX if lab.kind == "anchor" and rot == 0.0 else 0.0))
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


def place_labels(labels: list[Placeable], to_px: Callable[[tuple[float, float]], tuple[float, float]],
                 size_of: Callable[[Placeable], tuple[float, float]],
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


def _search(lab: Placeable, to_px, size_of, grid: _Grid, placed: list):
    """Place ``lab`` at its first candidate that hits nothing in ``grid`` and crosses no other rope, else the first
    that only crosses ropes, else one with a leader; add it to ``grid`` and ``placed``.  Returns its rect or None."""
    hits = grid.hits_rect
    w, h = size_of(lab)
    fallback = None
    own = lab.key if lab.kind == "tension" else lab.key[:2] if lab.kind == "wet-end" else None  # its own piece
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
        self.owner: dict[tuple, Placeable] = {}  # rect in the grid -> the placed label
        self.loose: dict[int, Placeable] = {}  # labels placed by a search at the last call
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


def _near(a, b) -> bool:
    return a is not None and abs(a[0] - b[0]) <= KEEP_PX and abs(a[1] - b[1]) <= KEEP_PX


def placement_memo(labels: Iterable[Placeable], to_px, previous: Mapping[tuple, tuple] | None = None) -> dict[tuple, tuple]:
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
