"""The rig reader's shortcuts for big files build exactly what the plain way builds."""

from __future__ import annotations

import dataclasses

from solver import model as m
from solver import rigfile, rigfile_build, rigfile_fields
from solver.bulk_read import filled
from solver.bulk_read import plain_data_ok
from solver.rigfile_build import _read_pass
from solver.rigfile_json import _DUPLICATE


def test_filled_dataclasses_equal_their_init():
    cases = [
        (m.Point, {"id": "A1", "kind": "anchor", "x": 1.0, "y": 2.0, "capacity_N": 2e4, "extra": {}}),
        (m.Pass, {"at": "A1", "how": "pulley", "hardware": "pulley-large", "extra": {}}),
        (m.Force, {"at": "J", "magnitude_N": 100.0, "direction_deg": 90.0, "extra": {"note": 1}}),
        (m.Rope, {"id": "r", "material": "kern-11", "path": (m.Pass("A"), m.Pass("B")), "rigged": m.Rigging(),
                  "extra": {}}),
    ]
    for cls, kwargs in cases:
        fast, plain = filled(cls, dict(kwargs)), cls(**kwargs)
        assert type(fast) is cls and fast == plain and repr(fast) == repr(plain)
        assert {f.name: getattr(fast, f.name) for f in dataclasses.fields(cls)} == \
               {f.name: getattr(plain, f.name) for f in dataclasses.fields(cls)}


def test_a_missing_field_or_an_unknown_one_goes_through_init():
    # Rope without "extra" (a default_factory field): __init__ makes a fresh dict
    rope = filled(m.Rope, {"id": "r", "material": "kern-11", "path": (), "rigged": m.Rigging()})
    assert rope.extra == {} and rope == m.Rope("r", "kern-11", ())
    try:
        filled(m.Pass, {"at": "A", "nonsense": 1, "extra": {}})
    except TypeError:
        pass  # the dataclass's own complaint, as cls(**kwargs) gives it
    else:
        raise AssertionError("an unknown field was accepted")


def test_a_class_with_post_init_is_built_by_its_init():
    @dataclasses.dataclass(frozen=True)
    class Checked:
        x: float
        seen: list = dataclasses.field(default_factory=list)

        def __post_init__(self):
            self.seen.append(self.x)

    obj = filled(Checked, {"x": 1.0, "seen": []})
    assert obj.seen == [1.0]


def test_a_pass_read_directly_equals_one_read_field_by_field():
    for x in ({"at": "A"}, {"at": "A", "how": "tied"}, {"at": "A", "how": "pulley", "hardware": "pulley-large"},
              {"at": "A", "hardware": None}):
        fast = _read_pass(dict(x), "ropes[0]", 0, False)
        plain = rigfile_build._make(m.Pass, dict(x), rigfile_fields._PASS, "ropes[0].path[0]", False)
        assert fast == plain and rigfile_fields._present(fast) == rigfile_fields._present(plain)


def test_the_quick_plain_data_walk_finds_what_the_full_walk_reports():
    assert plain_data_ok({"a": [1, 2.5, "x", None, True, {"b": "é"}]}, _DUPLICATE)
    assert not plain_data_ok({"a": 1, _DUPLICATE: "a"}, _DUPLICATE)
    for bad in ({"a": float("nan")}, {"a": [float("inf")]}, {"a": 10**301}, {"a": "\ud800"}, {"\ud800": 1}):
        assert not plain_data_ok(bad, _DUPLICATE)


def test_the_collector_is_left_as_found_after_a_load():
    import gc

    from tests.conftest import SAMPLES

    sample = SAMPLES / "raft-3to1-redirect.rig.json"
    assert gc.isenabled() and gc.get_freeze_count() == 0
    rig = rigfile.load_rig(sample)
    assert gc.isenabled() and gc.get_freeze_count() == 0 and rig.points  # nothing left frozen
    # a program that keeps objects frozen keeps them: the load does not unfreeze them
    gc.freeze()
    try:
        frozen = gc.get_freeze_count()
        rigfile.load_rig(sample)
        assert gc.get_freeze_count() == frozen and gc.isenabled()
    finally:
        gc.unfreeze()
    # switched off by the program: left off
    gc.disable()
    try:
        rigfile.load_rig(sample)
        assert not gc.isenabled()
    finally:
        gc.enable()
