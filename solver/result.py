"""The solver's answer: an immutable Result with the numbers a rigger asks for, by name.

Its JSON form (``to_json``) is the "Result" section of rig-format.md.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping

STATUSES: tuple[str, ...] = ("ok", "mechanism", "diverged", "invalid")


def record(cls: type, **values: Any) -> Any:
    """A frozen record of class ``cls`` from every one of its fields by name: equal to ``cls(**values)``.

    The dataclass ``__init__`` of a frozen class sets each field through ``object.__setattr__``;
    the solver builds a segment record per rope piece on every solve, so it fills the
    instance's attribute dict in one step instead.  Every field must be given (no defaults).
    """
    obj = object.__new__(cls)
    obj.__dict__.update(values)
    return obj


@dataclass(frozen=True)
class SegmentResult:
    """One straight piece of rope between two consecutive passes."""

    rope: str
    index: int  # piece index along the rope's path (0 = path[0] -> path[1])
    from_point: str
    to_point: str
    tension_N: float
    length_m: float
    strain: float
    utilization: float  # tension x min_safety_factor / MBS
    run: int = 0  # index of the run this piece belongs to

    def to_json(self) -> dict[str, Any]:
        return {
            "rope": self.rope,
            "index": self.index,
            "from": self.from_point,
            "to": self.to_point,
            "tension_N": self.tension_N,
            "length_m": self.length_m,
            "strain": self.strain,
            "utilization": self.utilization,
        }


@dataclass(frozen=True)
class AnchorResult:
    """Resultant of everything attached to one anchor (or other fixed point)."""

    force_N: float
    direction_deg: float  # direction the anchor is pulled toward, CCW from +x
    capacity_N: float | None
    utilization: float | None  # force / force allowed (solver.capacity), None if capacity unknown
    fx_N: float = 0.0
    fy_N: float = 0.0
    capacity_kind: str = "strength"  # what capacity_N is: "strength" (÷ safety factor) or "working"

    def to_json(self, view: str = "plan") -> dict[str, Any]:
        from solver.directions import bearing_or_none

        return {
            "force_N": self.force_N,
            "direction_deg": self.direction_deg,
            "bearing_deg": bearing_or_none(self.direction_deg, view, self.force_N),
            "capacity_N": self.capacity_N,
            "capacity_kind": self.capacity_kind,
            "utilization": self.utilization,
        }


@dataclass(frozen=True)
class Warning_:
    """A named finding: a code of our own, the id it is about, and a plain message."""

    code: str
    subject: str
    message: str
    severity: str = "warning"  # "info", "warning", "danger"

    def to_json(self) -> dict[str, Any]:
        return {"code": self.code, "subject": self.subject, "message": self.message}


@dataclass(frozen=True)
class HoldRange:
    """In ``hold``: the least and greatest value static friction allows."""

    low: float
    high: float


@dataclass(frozen=True)
class LoadNeed:
    """The pull a load with a ``required_N`` really needs, found by solving the rig (solver.pull_needed), N.

    ``pull_needed_N`` is None when no pull reaches ``required_N``; then ``limit`` names what comes
    first (``stops-holding``, ``two-blocked``, ``anchor-fails``, ``grab-slips``, ``rope-fails``, ``ma-collapses``,
    ``no-pull``), about ``limit_subject``, at a total pull of ``limit_pull_N``, with the force there
    and the strength it passed (``limit_force_N``, ``limit_strength_N``) or the solver's words.
    """

    load: str
    required_N: float
    delivered_N: float
    short_N: float  # 0 when enough
    pull_now_N: float  # total pull drawn today (every haul team and pulling force)
    pull_needed_N: float | None
    per_person_N: float
    pullers_needed: int | None
    limit: str = ""
    limit_subject: str = ""
    limit_pull_N: float | None = None
    limit_force_N: float | None = None
    limit_strength_N: float | None = None
    limit_message: str = ""

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {"required_N": self.required_N, "short_N": self.short_N,
                               "pull_needed_N": self.pull_needed_N, "pullers_needed": self.pullers_needed}
        if self.limit:
            out["pull_limit"] = {"kind": self.limit, "subject": self.limit_subject, "pull_N": self.limit_pull_N,
                                 "force_N": self.limit_force_N, "strength_N": self.limit_strength_N,
                                 "message": self.limit_message}
        return out


@dataclass(frozen=True)
class Result:
    """Equilibrium of one rig, or a named failure (status != "ok", message says why)."""

    status: str
    message: str = ""
    iterations: int = 0
    residual_N: float = float("nan")
    points: Mapping[str, tuple[float, float]] = field(default_factory=dict)
    segments: tuple[SegmentResult, ...] = ()
    anchors: Mapping[str, AnchorResult] = field(default_factory=dict)
    loads: Mapping[str, AnchorResult] = field(default_factory=dict)
    haul: Mapping[str, float] = field(default_factory=dict)
    ma_actual: float | None = None
    ma_ideal: float | None = None
    ma_nominal: float | None = None  # strand count of the topology (solver.nominal_ma), set by analyse
    deflection_deg: Mapping[str, float] = field(default_factory=dict)
    warnings: tuple[Warning_, ...] = ()
    subject: str = ""  # id of the point or rope a failure is about
    hold_haul_range: Mapping[str, HoldRange] = field(default_factory=dict)
    hold_anchor_range: Mapping[str, HoldRange] = field(default_factory=dict)
    revision: int = 0  # the document revision this result was solved for (app use)
    needs: Mapping[str, LoadNeed] = field(default_factory=dict)  # loads with a required_N (analysis only)
    water: Any = None  # solver.water_result.WaterResult when the rig lies in moving water, else None

    @property
    def ok(self) -> bool:
        return self.status == "ok"

    def segments_of(self, rope_id: str) -> list[SegmentResult]:
        return [s for s in self.segments if s.rope == rope_id]

    def to_json(self, view: str = "plan") -> dict[str, Any]:
        """The result JSON of rig-format.md, plus hold ranges when present (``view``: the rig's, for bearings)."""
        from solver.directions import bearing_or_none
        from solver.ma_input import no_ma_reason

        out: dict[str, Any] = {
            "status": self.status,
            "message": self.message,
            "iterations": self.iterations,
            "residual_N": self.residual_N,
            "points": {k: {"x": v[0], "y": v[1]} for k, v in self.points.items()},
            "segments": [s.to_json() for s in self.segments],
            "anchors": {k: a.to_json(view) for k, a in self.anchors.items()},
            "loads": {k: {"force_N": a.force_N, "direction_deg": a.direction_deg,
                          "bearing_deg": bearing_or_none(a.direction_deg, view, a.force_N), **self._need_json(k)}
                      for k, a in self.loads.items()},
            "haul": {k: {"force_N": f} for k, f in self.haul.items()},
            "mechanical_advantage": {"actual": self.ma_actual, "ideal": self.ma_ideal, "nominal": self.ma_nominal,
                                     "reason": no_ma_reason(self.ok, bool(self.loads), self.ma_actual)},
            "deflection_deg": dict(self.deflection_deg),
            "warnings": [w.to_json() for w in self.warnings],
        }
        if self.subject:
            out["subject"] = self.subject
        if self.water is not None:
            out["water"] = self.water.to_json()
        if self.hold_haul_range or self.hold_anchor_range:
            out["hold_range"] = {
                "haul": {k: {"low_N": r.low, "high_N": r.high} for k, r in self.hold_haul_range.items()},
                "anchors": {k: {"low_N": r.low, "high_N": r.high} for k, r in self.hold_anchor_range.items()},
            }
        return out

    def _need_json(self, load_id: str) -> dict[str, Any]:
        """The pull-needed fields of one load (all null when it has no required force or was not analysed)."""
        need = self.needs.get(load_id)
        if need is None:
            return {"required_N": None, "short_N": None, "pull_needed_N": None, "pullers_needed": None}
        return need.to_json()
