"""Where the current bows a rope: the solver's hidden points of each wet piece, in scene metres, for the rope items.

A rope piece in moving water is solved as a chain of hidden points (``solver.water_records``, ``Result.water``);
the plan draws the rope itself along that bow (its own colour, width and pass glyphs at the real passes), so a
rigger reads one rope, never a straight chord beside its bow.  The same bows are what the use bands follow
(``sketchpad.overlay.bands``).
"""

from __future__ import annotations

from typing import NamedTuple


class HiddenPass(NamedTuple):
    """A hidden point of a bowed piece as the rope item reads a pass: no point id and no way of passing."""

    at: None = None
    how: None = None


HIDDEN = HiddenPass()


def site_bows(result) -> dict[tuple[str, int], tuple[tuple[float, float], ...]]:
    """(rope id, piece index) -> the whole bowed polyline (site metres, the piece's two ends first and last) of
    every piece ``result``'s water bowed; {} for a dry, failed or missing result."""
    water = getattr(result, "water", None) if result is not None and result.ok else None
    if water is None:
        return {}
    return {(w.rope, w.index): w.polyline for w in water.ropes if w.bowed and len(w.polyline) > 2}


def scene_bows(rig, result) -> dict[str, dict[int, tuple[tuple[float, float], ...]]]:
    """rope id -> {piece index: the piece's interior hidden points in scene metres (y down)} for the plan view."""
    if rig is None or rig.view != "plan":
        return {}
    out: dict[str, dict[int, tuple]] = {}
    for (rope, piece), line in site_bows(result).items():
        out.setdefault(rope, {})[piece] = tuple((float(x), -float(y)) for x, y in line[1:-1])
    return out


def with_bows(passes: list, xy: list, bows: dict) -> tuple[list, list]:
    """``passes`` and their scene points ``xy`` with each bowed piece's hidden points (:data:`HIDDEN` passes) put
    between its two ends; piece ``k`` runs from pass ``k`` to pass ``k + 1``."""
    out_p, out_xy = [], []
    for k, (p, at) in enumerate(zip(passes, xy)):
        out_p.append(p)
        out_xy.append(at)
        inner = bows.get(k)
        if inner and k + 1 < len(passes):
            out_p.extend([HIDDEN] * len(inner))
            out_xy.extend(inner)
    return out_p, out_xy
