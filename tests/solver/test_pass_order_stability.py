"""A jammed grab is reported where it rests stably, whatever was solved before (solver.stability).

A grab two-blocked against its pulley sits on the spacing disc round it; the pair may rest on the
load side or swung over its anchor toward the haul.  Both are equilibria of the model; only one is
stable, and the solver reports that one, warm or cold.  Checks:
* the roll stiffness of the jammed pair, worked by hand: the strands inside the pair pull along
  the radius r with N1 + N2 = +-(P - T) (radial balance), so a sideways move d turns that pull by
  d / r; with the haul strand (P over l_H) and the load rope (T over l_L) that is
  k = +-(P - T) / r + P / l_H + T / l_L (geometric stiffness of a string, any mechanics text);
  negative on the load side when the haul outpulls the load rope (an inverted pendulum);
* where the pair rests: the least of its potential on the disc (``pair_at_rest``), and the load
  force by Hooke's law from there; the pair balances as one body (``jammed_pair_statics``);
* a free Z in line gives P (1 + eta + eta^2) (T-method, check-values.md "Pulley friction");
* warm == cold at every step of a haul point swung round, in fine and coarse steps, back again
  and from the other side; a mirrored rig gives the mirrored answer.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from solver import stability
from solver.equilibrium import solve
from solver.materials import hardware_for
from solver.model import Material, Point, Rig
from solver.templates import place_template
from tests.solver.test_pass_order import SIZE, hooke, jammed_pair_statics, pair_at_rest, z_rig

ANCHOR, LOAD = (0.0, 20.0), (0.0, 0.0)


def haul_at(angle_deg: float, reach: float = 6.0) -> tuple[float, float]:
    """The haul point ``reach`` m from the anchor, ``angle_deg`` anticlockwise from east (90: straight above it)."""
    rad = math.radians(angle_deg)
    return (reach * math.cos(rad), ANCHOR[1] + reach * math.sin(rad))


def kit_rig(name: str, ea: float, haul: tuple[float, float], pull: float, moves: dict[str, float]) -> Rig:
    """The kit's ``name`` system from a fixed load at (0, 0) to an anchor at (0, 20), linear rope of stiffness
    ``ea`` (N), points moved up the line to the heights ``moves`` (m), a haul force ``pull`` (N)."""
    rope = Material(id="lin", kind="rope", mbs_N=1e9, stretch=((ea * 0.1, 0.1),), label="linear rope")
    rig = Rig(points=(Point("L1", "load", *LOAD), Point("A1", "anchor", *ANCHOR)), materials=(rope,))
    rig = place_template(rig, name, load_id="L1", anchor_id="A1", haul_at=haul, hardware="pulley-large")
    rig = replace(rig, ropes=tuple(replace(r, material="lin") for r in rig.ropes))
    for pid, y in moves.items():
        rig = rig.moved(pid, 0.0, y)
    h = next(rig.points_of_kind("haul"))
    return rig.with_point(replace(h, force_N=pull, team=None, force_per_person_N=None))


def _warm_equals_cold(rigs) -> list:
    """Solve each rig warm from the last answer and cold; they agree to round-off.  The warm answers."""
    start, out = None, []
    for rig in rigs:
        warm = solve(rig, start=start)
        cold = solve(rig)
        assert warm.ok and cold.ok, (warm.message, cold.message)
        for pid in warm.points:
            np.testing.assert_allclose(warm.points[pid], cold.points[pid], atol=1e-6, err_msg=pid)
        assert warm.loads["L1"].force_N == pytest.approx(cold.loads["L1"].force_N, rel=1e-7)
        out.append(warm)
        start = dict(warm.points)
    return out


def _rests_where_the_hand_says(grab, haul, pull: float, ea: float, l0: float) -> None:
    rests = pair_at_rest(ANCHOR, LOAD, haul, pull, ea, l0)
    assert min(np.linalg.norm(np.asarray(grab) - g) for g in rests) <= 1e-4, (grab, rests)  # penalty ~1e-5 m


# --- the roll stiffness of a jammed pair, by hand --------------------------------------------------------

def _roll_stiffness(st, s, sign: float) -> float:
    """k = sign (P - T) / r + P / l_H + T / l_L at solved state ``st`` (module docstring)."""
    xy = {pid: st.xy[i] for i, pid in enumerate(s.point_ids)}
    piece = {(s.point_ids[a], s.point_ids[b]): k for k, (a, b) in enumerate(zip(s.a.tolist(), s.b.tolist()))}
    t, p = st.T[piece[("L1", "G1")]], st.T[piece[("G1", "H1")]]
    r = np.linalg.norm(xy["G1"] - xy["A1"])
    return sign * (p - t) / r + p / np.linalg.norm(xy["H1"] - xy["G1"]) + t / np.linalg.norm(xy["G1"] - xy["L1"])


def test_the_pair_balanced_below_its_pulley_is_unstable_and_the_answer_swung_over_it_is_stable(monkeypatch):
    # a Z exactly in line, soft rope, 16 kN haul: Newton lands on the balanced state below the pulley first
    seen = []
    real = stability.unstable_mode

    def spy(s, st):
        seen.append((s, st))
        return real(s, st)

    monkeypatch.setattr(stability, "unstable_mode", spy)
    res = solve(z_rig(9_000.0, (0.0, 26.0), 19.0, 16_000.0))
    assert res.ok
    (s, below), (_, above) = seen[0], seen[-1]
    first, last = stability.softest(s, below), stability.softest(s, above)
    g = s.point_ids.index("G1")
    assert below.xy[g][1] < above.xy[g][1]  # the first answer below the anchor pulley, the last above it
    assert first.stiffness == pytest.approx(_roll_stiffness(below, s, -1.0), rel=1e-3) and first.stiffness < 0
    assert abs(first.mode[2 * s.free_ids.index("G1")]) == pytest.approx(1.0, abs=1e-6)  # sideways, along x
    assert last.stiffness == pytest.approx(_roll_stiffness(above, s, 1.0), rel=1e-3) and last.stiffness > 0
    # below, the contact pushes a piece (negative stiffness across it); swung over, every piece pulls
    assert (below.N < 0).any() and (above.N >= 0).all()


def test_a_free_rig_pays_no_stability_test(monkeypatch):
    # no piece pushed by a contact: the tangent is positive semidefinite and no eigenvalue is computed, for a
    # free Z, nor for one jammed and swung over its anchor (every piece pulls)
    monkeypatch.setattr(stability, "part_tangent", lambda *a: pytest.fail("no stability test needed"))
    res = solve(z_rig(200_000.0, (0.0, 26.0), 15.0, 4_000.0))
    assert res.ok and "two-blocked" not in {w.code for w in res.warnings}
    start = None
    for angle in (70.0, 75.0, 80.0):  # a drag of the haul point of a jammed Z, each step warm
        res = solve(z_rig(9_000.0, haul_at(angle), 19.0, 16_000.0), start=start)
        assert res.ok and "two-blocked" in {w.code for w in res.warnings}
        start = dict(res.points)


# --- the pinned case and its variants: a Z's haul point swung in line -------------------------------------

SWINGS = {
    "coarse": (70.0, 90.0),
    "as pinned": (70.0, 80.0, 85.0, 90.0),
    "fine": tuple(np.arange(70.0, 90.01, 1.0)),
    "swung back": (70.0, 80.0, 90.0, 100.0, 110.0, 100.0, 90.0, 80.0, 70.0, 90.0),
    "from the other side": (110.0, 100.0, 95.0, 90.0),
}


@pytest.mark.parametrize("swing", list(SWINGS), ids=list(SWINGS))
def test_a_z_swung_in_line_gives_the_cold_answer_at_every_step(swing):
    # soft rope, 16 kN: the jammed pair is pulled over its anchor toward the haul (P >> T), at every angle
    rigs = [z_rig(9_000.0, haul_at(a), 19.0, 16_000.0) for a in SWINGS[swing]]
    for angle, rig, res in zip(SWINGS[swing], rigs, _warm_equals_cold(rigs)):
        _rests_where_the_hand_says(res.points["G1"], haul_at(angle), 16_000.0, 9_000.0, 19.0)
        jammed_pair_statics(rig, res)  # incl. the load by Hooke from where the grab rests
    # in line: straight above the pulley, at its size; the load rope stretched to 20.1 m (Hooke)
    assert res.points["G1"][0] == pytest.approx(0.0, abs=1e-9)
    assert res.points["G1"][1] == pytest.approx(20.0 + SIZE, abs=1e-4)
    assert res.loads["L1"].force_N == pytest.approx(hooke(9_000.0, 20.0 + SIZE, 19.0), rel=1e-4)


def test_a_mirrored_swing_gives_the_mirrored_answers():
    angles = SWINGS["as pinned"]
    right = _warm_equals_cold([z_rig(9_000.0, haul_at(a), 19.0, 16_000.0) for a in angles])
    left = _warm_equals_cold([z_rig(9_000.0, haul_at(180.0 - a), 19.0, 16_000.0) for a in angles])
    for r, m in zip(right, left):
        np.testing.assert_allclose(np.array(m.points["G1"]) * [-1.0, 1.0], r.points["G1"], atol=1e-9)
        assert m.loads["L1"].force_N == pytest.approx(r.loads["L1"].force_N, rel=1e-9)


def test_a_z_whose_load_rope_outpulls_the_haul_stays_below_its_pulley_at_every_step():
    # EA 30 kN, grab drawn 5 m below: jammed, T = 30 kN x 4.9 / 15 = 9.8 kN (Hooke) > P = 4 kN: the pair
    # hangs toward the load, and swinging the haul in line changes nothing of that
    angles = (70.0, 80.0, 90.0, 110.0, 90.0)
    rigs = [z_rig(30_000.0, haul_at(a), 15.0, 4_000.0) for a in angles]
    for angle, rig, res in zip(angles, rigs, _warm_equals_cold(rigs)):
        _rests_where_the_hand_says(res.points["G1"], haul_at(angle), 4_000.0, 30_000.0, 15.0)
        jammed_pair_statics(rig, res)
    assert res.points["G1"][1] == pytest.approx(20.0 - SIZE, abs=1e-4)
    assert res.loads["L1"].force_N == pytest.approx(hooke(30_000.0, 20.0 - SIZE, 15.0), rel=1e-4)


def test_a_haul_just_stronger_than_the_load_rope_swings_the_pair_part_way():
    # 500 N haul, T = 426 N below the pulley and 521 N above it (Hooke): the pair turns until the two balance,
    # off to one side (either side: the rig is symmetric); warm from each step as a pull slider does
    rigs = [z_rig(9_000.0, (0.0, 26.0), 19.0, p) for p in (380.0, 440.0, 500.0)]
    for pull, res in zip((380.0, 440.0, 500.0), _warm_equals_cold(rigs)):
        _rests_where_the_hand_says(res.points["G1"], (0.0, 26.0), pull, 9_000.0, 19.0)
    assert 0.05 < abs(res.points["G1"][0]) < SIZE


def test_a_free_z_swung_in_line_gives_the_t_method_mechanical_advantage():
    # stiff rope, grab drawn 5 m below: the Z runs free; in line the load gets P (1 + eta + eta^2)
    angles = (70.0, 85.0, 90.0, 100.0, 90.0)
    rigs = [z_rig(200_000.0, haul_at(a), 15.0, 4_000.0) for a in angles]
    res = _warm_equals_cold(rigs)[-1]
    eta = hardware_for(rigs[-1], "pulley-large").efficiency
    # check-values.md, "Pulley friction and actual mechanical advantage": 3:1 (Z) = 1 + eta + eta^2
    assert res.loads["L1"].force_N == pytest.approx(4_000.0 * (1.0 + eta + eta * eta), rel=1e-7)
    assert res.points["G1"][1] < 20.0 - SIZE


# --- a 2:1 and a compound two-blocked at a pulley ---------------------------------------------------------

def test_a_2_to_1_swung_in_line_jams_its_pulley_over_the_anchor_knot_at_every_step():
    # the 2:1's rope tied at the anchor, its pulley on the grab drawn 1 m below; 2 kN haul beyond the anchor:
    # the pulley runs up to the knot and the pair swings over it toward the haul (P > T = 521 N above it);
    # it stays jammed there as friction can draw it up the rope only with (1 - eta) P = 100 N < T
    angles = (70.0, 80.0, 90.0, 100.0, 110.0, 90.0)
    rigs = [kit_rig("2:1", 9_000.0, haul_at(a), 2_000.0, {"G1": 19.0}) for a in angles]
    for angle, res in zip(angles, _warm_equals_cold(rigs)):
        _rests_where_the_hand_says(res.points["G1"], haul_at(angle), 2_000.0, 9_000.0, 19.0)
        grab = np.array(res.points["G1"])
        assert res.loads["L1"].force_N == pytest.approx(hooke(9_000.0, float(np.linalg.norm(grab)), 19.0), rel=1e-6)
        assert "two-blocked" in {w.code for w in res.warnings}
    assert res.points["G1"][1] == pytest.approx(20.0 + SIZE, abs=1e-4)


def test_a_compound_whose_second_grab_jams_at_the_anchor_pulley_gives_the_cold_answer_at_every_step():
    # 3:1 on 3:1: the second Z's grab T1 (drawn 0.5 m below the anchor) jams at the anchor pulley and swings
    # over it toward the 4 kN haul; the first Z runs free on its tail
    angles = (70.0, 80.0, 90.0, 100.0, 110.0, 90.0)
    rigs = [kit_rig("9:1", 9_000.0, haul_at(a), 4_000.0, {"G1": 19.0, "T1": 19.5}) for a in angles]
    eta = hardware_for(rigs[0], "pulley-large").efficiency
    for angle, res in zip(angles, _warm_equals_cold(rigs)):
        tail = next(s for s in res.segments_of("main1") if s.index == 3).tension_N  # first Z's tail, at T1
        t1, h = np.array(res.points["T1"]), np.array(haul_at(angle))
        assert np.linalg.norm(t1 - np.array(ANCHOR)) == pytest.approx(SIZE, abs=1e-4)
        # the pair T1 + pulley as one body: the haul strand and the tail leave it, so their resultant points
        # along the radius from the anchor (the strands between them pull along it; statics)
        g1 = np.array(res.points["G1"])
        net = 4_000.0 * (h - t1) / np.linalg.norm(h - t1) + tail * (g1 - t1) / np.linalg.norm(g1 - t1)
        radial = (t1 - np.array(ANCHOR)) / SIZE
        assert abs(net[0] * radial[1] - net[1] * radial[0]) <= 1e-6 * 4_000.0
        assert net @ radial > 0  # pulled away from the anchor: the stable side
    # in line the first Z runs free: T-method 1 + eta + eta^2 on its tail (check-values.md)
    assert res.points["T1"][1] == pytest.approx(20.0 + SIZE, abs=1e-4)
    assert res.loads["L1"].force_N == pytest.approx(tail * (1.0 + eta + eta * eta), rel=1e-6)
