"""The span of a part (the size its bare passes are spaced by) against plane geometry.

The span is twice the largest distance of a part's distinct points from their centroid
(solver.part_span): for two points it is their distance, for a rectangle's corners its
diagonal (Pythagoras), and a rigid motion of the drawing (turn, shift, mirror) leaves it
unchanged (distances are invariant under Euclidean motions: any geometry text).
"""

from __future__ import annotations

import math

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from solver import equilibrium
from solver.structure import size_groups as _size_groups
from solver.part_span import part_spans
from tests import rigs
from tests.solver.test_solver_properties import random_rigs


def test_two_points_span_their_distance_and_a_rectangle_its_diagonal():
    xy = np.array([[0.0, 0.0], [3.0, 4.0], [10.0, 0.0], [16.0, 0.0], [16.0, 5.0], [10.0, 5.0]])
    spans = part_spans(xy, np.array([1, 0, 2, 3, 4, 5]), np.array([0, 2]))  # part 0: two points; part 1: a rectangle
    assert spans[0] == 5.0  # 3-4-5 triangle
    assert math.isclose(spans[1], math.hypot(6.0, 5.0), rel_tol=1e-15)


def test_a_part_lists_each_of_its_points_once():
    # an anchor that ends two pieces of a part, and a free point that ends one: each counted once
    rig = rigs.make_rig([rigs.anchor("A", 0.0, 0.0), rigs.anchor("B", 14.0, 0.0), rigs.free("P", 7.0, -3.0)],
                        [rigs.rope("r0", ["A", "P"]), rigs.rope("r1", ["A", "P", "B"])], [rigs.force("P", 100.0, 270.0)])
    s = equilibrium._compiled(rig, None)
    gather, starts = _size_groups(s)
    assert sorted(gather.tolist()) == sorted(s.point_ids.index(p) for p in ("A", "B", "P"))
    assert starts.tolist() == [0]


@settings(max_examples=60, deadline=None)
@given(pts=st.lists(st.tuples(st.floats(-50, 50), st.floats(-50, 50)), min_size=2, max_size=12),
       angle=st.floats(0.0, 360.0), dx=st.floats(-500, 500), mirror=st.booleans())
def test_the_span_does_not_change_when_the_drawing_is_turned_shifted_or_mirrored(pts, angle, dx, mirror):
    xy = np.array(pts)
    c, s = math.cos(math.radians(angle)), math.sin(math.radians(angle))
    moved = (xy * [-1.0 if mirror else 1.0, 1.0]) @ np.array([[c, s], [-s, c]]) + [dx, -dx]
    gather, starts = np.arange(len(xy)), np.array([0, len(xy) // 2])
    np.testing.assert_allclose(part_spans(moved, gather, starts), part_spans(xy, gather, starts),
                               rtol=1e-12, atol=1e-9)  # round-off of coordinates up to ~550 m


@settings(max_examples=25, deadline=None)
@given(rig=random_rigs(), angle=st.floats(0.0, 360.0))
def test_bare_pass_spacing_is_the_same_for_the_rig_turned_on_the_page(rig, angle):
    # the spacing a two-blocked bare pass rests at is part of the answer: it must not follow the page axes
    a = equilibrium._compiled(rig, None).s_min.copy()
    b = equilibrium._compiled(rigs.transformed(rig, angle_deg=angle), None).s_min
    np.testing.assert_allclose(b, a, rtol=1e-12)


@settings(max_examples=40, deadline=None)
@given(pts=st.lists(st.tuples(st.floats(-1e4, 1e4), st.floats(-1e4, 1e4)), min_size=2, max_size=12))
def test_one_part_is_spanned_bit_for_bit_as_it_is_beside_another_part(pts):
    # a rig of one part takes a shorter path (its centre from every point at once): the same numbers as the
    # per-part path gives that part beside a second one (exact equality: a spacing is part of the answer)
    xy = np.array(pts)
    n = len(xy)
    alone = part_spans(xy, np.arange(n), np.array([0]))
    beside = part_spans(np.vstack([xy, xy[::-1] + 1.0]), np.arange(2 * n), np.array([0, n]))
    assert alone.tolist() == beside[:1].tolist()
