"""Golden results: every field of the Results of a fixed set of solves, recorded, replayed to round-off.

The rigs (as rig-file dictionaries, rig-format.md) and their full Results were recorded from the
solver as it stood before the solver was split into modules (``tests/solver/data/golden_results.json``).
A change meant to leave the numbers alone (a move, a speed-up) must reproduce them: the samples in
haul, hold and lower, test rigs that exercise friction, edges, jams against a neighbour, a runaway,
a mechanism and a bad rig, and drag sequences of warm-started solves (one-part and many-part rigs,
so both the one-part iteration and the many-part iteration with its hand-over are replayed).

Tolerance: relative 1e-12, with an absolute floor of 1e-12 times the largest magnitude of the same
quantity in that Result (so a force near zero is compared on the scale of the rig's forces).  The
solver stops at an imbalance of 1e-10 of the force scale (``TARGET_REL``), so any change in the
iteration itself (another step, another iteration, another strategy) moves the answer by far more
than 1e-12; floating-point sums done in another order move it by a few units in the last place
times the conditioning, which this allows.  Counts, statuses, ids and messages must match exactly.

Re-record only on purpose, when the numbers are meant to change:
``python -m tests.solver.test_golden_results --record`` (say why in the commit).
"""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path
from typing import Any, Iterator

import pytest

from solver import memo
from solver.equilibrium import solve
from solver.rigfile import embed_specs, load_rig, rig_from_dict, rig_to_dict
from tests import rigs
from tests.bench.fifty_ropes import fifty_rope_rig

DATA = Path(__file__).resolve().parent / "data" / "golden_results.json"
SAMPLES = Path(__file__).resolve().parents[2] / "samples"
REL = 1e-12

# --- the solves ---------------------------------------------------------------------------------


def _test_rigs() -> dict[str, Any]:
    """Small rigs of our own (demo numbers) for the hard paths of the solver."""
    pul = rigs.pulley("pul", 0.6)
    out = {}
    # a ring sliding down its rope into a knot (two-blocked, frictionless; tests/solver/test_solver_properties.py)
    out["ring-into-knot"] = rigs.make_rig(
        [rigs.anchor("A0", 5, 15), rigs.anchor("A1", 2, 14), rigs.anchor("A2", 0, 16), rigs.free("P0", 0, 4),
         rigs.free("P1", 0, 2), rigs.free("P2", 7, 1), rigs.free("P3", 6, 0)],
        [rigs.rope("r0", ["A0", "P0"]), rigs.rope("r1", ["A0", "P1"]), rigs.rope("r2", ["A2", "P2"]),
         rigs.rope("r3", ["A2", "P3"]), rigs.rope("r4", ["A0", ("P2", "sliding"), "P3", "A1"], pretension_N=20.0)],
        [rigs.force(p, 100.0, 270.0) for p in ("P0", "P1", "P2", "P3")], motion="hold", ea=2e4)
    # a point hanging on a 60 % pulley (friction stage)
    out["pulley-60pct"] = rigs.make_rig(
        [rigs.anchor("A0", 5, 14), rigs.anchor("A1", 0, 14), rigs.free("P0", 0, 0)],
        [rigs.rope("r0", ["A0", "P0"]), rigs.rope("r1", ["A0", ("P0", "pulley", "pul"), "A1"], pretension_N=20.0)],
        [rigs.force("P0", 100.0, 270.0)], hardware=[pul], motion="haul", ea=1e6)
    # a straight-through pulley friction pushes up its rope into an anchor (jammed retry at ratio 1)
    out["pulley-pushed-into-anchor"] = rigs.make_rig(
        [rigs.anchor("A0", 3, 14), rigs.anchor("A1", 0, 14), rigs.anchor("A2", 0, 16), rigs.anchor("A3", 0, 18),
         rigs.free("P0", 0, 4), rigs.free("P1", 0, 1)],
        [rigs.rope("r0", ["A1", "P0"]), rigs.rope("r1", ["A0", "P1"]),
         rigs.rope("r2", ["A0", "P1", ("P0", "pulley", "pul"), "A1"], pretension_N=20.0)],
        [rigs.force("P0", 100.0, 270.0), rigs.force("P1", 151.0, 270.0)], hardware=[pul], ea=1e6)
    # a sliding pass jammed into a knot (penalty continuation of the contact)
    jam_pts = [rigs.anchor("A0", 2.5625, 14.0), rigs.anchor("A1", 0.0, 14.0), rigs.anchor("A2", 5.1875, 14.921875),
               rigs.free("P0", 0.0, 7.0), rigs.free("P1", 19.61328125, 5.898090272322268),
               rigs.free("P2", 1.3125, 3.0), rigs.free("P3", 0.0, 0.0)]
    jam_ropes = [rigs.rope("r0", ["A0", "P0"]), rigs.rope("r1", ["A0", "P1"]), rigs.rope("r2", ["P1", "P2"]),
                 rigs.rope("r3", ["P0", "P3"]), rigs.rope("r4", ["A0", "P3"]),
                 rigs.rope("r5", ["A2", "P3", ("P2", "sliding"), "A1"], pretension_N=365.0)]
    jam_forces = [rigs.force(p, 100.0, 270.0) for p in ("P0", "P1", "P2")] + [rigs.force("P3", 100.0, 257.75)]
    out["pass-jammed-into-knot"] = rigs.make_rig(jam_pts, jam_ropes, jam_forces, motion="haul", ea=2e4)
    # a pulley friction draws up its rope to the anchor knot (slid to its stop)
    out["pulley-drawn-to-anchor"] = rigs.make_rig(
        [rigs.anchor("A0", 6.5, 17.0), rigs.anchor("A2", 0.0, 14.0), rigs.free("P1", 0.0, 2.0), rigs.free("P2", 0.0, 0.0)],
        [rigs.rope("r1", ["A0", "P1"]), rigs.rope("r2", ["A0", "P2"]),
         rigs.rope("r3", ["A0", ("P1", "pulley", "pul"), "P2", "A2"], pretension_N=20.0)],
        [rigs.force("P1", 100.0, 270.0), rigs.force("P2", 879.0, 249.0)], hardware=[pul], motion="lower", ea=2e4)
    # a rope over an edge (capstan friction, wraps re-evaluated until they settle), stiff rope (soft start)
    out["edge-capstan"] = rigs.make_rig(
        [rigs.anchor("A", 0, 10), rigs.free("E", 6, 8), rigs.free("L", 9, 0)],
        [rigs.rope("e", ["A", ("E", "edge", "edge"), "L"]), rigs.rope("h", ["A", "E"])],
        [rigs.force("L", 2000.0, 270.0)], hardware=[rigs.edge("edge", 0.3)], motion="lower", ea=rigs.STIFF_EA)
    # a 2:1 hauled with less than half the load: runs away
    out["runaway"] = rigs.make_rig(
        [rigs.anchor("A", 0, 10), rigs.free("P", 0, 0), rigs.haul("H", 1, 10, 100.0)],
        [rigs.rope("m", ["A", ("P", "pulley", "pul1"), ("H", "hauled")])],
        [rigs.force("P", 1000.0, 270.0)], hardware=[rigs.pulley("pul1", 1.0)])
    # a point on a slack rope with nothing pulling it: a mechanism
    out["mechanism"] = rigs.make_rig([rigs.anchor("A", 0, 0), rigs.free("P", 3, 0)],
                                     [rigs.rope("r", ["A", "P"], slack_m=0.5)])
    # a bad rig: two points at one spot
    out["invalid"] = rigs.make_rig([rigs.anchor("A", 0, 0), rigs.free("P", 0, 0)], [rigs.rope("r", ["A", "P"])],
                                   [rigs.force("P", 100.0, 270.0)])
    return out


def _drags() -> dict[str, tuple[Any, str, list[tuple[float, float]], str]]:
    """Drag sequences: (rig, dragged point, its positions, motion); each step warm-started from the last."""
    out = {}
    raft = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
    grab = next(p for p in raft.points if not p.is_fixed and p.kind == "point")
    out["raft-drag"] = (raft, grab.id, [(grab.x + 0.08 * i, grab.y - 0.05 * i) for i in range(1, 7)], "haul")
    fifty = fifty_rope_rig()
    h = fifty.point("H4")
    out["fifty-drag"] = (fifty, "H4", [(h.x + 1.5 * math.sin(0.3 * i), h.y + 1.5 * math.cos(0.3 * i))
                                       for i in range(6)], "haul")
    return out


def _solves() -> Iterator[tuple[str, Any, str | None]]:
    """(case name, its rig, the motion it is solved for: None for the rig's own) of the single solves."""
    for path in sorted(SAMPLES.glob("*.rig.json")):
        rig = load_rig(path)
        for motion in ("haul", "hold", "lower"):
            yield f"{path.name[:-9]}-{motion}", rig, motion
    for name, rig in _test_rigs().items():
        yield name, rig, None
    yield "fifty-ropes", fifty_rope_rig(), None


def _drag_results(rig, pid: str, path: list, motion: str) -> list:
    """The cold solve, then each step moved from the last and warm-started from its Result (ideal MA off, as the
    live drag asks), then the full solve of the last step: all on one new trail, as the live drag keeps one."""
    trail = memo.Trail()
    out = [solve(rig, motion=motion, trail=trail)]
    current = rig
    for x, y in path:
        current = current.moved(pid, x, y)
        start = {k: v for k, v in rigs.start_from(out[-1]).items() if k != pid}
        out.append(solve(current, start=start, motion=motion, ideal=False, trail=trail))
    out.append(solve(current, start=rigs.start_from(out[-1]), motion=motion, trail=trail))
    return out


# --- Results as data --------------------------------------------------------------------------------


def result_data(res) -> dict[str, Any]:
    """Every field of a Result as JSON data (all record fields, not only the rig-format JSON's)."""
    return {
        "status": res.status, "message": res.message, "subject": res.subject, "iterations": res.iterations,
        "residual_N": res.residual_N,
        "points": {k: list(v) for k, v in res.points.items()},
        "segments": [[s.rope, s.index, s.from_point, s.to_point, s.run, s.tension_N, s.length_m, s.strain,
                      s.utilization] for s in res.segments],
        "anchors": {k: [a.force_N, a.direction_deg, a.capacity_N, a.utilization, a.fx_N, a.fy_N, a.capacity_kind]
                    for k, a in res.anchors.items()},
        "loads": {k: [a.force_N, a.direction_deg, a.capacity_N, a.utilization, a.fx_N, a.fy_N, a.capacity_kind]
                  for k, a in res.loads.items()},
        "haul": dict(res.haul), "ma": [res.ma_actual, res.ma_ideal, res.ma_nominal],
        "deflection_deg": dict(res.deflection_deg),
        "warnings": [[w.code, w.subject, w.severity, w.message] for w in res.warnings],
        "hold_haul_range": {k: [r.low, r.high] for k, r in res.hold_haul_range.items()},
        "hold_anchor_range": {k: [r.low, r.high] for k, r in res.hold_anchor_range.items()},
    }


def _record() -> dict[str, Any]:
    cases = {}
    for name, rig, motion in _solves():
        cases[name] = {"rig": rig_to_dict(rig), "motion": motion, "results": [result_data(solve(rig, motion=motion))]}
    for name, (rig, pid, path, motion) in _drags().items():
        cases[name] = {"rig": rig_to_dict(rig), "drag": {"point": pid, "path": path, "motion": motion},
                       "results": [result_data(r) for r in _drag_results(rig, pid, path, motion)]}
    return cases


# --- comparison -----------------------------------------------------------------------------------


def _leaves(node: Any, field: str = "") -> Iterator[tuple[str, str, Any]]:
    """(path, quantity, value) of every leaf; the quantity is the field a number belongs to (its scale group)."""
    if isinstance(node, dict):
        for k, v in node.items():
            yield from ((f"{k}/{p}", q, x) for p, q, x in _leaves(v, field or k))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            # a record's columns are different quantities: the column number is part of the group
            sub = f"{field}#{i}" if field in ("segments", "anchors", "loads", "ma", "hold_haul_range",
                                              "hold_anchor_range") and not isinstance(v, (list, dict)) else field
            yield from ((f"{i}/{p}", q, x) for p, q, x in _leaves(v, sub))
    else:
        yield "", field, node


def _scales(leaves: list) -> dict[str, float]:
    scale: dict[str, float] = {}
    for _, q, v in leaves:
        if isinstance(v, float) and math.isfinite(v):
            scale[q] = max(scale.get(q, 0.0), abs(v))
    return scale


def differences(want: dict, got: dict) -> list[str]:
    """Where ``got`` differs from ``want`` beyond round-off (see the module docstring)."""
    wl, gl = list(_leaves(want)), list(_leaves(got))
    if [(p, q) for p, q, _ in wl] != [(p, q) for p, q, _ in gl]:
        return [f"different fields: {[p for p, _, _ in wl]} vs {[p for p, _, _ in gl]}"]
    scale = _scales(wl)
    out = []
    for (path, q, a), (_, _, b) in zip(wl, gl):
        if isinstance(a, float) and isinstance(b, (int, float)) and not isinstance(b, bool):
            if math.isnan(a) and math.isnan(b):
                continue
            if not math.isclose(a, b, rel_tol=REL, abs_tol=REL * scale.get(q, 0.0)):
                out.append(f"{path}: {b!r} (recorded {a!r})")
        elif a != b:
            out.append(f"{path}: {b!r} (recorded {a!r})")
    return out


def _golden() -> dict[str, Any]:
    return json.loads(DATA.read_text(encoding="utf-8"))


def _case_names() -> list[str]:
    return list(_golden()) if DATA.exists() else []


@pytest.mark.parametrize("name", _case_names())
def test_a_recorded_solve_gives_the_recorded_result(name):
    case = _golden()[name]
    rig = rig_from_dict(case["rig"])
    if "drag" in case:
        d = case["drag"]
        results = _drag_results(rig, d["point"], [tuple(p) for p in d["path"]], d["motion"])
    else:
        results = [solve(rig, motion=case["motion"])]
    assert len(results) == len(case["results"])
    for i, (want, res) in enumerate(zip(case["results"], results)):
        # through JSON, as recorded (a tuple becomes a list; floats round-trip exactly)
        got = json.loads(json.dumps(result_data(res)))
        bad = differences(want, got)
        assert not bad, f"{name} solve {i}: {len(bad)} differences, first: {bad[:5]}"


def test_the_recording_covers_what_it_claims():
    cases = _golden()
    statuses = {r["status"] for c in cases.values() for r in c["results"]}
    assert statuses == {"ok", "diverged", "mechanism", "invalid"}
    warnings = {w[0] for c in cases.values() for r in c["results"] for w in r["warnings"]}
    assert "two-blocked" in warnings
    assert any(r["hold_anchor_range"] for c in cases.values() for r in c["results"])  # hold with friction
    assert sum(len(c["results"]) for c in cases.values() if "drag" in c) >= 12
    assert DATA.stat().st_size < 400_000


def test_the_recorded_rigs_read_back_as_the_rigs_solved():
    # the replay solves the rig read from its dictionary, its rope and hardware specs embedded (so that
    # a change to the built-in library does not change the replay): that is the very rig recorded
    by_name = {name: rig for name, rig, _ in _solves()}
    by_name.update({name: d[0] for name, d in _drags().items()})
    for name, case in _golden().items():
        assert rig_from_dict(case["rig"]) == embed_specs(by_name[name]), name


if __name__ == "__main__" and "--record" in sys.argv:
    DATA.parent.mkdir(exist_ok=True)
    DATA.write_text(json.dumps(_record(), separators=(",", ":")), encoding="utf-8")
    print(f"recorded {DATA} ({DATA.stat().st_size} bytes)")
