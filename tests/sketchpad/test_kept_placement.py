"""Label placement continued from the last call (labels left in the kept grid) equals placement from scratch.

Crowded scenes of point and piece labels over a few steps: most labels stay the very objects, a few are
replaced by new ones (moved, other text, other importance), obstacles come and go, and the list sometimes
changes length; each step's placement through an ObstacleCache (as the overlay does it during a drag) is
compared with place_labels building its grid afresh from copies of the same labels and the same memo.
"""

from __future__ import annotations

import copy

from hypothesis import given, settings
from hypothesis import strategies as st
from PySide6.QtGui import QColor

from sketchpad.overlay import ObstacleCache, OverlayLabel, place_labels, placement_memo

FRAME = (10.0, 10.0, 0.0, 0.0)  # 10 px per metre, no pan


def to_px(p):
    return (p[0] * FRAME[0] + FRAME[2], p[1] * FRAME[1] + FRAME[3])


def size_of(lab):
    return (8.0 + 6.0 * len(lab.lines[0]), 16.0)


coord = st.integers(0, 30).map(float)


@st.composite
def label(draw, key):
    """A point label, or a piece label (with an end), in a small crowded area."""
    base = (draw(coord), draw(coord))
    piece = draw(st.booleans())
    return OverlayLabel(kind="tension" if piece else "anchor", key=key, lines=(draw(st.sampled_from(["1 kN", "12.5 kN", "x"])),),
                        values={}, colour=QColor(0, 0, 0), priority=float(draw(st.sampled_from([30, 50, 50, 90]))),
                        base=base, end=(draw(coord), draw(coord)) if piece else None)


def placement(labels):
    return [(lab.kind, lab.key, lab.placed, lab.at, lab.rect, lab.leader) for lab in labels]


@settings(max_examples=300, deadline=None)
@given(st.data())
def test_a_placement_continued_from_the_last_one_equals_a_placement_from_scratch(data):
    draw = data.draw
    n = draw(st.integers(3, 24))
    labels = [draw(label(("k", i))) for i in range(n)]
    markers = [(draw(coord), draw(coord)) for _ in range(draw(st.integers(0, 6)))]
    pieces = [(("k", 0), (0.0, 0.0), (draw(coord), draw(coord)))]
    boxes = [((draw(coord), draw(coord)), (3.0, -8.0, 20.0, 12.0)) for _ in range(draw(st.integers(0, 3)))]
    cache = ObstacleCache()
    previous = None
    for step in range(draw(st.integers(2, 7))):
        if step:
            labels = list(labels)
            for j in range(draw(st.integers(0, 4))):  # a few labels become new objects, some with another key
                i = draw(st.integers(0, len(labels) - 1))
                how = draw(st.integers(0, 2))
                key = labels[i].key if how else ("k", 200 + 10 * step + j)
                labels[i] = draw(label(key)) if how < 2 else copy.copy(labels[i])
            if draw(st.integers(0, 5)) == 0:  # the list grows (a new key) or shrinks
                if draw(st.booleans()):
                    labels.append(draw(label(("k", 100 + step))))
                elif len(labels) > 1:
                    labels.pop(draw(st.integers(0, len(labels) - 1)))
            if draw(st.booleans()):  # obstacles come and go
                markers = markers[1:] + [(draw(coord), draw(coord))]
            if draw(st.integers(0, 3)) == 0:
                boxes = [((draw(coord), draw(coord)), (3.0, -8.0, 20.0, 12.0))] + boxes[1:]
        keep_hidden = draw(st.booleans())
        fresh = copy.deepcopy(labels)
        want = place_labels(fresh, to_px, size_of, markers, pieces, boxes, previous, keep_hidden=keep_hidden)
        got = place_labels(labels, to_px, size_of, markers, pieces, boxes, previous, cache, FRAME, keep_hidden)
        assert (got, placement(labels)) == (want, placement(fresh)), step
        memo = cache.kept.memo_for(labels, to_px, previous)
        if memo is not None:
            assert memo == placement_memo(labels, to_px, previous)
        else:
            memo = placement_memo(labels, to_px, previous)
        cache.kept.remember(labels, memo)
        previous = memo


def view_px(view):
    """The view's scene -> viewport pixel map as the placer takes it."""
    t = view.transform()
    return lambda p: (p[0] * t.m11() + t.dx(), p[1] * t.m22() + t.dy())


def shown_memo(ov, to_px, placed_only: bool = False) -> dict:
    """The placement memo of the labels the overlay shows, made afresh from copies of them (``placed_only``: of
    the placed ones, what a settled result keeps of a drag's placement)."""
    labels = copy.deepcopy(ov.labels)
    return placement_memo([lab for lab in labels if lab.placed] if placed_only else labels, to_px)


def placed_from_scratch(ov, to_px, previous, keep_hidden: bool):
    """Copies of the overlay's labels placed by place_labels from scratch (a fresh grid) after ``previous``:
    (labels left off, their placement)."""
    again = copy.deepcopy(ov.labels)
    # every point's marker where it is drawn and where it was solved (scene y is down), made here afresh
    markers = list(dict.fromkeys([(p.x, -p.y) for p in ov.rig.points] +
                                 [(float(x), -float(y)) for x, y in ov.result.points.values()]))
    from tests.sketchpad.test_drag_step_fresh import fresh_name_boxes  # made afresh, never the overlay's own

    skipped = place_labels(again, to_px, ov.force_item.label_size, markers, ov.pieces, fresh_name_boxes(ov),
                           previous, keep_hidden=keep_hidden)
    return skipped, placement(again)


def test_drag_steps_continue_the_last_placement_and_equal_a_placement_from_scratch(main_window):
    """The overlay during a drag on the 50-rope rig, crowded (fitted) and zoomed in: every step continues the
    last placement, and labels sit where place_labels from scratch puts copies of them, handed the memo of
    what was shown before the step (made afresh, never the overlay's own)."""
    from tests.sketchpad.test_drag_layer import fifty_rope_window

    doc, sched, view = fifty_rope_window(main_window)  # every step below is part of one drag
    ov = main_window.live.overlay
    rig = doc.rig
    h = rig.point("H4")
    counts = dict(ov.placement_counts)
    for i in range(1, 13):
        if i == 7:
            view.zoom_at(2.0, view.viewport().rect().center())  # room for more labels: placed afresh at the zoom
        previous = shown_memo(ov, view_px(view))
        doc.preview(rig.moved("H4", h.x + 0.6 * (i % 5), h.y - 0.4 * i))
        sched._change_gap_ms = 1.0  # a drag step however long the last one took
        sched.fire()
        assert not sched.settled
        assert (ov.skipped, placement(ov.labels)) == placed_from_scratch(ov, view_px(view), previous, True), i
    continued = ov.placement_counts["continued"] - counts["continued"]
    assert continued >= 10  # all but the first step (after the settled solve) and maybe the one after the zoom
