"""Weak links: knots and terminations that lower a rope's strength, and rope grabs that slip.

A tied pass may name how the rope is terminated there (``Pass.termination``, one of
:data:`TERMINATIONS`).  A knot bends the rope tightly and the rope breaks there first: a
piece of rope that ends at a termination is as strong as MBS × the termination's
efficiency, and every margin of that piece (the solver's utilisation, the rope check, the
pull-needed limit) uses that strength.  A rope piece with a termination at both ends takes
the weaker one.

A rope grab (hardware of kind ``"grab"``, with ``slip_N``) on a tied pass holds the rope by
friction up to its slip force, then slides: it is a designed slip point, not a failure, but a
rigger must know the rig will not hold what it was drawn to hold.  The force a grab holds is
the difference of the tensions either side of it (a middle pass), or the tension it holds
(a rope's end).

Efficiencies are figures commonly quoted in the trade, from memory (check-values.md,
"Knots and grabs"): tests vary widely by rope, knot and dressing.  The lower end of each
quoted range is used.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Iterable

import numpy as np

if TYPE_CHECKING:
    from solver.model import Hardware, Rig
    from solver.result import Result


@dataclass(frozen=True)
class Termination:
    """A way of tying or terminating a rope at a point: the share of the rope's MBS it keeps."""

    id: str
    label: str
    efficiency: float
    source: str


#: Our own list of terminations a tied pass may name, with the strength each keeps.
TERMINATIONS: dict[str, Termination] = {t.id: t for t in (
    Termination("figure-8-loop", "figure-8 loop", 0.75,
                "a figure-8 loop keeps roughly 75-80 % of the rope's MBS (common practice, from memory); 75 % taken"),
    Termination("bowline", "bowline", 0.65,
                "a bowline keeps roughly 65-75 % of the rope's MBS (common practice, from memory); 65 % taken"),
    Termination("clove-hitch", "clove hitch", 0.60,
                "a clove hitch keeps roughly 60-65 % (from memory, no figure in our references); 60 % taken"),
    Termination("tensionless-hitch", "tensionless hitch", 0.90,
                "wraps round a large anchor with no knot under load keep close to full strength "
                "(from memory); 90 % taken to stay on the safe side"),
    Termination("sewn-eye", "sewn eye", 0.80,
                "a factory-sewn eye keeps roughly 80-90 % (from memory; use the maker's rating); 80 % taken"),
)}


def termination(term_id: str | None) -> Termination | None:
    """The termination called ``term_id``, or None (no termination, or not in :data:`TERMINATIONS`)."""
    return TERMINATIONS.get(term_id) if term_id else None


@dataclass(frozen=True)
class PieceStrength:
    """What one rope piece can carry (N): MBS × the efficiency of its weaker terminated end."""

    strength_N: float
    mbs_N: float
    efficiency: float
    termination: Termination | None
    at: str  # the point of that termination ("" when none)


def _terminated_ends(rig: "Rig") -> Iterable[tuple[str, int, str, Termination]]:
    """(rope id, piece index, point id, termination) for each piece end at a named termination."""
    for rope in rig.ropes:
        last = len(rope.path) - 1
        for k, ps in enumerate(rope.path):
            term = termination(ps.termination) if ps.how == "tied" else None
            if term is None:
                continue
            if k > 0:
                yield rope.id, k - 1, ps.at, term
            if k < last:
                yield rope.id, k, ps.at, term


def weakest_ends(rig: "Rig") -> dict[tuple[str, int], tuple[Termination, str]]:
    """(rope id, piece index) -> (its weaker termination, where), for pieces ending at a termination."""
    out: dict[tuple[str, int], tuple[Termination, str]] = {}
    for rope_id, piece, at, term in _terminated_ends(rig):
        old = out.get((rope_id, piece))
        if old is None or term.efficiency < old[0].efficiency:
            out[(rope_id, piece)] = (term, at)
    return out


def piece_efficiency(rig: "Rig", piece_rope: list[str], piece_index: np.ndarray) -> np.ndarray:
    """Per solver piece (rope id, index along its path): the share of MBS it keeps (1 with no termination)."""
    ends = weakest_ends(rig)
    eff = np.ones(len(piece_rope))
    if ends:
        for i, (rope_id, k) in enumerate(zip(piece_rope, np.asarray(piece_index).tolist())):
            hit = ends.get((rope_id, k))
            if hit is not None:
                eff[i] = hit[0].efficiency
    return eff


def piece_strengths(rig: "Rig") -> dict[tuple[str, int], PieceStrength]:
    """(rope id, piece index) -> :class:`PieceStrength` for every piece of a rope whose material is known."""
    from solver.errors import RigModelError
    from solver.materials import material_for

    ends = weakest_ends(rig)
    out: dict[tuple[str, int], PieceStrength] = {}
    for rope in rig.ropes:
        try:
            mbs = float(material_for(rig, rope.material).mbs_N)
        except RigModelError:
            continue
        for k in range(len(rope.path) - 1):
            term, at = ends.get((rope.id, k), (None, ""))
            eff = term.efficiency if term is not None else 1.0
            out[(rope.id, k)] = PieceStrength(mbs * eff, mbs, eff, term, at)
    return out


@dataclass(frozen=True)
class GrabHold:
    """A rope grab on a tied pass and the force it holds along the rope (N)."""

    rope: str
    index: int  # pass index along the rope's path
    at: str
    hardware: "Hardware"
    held_N: float

    @property
    def slips(self) -> bool:
        return self.held_N > float(self.hardware.slip_N or float("inf"))


def _grab_spec(rig: "Rig", hw_id: str | None) -> "Hardware | None":
    if not hw_id:
        return None
    from solver.errors import RigModelError
    from solver.materials import hardware_for

    try:
        hw = hardware_for(rig, hw_id)
    except RigModelError:
        return None
    return hw if hw.kind == "grab" else None


def grab_holds(rig: "Rig", result: "Result") -> list[GrabHold]:
    """Every rope grab on a tied pass, with the held force: |tension before - tension after| (an end: its tension)."""
    tension = {(s.rope, s.index): float(s.tension_N) for s in result.segments}
    out = []
    for rope in rig.ropes:
        last = len(rope.path) - 1
        for k, ps in enumerate(rope.path):
            hw = _grab_spec(rig, ps.hardware) if ps.how == "tied" else None
            if hw is None:
                continue
            before = tension.get((rope.id, k - 1), 0.0) if k > 0 else 0.0
            after = tension.get((rope.id, k), 0.0) if k < last else 0.0
            out.append(GrabHold(rope.id, k, ps.at, hw, abs(before - after)))
    return out


@dataclass(frozen=True)
class WeakLink:
    """One weak link for the report: what, where, and the strength or slip figure used (N)."""

    kind: str  # "termination" or "grab"
    rope: str
    at: str
    label: str
    efficiency: float | None  # termination: share of MBS kept
    strength_N: float | None  # termination: MBS × efficiency; grab: its MBS
    slip_N: float | None
    force_N: float | None  # the largest tension of the pieces there, or the grab's held force
    source: str


def weak_links(rig: "Rig", result: "Result | None") -> list[WeakLink]:
    """Every termination and rope grab in the rig, with the figures its margin used (for the report)."""
    strengths = piece_strengths(rig)
    tension = {(s.rope, s.index): float(s.tension_N) for s in result.segments} if result is not None and result.ok \
        else {}
    out: list[WeakLink] = []
    for rope in rig.ropes:
        last = len(rope.path) - 1
        for k, ps in enumerate(rope.path):
            term = termination(ps.termination) if ps.how == "tied" else None
            if term is not None:
                near = [j for j in (k - 1, k) if 0 <= j < last]
                st = strengths.get((rope.id, near[0])) if near else None
                force = max((tension[(rope.id, j)] for j in near if (rope.id, j) in tension), default=None)
                out.append(WeakLink("termination", rope.id, ps.at, term.label, term.efficiency,
                                    st.mbs_N * term.efficiency if st is not None else None, None, force, term.source))
    if result is not None and result.ok:
        for g in grab_holds(rig, result):
            out.append(WeakLink("grab", g.rope, g.at, g.hardware.name, None, g.hardware.mbs_N, g.hardware.slip_N,
                                g.held_N, g.hardware.source))
    else:
        for rope in rig.ropes:
            for ps in rope.path:
                hw = _grab_spec(rig, ps.hardware) if ps.how == "tied" else None
                if hw is not None:
                    out.append(WeakLink("grab", rope.id, ps.at, hw.name, None, hw.mbs_N, hw.slip_N, None, hw.source))
    return out


def check_grabs(rig: "Rig", result: "Result") -> list:
    """``grab-slips``: a rope grab holding more than its slip force will slide (a designed slip point)."""
    from solver.result import Warning_
    from solver.units import format_force

    unit = rig.display.force
    out = []
    for g in grab_holds(rig, result):
        if not g.slips:
            continue
        slip = float(g.hardware.slip_N)
        rope = rig.rope(g.rope)
        at = rig.point(g.at).name if rig.has_point(g.at) else g.at
        out.append(Warning_(
            "grab-slips", f"{g.rope}@{g.at}",
            f"{g.hardware.name} on {rope.name} at {at} holds {format_force(g.held_N, unit)}, more than the "
            f"{format_force(slip, unit)} at which it slips (margin {slip / g.held_N:.2f}): it will slide along the "
            f"rope, a designed slip point, and the rig will not hold as drawn. Take load off it or back it up.",
            "warning"))
    return out
