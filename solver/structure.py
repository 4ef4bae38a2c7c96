"""The index arrays a System's structure alone decides: parts, tangent pattern, report indices.

They depend only on which points are free, the pieces' end points and the runs' layout, so a rig
that differs from a recent one only in coordinates or forces (a dragged point, a force slider)
reuses them (:data:`solver.memo.TOPOLOGIES`).
"""

from __future__ import annotations

import numpy as np
import scipy.sparse

from solver import memo
from solver.system import PASS_EDGE, PASS_PULLEY, Grouping, IntArray, System

#: System fields that depend only on the topology key of :func:`finish_topology` (never mutated in place).
_TOPOLOGY_FIELDS = ("piece_dofs", "contact_on", "pair_k", "pair_j", "pair_run", "n_comp", "dof_comp",
                    "run_comp", "piece_comp", "comp_label", "comp_rep", "k_keep", "k_src", "k_sgn", "k_rows", "k_cols",
                    "csc_map", "csc_indices", "csc_indptr", "dense_lin", "g_keep", "g_idx", "g_src", "g_sgn",
                    "run_on", "piece_on", "free_at", "ones", "run_tied", "point_groups", "piece_groups")


def finish_topology(s: System) -> None:
    """Build the assembly index arrays once: piece dofs, tied-run piece pairs, material masks.

    The index arrays depend only on which points are free, the pieces' end points and the
    runs' layout, so a rig that differs from a recent one only in coordinates or forces (a
    dragged point, a force slider) reuses them (:data:`solver.memo.TOPOLOGIES`); the coordinate-dependent
    parts are built by :func:`solver.compile.with_geometry`.
    """
    key = (s.free.tobytes(), s.a.tobytes(), s.b.tobytes(), s.run_start.tobytes(), s.run_hauled.tobytes())
    topo = memo.TOPOLOGIES.get(key)
    if topo is None:
        _topology(s)
        topo = {name: getattr(s, name) for name in _TOPOLOGY_FIELDS}
        for arr in topo.values():
            if isinstance(arr, np.ndarray):
                arr.flags.writeable = False
    else:
        for name, value in topo.items():
            setattr(s, name, value)
    memo.TOPOLOGIES.put(key, topo)
    component_forces(s)
    s.haul_P_or_0 = np.where(s.run_hauled, s.run_P, 0.0) if s.n_runs else np.zeros(0)
    mbs = np.array([m.mbs_N for m in s.materials], dtype=float)
    s.piece_mbs = mbs[s.piece_mat] if s.n_pieces else np.zeros(0)
    s.has_edges = bool(np.any(s.pass_kind == PASS_EDGE))
    s.has_friction = s.has_edges or bool(np.any((s.pass_kind == PASS_PULLEY) & (s.pass_eta < 1.0)))


def report_indices(s: System, kinds: list[str]) -> None:
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
            from scipy.sparse.csgraph import connected_components  # big rigs only: a small solve skips the import

            graph = scipy.sparse.coo_matrix((np.ones(int(keep.sum())), (ends[keep], reps[keep])), shape=(nf, nf))
            n_comp, label = connected_components(graph, directed=False)
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


def component_sizes(s: System) -> None:
    """Size of each part, m: the box around its free points and every point its pieces reach."""
    if not s.n_comp:
        s.comp_size = np.zeros(0)
        return
    gather, starts = size_groups(s)
    pts = s.xy0[gather]  # every point of every part, part by part (a point may appear more than once)
    lo = np.minimum.reduceat(pts, starts, axis=0)
    hi = np.maximum.reduceat(pts, starts, axis=0)
    s.comp_size = np.maximum(np.hypot(*(hi - lo).T), 1e-3)


def size_groups(s: System) -> tuple[IntArray, IntArray]:
    """Indices into the points of each part's free points and piece ends, each once, grouped by part, and
    where each part's group starts (every part has a free point, so no group is empty).  Kept for the last structure
    sized (:data:`solver.memo.SIZE_GROUPS`): a moved copy of a rig (a drag step) has the same parts."""
    kept = memo.SIZE_GROUPS.get(s.comp_label, s.piece_comp)
    if kept is not None:
        return kept
    on = s.piece_comp >= 0
    idx = np.concatenate((np.flatnonzero(s.free), s.a[on], s.b[on]))
    lab = np.concatenate((s.comp_label, s.piece_comp[on], s.piece_comp[on]))
    n = len(s.free)
    key = np.unique(lab * n + idx)  # distinct (part, point) pairs, part by part
    gather = key % n
    starts = np.searchsorted(key // n, np.arange(s.n_comp))
    memo.SIZE_GROUPS.put((s.comp_label, s.piece_comp), (gather, starts))
    return gather, starts


def component_forces(s: System) -> None:
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
