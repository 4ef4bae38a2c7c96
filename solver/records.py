"""A solved System's state made into the Result a rigger reads: tensions, anchor loads, MA, warnings, failures.

Records of the last Result of the same structure whose numbers are bit for bit the same are handed on
as the same objects (:mod:`solver.memo`), so that what a drag step did not move is recognised by identity.
"""

from __future__ import annotations

import math

import numpy as np

from solver import free_directions, memo, pass_order
from solver.capacity import utilization as capacity_utilization
from solver.evaluate import State, contact_stiffness
from solver.extreme_specs import unsettled_words
from solver.ma_input import drawn_pull_N
from solver.mechanism import mechanism
from solver.newton import ACCEPT_REL, force_scale, max_norm, point_norms
from solver.outcome import Solved
from solver.result import AnchorResult, Result, SegmentResult, Warning_, record
from solver.system import System
from solver.units import format_force_sig, format_length
from solver.wording import heading_words, point_name

#: A pass within this fraction of its minimum spacing from its neighbour counts as jammed there.
JAM_MARGIN = 0.01


def all_points(s: System, st: State) -> dict[str, tuple[float, float]]:
    """Every point's solved position (site metres); a point at the bit for bit same place as in the last
    Result of the same structure keeps that Result's tuple (a drag step moves the dragged part only)."""
    ox, oy = float(s.origin[0]), float(s.origin[1])
    xy = np.ascontiguousarray(st.xy)
    key = (s.point_ids, (ox, oy))
    old, moved = memo.POINT_ROWS.changed(key, xy)
    if old is None:
        xys = [(x + ox, y + oy) for x, y in xy.tolist()]
    else:
        xys = list(old)
        changed = np.flatnonzero(moved).tolist()
        for i, (x, y) in zip(changed, xy[changed].tolist()):
            xys[i] = (x + ox, y + oy)
    memo.POINT_ROWS.keep(key, xy, xys)
    pos = dict(zip(s.point_ids, xys))
    if len(pos) == len(s.rig.points):  # every point is structural: already in the rig's order
        return pos
    return {p.id: pos.get(p.id, (p.x, p.y)) for p in s.rig.points}


def _resultants(s: System, st: State) -> np.ndarray:
    """Force the ropes exert on every structural point (n_points, 2), N."""
    n = len(s.point_ids)
    if not s.n_pieces:
        return np.zeros((n, 2))
    pull = st.N[:, None] * st.u  # rope pulls a toward b and b toward a
    # every a end, then every b end, each added in piece order (the sums np.add.at would make)
    both = np.concatenate((pull, -pull))
    f = np.empty((n, 2))
    f[:, 0] = np.bincount(s.piece_ends, both[:, 0], minlength=n)
    f[:, 1] = np.bincount(s.piece_ends, both[:, 1], minlength=n)
    return f


def anchor_record(fx: float, fy: float, capacity: float | None, sf: float, kind: str = "strength") -> AnchorResult:
    """The AnchorResult of a rope force (fx, fy) N on a point of ``capacity`` (of ``kind``) at safety factor ``sf``."""
    mag = math.hypot(fx, fy)
    util = capacity_utilization(mag, capacity, kind, sf)
    return record(AnchorResult, force_N=mag,
                  direction_deg=math.degrees(math.atan2(fy, fx)) % 360.0 if mag > 0 else 0.0,
                  capacity_N=capacity, utilization=util, fx_N=fx, fy_N=fy, capacity_kind=kind)


def _mech_advantage(s: System, st: State, f: np.ndarray | None = None) -> float | None:
    """Force delivered to the load points over the input (haul forces, else the forces drawn off the loads:
    :func:`solver.ma_input.drawn_pull_N`); None when nothing pulls (a held load has no MA).

    ``f``: the rope forces on the points at ``st`` (:func:`_resultants`) when already known.
    """
    rig = s.rig
    load_ids = s.load_at
    if not load_ids:
        return None
    if f is None:
        f = _resultants(s, st)
    delivered = float(sum(math.hypot(fx, fy) for fx, fy in f[load_ids].tolist()))
    hauled = s.run_hauled
    inp = float(s.run_P[hauled].sum()) if hauled.any() else drawn_pull_N(rig)
    return delivered / inp if inp > 0 else None


def _blocked_pair(s: System, k: int) -> tuple[str, str]:
    """(the pass that ran in, the point it ran into) of piece ``k`` closed up to its minimum spacing."""
    pa, pb = s.point_ids[s.a[k]], s.point_ids[s.b[k]]
    return (pb, pa) if s.free[s.b[k]] else (pa, pb)





def _jammed_piece(s: System, st: State) -> int | None:
    """The piece between two passes closest to (or deepest into) their minimum spacing, when a pass is
    jammed or within JAM_MARGIN of it; else None."""
    if not s.n_pieces or not s.contact_on.any():
        return None
    ratio = np.where(s.contact_on, st.l / s.s_min, np.inf)
    k = int(np.argmin(ratio))
    return k if ratio[k] <= 1.0 + JAM_MARGIN else None


def _two_blocked(s: System, st: State, kc: np.ndarray) -> list[Warning_]:
    """A warning for each pair of passes pressed together at their minimum spacing (out of throw)."""
    out: list[Warning_] = []
    seen: set[str] = set()
    for k in np.flatnonzero(st.pen > 0):
        subject, other = _blocked_pair(s, int(k))
        if subject in seen:
            continue
        seen.add(subject)
        push = float(kc[k] * st.pen[k])
        shown = s.rig.display  # every message in the user's units
        out.append(Warning_(
            code="two-blocked", subject=subject, severity="danger",
            message=f'on rope "{s.piece_rope[k]}" the pass at "{subject}" has run into '
                    f'"{other}" ({format_length(float(s.s_min[k]), shown.length)} apart): the system is '
                    f"two-blocked (out of throw) and the hardware bears {'' if push >= 0.5 else 'under '}"
                    f"{format_force_sig(push if push >= 0.5 else 1.0, shown.force, 2 if push >= 0.5 else 1)} "
                    "against each other that no rope carries; hauling further only loads the hardware — reset it"))
    return out


def _segment_records(s: System, st: State, sf: float) -> list[SegmentResult]:
    """A SegmentResult per piece; a piece whose tension, length and strain are bit for bit those of the
    last Result of the same structure (and the same safety factor and MBS) keeps that Result's record."""
    rows = np.empty((s.n_pieces, 3))  # the columns T, l, eps (np.stack's bookkeeping costs more than the copy)
    rows[:, 0], rows[:, 1], rows[:, 2] = st.T, st.l, st.eps
    key = (s.piece_rope, sf, s.piece_mbs)
    old, moved = memo.SEGMENT_ROWS.changed(key, rows)
    if old is None:
        changed: range | list[int] = range(s.n_pieces)
        segments = [None] * s.n_pieces
        T, length, eps, mbs, index = st.T, st.l, st.eps, s.piece_mbs, s.piece_index
    else:
        changed = np.flatnonzero(moved).tolist()
        segments = list(old)
        idx = np.asarray(changed, dtype=np.intp)
        T, length, eps, mbs, index = st.T[idx], st.l[idx], st.eps[idx], s.piece_mbs[idx], s.piece_index[idx]
    if len(changed):
        util = (T * sf / mbs).tolist()  # whole arrays to Python numbers at once (= float())
        for i, k, t, ln, e, u in zip(changed, index.tolist(), T.tolist(), length.tolist(), eps.tolist(), util):
            segments[i] = record(SegmentResult, rope=s.piece_rope[i], index=k,
                                 from_point=s.piece_from[i], to_point=s.piece_to[i], tension_N=t, length_m=ln,
                                 strain=e, utilization=u, run=s.piece_run_in_rope[i])
    memo.SEGMENT_ROWS.keep(key, rows, segments)
    return segments


def _point_records(s: System, at: list, kept: memo.LastRows, f: np.ndarray, f_list: list, sf: float,
                   rated: bool) -> dict[str, AnchorResult]:
    """An AnchorResult of the rope force on each structural point ``at`` (with the point's capacity when
    ``rated``); one whose force is bit for bit that of the last Result of the same structure, with the
    same capacity and safety factor, keeps that Result's record (``kept``)."""
    if not at:
        return {}
    points = s.points
    rows = f[at]
    key = (at, sf)
    old, moved = kept.changed(key, rows)
    caps = [points[i].capacity_N for i in at] if rated else [None] * len(at)
    kinds = [points[i].capacity_kind for i in at] if rated else ["strength"] * len(at)
    if old is None:
        made = [None] * len(at)
        redo = range(len(at))
    else:  # only the points whose force or capacity changed
        made = list(old)
        redo = [j for j, (m, a, c, k) in enumerate(zip(moved.tolist(), old, caps, kinds))
                if m or a.capacity_N != c or a.capacity_kind != k]
    for j in redo:
        made[j] = anchor_record(*f_list[at[j]], caps[j], sf, kinds[j])
    kept.keep(key, rows, made)
    ids = s.point_ids
    return {ids[i]: a for i, a in zip(at, made)}


def _haul_forces(s: System) -> dict[str, float]:
    """The haul force at each haul point, N (the sum of the runs hauled there); a drag step's rig hauls with the
    same forces, so the last Result's dict (and float objects) is handed on (:data:`solver.memo.LAST_HAUL`)."""
    last = memo.LAST_HAUL.snapshot()
    if last is not None:
        (hauled, points, forces), kept = last
        if hauled is s.run_hauled and points is s.run_haul_point and (forces is s.run_P or np.array_equal(forces, s.run_P)):
            return kept
    haul: dict[str, float] = {}
    for hauled, hp, P in zip(s.run_hauled.tolist(), s.run_haul_point, s.run_P.tolist()):
        if hauled:
            haul[hp] = haul.get(hp, 0.0) + P
    # a compiled topology's arrays are read-only (shared by every System of it): kept as they are
    memo.LAST_HAUL.put((s.run_hauled, s.run_haul_point, s.run_P if not s.run_P.flags.writeable else s.run_P.copy()),
                       haul)
    return haul


def _deflections(s: System, st: State) -> dict[str, float]:
    """Turn (degrees) of the rope at every middle pass; a pass whose two pieces point bit for bit as in the
    last Result of the same structure keeps that Result's number (the same float object)."""
    if not s.middle_passes:
        return {}
    key = (s.middle_passes,)
    old, moved = memo.TURN_ROWS.changed(key, st.u)
    if old is None:
        turns = [0.0] * len(s.middle_passes)
        redo = range(len(s.middle_passes))
    else:  # only the passes with a piece that turned
        turns = list(old)
        redo = np.flatnonzero(moved[s.middle_in] | moved[s.middle_out]).tolist()
    if redo:
        u_list = st.u.tolist()
        for j in redo:
            mp = s.middle_passes[j]
            (ax, ay), (bx, by) = u_list[mp.piece_in], u_list[mp.piece_out]
            c = ax * bx + ay * by
            turns[j] = math.degrees(math.acos(max(-1.0, min(1.0, c))))
    memo.TURN_ROWS.keep(key, st.u, turns)
    return dict(zip(s.middle_keys, turns))


def build_result(s: System, sol: Solved, motion: str) -> Result:
    rig = s.rig
    st = sol.state
    sf = rig.settings.min_safety_factor
    segments = _segment_records(s, st, sf)
    f = _resultants(s, st)
    f_list = f.tolist()  # Python numbers at once (same values as float())
    anchors = _point_records(s, s.anchor_at, memo.ANCHOR_ROWS, f, f_list, sf, rated=True)  # fixed anchors
    loads = _point_records(s, s.load_at, memo.LOAD_ROWS, f, f_list, sf, rated=False)  # force delivered to each load
    haul = _haul_forces(s)
    deflection = _deflections(s, st)
    scale = force_scale(s, st)
    residual = max_norm(st.g) if s.n_dof else 0.0
    warnings = _two_blocked(s, st, contact_stiffness(s)) if st.closed else []
    for pid in s.ignored_forces:
        warnings.append(Warning_("force-on-fixed-point", pid,
                                 f'the force drawn at "{pid}" acts on a fixed point and is not part of the solve'))
    status, message, subject = "ok", "", ""
    # the length equation of every taut tied run must hold
    bad_len = None
    if s.n_pieces:
        unst = np.add.reduceat(st.l / (1.0 + st.eps), s.run_start)
        tight = s.run_tied & (st.tau > 0)
        err = np.abs(unst - s.run_L0) / s.run_L0
        if (tight & (err > 1e-9)).any():
            bad_len = int(np.flatnonzero(tight & (err > 1e-9))[0])
    if (st.T < 0).any() or not sol.converged or bad_len is not None or residual > ACCEPT_REL * max(scale, 1e-9):
        status = "diverged"
        worst = int(np.argmax(point_norms(st.g))) if s.n_dof else 0
        subject = s.point_ids[np.flatnonzero(s.free)[worst]] if s.n_dof else ""
        jammed = _jammed_piece(s, st)
        if jammed is not None:  # a pass at its neighbour: name it (that is where the solve stuck)
            k = jammed
            runner, other = _blocked_pair(s, k)
            message = (f"no equilibrium found after {sol.iterations} iterations: on rope \"{s.piece_rope[k]}\" "
                       f"the pass at {point_name(rig, runner)} runs into {point_name(rig, other)} "
                       "(two-blocked) and the rig could not be settled with it jammed there (largest imbalance "
                       f"{format_force_sig(residual, rig.display.force)} at point {point_name(rig, subject) if subject else ''}); "
                       "give that pass room to run, or tie the rope off where it jams")
        else:
            message = (f"no equilibrium found after {sol.iterations} iterations: the largest imbalance is "
                       f"{format_force_sig(residual, rig.display.force)} at point {point_name(rig, subject) if subject else ''}; "
                       + unsettled_words(rig))
    ma = _mech_advantage(s, st, f)  # (the anchors above are the fixed anchors; loads any load point)
    if not (s.has_friction and motion != "hold"):
        ma_ideal = ma  # no friction acts: the ideal is the actual
    else:
        ma_ideal = _mech_advantage(s, sol.ideal) if sol.ideal is not None else None
    return Result(status=status, message=message, subject=subject, iterations=sol.iterations,
                  residual_N=residual, points=all_points(s, st), segments=tuple(segments), anchors=anchors,
                  loads=loads, haul=haul, ma_actual=ma, ma_ideal=ma_ideal, deflection_deg=deflection,
                  warnings=tuple(warnings))


def contact_off(s: System, sol: Solved | Result) -> np.ndarray:
    """The pieces of a solved state held by a contact that is no equilibrium of the model (solver.pass_order)."""
    if isinstance(sol, Solved) and sol.converged:
        return pass_order.inconsistent(s, sol.state)
    return np.zeros(0, dtype=np.intp)


def contact_failed(s: System, sol: Solved, k: int) -> Result:
    """The words for a state whose contact on piece ``k`` :func:`contact_off` refused: never reported ``ok``."""
    a, b = _blocked_pair(s, k)
    return Result(status="diverged", subject=a, iterations=sol.iterations,
                  message=f"no trustworthy answer: point {point_name(s.rig, a)} ended held against "
                          f"{point_name(s.rig, b)} by a contact that is not along their rope (it was carried "
                          "across it); move it back to its side and solve again")


def runaway_result(s: System, sol: Solved) -> Result:
    rig = s.rig
    i = sol.runaway
    pid = s.point_ids[i]
    dx, dy = sol.state.xy[i] - s.xy0[i]
    heading = heading_words(float(dx), float(dy), rig.view == "elevation")
    return Result(status="diverged", subject=pid, iterations=sol.iterations,
                  message=f"the rig cannot hold the load: point {point_name(rig, pid)} runs away {heading} — "
                          "the forces pulling it that way are more than the ropes can resist in any position "
                          "(for example a haul too weak for the mechanical advantage, or a load with nothing "
                          "under it)")



def mechanism_result(s: System, st: State, kc: np.ndarray, iters: int) -> Result | None:
    mech = mechanism(s, st, kc)
    if mech is None:
        return None
    i, share = mech
    pid = s.point_ids[i]
    words = free_directions.free_words(share, s.rig.view == "elevation")
    return Result(status="mechanism", subject=pid, iterations=iters, points=all_points(s, st),
                  message=f"point {point_name(s.rig, pid)} is not held: it {words} "
                          "with nothing resisting (tie it off, tension its ropes or add a load)")
