"""Hauling stroke by stroke: rope paid in as the control, stretch that eats the throw, resets.

A stroke pays rope in at the haul team in small steps (``steps`` per throw); each step solves
the rig with the hauled strand shortened by the rope paid in (:mod:`solver.haul_strands`),
so the haul force is an output.  A load with ``required_N`` is rigid-plastic (check-values.md
"Hauling stroke by stroke"): it stays put until the pull on it reaches that force, then moves
along its pull against that resistance.  A stroke ends when the throw is used or a travelling
pulley comes within ``spacing_m`` of the one it runs toward (two-blocked).  At a reset the team
lets go, the progress capture takes the load (its grab slides if the held force is above its
slip force), the travelling grab is slid back along the rope to its starting spacing and the
next stroke begins with the capture holding until the haul system lifts the load off it.
Distances in metres, forces in newtons.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Callable

from solver import units
from solver.brent import brent_root
from solver.equilibrium import solve
from solver.errors import RigModelError
from solver.haul_result import HaulFrame, HaulPlan, HaulStroke
from solver.haul_settings import DEFAULT_SPACING_M, DEFAULT_STEPS
from solver.haul_strands import HAUL, Strand, as_rig, cut_at_capture, joined, lengths, strands_of
from solver.materials import hardware_for
from solver.model import Force, Pass, Point, Rig
from solver.result import Result

#: Most strokes one plan makes before it calls the travel out of reach.
MAX_STROKES = 60
#: Load travel below which a stroke made no progress, m.
NO_PROGRESS_M = 1e-4


class _Stop(Exception):
    """Ends the haul early: ``status`` and a sentence that names the stroke and the reason."""

    def __init__(self, status: str, message: str, subject: str = "") -> None:
        super().__init__(message)
        self.status, self.message, self.subject = status, message, subject


def _pull_on(result: Result, rig: Rig, pid: str) -> tuple[float, float]:
    """Resultant of the rope pieces attached at point ``pid`` (N, x and y): the pull the rig puts on it."""
    fx = fy = 0.0
    px, py = result.points[pid]
    for s in result.segments:
        if pid not in (s.from_point, s.to_point) or s.tension_N <= 0:
            continue
        other = s.to_point if s.from_point == pid else s.from_point
        ox, oy = result.points[other]
        d = math.hypot(ox - px, oy - py)
        if d > 0:
            fx += s.tension_N * (ox - px) / d
            fy += s.tension_N * (oy - py) / d
    return fx, fy


def _piece_l0(result: Result, key: str) -> list[float]:
    """Unstretched length of each piece of strand ``key`` at ``result``, m."""
    return [s.length_m / (1.0 + s.strain) for s in result.segments_of(key)]


@dataclass
class _Haul:
    """The state a haul carries from step to step (mutable, private to :func:`plan_haul`)."""

    base: Rig
    load: Point
    haul_id: str
    strands: list[Strand]
    pos: dict[str, tuple[float, float]]
    spacing: float
    capture: Pass | None
    grab_slip_N: float | None
    resist_N: float | None  # None: a free load (moves as its forces say)
    moving: bool = False
    pull_dir: tuple[float, float] = (0.0, 0.0)
    last: Result | None = None
    warnings: list[str] = field(default_factory=list)
    _kept: tuple | None = None
    prev_pos: dict | None = None  # positions one step back within a stroke (None after a reset or a jump)

    # --- one solve ---------------------------------------------------------------------------
    def solve(self, strands: list[Strand], moving: bool) -> Result:
        against = None
        if moving and self.resist_N is not None:
            ang = math.degrees(math.atan2(-self.pull_dir[1], -self.pull_dir[0]))
            against = Force(self.load.id, self.resist_N, ang, "resistance of the stuck load")
        return solve(self._rig(strands, against), start=self._predicted(), ideal=False,
                     unstretched_m=lengths(strands))

    def _predicted(self) -> dict[str, tuple[float, float]]:
        """Warm start: the last step's positions carried on by the last step's motion (a secant predictor)."""
        if self.prev_pos is None:
            return dict(self.pos)
        prev = self.prev_pos
        return {k: (2 * x - prev[k][0], 2 * y - prev[k][1]) if k in prev else (x, y)
                for k, (x, y) in self.pos.items()}

    def _rig(self, strands: list[Strand], against: Force | None) -> Rig:
        """The rig to solve, kept while its structure, the stuck load's place and its resistance stay
        (the solver then reuses its compiled form and only the lengths change)."""
        key = (tuple((s.key, s.passes) for s in strands), against,
               None if against is not None else self.pos[self.load.id])
        if self._kept is None or self._kept[0] != key:
            self._kept = (key, as_rig(self.base, strands, self.pos, self.load, against))
        return self._kept[1]

    def haul_strand(self, strands: list[Strand]) -> Strand:
        return next(s for s in strands if s.role == HAUL)

    def haul_force(self, result: Result, strands: list[Strand]) -> float:
        return result.segments_of(self.haul_strand(strands).key)[-1].tension_N

    def load_pull(self, result: Result) -> tuple[float, float]:
        return _pull_on(result, self.base, self.load.id)


def _spec_slip(rig: Rig, capture: Pass | None) -> float | None:
    if capture is None or not capture.grab:
        return None
    return hardware_for(rig, capture.grab).slip_N


def _check_input(rig: Rig, travel_m: float, throw_m: float, steps: int) -> tuple[Point, str]:
    """(load, haul point id) of a rig that can be hauled, else RigModelError naming the reason."""
    if not (math.isfinite(travel_m) and travel_m > 0):
        raise RigModelError(f"the load travel to haul must be more than 0 m (got {travel_m:g} m)", subject="travel")
    if not (math.isfinite(throw_m) and throw_m > 0):
        raise RigModelError(f"the throw (how far the team walks in one stroke) must be more than 0 m "
                            f"(got {throw_m:g} m)", subject="throw")
    if steps < 2:
        raise RigModelError(f"a stroke needs at least 2 steps (got {steps})", subject="steps")
    loads = [p for p in rig.points if p.kind == "load"]
    if not loads:
        raise RigModelError("the rig has no load to move: place a load point at the object to haul", subject="load")
    hauled = [r for r in rig.ropes if r.is_hauled]
    if not hauled:
        raise RigModelError("no rope is hauled: make the end the team pulls a hauled end", subject="haul")
    if len(hauled) > 1:
        raise RigModelError("more than one rope is hauled (" + ", ".join(r.name for r in hauled)
                            + "): plan one haul at a time", subject=hauled[1].id)
    on_rope = {ps.at for r in rig.ropes for ps in r.path}
    load = next((p for p in loads if p.id in on_rope), None)
    if load is None:
        raise RigModelError(f"the load '{loads[0].name}' is on no rope", subject=loads[0].id)
    if load.is_fixed and load.required_N is None:
        raise RigModelError(f"the load '{load.name}' has no force needed to free it: enter it (required force) "
                            "or make the load free", subject=load.id)
    if load.is_fixed and not (math.isfinite(load.required_N) and load.required_N > 0):
        raise RigModelError(f"the load '{load.name}' needs a force to free it above 0", subject=load.id)
    return load, hauled[0].path[-1].at


def _ideal_ma(rig: Rig, haul_id: str, load: Point) -> float | None:
    """The rig's ideal MA (rope travel per load travel without stretch), from a force-controlled solve
    with the load held where it is (a free load would run to the pulleys under a set haul force)."""
    rig = rig.with_point(replace(load, fixed=True))
    hp = rig.point(haul_id)
    if hp.haul_force is None or hp.haul_force <= 0:
        rig = rig.with_point(replace(hp, force_N=1000.0, team=None, force_per_person_N=None))
    r = solve(rig)
    return r.ma_ideal if r.ok else None


def plan_haul(rig: Rig, travel_m: float, throw_m: float = 3.0, *, spacing_m: float = DEFAULT_SPACING_M,
              steps: int = DEFAULT_STEPS, progress: Callable[[float], None] | None = None) -> HaulPlan:
    """Haul ``rig``'s load ``travel_m`` metres in strokes of ``throw_m`` metres of rope; never raises for a bad rig.

    ``spacing_m``: closest a travelling pulley may come to the one it runs toward before the team
    resets.  ``progress(fraction)`` is called as load travel accumulates.
    """
    try:
        load, haul_id = _check_input(rig, float(travel_m), float(throw_m), int(steps))
        strands = strands_of(rig)
    except RigModelError as exc:
        return HaulPlan("invalid", exc.message, target_m=float(travel_m), throw_m=float(throw_m), subject=exc.subject)
    run = _Run(rig, load, haul_id, strands, float(travel_m), float(throw_m), float(spacing_m), int(steps), progress)
    return run.plan()


class _Run:
    """Carries one haul through its strokes and resets; :meth:`plan` returns the HaulPlan."""

    def __init__(self, rig, load, haul_id, strands, travel, throw, spacing, steps, progress) -> None:
        self.rig, self.target, self.throw, self.steps, self.progress = rig, travel, throw, steps, progress
        captures = [(st, st.capture_index()) for st in strands if st.capture_index() is not None]
        capture = captures[0][0].passes[captures[0][1]] if captures else None
        pos = {p.id: (p.x, p.y) for p in rig.points}
        self.h = _Haul(rig, load, haul_id, list(strands), pos, spacing, capture, _spec_slip(rig, capture),
                       None if not load.is_fixed else float(load.required_N))
        if len(captures) > 1:
            self.h.warnings.append("more than one progress capture: the plan uses the one at "
                                   f"'{rig.point(capture.at).name}'")
        if capture is None:
            self.h.warnings.append("no progress capture: the load is held only by its own friction while the "
                                   "team resets")
        self.start_pos = dict(pos)
        self.start_spacing = self._grab_spacings(strands, pos)
        self.frames: list = []
        self.peak_anchor: tuple[str, float] = ("", 0.0)
        self.strokes: list[HaulStroke] = []
        self.paid_total = 0.0
        self.travel_total = 0.0
        self.before_move: float | None = None
        self.ma_ideal = _ideal_ma(rig, haul_id, load)

    # --- what the plan watches -----------------------------------------------------------------
    def _grab_spacings(self, strands: list[Strand], pos) -> dict[str, float]:
        """For each travelling grab on the capture's strand: length of rope from it to the capture, m."""
        out = {}
        for st in strands:
            ci = st.capture_index()
            if ci is None:
                continue
            grab = st.passes[0].at
            if grab != self.h.load.id and not self.rig.point(grab).is_fixed:
                out[grab] = sum(math.dist(pos[a.at], pos[b.at]) for a, b in zip(st.passes[:ci], st.passes[1:ci + 1]))
        return out

    def _blocking_pieces(self, strands: list[Strand]) -> list[tuple[str, str]]:
        """Pieces that close up as the system is hauled: those of ropes running over pulleys (not a plain
        tie such as a sling or a load line), not at the team, not at the load, not between two fixed points."""
        out = []
        for st in strands:
            if len(st.passes) < 3 and not st.key.endswith(("<", ">")):
                continue
            for a, b in zip(st.passes, st.passes[1:]):
                ends = {a.at, b.at}
                if self.h.haul_id in ends or self.h.load.id in ends or a.at == b.at:
                    continue
                if all(self.rig.point(e).is_fixed for e in ends):
                    continue
                out.append((a.at, b.at))
        return out

    def _closest_at(self, pos, pieces) -> float:
        return min((math.dist(pos[a], pos[b]) for a, b in pieces), default=math.inf)

    def _closest(self, result: Result, pieces) -> tuple[float, tuple[str, str] | None]:
        best, which = math.inf, None
        for a, b in pieces:
            d = math.dist(result.points[a], result.points[b])
            if d < best:
                best, which = d, (a, b)
        return best, which

    def _name(self, pid: str) -> str:
        return self.rig.point(pid).name

    def _L(self, metres: float) -> str:
        """A length in the rig's display unit, as every surface writes it."""
        return units.format_length(metres, self.rig.display.length)

    def _F(self, newtons: float) -> str:
        """A force in the rig's display unit, as every surface writes it."""
        return units.format_force(newtons, self.rig.display.force)

    # --- one step ------------------------------------------------------------------------------
    def _running(self, strands: list[Strand]) -> list[Strand]:
        """The strands with the capture's two halves joined when the haul side has lifted the load off it."""
        h = self.h
        held = next((s for s in strands if s.key.endswith("<")), None)
        if held is None or h.capture is None:
            return strands
        beyond = next(s for s in strands if s.key == held.key[:-1] + ">")
        r = h.last
        t_held = r.segments_of(held.key)[-1].tension_N
        t_beyond = r.segments_of(beyond.key)[0].tension_N
        eta = hardware_for(self.rig, h.capture.hardware).efficiency or 1.0
        if eta * t_beyond < t_held:
            return strands  # the capture still holds
        merged = joined(held, beyond, h.capture)
        if beyond.role == HAUL:
            self._base_L0 += held.L0  # the rope held at the capture now runs on to the team
        return [merged if s is held else s for s in strands if s is not beyond]

    def _solve_at(self, strands: list[Strand]) -> tuple[Result, list[Strand]]:
        """Solve one step (holding or running capture, stuck or moving load); raises _Stop on failure."""
        h = self.h
        result = self._checked(h.solve(strands, h.moving and h.resist_N is not None), strands)
        h.last = result
        joined_strands = self._running(strands)
        if joined_strands is not strands:
            strands = joined_strands
            result = self._checked(h.solve(strands, h.moving and h.resist_N is not None), strands)
            h.last = result
        if h.resist_N is None:
            return result, strands
        if not h.moving:
            fx, fy = h.load_pull(result)
            pull = math.hypot(fx, fy)
            if pull > h.resist_N:
                h.moving, h.pull_dir = True, (fx / pull, fy / pull)
                self._breakout(pull)
                result = self._checked(h.solve(strands, True), strands)
        else:
            ux, uy = h.pull_dir
            x0, y0 = h.pos[h.load.id]
            x1, y1 = result.points[h.load.id]
            if (x1 - x0) * ux + (y1 - y0) * uy < -1e-9:  # it would slide back: friction holds it
                h.moving = False
                result = self._checked(h.solve(strands, False), strands)
        h.last = result
        return result, strands

    def _breakout(self, pull: float) -> None:
        """Note the rope paid in before the load first moved (interpolated within the step)."""
        if self.before_move is not None:
            return
        prev_paid, prev_pull, paid = self._step_pulls
        frac = (self.h.resist_N - prev_pull) / (pull - prev_pull) if pull > prev_pull else 1.0
        self.before_move = prev_paid + min(max(frac, 0.0), 1.0) * (paid - prev_paid)

    def _checked(self, result: Result, strands: list[Strand]) -> Result:
        if not result.ok:
            raise _Stop("failed", f"stroke {self.stroke_no}: the rig cannot be solved here: {result.message}",
                        result.subject)
        for aid, a in result.anchors.items():
            p = self.rig.point(aid)
            if p.kind == "anchor" and a.force_N > self.peak_anchor[1]:
                self.peak_anchor = (aid, a.force_N)
            if p.kind == "anchor" and p.capacity_N and a.force_N > p.capacity_N:
                raise _Stop("unreachable", f"stroke {self.stroke_no}: the anchor '{p.name}' would fail first: "
                            f"it would take {self._F(a.force_N)}, more than its {self._F(p.capacity_N)} "
                            "capacity", aid)
        sf = self.rig.settings.min_safety_factor
        for s in result.segments:
            if s.utilization > sf:
                st = next(x for x in strands if x.key == s.rope)
                rope = self.rig.rope(st.rope)
                raise _Stop("unreachable", f"stroke {self.stroke_no}: the rope '{rope.name}' would break between "
                            f"'{self._name(s.from_point)}' and '{self._name(s.to_point)}' "
                            f"({self._F(s.tension_N)}, above its MBS)", rope.id)
        return result

    def _accept(self, result: Result, strands: list[Strand], paid_stroke: float, phase: str = "stroke") -> float:
        """Take the step's geometry as the new state; returns the load's travel in this step, m."""
        h = self.h
        moved = self._step_travel(result)
        h.prev_pos = dict(h.pos) if phase == "stroke" else None
        h.pos.update(result.points)
        h.strands = strands
        self.travel_total += moved
        force = h.haul_force(result, strands) if phase == "stroke" else 0.0
        self.frames.append(HaulFrame(self.stroke_no, phase, self.paid_total + paid_stroke, self.travel_total,
                                     force, dict(h.pos)))
        return moved

    # --- strokes and resets -----------------------------------------------------------------------
    def plan(self) -> HaulPlan:
        status, message, subject = "ok", "", ""
        self.stroke_no = 1
        try:
            self._settle_free_load()
            self.frames.append(HaulFrame(1, "start", 0.0, 0.0, 0.0, dict(self.h.pos)))
            self._preflight()
            while True:
                stroke = self._stroke()
                self.strokes.append(stroke)
                self.paid_total += stroke.paid_in_m
                if stroke.ended_by == "target":
                    break
                if self.stroke_no >= MAX_STROKES:
                    raise _Stop("unreachable", f"stroke {self.stroke_no}: {MAX_STROKES} strokes brought the load "
                                f"only {self._L(self.travel_total)} of {self._L(self.target)}")
                held_before = (self.strokes[-2].capture_N or 0.0) if len(self.strokes) > 1 else 0.0
                capture_N, slip = self._reset()
                self.strokes[-1] = replace(stroke, capture_N=capture_N, capture_slip_m=slip, reset=True)
                if stroke.load_travel_m < NO_PROGRESS_M and (capture_N or 0.0) <= held_before * (1 + 1e-9) + 1e-6:
                    # nothing moved and the capture keeps no more than before: every stroke would end the same way
                    why = ("two-blocked before the load moved" if stroke.ended_by == "two-blocked"
                           else "used the whole throw before the load moved")
                    held = "" if self.h.capture is not None else " and nothing keeps the stretch while the team resets"
                    raise _Stop("unreachable", f"stroke {self.stroke_no}: the haul {why}{held}: stretch takes up "
                                "more rope than a stroke gives, so every stroke would end the same way (set the "
                                "travelling pulley farther out, use a longer throw or add a progress capture)"
                                + self._one_pull_words())
                self.stroke_no += 1
        except _Stop as stop:
            status, message, subject = stop.status, stop.message, stop.subject
            if self._partial is not None:
                self.strokes.append(self._partial)
                self.paid_total += self._partial.paid_in_m
        if status == "ok":
            message = (f"load hauled {self._L(self.travel_total)} in {len(self.strokes)} stroke(s) with "
                       f"{sum(1 for s in self.strokes if s.reset)} reset(s)")
        return HaulPlan(status, message, self.h.load.id, self.h.haul_id, self.target, self.throw,
                        self.before_move, tuple(self.strokes), tuple(self.frames), self.ma_ideal,
                        tuple(self.h.warnings), subject, *self.peak_anchor)

    _partial: HaulStroke | None = None

    def _one_pull_words(self) -> str:
        """How much rope one unbroken pull would take before the load moves (a sentence), if it ever does
        within twenty throws; the travelling pulleys' spacing still applies."""
        if self.stroke_no != 1 or self.h.resist_N is None:
            return ""
        probe = plan_haul(self.rig, 1e-3, 20 * self.throw, spacing_m=self.h.spacing, steps=4 * self.steps)
        if probe.paid_in_before_move_m is None:
            return ""
        return (f"; in one unbroken pull the load would first move after "
                f"{self._L(probe.paid_in_before_move_m)} of rope")

    def _settle_free_load(self) -> None:
        """A free load hangs where the rig as drawn holds it before any rope is paid in (no travel counted);
        it moves as soon as the team pays in rope."""
        h = self.h
        if h.resist_N is not None:
            return
        result = h.solve(h.strands, False)
        if not result.ok:
            raise _Stop("failed", f"stroke 1: the rig as drawn cannot hold the free load: {result.message}",
                        result.subject)
        h.pos.update(result.points)
        h.last = result
        self.start_pos = dict(h.pos)
        self.before_move = 0.0

    def _preflight(self) -> None:
        """Check the start: the travelling pulleys are not already two-blocked."""
        pieces = self._blocking_pieces(self.h.strands)
        pos = self.h.pos
        for a, b in pieces:
            if math.dist(pos[a], pos[b]) <= self.h.spacing:
                raise _Stop("unreachable", f"stroke 1: '{self._name(a)}' and '{self._name(b)}' start within the "
                            f"{self._L(self.h.spacing)} spacing: the system is two-blocked before the first stroke",
                            a)

    def _stroke(self) -> HaulStroke:
        """Pay in one throw step by step (or until two-blocked, or the target travel); the stroke's row."""
        h = self.h
        self._base_L0 = h.haul_strand(h.strands).L0  # the hauled strand's unstretched length before the stroke
        pieces = self._blocking_pieces(h.strands)
        travel0 = self.travel_total
        peak = 0.0
        prev = (0.0, self._current_pull(), self._closest_at(h.pos, pieces))  # paid, pull on load, closest spacing
        self._last_state = self._snapshot()
        self._partial = HaulStroke(0.0, 0.0, 0.0, 0.0, None, "stopped")
        paid = 0.0
        ended = "throw"
        for k in range(1, self.steps + 1):
            p = self.throw * k / self.steps
            self._step_pulls = (prev[0], prev[1], p)
            result, strands = self._solve_at(self._with_haul_L0(h.strands, p))
            closest, which = self._closest(result, pieces)
            over = self.travel_total + self._step_travel(result) - self.target
            if over >= 0 or closest <= h.spacing:
                # finish exactly at the target or at the spacing: the rope paid in where that happens
                f_t = 1.0 if over < 0 else 1.0 - over / max(self._step_travel(result), 1e-12)
                f_s = 1.0
                if closest <= h.spacing and math.isfinite(prev[2]) and prev[2] > closest:
                    f_s = (prev[2] - h.spacing) / (prev[2] - closest)
                ended = "target" if f_t <= f_s and over >= 0 else "two-blocked"
                if ended == "target":
                    result, strands, p = self._finish_at_target(prev[0], prev[1], p, over)
                else:
                    p = prev[0] + min(max(f_s, 0.0), 1.0) * (p - prev[0])
                    self._restore(self._last_state)
                    self._step_pulls = (prev[0], prev[1], p)
                    result, strands = self._solve_at(self._with_haul_L0(h.strands, p))
                peak = max(peak, h.haul_force(result, strands))
                self._accept(result, strands, p)
                paid = p
                if ended == "two-blocked" and which is not None:
                    self.h.warnings.append(f"stroke {self.stroke_no}: two-blocked: '{self._name(which[0])}' "
                                           f"reached '{self._name(which[1])}'")
                break
            self._check_load_reach(result)
            peak = max(peak, h.haul_force(result, strands))
            self._last_state = self._snapshot()
            self._accept(result, strands, p)
            paid = p
            prev = (p, self._current_pull(), closest)
            self._partial = self._row(paid, travel0, peak, None, "stopped")
            if self.progress is not None:
                self.progress(min(self.travel_total / self.target, 1.0))
        self._partial = None
        return self._row(paid, travel0, peak, None, ended)

    _last_state: tuple = ()

    def _finish_at_target(self, p_lo: float, pull_lo: float, p_hi: float, over_hi: float):
        """(result, strands, rope paid in) of the step where the load reaches the target travel exactly:
        regula falsi (Illinois) on the rope paid in between the last step (short) and this one (past)."""
        h = self.h
        lo, f_lo, hi, f_hi = p_lo, self.travel_total - self.target, p_hi, over_hi
        side = 0
        for _ in range(8):
            p = hi - f_hi * (hi - lo) / (f_hi - f_lo) if f_hi != f_lo else 0.5 * (lo + hi)
            self._restore(self._last_state)
            self._step_pulls = (p_lo, pull_lo, p)
            result, strands = self._solve_at(self._with_haul_L0(h.strands, p))
            f = self.travel_total + self._step_travel(result) - self.target
            if abs(f) <= 1e-9 * max(self.target, 1.0) or hi - lo <= 1e-12:
                break
            if f > 0:
                hi, f_hi = p, f
                f_lo = f_lo / 2 if side == 1 else f_lo
                side = 1
            else:
                lo, f_lo = p, f
                f_hi = f_hi / 2 if side == -1 else f_hi
                side = -1
        return result, strands, p

    def _snapshot(self) -> tuple:
        """What a step may change before it is accepted: a finishing step solves again from here."""
        h = self.h
        return (h.last, h.moving, h.pull_dir, self._base_L0, self.before_move)

    def _restore(self, snap: tuple) -> None:
        h = self.h
        h.last, h.moving, h.pull_dir, self._base_L0, self.before_move = snap
    _step_pulls: tuple = (0.0, 0.0, 0.0)

    def _row(self, paid, travel0, peak, capture_N, ended) -> HaulStroke:
        travel = self.travel_total - travel0
        stretch = paid - (self.ma_ideal or 0.0) * travel if self.ma_ideal else math.nan
        return HaulStroke(paid, travel, peak, stretch, capture_N, ended)

    def _step_travel(self, result: Result) -> float:
        """How far the load came this step toward where the rig pulls it (negative: it went back), m."""
        lid = self.h.load.id
        (x0, y0), (x1, y1) = self.h.pos[lid], result.points[lid]
        fx, fy = self.h.load_pull(result)
        pull = math.hypot(fx, fy)
        if pull == 0.0:
            return math.hypot(x1 - x0, y1 - y0)
        return ((x1 - x0) * fx + (y1 - y0) * fy) / pull

    def _current_pull(self) -> float:
        if self.h.last is None:
            return 0.0
        return math.hypot(*self.h.load_pull(self.h.last))

    def _with_haul_L0(self, strands: list[Strand], paid: float) -> list[Strand]:
        """The strands with the hauled one shortened by the rope paid in this stroke, m."""
        L0 = self._base_L0 - paid
        if L0 <= 0:
            raise _Stop("unreachable", f"stroke {self.stroke_no}: the whole hauled rope has been pulled in")
        return [replace(s, L0=L0) if s.role == HAUL else s for s in strands]

    def _check_load_reach(self, result: Result) -> None:
        """Stop when the load comes within the spacing of a fixed point it is hauled toward."""
        lid = self.h.load.id
        for s in result.segments:
            if lid not in (s.from_point, s.to_point):
                continue
            other = s.to_point if s.from_point == lid else s.from_point
            if self.rig.point(other).is_fixed and s.length_m <= self.h.spacing:
                raise _Stop("unreachable", f"stroke {self.stroke_no}: the load would pass '{self._name(other)}' "
                            f"after {self._L(self.travel_total)} of travel; {self._L(self.target)} cannot be reached",
                            other)

    def _reset(self) -> tuple[float, float]:
        """The team lets go; the capture takes the load; the grabs slide back.  (capture load N, slip m)."""
        h = self.h
        if h.capture is None:
            return self._reset_without_capture()
        # everything beyond the capture goes slack: keep what hangs from the load to the capture
        candidates: list[Strand] = []
        for st in h.strands:
            if st.capture_index() is not None:
                candidates.append(cut_at_capture(st, _piece_l0(h.last, st.key))[0])
            elif not st.key.endswith(">"):
                candidates.append(st)
        held_side = self._load_chain(candidates)
        if not any(s.key.endswith("<") for s in held_side):
            raise _Stop("unreachable", f"stroke {self.stroke_no}: the progress capture at "
                        f"'{self._name(h.capture.at)}' is not on the rope that holds the load, so nothing holds it "
                        "while the team resets", h.capture.at)
        h.moving = False
        result = self._held(held_side)
        capture_N = self._capture_load(result, held_side)
        slip = 0.0
        if h.grab_slip_N is not None and capture_N > h.grab_slip_N:
            held_side, result, slip = self._slid(held_side, capture_N)
            grab = hardware_for(self.rig, h.capture.grab)
            h.warnings.append(f"stroke {self.stroke_no}: the capture's grab ({grab.name}) slips: it would hold "
                              f"{self._F(capture_N)}, above its {self._F(h.grab_slip_N)} slip force; "
                              f"it slides {self._L(slip)} before it holds")
            capture_N = self._capture_load(result, held_side)
        h.pos.update(result.points)
        held_side, result = self._grabs_back(held_side, result)
        h.pos.update(result.points)
        for pid, xy in self.start_pos.items():  # travelling pulleys on slack rope go back to where they started
            if pid not in result.points and not self.rig.point(pid).is_fixed:
                h.pos[pid] = xy
        h.strands = held_side + self._rebuilt(held_side)
        h.last, h.prev_pos = result, None
        self.frames.append(HaulFrame(self.stroke_no, "reset", self.paid_total, self.travel_total, 0.0, dict(h.pos)))
        return capture_N, slip

    def _load_chain(self, strands: list[Strand]) -> list[Strand]:
        """The strands that hang from the load end to end through free points (a knot, a grab, a master
        point) as far as fixed points: what holds the load once everything else has gone slack."""
        load = self.h.load.id
        remaining, keep, frontier, seen = list(strands), [], [load], {load}
        while frontier:
            at = frontier.pop()
            for st in [s for s in remaining if at in (s.passes[0].at, s.passes[-1].at)]:
                remaining.remove(st)
                keep.append(st)
                for end in (st.passes[0].at, st.passes[-1].at):
                    if end not in seen and not self.rig.point(end).is_fixed:
                        seen.add(end)
                        frontier.append(end)
        return keep

    def _held(self, strands: list[Strand]) -> Result:
        result = self.h.solve(strands, False)
        if not result.ok:
            raise _Stop("failed", f"stroke {self.stroke_no}: when the team lets go the capture cannot hold the "
                        f"load: {result.message}", result.subject)
        return self._checked(result, strands)

    def _capture_load(self, result: Result, held_side: list[Strand]) -> float:
        held = next(s for s in held_side if s.key.endswith("<"))
        return result.segments_of(held.key)[-1].tension_N

    def _slid(self, held_side: list[Strand], capture_N: float) -> tuple[list[Strand], Result, float]:
        """The grab slides until it holds exactly its slip force: the held strand lengthened (secant on L0)."""
        held = next(s for s in held_side if s.key.endswith("<"))
        target = self.h.grab_slip_N

        def excess(extra: float) -> float:
            trial = [replace(s, L0=s.L0 + extra) if s is held else s for s in held_side]
            r = self.h.solve(trial, False)
            if not r.ok:
                raise _Stop("failed", f"stroke {self.stroke_no}: the slipping capture cannot be solved: {r.message}")
            return self._capture_load(r, trial) - target

        hi = 1e-3
        while excess(hi) > 0:
            hi *= 2.0
            if hi > held.L0:
                raise _Stop("unreachable", f"stroke {self.stroke_no}: the capture's grab would slip all the way")
        extra = brent_root(excess, 0.0, hi, xtol=1e-7)
        trial = [replace(s, L0=s.L0 + extra) if s is held else s for s in held_side]
        return trial, self._held(trial), extra

    def _grabs_back(self, held_side: list[Strand], result: Result) -> tuple[list[Strand], Result]:
        """Slide each travelling grab back along the held rope to its starting spacing from the capture."""
        h = self.h
        held = next(s for s in held_side if s.key.endswith("<"))
        grab = held.passes[0].at
        want = self.start_spacing.get(grab)
        before = next((s for s in held_side if s.passes[-1].at == grab and s is not held), None)
        if want is None or before is None:
            return held_side, result
        for _ in range(3):  # the spacing follows the unstretched split closely: a few corrections settle it
            now = held.drawn_length(result.points)
            new_L0 = held.L0 * want / now
            delta = held.L0 - new_L0
            if abs(now - want) < 1e-4 or before.L0 + delta <= 0:
                break
            new_held, new_before = replace(held, L0=new_L0), replace(before, L0=before.L0 + delta)
            held_side = [new_held if s is held else new_before if s is before else s for s in held_side]
            held, before = new_held, new_before
            h.pos.update(result.points)
            result = self._held(held_side)
        return held_side, result

    def _rebuilt(self, held_side: list[Strand]) -> list[Strand]:
        """Every strand that went slack (beyond the capture, the haul system's own ropes), taken in
        hand-tight at the reset geometry."""
        h = self.h
        held = {s.key for s in held_side}
        out = []
        for st in strands_of(self.rig):
            if st.capture_index() is not None:
                st = cut_at_capture(st, [0.0] * (len(st.passes) - 1))[1]
            elif st.key in held:
                continue
            out.append(replace(st, L0=st.drawn_length(h.pos)))
        return out

    def _reset_without_capture(self) -> tuple[float | None, float]:
        """No capture: everything goes slack; the stuck load stays; the travelling grabs and pulleys go back
        to where they started (slid along their ropes) and the rig is taken in hand-tight again."""
        h = self.h
        if h.resist_N is None:
            raise _Stop("unreachable", f"stroke {self.stroke_no}: the load is free and there is no progress "
                        "capture: it would run back when the team lets go")
        h.moving = False
        pos = dict(h.pos)
        for pid, xy in self.start_pos.items():
            if pid != h.load.id and not self.rig.point(pid).is_fixed:
                pos[pid] = xy
        h.strands = [replace(s, L0=s.drawn_length(pos)) for s in h.strands]
        h.pos = pos
        h.last, h.prev_pos = None, None
        self.frames.append(HaulFrame(self.stroke_no, "reset", self.paid_total, self.travel_total, 0.0, dict(pos)))
        return None, 0.0


def has_load_to_haul(rig: Rig) -> bool:
    """True when the rig has a hauled rope and a load on a rope that a haul could move."""
    try:
        _check_input(rig, 1.0, 1.0, DEFAULT_STEPS)
    except RigModelError:
        return False
    return True
