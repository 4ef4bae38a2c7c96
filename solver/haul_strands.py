"""A rig as strands of rope with their own unstretched lengths, for hauling by rope paid in.

A haul plan controls rope lengths, not forces: every run of the rig (rig-format.md "Ropes")
becomes a :class:`Strand`, a rope of its own between two tied ends whose unstretched length
``L0`` (m) the plan sets.  The hauled end becomes tied at the haul team, so a stroke that
pays in ``p`` metres is the same strand with ``L0 - p``; the existing tied-run machinery of
the solver then finds the geometry and every tension, and the haul force is the tension of
the strand's last piece.  A progress capture can split its strand in two (the capture
holding) and join it again (the rope running over its sheave).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Mapping

from solver.assembly import compile_rig
from solver.errors import RigModelError
from solver.model import Force, Pass, Point, Rig, Rope

Positions = Mapping[str, tuple[float, float]]

#: Roles of a strand: on the load side (kept when the team lets go), the hauled one, or the
#: capture rope's part beyond the capture that is not hauled (a compound's first stage).
LOAD, HAUL, TAIL = "load", "haul", "tail"


@dataclass(frozen=True)
class Strand:
    """One run of a rope as a rope of its own: ``passes`` from tied end to tied end, ``L0`` unstretched, m."""

    key: str
    rope: str
    material: str
    passes: tuple[Pass, ...]
    L0: float
    role: str = LOAD

    def capture_index(self) -> int | None:
        """Index of the progress capture among this strand's middle passes, else None."""
        return next((i for i, ps in enumerate(self.passes[1:-1], start=1) if ps.how == "capture"), None)

    def drawn_length(self, pos: Positions) -> float:
        """Sum of the straight pieces between consecutive passes at ``pos``, m."""
        return sum(math.dist(pos[a.at], pos[b.at]) for a, b in zip(self.passes, self.passes[1:]))


def strands_of(rig: Rig) -> list[Strand]:
    """Every run of ``rig`` as a strand with the unstretched length the rig sets (drawn, slack, pretension)."""
    system = compile_rig(rig, "haul")  # RigModelError in words when the rig cannot be solved at all
    runs = [(rope, run) for rope in rig.ropes for run in rope.runs()]
    if [rope.id for rope, _ in runs] != list(system.run_rope):
        raise RigModelError("the rig's runs could not be matched to its ropes", subject=rig.ropes[0].id)
    out = []
    for (rope, run), L0 in zip(runs, system.run_L0.tolist()):
        passes = tuple(rope.path[run.first:run.last + 1])
        end = passes[-1]
        if end.how == "hauled":
            passes = passes[:-1] + (replace(end, how="tied"),)
        out.append(Strand(f"{rope.id}#{run.index}", rope.id, rope.material, passes, float(L0),
                          HAUL if run.hauled else LOAD))
    return out


def as_rig(base: Rig, strands: list[Strand], pos: Positions, load: Point, moving_against: Force | None) -> Rig:
    """A solvable Rig: ``base``'s specs and settings, points at ``pos``, one rope per strand.

    Points no strand uses are left out (a travelling pulley whose ropes went slack).  The
    load is held fixed (stuck) unless ``moving_against`` is given: then it is free, with that
    force resisting its motion (or it is a free load as the file says).  Each rope is rigged
    hand-tight as drawn; solve it with ``unstretched_m=lengths(strands)`` for the strands' lengths.
    """
    used = {ps.at for st in strands for ps in st.passes}
    points = []
    for p in base.points:
        if p.id not in used and p.id != load.id:
            continue
        x, y = pos[p.id]
        if p.id == load.id:
            fixed = False if (moving_against is not None or not load.is_fixed) else True
            points.append(replace(p, x=x, y=y, fixed=fixed))
        else:
            points.append(replace(p, x=x, y=y))
    forces = tuple(f for f in base.forces if f.at in used or f.at == load.id)
    if moving_against is not None:
        forces += (moving_against,)
    ropes = tuple(Rope(st.key, st.material, st.passes) for st in strands)
    settings = replace(base.settings, motion="haul")
    return replace(base, points=tuple(points), ropes=ropes, forces=forces, settings=settings)


def lengths(strands: list[Strand]) -> dict[str, float]:
    """Unstretched length of each strand by its rope id in :func:`as_rig`, m."""
    return {st.key: st.L0 for st in strands}


def cut_at_capture(st: Strand, piece_l0: list[float]) -> tuple[Strand, Strand]:
    """(load side, beyond) of a strand split at its capture; ``piece_l0`` = unstretched length of each piece, m."""
    ci = st.capture_index()
    assert ci is not None
    grip = replace(st.passes[ci], how="tied", hardware=None, grab=None)
    held = Strand(st.key + "<", st.rope, st.material, st.passes[:ci] + (grip,), sum(piece_l0[:ci]), LOAD)
    beyond = Strand(st.key + ">", st.rope, st.material, (grip,) + st.passes[ci + 1:],
                    sum(piece_l0[ci:]), st.role if st.role == HAUL else TAIL)
    return held, beyond


def joined(held: Strand, beyond: Strand, capture: Pass) -> Strand:
    """The strand of a capture whose rope runs again: ``held`` + ``beyond`` over the capture's sheave."""
    passes = held.passes[:-1] + (capture,) + beyond.passes[1:]
    return Strand(held.key.rstrip("<"), held.rope, held.material, passes, held.L0 + beyond.L0, beyond.role)
