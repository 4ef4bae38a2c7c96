"""ForceItem.refresh_rect keeps each placed label's blit entry and bounds between drag steps; what it keeps must
draw what a fresh computation from the labels as they are now draws (``forget_kept``), within the same bounds."""

from __future__ import annotations

import math

import numpy as np
from PySide6.QtCore import QRectF

from sketchpad import theme
from tests.sketchpad.test_drag_layer import fifty_rope_window
from tests.sketchpad.test_overlay_incremental import ROUNDING, pixels


def fresh_entries_and_rect(item, m_per_px: float):
    """The blit entries and the item's rect worked out from scratch, as refresh_rect did before it kept entries."""
    entries = [(lab.at[0], lab.at[1], *lab.rect, lab.leader,
                item.label_pixmap(lab, theme.OVERLAY_GREY if item.grey else lab.colour).toImage())
               for lab in item.labels if lab.placed]
    xs0, ys0, xs1, ys1 = [], [], [], []
    for _pen, path in item.bands:
        r = path.boundingRect()
        if not r.isNull():
            xs0.append(r.left()), ys0.append(r.top()), xs1.append(r.right()), ys1.append(r.bottom())
    reach = (theme.ANCHOR_ARROW_PX + theme.ANCHOR_ARROW_HEAD_PX) * m_per_px
    if item.arrows and reach > 0:
        xs, ys = [a.base[0] for a in item.arrows], [a.base[1] for a in item.arrows]
        xs0.append(min(xs) - reach), ys0.append(min(ys) - reach), xs1.append(max(xs) + reach), ys1.append(max(ys) + reach)
    for lab in item.labels:
        if lab.placed:
            x, y, w, h = lab.rect
            if w > 0 or h > 0:
                lx, ly = lab.at[0] + x * m_per_px, lab.at[1] + y * m_per_px
                xs0.append(lx), ys0.append(ly), xs1.append(lx + w * m_per_px), ys1.append(ly + h * m_per_px)
    pad = (theme.FAIL_RING_PX + theme.BAND_MAX_PX) * m_per_px
    if item.fail_point is not None and pad > 0:
        fx, fy = item.fail_point
        xs0.append(fx - pad), ys0.append(fy - pad), xs1.append(fx + pad), ys1.append(fy + pad)
    if not xs0:
        return entries, QRectF()
    x0, y0, x1, y1 = min(xs0) - pad, min(ys0) - pad, max(xs1) + pad, max(ys1) + pad
    return entries, QRectF(x0, y0, x1 - x0, y1 - y0)


def assert_as_drawn_afresh(ov, view) -> None:
    """The overlay painted with the entries the item kept looks as it does once everything is worked out afresh
    (``ForceItem.forget_kept``), and the item's bounds are the fresh ones."""
    item, vp = ov.force_item, view.viewport()
    m_per_px = 1.0 / view.px_per_m
    assert item.boundingRect() == fresh_entries_and_rect(item, m_per_px)[1]
    kept = pixels(vp.grab().toImage())
    item.forget_kept()
    item.refresh_rect(m_per_px)
    afresh = pixels(vp.grab().toImage())
    d = np.abs(kept - afresh).max(axis=2)
    assert (kept[:, :, :3] != kept[0, 0, :3]).any(axis=2).sum() > 1000  # the overlay is there to compare
    assert d.max() <= ROUNDING, f"{(d > ROUNDING).sum()} pixels differ"


def test_label_entries_kept_between_drag_steps_draw_as_entries_worked_out_afresh(main_window):
    doc, sched, view = fifty_rope_window(main_window)
    ov = main_window.live.overlay
    item = ov.force_item
    base = doc.rig
    p = base.point("H7")
    kept_total = 0
    for i in range(8):
        a = (i + 1) * 0.3
        before = dict(item.entry_counts)
        doc.preview(base.moved("H7", p.x + 1.5 * math.sin(a), p.y + 1.5 * math.cos(a)))
        sched.fire()
        view.viewport().repaint()
        made = item.entry_counts["made"] - before["made"]
        kept_total += item.entry_counts["kept"] - before["kept"]
        assert made > 0  # the moved part's labels were worked out again
        assert_as_drawn_afresh(ov, view)
    assert kept_total > 0  # and the others were kept: the path under test was taken

    def refresh_and_check() -> None:
        item.refresh_rect(1.0 / view.px_per_m)
        assert_as_drawn_afresh(ov, view)

    # a label the placer moves, hides or shows again, without a new label object
    placed = [lab for lab in item.labels if lab.placed]
    moved, hidden = placed[0], placed[1]
    moved.at = (moved.at[0] + 0.5, moved.at[1] - 0.25)
    refresh_and_check()
    moved.rect = (moved.rect[0] + 3.0, moved.rect[1], moved.rect[2], moved.rect[3])
    refresh_and_check()
    hidden.placed = False
    refresh_and_check()
    hidden.placed = True
    moved.leader = not moved.leader
    refresh_and_check()

    # greyed, then a zoom (another scale of pixels to metres), then back
    item.grey = True
    refresh_and_check()
    item.grey = False
    view.scale(1.7, 1.7)
    ov.relayout()
    assert_as_drawn_afresh(ov, view)
    m_per_px = 2.0 / view.px_per_m
    item.refresh_rect(m_per_px)  # the scale alone changes the bounds
    entries, rect = fresh_entries_and_rect(item, m_per_px)
    assert item.boundingRect() == rect


def test_per_point_values_patched_for_changed_points_equal_values_made_afresh():
    import random

    from sketchpad.overlay import PerPoint

    class P:  # a Point stand-in: only its identity and value matter to PerPoint
        def __init__(self, v: float) -> None:
            self.v = v

    made = []

    def make(p):
        made.append(p)
        return (p.v, -p.v)

    rng = random.Random(5)
    table = PerPoint(make)
    points = tuple(P(rng.random()) for _ in range(30))
    for step in range(40):
        if step % 10 == 9:  # now and then another count of points: made afresh
            points = points + (P(rng.random()),)
            changed = set(range(len(points)))
        else:
            changed = set(rng.sample(range(len(points)), rng.randint(0, 4)))
            points = tuple(P(rng.random()) if i in changed else p for i, p in enumerate(points))
        last = table._values
        last_copy = list(last)
        made.clear()
        got = table.values(points)
        assert got == [(p.v, -p.v) for p in points]  # as made afresh
        assert last == last_copy  # the last answer was not changed in place
        if step:
            assert sorted(map(id, made)) == sorted(id(points[i]) for i in changed)  # only the changed ones made
        assert table.values(points) is got  # the same tuple again: the same answer


def fresh_scene_positions(rig, result) -> dict:
    """Scene positions as the docstring says, from nothing kept: solved where solved (y down), else as drawn,
    in the rig's order, then solved points the rig does not have."""
    pos = {}
    for p in rig.points:
        xy = result.points.get(p.id)
        pos[p.id] = (float(xy[0]), -float(xy[1])) if xy is not None else (float(p.x), -float(p.y))
    for pid, xy in result.points.items():
        if pid not in pos:
            pos[pid] = (float(xy[0]), -float(xy[1]))
    return pos


def test_scene_positions_patched_between_calls_equal_positions_made_afresh():
    import random
    from types import SimpleNamespace as NS

    from sketchpad.overlay import scene_positions

    rng = random.Random(11)
    point = lambda pid: NS(id=pid, x=rng.uniform(-9, 9), y=rng.uniform(-9, 9))  # noqa: E731
    points = tuple(point(f"P{i}") for i in range(25))
    solved = {p.id: (p.x + 0.1, p.y - 0.2) for p in points[:18]}
    solved["gone"] = (1.0, 2.0)  # a point of an older rig (a greyed result)
    last = None
    for step in range(60):
        kind = step % 12
        if kind == 5:  # a point added and the order changed
            points = tuple(reversed(points + (point(f"N{step}"),)))
        elif kind == 8:  # a point's id changed in its slot
            i = rng.randrange(len(points))
            points = points[:i] + (point(f"R{step}"),) + points[i + 1:]
        elif kind == 10:  # a solved point more and one fewer
            solved = dict(solved)
            solved.pop(next(iter(solved)))
            solved[points[-1].id] = (0.5, 0.25)
        else:  # a drag step: a few Point objects and solved tuples are new, the rest handed on
            for i in rng.sample(range(len(points)), 2):
                p = points[i]
                points = points[:i] + (NS(id=p.id, x=p.x + 0.3, y=p.y - 0.1),) + points[i + 1:]
            solved = dict(solved)
            for pid in rng.sample(sorted(solved), 3):
                solved[pid] = (solved[pid][0] + 0.2, solved[pid][1])
        rig, result = NS(points=points), NS(points=solved)
        got = scene_positions(rig, result)
        want = fresh_scene_positions(rig, result)
        assert got == want and list(got) == list(want)  # same positions, same order
        assert got is not last
        if last is not None and kind not in (5, 8, 10):
            same = [pid for pid in got if pid in last and got[pid] is last[pid]]
            assert same  # positions of what did not move are handed on (the path under test)
        last = got
    again = scene_positions(NS(points=points), NS(points=dict(solved)))  # equal tuples, a new dict
    assert again == fresh_scene_positions(NS(points=points), NS(points=solved))
