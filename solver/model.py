"""The rig model: immutable dataclasses for one sketch, SI units inside.

Mirrors ``shared/design/rig-format.md`` (version 1).  A ``Rig`` is never edited
in place: callers build a new one with :func:`dataclasses.replace` or the
helpers here (``with_point``, ``without_point`` ...), which keeps undo simple
(every edit swaps one Rig for another).
"""

from __future__ import annotations

import threading
from dataclasses import dataclass, field, replace
from typing import Any, Iterator, Literal, Mapping

PointKind = Literal["anchor", "load", "haul", "point", "person"]
POINT_KINDS: tuple[str, ...] = ("anchor", "load", "haul", "point", "person")
ANCHOR_TYPES: tuple[str, ...] = ("tree", "boulder", "vehicle", "picket", "bolt", "other")
PASS_HOWS: tuple[str, ...] = ("tied", "pulley", "sliding", "edge", "hauled", "capture")
MIDDLE_HOWS: tuple[str, ...] = ("tied", "pulley", "sliding", "edge", "capture")
#: Passes over a sheave: a pulley, and a progress capture (a pulley that holds the rope when it runs back).
SHEAVE_HOWS: frozenset[str] = frozenset({"pulley", "capture"})
MATERIAL_KINDS: tuple[str, ...] = ("rope", "sling", "cord")
HARDWARE_KINDS: tuple[str, ...] = ("pulley", "carabiner", "edge", "ring", "grab")
FEATURE_KINDS: tuple[str, ...] = ("water", "boulder", "bank", "hazard", "note")
MOTIONS: tuple[str, ...] = ("haul", "hold", "lower")
VIEWS: tuple[str, ...] = ("plan", "elevation")
LENGTH_UNITS: tuple[str, ...] = ("m", "ft")
FORCE_UNITS: tuple[str, ...] = ("N", "kN", "lbf")
#: What a person on the plan is there to do (trade roles; the words the briefing sheet prints).
PERSON_ROLES: tuple[str, ...] = ("haul team lead", "safety officer", "upstream spotter", "downstream safety",
                                 "edge attendant")

#: Kinds that are fixed unless the file says ``"fixed": false``.
FIXED_BY_DEFAULT: frozenset[str] = frozenset({"anchor", "load", "haul"})

#: Where a Rig keeps its id index (``Rig._index``), and the lock it is built under.
_INDEX_KEY = "_id_index"
_INDEX_LOCK = threading.Lock()

#: Standard gravity, m/s^2 (NIST SP 811 / CGPM 1901).
STANDARD_GRAVITY = 9.80665


@dataclass(frozen=True)
class Point:
    """A named place on the site: anchor, load, haul team, free junction or person."""

    id: str
    kind: str
    x: float
    y: float
    label: str = ""
    fixed: bool | None = None  # None: the kind's default
    capacity_N: float | None = None  # anchor: rated capacity (its meaning: capacity_kind)
    anchor_type: str | None = None  # anchor: tree, boulder, ...
    required_N: float | None = None  # load: force needed to free it
    mass_kg: float | None = None  # free load in elevation view
    force_N: float | None = None  # haul: total force
    team: int | None = None  # haul: number of haulers
    force_per_person_N: float | None = None  # haul: force each hauler gives
    capacity_kind: str = "strength"  # anchor: "strength" (÷ safety factor) or "working" (rated working load)
    role: str | None = None  # person: one of PERSON_ROLES (what they are there to do)
    wetted_area_m2: float | None = None  # load or free point in water: area facing the flow, m^2
    drag_shape: str | None = None  # its shape in the drag table (solver.loads.DRAG_SHAPES)
    extra: Mapping[str, Any] = field(default_factory=dict, compare=True)

    @property
    def is_fixed(self) -> bool:
        """True when the solver holds this point still."""
        if self.fixed is not None:
            return bool(self.fixed)
        return self.kind in FIXED_BY_DEFAULT

    @property
    def is_structural(self) -> bool:
        """False for person markers, which only the safety checks use."""
        return self.kind != "person"

    @property
    def haul_force(self) -> float | None:
        """Total haul force in N: ``force_N``, else team x per-person force, else None."""
        if self.force_N is not None:
            return float(self.force_N)
        if self.team is not None and self.force_per_person_N is not None:
            return float(self.team) * float(self.force_per_person_N)
        return None

    @property
    def xy(self) -> tuple[float, float]:
        return (self.x, self.y)

    @property
    def name(self) -> str:
        """What a person calls this point: its label, else its id."""
        return self.label or self.id


@dataclass(frozen=True)
class Pass:
    """One place a rope goes through: tied, over a pulley, sliding, over an edge, a progress capture or hauled.

    A ``capture`` runs like its pulley (``hardware``) while the rope is hauled in and holds like
    its rope grab (``grab``, optional) when it runs back.
    """

    at: str
    how: str = "tied"
    hardware: str | None = None
    extra: Mapping[str, Any] = field(default_factory=dict)
    termination: str | None = None  # tied pass: how the rope ends or is knotted there (solver.weak_links)
    grab: str | None = None  # capture: the rope grab that holds the rope (hardware id)

    def as_end(self, how: str = "tied") -> "Pass":
        """This pass made a rope end (``tied`` or ``hauled``): only a capture holds with a grab, so it goes."""
        return self if self.how == how and self.grab is None else replace(self, how=how, grab=None)


@dataclass(frozen=True)
class Rigging:
    """How a run's unstretched length is set from the sketch: slack or pretension."""

    slack_m: float = 0.0
    pretension_N: float | None = None
    extra: Mapping[str, Any] = field(default_factory=dict)  # unknown keys, kept

    @property
    def is_default(self) -> bool:
        return self.slack_m == 0.0 and self.pretension_N is None


@dataclass(frozen=True)
class Run:
    """A stretch of one rope between consecutive tied passes (or a tied pass and the hauled end).

    ``first`` and ``last`` index into the rope's path; the run's pieces are
    ``path[first]->path[first+1]``, ..., ``path[last-1]->path[last]``.
    """

    rope_id: str
    index: int
    first: int
    last: int
    hauled: bool

    @property
    def piece_indices(self) -> range:
        return range(self.first, self.last)


@dataclass(frozen=True)
class Rope:
    """A rope (or sling, or cord) of one material following a path of passes."""

    id: str
    material: str
    path: tuple[Pass, ...]
    rigged: Rigging = field(default_factory=Rigging)
    label: str = ""
    length_m: float | None = None  # the rope actually carried, m (the budget warns when the drawn rope will not reach)
    extra: Mapping[str, Any] = field(default_factory=dict)

    @property
    def is_hauled(self) -> bool:
        return bool(self.path) and self.path[-1].how == "hauled"

    def runs(self) -> list[Run]:
        """Split the path at tied passes into runs (rig-format.md, "Ropes")."""
        runs: list[Run] = []
        start = 0
        n = len(self.path)
        for i in range(1, n):
            p = self.path[i]
            if i == n - 1 or p.how == "tied":
                runs.append(Run(self.id, len(runs), start, i, hauled=(i == n - 1 and p.how == "hauled")))
                start = i
        return runs

    @property
    def name(self) -> str:
        return self.label or self.id


def is_tended_tail(rope: Rope, run: Run, points: Mapping[str, "Point"]) -> bool:
    """True for a main line's tail run through a progress capture to a tender at the haul team (tied
    there, not hauled): it is kept hand-tight and carries nothing while hauling; the capture holds it
    when the team lets go."""
    path = rope.path[run.first:run.last + 1]
    end = points.get(path[-1].at)
    return (not run.hauled and end is not None and end.kind == "haul"
            and any(ps.how == "capture" for ps in path[1:-1]))


@dataclass(frozen=True)
class Material:
    """A rope, sling or cord spec: strength (MBS) and a monotone tension-strain curve.

    ``stretch`` holds ``(tension_N, strain)`` points increasing in both columns,
    starting after (0, 0); beyond the last point the curve keeps its last slope.
    """

    id: str
    kind: str
    mbs_N: float
    stretch: tuple[tuple[float, float], ...]
    diameter_mm: float | None = None
    label: str = ""
    source: str = ""
    diameter_m: float | None = None  # the same diameter in metres (rig-format.md additions); either may be given
    extra: Mapping[str, Any] = field(default_factory=dict)

    @property
    def name(self) -> str:
        return self.label or self.id

    @property
    def diameter(self) -> float | None:
        """The rope's diameter in metres: ``diameter_m``, else ``diameter_mm`` / 1000 (one meaning, two spellings)."""
        if self.diameter_m is not None:
            return float(self.diameter_m)
        if self.diameter_mm is not None:
            return float(self.diameter_mm) / 1000.0
        return None


@dataclass(frozen=True)
class Hardware:
    """A pulley, carabiner, edge, ring or rope grab: efficiency, friction coefficient or slip force, and strength."""

    id: str
    kind: str
    efficiency: float | None = None
    mbs_N: float | None = None
    friction_coefficient: float | None = None
    label: str = ""
    source: str = ""
    size_m: float | None = None  # closest two passes may come (two-blocking), optional
    extra: Mapping[str, Any] = field(default_factory=dict)
    slip_N: float | None = None  # grab: held force above which it slides along the rope (a designed slip point)

    @property
    def name(self) -> str:
        return self.label or self.id


@dataclass(frozen=True)
class Force:
    """An external force on a free point (a rescuer's sideways pull, a weight in plan)."""

    at: str
    magnitude_N: float
    direction_deg: float
    label: str = ""
    extra: Mapping[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class SiteImage:
    """A background plan or photo placed to scale in site coordinates."""

    file: str | None = None
    data_base64: str | None = None
    origin: tuple[float, float] = (0.0, 0.0)
    metres_per_pixel: float = 0.01
    rotation_deg: float = 0.0
    opacity: float = 1.0
    extra: Mapping[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class Flow:
    """Moving water in a water feature: speed (m/s) and the bearing it flows toward (degrees clockwise from north)."""

    speed_m_s: float
    bearing_deg: float

    @property
    def velocity(self) -> tuple[float, float]:
        """The flow velocity in site coordinates (+x east, +y north), m/s."""
        import math

        b = math.radians(self.bearing_deg)
        return (self.speed_m_s * math.sin(b), self.speed_m_s * math.cos(b))


@dataclass(frozen=True)
class Feature:
    """A drawn site feature: water, boulder, bank, hazard (polygon or line) or a note."""

    id: str
    kind: str
    polygon: tuple[tuple[float, float], ...] | None = None
    line: tuple[tuple[float, float], ...] | None = None
    label: str = ""
    flow: Flow | None = None  # water only: the current; a later feature drawn over it wins
    extra: Mapping[str, Any] = field(default_factory=dict)

    @property
    def coords(self) -> tuple[tuple[float, float], ...]:
        return self.polygon or self.line or ()


@dataclass(frozen=True)
class Site:
    image: SiteImage | None = None
    features: tuple[Feature, ...] = ()
    extra: Mapping[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class Settings:
    motion: str = "haul"
    min_safety_factor: float = 10.0
    tail_m: float = 1.0  # rope left beyond each end of a rope (knot tails, the haul team's grip), m
    extra: Mapping[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class Display:
    length: str = "m"
    force: str = "kN"
    extra: Mapping[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class Rig:
    """One whole sketch: site, points, ropes, embedded specs, forces and settings."""

    points: tuple[Point, ...] = ()
    ropes: tuple[Rope, ...] = ()
    forces: tuple[Force, ...] = ()
    materials: tuple[Material, ...] = ()
    hardware: tuple[Hardware, ...] = ()
    title: str = ""
    notes: str = ""
    display: Display = field(default_factory=Display)
    view: str = "plan"
    settings: Settings = field(default_factory=Settings)
    site: Site = field(default_factory=Site)
    print_frame: tuple[float, float, float, float] | None = None  # (x0, y0, x1, y1) site metres printed; None: the rig
    extra: Mapping[str, Any] = field(default_factory=dict)  # unknown top-level keys, kept

    # --- look-ups -----------------------------------------------------------------
    @property
    def _index(self) -> "_Index":
        """Points and ropes by id, built once per Rig on first look-up (the Rig is immutable).

        Kept in the instance ``__dict__`` under ``_INDEX_KEY`` (a frozen dataclass allows that), built
        under a lock so that threads looking up at once build it once and share it; a Rig made by
        ``replace`` starts without one.  Not a field: equality, hashing, ``repr`` and saving never see
        it.  A list with an id given twice keeps its first (what a linear search finds); rig files
        refuse duplicates anyway.
        """
        index = self.__dict__.get(_INDEX_KEY)
        if index is None:
            with _INDEX_LOCK:
                index = self.__dict__.get(_INDEX_KEY)
                if index is None:
                    index = _Index.of(self)
                    self.__dict__[_INDEX_KEY] = index
        return index

    def point(self, point_id: str) -> Point:
        """The point with this id (KeyError if there is none), by the Rig's id index: O(1)."""
        return self._index.points[point_id]

    def has_point(self, point_id: str) -> bool:
        return point_id in self._index.points

    def rope(self, rope_id: str) -> Rope:
        """The rope with this id (KeyError if there is none), by the Rig's id index: O(1)."""
        return self._index.ropes[rope_id]

    def has_rope(self, rope_id: str) -> bool:
        return rope_id in self._index.ropes

    def embedded_material(self, material_id: str) -> Material | None:
        return next((m for m in self.materials if m.id == material_id), None)

    def embedded_hardware(self, hardware_id: str) -> Hardware | None:
        return next((h for h in self.hardware if h.id == hardware_id), None)

    def points_of_kind(self, kind: str) -> Iterator[Point]:
        return (p for p in self.points if p.kind == kind)

    def new_id(self, prefix: str) -> str:
        """A fresh id ``prefix1``, ``prefix2``, ... not used by any point, rope or feature."""
        used = {p.id for p in self.points} | {r.id for r in self.ropes} | {f.id for f in self.site.features}
        n = 1
        while f"{prefix}{n}" in used:
            n += 1
        return f"{prefix}{n}"

    # --- edits (each returns a new Rig) ---------------------------------------------
    def with_point(self, point: Point) -> "Rig":
        """Add ``point``, or replace the point with the same id."""
        pts = list(self.points)
        for i, p in enumerate(pts):
            if p.id == point.id:
                pts[i] = point
                return replace(self, points=tuple(pts))
        return replace(self, points=tuple(pts) + (point,))

    def with_rope(self, rope: Rope) -> "Rig":
        """Add ``rope``, or replace the rope with the same id."""
        ropes = list(self.ropes)
        for i, r in enumerate(ropes):
            if r.id == rope.id:
                ropes[i] = rope
                return replace(self, ropes=tuple(ropes))
        return replace(self, ropes=tuple(ropes) + (rope,))

    def without_point(self, point_id: str) -> "Rig":
        """Remove a point and what depends on it: its passes, its forces, ropes left with < 2 passes.

        Passes that become neighbours at one point (A, B, A without B) merge into one: the rope's
        end if one of them is its end, else the first; a rope never passes a point twice in a row.
        """
        ropes = []
        for r in self.ropes:
            path = _merged_neighbours(tuple(ps for ps in r.path if ps.at != point_id))
            if len(path) >= 2:
                if path != r.path:
                    # the new ends must be tied (or hauled at the end) to stay valid
                    first = path[0].as_end("tied")
                    last = path[-1]
                    last = last.as_end(last.how if last.how in ("tied", "hauled") else "tied")
                    path = (first,) + path[1:-1] + (last,)
                ropes.append(replace(r, path=path))
        return replace(
            self,
            points=tuple(p for p in self.points if p.id != point_id),
            ropes=tuple(ropes),
            forces=tuple(f for f in self.forces if f.at != point_id),
        )

    def without_rope(self, rope_id: str) -> "Rig":
        return replace(self, ropes=tuple(r for r in self.ropes if r.id != rope_id))

    def moved(self, point_id: str, x: float, y: float) -> "Rig":
        """The same rig with one point moved to (x, y) metres."""
        return self.with_point(replace(self.point(point_id), x=float(x), y=float(y)))


def _merged_neighbours(path: tuple[Pass, ...]) -> tuple[Pass, ...]:
    """``path`` with each run of consecutive passes at one point merged into one pass.

    The merged pass is the run's last when the run ends the rope (its end, tied or hauled,
    stays), else the run's first.
    """
    out: list[Pass] = []
    for j, ps in enumerate(path):
        if out and out[-1].at == ps.at:
            if j == len(path) - 1:
                out[-1] = ps
            continue
        out.append(ps)
    return tuple(out)


@dataclass(frozen=True)
class _Index:
    """A Rig's points and ropes by id (first of any repeated id), for :meth:`Rig.point` / :meth:`Rig.rope`."""

    points: Mapping[str, Point]
    ropes: Mapping[str, Rope]

    @staticmethod
    def of(rig: Rig) -> "_Index":
        points: dict[str, Point] = {}
        for p in rig.points:
            points.setdefault(p.id, p)
        ropes: dict[str, Rope] = {}
        for r in rig.ropes:
            ropes.setdefault(r.id, r)
        return _Index(points, ropes)
