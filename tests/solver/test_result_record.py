"""``solver.result.record`` builds the same frozen records as their dataclass constructors."""

from __future__ import annotations

import dataclasses

import pytest

from solver.equilibrium import solve
from solver.result import AnchorResult, SegmentResult, record
from tests import rigs


def test_record_equals_the_constructor_and_stays_frozen():
    values = dict(rope="main", index=2, from_point="A", to_point="B", tension_N=1234.5, length_m=6.7, strain=0.01,
                  utilization=0.3, run=1)
    fast, slow = record(SegmentResult, **values), SegmentResult(**values)
    assert fast == slow and hash(fast) == hash(slow) and repr(fast) == repr(slow)
    with pytest.raises(dataclasses.FrozenInstanceError):
        fast.tension_N = 0.0


def test_every_record_of_a_solve_has_every_field_of_its_class():
    # a 2:1 on a redirect: segments, anchors and a load, each rebuilt through its constructor
    rig = rigs.make_rig(
        [rigs.anchor("A", 0, 0), rigs.anchor("R", 10, 0), rigs.free("P", 5, -3), rigs.haul("H", 12, 4, 400.0),
         rigs.load("L", 5, -8)],
        [rigs.rope("r", ["A", ("P", "pulley", "pul"), ("R", "pulley", "pul"), ("H", "hauled")]),
         rigs.rope("tie", ["P", "L"])],
        [], hardware=[rigs.pulley("pul", 0.9)], motion="haul")
    res = solve(rig)
    assert res.ok, res.message
    records = list(res.segments) + list(res.anchors.values()) + list(res.loads.values())
    for rec in records:
        names = {f.name for f in dataclasses.fields(rec)}
        assert set(vars(rec)) == names
        assert type(rec)(**dataclasses.asdict(rec)) == rec
    assert any(isinstance(r, AnchorResult) for r in records)
