"""Which passes friction pulls along their rope, where a pass is placed against its stop, and when a
friction solve's tension ratios are the model's own (solver.friction; ratios from rig-format.md)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from solver import friction
from solver.assembly import compile_rig, contact_stiffness, evaluate
from tests import rigs


def _pulley_between_anchors(eta: float, motion: str = "lower"):
    """A0 - pulley at P1 - A1 on one rope (one run of two pieces), P1 loaded downward."""
    pts = [rigs.anchor("A0", 0.0, 10.0), rigs.anchor("A1", 4.0, 10.0), rigs.free("P1", 1.0, 5.0)]
    ropes = [rigs.rope("r", ["A0", ("P1", "pulley", "pul"), "A1"], pretension_N=50.0)]
    rig = rigs.make_rig(pts, ropes, [rigs.force("P1", 300.0, 270.0)], hardware=[rigs.pulley("pul", eta)],
                        motion=motion)
    return compile_rig(rig, motion)


def test_the_pass_is_pulled_toward_the_tighter_side_and_hold_pulls_none():
    s = _pulley_between_anchors(0.8)
    g = np.ones(s.n_dof)
    p1 = s.point_ids.index("P1")
    assert friction.pulled_passes(s, np.array([100.0, 80.0]), g, "lower") == [(p1, 0)]  # toward A0
    assert friction.pulled_passes(s, np.array([80.0, 100.0]), g, "haul") == [(p1, 1)]  # toward A1
    assert friction.pulled_passes(s, np.array([100.0, 80.0]), g, "hold") == []
    assert friction.pulled_passes(_pulley_between_anchors(1.0), np.array([100.0, 80.0]), g, "lower") == []


def test_a_pass_is_placed_just_inside_its_minimum_spacing_on_the_line_it_came_along():
    s = _pulley_between_anchors(0.8)
    p1 = s.point_ids.index("P1")
    x0 = s.xy0[s.free].reshape(-1)
    x = friction.placed_against(s, x0, p1, 0)
    a0, before, after = s.positions(x0)[s.point_ids.index("A0")], s.positions(x0)[p1], s.positions(x)[p1]
    # plane geometry: on the segment A0-P1, (1 - PLACED_INSIDE) x s_min from A0
    assert math.dist(after, a0) == pytest.approx(s.s_min[0] * (1.0 - friction.PLACED_INSIDE), rel=1e-12)
    cross = (before - a0)[0] * (after - a0)[1] - (before - a0)[1] * (after - a0)[0]
    assert abs(cross) <= 1e-12 and float((before - a0) @ (after - a0)) > 0.0
    assert np.array_equal(np.delete(x, s.dof[p1]), np.delete(x0, s.dof[p1]))  # nothing else moved


def test_ratios_hold_only_for_the_running_ratio_or_a_touching_jam():
    s = _pulley_between_anchors(0.8)
    kc = contact_stiffness(s)
    x0 = s.xy0[s.free].reshape(-1)
    st = evaluate(s, x0, None, kc)
    apart = np.zeros(s.n_pieces)
    touching = np.array([1e-6, 0.0])
    running = friction.weights(s, st.u, "lower")
    assert running[1] == pytest.approx(0.8)  # lowering: eta across the pulley (rig-format.md)
    assert friction.ratios_hold(s, st.u, running, apart, "lower")
    # the static ratio 1 is the model's only for a pass jammed against its neighbour
    assert not friction.ratios_hold(s, st.u, np.ones(2), apart, "lower")
    assert friction.ratios_hold(s, st.u, np.ones(2), touching, "lower")
    assert not friction.ratios_hold(s, st.u, np.array([1.0, 0.9]), touching, "lower")
    assert not friction.ratios_hold(s, st.u, running, apart, "haul")
