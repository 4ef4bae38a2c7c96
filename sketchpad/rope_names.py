"""Rope names as overlay labels, placed by the overlay's label placer with the tensions and forces.

A rope item draws its own name beside its longest piece while there is no result; once the force
overlay shows one, the tension labels sit on those same pieces and used to cover the names.  So
while a result is shown the name becomes one more label (a box in the rope's colour on its
longest solved piece) that the placer keeps clear of every other label, and the rope item leaves
its own name out (``SketchScene.set_rope_names_in_overlay``).
"""

from __future__ import annotations

import math
from typing import Mapping

from sketchpad import theme
from sketchpad.overlay.labels import OverlayLabel
from sketchpad.short_text import drawn
from solver.model import Rig

#: below every label that carries a number (tension labels: 50-80): names are placed last
NAME_PRIORITY = 40.0


def longest_piece(rope, pos: Mapping[str, tuple[float, float]]):
    """Scene ends (a, b) of the rope's longest piece at the given positions, or None when none is drawn."""
    best, ends = -1.0, None
    path = rope.path
    for k in range(len(path) - 1):
        a, b = pos.get(path[k].at), pos.get(path[k + 1].at)
        if a is None or b is None:
            continue
        d = math.dist(a, b)
        if d > best:
            best, ends = d, (a, b)
    return ends


#: ``rope_name_labels``' memo key of its last call (no rope id is a tuple)
_LAST = ("last call",)


def rope_name_labels(rig: Rig, pos: Mapping[str, tuple[float, float]], memo: dict) -> list:
    """One label per rope (kind "rope"); a rope whose name, colour and piece are those of the last call keeps
    its label object (``memo``: rope id -> (inputs, label), kept by the caller), as the placer's caches want.

    When the ropes are the last call's and ``pos`` hands on the very tuples of points that did not move (as
    ``scene_positions`` does during a drag), only the ropes through a moved point are looked at again: every
    other rope has the same points at the same places, so the same longest piece and the same label."""
    ropes = rig.ropes
    last = memo.get(_LAST)
    if last is not None and (last[0] is not ropes or len(last[1]) != len(pos)):
        last = None
    if last is not None:
        _ropes, last_pos, per_rope, through = last
        moved = [pid for pid, xy in pos.items() if last_pos.get(pid) is not xy]
        if any(pid not in last_pos for pid in moved):  # other points (as many): every rope afresh
            last = None
    if last is not None:
        if moved:
            per_rope = list(per_rope)
            for i in sorted({i for pid in moved for i in through.get(pid, ())}):
                per_rope[i] = _name_label(memo, i, ropes[i], pos)
                if per_rope[i] is None:
                    memo.pop(ropes[i].id, None)  # as the fresh path forgets a rope with no piece drawn
        memo[_LAST] = (ropes, pos, per_rope, through)
        return [lab for lab in per_rope if lab is not None]
    per_rope = [_name_label(memo, i, rope, pos) for i, rope in enumerate(ropes)]
    seen = {rope.id for rope, lab in zip(ropes, per_rope) if lab is not None}
    for gone in [k for k in memo if k not in seen]:
        del memo[gone]
    through: dict[str, set[int]] = {}
    for i, rope in enumerate(ropes):
        for ps in rope.path:
            through.setdefault(ps.at, set()).add(i)
    memo[_LAST] = (ropes, pos, per_rope, through)
    return [lab for lab in per_rope if lab is not None]


def _name_label(memo: dict, i: int, rope, pos: Mapping[str, tuple[float, float]]):
    """The name label of the ``i``-th rope at ``pos`` (None when no piece is drawn): the memo's when its inputs
    are the same."""
    ends = longest_piece(rope, pos)
    if ends is None:
        return None
    colour = theme.rope_colour(i)
    name = drawn(rope.name)
    inputs = (name, colour.rgba(), ends)
    kept = memo.get(rope.id)
    if kept is not None and kept[0] == inputs:
        return kept[1]
    lab = OverlayLabel(kind="rope", key=("rope", rope.id), lines=(name,), values={},
                       colour=colour, priority=NAME_PRIORITY, base=ends[0], end=ends[1])
    memo[rope.id] = (inputs, lab)
    return lab
