"""The water's numbers as overlay labels: the tension at both ends of each bowed rope's wet part and the current's
push on each body, placed by the overlay's label placer with the tensions and forces.

The water item (``sketchpad.water_layer``) used to write them at a fixed pixel offset, outside the placer, so
one could sit on a site feature's name or under a placed label's box.  As labels (kinds "wet-end" and
"current") the placer keeps them clear of every other label and obstacle, and they follow a drag like the
rest.  The numbers are the solver's (``Result.water``: :class:`solver.water_result.WetRope` and
:class:`~solver.water_result.BodyDrag`) in the rig's force unit, worded as the report's water table words them
(``solver.water_text``).  A label whose inputs are those of the last call keeps its object (``memo``, kept by
the caller), as the placer's caches want (the pattern of ``sketchpad.rope_names``).
"""

from __future__ import annotations

import math
from typing import Mapping

import numpy as np

from sketchpad import theme
from sketchpad.overlay.labels import OverlayLabel
from solver.model import Rig
from solver.result import Result
from solver.units import format_force

#: above rope names (40) and turns (30-35), below the piece tensions (50-80): a wet end repeats its piece's
#: tension where the rope meets the water, so the piece's own number goes first on a crowded plan
WET_END_PRIORITY = 45.0
#: a load on the rig: above every rope tension, below anchors (90+), hauls (94) and loads (95)
CURRENT_PRIORITY = 85.0
#: a wet-end label hangs beside this share of its wet part, from the wet end (ours: near enough to the end to
#: read as its number, long enough for the placer's spots along it to reach past a body's other labels)
WET_STRETCH_SHARE = 0.35
#: the current's push arrow, metres downstream of its body (drawn by ``water_layer.bow_marks``)
PUSH_ARROW_M = 3.0
#: the overlay layer each water label shows with: wet-end tensions with the rope tensions, the push with the forces
LAYER_OF_KIND = {"wet-end": "tensions", "current": "anchors"}


def shown(labels: list, layer_on) -> list:
    """The water ``labels`` whose layer (:data:`LAYER_OF_KIND`) ``layer_on(name)`` says is shown."""
    return [lab for lab in labels if layer_on(LAYER_OF_KIND[lab.kind])]


def push_tip(x: float, y: float, fx: float, fy: float) -> tuple[float, float]:
    """Site point (m) of the tip of the current's push arrow on a body at (x, y) pushed by (fx, fy) N."""
    n = math.hypot(fx, fy)
    return (x + PUSH_ARROW_M * fx / n, y + PUSH_ARROW_M * fy / n)


def wet_water(rig: Rig, result: Result | None):
    """``result``'s water (:class:`solver.water_result.WaterResult`) when the plan shows it, else None."""
    if result is None or not result.ok or rig.view != "plan":
        return None
    return getattr(result, "water", None)


def water_labels(rig: Rig, result: Result | None, memo: dict,
                 pos: Mapping[str, tuple[float, float]] | None = None) -> list:
    """One "current" label per body the water pushes (hung along its push arrow) and one "wet-end" label at each end
    of each bowed rope's wet part (hung beside the stretch of the bowed rope from that end, :func:`stretch_end`); ``pos``: scene positions of the points
    (``sketchpad.overlay.labels.scene_positions``), the result's own when not given."""
    water = wet_water(rig, result)
    if water is None:
        memo.clear()
        return []
    unit = rig.display.force
    out, seen = [], set()
    for b in water.bodies:
        if b.force_N <= 0 or b.point not in result.points:
            continue
        base = pos[b.point] if pos is not None and b.point in pos else _scene(result.points[b.point])
        tip = push_tip(base[0], -base[1], b.fx_N, b.fy_N)
        out.append(_label(memo, seen, "current", b.point, f"current's push {format_force(b.force_N, unit)}",
                          {"force_N": float(b.force_N)}, theme.FLOW_LABEL, CURRENT_PRIORITY, base, end=_scene(tip)))
    for w in water.ropes:
        if not w.bowed:
            continue
        wet = np.asarray(w.polyline[w.wet_from:w.wet_to + 1], dtype=float)
        for pts, t, end in ((wet, w.tension_in_N, "in"), (wet[::-1], w.tension_out_N, "out")):
            out.append(_label(memo, seen, "wet-end", (w.rope, w.index, end), f"wet end {format_force(t, unit)}",
                              {"tension_N": float(t)}, theme.WET_TENSION, WET_END_PRIORITY, _scene(pts[0]),
                              end=_scene(stretch_end(pts))))
    for gone in [k for k in memo if k not in seen]:
        del memo[gone]
    return out


def _scene(xy) -> tuple[float, float]:
    return (float(xy[0]), -float(xy[1]))


def stretch_end(pts: np.ndarray) -> tuple[float, float]:
    """The site point (m) :data:`WET_STRETCH_SHARE` of the way along the polyline ``pts`` (n x 2, from the wet end
    inward): a wet-end label hangs beside the stretch of its own rope from the wet end to there, so two ropes
    ending at one body (a V of tethers) each have their number beside their own rope."""
    if len(pts) < 2:
        return (float(pts[0][0]), float(pts[0][1]))
    run = np.concatenate(([0.0], np.cumsum(np.hypot(*np.diff(pts, axis=0).T))))
    at = WET_STRETCH_SHARE * run[-1]
    return (float(np.interp(at, run, pts[:, 0])), float(np.interp(at, run, pts[:, 1])))


def _label(memo: dict, seen: set, kind: str, key, text: str, values: dict, colour, priority: float,
           base: tuple[float, float], end: tuple[float, float]) -> OverlayLabel:
    """The label of (``kind``, ``key``): the memo's object when its text, numbers, colour and place are the last
    call's."""
    k = (kind, key)
    seen.add(k)
    inputs = (text, tuple(values.items()), colour.rgba(), priority, base, end)
    kept = memo.get(k)
    if kept is not None and kept[0] == inputs:
        return kept[1]
    lab = OverlayLabel(kind=kind, key=key, lines=(text,), values=values, colour=colour, priority=priority,
                       base=base, end=end)
    memo[k] = (inputs, lab)
    return lab
