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


def rope_name_labels(rig: Rig, pos: Mapping[str, tuple[float, float]], memo: dict) -> list:
    """One label per rope (kind "rope"); a rope whose name, colour and piece are those of the last call keeps
    its label object (``memo``: rope id -> (inputs, label), kept by the caller), as the placer's caches want."""
    out, seen = [], set()
    for i, rope in enumerate(rig.ropes):
        ends = longest_piece(rope, pos)
        if ends is None:
            continue
        colour = theme.rope_colour(i)
        name = drawn(rope.name)
        inputs = (name, colour.rgba(), ends)
        kept = memo.get(rope.id)
        if kept is not None and kept[0] == inputs:
            lab = kept[1]
        else:
            lab = OverlayLabel(kind="rope", key=("rope", rope.id), lines=(name,), values={},
                               colour=colour, priority=NAME_PRIORITY, base=ends[0], end=ends[1])
            memo[rope.id] = (inputs, lab)
        seen.add(rope.id)
        out.append(lab)
    for gone in [k for k in memo if k not in seen]:
        del memo[gone]
    return out
