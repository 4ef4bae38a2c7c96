"""Warnings for ropes and bodies in moving water.

* ``rope-in-current`` (danger): a rope in fast water pulls on a person or boat in the water much harder
  than the current pushes on the body itself: the water on the rope is the load.  The trade's rule is
  never to tie a rope to a person in current (common practice, no source); we warn when the water runs at
  ``FAST_WATER_M_S`` or more and the rope's pull exceeds ``TETHER_RATIO`` times the body's own drag
  (both thresholds ours).
* ``rope-bowed`` (warning): a bowed rope whose drag is more than ``BOW_SHARE`` of its tension (our own
  threshold): the rope is loaded mostly by the river, it swings and strums, and a small change of current
  changes its forces a lot.
"""

from __future__ import annotations

from solver.model import Rig
from solver.result import Result, Warning_
from solver.units import format_force, format_length, format_speed
from solver.water_site import FAST_WATER_M_S

#: A rope pulling harder than this many times the body's own drag is "far beyond" it (ours).
TETHER_RATIO = 2.0
#: A bowed rope's drag above this share of its tension is warned (ours).
BOW_SHARE = 0.5


def check_water(rig: Rig, result: Result) -> list[Warning_]:
    """Findings for ropes and bodies in moving water (none when the rig has no current)."""
    water = result.water
    if water is None:
        return []
    unit = rig.display.force
    out: list[Warning_] = []
    body = {b.point: b for b in water.bodies}
    for w in water.ropes:
        name = rig.rope(w.rope).name
        for end, pull in ((w.from_point, w.tension_in_N), (w.to_point, w.tension_out_N)):
            b = body.get(end)
            if b is None or b.speed_m_s < FAST_WATER_M_S or pull <= TETHER_RATIO * b.force_N:
                continue
            who = rig.point(end).name
            out.append(Warning_(
                "rope-in-current", f"{w.rope},{end}",
                f'rope "{name}" lies in {format_speed(b.speed_m_s, rig.display.length)} water and pulls on {who} with '
                f"{format_force(pull, unit)}, {pull / max(b.force_N, 1e-9):.1f} times the current's push on "
                f"{who} itself ({format_force(b.force_N, unit)}): the water on the rope is the load. Never tie a "
                f"rope to a person in current (the trade's rule); keep tethers out of the water or short "
                f"(warned above {TETHER_RATIO:g} times the body's own drag, our threshold).", "danger"))
        top = max(w.tension_in_N, w.tension_out_N)
        if w.bowed and w.drag_N > BOW_SHARE * top:
            out.append(Warning_(
                "rope-bowed", w.rope,
                f'rope "{name}" is bowed {format_length(w.sag_m, rig.display.length)} off its straight line: '
                f"the current pushes on it with {format_force(w.drag_N, unit)}, more than {BOW_SHARE:.0%} of its tension "
                f"({format_force(top, unit)}; our threshold). The river, not the rig, sets its load: "
                f"expect it to swing and strum, and re-check if the water rises.", "warning"))
    return out
