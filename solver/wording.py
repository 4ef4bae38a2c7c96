"""A rigger's words for where a point moves or runs away, and how a point is named in a message."""

from __future__ import annotations

import math

from solver.model import Rig


def heading_words(vx: float, vy: float, elevation: bool) -> str:
    ang = math.degrees(math.atan2(vy, vx)) % 360.0
    if elevation:
        names = ["to the right", "up and right", "up", "up and left", "to the left", "down and left", "down",
                 "down and right"]
    else:
        names = ["east", "northeast", "north", "northwest", "west", "southwest", "south", "southeast"]
    return names[int(((ang + 22.5) % 360.0) // 45.0)]


def point_name(rig: Rig, pid: str) -> str:
    p = rig.point(pid)
    return f'"{p.id}"' if not p.label else f'"{p.id}" ({p.label})'

