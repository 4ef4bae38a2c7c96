"""Rig.point / Rig.rope by an id index: equal to a linear search, fresh for every new Rig, invisible to equality."""

from __future__ import annotations

import threading
from dataclasses import replace

import pytest

from solver.model import Point, Rig
from tests.bench.test_bench_solver import net


def _scan_point(rig: Rig, pid: str) -> Point:
    """What Rig.point used to do: the first point with the id, by a linear search."""
    for p in rig.points:
        if p.id == pid:
            return p
    raise KeyError(pid)


def test_every_look_up_equals_a_linear_search():
    rig = net(6, 5)
    for p in rig.points:
        assert rig.point(p.id) is _scan_point(rig, p.id)
        assert rig.has_point(p.id)
    for r in rig.ropes:
        assert rig.rope(r.id) is next(x for x in rig.ropes if x.id == r.id)
        assert rig.has_rope(r.id)
    with pytest.raises(KeyError):
        rig.point("no-such-point")
    with pytest.raises(KeyError):
        rig.rope("no-such-rope")
    assert not rig.has_point("no-such-point") and not rig.has_rope("no-such-rope")


def test_an_edited_rig_looks_up_its_own_points():
    rig = net(3, 2)
    assert rig.point("n0_0").x == 0.0  # the index of the first rig is built
    moved = rig.moved("n0_0", 5.0, 6.0)
    assert moved.point("n0_0").xy == (5.0, 6.0) and rig.point("n0_0").xy == (0.0, 0.0)
    gone = moved.without_point("n0_0")
    assert not gone.has_point("n0_0") and moved.has_point("n0_0")
    renamed = replace(rig, ropes=rig.ropes[1:])
    assert not renamed.has_rope(rig.ropes[0].id) and rig.has_rope(rig.ropes[0].id)


def test_a_repeated_id_finds_the_first_point_as_the_search_did():
    a, b = Point("P", "anchor", 0.0, 0.0), Point("P", "anchor", 1.0, 1.0)
    rig = Rig(points=(a, b))
    assert rig.point("P") is a is _scan_point(rig, "P")


def test_the_index_is_not_part_of_the_rig_value():
    rig = net(3, 2)
    twin = replace(rig)
    rig.point("n0_0")  # one has its index, the other not
    assert rig == twin and repr(rig) == repr(twin)


def test_threads_looking_up_at_once_share_one_index():
    rig = net(20, 20)
    found: list[object] = []
    barrier = threading.Barrier(8)

    def look():
        barrier.wait()
        found.append(rig.point("n19_19"))
        found.append(rig._index)

    threads = [threading.Thread(target=look) for _ in range(8)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(30)
    points, indexes = found[0::2], found[1::2]
    assert len(points) == 8 and all(p is _scan_point(rig, "n19_19") for p in points)
    assert all(ix is indexes[0] for ix in indexes)
