"""A rig compiled to flat arrays (:class:`System`): points -> free coordinates, ropes -> pieces and runs.

The solver's unknowns are the free points' coordinates (2 per free structural point); each rope
is cut into pieces (straight spans between consecutive passes) grouped into runs (rig-format.md
"Ropes").  Everything the Newton iteration needs is held here as flat numpy arrays so that no
Python loop over pieces runs inside the iteration.  Built by :mod:`solver.compile`.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray

from solver.model import Material, Rig
from solver.stretch import StretchCurve

FloatArray = NDArray[np.float64]
IntArray = NDArray[np.intp]

#: Pass kinds, coded.
PASS_NONE, PASS_PULLEY, PASS_SLIDING, PASS_EDGE = 0, 1, 2, 3


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
    crossed_below: FloatArray = field(default=None)  # per piece: 0 where the contact acts, else -inf (pass_order.crossed)
    contact_k: FloatArray = field(default=None)  # per piece: the spacing contact's stiffness, N/m (evaluate.contact_stiffness)
    keep_len: FloatArray = field(default=None)  # per piece: shorter than this it keeps its order direction (pass_order.KEEP x s_min)
    haul_P_or_0: FloatArray = field(default=None)  # run_P on hauled runs, 0 on tied ones
    run_L0_div: FloatArray = field(default=None)  # run_L0 on tied runs, 1 on hauled ones
    drawn_xy: FloatArray = field(default=None)  # (n_points, 2) site coordinates as drawn, m (xy0 + origin, bit for bit as read)
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


def per_piece(s: System, per_comp: FloatArray, default: float) -> FloatArray:
    """A per-part value for every piece; ``default`` for pieces between fixed points."""
    out = np.full(s.n_pieces, float(default))
    on = s.piece_comp >= 0
    out[on] = per_comp[s.piece_comp[on]]
    return out

