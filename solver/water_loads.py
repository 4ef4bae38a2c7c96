"""A stuck load's required force from the current it sits in: the load estimate, filled in automatically.

When asked (the property panel's button, or a script), a fixed load with a wetted area and a drag shape
in moving water gets ``required_N`` from the drag equation at its drawn position, with the local current's
speed (the topmost water feature there), through :func:`solver.loads.apply_load_estimate`, so the
estimate's inputs and assumptions are kept beside it exactly as a hand-entered estimate's are.
"""

from __future__ import annotations

import math

from solver.errors import RigModelError
from solver.loads import LoadEstimate, apply_load_estimate
from solver.model import Rig
from solver.water_site import flow_field


def required_from_current(rig: Rig, load_id: str) -> Rig:
    """A new Rig whose load ``load_id`` requires the current's drag on it (N); RigModelError says what is missing."""
    try:
        p = rig.point(load_id)
    except KeyError:
        raise RigModelError(f"The load '{load_id}' is not in the drawing", subject=load_id) from None
    if not p.wetted_area_m2 or not p.drag_shape:
        raise RigModelError(f"{p.name} needs a wetted area and a shape before its force can come from the current",
                            subject=load_id)
    ff = flow_field(rig)
    fid = ff.feature_at(p.x, p.y)
    if fid is None:
        raise RigModelError(f"{p.name} is not in moving water: draw a water feature with a current over it",
                            subject=load_id)
    vx, vy = ff.velocity_at([[p.x, p.y]])[0]
    feature = next(f for f in rig.site.features if f.id == fid)
    estimate = LoadEstimate(speed_m_s=math.hypot(vx, vy), area_m2=float(p.wetted_area_m2), shape=p.drag_shape,
                            note=f"Current from the water feature \"{feature.label or feature.id}\".")
    return apply_load_estimate(rig, load_id, estimate)
