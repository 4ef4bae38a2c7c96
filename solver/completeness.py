"""Is the sketch finished enough to judge?  A rig still being drawn gets a calm hint, not an alarm.

A lead drawing a first rig places points before any rope exists, and hangs a pulley on
the main line before slinging it to an anchor.  Such a rig cannot be solved, but nothing
is wrong with it yet: :func:`sketch_gap` names the first thing still missing, in words, so
the app can say "sketch incomplete: J1 is not held by any rope yet" where a finished rig
that fails gets the red failure banner.  Pure logic on the Rig (no Qt, no solving).
"""

from __future__ import annotations

from dataclasses import dataclass

from solver.model import Rig

#: the empty sketch's first message
START_HINT = ("Start with a load, an anchor and a haul team, then draw the rope from the load "
              "(keys: L load, A anchor, H haul team, R rope).")

_RUNNING = ("pulley", "sliding", "edge")  # a rope runs through these passes instead of being tied there


@dataclass(frozen=True)
class SketchGap:
    """The first unfinished part of a sketch: the point it is about (None: the whole sketch) and what to do."""

    subject: str | None
    message: str


def sketch_gap(rig: Rig) -> SketchGap | None:
    """The first thing a half-drawn rig still lacks, or None when every drawn point is part of a rope and held.

    Checked in drawing order: an empty sketch; a point no rope reaches; a free point that is
    only the loose end of one rope; a free point one rope merely runs through (a pulley or ring
    not yet slung to anything).  A free point with an applied force counts as held (a hand
    pulling sideways).  People are markers, never part of the rig.
    """
    points = [p for p in rig.points if p.is_structural]
    if not points:
        return SketchGap(None, START_HINT)
    ends: dict[str, int] = {}
    middles: dict[str, list[str]] = {}  # point id -> how each rope passing it in the middle passes it
    ropes_at: dict[str, set[str]] = {}
    for rope in rig.ropes:
        last = len(rope.path) - 1
        for k, ps in enumerate(rope.path):
            ropes_at.setdefault(ps.at, set()).add(rope.id)
            if k in (0, last):
                ends[ps.at] = ends.get(ps.at, 0) + 1
            else:
                middles.setdefault(ps.at, []).append(ps.how)
    pushed = {f.at for f in rig.forces}
    for p in points:
        if p.id not in ropes_at:
            what = "draw the rope from the load (R)" if not rig.ropes else "run a rope to it or delete it"
            return SketchGap(p.id, f"Sketch incomplete: {p.name} is not held by any rope yet — {what}.")
    for p in points:
        if p.is_fixed or p.id in pushed:
            continue
        n_ropes = len(ropes_at[p.id])
        if n_ropes == 1 and ends.get(p.id, 0) == 1 and p.id not in middles:
            return SketchGap(p.id, f"Sketch incomplete: {p.name} is a loose rope end — end the rope at an anchor, "
                                   "a load or a haul team, or tie another rope to it.")
        hows = middles.get(p.id, [])
        if n_ropes == 1 and hows and all(h in _RUNNING for h in hows) and not ends.get(p.id):
            return SketchGap(p.id, f"Sketch incomplete: the pulley at {p.name} is not slung to anything yet — "
                                   f"draw a sling from {p.name} to an anchor (R: click {p.name}, then the anchor, Enter).")
    return None
