"""Compile a Rig once into a :class:`solver.system.System` for the equilibrium solver.

Two parts: :func:`compile_topology` (everything but the coordinates) and :func:`with_geometry`,
so that a moved copy of a rig, as a drag makes, reuses the first; :func:`with_forces` does the
same for a rig whose forces changed.  Invalid rigs raise :class:`solver.errors.RigModelError`
with the offending id.
"""

from __future__ import annotations

import copy
import math
from collections.abc import Callable
from dataclasses import dataclass, field, fields, replace

import numpy as np
from numpy.typing import NDArray

from solver import memo, pass_order
from solver.errors import RigModelError
from solver.evaluate import contact_stiffness
from solver.materials import hardware_for, material_for
from solver.model import MIDDLE_HOWS, MOTIONS, SHEAVE_HOWS, STANDARD_GRAVITY, Hardware, Material, Rig
from solver.stretch import StretchCurve
from solver.part_span import part_spans
from solver.structure import component_forces, component_sizes, finish_topology, report_indices, size_groups
from solver.system import (PASS_EDGE, PASS_NONE, PASS_PULLEY, PASS_SLIDING, FloatArray, IntArray, MiddlePass,
                           System, per_piece)
from solver.weak_links import piece_efficiency

#: Closest two passes may come along a rope when the hardware gives no size, m.
DEFAULT_MIN_SPACING_M = 0.05
#: Closest two passes may come when neither has hardware (a knot, a hand), as a fraction of the rig size.
BARE_MIN_SPACING = 1e-4
#: Two points closer than this are coincident, m.
COINCIDENT_M = 1e-6


def _curve(stretch) -> StretchCurve:
    """The StretchCurve of a stretch table, built once per distinct table (:data:`solver.memo.CURVES`; raises
    ValueError as StretchCurve)."""
    try:
        key = tuple((float(t), float(e)) for t, e in stretch)
    except (TypeError, ValueError):
        return StretchCurve(stretch)  # let the curve say what is wrong with the table
    curve = memo.CURVES.get(key)
    if curve is None:
        curve = StretchCurve(stretch)
        memo.CURVES.put(key, curve)
    return curve


def compile_rig(rig: Rig, motion: str | None = None) -> System:
    """Compile ``rig`` into a :class:`System`; raises RigModelError naming what is wrong.

    Two parts: :func:`compile_topology` (everything but the coordinates) and the geometry
    (:func:`with_geometry`), so that a moved copy of a rig, as a drag makes, can reuse the first.
    """
    return _with_geometry(compile_topology(rig, motion), rig, checked=True)


@dataclass
class Topology:
    """What :func:`compile_rig` derives from a rig's structure alone, ready for any coordinates.

    The structure is everything compile_rig reads except point coordinates: the points' ids,
    kinds, fixedness, haul forces and masses, the ropes, forces, embedded specs, the view and
    the motion (:func:`same_structure`).  :func:`with_geometry` turns it into the System of
    any rig with that structure, rebuilding only the arrays that follow from the coordinates
    (:data:`GEOMETRY_FIELDS`).
    """

    rig: Rig  # the rig this was compiled from
    motion: str
    template: System  # every non-geometric field; geometric ones None; its arrays read-only; never solved
    point_index: list[int]  # index in ``rig.points`` of each structural point
    point_keys: tuple  # per rig point: what compile_rig reads from it apart from x and y
    run_pieces: IntArray  # (n_runs, longest run): each run's pieces in order, padded with n_pieces
    run_pretensioned: IntArray  # tied runs whose unstretched length follows from a pretension ...
    run_stretch: FloatArray  # ... 1 + their rope's strain at that pretension
    run_slacked: IntArray  # tied runs whose unstretched length is the drawn length plus a slack ...
    run_slack: FloatArray  # ... that slack, m
    hw_spacing: FloatArray  # per piece: closest spacing its passes' hardware allows, m (0: bare passes)


#: System fields that :func:`with_geometry` rebuilds from the coordinates (all others come from the topology).
GEOMETRY_FIELDS = ("rig", "points", "xy0", "origin", "size", "piece_len0", "run_L0", "s_min", "comp_size",
                   "s_min_on", "keep_len", "contact_k", "run_L0_div", "drawn_xy")
#: Those of them that follow from the coordinates and the structure alone (not the forces, not the Rig object):
#: the same numbers for every rig of one structure drawn at the very same coordinates.
DRAWING_FIELDS = tuple(f for f in GEOMETRY_FIELDS if f not in ("rig", "points", "contact_k"))
_SYSTEM_FIELDS = tuple(f.name for f in fields(System))


def _point_key(p) -> tuple:
    """What compile_rig reads from a point apart from its coordinates."""
    return (p.id, p.kind, p.fixed, p.force_N, p.team, p.force_per_person_N, p.mass_kg)


@dataclass
class _Layout:
    """What :func:`compile_topology` collects rope by rope: pieces, the passes before them, runs, materials."""

    materials: list[Material] = field(default_factory=list)
    curves: list[StretchCurve] = field(default_factory=list)
    a: list[int] = field(default_factory=list)
    b: list[int] = field(default_factory=list)
    piece_rope: list[str] = field(default_factory=list)
    piece_index: list[int] = field(default_factory=list)
    piece_run: list[int] = field(default_factory=list)
    piece_mat: list[int] = field(default_factory=list)
    piece_first: list[bool] = field(default_factory=list)
    pass_kind: list[int] = field(default_factory=list)
    pass_eta: list[float] = field(default_factory=list)
    pass_mu: list[float] = field(default_factory=list)
    pass_hw: list[str | None] = field(default_factory=list)
    pass_point: list[str] = field(default_factory=list)
    s_min: list[float] = field(default_factory=list)
    run_start: list[int] = field(default_factory=list)
    run_count: list[int] = field(default_factory=list)
    run_hauled: list[bool] = field(default_factory=list)
    run_P: list[float] = field(default_factory=list)
    run_mode: list[int] = field(default_factory=list)  # 0 hauled, 1 pretensioned, 2 slack
    run_param: list[float] = field(default_factory=list)  # 1 + pre-strain (pretensioned), slack in m (slack), 0 (hauled)
    run_mat: list[int] = field(default_factory=list)
    run_rope: list[str] = field(default_factory=list)
    run_haul_point: list[str | None] = field(default_factory=list)
    run_pre: list[float] = field(default_factory=list)
    middle: list[MiddlePass] = field(default_factory=list)


def compile_topology(rig: Rig, motion: str | None = None) -> Topology:
    """The coordinate-free part of :func:`compile_rig`; raises RigModelError naming what is wrong.

    The drawn geometry is checked here too (points at one spot, runs of no length), in the
    order compile_rig always checked it, so a rig names the same first problem as before.
    """
    motion = motion or rig.settings.motion
    if motion not in MOTIONS:
        raise RigModelError(f'the motion "{motion}" is not one of haul, hold, lower', where="settings.motion")
    pts = [p for p in rig.points if p.is_structural]
    index = {p.id: i for i, p in enumerate(pts)}
    all_ids = {p.id for p in rig.points}
    if len(all_ids) != len(rig.points):
        seen: set[str] = set()
        for p in rig.points:
            if p.id in seen:
                raise RigModelError(f'two points share the id "{p.id}"', subject=p.id)
            seen.add(p.id)
    xy0 = np.array([[p.x, p.y] for p in pts], dtype=float).reshape(-1, 2)
    coords = [(float(p.x), float(p.y)) for p in pts]
    if not np.all(np.isfinite(xy0)):
        bad = next(p for p in pts if not (math.isfinite(p.x) and math.isfinite(p.y)))
        raise RigModelError(f'point "{bad.id}" has no proper position', subject=bad.id)
    free = np.array([not p.is_fixed for p in pts], dtype=bool)
    dof = -np.ones((len(pts), 2), dtype=np.intp)
    nf = int(free.sum())
    dof[free] = np.arange(2 * nf).reshape(-1, 2)

    mat_index: dict[str, int] = {}
    lay = _Layout()
    hw_cache: dict[str, Hardware] = {}

    strain_cache: dict[tuple[int, float], float] = {}

    def pre_strain(m: int, tension: float) -> float:
        if (m, tension) not in strain_cache:
            strain_cache[(m, tension)] = float(lay.curves[m].strain(tension))
        return strain_cache[(m, tension)]

    def hardware(hid: str) -> Hardware:
        if hid not in hw_cache:
            hw_cache[hid] = hardware_for(rig, hid)
        return hw_cache[hid]

    rope_ids: set[str] = set()
    for r_i, rope in enumerate(rig.ropes):
        where = f"ropes[{r_i}]"
        if rope.id in rope_ids:
            raise RigModelError(f'two ropes share the id "{rope.id}"', where=where, subject=rope.id)
        rope_ids.add(rope.id)
        path = rope.path
        if len(path) < 2:
            raise RigModelError(f'rope "{rope.name}" needs at least two passes (a start and an end)',
                                where=f"{where}.path", subject=rope.id)
        _check_path(rope, where, all_ids, index, coords)
        m_i = _material_index(rig, rope, mat_index, lay)
        for run in rope.runs():
            _add_run(lay, rope, run, where, m_i, pts, index, coords, hardware, pre_strain)
        lay.middle += _middle_passes(rope, len(lay.a) - (len(path) - 1))

    F, ignored = _external_forces(rig, pts, index, free, dof, nf)
    force_scale = _overall_force_scale(F, lay.run_P, rig)

    sys_ = System(
        rig=None, motion=motion, points=None, point_ids=[p.id for p in pts], xy0=None, free=free, dof=dof,
        n_dof=2 * nf,
        a=np.array(lay.a, dtype=np.intp), b=np.array(lay.b, dtype=np.intp), piece_rope=lay.piece_rope,
        piece_index=np.array(lay.piece_index, dtype=np.intp), piece_run=np.array(lay.piece_run, dtype=np.intp),
        piece_mat=np.array(lay.piece_mat, dtype=np.intp), piece_first=np.array(lay.piece_first, dtype=bool),
        pass_kind=np.array(lay.pass_kind, dtype=np.intp), pass_eta=np.array(lay.pass_eta, dtype=float),
        pass_mu=np.array(lay.pass_mu, dtype=float), pass_hw=lay.pass_hw, pass_point=lay.pass_point,
        s_min=None, contact_on=np.zeros(len(lay.a), dtype=bool),
        run_start=np.array(lay.run_start, dtype=np.intp), run_count=np.array(lay.run_count, dtype=np.intp),
        run_hauled=np.array(lay.run_hauled, dtype=bool), run_P=np.array(lay.run_P, dtype=float),
        run_L0=None, run_mat=np.array(lay.run_mat, dtype=np.intp), run_rope=lay.run_rope,
        run_haul_point=lay.run_haul_point, curves=lay.curves, materials=lay.materials, F=F, size=None,
        centre=np.zeros(2), origin=None, force_scale=force_scale, middle_passes=lay.middle, ignored_forces=ignored,
    )
    sys_.run_pre = np.array(lay.run_pre, dtype=float)
    finish_topology(sys_)
    sys_.contact_on = pass_order.contact_pieces(sys_, np.array(lay.s_min, dtype=float) > 0)  # no contact between knots
    sys_.crossed_below = np.where(sys_.contact_on, 0.0, -np.inf)  # pass_order.crossed
    sys_.piece_mbs = sys_.piece_mbs * piece_efficiency(rig, lay.piece_rope, sys_.piece_index)  # knots: weak links
    report_indices(sys_, [p.kind for p in pts])
    for name in _SYSTEM_FIELDS:  # shared by every System of this topology: none may change them
        value = getattr(sys_, name)
        if isinstance(value, np.ndarray):
            value.flags.writeable = False
    nr = len(lay.run_start)
    longest = max(lay.run_count, default=0)
    run_pieces = np.full((nr, longest), len(lay.a), dtype=np.intp)
    if nr:
        counts = sys_.run_count
        run_pieces[np.repeat(np.arange(nr), counts), np.arange(len(lay.a)) - np.repeat(sys_.run_start, counts)] = \
            np.arange(len(lay.a))
    mode = np.array(lay.run_mode, dtype=np.intp)
    param = np.array(lay.run_param, dtype=float)
    pretensioned, slacked = np.flatnonzero(mode == 1), np.flatnonzero(mode == 2)
    structural = [i for i, p in enumerate(rig.points) if p.is_structural]
    return Topology(rig=rig, motion=motion, template=sys_, point_index=structural,
                    point_keys=tuple(_point_key(p) for p in rig.points), run_pieces=run_pieces,
                    run_pretensioned=pretensioned, run_stretch=param[pretensioned], run_slacked=slacked,
                    run_slack=param[slacked], hw_spacing=np.array(lay.s_min, dtype=float))


def _check_path(rope, where: str, all_ids: set, index: dict[str, int], coords: list) -> None:
    """Raise RigModelError for the first pass of ``rope`` that is not on the sketch, not part of the rig, of a kind
    its place in the path does not allow, or at the same spot as the pass before it."""
    path = rope.path
    for j, ps in enumerate(path):
        if ps.at not in all_ids:
            raise RigModelError(f'rope "{rope.name}" goes to point "{ps.at}", which is not on the sketch',
                                where=f"{where}.path[{j}]", subject=ps.at)
        if ps.at not in index:
            raise RigModelError(f'rope "{rope.name}" goes to "{ps.at}", a person marker, not part of the rig',
                                where=f"{where}.path[{j}]", subject=ps.at)
        if j == 0 and ps.how != "tied":
            raise RigModelError(f'rope "{rope.name}" must start tied at "{ps.at}"',
                                where=f"{where}.path[0]", subject=rope.id)
        if j == len(path) - 1 and ps.how not in ("tied", "hauled"):
            raise RigModelError(f'rope "{rope.name}" must end tied or hauled at "{ps.at}"',
                                where=f"{where}.path[{j}]", subject=rope.id)
        if 0 < j < len(path) - 1 and ps.how not in MIDDLE_HOWS:
            raise RigModelError(f'rope "{rope.name}" cannot be "{ps.how}" at "{ps.at}" in the middle of its path',
                                where=f"{where}.path[{j}]", subject=rope.id)
        if j > 0:
            prev = path[j - 1].at
            (x1, y1), (x2, y2) = coords[index[prev]], coords[index[ps.at]]
            if prev == ps.at or math.hypot(x2 - x1, y2 - y1) < COINCIDENT_M:
                raise RigModelError(
                    f'rope "{rope.name}" goes from "{prev}" to "{ps.at}", which are at the same spot: '
                    "move one of them or remove the pass", where=f"{where}.path[{j}]", subject=ps.at)


def _material_index(rig: Rig, rope, mat_index: dict[str, int], lay: _Layout) -> int:
    """The number of ``rope``'s material in ``lay.materials``, added (with its stretch curve) on first use."""
    m_i = mat_index.get(rope.material)
    if m_i is None:
        spec = material_for(rig, rope.material)
        try:
            curve = _curve(spec.stretch)
        except ValueError as exc:
            raise RigModelError(f'material "{spec.name}": {exc}', where=f"materials.{spec.id}",
                                subject=spec.id) from None
        if not spec.mbs_N or spec.mbs_N <= 0:
            raise RigModelError(f'material "{spec.name}" needs a positive breaking strength (MBS)',
                                where=f"materials.{spec.id}", subject=spec.id)
        m_i = mat_index[rope.material] = len(lay.materials)
        lay.materials.append(spec)
        lay.curves.append(curve)
    return m_i


def _add_run(lay: _Layout, rope, run, where: str, m_i: int, pts: list, index: dict[str, int], coords: list,
             hardware: Callable[[str], Hardware], pre_strain: Callable[[int, float], float]) -> None:
    """Add run ``run`` of ``rope`` (material number ``m_i``) to ``lay``: its pieces, the passes before them, and its
    haul force or the rule of its unstretched length (pretension or slack); raises RigModelError naming what is wrong."""
    path = rope.path
    rig_i = rope.rigged
    g = len(lay.run_start)
    lay.run_start.append(len(lay.a))
    lay.run_count.append(run.last - run.first)
    lay.run_mat.append(m_i)
    lay.run_rope.append(rope.id)
    lay.run_pre.append(float(rig_i.pretension_N or 0.0))
    length = 0.0
    for k in range(run.first, run.last):
        pa, pb = path[k], path[k + 1]
        ia, ib = index[pa.at], index[pb.at]
        lay.a.append(ia)
        lay.b.append(ib)
        lay.piece_rope.append(rope.id)
        lay.piece_index.append(k)
        lay.piece_run.append(g)
        lay.piece_mat.append(m_i)
        lay.piece_first.append(k == run.first)
        lk = math.hypot(coords[ib][0] - coords[ia][0], coords[ib][1] - coords[ia][1])
        length += lk
        hw_size = 0.0  # 0: bare passes (knot, hand), spaced relative to the rig size below
        for ps in (pa, pb):
            if ps.hardware and ps.how != "tied":
                sz = hardware(ps.hardware).size_m
                hw_size = max(hw_size, float(sz) if sz else DEFAULT_MIN_SPACING_M)
        lay.s_min.append(hw_size)
        kind, eta, mu, hw = PASS_NONE, 1.0, 0.0, None
        if k > run.first:  # pass pa is a middle pass of this run
            kind, eta, mu, hw = _pass_factor(rope.name, pa, hardware, f"{where}.path[{k}]")
        lay.pass_kind.append(kind)
        lay.pass_eta.append(eta)
        lay.pass_mu.append(mu)
        lay.pass_hw.append(hw)
        lay.pass_point.append(pa.at)
    if run.hauled:
        hp = pts[index[path[run.last].at]]
        P = hp.haul_force
        if P is None or not math.isfinite(P) or P < 0:
            raise RigModelError(
                f'rope "{rope.name}" is hauled at "{hp.name}" but no haul force is set there: '
                "give the team's total force, or the team size and force per person",
                where=f"{where}.path[{run.last}]", subject=hp.id)
        lay.run_hauled.append(True)
        lay.run_P.append(float(P))
        lay.run_mode.append(0)
        lay.run_param.append(0.0)
        lay.run_haul_point.append(hp.id)
    else:
        if rig_i.pretension_N is not None:
            if not (math.isfinite(rig_i.pretension_N) and rig_i.pretension_N >= 0):
                raise RigModelError(f'rope "{rope.name}" has a negative pretension',
                                    where=f"{where}.rigged", subject=rope.id)
            stretch = 1.0 + pre_strain(m_i, float(rig_i.pretension_N))
            L0 = length / stretch  # checked here; set from the coordinates in with_geometry
            lay.run_mode.append(1)
            lay.run_param.append(stretch)
        else:
            L0 = length + float(rig_i.slack_m)
            lay.run_mode.append(2)
            lay.run_param.append(float(rig_i.slack_m))
        if not L0 > 0:
            raise RigModelError(f'rope "{rope.name}" has a run of no length', where=f"{where}.rigged",
                                subject=rope.id)
        lay.run_hauled.append(False)
        lay.run_P.append(0.0)
        lay.run_haul_point.append(None)


def _middle_passes(rope, first_piece: int) -> list[MiddlePass]:
    """The middle passes of ``rope`` (whose first piece is number ``first_piece``), for deflection angles."""
    path = rope.path
    out: list[MiddlePass] = []
    counts: dict[str, int] = {}
    for j in range(1, len(path) - 1):
        at = path[j].at
        counts[at] = counts.get(at, 0) + 1
        key = f"{rope.id}@{at}" if counts[at] == 1 else f"{rope.id}@{at}#{counts[at]}"
        out.append(MiddlePass(key, rope.id, at, path[j].how, first_piece + j - 1, first_piece + j,
                                 path[j].hardware))
    return out


def _external_forces(rig: Rig, pts: list, index: dict[str, int], free: NDArray[np.bool_], dof: IntArray,
                     nf: int) -> tuple[FloatArray, list[str]]:
    """(applied force per free dof, ids of fixed points a force was drawn on) of ``rig``, N; weights in elevation."""
    F = np.zeros(2 * nf)
    ignored: list[str] = []
    for f_i, force in enumerate(rig.forces):
        if force.at not in index:
            raise RigModelError(f'a force acts at "{force.at}", which is not a point of the rig',
                                where=f"forces[{f_i}]", subject=force.at)
        if not (math.isfinite(force.magnitude_N) and math.isfinite(force.direction_deg)):
            raise RigModelError(f'the force at "{force.at}" has no proper size or direction',
                                where=f"forces[{f_i}]", subject=force.at)
        i = index[force.at]
        if not free[i]:
            ignored.append(force.at)
            continue
        th = math.radians(force.direction_deg)
        F[dof[i, 0]] += force.magnitude_N * math.cos(th)
        F[dof[i, 1]] += force.magnitude_N * math.sin(th)
    if rig.view == "elevation":
        for i, p in enumerate(pts):
            if free[i] and p.mass_kg:
                F[dof[i, 1]] -= float(p.mass_kg) * STANDARD_GRAVITY
    return F, ignored


def _overall_force_scale(F: FloatArray, run_P, rig: Rig) -> float:
    """The rig's largest applied force, haul force or pretension, N."""
    fmag = np.hypot(F[0::2], F[1::2]) if len(F) else np.zeros(0)
    pre = [r.rigged.pretension_N or 0.0 for r in rig.ropes]
    return float(max([0.0, *fmag, *run_P, *pre]))


def with_forces(topo: Topology, rig: Rig) -> Topology:
    """The topology of ``rig``, a rig of ``topo``'s structure but for its forces (a force slider, a typed force).

    The index arrays are shared; the applied-force vector, the forces on fixed points and the
    force scales are those of ``rig``.  A force compile_rig would refuse, or a drawing it would
    refuse first, is compiled afresh, so the error is the very one compile_rig raises.
    """
    t = topo.template
    pts = [rig.points[i] for i in topo.point_index]
    index = {pid: i for i, pid in enumerate(t.point_ids)}
    try:
        F, ignored = _external_forces(rig, pts, index, t.free, t.dof, t.n_dof // 2)
    except RigModelError:
        return compile_topology(rig, topo.motion)
    template = copy.copy(t)  # the template is never solved: nothing cached on it to carry over
    template.F, template.ignored_forces = F, ignored
    template.force_scale = _overall_force_scale(F, t.run_P.tolist(), rig)
    component_forces(template)
    for arr in (template.F, template.comp_force_scale):
        arr.flags.writeable = False
    return replace(topo, rig=rig, template=template)


#: :func:`structure_match` levels: no match, the same structure but for the forces, the same structure.
DIFFERENT, NEW_FORCES, SAME = 0, 1, 2


def same_structure(topo: Topology, rig: Rig, motion: str | None = None, forces: bool = True) -> bool:
    """True when ``rig`` (solved for ``motion``) differs from ``topo``'s rig at most in coordinates
    (and in its forces too, when ``forces`` is False: see :func:`with_forces`)."""
    return structure_match(topo, rig, motion) >= (SAME if forces else NEW_FORCES)


def structure_match(topo: Topology, rig: Rig, motion: str | None = None) -> int:
    """How far ``rig`` (solved for ``motion``) shares ``topo``'s structure: :data:`SAME` when it differs at most
    in coordinates, :data:`NEW_FORCES` when in its forces too (:func:`with_forces`), else :data:`DIFFERENT`.

    Cheap for a dragged copy: the Rig edit helpers share the unchanged tuples and points, which
    are compared by identity first, by value only when not shared.
    """
    old = topo.rig
    if (motion or rig.settings.motion) != topo.motion:
        return DIFFERENT
    if rig is old:
        return SAME
    if rig.view != old.view:
        return DIFFERENT
    for name in ("ropes", "materials", "hardware"):
        new_items, old_items = getattr(rig, name), getattr(old, name)
        if new_items is not old_items and new_items != old_items:
            return DIFFERENT
    if len(rig.points) != len(old.points):
        return DIFFERENT
    for p, q, key in zip(rig.points, old.points, topo.point_keys):
        if p is not q and _point_key(p) != key:
            return DIFFERENT
    return SAME if rig.forces is old.forces or rig.forces == old.forces else NEW_FORCES


def with_geometry(topo: Topology, rig: Rig, like: System | None = None) -> System:
    """The System of ``rig``, a rig of ``topo``'s structure (:func:`same_structure`), equal to compile_rig's.

    The topology's arrays are shared; only :data:`GEOMETRY_FIELDS` are built anew, and nothing
    the solver caches on a System (``soft``, per-System constants) is carried over.  Raises
    RigModelError, the very one compile_rig raises, when the coordinates make the rig invalid.
    ``like``: a System of the same structure (forces aside); when ``rig`` is drawn at bit for bit its
    coordinates (a force slider, a re-typed force), its :data:`DRAWING_FIELDS` are taken as they are.
    """
    return _with_geometry(topo, rig, checked=False, like=like)


def _with_geometry(topo: Topology, rig: Rig, checked: bool, like: System | None = None) -> System:
    """:func:`with_geometry`; ``checked``: compile_topology has already checked this rig's geometry."""
    t = topo.template
    pts = [rig.points[i] for i in topo.point_index]
    # the x and y columns as two flat lists (one nested list per point costs a shape discovery per point)
    xy = np.array([[p.x for p in pts], [p.y for p in pts]], dtype=float).reshape(2, -1).T.copy()
    if like is not None and _drawn_alike(like, t, xy):
        return _on_drawing_of(like, t, rig, pts)
    d = xy[t.b] - xy[t.a]
    # math.hypot, one piece at a time, as the check in compile_topology (np.hypot can differ in the last bit)
    piece_len0 = np.array(list(map(math.hypot, d[:, 0].tolist(), d[:, 1].tolist())), dtype=float)
    # each run's drawn length summed piece by piece in path order (cumsum adds in sequence)
    padded = np.append(piece_len0, 0.0)[topo.run_pieces]
    length = padded.cumsum(axis=1)[:, -1] if padded.size else np.zeros(len(topo.run_pieces))
    run_L0 = length.copy()
    run_L0[topo.run_pretensioned] = length[topo.run_pretensioned] / topo.run_stretch
    run_L0[topo.run_slacked] = length[topo.run_slacked] + topo.run_slack
    if not checked and not (np.isfinite(xy).all() and (piece_len0 >= COINCIDENT_M).all()
                            and (run_L0[topo.run_pretensioned] > 0).all() and (run_L0[topo.run_slacked] > 0).all()):
        return compile_rig(rig, topo.motion)  # raises the RigModelError that names the first problem
    s = _from_template(t, rig, pts)
    s.drawn_xy = xy
    lo, hi = (xy.min(axis=0), xy.max(axis=0)) if len(pts) else (np.zeros(2), np.zeros(2))
    s.size = float(max(np.hypot(*(hi - lo)), 1e-3))
    # solve about the drawing's centre: round-off then does not grow with the distance from the
    # site origin (a stiff contact times the last bit of a far-off coordinate is a real force)
    s.origin = 0.5 * (lo + hi)
    s.xy0 = xy - s.origin
    s.piece_len0 = piece_len0
    s.run_L0 = run_L0
    component_sizes(s)
    # bare passes (a knot, a hand) are spaced relative to the size of their part of the rig, so a
    # part solves to the same numbers whether it is drawn alone or beside others, and turned on the page
    part_size = per_piece(s, part_spans(s.xy0, *size_groups(s)), s.size)
    s_min = np.where(topo.hw_spacing > 0, topo.hw_spacing, BARE_MIN_SPACING * part_size)
    s.s_min = np.minimum(s_min, 0.5 * s.piece_len0)
    # the spacing contact only where a piece can close up: -inf elsewhere makes its penetration 0
    s.s_min_on = np.where(s.contact_on, s.s_min, -np.inf)
    s.keep_len = pass_order.KEEP * s.s_min
    s.run_L0_div = np.where(s.run_hauled, 1.0, s.run_L0) if s.n_runs else np.zeros(0)  # no 0 / 0 on hauled runs
    for name in DRAWING_FIELDS:  # shared by the Systems of this drawing (:func:`_on_drawing_of`): never changed
        value = getattr(s, name)
        if isinstance(value, np.ndarray):
            value.flags.writeable = False
    s.contact_k = contact_stiffness(s)  # what every solve of this System starts from (made once, not per solve)
    s.contact_k.flags.writeable = False
    return s


def _from_template(t: System, rig: Rig, pts: list) -> System:
    """A System with the fields of topology template ``t``, for ``rig``: its geometry still to be set."""
    s = System.__new__(System)
    held = t.__dict__
    # the template holds its fields alone (it is never solved): copied at once, else field by field
    s.__dict__.update(held if len(held) == len(_SYSTEM_FIELDS) else {name: held[name] for name in _SYSTEM_FIELDS})
    s.soft = None
    s.rig, s.points = rig, pts
    s.order_ref = None  # the drawing's order directions, made when a solve first needs them (solver.pass_order)
    return s


def _drawn_alike(like: System, t: System, xy: FloatArray) -> bool:
    """True when System ``like`` is of template ``t``'s structure (the very index arrays) and was drawn at the
    coordinates ``xy`` bit for bit (so every number of :data:`DRAWING_FIELDS` would come out the same)."""
    drawn = like.drawn_xy
    return (drawn is not None and like.a is t.a and like.b is t.b and like.contact_on is t.contact_on
            and like.piece_dofs is t.piece_dofs and drawn.shape == xy.shape and drawn.tobytes() == xy.tobytes())


def _on_drawing_of(like: System, t: System, rig: Rig, pts: list) -> System:
    """The System of ``rig`` (template ``t``), drawn where ``like`` was (:func:`_drawn_alike`): ``like``'s drawing
    fields as they are (read-only arrays), the contact stiffness anew when the forces differ."""
    s = _from_template(t, rig, pts)
    for name in DRAWING_FIELDS:
        setattr(s, name, getattr(like, name))
    if like.comp_force_scale is s.comp_force_scale and like.force_scale == s.force_scale:
        s.contact_k = like.contact_k
    else:
        s.contact_k = contact_stiffness(s)
        s.contact_k.flags.writeable = False
    return s


def _pass_factor(rope_name: str, ps, hardware, where: str) -> tuple[int, float, float, str | None]:
    """(kind, efficiency, friction coefficient, hardware id) of a middle pass of a run."""
    if ps.how == "sliding":
        return PASS_SLIDING, 1.0, 0.0, ps.hardware
    if ps.how in SHEAVE_HOWS:  # a capture runs like its pulley while the rope is hauled in
        if not ps.hardware:
            raise RigModelError(f'the pulley at "{ps.at}" on rope "{rope_name}" has no hardware chosen: '
                                "pick a pulley or carabiner so its efficiency is known", where=where, subject=ps.at)
        hw = hardware(ps.hardware)
        eta = hw.efficiency
        if eta is None or not (0.0 < eta <= 1.0):
            raise RigModelError(f'"{hw.name}" at "{ps.at}" on rope "{rope_name}" has no efficiency between 0 and 1, '
                                "so it cannot be used as a pulley", where=where, subject=ps.at)
        return PASS_PULLEY, float(eta), 0.0, ps.hardware
    if ps.how == "edge":
        if not ps.hardware:
            raise RigModelError(f'the edge at "{ps.at}" on rope "{rope_name}" has no edge kind chosen: '
                                "pick one so its friction is known", where=where, subject=ps.at)
        hw = hardware(ps.hardware)
        mu = hw.friction_coefficient
        if mu is None or not (math.isfinite(mu) and mu >= 0.0):
            raise RigModelError(f'"{hw.name}" at "{ps.at}" on rope "{rope_name}" has no friction coefficient, '
                                "so it cannot be used as an edge", where=where, subject=ps.at)
        return PASS_EDGE, 1.0, float(mu), ps.hardware
    raise RigModelError(f'rope "{rope_name}" has an unknown pass "{ps.how}" at "{ps.at}"', where=where,
                        subject=ps.at)

