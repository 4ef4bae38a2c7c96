"""What if it lets go: a failure scan of every component of a rig (pure; no Qt).

For each component that can fail -- every anchor, every pass a rope runs over (pulley,
edge, sliding ring: its anchor or sling), every rope grab or tied middle pass, every rope
piece and sling leg -- :func:`scan` builds the rig that remains (:mod:`solver.failure_rig`),
solves it with the same motion and forces, warm-started from the intact solution, and
reports either

* ``holds``: the new equilibrium -- which points move and how far, the tension in every
  remaining piece, the force and margin on every remaining anchor; or
* ``runs free``: what is no longer held and which way the unbalanced force takes it;

with the area it sweeps (:mod:`solver.failure_zones`) and the shock on the way
(:mod:`solver.failure_shock`: undamped estimates).  A rig that does not solve intact gets
no scan, and says why.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Iterator

import numpy as np
from shapely.geometry import Polygon
from shapely.geometry.base import BaseGeometry

from solver import units
from solver.capacity import utilization as capacity_utilization
from solver.danger import LOADED_MIN_N
from solver.directions import direction_text
from solver.failure_rig import Breaker, Loose, Remaining, pass_key
from solver.failure_shock import Peak, Potential, drop_peak, pendulum_peak_factor
from solver.failure_zones import ZonePart, failure_zone
from solver.materials import material_for
from solver.model import STANDARD_GRAVITY, Rig
from solver.result import AnchorResult, Result, SegmentResult
from solver.water_trail import seeded

#: A point moving less than this (m) has not moved.
MOVED_MIN_M = 0.01
#: A point swings on one rope when its distance from where that rope is held changes by less than this fraction
#: (and by less than the arc it travels); otherwise it drops or runs out (energy balance).
SWING_RADIUS_TOL = 0.05
#: How many times a failed solve of the remaining rig is retried with a loose point's ropes slack.
MAX_SLACK_RETRIES = 4
#: Passes a rope runs over, by the name the scan gives their failure.
PASS_KINDS = {"pulley": "pulley", "sliding": "sliding pass", "edge": "edge", "capture": "progress capture",
              "tied": "rope grab"}

XY = tuple[float, float]


@dataclass(frozen=True)
class Component:
    """One thing that can let go: ``id`` (point id, ``ROPE@POINT`` or ``ROPE#INDEX``), kind and words."""

    id: str
    kind: str  # "anchor", "pulley", "edge", "sliding pass", "progress capture", "rope grab", "rope piece", "sling leg"
    name: str  # what a rigger calls it, e.g. 'the "bank boulder" anchor'
    rope: str = ""
    index: int = -1


@dataclass(frozen=True)
class Moved:
    """A point that moves when the component lets go: from, to (m) and how far."""

    point: str
    before: XY
    after: XY

    @property
    def distance_m(self) -> float:
        return math.dist(self.before, self.after)


@dataclass(frozen=True)
class Unheld:
    """Something no longer held: the point (or haul team) and the direction it goes (deg CCW from +x; None unknown)."""

    point: str
    direction_deg: float | None
    words: str


@dataclass(frozen=True)
class Failure:
    """The outcome of one component letting go."""

    component: Component
    status: str  # "holds" or "runs free"
    after: Result  # the remaining rig's state (records named as in the intact rig); not ok when nothing holds
    moved: tuple[Moved, ...] = ()
    unheld: tuple[Unheld, ...] = ()
    loose: tuple[Loose, ...] = ()
    peak: Peak | None = None
    zone: BaseGeometry = field(default_factory=Polygon)
    zone_parts: tuple[ZonePart, ...] = ()
    effect: str = ""  # what happens, in words ("the pulley flies", "the rope whips", ...)
    message: str = ""  # one line a rigger reads

    @property
    def holds(self) -> bool:
        return self.status == "holds"

    def worst(self) -> tuple[float, str, float | None] | None:
        """The remaining anchor or piece with the highest use of its strength: (force N, where, use); None when
        nothing remaining carries a load."""
        rows: list[tuple[float, str, float | None]] = [
            (a.force_N, pid, a.utilization) for pid, a in self.after.anchors.items()]
        rows += [(s.tension_N, f"{s.rope}#{s.index}", s.utilization) for s in self.after.segments]
        rows = [r for r in rows if r[0] > LOADED_MIN_N]  # nothing loaded: no worst load to name
        if not rows:
            return None
        return max(rows, key=lambda r: (r[2] if r[2] is not None and math.isfinite(r[2]) else -1.0, r[0]))


@dataclass(frozen=True)
class Scan:
    """Every failure of one rig, or the reason there is none (the rig does not solve intact)."""

    rig: Rig
    intact: Result
    failures: tuple[Failure, ...] = ()
    reason: str = ""

    @property
    def ok(self) -> bool:
        return not self.reason


def _name(rig: Rig, pid: str) -> str:
    try:
        return rig.point(pid).name
    except KeyError:
        return pid


def _anchor_legs(rig: Rig) -> set[tuple[str, int]]:
    """(rope, piece) of every leg of a multi-point anchor: a piece tied at an anchor and running to a free
    master point that two or more anchors' legs reach."""
    anchors = {p.id for p in rig.points if p.kind == "anchor" and p.is_fixed}
    free = {p.id for p in rig.points if p.is_structural and not p.is_fixed}
    legs: dict[str, list[tuple[str, str, int]]] = {}
    for rope in rig.ropes:
        for j, (a, b) in enumerate(zip(rope.path, rope.path[1:])):
            for anchor_pass, other in ((a, b), (b, a)):
                if anchor_pass.at in anchors and anchor_pass.how == "tied" and other.at in free:
                    legs.setdefault(other.at, []).append((anchor_pass.at, rope.id, j))
    return {(rid, j) for found in legs.values() if len({a for a, _, _ in found}) >= 2 for _, rid, j in found}


def components(rig: Rig) -> list[Component]:
    """Everything in ``rig`` that can let go, anchors first, then passes, then rope pieces."""
    out = [Component(p.id, "anchor", f'the "{p.name}" anchor') for p in rig.points
           if p.kind == "anchor" and p.is_fixed]
    for rope in rig.ropes:
        for j in range(1, len(rope.path) - 1):
            ps = rope.path[j]
            kind = PASS_KINDS.get(ps.how, ps.how)
            what = "redirect" if ps.how != "tied" else "rope grab"
            out.append(Component(pass_key(rope, j), kind, f'the {what} of {rope.name} at "{_name(rig, ps.at)}"',
                                 rope.id, j))
    legs = _anchor_legs(rig)
    for rope in rig.ropes:
        try:
            sling = material_for(rig, rope.material).kind == "sling"
        except Exception:  # noqa: BLE001 - an unknown material fails the solve, which says so
            sling = False
        for j in range(len(rope.path) - 1):
            a, b = _name(rig, rope.path[j].at), _name(rig, rope.path[j + 1].at)
            kind = "sling leg" if sling or (rope.id, j) in legs else "rope piece"
            out.append(Component(f"{rope.id}#{j}", kind, f'the {kind} of {rope.name} from "{a}" to "{b}"',
                                 rope.id, j))
    return out


def _relabel(after: Result, remaining: Remaining) -> Result:
    """The remaining rig's Result with every piece named by its original rope and piece index."""
    by_id = dict(zip(remaining.strand_ids, remaining.strands))
    segs = []
    for s in after.segments:
        strand = by_id.get(s.rope)
        if strand is None:
            continue
        segs.append(replace(s, rope=strand.rope.id, index=strand.passes[s.index][0]))
    order = {r.id: n for n, r in enumerate(remaining.rig.ropes)}
    segs.sort(key=lambda s: (order.get(s.rope, 0), s.rope, s.index))
    return replace(after, segments=tuple(segs), deflection_deg={})


def _unbalanced(pot: Potential, x0: np.ndarray, pid: str) -> float | None:
    """Direction (deg CCW from +x) of the out-of-balance force on free point ``pid`` at ``x0``: -grad Pi."""
    i = pot.index.get(pid)
    if i is None:
        return None
    h = 1e-6
    g = np.zeros(2)
    for d in range(2):
        xp, xm = x0.copy(), x0.copy()
        xp[i, d] += h
        xm[i, d] -= h
        g[d] = (pot.energy(xp) - pot.energy(xm)) / (2 * h)
    if not np.any(np.abs(g) > 1e-9):
        return None
    return math.degrees(math.atan2(-g[1], -g[0]))


def _swings(remaining: Remaining, after: Result, moved: list[Moved]) -> list[tuple[str, XY, XY, XY, SegmentResult]]:
    """(point, pivot, start, rest, holding piece) for each moved point now hanging from one tied rope piece.

    Empty unless every moved point swings (otherwise the motion is a drop or an extension).
    """
    rig = remaining.rig
    tied = {r.id for r in rig.ropes if not r.is_hauled}
    fixed = {p.id for p in rig.points if p.is_fixed}
    out = []
    for m in moved:
        holding = [s for s in after.segments if s.rope in tied and m.point in (s.from_point, s.to_point)
                   and s.tension_N > LOADED_MIN_N]
        if len(holding) != 1:
            return []
        s = holding[0]
        pivot_id = s.to_point if s.from_point == m.point else s.from_point
        if pivot_id not in fixed:
            return []
        c = after.points[pivot_id]
        r0, r1 = math.dist(c, m.before), math.dist(c, m.after)
        a0 = math.atan2(m.before[1] - c[1], m.before[0] - c[0])
        a1 = math.atan2(m.after[1] - c[1], m.after[0] - c[0])
        arc = r1 * abs((a1 - a0 + math.pi) % (2 * math.pi) - math.pi)
        if abs(r0 - r1) > SWING_RADIUS_TOL * r1 or abs(r0 - r1) >= arc:
            return []  # it falls or runs out toward the pivot more than it swings about it
        out.append((m.point, c, m.before, m.after, s))
    return out


def _swing_peak(swings, after_named: Result) -> Peak:
    """Pendulum yardstick: the holding piece's tension times 3 - 2 cos(theta0) at the bottom of the swing."""
    best: Peak | None = None
    named = {(s.from_point, s.to_point, round(s.tension_N, 6)): s for s in after_named.segments}
    for pid, c, start, rest, seg in swings:
        a0 = math.atan2(start[1] - c[1], start[0] - c[0])
        a1 = math.atan2(rest[1] - c[1], rest[0] - c[0])
        theta = abs(math.degrees((a1 - a0 + math.pi) % (2 * math.pi) - math.pi))
        force = seg.tension_N * pendulum_peak_factor(theta)
        s2 = named.get((seg.from_point, seg.to_point, round(seg.tension_N, 6)), seg)
        if best is None or force > best.force_N:
            best = Peak(force, f"{s2.rope}#{s2.index}", "swing")
    return best  # type: ignore[return-value]


class _Scanner:
    """Runs every failure of one solved rig."""

    def __init__(self, rig: Rig, intact: Result, by_parts: bool = True) -> None:
        self.rig, self.intact = rig, intact
        from solver.water import in_water

        # in moving water the ropes bow and carry drag to their ends, which the parts' hand-on (straight pieces)
        # does not know: the whole remaining rig is solved again
        by_parts = by_parts and not in_water(rig)
        self.breaker = Breaker(rig, intact.points, by_parts)
        self.elevation = rig.view == "elevation"
        self.strand_of = {(st.rope.id, i): k for k, st in enumerate(self.breaker.strands) for i, _ in st.passes[:-1]}

    def _reached_pull(self, rem: Remaining) -> dict[str, np.ndarray]:
        """What the intact pieces of the reached parts pulled on each point (vector sums, N)."""
        pts = self.intact.points
        out: dict[str, np.ndarray] = {}
        for sg in self.intact.segments:
            if self.strand_of.get((sg.rope, sg.index)) not in rem.affected:
                continue
            a, b = np.asarray(pts[sg.from_point], float), np.asarray(pts[sg.to_point], float)
            n = float(np.hypot(*(b - a)))
            if n == 0.0:
                continue
            u = (b - a) / n * sg.tension_N
            out[sg.from_point] = out.get(sg.from_point, np.zeros(2)) + u
            out[sg.to_point] = out.get(sg.to_point, np.zeros(2)) - u
        return out

    def _others_pull(self, rem: Remaining) -> dict[str, np.ndarray]:
        """What the parts a failure does not reach keep pulling on each fixed point (N): intact less reached."""
        reached = self._reached_pull(rem)
        return {pid: np.array([a.fx_N, a.fy_N]) - reached.get(pid, np.zeros(2))
                for pid, a in {**self.intact.anchors, **self.intact.loads}.items() if pid not in rem.freed}

    def _merged(self, sub: Result, rem: Remaining) -> Result:
        """The whole rig after the failure: the parts it reaches as solved (``sub``), the others as they were.

        Fixed points are shared between parts: their force is the intact resultant less what the reached
        parts' pieces pulled there, plus what the reached parts pull now (vector sums, N).
        """
        intact, pts = self.intact, self.intact.points
        kept = [sg for sg in intact.segments if self.strand_of.get((sg.rope, sg.index)) not in rem.affected]
        before = self._reached_pull(rem)
        sf = self.rig.settings.min_safety_factor

        def records(old: dict, new: dict) -> dict:
            out = {}
            for pid, o in old.items():
                if pid in rem.freed:
                    continue
                n = new.get(pid)
                fx = o.fx_N - before.get(pid, np.zeros(2))[0] + (n.fx_N if n is not None else 0.0)
                fy = o.fy_N - before.get(pid, np.zeros(2))[1] + (n.fy_N if n is not None else 0.0)
                mag = math.hypot(fx, fy)
                out[pid] = AnchorResult(mag, math.degrees(math.atan2(fy, fx)) % 360.0 if mag > 0 else 0.0,
                                        o.capacity_N, capacity_utilization(mag, o.capacity_N, o.capacity_kind, sf),
                                        fx, fy, o.capacity_kind)
            return out

        order = {r.id: n for n, r in enumerate(self.rig.ropes)}
        segs = sorted([*sub.segments, *kept], key=lambda sg: (order.get(sg.rope, 0), sg.index))
        return replace(sub, segments=tuple(segs), anchors=records(intact.anchors, sub.anchors),
                       loads=records(intact.loads, sub.loads), points={**pts, **sub.points})

    def remaining(self, c: Component) -> Remaining:
        if c.kind == "anchor":
            return self.breaker.anchor(c.id)
        if c.kind in ("rope piece", "sling leg"):
            return self.breaker.piece(c.rope, c.index)
        return self.breaker.pass_(c.rope, c.index)

    def fail(self, c: Component) -> Failure:
        rem = self.remaining(c)
        after = self._solved(rem)
        for _ in range(MAX_SLACK_RETRIES):  # a point nothing pulls any more hangs loose: its ropes go slack
            if after.ok or not self._unloaded(rem, after.subject):
                break
            rem = self.breaker.slackened(rem, after.subject)
            after = self._solved(rem)
        pot = Potential(rem.rig, rem.strands)
        x0 = np.array([rem.start[pid] for pid in pot.free], float).reshape(-1, 2)
        unheld = [self._unheld(lo, rem) for lo in rem.loose if lo.what == "runs free"]
        if not after.ok:
            subject = after.subject if after.subject in pot.index else ""
            d = _unbalanced(pot, x0, subject) if subject else None
            unheld.append(Unheld(subject, d, after.message))
            named = replace(_relabel(after, rem), anchors={}, loads={}, segments=())
            return self._finish(c, rem, named, unheld, [], None, [], None)
        named = _relabel(after, rem)
        moved = [Moved(pid, tuple(self.intact.points[pid]), tuple(after.points[pid])) for pid in pot.free
                 if pid in after.points and math.dist(self.intact.points[pid], after.points[pid]) > MOVED_MIN_M]
        peak, swings, peak_pts = None, [], None
        if moved:
            swings = _swings(rem, after, moved)
            if swings:
                peak = _swing_peak(swings, named)
            else:
                x1 = np.array([after.points[pid] for pid in pot.free], float).reshape(-1, 2)
                peak = drop_peak(Potential(rem.rig, rem.strands, held_at=x0, others=self._others_pull(rem)), x0, x1)
                peak_pts = peak.positions if peak is not None else None
                if peak is not None and peak.how == "jam":  # at least what it comes to rest with
                    rest = max([(a.force_N, pid) for pid, a in named.anchors.items()]
                               + [(sg.tension_N, f"{sg.rope}#{sg.index}") for sg in named.segments])
                    if rest[0] > peak.force_N:
                        peak = replace(peak, force_N=rest[0], at=rest[1])
        named = self._merged(named, rem)
        pivots = {m.point: (s.to_point if s.from_point == m.point else s.from_point) for m in moved
                  for s in [next((x[4] for x in swings if x[0] == m.point), None)] if s is not None}
        return self._finish(c, rem, named, unheld, moved, peak,
                            [(s[0], pivots[s[0]], s[1], s[2], s[3]) for s in swings], peak_pts)

    def _solved(self, rem: Remaining) -> Result:
        """The remaining rig solved from where the intact rig was (no ropes left: nothing to solve); in moving water
        its ropes start bowed as the intact rig's were (a trail of the intact Result alone: never a former solve's)."""
        from solver.equilibrium import solve

        if rem.rig.ropes:
            return solve(rem.rig, start=rem.start, trail=seeded(self.intact) if self.intact.water else None)
        fixed = {p.id: (p.x, p.y) for p in rem.rig.points if p.is_fixed}
        return Result(status="ok", message="", iterations=0, residual_N=0.0, points=fixed)

    def _unloaded(self, rem: Remaining, pid: str) -> bool:
        """True when ``pid`` is a free point of the remaining rig with no force or weight of its own."""
        try:
            p = rem.rig.point(pid)
        except KeyError:
            return False
        if p.is_fixed or any(f.at == pid for f in rem.rig.forces):
            return False
        return not (self.elevation and p.mass_kg)

    def _unheld(self, lo: Loose, rem: Remaining) -> Unheld:
        pos = self.intact.points
        if len(lo.path) == 2:  # a haul team whose rope lost its other end: it falls back along its rope
            a, b = pos[lo.path[0]], pos[lo.path[1]]
            d = math.degrees(math.atan2(b[1] - a[1], b[0] - a[0]))
            return Unheld(lo.subject, d, f"{_name(self.rig, lo.subject)} is no longer held: the rope runs "
                                         f"out toward them ({direction_text(d, self.rig.view)}); the team falls back")
        forces = [f for f in self.rig.forces if f.at == lo.subject]
        p = self.rig.point(lo.subject)
        fx = sum(f.magnitude_N * math.cos(math.radians(f.direction_deg)) for f in forces)
        fy = sum(f.magnitude_N * math.sin(math.radians(f.direction_deg)) for f in forces)
        if self.elevation and p.mass_kg:
            fy -= p.mass_kg * STANDARD_GRAVITY
        d = math.degrees(math.atan2(fy, fx)) if (fx or fy) else None
        toward = f" and goes toward {direction_text(d, self.rig.view)}" if d is not None else ""
        return Unheld(lo.subject, d, f"{p.name} is no longer held by any rope{toward}")

    def _finish(self, c: Component, rem: Remaining, after: Result, unheld: list[Unheld], moved: list[Moved],
                peak: Peak | None, swings: list, peak_pts) -> Failure:
        zone, zone_parts = failure_zone(rem, self.intact, after.points if after.ok else {}, peak_pts, swings)
        status = "holds" if after.ok and not unheld else "runs free"
        effect = self._effect(rem, moved, swings)
        parts = []
        if unheld:
            parts.append("; ".join(u.words for u in unheld))
        elif moved:
            far = max(moved, key=lambda m: m.distance_m)
            parts.append(f'{effect}; "{_name(self.rig, far.point)}" moves {self._len(far.distance_m)} and the rest holds')
        else:
            parts.append(f"{effect}; the rest holds where it is" if effect else "the rest holds where it is")
        if peak is not None and peak.how == "jam":
            parts.append("it runs into the next pulley or knot on its rope (two-blocked): the impact is not estimated")
        parts += self._load_changes(after)
        if c.kind == "sling leg":
            parts.append(self._anchor_system(c, status, moved, peak))
        return Failure(c, status, after, tuple(moved), tuple(unheld), tuple(rem.loose), peak, zone, zone_parts, effect,
                       f"If {c.name} lets go: " + "; ".join(parts))

    def _anchor_system(self, c: Component, status: str, moved: list[Moved], peak: Peak | None) -> str:
        """What the trade teaches about this multi-point anchor, from what the scan found."""
        rope = self.rig.rope(c.rope)
        equalising = any(ps.how != "tied" for ps in rope.path[1:-1])
        if status != "holds":
            return ("self-equalising without a limiting knot: the sling runs out through the master point"
                    if equalising else "nothing else holds the master point")
        if not moved:
            return "load-sharing: the other legs take the load at once"
        far = max(moved, key=lambda m: m.distance_m)
        shock = f" and a shock of about {units.format_force(peak.force_N, self.rig.display.force)}" if peak else ""
        return (f"load-sharing: the other legs take the load after \"{_name(self.rig, far.point)}\" moves "
                f"{self._len(far.distance_m)}{shock}")

    def _len(self, metres: float) -> str:
        return units.format_length(metres, self.rig.display.length)

    def _load_changes(self, after: Result) -> list[str]:
        """The pull on each load that changes by more than a tenth, in words and the rig's units."""
        out = []
        unit = self.rig.display.force
        for lid, a in self.intact.loads.items():
            new = after.loads[lid].force_N if after.ok and lid in after.loads else 0.0
            if abs(new - a.force_N) > 0.1 * max(a.force_N, LOADED_MIN_N):
                out.append(f'the pull on "{_name(self.rig, lid)}" goes from {units.format_force(a.force_N, unit)} '
                           f'to {units.format_force(new, unit)}')
        return out

    def _effect(self, rem: Remaining, moved: list[Moved], swings: list) -> str:
        """What flies or swings, in words, for the people-in-zone warning."""
        words = []
        for lo in rem.loose:
            if lo.what == "hardware":
                what = "the rope leaves the edge" if set(lo.path) == {"edge"} else (
                    "the pulley" if "pulley" in lo.path else "the rope grab" if "tied" in lo.path else "the ring")
                words.append(f'{what} at "{_name(self.rig, lo.subject)}" flies off the rope'
                             if what != "the rope leaves the edge" else f'{what} at "{_name(self.rig, lo.subject)}"')
            elif lo.what == "slack":
                words.append(f"{self.rig.rope(lo.subject).name if _has_rope(self.rig, lo.subject) else lo.subject} "
                             f"goes slack")
            elif lo.what == "rope":
                words.append(f"{self.rig.rope(lo.subject).name if _has_rope(self.rig, lo.subject) else lo.subject} "
                             f"whips free")
        for _rope, _prev, at, _nxt in rem.removed_passes:
            text = f'the rope straightens past "{_name(self.rig, at)}"'
            if not any(lo.what == "hardware" and lo.subject == at for lo in rem.loose) and text not in words:
                words.append(text)
        if swings:
            words += [f'"{_name(self.rig, m.point)}" swings' for m in moved][:2]
        elif moved:
            words.append(f'"{_name(self.rig, max(moved, key=lambda m: m.distance_m).point)}" is pulled across')
        return ", ".join(dict.fromkeys(words))


def _has_rope(rig: Rig, rope_id: str) -> bool:
    return any(r.id == rope_id for r in rig.ropes)


def scan_steps(rig: Rig, intact: Result, by_parts: bool = True) -> Iterator[Failure]:
    """The failures of a rig solved ``intact`` (ok), one at a time: lets the app scan between its own events."""
    sc = _Scanner(rig, intact, by_parts)
    for c in components(rig):
        yield sc.fail(c)


def no_scan_reason(intact: Result) -> str:
    """Why a rig that does not solve intact gets no scan, in words."""
    return (f"The rig does not hold as drawn ({intact.status}: {intact.message}), so there is nothing to let go "
            f"from: fix the rig first.")


def scan(rig: Rig, intact: Result | None = None, by_parts: bool = True) -> Scan:
    """Every component of ``rig`` let go in turn (see the module docstring); ``intact`` = the rig's own solve if given.

    Each failure re-solves only the parts of the rig it reaches (free points joined by rope; anchors and
    other fixed points separate parts) and hands on the others' records; ``by_parts=False`` re-solves
    the whole rig every time (the same numbers, slower).
    """
    from solver.equilibrium import solve

    if intact is None or not intact.points:
        intact = solve(rig)
    if not intact.ok:
        return Scan(rig, intact, (), no_scan_reason(intact))
    return Scan(rig, intact, tuple(scan_steps(rig, intact, by_parts)))
