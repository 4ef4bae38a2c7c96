"""The placer's kept obstacle grid, updated by difference, holds what a grid built afresh holds."""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from sketchpad.overlay.placement import ObstacleCache, _Grid, _marker_rect, _piece_samples

FRAME = (20.0, 20.0, 300.0, 200.0)


def to_px(p):
    return (p[0] * FRAME[0] + FRAME[2], p[1] * FRAME[1] + FRAME[3])


def fresh(markers, pieces, boxes) -> _Grid:
    """Every distinct obstacle put into a new grid once (as place_labels builds it from lists without repeats)."""
    grid = _Grid()
    for xy, (bx, by, bw, bh) in dict.fromkeys(boxes):
        x, y = to_px(xy)
        grid.add_rect((x + bx, y + by, bw, bh))
    for m in dict.fromkeys(markers):
        grid.add_rect(_marker_rect(*to_px(m)))
    for owner, a, b in dict.fromkeys(pieces):
        for x, y in _piece_samples(to_px(a), to_px(b)):
            grid.add_point(x, y, owner)
    return grid


def content(grid: _Grid):
    """The grid as a multiset per cell (the order within a cell does not change what the placer finds)."""
    rects = {k: sorted(r for r, n in v.items() for _ in range(n)) for k, v in grid.rects.items() if v}
    points = {k: sorted((e for e, n in v.items() for _ in range(n)), key=repr) for k, v in grid.points.items() if v}
    return rects, points


xy = st.tuples(st.integers(-5, 5).map(float), st.integers(-5, 5).map(float))
box = st.tuples(xy, st.tuples(st.just(3.0), st.just(-8.0), st.integers(5, 30).map(float), st.just(12.0)))
piece = st.tuples(st.tuples(st.sampled_from("abc"), st.integers(0, 2)), xy, xy)


@st.composite
def steps(draw):
    """Lists of obstacles over a few steps: each step keeps most entries (the same objects), swaps a few for new
    ones, sometimes repeats an entry, and sometimes changes the length."""
    lists = [[draw(xy) for _ in range(draw(st.integers(0, 6)))], [draw(piece) for _ in range(draw(st.integers(0, 5)))],
             [draw(box) for _ in range(draw(st.integers(0, 5)))]]
    out = [tuple(list(x) for x in lists)]
    for _ in range(draw(st.integers(1, 6))):
        nxt = []
        for k, cur in enumerate(out[-1]):
            new = list(cur)
            make = (xy, piece, box)[k]
            for i in range(len(new)):
                action = draw(st.integers(0, 5))
                if action == 0:
                    new[i] = draw(make)  # moved
                elif action == 1 and new:
                    new[i] = new[draw(st.integers(0, len(new) - 1))]  # a repeat of another entry
                elif action == 2:
                    new[i] = tuple(new[i])  # an equal copy, not the same object
            if draw(st.booleans()) and draw(st.booleans()):
                new.append(draw(make))  # the list grows
            elif new and draw(st.booleans()) and draw(st.booleans()):
                new.pop(draw(st.integers(0, len(new) - 1)))
            nxt.append(new if draw(st.integers(0, 4)) else cur)  # or the very same list again
        out.append(tuple(nxt))
    return out


@settings(max_examples=200, deadline=None)
@given(steps())
def test_a_kept_grid_updated_step_by_step_holds_what_a_fresh_grid_holds(sequence):
    cache = ObstacleCache()
    for markers, pieces, boxes in sequence:
        grid = cache.update(FRAME, to_px, markers, pieces, boxes)
        assert content(grid) == content(fresh(markers, pieces, boxes))


def test_a_rect_or_point_put_in_twice_stays_until_taken_out_twice():
    grid = _Grid()
    r = (10.0, 10.0, 80.0, 20.0)  # spans two cells
    grid.add_rect(r)
    grid.add_rect(r)
    grid.add_point(12.0, 15.0, "a")
    grid.add_point(12.0, 15.0, "a")
    assert grid.crossings(r, "b") == 2 and grid.crossings(r, "a") == 0  # each sample counts, as in a list
    grid.remove_rect(r)
    grid.remove_point(12.0, 15.0, "a")
    assert grid.hits_rect((50.0, 12.0, 5.0, 5.0)) and grid.crossings(r, "b") == 1
    grid.remove_rect(r)
    grid.remove_point(12.0, 15.0, "a")
    assert not grid.hits_rect((50.0, 12.0, 5.0, 5.0)) and grid.crossings(r, "b") == 0
    assert content(grid) == ({}, {})
