"""Safety checks on a solved rig: named warnings a rigger reads, with numbers in the rig's units.

``run_checks(rig, result)`` looks at a :class:`Result` and the rig it came from and
returns :class:`Warning_` findings.  Each has a short stable ``code`` (see ``CODES``),
the id(s) it is about in ``subject`` (several joined with ``,``), a plain message and
a severity (``info``, ``warning``, ``danger``).  Forces are newtons inside and shown in
``rig.display.force``; the chosen safety factor is ``rig.settings.min_safety_factor``.

Rules (sources in the tests that hold them):

* Margins: a component with strength S carrying F is ``*-over`` (danger) when F > S and
  ``*-margin`` (warning) when F x SF > S.  An anchor whose ``capacity_kind`` is ``working``
  (a rated working load W, :mod:`solver.capacity`) is ``anchor-over`` when F > W, nothing else.  Anchors use their resultant; in ``hold``, the
  high end of ``hold_anchor_range`` when the solver gives it (also for hardware that is
  the only thing on that anchor; rope pieces use the solved tensions).  Rope pieces use their
  tension against the material's MBS.  Hardware at a pass carries the vector sum of the
  two legs there (redirect resultant R = 2T cos(alpha/2) when the legs are equal).
* ``wide-anchor``: a free point held by exactly two legs tied to anchors (tied or
  sliding at the point: a master point, an equalising sling; not a rope grab between
  two redirect pulleys; not one rope passing through it: a tensioned line, below) whose included
  angle exceeds 120 deg -- ASME B30.9 does not recommend more.
* ``line-leg-factor``: a rope passing through a free point between two anchors with a load across it
  (a highline) whose legs carry more than ``LINE_FACTOR_WARN`` x that load (:mod:`solver.tensioned_line`).  Message gives the leg force factor
  1 / (2 cos(alpha/2)) (each leg's share of the resultant for symmetric legs).
* ``abrasion``: a rope piece crossing a ``boulder`` or ``hazard`` feature, other than the
  stretch of that crossing which touches an ``edge`` pass (protected, modelled edge) or an
  anchor standing on the feature (the anchor's own wrap).
* ``overpull``: potential force at the load = haul force x the larger of the nominal and the
  ideal MA (what the team could deliver if friction vanished, e.g. the moment the load breaks
  free; the strand count when the drawn angles give less).  Limit, first that
  applies: ``settings.overpull_limit_N``; else the least of ``OVERPULL_FACTOR`` x the
  load's ``required_N`` (common practice, no source) and the working strength
  (MBS / SF) of the weakest rope or hardware attached at the load.  Haul motion only.
* ``load-stuck``: in every motion, force delivered < ``required_N``, with the total pull that
  delivers it found by solving the rig (:mod:`solver.pull_needed`) and pullers =
  ceil(pull / pull per person), or what comes first when no pull reaches it.
* ``grab-slips``: a rope grab holding more than its ``slip_N`` (:mod:`solver.weak_links`).
* ``two-blocked``: a piece with a free end shorter than the hardware size there plus
  ``TWO_BLOCK_TOL_M``: the system has run out of throw (skipped when the solver already
  reported it from its contact model).
* ``person-in-zone``: a ``person`` or ``haul`` point strictly inside a danger zone
  (:mod:`solver.danger`).  A haul team is not warned about the recoil band of the rope
  piece ending at its own point -- they hold that end by definition -- but is warned
  about every other zone.

When the result is not ``ok`` only the checks on the drawn geometry run (abrasion,
wide anchor angle, unrated anchors); one ``checks-skipped`` info says so.
"""

from __future__ import annotations

import logging
import math
from typing import Callable, Iterable

import numpy as np
import shapely
from shapely.geometry import LineString, Point as ShPoint, Polygon
from shapely.geometry.base import BaseGeometry

from solver.capture_checks import check_captures
from solver.danger import QUICK_ESTIMATE_NOTE, DangerZone, Piece, danger_zones, pieces, positions
from solver.errors import RopewrightError
from solver.hauling import haulers_needed
from solver.pull_needed import check_short
from solver.weak_links import check_grabs, weakest_ends
from solver.model import Hardware, Material, Rig, is_tended_tail
from solver.result import Result, Warning_
from solver.tensioned_line import check_tensioned_lines, is_line_leg_pair
from solver.water_warnings import check_water

log = logging.getLogger(__name__)

#: Every code run_checks can produce, with its meaning (reports and the legend use this).
CODES: dict[str, str] = {
    "anchor-over": "an anchor's resultant exceeds its breaking strength or rated working load",
    "anchor-margin": "an anchor's resultant times the safety factor exceeds its breaking strength",
    "anchor-unrated": "a loaded anchor has no capacity entered, so its margin is unknown",
    "rope-over": "a rope, sling or cord piece carries more than its MBS",
    "rope-margin": "a rope, sling or cord piece is below the chosen safety factor",
    "hardware-over": "a pulley, carabiner, ring or edge carries more than its MBS",
    "hardware-margin": "a pulley, carabiner, ring or edge is below the chosen safety factor",
    "spec-unknown": "a rope or hardware spec is missing, so its margin cannot be checked",
    "wide-anchor": "two anchor legs meet at a master point or sling at more than 120 degrees (ASME B30.9)",
    "line-leg-factor": "a tensioned line's legs carry more than twice the load across it (T = P / (2 sin θ))",
    "slack-run": "a run of rope carries no load",
    "abrasion": "a rope piece crosses a boulder or hazard without a modelled edge",
    "overpull": "the haul team could pull harder on the load than the set limit",
    "load-stuck": "the force delivered to the load is below the force needed to free it",
    "two-blocked": "two passes have come together: the system is out of throw",
    "grab-slips": "a rope grab holds more than its slip force: it will slide (a designed slip point)",
    "person-in-zone": "a person or haul team stands in a bight or recoil zone",
    "checks-skipped": "the rig did not solve, so force checks were skipped",
    "checks-failed": "the checks themselves crashed (analyse): treat the rig as unchecked",
}

#: Overpull limit as a multiple of the load's required_N. Common practice, no source.
OVERPULL_FACTOR = 2.0
#: Included angle above which a two-leg anchor is warned about (degrees) -- ASME B30.9.
WIDE_ANCHOR_DEG = 120.0
#: Two passes closer than the hardware size plus this (m) are two-blocked.
TWO_BLOCK_TOL_M = 0.02
#: A run whose pieces all carry no more than this (N) is slack.
SLACK_MAX_N = 0.5
#: Length of a crossing (m) below which it is a graze at a shared corner, not abrasion.
ABRASION_MIN_M = 0.01
#: Distance (m) within which an anchor or edge pass counts as standing on a feature.
ON_FEATURE_TOL_M = 0.5
#: Feature kinds a rope must not run over without an edge.
ABRASIVE_KINDS = frozenset({"boulder", "hazard"})


# --- formatting and specs ------------------------------------------------------------------


def _force(rig: Rig, newtons: float) -> str:
    from solver.units import format_force

    return format_force(newtons, rig.display.force)


def _length(rig: Rig, metres: float) -> str:
    from solver.units import format_length

    return format_length(metres, rig.display.length)


def _name(rig: Rig, point_id: str) -> str:
    try:
        return rig.point(point_id).name
    except KeyError:
        return point_id


def _material(rig: Rig, mat_id: str) -> Material | None:
    """The material spec (embedded first, then the library), or None if unknown."""
    emb = rig.embedded_material(mat_id)
    if emb is not None:
        return emb
    try:
        from solver.materials import material_for
    except ImportError:  # library not available: embedded specs only
        return None
    try:
        return material_for(rig, mat_id)
    except RopewrightError:
        return None


def _hardware(rig: Rig, hw_id: str) -> Hardware | None:
    """The hardware spec (embedded first, then the library), or None if unknown."""
    emb = rig.embedded_hardware(hw_id)
    if emb is not None:
        return emb
    try:
        from solver.materials import hardware_for
    except ImportError:
        return None
    try:
        return hardware_for(rig, hw_id)
    except RopewrightError:
        return None


def _sf(rig: Rig) -> float:
    return float(rig.settings.min_safety_factor)


def _margin(rig: Rig, force: float, strength: float) -> str | None:
    """``"over"`` when force > strength, ``"margin"`` when force x SF > strength, else None."""
    if force > strength:
        return "over"
    if force * _sf(rig) > strength:
        return "margin"
    return None


# --- the checks ----------------------------------------------------------------------------


def check_anchors(rig: Rig, result: Result) -> list[Warning_]:
    """Anchor resultant against capacity (hold: the high end of static friction's range)."""
    out: list[Warning_] = []
    sf = _sf(rig)
    for p in rig.points_of_kind("anchor"):
        ar = result.anchors.get(p.id)
        if ar is None:
            continue
        force = float(ar.force_N)
        held = ""
        rng = result.hold_anchor_range.get(p.id)
        if rng is not None and rng.high > force:
            force = float(rng.high)
            held = " (highest value static friction allows while holding)"
        if force <= 0.0:
            continue
        cap = p.capacity_N
        if cap is None:
            out.append(Warning_(
                "anchor-unrated", p.id,
                f"{p.name} takes {_force(rig, force)}{held} but has no capacity entered; "
                f"it needs at least {_force(rig, force * sf)} for a {sf:g}:1 safety factor.",
                "info"))
            continue
        if p.capacity_kind == "working":  # a rated working load has its factor in it: warn only above it
            if force > float(cap):
                out.append(Warning_(
                    "anchor-over", p.id,
                    f"{p.name} takes {_force(rig, force)}{held}, more than its rated working load of "
                    f"{_force(rig, cap)} (no safety factor applied to a working load).",
                    "danger"))
            continue
        m = _margin(rig, force, float(cap))
        if m == "over":
            out.append(Warning_(
                "anchor-over", p.id,
                f"{p.name} takes {_force(rig, force)}{held}, more than its breaking strength of {_force(rig, cap)}.",
                "danger"))
        elif m == "margin":
            out.append(Warning_(
                "anchor-margin", p.id,
                f"{p.name} takes {_force(rig, force)}{held}: safety factor {cap / force:.1f}:1, "
                f"below {sf:g}:1 (breaking strength {_force(rig, cap)}).",
                "warning"))
    return out


def check_unrated_drawn(rig: Rig) -> list[Warning_]:
    """Anchors used by a rope with no capacity entered (for rigs that did not solve)."""
    used = {ps.at for r in rig.ropes for ps in r.path}
    return [
        Warning_("anchor-unrated", p.id, f"{p.name} has no capacity entered, so its margin cannot be checked.", "info")
        for p in rig.points_of_kind("anchor")
        if p.capacity_N is None and p.id in used
    ]


def check_ropes(rig: Rig, result: Result, pcs: Iterable[Piece] | None = None) -> list[Warning_]:
    """Each rope piece's tension against its strength (MBS × a knot's efficiency, :mod:`solver.weak_links`);
    one warning per rope (its worst piece).

    ``pcs``: the rig's :func:`~solver.danger.pieces` for this result if already made (``run_checks``).
    """
    out: list[Warning_] = []
    sf = _sf(rig)
    worst: dict[str, Piece] = {}
    kept = weakest_ends(rig)  # (rope, piece) -> (termination, point): the share of MBS a knot keeps
    eff = lambda pc: kept[(pc.rope.id, pc.index)][0].efficiency if (pc.rope.id, pc.index) in kept else 1.0  # noqa: E731
    for pc in pieces(rig, result) if pcs is None else pcs:
        if pc.tension_N is None:
            continue
        if pc.rope.id not in worst or pc.tension_N / eff(pc) > (worst[pc.rope.id].tension_N or 0.0) / eff(worst[pc.rope.id]):
            worst[pc.rope.id] = pc
    specs: dict[str, Material | None] = {}  # each material looked up once, not once per rope
    for rope in rig.ropes:
        pc = worst.get(rope.id)
        if pc is None or not pc.loaded:
            continue
        t = float(pc.tension_N or 0.0)
        if rope.material not in specs:
            specs[rope.material] = _material(rig, rope.material)
        mat = specs[rope.material]
        if mat is None:
            out.append(Warning_("spec-unknown", rope.id,
                                f"{rope.name}: material '{rope.material}' is not known, so its margin is not checked.",
                                "warning"))
            continue
        knot = kept.get((rope.id, pc.index))
        strength = float(mat.mbs_N) * (knot[0].efficiency if knot else 1.0)
        m = _margin(rig, t, strength)
        if m is None:
            continue
        of = (f"strength there of {_force(rig, strength)} (MBS {_force(rig, mat.mbs_N)} × {knot[0].efficiency:.0%} "
              f"for the {knot[0].label} at {_name(rig, knot[1])})") if knot else f"MBS of {_force(rig, mat.mbs_N)}"
        what = {"sling": "sling", "cord": "cord"}.get(mat.kind, "rope")
        where = f"between {_name(rig, pc.a_id)} and {_name(rig, pc.b_id)}"
        if m == "over":
            out.append(Warning_("rope-over", rope.id,
                                f"{rope.name} ({what}) carries {_force(rig, t)} {where}, more than its {of}.",
                                "danger"))
        elif m == "margin":
            out.append(Warning_("rope-margin", rope.id,
                                f"{rope.name} ({what}) carries {_force(rig, t)} {where}: safety factor "
                                f"{strength / t:.1f}:1, below {sf:g}:1 ({of}).", "warning"))
    return out


def pass_loads(rig: Rig, result: Result) -> list[tuple[str, int, str, float]]:
    """Force (N) on the hardware at each pass that has hardware: (rope id, pass index, point id, |F|).

    F is the vector sum of the pieces meeting there, each pulling toward its far end (a rope bowed by the
    current pulls along its bow, toward the next point of its solved polyline).
    """
    pos = positions(rig, result)
    tens = {(s.rope, s.index): float(s.tension_N) for s in result.segments}
    bows = {(w.rope, w.index): w.polyline for w in result.water.ropes} if result.water is not None else {}
    out = []
    for rope in rig.ropes:
        n = len(rope.path)
        for k, ps in enumerate(rope.path):
            if ps.hardware is None or ps.at not in pos:
                continue
            f = np.zeros(2)
            here = np.asarray(pos[ps.at])
            for piece, other in ((k - 1, k - 1), (k, k + 1)):
                if not (0 <= other < n) or (rope.id, piece) not in tens:
                    continue
                far = rope.path[other].at
                if far not in pos:
                    continue
                bow = bows.get((rope.id, piece))
                toward = (bow[-2] if piece < k else bow[1]) if bow and len(bow) > 2 else pos[far]
                d = np.asarray(toward) - here
                nd = float(np.hypot(*d))
                if nd > 0:
                    f += tens[(rope.id, piece)] * d / nd
            out.append((rope.id, k, ps.at, float(np.hypot(*f))))
    return out


def check_hardware(rig: Rig, result: Result) -> list[Warning_]:
    """Each pass's hardware against its MBS, loaded by the vector sum of the legs there.

    In ``hold``, hardware that is the only thing on an anchor carries that anchor's
    resultant, so the high end of its static-friction range is used.
    """
    out: list[Warning_] = []
    sf = _sf(rig)
    passes_at: dict[str, int] = {}
    for r in rig.ropes:
        for ps in r.path:
            passes_at[ps.at] = passes_at.get(ps.at, 0) + 1
    pushed = {fc.at for fc in rig.forces}
    for rope_id, k, at, f in pass_loads(rig, result):
        rng = result.hold_anchor_range.get(at)
        if rng is not None and passes_at.get(at) == 1 and at not in pushed:
            f = max(f, float(rng.high))
        if f <= 0.0:
            continue
        rope = rig.rope(rope_id)
        hw_id = rope.path[k].hardware or ""
        hw = _hardware(rig, hw_id)
        subject = f"{rope_id}@{at}"
        if hw is None:
            out.append(Warning_("spec-unknown", subject,
                                f"Hardware '{hw_id}' on {rope.name} at {_name(rig, at)} is not known, "
                                f"so its margin is not checked.", "warning"))
            continue
        if hw.mbs_N is None:
            continue
        m = _margin(rig, f, float(hw.mbs_N))
        if m == "over":
            out.append(Warning_("hardware-over", subject,
                                f"{hw.name} on {rope.name} at {_name(rig, at)} takes {_force(rig, f)}, "
                                f"more than its MBS of {_force(rig, hw.mbs_N)}.", "danger"))
        elif m == "margin":
            out.append(Warning_("hardware-margin", subject,
                                f"{hw.name} on {rope.name} at {_name(rig, at)} takes {_force(rig, f)}: "
                                f"safety factor {hw.mbs_N / f:.1f}:1, below {sf:g}:1 (MBS {_force(rig, hw.mbs_N)}).",
                                "warning"))
    return out


def leg_force_factor(included_deg: float) -> float:
    """Each leg's force over the resultant for two equal legs at ``included_deg``: 1 / (2 cos(alpha/2))."""
    return 1.0 / (2.0 * math.cos(math.radians(included_deg) / 2.0))


def two_leg_anchors(rig: Rig, result: Result | None,
                    pcs: Iterable[Piece] | None = None) -> list[tuple[str, str, str, float]]:
    """Free points held by exactly two legs to anchors: (point id, anchor 1, anchor 2, included angle deg)."""
    pos = positions(rig, result)
    kinds = {p.id: p.kind for p in rig.points}
    legs: dict[str, list[tuple[str, Piece]]] = {}
    for pc in pieces(rig, result) if pcs is None else pcs:
        for here, there, k, k_there in ((pc.a_id, pc.b_id, pc.index, pc.index + 1),
                                        (pc.b_id, pc.a_id, pc.index + 1, pc.index)):
            if kinds.get(there) != "anchor":
                continue
            pt = rig.point(here) if rig.has_point(here) else None
            if pt is None or pt.is_fixed or not pt.is_structural:
                continue
            # a leg is tied to its anchor and tied (or slides, equalising) at the junction;
            # a rope running over a pulley at the anchor is a redirect, not an anchor leg
            if pc.rope.path[k].how not in ("tied", "sliding") or pc.rope.path[k_there].how != "tied":
                continue
            legs.setdefault(here, []).append((there, pc))
    out = []
    for here, ls in legs.items():
        if len(ls) != 2:
            continue
        (a1, _), (a2, _) = ls
        p = np.asarray(pos[here])
        d1, d2 = np.asarray(pos[a1]) - p, np.asarray(pos[a2]) - p
        n1, n2 = float(np.hypot(*d1)), float(np.hypot(*d2))
        if n1 == 0 or n2 == 0:
            continue
        ang = math.degrees(math.acos(float(np.clip(np.dot(d1, d2) / (n1 * n2), -1.0, 1.0))))
        out.append((here, a1, a2, ang))
    return out


def check_wide_anchors(rig: Rig, result: Result | None, pcs: Iterable[Piece] | None = None) -> list[Warning_]:
    """Two-leg anchors with an included angle over 120 degrees (ASME B30.9)."""
    out = []
    # a tensioned line (highline) is checked on its leg-force factor instead
    wide = [(here, a1, a2, ang) for here, a1, a2, ang in two_leg_anchors(rig, result, pcs)
            if ang > WIDE_ANCHOR_DEG and not is_line_leg_pair(rig, here, a1, a2)]
    tens: dict[frozenset[str], float] = {}
    if wide and result is not None and result.ok:
        for s in result.segments:
            key = frozenset((s.from_point, s.to_point))
            tens[key] = max(tens.get(key, 0.0), float(s.tension_N))
    for here, a1, a2, ang in wide:
        fac = leg_force_factor(ang) if ang < 179.999 else float("inf")
        fac_txt = f"{fac:.2f}" if math.isfinite(fac) else "an unbounded multiple of"
        t1, t2 = tens.get(frozenset((here, a1))), tens.get(frozenset((here, a2)))
        now = (f" Now: {_force(rig, t1)} to {_name(rig, a1)}, {_force(rig, t2)} to {_name(rig, a2)}."
               if t1 is not None and t2 is not None else "")
        out.append(Warning_(
            "wide-anchor", f"{here},{a1},{a2}",
            f"The legs from {_name(rig, here)} to {_name(rig, a1)} and {_name(rig, a2)} spread {ang:.0f}°, "
            f"over the {WIDE_ANCHOR_DEG:.0f}° ASME B30.9 recommends: each leg carries {fac_txt} × the load "
            f"on {_name(rig, here)} (1.00 at 120°, 0.58 at 60°). Bring the anchors closer together or "
            f"move {_name(rig, here)} away from them.{now}",
            "warning"))
    return out


def check_slack(rig: Rig, result: Result) -> list[Warning_]:
    """Runs whose pieces all carry (practically) nothing."""
    out = []
    # only ropes with a run whose solved pieces all carry (practically) nothing are walked run by run
    quiet: dict[tuple[str, int], bool] = {}
    for s in result.segments:
        key = (s.rope, s.run)
        quiet[key] = quiet.get(key, True) and float(s.tension_N) <= SLACK_MAX_N
    candidates = {rope_id for (rope_id, _), q in quiet.items() if q}
    if not candidates:
        return out
    tens = {(s.rope, s.index): float(s.tension_N) for s in result.segments}
    pts = {p.id: p for p in rig.points}
    for rope in rig.ropes:
        if rope.id not in candidates:
            continue
        for run in rope.runs():
            if is_tended_tail(rope, run, pts):
                continue  # slack by design until the capture holds it
            ts = [tens.get((rope.id, i)) for i in run.piece_indices]
            if not ts or any(t is None for t in ts):
                continue
            if max(ts) <= SLACK_MAX_N:
                a, b = rope.path[run.first].at, rope.path[run.last].at
                out.append(Warning_(
                    "slack-run", rope.id,
                    f"{rope.name} is slack between {_name(rig, a)} and {_name(rig, b)}: it carries no load "
                    f"and would shock-load when it comes tight.",
                    "warning"))
    return out


def _feature_geometry(coords, is_polygon: bool) -> BaseGeometry | None:
    try:
        g = Polygon(coords) if is_polygon else LineString(coords)
    except (ValueError, TypeError):
        return None
    if is_polygon and not g.is_valid:
        g = g.buffer(0)
    return None if g.is_empty else g


def abrasion_crossings(rig: Rig, result: Result | None) -> list[tuple[Piece, str, float]]:
    """(piece, feature id, unprotected crossing length m) for pieces over boulder/hazard features."""
    pos = positions(rig, result)
    feats = []
    for f in rig.site.features:
        if f.kind not in ABRASIVE_KINDS:
            continue
        g = _feature_geometry(f.polygon or f.line or (), f.polygon is not None)
        if g is not None:
            feats.append((f, g))
    if not feats:
        return []
    kinds = {p.id: p.kind for p in rig.points}
    out = []
    for pc in pieces(rig, result):
        if pc.length_m == 0:
            continue
        line = LineString([pc.a, pc.b])
        for f, g in feats:
            inter = line.intersection(g)
            if inter.is_empty:
                continue
            # The stretch touching a protected end does not count: an edge pass on the
            # feature, or an anchor standing on it (its own wrap).
            parts = list(getattr(inter, "geoms", [inter]))
            ends = []
            for pid, k in ((pc.a_id, pc.index), (pc.b_id, pc.index + 1)):
                on = g.distance(ShPoint(pos[pid])) <= ON_FEATURE_TOL_M
                if on and (pc.rope.path[k].how == "edge" or kinds.get(pid) == "anchor"):
                    ends.append(ShPoint(pos[pid]))
            length = 0.0
            crossing = False
            for part in parts:
                if any(part.distance(e) <= ON_FEATURE_TOL_M for e in ends):
                    continue
                if part.geom_type in ("LineString", "MultiLineString"):
                    length += part.length
                    crossing = crossing or part.length > ABRASION_MIN_M
                else:  # a line feature crossed at a point
                    crossing = True
            if crossing:
                out.append((pc, f.id, length))
    return out


def check_abrasion(rig: Rig, result: Result | None) -> list[Warning_]:
    """Rope pieces over boulders or hazards with no edge pass there."""
    out = []
    feats = {f.id: f for f in rig.site.features}
    for pc, fid, length in abrasion_crossings(rig, result):
        f = feats[fid]
        fname = f.label or fid
        over = f" for {_length(rig, length)}" if length > 0 else ""
        out.append(Warning_(
            "abrasion", f"{pc.rope.id},{fid}",
            f"{pc.rope.name} runs over {fname}{over} between {_name(rig, pc.a_id)} and {_name(rig, pc.b_id)} "
            f"with no edge there: pad it, or add an edge pass so its friction and wear are counted.",
            "warning"))
    return out


def _haul_points(rig: Rig, result: Result):
    for p in rig.points_of_kind("haul"):
        f = p.haul_force
        if f is None:
            f = result.haul.get(p.id)
        if f is not None and f > 0:
            yield p, float(f)


def overpull_limit(rig: Rig, result: Result, load_id: str) -> tuple[float, str] | None:
    """The overpull limit for one load (N) and what set it, or None if nothing does (rule in module doc)."""
    s = rig.settings.extra.get("overpull_limit_N")
    if s is not None:
        return float(s), "the set overpull limit"
    cands: list[tuple[float, str]] = []
    ld = rig.point(load_id)
    if ld.required_N:
        cands.append((OVERPULL_FACTOR * float(ld.required_N),
                      f"{OVERPULL_FACTOR:g} × the {_force(rig, ld.required_N)} needed to free it"))
    sf = _sf(rig)
    for rope in rig.ropes:
        for k, ps in enumerate(rope.path):
            if ps.at != load_id:
                continue
            mat = _material(rig, rope.material)
            if mat is not None:
                cands.append((float(mat.mbs_N) / sf, f"the working strength of {rope.name} (MBS / {sf:g})"))
            hw = _hardware(rig, ps.hardware) if ps.hardware else None
            if hw is not None and hw.mbs_N is not None:
                cands.append((float(hw.mbs_N) / sf, f"the working strength of {hw.name} (MBS / {sf:g})"))
    return min(cands, key=lambda c: c[0]) if cands else None


def overpull_ma(result: Result) -> tuple[str, float] | None:
    """(which, MA) the overpull check multiplies by: the larger (more conservative) of nominal and ideal."""
    cands = [(name, float(v)) for name, v in (("nominal", result.ma_nominal), ("ideal", result.ma_ideal))
             if v is not None and math.isfinite(v) and v > 0]
    return max(cands, key=lambda c: c[1]) if cands else None


def check_haul(rig: Rig, result: Result) -> list[Warning_]:
    """Overpull (haul force x ideal MA over the limit); a load not freed is :func:`solver.pull_needed.check_short`."""
    out: list[Warning_] = []
    if rig.settings.motion != "haul":
        return out
    hauls = list(_haul_points(rig, result))
    if not hauls:
        return out
    total = sum(f for _, f in hauls)
    for ld in rig.points_of_kind("load"):
        if ld.id not in result.loads:
            continue
        ma_used = overpull_ma(result)
        if ma_used is not None:
            which, ma_up = ma_used
            potential = total * ma_up
            lim = overpull_limit(rig, result, ld.id)
            if lim is not None and potential > lim[0]:
                out.append(Warning_(
                    "overpull", ld.id,
                    f"The haul team ({_force(rig, total)}) × {which} MA {ma_up:.2f} could put "
                    f"{_force(rig, potential)} on {ld.name}, over {lim[1]} ({_force(rig, lim[0])}). "
                    f"Use fewer haulers or less mechanical advantage, or watch the load's attachment.",
                    "warning"))
    return out


def check_two_blocked(rig: Rig, result: Result, pcs: Iterable[Piece] | None = None) -> list[Warning_]:
    """Pieces with a free end that have shrunk to the hardware size: out of throw."""
    out: list[Warning_] = []
    if any(w.code == "two-blocked" for w in result.warnings):
        return out  # the solver found it with its own contact model; do not say it twice
    fixed = {p.id: p.is_fixed for p in rig.points}
    size_of: dict[str, float] = {}  # hardware id -> size (m), each spec looked up once

    def size(hw_id: str | None) -> float:
        if not hw_id:
            return 0.0
        if hw_id not in size_of:
            hw = _hardware(rig, hw_id)
            size_of[hw_id] = float(hw.size_m) if hw is not None and hw.size_m else 0.0
        return size_of[hw_id]

    seen = set()
    for pc in pieces(rig, result) if pcs is None else pcs:
        if pc.a_id == pc.b_id or pc.a_id not in fixed or pc.b_id not in fixed:
            continue
        if fixed[pc.a_id] and fixed[pc.b_id]:
            continue
        path = pc.rope.path
        if pc.length_m <= max(size(path[pc.index].hardware), size(path[pc.index + 1].hardware)) + TWO_BLOCK_TOL_M:
            key = frozenset((pc.a_id, pc.b_id))
            if key in seen:
                continue
            seen.add(key)
            out.append(Warning_(
                "two-blocked", f"{pc.a_id},{pc.b_id}",
                f"{_name(rig, pc.a_id)} and {_name(rig, pc.b_id)} have come together on {pc.rope.name} "
                f"({_length(rig, pc.length_m)} apart): the system is out of throw. Reset before hauling further.",
                "danger"))
    return out


def people_in_zones(rig: Rig, zones: Iterable[DangerZone]) -> list[tuple[str, DangerZone]]:
    """(point id, zone) for every person or haul point inside a zone, haul teams excused from their own rope end."""
    zones = list(zones)
    people = [p for p in rig.points if p.kind in ("person", "haul")]
    if not zones or not people:
        return []
    geoms = np.array([z.geometry for z in zones], dtype=object)
    out = []
    for p in people:
        # strictly inside (shapely "contains"): a leg's far end is not in its own bight; all zones at once
        for i in np.flatnonzero(shapely.contains_xy(geoms, p.x, p.y)):
            z = zones[i]
            if p.kind == "haul" and z.kind == "recoil" and _piece_ends_at(rig, z.rope, z.piece, p.id):
                continue
            out.append((p.id, z))
    return out


def _piece_ends_at(rig: Rig, rope_id: str, piece: int, point_id: str) -> bool:
    try:
        path = rig.rope(rope_id).path
    except KeyError:
        return False
    return 0 <= piece < len(path) - 1 and point_id in (path[piece].at, path[piece + 1].at)


def check_people(rig: Rig, result: Result, zones: list[DangerZone] | None = None) -> list[Warning_]:
    """Person and haul points inside bight or recoil zones."""
    if not any(p.kind in ("person", "haul") for p in rig.points):
        return []  # nobody to warn: the zones are left for whoever draws them
    if zones is None:
        zones = danger_zones(rig, result)
    return [person_zone_warning(rig, pid, z) for pid, z in people_in_zones(rig, zones)]


def person_zone_warning(rig: Rig, pid: str, z: DangerZone) -> Warning_:
    """The warning for person ``pid`` inside zone ``z``; a fixed bight shape says it is the quick estimate."""
    if z.kind == "bight":
        text = (f"{_name(rig, pid)} stands in the {z.label}: if the redirect or its anchor fails, the pulley and "
                f"rope fly through there ({QUICK_ESTIMATE_NOTE}). Move out of it.")
    else:
        text = f"{_name(rig, pid)} stands in the {z.label}: a failing or released rope whips through there. Move out of it."
    return Warning_("person-in-zone", f"{pid},{z.subject}", text, z.severity)


#: Checks that need solved forces, in report order.
FORCE_CHECKS: tuple[Callable[[Rig, Result], list[Warning_]], ...] = (
    check_anchors, check_ropes, check_hardware, check_wide_anchors, check_tensioned_lines, check_slack,
    check_abrasion, check_haul, check_short, check_two_blocked, check_people, check_grabs, check_captures,
    check_water,
)


#: The checks that accept the rig's pieces already made (their third argument).
_TAKE_PIECES = frozenset({check_ropes, check_wide_anchors, check_two_blocked})


def run_checks(rig: Rig, result: Result) -> tuple[Warning_, ...]:
    """All safety findings for ``rig`` solved as ``result`` (geometry-only checks when it did not solve)."""
    if not result.ok:
        found = [Warning_("checks-skipped", result.subject or "",
                          "The rig did not solve, so forces, margins and danger zones were not checked; "
                          "only the drawn geometry was.", "info")]
        found += check_wide_anchors(rig, None) + check_abrasion(rig, None) + check_unrated_drawn(rig)
        return tuple(found)
    found = []
    pcs = list(pieces(rig, result))  # made once for the checks that walk every piece
    for chk in FORCE_CHECKS:
        found += chk(rig, result, pcs) if chk in _TAKE_PIECES else chk(rig, result)
    return tuple(found)
