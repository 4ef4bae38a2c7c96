"""Ready-made systems: functions that add a whole rig (points, ropes, passes) to a drawing.

Each template is a pure function of a Rig and a few picked points; it returns a new
Rig whose additions are ordinary points and ropes (fresh ids from ``Rig.new_id``),
so the result can be edited, moved and solved like anything drawn by hand.  Sizes
come from the site: grabs and travelling pulleys sit at fractions of the picked
load-anchor distance, the haul team a few metres beyond the anchor.

Rope semantics follow rig-format.md exactly: passes are ``tied`` / ``pulley`` /
``sliding`` / ``hauled``; in ``haul`` every rope travels from its first pass toward
its last, so every rope here is written from the load side toward the pulled end.

Mechanical advantage (T-method, derived): with every pulley of efficiency eta and
the haul strand parallel to the load line, 2:1 gives 1 + eta, 3:1 (Z) 1 + eta + eta^2,
5:1 simple sum(eta^k, k=0..4), and a compound system the product of its stages.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, replace
from typing import Any, Callable, Mapping, Sequence

from solver.errors import RigModelError
from solver.model import Force, Pass, Point, Rig, Rigging, Rope

log = logging.getLogger(__name__)

#: Force one hauler sustains on a long haul, N (common practice, no source: 0.22 kN).
DEFAULT_PER_PERSON_N = 220.0
#: Metres from the anchor to where the haul team stands, when not picked.
DEFAULT_HAUL_DISTANCE_M = 5.0
#: A rescue load of one person, N (common practice, no source: about 1 kN).
DEFAULT_LINE_TENSION_N = 1000.0

Vec = tuple[float, float]


@dataclass(frozen=True)
class Template:
    """One ready-made system: what it is, its ideal MA, and which picked points it needs.

    ``needs`` lists the roles: ``load``, ``anchor`` (the main anchor), ``haul``
    (optional: where the haul team or puller stands, else a default place), and
    ``extra_anchors`` says how many further anchors must be picked (min, max).
    """

    name: str
    title: str
    description: str
    ma_ideal: float | None
    needs: tuple[str, ...]
    extra_anchors: tuple[int, int]
    build: Callable[..., Rig]


# --- small plane geometry --------------------------------------------------------------

def _sub(a: Vec, b: Vec) -> Vec:
    return (a[0] - b[0], a[1] - b[1])


def _add(a: Vec, b: Vec) -> Vec:
    return (a[0] + b[0], a[1] + b[1])


def _scale(a: Vec, s: float) -> Vec:
    return (a[0] * s, a[1] * s)


def _norm(a: Vec) -> float:
    return math.hypot(a[0], a[1])


def _lerp(a: Vec, b: Vec, t: float) -> Vec:
    return (a[0] + (b[0] - a[0]) * t, a[1] + (b[1] - a[1]) * t)


def _unit(a: Vec, what: str, subject: str) -> Vec:
    n = _norm(a)
    if n < 1e-6:
        raise RigModelError(f"{what} are at the same place; move one of them apart first", subject=subject)
    return (a[0] / n, a[1] / n)


def _left(u: Vec) -> Vec:
    """u turned 90 degrees counter-clockwise."""
    return (-u[1], u[0])


def _dir(deg: float) -> Vec:
    r = math.radians(deg)
    return (math.cos(r), math.sin(r))


def _angle_deg(u: Vec) -> float:
    return math.degrees(math.atan2(u[1], u[0])) % 360.0


# --- building blocks -----------------------------------------------------------------

class _Builder:
    """Accumulates new points and ropes on a Rig with fresh ids."""

    def __init__(self, rig: Rig) -> None:
        self.rig = rig

    def point(self, prefix: str, kind: str, xy: Vec, label: str, **fields: Any) -> str:
        pid = self.rig.new_id(prefix)
        self.rig = self.rig.with_point(Point(pid, kind, float(xy[0]), float(xy[1]), label=label, **fields))
        return pid

    def rope(self, prefix: str, material: str, path: Sequence[Pass], label: str,
             rigged: Rigging | None = None) -> str:
        rid = self.rig.new_id(prefix)
        self.rig = self.rig.with_rope(Rope(rid, material, tuple(path), rigged=rigged or Rigging(), label=label))
        return rid

    def force(self, at: str, magnitude_N: float, direction_deg: float, label: str) -> None:
        self.rig = replace(self.rig, forces=self.rig.forces + (Force(at, float(magnitude_N), float(direction_deg), label),))


def _tied(at: str) -> Pass:
    return Pass(at)


def _pulley(at: str, hardware: str) -> Pass:
    return Pass(at, "pulley", hardware)


def _sliding(at: str) -> Pass:
    return Pass(at, "sliding")


def _hauled(at: str) -> Pass:
    return Pass(at, "hauled")


#: Slack left in a tended main-line tail (the 4:1's), m: it carries nothing until a capture holds it.
TAIL_SLACK_M = 1.0
#: The rope grab a kit's progress capture holds with unless another is chosen (library id).
DEFAULT_CAPTURE_GRAB = "prusik-3-wrap"


def capture_grab_for(rig: Rig) -> str | None:
    """The rope grab a new progress capture holds with: the kit's, when the rig or the library has it."""
    if rig.embedded_hardware(DEFAULT_CAPTURE_GRAB) is not None:
        return DEFAULT_CAPTURE_GRAB
    try:
        from solver.materials import hardware_for

        return hardware_for(rig, DEFAULT_CAPTURE_GRAB).id
    except (ImportError, RigModelError, KeyError):
        return None


def _capture(at: str, hardware: str, grab: str | None) -> Pass:
    """A progress capture at the anchor pulley: runs as the pulley, holds with the grab when the team lets go."""
    return Pass(at, "capture", hardware, grab=grab)


@dataclass(frozen=True)
class _Site:
    """The picked points and the derived directions a template builds from."""

    rig: Rig
    load: Point | None
    anchor: Point
    extras: tuple[Point, ...]
    opts: Mapping[str, Any]

    @property
    def L(self) -> Vec:
        assert self.load is not None
        return self.load.xy

    @property
    def A(self) -> Vec:
        return self.anchor.xy

    @property
    def u(self) -> Vec:
        """Unit vector from the load toward the anchor."""
        return _unit(_sub(self.A, self.L), "The load and the anchor", self.anchor.id)

    @property
    def d(self) -> float:
        return _norm(_sub(self.A, self.L))


def _haul_point(b: _Builder, s: _Site, default_dir: Vec, team_default: int) -> str:
    """The haul team: an existing haul point, a picked place, a direction, or beyond the anchor."""
    o = s.opts
    if o.get("haul_id"):
        hp = _get_point(s.rig, o["haul_id"], "haul team")
        if hp.kind != "haul":
            raise RigModelError(f"'{hp.name}' is not a haul team point", subject=hp.id)
        return hp.id
    if o.get("haul_at") is not None:
        xy = (float(o["haul_at"][0]), float(o["haul_at"][1]))
    else:
        direction = _dir(o["haul_direction_deg"]) if o.get("haul_direction_deg") is not None else default_dir
        xy = _add(s.A, _scale(direction, float(o.get("haul_distance_m") or DEFAULT_HAUL_DISTANCE_M)))
    if _norm(_sub(xy, s.A)) < 1e-6:
        raise RigModelError("The haul team cannot stand on the anchor; pick a place away from it", subject=s.anchor.id)
    fields: dict[str, Any] = {}
    if o.get("haul_force_N") is not None:
        fields["force_N"] = float(o["haul_force_N"])
    else:
        fields["team"] = int(o.get("team") or team_default)
        fields["force_per_person_N"] = float(o.get("per_person_N") or DEFAULT_PER_PERSON_N)
    return b.point("H", "haul", xy, "haul team", **fields)


def t_method_ma(name: str, eta: float) -> float | None:
    """Actual MA of system ``name`` drawn in line, pulleys of efficiency ``eta`` (T-method, derived)."""
    z = 1 + eta + eta * eta
    return {
        "2:1": 1 + eta,
        "3:1": z,
        "4:1": (1 + eta) ** 2,
        "5:1": sum(eta**k for k in range(5)),
        "6:1": (1 + eta) * z,
        "9:1": z * z,
        "redirect": eta,
    }.get(name)


def _efficiency(s: _Site) -> float:
    """The chosen pulley's efficiency (embedded or library), 1.0 if it cannot be looked up."""
    spec = s.rig.embedded_hardware(s.opts["hardware"])
    if spec is None:
        try:
            from solver.materials import hardware_for
            spec = hardware_for(s.rig, s.opts["hardware"])
        except (ImportError, RigModelError):
            return 1.0
    return float(spec.efficiency) if spec.efficiency else 1.0


def _team_default(s: _Site, name: str) -> int:
    """Haulers for the load's required force at the system's T-method MA (the solve refines it), else 2."""
    req = s.load.required_N if s.load is not None else None
    ma = t_method_ma(name, _efficiency(s))
    if req and ma:
        from solver.hauling import haulers_needed
        return haulers_needed(float(req), ma, float(s.opts.get("per_person_N") or DEFAULT_PER_PERSON_N))
    return 2


def _grab(b: _Builder, s: _Site, label: str = "rope grab") -> str:
    """The rope grab on the main line, at ``grab_fraction`` of the way from load to anchor."""
    f = float(s.opts.get("grab_fraction", 0.5))
    if not 0.05 <= f <= 0.9:
        raise RigModelError(f"The rope grab must sit between 5 % and 90 % of the way to the anchor (got {f:.0%})",
                            subject=s.anchor.id)
    return b.point("G", "point", _lerp(s.L, s.A, f), label)


def _travelling(b: _Builder, s: _Site, near: Vec, label: str) -> str:
    """A second-stage travelling pulley halfway between ``near`` and the anchor."""
    return b.point("T", "point", _lerp(near, s.A, 0.5), label)


def _second_anchor(s: _Site) -> str:
    """The anchor of the second stage of a compound: the first extra anchor, else the main anchor."""
    return s.extras[0].id if s.extras else s.anchor.id


# --- the systems ---------------------------------------------------------------------------

def _build_2to1(b: _Builder, s: _Site) -> None:
    o = s.opts
    g = _grab(b, s)
    b.rope("main", o["material"], [_tied(s.load.id), _tied(g)], "main line to rope grab")
    h = _haul_point(b, s, s.u, _team_default(s, "2:1"))
    b.rope("ma", o["material"], [_tied(s.anchor.id), _pulley(g, o["hardware"]), _hauled(h)], "2:1 rope")


def _build_z(b: _Builder, s: _Site, strands: int) -> None:
    """Simple odd MA: the main line is gripped at G, then zig-zags between anchor and G."""
    o = s.opts
    g = _grab(b, s, "rope grab + travelling pulley")
    h = _haul_point(b, s, s.u, _team_default(s, f"{strands}:1"))
    path = [_tied(s.load.id), _tied(g)]
    for k in range((strands - 1) // 2):
        at_anchor = _capture(s.anchor.id, o["hardware"], o["grab"]) if k == 0 else _pulley(s.anchor.id, o["hardware"])
        path += [at_anchor, _pulley(g, o["hardware"])]
    path.append(_hauled(h))
    b.rope("main", o["material"], path, f"{strands}:1 main line")


def _build_3to1(b: _Builder, s: _Site) -> None:
    _build_z(b, s, 3)


def _build_5to1(b: _Builder, s: _Site) -> None:
    _build_z(b, s, 5)


def _build_4to1(b: _Builder, s: _Site) -> None:
    """Compound 2:1 on 2:1: a 2:1 on the rope grab, its tail on a second 2:1's travelling pulley."""
    o = s.opts
    g = _grab(b, s)
    t = _travelling(b, s, b.rig.point(g).xy, "second-stage pulley")
    b.rope("main", o["material"], [_tied(s.load.id), _tied(g)], "main line to rope grab")
    b.rope("ma", o["material"], [_tied(s.anchor.id), _pulley(g, o["hardware"]), _tied(t)], "first 2:1 rope")
    h = _haul_point(b, s, s.u, _team_default(s, "4:1"))
    b.rope("ma", o["material"], [_tied(_second_anchor(s)), _pulley(t, o["hardware"]), _hauled(h)], "second 2:1 rope")
    # the main line's tail runs on from the grab through the progress capture on the anchor to a tender
    # by the team, with slack: it carries nothing while hauling and holds the load at a reset
    b.rope("tail", o["material"], [_tied(g), _capture(s.anchor.id, o["hardware"], o["grab"]), _tied(h)],
           "main line tail through the capture (tended)", Rigging(slack_m=TAIL_SLACK_M))


def _z_to(b: _Builder, s: _Site, g: str, t: str) -> None:
    """A 3:1 (Z) main line from the load, gripped at g, ending tied at t (the next stage)."""
    o = s.opts
    hw = o["hardware"]
    b.rope("main", o["material"],
           [_tied(s.load.id), _tied(g), _capture(s.anchor.id, hw, o["grab"]), _pulley(g, hw), _tied(t)],
           "3:1 main line")


def _build_2on3(b: _Builder, s: _Site) -> None:
    """Compound 2:1 on 3:1: the 3:1's haul strand ends on a 2:1's travelling pulley."""
    o = s.opts
    g = _grab(b, s, "rope grab + travelling pulley")
    t = _travelling(b, s, b.rig.point(g).xy, "2:1 travelling pulley")
    _z_to(b, s, g, t)
    h = _haul_point(b, s, s.u, _team_default(s, "6:1"))
    b.rope("ma", o["material"], [_tied(_second_anchor(s)), _pulley(t, o["hardware"]), _hauled(h)], "2:1 rope")


def _build_3on3(b: _Builder, s: _Site) -> None:
    """Compound 3:1 on 3:1 (9:1): a second Z gripping the first Z's haul strand at t."""
    o = s.opts
    hw = o["hardware"]
    g = _grab(b, s, "rope grab + travelling pulley")
    t = _travelling(b, s, b.rig.point(g).xy, "second rope grab + travelling pulley")
    _z_to(b, s, g, t)
    h = _haul_point(b, s, s.u, _team_default(s, "9:1"))
    b.rope("ma", o["material"],
           [_tied(t), _pulley(_second_anchor(s), hw), _pulley(t, hw), _hauled(h)], "second 3:1 rope")


def _pull_direction(s: _Site, hand: Vec) -> tuple[float, Vec | None]:
    """Direction of a sideways pull: toward a picked place, a given angle, or square to the line."""
    o = s.opts
    if o.get("haul_at") is not None:
        at = (float(o["haul_at"][0]), float(o["haul_at"][1]))
        return _angle_deg(_unit(_sub(at, hand), "The hand and the puller", s.anchor.id)), at
    if o.get("haul_direction_deg") is not None:
        return float(o["haul_direction_deg"]) % 360.0, None
    return _angle_deg(_left(s.u)), None


def _pull_force(s: _Site) -> float:
    o = s.opts
    if o.get("pull_force_N") is not None:
        return float(o["pull_force_N"])
    return int(o.get("team") or 1) * float(o.get("per_person_N") or DEFAULT_PER_PERSON_N)


def _line_rigging(s: _Site) -> Rigging:
    p = s.opts.get("pretension_N")
    return Rigging(pretension_N=float(p)) if p else Rigging()


def _build_vector(b: _Builder, s: _Site) -> None:
    """Load-anchor line, hand-tight (or pretensioned), pulled sideways by a hand sliding on it."""
    o = s.opts
    hand = _lerp(s.L, s.A, float(o.get("hand_fraction", 0.5)))
    v = b.point("V", "point", hand, "hand (vector pull)")
    angle, person_at = _pull_direction(s, hand)
    b.force(v, _pull_force(s), angle, "sideways pull")
    if person_at is not None:
        b.point("P", "person", person_at, "puller")
    b.rope("line", o["material"], [_tied(s.load.id), _sliding(v), _tied(s.anchor.id)], "vector-pull line",
           _line_rigging(s))


def _build_vector_capture(b: _Builder, s: _Site) -> None:
    """Vector pull whose line is held near the anchor by a rope grab (progress capture).

    Modelled statically as the line tied at a capture point C close to the anchor, C
    hung from the anchor by its own short cord.  Capturing progress (taking in the
    slack the pull gained) is a new drawing: move C or shorten the line, then re-pull.
    The tail taken in beyond the grab carries no load and is not drawn.
    """
    o = s.opts
    hand = _lerp(s.L, s.A, float(o.get("hand_fraction", 0.5)))
    cap_gap = min(float(o.get("capture_gap_m", 0.5)), 0.2 * s.d)
    c = b.point("C", "point", _add(s.A, _scale(s.u, -cap_gap)), "progress capture (rope grab)")
    v = b.point("V", "point", hand, "hand (vector pull)")
    angle, person_at = _pull_direction(s, hand)
    b.force(v, _pull_force(s), angle, "sideways pull")
    if person_at is not None:
        b.point("P", "person", person_at, "puller")
    b.rope("line", o["material"], [_tied(s.load.id), _sliding(v), _tied(c)], "vector-pull line", _line_rigging(s))
    b.rope("cord", o.get("capture_material") or "cord-8", [_tied(c), _tied(s.anchor.id)], "capture cord to anchor")


def _build_capture_1to1(b: _Builder, s: _Site) -> None:
    """The load line over a progress capture on the picked anchor, straight on to the haul team (1:1)."""
    o = s.opts
    h = _haul_point(b, s, s.u, _team_default(s, "redirect"))
    b.rope("main", o["material"], [_tied(s.load.id), _capture(s.anchor.id, o["hardware"], o["grab"]), _hauled(h)],
           "1:1 main line through a progress capture")


def _build_redirect(b: _Builder, s: _Site) -> None:
    """The load line turned through a pulley on the picked anchor, then to the haul team."""
    o = s.opts
    h = _haul_point(b, s, _left(s.u), _team_default(s, "redirect"))
    b.rope("main", o["material"], [_tied(s.load.id), _pulley(s.anchor.id, o["hardware"]), _hauled(h)],
           "redirected main line")


def _master_place(s: _Site, anchors: Sequence[Point]) -> Vec:
    """Where the master point goes: picked, or toward the load from the anchors' centre."""
    o = s.opts
    if o.get("master_at") is not None:
        return (float(o["master_at"][0]), float(o["master_at"][1]))
    cx = sum(p.x for p in anchors) / len(anchors)
    cy = sum(p.y for p in anchors) / len(anchors)
    centre = (cx, cy)
    if s.load is None:
        raise RigModelError("Pick the load or where the master point goes", subject=s.anchor.id)
    to_load = _sub(s.L, centre)
    dist = _norm(to_load)
    u = _unit(to_load, "The load and the anchors' centre", s.load.id)
    spread = max(_norm(_sub(p.xy, q.xy)) for p in anchors for q in anchors)
    # about 90 degrees between the outer legs (0.5 x spread: ASME B30.9 advises against more
    # than 120), at least 0.5 m, never past halfway to the load
    reach = min(max(0.5 * spread, 0.5), 0.5 * dist)
    return _add(centre, _scale(u, reach))


def _build_anchor_system(b: _Builder, s: _Site, equalising: bool) -> None:
    o = s.opts
    anchors = (s.anchor,) + s.extras
    m = b.point("M", "point", _master_place(s, anchors), "master point")
    sling = o.get("sling_material") or "webbing-25"
    ids = [p.id for p in anchors]
    if equalising:
        # one sling: first anchor, through the master point, round each middle anchor, back ...
        path = [_tied(ids[0])]
        for mid in ids[1:-1]:
            path += [_sliding(m), _sliding(mid)]
        path += [_sliding(m), _tied(ids[-1])]
        b.rope("sling", sling, path, "self-equalising sling")
    else:
        for aid in ids:
            b.rope("sling", sling, [_tied(aid), _tied(m)], f"sling to {s.rig.point(aid).name}")
    if s.load is not None and not o.get("no_main_line"):
        p = o.get("pretension_N")
        if p is None:
            p = s.load.required_N or DEFAULT_LINE_TENSION_N
        b.rope("main", o["material"], [_tied(s.load.id), _tied(m)], "main line to master point",
               Rigging(pretension_N=float(p)))


def _build_load_sharing(b: _Builder, s: _Site) -> None:
    _build_anchor_system(b, s, equalising=False)


def _build_self_equalising(b: _Builder, s: _Site) -> None:
    _build_anchor_system(b, s, equalising=True)


def _build_tensioned_line(b: _Builder, s: _Site) -> None:
    o = s.opts
    p = o.get("pretension_N")
    p = DEFAULT_LINE_TENSION_N if p is None else float(p)
    b.rope("line", o["material"], [_tied(s.anchor.id), _tied(s.extras[0].id)], "tensioned line",
           Rigging(pretension_N=p))


def _eta_note() -> str:
    return "Actual MA is less: each pulley loses a little (T-method)."


_MA_NEEDS = ("load", "anchor", "haul?")

TEMPLATES: dict[str, Template] = {t.name: t for t in (
    Template("2:1", "2:1 on a rope grab",
             "A second rope, tied at the anchor, runs through a pulley on a rope grab on the main line "
             "and back to the haul team. Two strands pull the grab. " + _eta_note(),
             2.0, _MA_NEEDS, (0, 0), _build_2to1),
    Template("3:1", "3:1 (Z)",
             "The main line is gripped by a rope grab with a pulley, runs up to a pulley on the anchor, "
             "back down through the grab's pulley and on to the haul team. " + _eta_note(),
             3.0, _MA_NEEDS, (0, 0), _build_3to1),
    Template("4:1", "4:1 compound (2:1 on 2:1)",
             "A 2:1 on a rope grab whose haul end is tied to the travelling pulley of a second 2:1; "
             "a compound 4:1, not a simple one. An extra anchor, if picked, holds the second 2:1. "
             + _eta_note(),
             4.0, _MA_NEEDS, (0, 1), _build_4to1),
    Template("5:1", "5:1 simple",
             "The main line is gripped at a rope grab and zig-zags twice between pulleys on the anchor "
             "and on the grab before going to the haul team: five strands on the grab. " + _eta_note(),
             5.0, _MA_NEEDS, (0, 0), _build_5to1),
    Template("6:1", "6:1 compound (2:1 on 3:1)",
             "A 3:1 (Z) whose haul strand is tied to the travelling pulley of a 2:1. An extra anchor, if "
             "picked, holds the 2:1. " + _eta_note(),
             6.0, _MA_NEEDS, (0, 1), _build_2on3),
    Template("9:1", "9:1 compound (3:1 on 3:1)",
             "A 3:1 (Z) whose haul strand is gripped by a second 3:1. An extra anchor, if picked, holds "
             "the second 3:1. " + _eta_note(),
             9.0, _MA_NEEDS, (0, 1), _build_3on3),
    Template("vector-pull", "Vector pull (sliding hand)",
             "The line from the load to the anchor is set hand-tight (or to a pretension) and pulled "
             "sideways by a hand that slides on it. The gain depends on the angle the line makes: large "
             "when nearly straight, falling fast as the line bends.",
             None, ("load", "anchor", "haul?"), (0, 0), _build_vector),
    Template("vector-pull-capture", "Vector pull with progress capture",
             "As the vector pull, but the line is held near the anchor by a rope grab hung from the "
             "anchor on a short cord, so slack gained by each pull can be taken in and kept. Drawn as the "
             "line tied at the grab; taking in slack is a new drawing (shorten the line, pull again).",
             None, ("load", "anchor", "haul?"), (0, 0), _build_vector_capture),
    Template("1:1-capture", "1:1 with progress capture",
             "The main line runs from the load over a capture pulley on the anchor straight to the haul team. "
             "The team pulls hand over hand; when they let go the capture's grab holds what they gained. "
             "No mechanical advantage: the team pulls the whole load force.",
             1.0, _MA_NEEDS, (0, 0), _build_capture_1to1),
    Template("redirect", "Redirect",
             "The main line from the load turns through a pulley on the picked anchor toward the haul "
             "team. It changes the direction of pull, not the force; the anchor takes the resultant of "
             "both legs.",
             1.0, _MA_NEEDS, (0, 0), _build_redirect),
    Template("anchor-shared", "Load-sharing anchor (2 or 3 points)",
             "Separate slings from each picked anchor are tied at one master point; the main line from "
             "the load is tied to it, tensioned as drawn to a set force (it relaxes a little as the slings "
             "stretch). The anchors share the load by their sling angles "
             "and stretch; they do not re-balance if the pull swings.",
             None, ("anchor", "load?"), (1, 2), _build_load_sharing),
    Template("anchor-equalising", "Self-equalising anchor (2 or 3 points)",
             "One sling runs from the first anchor through the master point (and round each middle "
             "anchor and back through the master point) to the last anchor; the master point slides on "
             "it so every strand carries the same tension (a middle anchor holds two strands). The main "
             "line is tensioned as drawn, as for the load-sharing anchor. If one anchor fails the master point drops "
             "along the sling (extension).",
             None, ("anchor", "load?"), (1, 2), _build_self_equalising),
    Template("tensioned-line", "Tensioned line between two anchors",
             "A rope tied between the two picked anchors and tensioned to a set force (pretension), e.g. "
             "a tag line or a line to hang a redirect on.",
             None, ("anchor",), (1, 1), _build_tensioned_line),
)}


def _get_point(rig: Rig, pid: str, role: str) -> Point:
    try:
        return rig.point(pid)
    except KeyError:
        raise RigModelError(f"The {role} '{pid}' is not in the drawing", subject=pid) from None


def _check_spec(rig: Rig, kind: str, spec_id: str) -> None:
    """Fail early, in words, when a material or hardware id is neither embedded nor in the library."""
    try:
        from solver import materials
    except ImportError:  # library not available: the solver will report it
        return
    lookup = materials.material_for if kind == "material" else materials.hardware_for
    lookup(rig, spec_id)


def place_template(
    rig: Rig,
    name: str,
    *,
    load_id: str | None = None,
    anchor_id: str,
    haul_at: tuple[float, float] | None = None,
    haul_direction_deg: float | None = None,
    haul_id: str | None = None,
    extra_anchor_ids: Sequence[str] = (),
    material: str = "kern-11",
    hardware: str = "pulley-large",
    grab: str | None = DEFAULT_CAPTURE_GRAB,
    **options: Any,
) -> Rig:
    """A new Rig with template ``name`` attached to the picked points, sized to the site (metres).

    The 3:1, 5:1 and the compounds' 3:1 stages, and the 1:1 with capture, put a progress capture at
    the anchor pulley, holding with rope grab ``grab`` (None: a capture pulley without a rated grab).

    Options by template: ``grab_fraction`` (0.5), ``haul_distance_m`` (5), ``haul_force_N`` or
    ``team`` / ``per_person_N`` (220 N), ``pull_force_N``, ``hand_fraction`` (0.5),
    ``capture_gap_m`` (0.5), ``capture_material`` ("cord-8"), ``pretension_N``,
    ``sling_material`` ("webbing-25"), ``master_at``, ``no_main_line``.
    """
    try:
        tpl = TEMPLATES[name]
    except KeyError:
        raise RigModelError(f"There is no ready-made system called '{name}'; choose one of: "
                            + ", ".join(TEMPLATES), subject=name) from None
    anchor = _get_point(rig, anchor_id, "anchor")
    if not anchor.is_fixed:
        raise RigModelError(f"'{anchor.name}' is not fixed, so it cannot serve as an anchor", subject=anchor.id)
    extras = tuple(_get_point(rig, a, "extra anchor") for a in extra_anchor_ids)
    lo, hi = tpl.extra_anchors
    if not lo <= len(extras) <= hi:
        want = f"{lo}" if lo == hi else f"{lo} to {hi}"
        raise RigModelError(f"'{tpl.title}' needs {want} more anchor(s) besides '{anchor.name}'; "
                            f"{len(extras)} picked", subject=anchor.id)
    for p in extras:
        if not p.is_fixed:
            raise RigModelError(f"'{p.name}' is not fixed, so it cannot serve as an anchor", subject=p.id)
        if p.id == anchor.id or sum(q.id == p.id for q in extras) > 1:
            raise RigModelError(f"Anchor '{p.name}' is picked twice", subject=p.id)
    load = None
    if load_id is not None:
        load = _get_point(rig, load_id, "load")
    elif "load" in tpl.needs:
        raise RigModelError(f"'{tpl.title}' needs a load: pick the load first", subject=anchor.id)
    if load is not None and load.id in {anchor.id, *(p.id for p in extras)}:
        raise RigModelError("The load and an anchor are the same point", subject=load.id)
    _check_spec(rig, "material", material)
    if (tpl.ma_ideal is not None and tpl.ma_ideal > 1) or name in ("redirect", "1:1-capture"):
        _check_spec(rig, "hardware", hardware)
    if grab is not None:
        _check_spec(rig, "hardware", grab)
    opts = dict(options, haul_at=haul_at, haul_direction_deg=haul_direction_deg, haul_id=haul_id,
                material=material, hardware=hardware, grab=grab)
    site = _Site(rig, load, anchor, extras, opts)
    if load is not None:
        _ = site.u  # coincident load and anchor: say so before building
    b = _Builder(rig)
    tpl.build(b, site)
    log.debug("placed template %s: %d new points, %d new ropes", name,
              len(b.rig.points) - len(rig.points), len(b.rig.ropes) - len(rig.ropes))
    return b.rig


def new_ids(before: Rig, after: Rig) -> tuple[set[str], set[str]]:
    """The point ids and rope ids a template added (for selecting them after placing)."""
    return ({p.id for p in after.points} - {p.id for p in before.points},
            {r.id for r in after.ropes} - {r.id for r in before.ropes})
