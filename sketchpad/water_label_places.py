"""Where the water's texts (a current's speed, "river left" / "river right") go: inside the part of the water the
rig's view shows.

A river polygon often runs far past the rig; a text placed by the polygon alone (upstream of its middle) lands
outside the view a rigger fits to the rig (``SketchView.zoom_to_fit`` frames the points with a margin).  Each text
is placed in the polygon clipped to the rig's points box with that fit's margin, so at fit zoom it is on screen and
in the water; a rig with no points, or water wholly outside that box, keeps the whole polygon.
"""

from __future__ import annotations

import math

from solver.model import Rig

#: A clipped water part smaller than this share of its polygon's area is too thin to write in: the whole is used.
MIN_SHARE = 0.02


#: The points' box is snapped out to this grid (m): a drag step re-lays the texts out only when it crosses a line
#: (ours: within the fit's margin for a rig over 8 m, coarse enough that a drag seldom crosses one).
SNAP_M = 2.0


def snapped_points_box(rig: Rig) -> tuple[float, float, float, float] | None:
    """(x0, y0, x1, y1) site metres of the rig's points snapped out to :data:`SNAP_M`, or None with no points."""
    if not rig.points:
        return None
    xs, ys = [p.x for p in rig.points], [p.y for p in rig.points]
    return (math.floor(min(xs) / SNAP_M) * SNAP_M, math.floor(min(ys) / SNAP_M) * SNAP_M,
            math.ceil(max(xs) / SNAP_M) * SNAP_M, math.ceil(max(ys) / SNAP_M) * SNAP_M)


def rig_box(rig: Rig):
    """The site box (shapely) a fitted view shows whatever the window's shape: the points' box snapped out by less
    than :data:`SNAP_M` (the fit's margin is at least a metre and 12 % of the rig's size), or None with no points."""
    from shapely.geometry import box

    b = snapped_points_box(rig)
    if b is None:
        return None
    x0, y0, x1, y1 = b
    if x1 - x0 < 1e-9 or y1 - y0 < 1e-9:
        return None
    return box(x0, y0, x1, y1)


def label_region(rig: Rig, poly):
    """The part of water polygon ``poly`` (shapely, site metres) its texts are placed in: ``poly`` within the rig's
    fitted box, its largest piece, when that is a usable share of it; else ``poly`` itself."""
    frame = rig_box(rig)
    if frame is None:
        return poly
    part = poly.intersection(frame)
    if part.is_empty:
        return poly
    part = max(getattr(part, "geoms", [part]), key=lambda g: g.area)
    if part.geom_type != "Polygon" or part.area < MIN_SHARE * poly.area:
        return poly
    return part
