"""Compile a Rig once into index arrays (points -> dofs, pieces -> runs) for the equilibrium solver.

The solver's unknowns are the free points' coordinates (2 per free structural point);
each rope is cut into pieces (straight spans between consecutive passes) grouped into
runs (rig-format.md "Ropes").  Everything the Newton iteration needs is held here as
flat numpy arrays so that no Python loop over pieces runs inside the iteration.
Invalid rigs raise :class:`solver.errors.RigModelError` with the offending id.
"""

from __future__ import annotations

import copy
import logging
import math
from collections.abc import Callable
from dataclasses import dataclass, field, fields, replace

import numpy as np
import scipy.sparse
import scipy.sparse.csgraph
from numpy.typing import NDArray

from solver.errors import RigModelError
from solver.materials import hardware_for, material_for
from solver.model import MIDDLE_HOWS, MOTIONS, SHEAVE_HOWS, STANDARD_GRAVITY, Hardware, Material, Rig
from solver.stretch import StretchCurve
from solver import pass_order
from solver.part_span import part_spans
from solver.weak_links import piece_efficiency

log = logging.getLogger(__name__)

FloatArray = NDArray[np.float64]
IntArray = NDArray[np.intp]

#: Closest two passes may come along a rope when the hardware gives no size, m.
DEFAULT_MIN_SPACING_M = 0.05
#: Closest two passes may come when neither has hardware (a knot, a hand), as a fraction of the rig size.
BARE_MIN_SPACING = 1e-4
#: Pass kinds, coded.
PASS_NONE, PASS_PULLEY, PASS_SLIDING, PASS_EDGE = 0, 1, 2, 3
#: Two points closer than this are coincident, m.
COINCIDENT_M = 1e-6


#: Stretch curves of recently compiled materials, by stretch table (a curve is never modified).
_CURVES: dict[tuple, StretchCurve] = {}


def _curve(stretch) -> StretchCurve:
    """The StretchCurve of a stretch table, built once per distinct table (raises ValueError as StretchCurve)."""
    try:
        key = tuple((float(t), float(e)) for t, e in stretch)
    except (TypeError, ValueError):
        return StretchCurve(stretch)  # let the curve say what is wrong with the table
    curve = _CURVES.get(key)
    if curve is None:
        curve = StretchCurve(stretch)
        if len(_CURVES) >= 64:
            _CURVES.clear()
        _CURVES[key] = curve
    return curve


@dataclass
class MiddlePass:
    """A middle pass of a rope, for reporting: key "ROPE@POINT", the pieces before and after."""

    key: str
    rope: str
    point: str
    how: str
    piece_in: int
    piece_out: int
    hardware: str | None


@dataclass
class System:
    """One rig compiled to arrays.  Points are all structural points; dofs are free coordinates."""

    rig: Rig
    motion: str
    points: list  # the structural Point objects, in dof order
    point_ids: list[str]
    xy0: FloatArray  # (n_points, 2) drawn coordinates relative to ``origin``, m
    free: NDArray[np.bool_]  # (n_points,)
    dof: IntArray  # (n_points, 2): dof index, or -1 when fixed
    n_dof: int
    # pieces (ordered run by run, so each run's pieces are contiguous)
    a: IntArray
    b: IntArray
    piece_rope: list[str]
    piece_index: IntArray  # index along the rope's path
    piece_run: IntArray  # global run number
    piece_mat: IntArray  # material number
    piece_first: NDArray[np.bool_]  # first piece of its run
    pass_kind: IntArray  # kind of the pass *before* this piece (PASS_NONE on a run's first piece)
    pass_eta: FloatArray
    pass_mu: FloatArray
    pass_hw: list[str | None]
    pass_point: list[str]
    s_min: FloatArray  # minimum spacing (two-blocking contact), m
    contact_on: NDArray[np.bool_]
    # runs
    run_start: IntArray  # first piece of each run
    run_count: IntArray
    run_hauled: NDArray[np.bool_]
    run_P: FloatArray  # haul force of hauled runs, N
    run_L0: FloatArray  # unstretched length of tied runs, m
    run_mat: IntArray
    run_rope: list[str]
    run_haul_point: list[str | None]
    curves: list[StretchCurve]
    materials: list[Material]
    F: FloatArray  # external force on each dof, N
    size: float  # rig size, m
    centre: FloatArray  # centre of the drawing in solver coordinates (the origin: zero)
    force_scale: float
    origin: FloatArray = field(default=None)  # site coordinates of the solver's origin, m
    middle_passes: list[MiddlePass] = field(default_factory=list)
    ignored_forces: list[str] = field(default_factory=list)
    # index arrays for assembly, built in finish()
    piece_dofs: IntArray = field(default=None)  # (n_pieces, 4) dofs [ax, ay, bx, by], -1 fixed
    pair_k: IntArray = field(default=None)  # piece pairs within a tied run (rank-one term)
    pair_j: IntArray = field(default=None)
    pair_run: IntArray = field(default=None)
    k_rows: IntArray = field(default=None)  # tangent pattern (free dofs only)
    k_cols: IntArray = field(default=None)
    k_keep: IntArray = field(default=None)
    k_src: IntArray = field(default=None)  # per kept tangent entry: index into the packed block values
    k_sgn: FloatArray = field(default=None)  # per kept tangent entry: its sign (+1 or -1)
    csc_map: IntArray = field(default=None)
    csc_indices: NDArray[np.int32] = field(default=None)
    csc_indptr: NDArray[np.int32] = field(default=None)
    dense_lin: NDArray[np.int64] = field(default=None)
    # connected components of the free points (pieces and runs link points, fixed points do not)
    run_pre: FloatArray = field(default=None)  # pretension of each run's rope, N (force scale)
    n_comp: int = 0
    dof_comp: IntArray = field(default=None)  # (n_dof,) component of each free coordinate
    piece_comp: IntArray = field(default=None)  # (n_pieces,) component, -1 when both ends are fixed
    run_comp: IntArray = field(default=None)  # (n_runs,) component, -1 when the run touches no free point
    comp_size: FloatArray = field(default=None)  # (n_comp,) size of each component's drawing, m
    comp_force_scale: FloatArray = field(default=None)  # (n_comp,) largest applied force / haul / pretension, N
    piece_len0: FloatArray = field(default=None)  # drawn length of each piece, m
    comp_label: IntArray = field(default=None)  # (n_dof // 2,) part of each free point
    comp_rep: IntArray = field(default=None)  # (n_runs,) representative free point of each run, -1 none
    g_keep: IntArray = field(default=None)  # entries of piece_dofs.reshape(-1) that are free dofs
    g_idx: IntArray = field(default=None)  # those dofs
    run_on: IntArray = field(default=None)  # runs with run_comp >= 0
    piece_on: IntArray = field(default=None)  # pieces with piece_comp >= 0
    g_src: IntArray = field(default=None)  # per kept end force: its entry in the flattened N u (n_pieces, 2)
    g_sgn: FloatArray = field(default=None)  # and its sign (-1 at end a, +1 at end b)
    free_at: IntArray = field(default=None)  # indices of the free points
    ones: FloatArray = field(default=None)  # frictionless piece weights (shared, read-only)
    run_tied: NDArray[np.bool_] = field(default=None)  # runs not hauled
    free_ids: list[str] = field(default=None)  # ids of the free points, in dof order
    unattached: int | None = None  # a free point that no rope reaches (index into the points), if any
    piece_ends: IntArray = field(default=None)  # every piece's first point, then every piece's second (a, then b)
    middle_keys: list[str] = field(default=None)  # key of each middle pass
    middle_in: IntArray = field(default=None)  # the piece before each middle pass
    middle_out: IntArray = field(default=None)  # and the piece after it
    piece_from: list[str] = field(default=None)  # id of each piece's first point
    piece_to: list[str] = field(default=None)  # id of each piece's second point
    piece_run_in_rope: list[int] = field(default=None)  # index of each piece's run within its rope
    anchor_at: list[int] = field(default=None)  # structural points that are fixed anchors
    load_at: list[int] = field(default=None)  # structural points that are loads
    point_groups: "Grouping" = field(default=None)  # free points by part (per-part maxima)
    piece_groups: "Grouping" = field(default=None)  # pieces by part (those with a part)
    s_min_on: FloatArray = field(default=None)  # s_min where the contact can act, -inf elsewhere
    order_ref: FloatArray = field(default=None)  # per piece: the direction its passes keep (solver.pass_order)
    haul_P_or_0: FloatArray = field(default=None)  # run_P on hauled runs, 0 on tied ones
    run_L0_div: FloatArray = field(default=None)  # run_L0 on tied runs, 1 on hauled ones
    piece_mbs: FloatArray = field(default=None)  # minimum breaking strength of each piece's rope, N
    soft: FloatArray | None = None  # per run: ropes softened to kappa * T(eps) for the solver's soft start
    has_edges: bool = False
    has_friction: bool = False

    @property
    def n_pieces(self) -> int:
        return len(self.a)

    @property
    def n_runs(self) -> int:
        return len(self.run_start)

    def positions(self, x: FloatArray) -> FloatArray:
        """All structural points' coordinates (n_points, 2) for free-dof vector ``x``."""
        xy = self.xy0.copy()
        xy[self.free_at] = x.reshape(-1, 2)
        return xy

    def x_from(self, xy: FloatArray) -> FloatArray:
        return xy[self.free].reshape(-1).copy()


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
                   "s_min_on", "run_L0_div")
_SYSTEM_FIELDS = tuple(f.name for f in fields(System))


def _point_key(p) -> tuple:
    """What compile_rig reads from a point apart from its coordinates."""
    return (p.id, p.kind, p.fixed, p.force_N, p.team, p.force_per_person_N, p.mass_kg)


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
    materials: list[Material] = []
    curves: list[StretchCurve] = []
    a: list[int] = []
    b: list[int] = []
    piece_rope: list[str] = []
    piece_index: list[int] = []
    piece_run: list[int] = []
    piece_mat: list[int] = []
    piece_first: list[bool] = []
    pass_kind: list[int] = []
    pass_eta: list[float] = []
    pass_mu: list[float] = []
    pass_hw: list[str | None] = []
    pass_point: list[str] = []
    s_min: list[float] = []
    run_start: list[int] = []
    run_count: list[int] = []
    run_hauled: list[bool] = []
    run_P: list[float] = []
    run_mode: list[int] = []  # 0 hauled, 1 pretensioned, 2 slack
    run_param: list[float] = []  # 1 + pre-strain (pretensioned), slack in m (slack), 0 (hauled)
    run_mat: list[int] = []
    run_rope: list[str] = []
    run_haul_point: list[str | None] = []
    run_pre: list[float] = []
    middle: list[MiddlePass] = []
    hw_cache: dict[str, Hardware] = {}

    strain_cache: dict[tuple[int, float], float] = {}

    def pre_strain(m: int, tension: float) -> float:
        if (m, tension) not in strain_cache:
            strain_cache[(m, tension)] = float(curves[m].strain(tension))
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
            m_i = mat_index[rope.material] = len(materials)
            materials.append(spec)
            curves.append(curve)
        rig_i = rope.rigged
        for run in rope.runs():
            g = len(run_start)
            run_start.append(len(a))
            run_count.append(run.last - run.first)
            run_mat.append(m_i)
            run_rope.append(rope.id)
            run_pre.append(float(rig_i.pretension_N or 0.0))
            length = 0.0
            for k in range(run.first, run.last):
                pa, pb = path[k], path[k + 1]
                ia, ib = index[pa.at], index[pb.at]
                a.append(ia)
                b.append(ib)
                piece_rope.append(rope.id)
                piece_index.append(k)
                piece_run.append(g)
                piece_mat.append(m_i)
                piece_first.append(k == run.first)
                lk = math.hypot(coords[ib][0] - coords[ia][0], coords[ib][1] - coords[ia][1])
                length += lk
                hw_size = 0.0  # 0: bare passes (knot, hand), spaced relative to the rig size below
                for ps in (pa, pb):
                    if ps.hardware and ps.how != "tied":
                        sz = hardware(ps.hardware).size_m
                        hw_size = max(hw_size, float(sz) if sz else DEFAULT_MIN_SPACING_M)
                s_min.append(hw_size)
                kind, eta, mu, hw = PASS_NONE, 1.0, 0.0, None
                if k > run.first:  # pass pa is a middle pass of this run
                    kind, eta, mu, hw = _pass_factor(rope.name, pa, hardware, f"{where}.path[{k}]")
                pass_kind.append(kind)
                pass_eta.append(eta)
                pass_mu.append(mu)
                pass_hw.append(hw)
                pass_point.append(pa.at)
            if run.hauled:
                hp = pts[index[path[run.last].at]]
                P = hp.haul_force
                if P is None or not math.isfinite(P) or P < 0:
                    raise RigModelError(
                        f'rope "{rope.name}" is hauled at "{hp.name}" but no haul force is set there: '
                        "give the team's total force, or the team size and force per person",
                        where=f"{where}.path[{run.last}]", subject=hp.id)
                run_hauled.append(True)
                run_P.append(float(P))
                run_mode.append(0)
                run_param.append(0.0)
                run_haul_point.append(hp.id)
            else:
                if rig_i.pretension_N is not None:
                    if not (math.isfinite(rig_i.pretension_N) and rig_i.pretension_N >= 0):
                        raise RigModelError(f'rope "{rope.name}" has a negative pretension',
                                            where=f"{where}.rigged", subject=rope.id)
                    stretch = 1.0 + pre_strain(m_i, float(rig_i.pretension_N))
                    L0 = length / stretch  # checked here; set from the coordinates in with_geometry
                    run_mode.append(1)
                    run_param.append(stretch)
                else:
                    L0 = length + float(rig_i.slack_m)
                    run_mode.append(2)
                    run_param.append(float(rig_i.slack_m))
                if not L0 > 0:
                    raise RigModelError(f'rope "{rope.name}" has a run of no length', where=f"{where}.rigged",
                                        subject=rope.id)
                run_hauled.append(False)
                run_P.append(0.0)
                run_haul_point.append(None)
        # middle passes of the rope, for deflection angles
        first_piece = len(a) - (len(path) - 1)
        counts: dict[str, int] = {}
        for j in range(1, len(path) - 1):
            at = path[j].at
            counts[at] = counts.get(at, 0) + 1
            key = f"{rope.id}@{at}" if counts[at] == 1 else f"{rope.id}@{at}#{counts[at]}"
            middle.append(MiddlePass(key, rope.id, at, path[j].how, first_piece + j - 1, first_piece + j,
                                     path[j].hardware))

    F, ignored = _external_forces(rig, pts, index, free, dof, nf)
    force_scale = _overall_force_scale(F, run_P, rig)

    sys_ = System(
        rig=None, motion=motion, points=None, point_ids=[p.id for p in pts], xy0=None, free=free, dof=dof,
        n_dof=2 * nf,
        a=np.array(a, dtype=np.intp), b=np.array(b, dtype=np.intp), piece_rope=piece_rope,
        piece_index=np.array(piece_index, dtype=np.intp), piece_run=np.array(piece_run, dtype=np.intp),
        piece_mat=np.array(piece_mat, dtype=np.intp), piece_first=np.array(piece_first, dtype=bool),
        pass_kind=np.array(pass_kind, dtype=np.intp), pass_eta=np.array(pass_eta, dtype=float),
        pass_mu=np.array(pass_mu, dtype=float), pass_hw=pass_hw, pass_point=pass_point,
        s_min=None, contact_on=np.zeros(len(a), dtype=bool),
        run_start=np.array(run_start, dtype=np.intp), run_count=np.array(run_count, dtype=np.intp),
        run_hauled=np.array(run_hauled, dtype=bool), run_P=np.array(run_P, dtype=float),
        run_L0=None, run_mat=np.array(run_mat, dtype=np.intp), run_rope=run_rope,
        run_haul_point=run_haul_point, curves=curves, materials=materials, F=F, size=None,
        centre=np.zeros(2), origin=None, force_scale=force_scale, middle_passes=middle, ignored_forces=ignored,
    )
    sys_.run_pre = np.array(run_pre, dtype=float)
    _finish_topology(sys_)
    sys_.piece_mbs = sys_.piece_mbs * piece_efficiency(rig, piece_rope, sys_.piece_index)  # knots: weak links
    _report_indices(sys_, [p.kind for p in pts])
    for name in _SYSTEM_FIELDS:  # shared by every System of this topology: none may change them
        value = getattr(sys_, name)
        if isinstance(value, np.ndarray):
            value.flags.writeable = False
    nr = len(run_start)
    longest = max(run_count, default=0)
    run_pieces = np.full((nr, longest), len(a), dtype=np.intp)
    if nr:
        counts = sys_.run_count
        run_pieces[np.repeat(np.arange(nr), counts), np.arange(len(a)) - np.repeat(sys_.run_start, counts)] = \
            np.arange(len(a))
    mode = np.array(run_mode, dtype=np.intp)
    param = np.array(run_param, dtype=float)
    pretensioned, slacked = np.flatnonzero(mode == 1), np.flatnonzero(mode == 2)
    structural = [i for i, p in enumerate(rig.points) if p.is_structural]
    return Topology(rig=rig, motion=motion, template=sys_, point_index=structural,
                    point_keys=tuple(_point_key(p) for p in rig.points), run_pieces=run_pieces,
                    run_pretensioned=pretensioned, run_stretch=param[pretensioned], run_slacked=slacked,
                    run_slack=param[slacked], hw_spacing=np.array(s_min, dtype=float))


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
    _component_forces(template)
    for arr in (template.F, template.comp_force_scale):
        arr.flags.writeable = False
    return replace(topo, rig=rig, template=template)


def same_structure(topo: Topology, rig: Rig, motion: str | None = None, forces: bool = True) -> bool:
    """True when ``rig`` (solved for ``motion``) differs from ``topo``'s rig at most in coordinates
    (and in its forces too, when ``forces`` is False: see :func:`with_forces`).

    Cheap for a dragged copy: the Rig edit helpers share the unchanged tuples and points, which
    are compared by identity first, by value only when not shared.
    """
    old = topo.rig
    if (motion or rig.settings.motion) != topo.motion:
        return False
    if rig is old:
        return True
    if rig.view != old.view:
        return False
    for name in ("ropes", "forces", "materials", "hardware") if forces else ("ropes", "materials", "hardware"):
        new_items, old_items = getattr(rig, name), getattr(old, name)
        if new_items is not old_items and new_items != old_items:
            return False
    if len(rig.points) != len(old.points):
        return False
    for p, q, key in zip(rig.points, old.points, topo.point_keys):
        if p is not q and _point_key(p) != key:
            return False
    return True


def with_geometry(topo: Topology, rig: Rig) -> System:
    """The System of ``rig``, a rig of ``topo``'s structure (:func:`same_structure`), equal to compile_rig's.

    The topology's arrays are shared; only :data:`GEOMETRY_FIELDS` are built anew, and nothing
    the solver caches on a System (``soft``, per-System constants) is carried over.  Raises
    RigModelError, the very one compile_rig raises, when the coordinates make the rig invalid.
    """
    return _with_geometry(topo, rig, checked=False)


def _with_geometry(topo: Topology, rig: Rig, checked: bool) -> System:
    """:func:`with_geometry`; ``checked``: compile_topology has already checked this rig's geometry."""
    t = topo.template
    pts = [rig.points[i] for i in topo.point_index]
    # the x and y columns as two flat lists (one nested list per point costs a shape discovery per point)
    xy = np.array([[p.x for p in pts], [p.y for p in pts]], dtype=float).reshape(2, -1).T.copy()
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
    s = System.__new__(System)
    held = t.__dict__
    # the template holds its fields alone (it is never solved): copied at once, else field by field
    s.__dict__.update(held if len(held) == len(_SYSTEM_FIELDS) else {name: held[name] for name in _SYSTEM_FIELDS})
    s.soft = None
    s.rig, s.points = rig, pts
    lo, hi = (xy.min(axis=0), xy.max(axis=0)) if len(pts) else (np.zeros(2), np.zeros(2))
    s.size = float(max(np.hypot(*(hi - lo)), 1e-3))
    # solve about the drawing's centre: round-off then does not grow with the distance from the
    # site origin (a stiff contact times the last bit of a far-off coordinate is a real force)
    s.origin = 0.5 * (lo + hi)
    s.xy0 = xy - s.origin
    s.piece_len0 = piece_len0
    s.run_L0 = run_L0
    _component_sizes(s)
    # bare passes (a knot, a hand) are spaced relative to the size of their part of the rig, so a
    # part solves to the same numbers whether it is drawn alone or beside others, and turned on the page
    part_size = _per_piece(s, part_spans(s.xy0, *_size_groups(s)), s.size)
    s_min = np.where(topo.hw_spacing > 0, topo.hw_spacing, BARE_MIN_SPACING * part_size)
    s.s_min = np.minimum(s_min, 0.5 * s.piece_len0)
    # the spacing contact only where a piece can close up: -inf elsewhere makes its penetration 0
    s.s_min_on = np.where(s.contact_on, s.s_min, -np.inf)
    s.order_ref = pass_order.drawn(s.xy0, s.a, s.b)
    s.run_L0_div = np.where(s.run_hauled, 1.0, s.run_L0) if s.n_runs else np.zeros(0)  # no 0 / 0 on hauled runs
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


#: Index arrays of recently compiled topologies (see :func:`_topology`), most recent last.
_TOPOLOGY_CACHE: dict[tuple, dict] = {}
_TOPOLOGY_CACHE_SIZE = 16
#: System fields that depend only on the topology key of :func:`_finish_topology` (never mutated in place).
_TOPOLOGY_FIELDS = ("piece_dofs", "contact_on", "pair_k", "pair_j", "pair_run", "n_comp", "dof_comp",
                    "run_comp", "piece_comp", "comp_label", "comp_rep", "k_keep", "k_src", "k_sgn", "k_rows", "k_cols",
                    "csc_map", "csc_indices", "csc_indptr", "dense_lin", "g_keep", "g_idx", "g_src", "g_sgn",
                    "run_on", "piece_on", "free_at", "ones", "run_tied", "point_groups", "piece_groups")


def _finish_topology(s: System) -> None:
    """Build the assembly index arrays once: piece dofs, tied-run piece pairs, material masks.

    The index arrays depend only on which points are free, the pieces' end points and the
    runs' layout, so a rig that differs from a recent one only in coordinates or forces (a
    dragged point, a force slider) reuses them; the coordinate-dependent parts are built by
    :func:`with_geometry`.
    """
    key = (s.free.tobytes(), s.a.tobytes(), s.b.tobytes(), s.run_start.tobytes(), s.run_hauled.tobytes())
    topo = _TOPOLOGY_CACHE.pop(key, None)
    if topo is None:
        _topology(s)
        topo = {name: getattr(s, name) for name in _TOPOLOGY_FIELDS}
        for arr in topo.values():
            if isinstance(arr, np.ndarray):
                arr.flags.writeable = False
        if len(_TOPOLOGY_CACHE) >= _TOPOLOGY_CACHE_SIZE:
            del _TOPOLOGY_CACHE[next(iter(_TOPOLOGY_CACHE))]
    else:
        for name, value in topo.items():
            setattr(s, name, value)
    _TOPOLOGY_CACHE[key] = topo
    _component_forces(s)
    s.haul_P_or_0 = np.where(s.run_hauled, s.run_P, 0.0) if s.n_runs else np.zeros(0)
    mbs = np.array([m.mbs_N for m in s.materials], dtype=float)
    s.piece_mbs = mbs[s.piece_mat] if s.n_pieces else np.zeros(0)
    s.has_edges = bool(np.any(s.pass_kind == PASS_EDGE))
    s.has_friction = s.has_edges or bool(np.any((s.pass_kind == PASS_PULLEY) & (s.pass_eta < 1.0)))


def _report_indices(s: System, kinds: list[str]) -> None:
    """What the result assembly reads per piece and per point, as Python lists (structure only).

    ``kinds``: the kind of every structural point, in order.
    """
    ids = s.point_ids
    s.free_ids = [ids[i] for i in np.flatnonzero(s.free).tolist()]
    used = np.zeros(len(ids), dtype=bool)
    used[s.a] = True
    used[s.b] = True
    lonely = np.flatnonzero(s.free & ~used)
    s.unattached = int(lonely[0]) if len(lonely) else None
    s.piece_ends = np.concatenate((s.a, s.b))
    s.middle_keys = [mp.key for mp in s.middle_passes]
    s.middle_in = np.array([mp.piece_in for mp in s.middle_passes], dtype=np.intp)
    s.middle_out = np.array([mp.piece_out for mp in s.middle_passes], dtype=np.intp)
    s.piece_from = [ids[i] for i in s.a.tolist()]
    s.piece_to = [ids[i] for i in s.b.tolist()]
    run_in_rope: list[int] = []
    for g, rope in enumerate(s.run_rope):  # runs of a rope are consecutive
        run_in_rope.append(run_in_rope[-1] + 1 if g > 0 and s.run_rope[g - 1] == rope else 0)
    s.piece_run_in_rope = [run_in_rope[r] for r in s.piece_run.tolist()]
    free = s.free.tolist()
    s.anchor_at = [i for i, kind in enumerate(kinds) if kind == "anchor" and not free[i]]
    s.load_at = [i for i, kind in enumerate(kinds) if kind == "load"]


def _topology(s: System) -> None:
    """The index arrays of :data:`_TOPOLOGY_FIELDS`, from free, a, b and the runs' layout only."""
    s.piece_dofs = np.concatenate([s.dof[s.a], s.dof[s.b]], axis=1) if s.n_pieces else np.zeros((0, 4), np.intp)
    s.contact_on = (s.free[s.a] | s.free[s.b]) if s.n_pieces else np.zeros(0, bool)
    # pairs (k, j) of pieces in the same tied run, vectorised by run size
    ks, js, rs = [], [], []
    tied = np.flatnonzero(~s.run_hauled)
    for m in np.unique(s.run_count[tied]) if len(tied) else []:
        runs = tied[s.run_count[tied] == m]
        kk, jj = np.meshgrid(np.arange(m), np.arange(m), indexing="ij")
        base = s.run_start[runs][:, None]
        ks.append((base + kk.reshape(1, -1)).reshape(-1))
        js.append((base + jj.reshape(1, -1)).reshape(-1))
        rs.append(np.repeat(runs, m * m))
    s.pair_k = np.concatenate(ks) if ks else np.zeros(0, np.intp)
    s.pair_j = np.concatenate(js) if js else np.zeros(0, np.intp)
    s.pair_run = np.concatenate(rs) if rs else np.zeros(0, np.intp)
    off = s.pair_k != s.pair_j  # the k == j terms go into each piece's own block
    s.pair_k, s.pair_j, s.pair_run = s.pair_k[off], s.pair_j[off], s.pair_run[off]
    _components(s)
    _pattern(s)
    # out-of-balance assembly: the free dofs each piece's end forces land on
    idx = s.piece_dofs.reshape(-1)
    s.g_keep = np.flatnonzero(idx >= 0)
    s.g_idx = idx[s.g_keep]
    # each kept end force as +-(N u) of its piece: entry 4k + c of piece_dofs is end a (c < 2,
    # force -N u) or end b (c >= 2, +N u), component c % 2
    s.g_src = (2 * (s.g_keep // 4) + s.g_keep % 2).astype(np.intp)
    s.g_sgn = np.where(s.g_keep % 4 < 2, -1.0, 1.0)
    s.free_at = np.flatnonzero(s.free)
    s.ones = np.ones(s.n_pieces)  # the frictionless piece weights (shared: never written to)
    s.run_tied = ~s.run_hauled
    s.point_groups = Grouping.of(s.comp_label, s.n_comp)
    s.piece_groups = Grouping.of(s.piece_comp, s.n_comp)


@dataclass(frozen=True)
class Grouping:
    """Elements sorted by the part they belong to, for per-part maxima by ``np.maximum.reduceat``.

    The same maxima as ``np.maximum.at(out, labels, values)`` (a maximum is exact, so the order
    does not matter) without its per-element cost; elements labelled -1 belong to no part.
    """

    order: IntArray  # element indices, grouped by part
    starts: IntArray  # where each non-empty part's elements begin in ``order``
    parts: IntArray  # the part of each group

    @classmethod
    def of(cls, labels: IntArray, n_parts: int) -> Grouping:
        on = np.flatnonzero(labels >= 0)
        order = on[np.argsort(labels[on], kind="stable")]
        ordered = labels[order]
        starts = np.flatnonzero(np.r_[True, ordered[1:] != ordered[:-1]]) if len(order) else np.zeros(0, np.intp)
        for arr in (order, starts, ordered):
            arr.flags.writeable = False
        return cls(order, starts, ordered[starts] if len(order) else np.zeros(0, np.intp))

    def max_into(self, out: FloatArray, values: FloatArray) -> FloatArray:
        """``out`` (one value per part, changed in place) raised to each part's largest element of ``values``."""
        if len(self.order):
            out[self.parts] = np.maximum(out[self.parts], np.maximum.reduceat(values[self.order], self.starts))
        return out


def _per_piece(s: System, per_comp: FloatArray, default: float) -> FloatArray:
    """A per-part value for every piece; ``default`` for pieces between fixed points."""
    out = np.full(s.n_pieces, float(default))
    on = s.piece_comp >= 0
    out[on] = per_comp[s.piece_comp[on]]
    return out


def _union_find(n: int, u: list[int], v: list[int]) -> tuple[int, IntArray]:
    """Connected components of n nodes joined by edges (u_i, v_i): (count, label per node, 0-based)."""
    parent = list(range(n))

    def root(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for a, b in zip(u, v):
        ra, rb = root(a), root(b)
        if ra != rb:
            parent[max(ra, rb)] = min(ra, rb)
    label, names = [], {}
    for i in range(n):
        label.append(names.setdefault(root(i), len(names)))
    return len(names), np.array(label, dtype=np.intp)


def _components(s: System) -> None:
    """Split the free points into independent parts: two free points belong together when a run links them.

    A run's tension depends on every piece of it, so all free points a run touches are one part,
    even across a fixed pulley; fixed points link nothing.  Each part is solved with its own
    damping, step and convergence (the frictionless potential is a sum over parts), so that one
    hard part does not hold the others back.
    """
    nf = s.n_dof // 2
    fidx = np.cumsum(s.free) - 1  # free-point number of each structural point
    if s.n_pieces and nf:
        fa = np.where(s.free[s.a], fidx[s.a], -1)
        fb = np.where(s.free[s.b], fidx[s.b], -1)
        rep = np.full(s.n_runs, -1, dtype=np.intp)
        np.maximum.at(rep, s.piece_run, np.maximum(fa, fb))
        r = rep[s.piece_run]
        ends = np.concatenate([fa, fb])
        reps = np.concatenate([r, r])
        keep = ends >= 0
        if nf <= 200:  # small rigs: plain union-find beats building a sparse graph
            n_comp, label = _union_find(nf, ends[keep].tolist(), reps[keep].tolist())
        else:
            graph = scipy.sparse.coo_matrix((np.ones(int(keep.sum())), (ends[keep], reps[keep])), shape=(nf, nf))
            n_comp, label = scipy.sparse.csgraph.connected_components(graph, directed=False)
    else:
        rep = np.full(s.n_runs, -1, dtype=np.intp)
        n_comp, label = nf, np.arange(nf)
    label = np.asarray(label, dtype=np.intp)
    s.n_comp = int(n_comp)
    s.comp_label = label
    s.comp_rep = rep
    s.dof_comp = np.repeat(label, 2)
    s.run_comp = np.full(s.n_runs, -1, dtype=np.intp)
    s.run_comp[rep >= 0] = label[rep[rep >= 0]]
    s.piece_comp = s.run_comp[s.piece_run] if s.n_pieces else np.zeros(0, np.intp)
    s.run_on = np.flatnonzero(s.run_comp >= 0)
    s.piece_on = np.flatnonzero(s.piece_comp >= 0)


def _component_sizes(s: System) -> None:
    """Size of each part, m: the box around its free points and every point its pieces reach."""
    if not s.n_comp:
        s.comp_size = np.zeros(0)
        return
    gather, starts = _size_groups(s)
    pts = s.xy0[gather]  # every point of every part, part by part (a point may appear more than once)
    lo = np.minimum.reduceat(pts, starts, axis=0)
    hi = np.maximum.reduceat(pts, starts, axis=0)
    s.comp_size = np.maximum(np.hypot(*(hi - lo).T), 1e-3)


#: (comp_label, piece_comp, gather, starts) of the last structure sized: a moved copy of a rig (a drag
#: step) has the same parts, whose points are gathered in the same order.
_SIZE_GROUPS: list = [None]


def _size_groups(s: System) -> tuple[IntArray, IntArray]:
    """Indices into the points of each part's free points and piece ends, each once, grouped by part, and
    where each part's group starts (every part has a free point, so no group is empty)."""
    last = _SIZE_GROUPS[0]
    if last is not None and last[0] is s.comp_label and last[1] is s.piece_comp:
        return last[2], last[3]
    on = s.piece_comp >= 0
    idx = np.concatenate((np.flatnonzero(s.free), s.a[on], s.b[on]))
    lab = np.concatenate((s.comp_label, s.piece_comp[on], s.piece_comp[on]))
    n = len(s.free)
    key = np.unique(lab * n + idx)  # distinct (part, point) pairs, part by part
    gather = key % n
    starts = np.searchsorted(key // n, np.arange(s.n_comp))
    _SIZE_GROUPS[0] = (s.comp_label, s.piece_comp, gather, starts)
    return gather, starts


def _component_forces(s: System) -> None:
    """Force scale of each part, N: its largest applied force, haul force or pretension (no coordinates)."""
    nf = s.n_dof // 2
    label = s.comp_label
    scale = np.zeros(s.n_comp)
    if nf:
        np.maximum.at(scale, label, np.hypot(s.F[0::2], s.F[1::2]))
    rc = s.run_comp >= 0
    if np.any(rc):
        np.maximum.at(scale, s.run_comp[rc], np.maximum(s.run_P[rc], s.run_pre[rc]))
    s.comp_force_scale = scale


# --- evaluation: lengths, run tensions, out-of-balance forces, energy, tangent -------------------

#: Stiffness of the two-blocking contact, as a multiple of (force scale / minimum spacing).
CONTACT_STIFFNESS = 1e4


@dataclass
class State:
    """Everything at one trial geometry: piece lengths/directions, run tensions, forces."""

    x: FloatArray
    xy: FloatArray
    l: FloatArray  # piece lengths, m
    u: FloatArray  # piece unit vectors (n_pieces, 2)
    w: FloatArray  # piece tension weights
    L: FloatArray  # run lengths, m
    tau: FloatArray  # run reference tensions (first piece), N
    taut: NDArray[np.bool_]  # tied runs at or beyond their unstretched length
    T: FloatArray  # piece tensions, N
    eps: FloatArray  # piece strains
    pen: FloatArray  # contact penetration (>0 when two passes are closer than their size), m
    N: FloatArray  # piece axial pull incl. contact push, N
    g: FloatArray  # out-of-balance: internal resistance minus external force, per dof, N
    closed: bool = False  # some contact is closed (pen > 0 somewhere)
    no_zero_length: bool = True  # every piece has a length > 0
    order_cos: FloatArray | None = None  # per piece: cosine of its direction with its order direction (pass_order)
    # what the potential is computed from, on first use (the friction solve never asks for it)
    potential_from: tuple | None = field(default=None, repr=False, compare=False)
    _energy_terms: tuple | None = field(default=None, repr=False, compare=False)
    matrices: dict = field(default_factory=dict, repr=False, compare=False)  # tangents at this state, by kind
    _potential: FloatArray | None = field(default=None, repr=False, compare=False)

    @property
    def energy(self) -> float:
        """Total potential (meaningful without friction), J."""
        U, contact, fx = self._terms()
        return float(U.sum()) + float(contact.sum()) - float(fx.sum())

    @property
    def comp_energy(self) -> FloatArray:
        """The potential of each free part (energy = their sum + a constant), J."""
        if self._potential is None:
            s = self.potential_from[0]
            U, contact, fx = self._terms()
            comp_energy = -np.bincount(s.dof_comp, fx, minlength=s.n_comp)
            if s.n_runs:
                on = s.run_on
                comp_energy += np.bincount(s.run_comp[on], U[on], minlength=s.n_comp)
                if self.closed:
                    on = s.piece_on
                    comp_energy += np.bincount(s.piece_comp[on], contact[on], minlength=s.n_comp)
            self._potential = comp_energy
        return self._potential

    def _terms(self) -> tuple[FloatArray, FloatArray, FloatArray]:
        if self._energy_terms is None:
            self._energy_terms = _potential(*self.potential_from)
        return self._energy_terms


def _potential(s: System, soft: FloatArray | None, x: FloatArray, L: FloatArray, kc: FloatArray,
               pen: FloatArray) -> tuple[FloatArray, FloatArray, FloatArray]:
    """The terms of the potential at a state, J: (run energies U, contact energies, F x per dof).

    ``soft`` = the softening then in force.  Exact for frictionless weights: a hauled run
    stores P L, a taut tied run L0 W(L/L0 - 1), a closed contact k pen^2 / 2.
    """
    U = s.haul_P_or_0 * L if s.n_runs else np.zeros(0)  # tied runs: 0 * L = 0, set below when taut
    tied = (s.run_tied & (L > s.run_L0)).nonzero()[0]
    if len(tied):
        e_r = L[tied] / s.run_L0[tied] - 1.0
        U[tied] = s.run_L0[tied] * by_material(s, s.run_mat[tied], e_r, "energy",
                                               None if soft is None else soft[tied])
    contact = 0.5 * kc * pen * pen
    return U, contact, s.F * x


def by_material(s: System, mats: IntArray, values: FloatArray, method: str,
                kappa: FloatArray | None = None) -> FloatArray:
    """Apply StretchCurve ``method`` elementwise, each element with its material's curve.

    ``kappa`` (optional, per element) softens the law to T = kappa * T_material(eps), as the
    solver's soft start does (see :attr:`System.soft`).
    """
    if kappa is not None:
        if method == "strain":
            return by_material(s, mats, values / kappa, method)
        if method == "dstrain":
            return by_material(s, mats, values / kappa, method) / kappa
        return kappa * by_material(s, mats, values, method)  # tension, dtension, energy
    if len(s.curves) == 1:  # the curve returns a new float array of the same shape
        return np.asarray(getattr(s.curves[0], method)(values), dtype=float)
    out = np.empty_like(values)
    for m, curve in enumerate(s.curves):
        idx = np.flatnonzero(mats == m)
        if len(idx):
            out[idx] = getattr(curve, method)(values[idx])
    return out


def _law(s: System, mats: IntArray, kappa: FloatArray | None, method: str,
         positive: bool = False) -> Callable[[FloatArray], FloatArray | float]:
    """:func:`by_material` with ``method`` for elements of materials ``mats`` (softened by ``kappa``), as a function
    of the values alone: the curve's own method when there is one curve and no softening (the same numbers).

    ``positive``: no value it is given is negative, so that the curve's tension-only branch is left
    out (:meth:`StretchCurve.of_positive`; the same numbers, a compliance perhaps as one number for all).
    """
    if kappa is None and len(s.curves) == 1:
        curve = s.curves[0]
        return curve.of_positive(method) if positive else getattr(curve, method)
    return lambda values: by_material(s, mats, values, method, kappa)


def _kappa(s: System, runs: IntArray | None = None, pieces: IntArray | None = None) -> FloatArray | None:
    """Softening factor of the given runs or pieces (None: the real ropes)."""
    if s.soft is None:
        return None
    if pieces is not None:
        return s.soft[s.piece_run[pieces]]
    return s.soft[runs]


def contact_stiffness(s: System) -> FloatArray:
    """Penalty stiffness of the minimum-spacing contact of each piece, N/m (from its own part's force scale)."""
    scale = _per_piece(s, s.comp_force_scale, s.force_scale)
    return CONTACT_STIFFNESS * np.maximum(scale, 1.0) / np.maximum(s.s_min, 1e-6)


def solve_run_tensions(s: System, L: FloatArray, l: FloatArray, w: FloatArray) -> tuple[FloatArray, NDArray[np.bool_]]:
    """Reference tension tau_r of every run: haul force for hauled runs, else the root of the length equation.

    Tied run: sum_k l_k / (1 + eps(w_k tau)) = L0 (strictly decreasing in tau), solved by a
    bracketed Newton iteration vectorised over runs; tau = 0 when slack (sum l_k <= L0).
    """
    nr = s.n_runs
    tied_run = s.run_tied
    taut = tied_run & (L >= s.run_L0)
    if w is s.ones:
        # frictionless: every weight 1, so each tied run's tension is its curve at L / L0 - 1 (the
        # bracket below closes on it at once; a slack run's strain <= 0 gives 0) -- same numbers
        t_all = by_material(s, s.run_mat, L / s.run_L0_div - 1.0, "tension", s.soft)
        return np.where(tied_run, t_all, s.haul_P_or_0), taut
    fixed = s.__dict__.get("_run_tension_fixed")
    if fixed is None:  # per-System constants of the weighted case, built on first use
        hauled_at = s.run_hauled.nonzero()[0]
        fixed = s._run_tension_fixed = (hauled_at, (s.run_start + s.run_count - 1)[hauled_at], s.run_P[hauled_at])
    hauled_at, hauled_last, hauled_P = fixed
    w_of, run_wmin, run_wmax, uneven, hauled_tau = s.__dict__.get("_run_weight_range") or (None,) * 5
    if w_of is not w:  # the weights are fixed through a Newton solve: their per-run range once per array
        run_wmin = np.minimum.reduceat(w, s.run_start) if nr else w
        run_wmax = np.maximum.reduceat(w, s.run_start) if nr else w
        uneven = bool(np.any(tied_run & (run_wmin != run_wmax)))
        hauled_tau = hauled_P / w[hauled_last]  # a hauled run's first piece: its haul force over the last's weight
        s._run_weight_range = (w, run_wmin, run_wmax, uneven, hauled_tau)
    tau = np.zeros(nr)
    tau[hauled_at] = hauled_tau
    strict = (tied_run & (L > s.run_L0)).nonzero()[0]
    if len(strict) == 0:
        return tau, taut
    lam_e = L[strict] / s.run_L0[strict] - 1.0
    t_lam = by_material(s, s.run_mat[strict], lam_e, "tension", _kappa(s, runs=strict))
    if not uneven:  # each tied run's pieces share one weight: the bracket below is closed already
        tau[strict] = t_lam / run_wmax[strict]
        return tau, taut
    wmin, wmax = run_wmin[strict], run_wmax[strict]
    lo = t_lam / wmax
    hi = t_lam / wmin
    t = 0.5 * (lo + hi)  # the root when the bracket is closed
    todo = (hi - lo > 1e-15 * hi).nonzero()[0]
    if len(todo):
        # pieces of the runs still to solve
        runs = strict[todo]
        pieces, owner = _run_pieces(s, runs)
        lk, wk, mk = l[pieces], w[pieces], s.piece_mat[pieces]
        kk = _kappa(s, pieces=pieces)
        L0 = s.run_L0[runs]
        lo_t, hi_t = lo[todo], hi[todo]
        n_todo = len(runs)
        lk_wk = lk * wk  # (read by every Newton step below too: a * b * c is (a * b) * c)
        # start at the run's stretch tension over its length-weighted mean weight (inside the
        # bracket; exact for a rope of constant stiffness in the limit of small strain)
        w_mean = np.bincount(owner, lk_wk, minlength=n_todo) / np.bincount(owner, lk, minlength=n_todo)
        tt = np.clip(t_lam[todo] / w_mean, lo_t, hi_t)
        # within one solve the last evaluation's tensions are closer still (the geometry moved a
        # step); the solver clears them when a solve starts, so a solve's numbers do not depend on
        # what was solved before
        last = s.__dict__.get("_last_tau")
        if last is not None and last[0] is w:
            prev = last[1][runs]
            tt = np.where((prev > lo_t) & (prev < hi_t), prev, tt)
        # what every step below reads unchanged, made once; no piece tension below is negative
        # (weights >= 0, tt inside a bracket from t_lam / wmax >= 0)
        strain, dstrain = _law(s, mk, kk, "strain", positive=True), _law(s, mk, kk, "dstrain", positive=True)
        f_tol = 1e-15 * L0
        for _ in range(100):
            Tk = wk * tt[owner]
            one_e = 1.0 + strain(Tk)
            f = np.bincount(owner, lk / one_e, minlength=n_todo) - L0
            lo_t = np.where(f > 0, tt, lo_t)
            hi_t = np.where(f < 0, tt, hi_t)
            done = (np.abs(f) <= f_tol) | (hi_t - lo_t <= 1e-15 * hi_t)
            if done.all():
                break  # (the slope is needed only for another step)
            fp = -np.bincount(owner, lk_wk * dstrain(Tk) / one_e ** 2, minlength=n_todo)
            # a flat f (fp = 0) gives no Newton step: inf, refused below like any step off the bracket
            step = tt - np.divide(f, fp, out=np.full(n_todo, np.inf), where=fp != 0.0)
            # inside the (finite) bracket: a step that is not a number or infinite fails both tests
            inside = (step > lo_t) & (step < hi_t)
            tt = np.where(inside, step, 0.5 * (lo_t + hi_t))
        t[todo] = tt
    tau[strict] = t
    s._last_tau = (w, tau)
    return tau, taut


def _run_pieces(s: System, runs: IntArray) -> tuple[IntArray, IntArray]:
    """(every piece of the runs ``runs``, in order; the position in ``runs`` of each), kept per System by runs."""
    memo = s.__dict__.setdefault("_run_pieces_memo", {})
    key = runs.tobytes()
    hit = memo.get(key)
    if hit is None:
        counts = s.run_count[runs]
        pieces = np.repeat(s.run_start[runs] - np.cumsum(counts) + counts, counts) + np.arange(counts.sum())
        owner = np.repeat(np.arange(len(runs)), counts)
        if len(memo) > 64:
            memo.clear()
        hit = memo[key] = (pieces, owner)
    return hit


def _pieces_at(s: System, x: FloatArray) -> tuple[FloatArray, FloatArray, bool, FloatArray]:
    """Point positions, piece lengths, whether no piece has zero length, and piece unit vectors at ``x``."""
    xy = s.positions(x)
    d = xy[s.b] - xy[s.a]
    l = np.hypot(d[:, 0], d[:, 1])
    no_zero_length = bool(l.all())
    if no_zero_length:
        u = d / l[:, None]
    else:
        u = np.divide(d, l[:, None], out=np.zeros(d.shape), where=(l > 0)[:, None])
    return xy, l, no_zero_length, u


def directions(s: System, x: FloatArray) -> FloatArray:
    """The unit vector of every piece at ``x`` (what the friction weights read), as :func:`evaluate` has it,
    without solving the run tensions."""
    return _pieces_at(s, x)[3]


def evaluate(s: System, x: FloatArray, w: FloatArray | None = None, kc: FloatArray | None = None) -> State:
    """The state at free coordinates ``x`` (m) with piece weights ``w`` (None: frictionless)."""
    xy, l, no_zero_length, u = _pieces_at(s, x)
    L = np.add.reduceat(l, s.run_start) if s.n_runs else np.zeros(0)
    return _loaded(s, x, xy, l, no_zero_length, u, L, w, kc)


def reweighted(s: System, st: State, w: FloatArray | None = None, kc: FloatArray | None = None) -> State:
    """:func:`evaluate` at ``st.x`` with piece weights ``w`` (None: frictionless), the geometry (positions, piece
    lengths and directions, run lengths, contact penetrations) taken from ``st``, where it is the same numbers:
    only the weights differ."""
    return _loaded(s, st.x, st.xy, st.l, st.no_zero_length, st.u, st.L, w, kc, (st.pen, st.closed))


def _loaded(s: System, x: FloatArray, xy: FloatArray, l: FloatArray, no_zero_length: bool, u: FloatArray,
            L: FloatArray, w: FloatArray | None, kc: FloatArray | None, contact: tuple | None = None) -> State:
    """The state at ``x`` of :func:`evaluate` from its geometry: run tensions, piece forces, out-of-balance.

    ``contact``: (penetrations, whether any is closed) at this geometry when known.
    """
    if w is None:
        w = s.ones
    tau, taut = solve_run_tensions(s, L, l, w)
    if not s.n_pieces:
        T = np.zeros(0)
    else:
        T = tau[s.piece_run] if w is s.ones else w * tau[s.piece_run]
    kappa = None if s.soft is None else s.soft[s.piece_run]  # = _kappa(s, pieces=every piece)
    eps = by_material(s, s.piece_mat, T, "strain", kappa) if s.n_pieces else np.zeros(0)
    if kc is None:
        kc = contact_stiffness(s)
    order_cos = pass_order.cosines(s, u)
    if contact is None:
        # 0 where the contact is off (s_min_on = -inf); one-sided along the piece's order (solver.pass_order)
        pen = np.maximum(s.s_min_on - l * order_cos, 0.0)
        closed = bool(pen.any())
    else:
        pen, closed = contact
    N = T - kc * pen if closed else T
    if s.n_pieces:
        # dPi/dx_a = -N u, dPi/dx_b = +N u; a closed contact pushes along the piece's order direction
        nu = (T[:, None] * u - (kc * pen)[:, None] * s.order_ref if closed else N[:, None] * u).reshape(-1)
        g = np.bincount(s.g_idx, nu[s.g_src] * s.g_sgn, minlength=s.n_dof) - s.F
    else:
        g = -s.F
    return State(x=x, xy=xy, l=l, u=u, w=w, L=L, tau=tau, taut=taut, T=T, eps=eps, pen=pen, N=N, g=g,
                 closed=closed, no_zero_length=no_zero_length, order_cos=order_cos,
                 potential_from=(s, s.soft, x, L, kc, pen))


_SGN = np.array([1.0, 1.0, -1.0, -1.0])
_LOCAL_I = np.repeat(np.arange(4), 4)
_LOCAL_J = np.tile(np.arange(4), 4)


def tangent_values(s: System, st: State, kc: FloatArray | None = None, exact: bool = False) -> FloatArray:
    """Values of the tangent K = d g / d x (N/m) at fixed piece weights, on the static pattern ``s.k_rows/k_cols``.

    K = sum_k [max(N_k, 0)/l_k (I - u u^T) + contact k_c u u^T] (geometric and contact parts) + for each
    taut tied run the rank-one term (sum_k w_k grad l_k)(d tau/d x)^T with
    d tau/d x = sum_j grad l_j / (1 + eps_j) / D, D = sum_j l_j w_j eps'(T_j) / (1 + eps_j)^2
    (implicit differentiation of the run's length equation).  The k == j terms of the
    rank-one part are folded into each piece's own 4x4 block.
    """
    if s.n_pieces == 0:
        return np.zeros(0)
    if kc is None:
        kc = contact_stiffness(s)
    return np.concatenate(_block_values(s, st, kc, exact, None))[s.k_src] * s.k_sgn


@dataclass(frozen=True)
class PartPattern:
    """Where one part's tangent entries come from: its pieces and tied-run pairs, and its dense block's layout."""

    dofs: IntArray  # the part's free coordinates, in order (the block's rows and columns)
    pieces: IntArray  # the part's pieces, in order
    pair_k: IntArray  # the part's pairs, as positions in ``pieces``
    pair_j: IntArray
    pair_run: IntArray  # and their runs (global run numbers)
    src: IntArray  # per kept entry of the part, in pattern order: its index into the part's packed block values
    sgn: FloatArray  # and its sign
    lin: IntArray  # and its place in the part's dense block, row-major


#: (the k_src array of the topology they belong to, {part: PartPattern}): a drag step's System shares it.
_PART_PATTERNS: list = [None, {}]


def part_pattern(s: System, part: int) -> PartPattern:
    """The :class:`PartPattern` of part ``part``, kept per topology (it depends on the index arrays alone)."""
    if _PART_PATTERNS[0] is not s.k_src:
        _PART_PATTERNS[:] = [s.k_src, {}]
    memo = _PART_PATTERNS[1]
    pat = memo.get(part)
    if pat is None:
        if len(memo) >= 64:
            memo.clear()
        pat = memo[part] = _part_pattern(s, part)
    return pat


def _part_pattern(s: System, part: int) -> PartPattern:
    """:func:`part_pattern`, computed: the part's kept entries (every entry on one of its dofs), in the same order."""
    dofs = np.flatnonzero(s.dof_comp == part)
    pieces = np.flatnonzero(s.piece_comp == part)
    local_piece = np.full(s.n_pieces, -1, dtype=np.intp)
    local_piece[pieces] = np.arange(len(pieces))
    pairs = np.flatnonzero(s.piece_comp[s.pair_k] == part) if len(s.pair_k) else np.zeros(0, np.intp)
    local_pair = np.full(len(s.pair_k), -1, dtype=np.intp)
    local_pair[pairs] = np.arange(len(pairs))
    keep = np.flatnonzero(s.dof_comp[s.k_rows] == part)
    n, m, np_, nq = s.n_pieces, len(s.pair_k), len(pieces), len(pairs)
    src = s.k_src[keep]
    block = src < 3 * n  # a piece's own block value: component src // n of piece src % n
    local = np.empty(len(src), dtype=np.intp)
    local[block] = (src[block] // n) * np_ + local_piece[src[block] % n]
    q = src[~block] - 3 * n  # else a pair's: component q // m of pair q % m
    local[~block] = 3 * np_ + (q // max(m, 1)) * nq + local_pair[q % max(m, 1)]
    local_dof = np.full(s.n_dof, -1, dtype=np.intp)
    local_dof[dofs] = np.arange(len(dofs))
    lin = local_dof[s.k_rows[keep]] * len(dofs) + local_dof[s.k_cols[keep]]
    pat = PartPattern(dofs=dofs, pieces=pieces, pair_k=local_piece[s.pair_k[pairs]],
                      pair_j=local_piece[s.pair_j[pairs]], pair_run=s.pair_run[pairs], src=local,
                      sgn=s.k_sgn[keep], lin=lin.astype(np.intp))
    for arr in (pat.dofs, pat.pieces, pat.pair_k, pat.pair_j, pat.pair_run, pat.src, pat.sgn, pat.lin):
        arr.flags.writeable = False
    return pat


def part_tangent(s: System, st: State, kc: FloatArray, exact: bool, part: int) -> FloatArray:
    """The dense block of the tangent on part ``part``'s coordinates (:attr:`PartPattern.dofs`), N/m: bit for bit
    the full dense tangent's rows and columns of those coordinates (the same values summed in the same order),
    from the part's own pieces alone (a part's pieces reach only its own coordinates)."""
    pat = part_pattern(s, part)
    m = len(pat.dofs)
    if not len(pat.pieces):
        return np.zeros((m, m))
    val = np.concatenate(_block_values(s, st, kc, exact, pat))[pat.src] * pat.sgn
    return np.bincount(pat.lin, val, minlength=m * m).reshape(m, m)


def _block_values(s: System, st: State, kc: FloatArray, exact: bool, on: PartPattern | None) -> list[FloatArray]:
    """The tangent's packed block values: [axx, axy, ayy] of each piece's 2x2 block, then [xx, xy, yx, yy] of each
    tied-run pair's rank-one block (see :func:`tangent_values`), of every piece and pair (``on`` None) or of
    those of one part (each value the same number either way)."""
    unit = st.w is s.ones  # frictionless: every weight 1, so the products by w are left out (same numbers)
    if on is None:
        u, l, N, T, eps, w, pen, ref = st.u, st.l, st.N, st.T, st.eps, st.w, st.pen, s.order_ref
        piece_run, piece_mat, k, j, r = s.piece_run, s.piece_mat, s.pair_k, s.pair_j, s.pair_run
    else:
        P = on.pieces
        u, l, N, T, eps, w, pen, kc = st.u[P], st.l[P], st.N[P], st.T[P], st.eps[P], st.w[P], st.pen[P], kc[P]
        ref = s.order_ref[P]
        piece_run, piece_mat, k, j, r = s.piece_run[P], s.piece_mat[P], on.pair_k, on.pair_j, on.pair_run
    # the spacing contact pushes along the piece's fixed order direction (solver.pass_order), so it adds no
    # geometric stiffness: the rope's own pull T does (T = N wherever no contact is closed)
    pull = T if st.closed else (N if exact else np.maximum(N, 0.0))
    geo = pull / l if st.no_zero_length else np.divide(pull, l, out=np.zeros(l.shape), where=l > 0)
    run_coef = None
    if st.taut.any():
        c = 1.0 / (1.0 + eps)
        de = by_material(s, piece_mat, T, "dstrain", None if s.soft is None else s.soft[piece_run])
        D = np.bincount(piece_run, (l if unit else l * w) * de * c * c, minlength=s.n_runs)
        run_coef = np.divide(1.0, D, out=np.zeros(D.shape), where=st.taut & (D > 0))
        axial = (c if unit else w * c) * run_coef[piece_run]
    else:
        axial = 0.0
    ux, uy = u[:, 0], u[:, 1]
    # 2x2 block A = geo (I - u u^T) + axial u u^T + contact r r^T (r: the order direction), stored as (xx, xy, yy)
    axx = geo * (1.0 - ux * ux) + axial * ux * ux
    axy = (axial - geo) * ux * uy
    ayy = geo * (1.0 - uy * uy) + axial * uy * uy
    if st.closed:
        kcp = np.where(pen > 0, kc, 0.0)
        rx, ry = ref[:, 0], ref[:, 1]
        axx, axy, ayy = axx + kcp * rx * rx, axy + kcp * rx * ry, ayy + kcp * ry * ry
    # every kept entry is one of these block values times +-1 (index map built by _pattern)
    packed = [axx, axy, ayy]
    if len(k):
        cj = 1.0 / (1.0 + eps[j])
        pc = w[k] * cj * (run_coef[r] if run_coef is not None else 0.0)
        packed += [ux[k] * ux[j] * pc, ux[k] * uy[j] * pc, uy[k] * ux[j] * pc, uy[k] * uy[j] * pc]
    return packed


_SGN = np.array([1.0, 1.0, -1.0, -1.0])
_LOCAL_I = np.repeat(np.arange(4), 4)
_LOCAL_J = np.tile(np.arange(4), 4)
_LOCAL_AB = (_LOCAL_I % 2) * 2 + (_LOCAL_J % 2)
_LOCAL_SG = (_SGN[_LOCAL_I] * _SGN[_LOCAL_J])[None, :]


def _pattern(s: System) -> None:
    """Static sparsity pattern of the tangent: triplet rows/cols, kept entries, CSC map."""
    rows = [s.piece_dofs[:, _LOCAL_I].reshape(-1)]
    cols = [s.piece_dofs[:, _LOCAL_J].reshape(-1)]
    if len(s.pair_k):
        rows.append(s.piece_dofs[s.pair_k][:, _LOCAL_I].reshape(-1))
        cols.append(s.piece_dofs[s.pair_j][:, _LOCAL_J].reshape(-1))
    row = np.concatenate(rows) if rows else np.zeros(0, np.intp)
    col = np.concatenate(cols) if cols else np.zeros(0, np.intp)
    keep = (row >= 0) & (col >= 0)
    s.k_keep = np.flatnonzero(keep)
    # where each kept entry's value sits in tangent_values' packed list [axx, axy, ayy] of the
    # pieces, then [xx, xy, yx, yy] of the pairs (each a block of values, one per piece/pair)
    n, m = len(s.piece_dofs), len(s.pair_k)
    comp = np.array([0, 1, 1, 2])[_LOCAL_AB]
    src = [(comp[None, :] * n + np.arange(n)[:, None]).reshape(-1)]
    if m:
        src.append((3 * n + _LOCAL_AB[None, :] * m + np.arange(m)[:, None]).reshape(-1))
    s.k_src = np.concatenate(src).astype(np.intp)[s.k_keep]
    s.k_sgn = np.broadcast_to(_LOCAL_SG, (n + m, 16)).reshape(-1)[s.k_keep].copy()
    s.k_rows, s.k_cols = row[keep], col[keep]
    n = max(s.n_dof, 1)
    lin = s.k_cols.astype(np.int64) * n + s.k_rows  # column-major: CSC order after unique
    uniq, inv = np.unique(lin, return_inverse=True)
    s.csc_map = inv.reshape(-1)
    s.csc_indices = (uniq % n).astype(np.int32)
    s.csc_indptr = np.concatenate([[0], np.cumsum(np.bincount(uniq // n, minlength=s.n_dof))]).astype(np.int32)
    s.dense_lin = s.k_rows.astype(np.int64) * n + s.k_cols
