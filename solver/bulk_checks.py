"""The rig reader's cross-checks, quick on a big rig: which points and ropes need the full check at all.

:mod:`solver.rigfile` checks every point and rope after building them (ids, coordinates,
references, path rules, hardware).  On a 10,000-point rig that is ~30,000 objects through
functions written to name the problem; here a tight pass clears the ones that plainly meet
every rule and hands back the indices of the rest, which the reader then checks in full in
the same order, so a bad file gets exactly the same error (``tests/solver/test_rigfile_fast_paths.py``).
A test here only ever clears what the full check would pass: when in doubt, an index is handed back.
"""

from __future__ import annotations

from typing import Callable, Iterator, Mapping, Sequence

from solver import model as m

#: Pass kinds that need no hardware (the full check asks pulley, edge and capture passes to name one).
_BARE_HOWS = frozenset({"tied", "sliding", "hauled"})


def all_unique(items: Sequence) -> bool:
    """True when no two items share an id (the full check, which names the repeat, is then not needed)."""
    return len({item.id for item in items}) == len(items)


def points_to_check(points: Sequence[m.Point], max_coordinate: float) -> Iterator[int]:
    """Indices of the points that may break a point rule: far out, a role on a non-person, water drag fields."""
    for i, p in enumerate(points):
        if (abs(p.x) > max_coordinate or abs(p.y) > max_coordinate or p.role is not None
                or p.wetted_area_m2 is not None or p.drag_shape is not None):
            yield i


def ropes_to_check(ropes: Sequence[m.Rope], points: Mapping[str, m.Point], material_known: Callable[[str], bool],
                   pass_fits: Callable[[m.Pass], bool]) -> Iterator[int]:
    """Indices of the ropes that may break a rope rule (rigfile's ``_check_rope``), in order.

    ``material_known(id)``: the material is in the file or the library; ``pass_fits(pass)``: the
    pass's hardware, grab and termination pass their full checks (asked once per distinct kind
    of pass: the answer depends on nothing else).
    """
    known_materials: dict[str, bool] = {}
    fitting: dict[tuple, bool] = {}
    for i, rope in enumerate(ropes):
        path = rope.path
        n = len(path)
        rg = rope.rigged
        mat = rope.material
        known = known_materials.get(mat)
        if known is None:
            known = known_materials[mat] = material_known(mat)
        if (n < 2 or not known or rg.slack_m < 0
                or rg.pretension_N is not None and (rg.pretension_N <= 0 or rg.slack_m != 0)):
            yield i
            continue
        if path[0].how != "tied" or path[-1].how not in ("tied", "hauled"):
            yield i
            continue
        before = None
        for j, ps in enumerate(path):
            point = points.get(ps.at)
            how = ps.how
            if point is None or point.kind == "person" or ps.at == before or how not in m.PASS_HOWS \
                    or how == "hauled" and j != n - 1:
                yield i
                break
            before = ps.at
            if ps.hardware is None and ps.grab is None and ps.termination is None and how in _BARE_HOWS:
                continue
            key = (how, ps.hardware, ps.grab, ps.termination)
            fits = fitting.get(key)
            if fits is None:
                fits = fitting[key] = pass_fits(ps)
            if not fits:
                yield i
                break
