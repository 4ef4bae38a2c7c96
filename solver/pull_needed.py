"""The pull really needed: the total pull that brings a load to its ``required_N``, found by solving the rig.

"Required force ÷ mechanical advantage" assumes the MA stays put as the pull grows.  It does
not where the geometry moves with the pull (every vector pull, a rope that stretches, a
redirect that swings): on a vector pull the MA falls as the line comes into line with the
pull, so that division promises the load more than it gets.  Here the rig itself is solved
at trial pulls -- every haul team and every external pulling force scaled together, with the
friction of the chosen motion -- and the pull that delivers ``required_N`` is bracketed and
then found by Brent's method (:func:`solver.brent.brent_root`: the steps of ``scipy.optimize.brentq``)
on log(pull), each solve warm-started from the nearest solved geometry (the start a force sweep uses).

When no pull reaches the force the answer says what comes first, at what pull: the rig stops
solving (a point is no longer held), two passes jam together (two-blocking), an anchor or a
rope piece would carry more than its strength, a rope grab would slide, or the mechanism stops giving (more pull
delivers less).  Pullers needed = ceil(pull ÷ pull per person); the pull per person is the
haul teams' own figure (the smallest, when teams differ), else 0.22 kN sustained
(:data:`solver.hauling.DEFAULT_PER_PERSON_N`, common practice, no source).

Forces are newtons throughout.  Nothing here runs on a drag frame: :func:`solver.analysis.analyse`
calls it, and the live solver runs that only once the drawing is still.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from functools import partial
from typing import Callable, Mapping

from solver.brent import brent_root
from solver.hauling import DEFAULT_PER_PERSON_N
from solver.model import Rig
from solver.result import LoadNeed, Result
from solver.water_trail import seeded

#: The solver: (rig, start=..., ideal=...) -> Result (solver.equilibrium.solve unless a test counts its calls).
Solve = Callable[..., Result]

#: Relative accuracy of the pull found (on log pull), well inside the 0.5 % a rigger can act on.
PULL_RTOL = 2e-4
#: The first trial pull: this much above the straight-line guess (required ÷ delivered × today's pull).
FIRST_OVER = 1.05
#: The bracket grows by this factor a step while the load is short.
GROW = 2.0
#: Give up growing the pull after this many steps (2^14 ≈ 16 000 × the first guess): "no pull reaches it".
MAX_GROW_STEPS = 14
#: Shrink steps while looking for a pull below the answer (2^-12 ≈ 1/4000 of today's pull).
MAX_SHRINK_STEPS = 12
#: Brent iterations at most (each is one solve).
MAX_ROOT_SOLVES = 30


@dataclass(frozen=True)
class _Limit:
    """Something that stops a larger pull from helping: its kind, the id it is about, the numbers or words."""

    kind: str  # "stops-holding", "two-blocked", "anchor-fails", "grab-slips", "rope-fails", "ma-collapses", "no-pull"
    subject: str = ""
    force_N: float | None = None
    strength_N: float | None = None
    message: str = ""


class _Stopped(Exception):
    """A trial pull at which the rig did not solve (raised out of the root finder)."""

    def __init__(self, log_pull: float) -> None:
        super().__init__(log_pull)
        self.log_pull = log_pull


class _Pulls:
    """The rig at any total pull (N): every haul team and external force scaled together."""

    def __init__(self, rig: Rig, result: Result) -> None:
        self.rig = rig
        self.haul_ids = [h for h in result.haul if rig.has_point(h)]
        self.now_haul = [float(result.haul[h]) for h in self.haul_ids]
        self.now_forces = [float(f.magnitude_N) for f in rig.forces]
        self.now = sum(self.now_haul) + sum(self.now_forces)
        self.count = len(self.haul_ids) + len(rig.forces)

    def rig_at(self, pull: float) -> Rig:
        """The rig with a total pull of ``pull`` N shared as it is shared now (equally when nothing pulls)."""
        if self.now > 0:
            share_h = [pull * f / self.now for f in self.now_haul]
            share_f = [pull * f / self.now for f in self.now_forces]
        else:
            share_h = [pull / self.count] * len(self.haul_ids)
            share_f = [pull / self.count] * len(self.now_forces)
        rig = self.rig
        for hid, f in zip(self.haul_ids, share_h):
            rig = rig.with_point(replace(rig.point(hid), force_N=float(f)))
        if self.now_forces:
            rig = replace(rig, forces=tuple(replace(fc, magnitude_N=float(f)) for fc, f in zip(rig.forces, share_f)))
        return rig


def pull_per_person(rig: Rig) -> float:
    """Pull one person gives (N): the smallest of the haul teams' own figures, else the 0.22 kN default."""
    figures = []
    for p in rig.points_of_kind("haul"):
        if p.force_per_person_N:
            figures.append(float(p.force_per_person_N))
        elif p.force_N and p.team:
            figures.append(float(p.force_N) / float(p.team))
    return min(figures) if figures else DEFAULT_PER_PERSON_N


def pullers_for(pull_N: float, per_person_N: float) -> int:
    """ceil(pull ÷ pull per person), a hair of tolerance so rounding does not add a person."""
    if pull_N <= 0:
        return 0
    return max(1, math.ceil(pull_N / per_person_N * (1.0 - 1e-12)))


def _limit(rig: Rig, res: Result, delivered: float | None, last: float | None) -> _Limit | None:
    """What makes ``res`` a state no more pull can improve on (the first found), or None."""
    if not res.ok:
        return _Limit("stops-holding", res.subject, message=res.message)
    for w in res.warnings:
        if w.code == "two-blocked":
            return _Limit("two-blocked", w.subject, message=w.message)
    for kind, subject, force, strength, where in over_strength(rig, res):
        if force > strength:
            return _Limit(kind, subject, force, strength, where)
    if delivered is not None and last is not None and delivered <= last:
        return _Limit("ma-collapses", force_N=delivered)
    return None


def over_strength(rig: Rig, res: Result) -> list[tuple[str, str, float, float, str]]:
    """(kind, id, force N, strength N, which) for every rated anchor, rope grab (its slip force) and rope piece.

    A rope piece's strength is its weakest end's (MBS × the termination's efficiency there,
    :func:`solver.weak_links.piece_strengths`).
    """
    from solver.weak_links import grab_holds, piece_strengths

    out = [("anchor-fails", aid, float(a.force_N), float(a.capacity_N), "")
           for aid, a in res.anchors.items() if a.capacity_N]
    out += [("grab-slips", g.at, g.held_N, float(g.hardware.slip_N), g.hardware.name) for g in grab_holds(rig, res)]
    strengths = piece_strengths(rig)
    for s in res.segments:
        st = strengths.get((s.rope, s.index))
        if st is not None:
            out.append(("rope-fails", s.rope, float(s.tension_N), st.strength_N, f"{s.from_point}→{s.to_point}"))
    return out


def _evaluate(pulls: _Pulls, load_id: str, pull: float, start, solve: Solve):
    res = solve(pulls.rig_at(pull), start=start, ideal=False)
    lr = res.loads.get(load_id) if res.ok else None
    return res, (float(lr.force_N) if lr is not None else None)


def _start_of(rig: Rig, res: Result) -> dict[str, tuple[float, float]] | None:
    """Warm start: the solved free points of ``res`` (as a force sweep warm-starts)."""
    if not res.ok:
        return None
    return {pid: xy for pid, xy in res.points.items() if rig.has_point(pid) and not rig.point(pid).is_fixed} or None


def need_for_load(rig: Rig, result: Result, load_id: str, required_N: float | None = None,
                  solve: Solve | None = None, per_person_N: float | None = None) -> LoadNeed | None:
    """The pull that brings ``load_id`` to ``required_N`` (its own by default), solved; None when not asked.

    ``per_person_N`` overrides the rig's pull per person (:func:`pull_per_person`).
    """
    if solve is None:  # the search's own trail, from the rig's solve: its steps follow it, never an earlier solve
        from solver.equilibrium import solve as solve_
        solve = partial(solve_, trail=seeded(result))
    load = rig.point(load_id)
    req = float(required_N if required_N is not None else (load.required_N or 0.0))
    lr = result.loads.get(load_id)
    if not req or not result.ok or lr is None:
        return None
    delivered = float(lr.force_N)
    per = float(per_person_N) if per_person_N else pull_per_person(rig)
    pulls = _Pulls(rig, result)
    base = LoadNeed(load=load_id, required_N=req, delivered_N=delivered, short_N=max(0.0, req - delivered),
                    pull_now_N=pulls.now, pull_needed_N=None, per_person_N=per, pullers_needed=None)
    if pulls.count == 0:
        return replace(base, limit="no-pull")
    cache: dict[float, tuple[Result, float | None]] = {}  # by log(pull): the root finder's ends are the bracket's own
    if pulls.now > 0:
        cache[math.log(pulls.now)] = (result, delivered)

    def at(pull: float) -> tuple[Result, float | None]:
        return at_log(math.log(pull))

    def at_log(key: float) -> tuple[Result, float | None]:
        if key not in cache:
            near = min((k for k, (r, _) in cache.items() if r.ok), key=lambda k: abs(k - key), default=None)
            start = _start_of(rig, cache[near][0]) if near is not None else None
            cache[key] = _evaluate(pulls, load_id, math.exp(key), start, solve)
        return cache[key]

    lo = hi = None
    if delivered >= req and pulls.now > 0:
        hi, p = pulls.now, pulls.now
        for _ in range(MAX_SHRINK_STEPS):
            p /= GROW
            res, f = at(p)
            if f is None:
                break
            if f < req:
                lo = p
                break
            hi = p
        if lo is None:  # (nearly) no pull already gives it: a pretensioned line
            return replace(base, pull_needed_N=0.0, pullers_needed=0)
    else:
        p = pulls.now if pulls.now > 0 else per
        lo_f = delivered if pulls.now > 0 else None
        lo = pulls.now if pulls.now > 0 else None
        # first guess: a little above straight-line scaling (what "required ÷ MA" assumes: the MA of a moving
        # geometry usually falls as the pull grows), then double until enough; a load given nothing yet: double
        if pulls.now > 0:
            p = p * (max(FIRST_OVER, FIRST_OVER * req / delivered) if delivered > 0 else GROW)
        for _ in range(MAX_GROW_STEPS):
            res, f = at(p)
            lim = _limit(rig, res, f, lo_f)
            if f is not None and f >= req and (lim is None or lim.kind == "ma-collapses"):
                hi = p
                break
            if lim is not None:
                return _unreachable(base, lim, p)
            lo, lo_f = p, f
            p *= GROW
        if hi is None:
            return _unreachable(base, _Limit("ma-collapses", force_N=lo_f), p / GROW)
        if lo is None:  # nothing pulls today: find a pull below the answer
            q = hi
            for _ in range(MAX_SHRINK_STEPS):
                q /= GROW
                res, f = at(q)
                if f is not None and f < req:
                    lo = q
                    break
                hi = q
            if lo is None:
                return replace(base, pull_needed_N=0.0, pullers_needed=0)
    def gap(log_pull: float) -> float:
        res, f = at_log(log_pull)
        if f is None:  # the rig stopped solving inside the bracket: that comes first
            raise _Stopped(log_pull)
        return f - req

    try:
        log_p = brent_root(gap, math.log(lo), math.log(hi), xtol=PULL_RTOL, rtol=1e-10, maxiter=MAX_ROOT_SOLVES)
    except _Stopped as stop:
        res, _ = at_log(stop.log_pull)
        return _unreachable(base, _limit(rig, res, None, None) or _Limit("stops-holding"), math.exp(stop.log_pull))
    pull = math.exp(log_p)
    res, f = at_log(log_p)
    lim = _limit(rig, res, None, None)
    if lim is not None:
        return _unreachable(base, lim, pull)
    return replace(base, pull_needed_N=pull, pullers_needed=pullers_for(pull, per))


def _unreachable(base: LoadNeed, lim: _Limit, pull: float) -> LoadNeed:
    """``base`` marked unreachable: what comes first, at a total pull of ``pull`` N."""
    return replace(base, limit=lim.kind, limit_subject=lim.subject, limit_pull_N=float(pull),
                   limit_force_N=lim.force_N, limit_strength_N=lim.strength_N, limit_message=lim.message)


def load_needs(rig: Rig, result: Result, solve: Solve | None = None) -> Mapping[str, LoadNeed]:
    """:func:`need_for_load` for every load of ``rig`` with a ``required_N`` that ``result`` delivers to."""
    if not result.ok:
        return {}
    out = {}
    for p in rig.points_of_kind("load"):
        if p.required_N and p.id in result.loads:
            need = need_for_load(rig, result, p.id, solve=solve)
            if need is not None:
                out[p.id] = need
    return out


def _limit_words(rig: Rig, need: LoadNeed) -> str:
    """What stops a bigger pull from freeing the load, in a rigger's words and the rig's units."""
    from solver.units import format_force

    f = lambda n: format_force(n, rig.display.force)  # noqa: E731
    name = rig.point(need.limit_subject).name if need.limit_subject and rig.has_point(need.limit_subject) else ""
    kind = need.limit
    if kind == "anchor-fails":
        working = rig.has_point(need.limit_subject) and rig.point(need.limit_subject).capacity_kind == "working"
        what = "rated working load" if working else "capacity (breaking strength)"
        return f"{name} would take {f(need.limit_force_N)}, over its {what} of {f(need.limit_strength_N)}"
    if kind == "rope-fails":
        rope = rig.rope(need.limit_subject).name if need.limit_subject in {r.id for r in rig.ropes} else ""
        return (f"{rope} would carry {f(need.limit_force_N)} ({need.limit_message}), over its strength of "
                f"{f(need.limit_strength_N)}")
    if kind == "grab-slips":
        return (f"{need.limit_message} at {name} would hold {f(need.limit_force_N)}, over the "
                f"{f(need.limit_strength_N)} at which it slides")
    if kind == "two-blocked":
        return f"the system two-blocks: {need.limit_message}"
    if kind == "stops-holding":
        return f"the rig stops holding: {need.limit_message}"
    if kind == "ma-collapses":
        got = f" beyond {f(need.limit_force_N)}" if need.limit_force_N is not None else ""
        return f"the mechanical advantage collapses: more pull delivers no more to the load{got}"
    return kind


def need_sentence(rig: Rig, need: LoadNeed) -> str:
    """The pull needed (or what stops it) in one sentence, in the rig's units."""
    from solver.units import format_force

    f = lambda n: format_force(n, rig.display.force)  # noqa: E731
    if need.pull_needed_N is not None:
        if need.pull_needed_N == 0:
            return "No pull is needed: the rig as rigged already gives it."
        people = need.pullers_needed or 0
        return (f"Solved on the rig: a total pull of {f(need.pull_needed_N)} gets it there, "
                f"{people} puller{'s' if people != 1 else ''} at {f(need.per_person_N)} each "
                f"(pull drawn now: {f(need.pull_now_N)}).")
    if need.limit == "no-pull":
        return "Nothing in the rig pulls (no haul team and no pulling force), so no pull can be worked out."
    at = f" at a total pull of {f(need.limit_pull_N)}" if need.limit_pull_N is not None else ""
    return f"No pull gets it there: {_limit_words(rig, need)}{at} comes first."


def check_short(rig: Rig, result: Result) -> list:
    """``load-stuck`` in every motion: a load getting less than its ``required_N``, with the pull it needs."""
    from solver.result import Warning_
    from solver.units import format_force

    f = lambda n: format_force(n, rig.display.force)  # noqa: E731
    out = []
    for load in rig.points_of_kind("load"):
        lr = result.loads.get(load.id)
        if not load.required_N or lr is None or lr.force_N >= load.required_N:
            continue
        need = result.needs.get(load.id)
        how = need_sentence(rig, need) if need is not None else "The pull it needs could not be worked out."
        out.append(Warning_(
            "load-stuck", load.id,
            f"{load.name} gets {f(lr.force_N)} of the {f(load.required_N)} needed to free it "
            f"({f(load.required_N - lr.force_N)} short). {how}", "warning"))
    return out


_LIMIT_SHORT = {"stops-holding": "the rig stops holding first", "two-blocked": "it two-blocks first",
                "ma-collapses": "the MA collapses first", "no-pull": "nothing pulls"}


def need_phrase(rig: Rig, need: LoadNeed) -> str:
    """The pull needed in a few words for tables and labels: "pull 0.88 kN = 4 pullers" or what stops it."""
    from solver.units import format_force

    if need.pull_needed_N is not None:
        n = need.pullers_needed or 0
        return f"pull {format_force(need.pull_needed_N, rig.display.force)} = {n} puller{'s' if n != 1 else ''}"
    if need.limit == "grab-slips":
        return "no pull reaches it: a rope grab slides first"
    if need.limit in ("anchor-fails", "rope-fails"):
        who = need.limit_subject
        if rig.has_point(who):
            who = rig.point(who).name
        elif who in {r.id for r in rig.ropes}:
            who = rig.rope(who).name
        return f"no pull reaches it: {who} fails first"
    return f"no pull reaches it: {_LIMIT_SHORT.get(need.limit, need.limit)}"
