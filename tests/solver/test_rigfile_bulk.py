"""The rig reader's quick builders and quick cross-checks (solver.bulk_build, solver.bulk_checks) change nothing.

Every file is read twice: as the reader reads it, and with every shortcut switched off (each
object read key by key, every point and rope through the full check).  Both must give the same
Rig, remembering the same keys for saving, or the same error at the same place -- on the
samples, on a big net, on hand-made bad ropes and points, and on mangled samples (the
mutations of test_rigfile_fuzz).
"""

from __future__ import annotations

import contextlib
import json
from typing import Any, Iterator

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from solver import model as m
from solver import rigfile, rigfile_build, rigfile_checks, rigfile_fields
from solver.errors import RigFileError
from tests.bench.test_bench_solver import net
from tests.solver.test_rigfile_fuzz import SAMPLE_DOCS, _mutate


@contextlib.contextmanager
def _no_shortcuts(monkeypatch: pytest.MonkeyPatch) -> Iterator[None]:
    """Every object read key by key and every point and rope checked in full."""
    with monkeypatch.context() as mp:
        mp.setattr(rigfile_build, "object_reader", lambda *a, **k: None)
        mp.setattr(rigfile_build, "_ROPE_FAST", None)
        mp.setattr(rigfile_checks, "all_unique", lambda items: False)
        mp.setattr(rigfile_checks, "points_to_check", lambda points, limit: range(len(points)))
        mp.setattr(rigfile_checks, "ropes_to_check", lambda ropes, *a: range(len(ropes)))
        yield


def _memory(rig: m.Rig) -> list[tuple[str, frozenset[str]]]:
    """The keys the reader remembers for saving, object by object."""
    objs: list[Any] = [rig, rig.site, rig.display, rig.settings, *rig.points, *rig.forces, *rig.materials,
                       *rig.hardware, *rig.site.features]
    for rope in rig.ropes:
        objs += [rope, rope.rigged, *rope.path]
    return [(type(o).__name__, rigfile_fields._present(o)) for o in objs]


def _outcome(text: str, strict: bool) -> Any:
    try:
        rig = rigfile.loads_rig(text, strict=strict)
    except RigFileError as err:
        return ("error", err.where, err.message)
    return ("rig", rig, _memory(rig), repr(rig))


def _both(monkeypatch: pytest.MonkeyPatch, doc: Any, strict: bool = False) -> tuple[Any, Any]:
    text = json.dumps(doc, allow_nan=True)
    quick = _outcome(text, strict)
    with _no_shortcuts(monkeypatch):
        full = _outcome(text, strict)
    return quick, full


@pytest.mark.parametrize("doc", SAMPLE_DOCS, ids=lambda d: d.get("title", "")[:30])
def test_every_sample_reads_the_same(monkeypatch, doc):
    quick, full = _both(monkeypatch, doc)
    assert quick[0] == "rig" and quick == full


def test_a_net_reads_the_same(monkeypatch):
    doc = json.loads(rigfile.dumps_rig(net(12, 9)))
    quick, full = _both(monkeypatch, doc)
    assert quick[0] == "rig" and quick == full


def _rope_doc() -> dict:
    """A small valid rig whose ropes and points the cases below spoil one at a time."""
    return {
        "format": "ropewright-rig", "version": 1,
        "points": [{"id": "A", "kind": "anchor", "x": 0, "y": 0}, {"id": "B", "kind": "point", "x": 1, "y": -1},
                   {"id": "C", "kind": "anchor", "x": 2, "y": 0}, {"id": "P", "kind": "person", "x": 5, "y": 5}],
        "ropes": [{"id": "r1", "material": "kern-11", "path": [{"at": "A"}, {"at": "B"}]},
                  {"id": "r2", "material": "kern-11", "rigged": {"slack_m": 0.1},
                   "path": [{"at": "C"}, {"at": "B", "how": "pulley", "hardware": "pulley-large"},
                            {"at": "A", "how": "hauled"}]}],
    }


def _set(doc: dict, path: tuple, value: Any) -> dict:
    node = doc
    for key in path[:-1]:
        node = node[key]
    if value is _DELETE:
        del node[path[-1]]
    else:
        node[path[-1]] = value
    return doc


_DELETE = object()

SPOILED = [
    (("ropes", 0, "path", 1, "at"), "Z"),  # no such point
    (("ropes", 0, "path", 1, "at"), "P"),  # a person
    (("ropes", 0, "path", 1, "at"), "A"),  # the same point twice in a row
    (("ropes", 0, "path", 0, "how"), "sliding"),  # must start tied
    (("ropes", 0, "path", 0, "how"), "hauled"),  # hauled not last
    (("ropes", 0, "path", 1, "how"), "pulley"),  # a pulley without hardware
    (("ropes", 0, "path", 1, "how"), "sliding"),  # must end tied or hauled
    (("ropes", 0, "path", 1, "hardware"), "no-such-pulley"),
    (("ropes", 0, "path", 1, "hardware"), "pulley-large"),  # hardware on a tied pass: allowed
    (("ropes", 0, "path", 1, "termination"), "bowline"),  # a knot where it is tied: allowed
    (("ropes", 1, "path", 1, "termination"), "bowline"),  # a knot on a pulley pass
    (("ropes", 1, "path", 1, "grab"), "pulley-large"),  # a grab on a pulley pass
    (("ropes", 1, "path", 1, "hardware"), "no-such-pulley"),
    (("ropes", 0, "path"), [{"at": "A"}]),  # one pass
    (("ropes", 0, "material"), "no-such-rope"),
    (("ropes", 0, "rigged"), {"slack_m": -1}),
    (("ropes", 0, "rigged"), {"pretension_N": 0}),
    (("ropes", 0, "rigged"), {"slack_m": 0.2, "pretension_N": 100}),
    (("ropes", 0, "rigged"), {}),  # the default rigging spelled out: remembered for saving
    (("ropes", 0, "rigged"), {"slack_m": 0.0}),
    (("ropes", 0, "label"), ""),
    (("ropes", 0, "extra_key"), 1),  # an unknown key: kept (refused in strict mode)
    (("ropes", 0, "path", 1, "how"), "tied"),  # a key given at its default
    (("ropes", 0, "path", 1, "note"), "x"),
    (("ropes", 1, "id"), "r1"),  # an id used twice
    (("points", 3, "id"), "A"),
    (("points", 1, "x"), 100_000.5),
    (("points", 1, "role"), "safety officer"),  # a role on a point that is not a person
    (("points", 3, "role"), "safety officer"),
    (("points", 1, "wetted_area_m2"), 0.5),  # a wetted area without a shape
    (("points", 1, "drag_shape"), "no-such-shape"),
    (("points", 1, "label"), ""),
    (("points", 1, "team"), 2),
    (("points", 1, "fixed"), False),
    (("points", 1, "x"), 3),  # a whole number read as a float
]


@pytest.mark.parametrize("strict", [False, True])
@pytest.mark.parametrize("path, value", SPOILED, ids=[f"{'.'.join(map(str, p))}={v!r}"[:60] for p, v in SPOILED])
def test_a_spoiled_rope_or_point_gets_the_same_answer(monkeypatch, path, value, strict):
    doc = _set(_rope_doc(), path, value)
    quick, full = _both(monkeypatch, doc, strict)
    assert quick == full


def test_the_hand_made_cases_reach_errors_and_rigs():
    outcomes = {_outcome(json.dumps(_set(_rope_doc(), p, v)), False)[0] for p, v in SPOILED}
    assert outcomes == {"error", "rig"}


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                  HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_a_mangled_sample_gets_the_same_answer(monkeypatch, data):
    doc = json.loads(json.dumps(data.draw(st.sampled_from(SAMPLE_DOCS))))
    for _ in range(data.draw(st.integers(1, 3))):
        _mutate(data, doc)
    quick, full = _both(monkeypatch, doc, data.draw(st.booleans()))
    assert quick == full
