"""The reader, the writer and the fields share one set of limits: a file that opens can be saved.

Texts, numbers and list sizes a file may hold are capped (solver/limits.py reads them from the
schema); a file beyond a cap is refused at once with the field named and the size in words.
"""

from __future__ import annotations

import copy
import json

import pytest

from solver import limits, rigfile
from solver.errors import RigFileError
from solver.model import Point, Rig
from solver.rigfile import dumps_rig, loads_rig, save_rig
from solver.rigfile_schema import field_path
from tests.conftest import SAMPLES

RAFT = SAMPLES / "raft-3to1-redirect.rig.json"


def _sample() -> dict:
    return json.loads(RAFT.read_text(encoding="utf-8"))


def _refused(d: dict) -> RigFileError:
    with pytest.raises(RigFileError) as info:
        loads_rig(json.dumps(d))
    return info.value


def test_a_team_of_1e308_is_refused_on_opening_not_when_saving():
    # the filer's case: JSON 1e+308 is a whole number to the schema, int() of it has 309 digits
    d = _sample()
    haul = next(p for p in d["points"] if p["kind"] == "haul")
    haul.pop("force_N", None)
    haul["team"], haul["force_per_person_N"] = 1e308, 200.0
    err = _refused(d)
    assert err.where.endswith(".team") and "at most 1000" in err.message, str(err)


@pytest.mark.parametrize("field, value, words", [
    ("capacity_N", 1e300, "at most 1e+12"),
    ("x", 2e5, "km from the site origin"),
])
def test_numbers_beyond_the_shared_range_are_refused_with_the_field_named(field, value, words):
    d = _sample()
    anchor = next(p for p in d["points"] if p["kind"] == "anchor")
    anchor[field] = value
    err = _refused(d)
    assert err.where.endswith(f".{field}") and words in err.message, str(err)


@pytest.mark.parametrize("place, limit", [
    (("title",), 200), (("notes",), 20_000), (("points", 0, "label"), 200), (("points", 0, "id"), 100),
    (("ropes", 0, "label"), 200), (("site", "features", 0, "label"), 200),
])
def test_overlong_text_is_refused_naming_the_field_and_its_length(place, limit):
    d = _sample()
    holder = d
    for key in place[:-1]:
        holder = holder[key]
    holder[place[-1]] = "x" * (limit + 1)
    err = _refused(d)
    assert err.where == field_path(place), str(err)
    assert f"{limit + 1:,} characters" in err.message and f"at most {limit:,}" in err.message, str(err)


def test_a_million_character_notes_is_refused_naming_the_field():
    # how quickly: tests/bench/test_bench_refusals.py
    d = _sample()
    d["notes"] = "n" * 1_000_000
    err = _refused(d)
    assert err.where == "notes" and "1,000,000 characters" in err.message


def test_more_points_than_the_format_holds_are_refused_with_a_size_message():
    d = _sample()
    top = limits.max_items("rig", "points")
    d["points"] += [{"id": f"P{i}", "kind": "person", "x": i % 100, "y": i // 100} for i in range(top)]
    err = _refused(d)
    assert err.where == "points" and f"at most {top:,}" in err.message and f"{top + len(_sample()['points']):,}" \
        in err.message, str(err)


def test_the_drawing_cap_says_what_is_too_big_to_draw():
    assert limits.drawing_problem(limits.DRAWN_POINTS, limits.DRAWN_ROPES) is None
    words = limits.drawing_problem(20_000, 5)
    assert "20,000 points" in words and f"at most {limits.DRAWN_POINTS:,} points" in words


def test_too_many_passes_in_all_are_refused():
    d = _sample()
    rope = dict(d["ropes"][0], path=[{"at": at} for at in ["L1", "A1"] * 100])  # 200 passes
    d["ropes"] = [dict(copy.deepcopy(rope), id=f"R{i}") for i in range(limits.MAX_PASSES_IN_ALL // 200 + 1)]
    err = _refused(d)
    assert err.where == "ropes" and f"{limits.MAX_PASSES_IN_ALL:,}" in err.message, str(err)


def test_a_compact_file_that_would_grow_past_the_cap_when_saved_is_refused_on_opening(monkeypatch):
    monkeypatch.setattr(rigfile, "MAX_FILE_BYTES", 64 * 1024)
    monkeypatch.setattr(rigfile, "_SPEC_ALLOWANCE", 0)
    d = _sample()
    d["survey"] = [1e5] * 12_000  # an unknown key is kept; each "1e5" (3 bytes) is written as 100000.0
    text = json.dumps(d, separators=(",", ":")).replace("100000.0", "1e5")
    assert len(text.encode()) < rigfile.MAX_FILE_BYTES
    with pytest.raises(RigFileError) as info:
        loads_rig(text)
    assert "saved again it would be" in info.value.message, str(info.value)


def test_a_file_that_fits_only_when_compact_is_saved_compact(monkeypatch, tmp_path):
    d = _sample()
    d["survey"] = list(range(3000))  # indented: ~8 bytes each, compact: ~5
    text = json.dumps(d, separators=(",", ":"))
    monkeypatch.setattr(rigfile, "MAX_FILE_BYTES", len(text) + 16 * 1024)
    monkeypatch.setattr(rigfile, "_SPEC_ALLOWANCE", 0)
    rig = loads_rig(text)
    save_rig(rig, tmp_path / "a.rig.json")
    data = (tmp_path / "a.rig.json").read_bytes()
    assert b"\n  " not in data and loads_rig(data) == rigfile.embed_specs(rig)


def test_a_rig_beyond_a_limit_in_memory_is_never_written():
    rig = Rig(points=(Point("H1", "haul", 0.0, 0.0, team=10**309, force_per_person_N=200.0),))
    with pytest.raises(RigFileError) as info:
        save_rig(rig, "/nonexistent-folder/never.rig.json")
    assert "team" in info.value.where


def test_the_limits_module_reads_the_schema_the_reader_uses():
    assert limits.number_range("point", "team") == limits.Range(1.0, 1000.0, False, True)
    assert limits.number_range("point", "capacity_N").low_open
    assert limits.max_chars("point", "label") == rigfile.schema()["$defs"]["text"]["maxLength"]
    assert limits.max_items("rig", "points") == 20_000
    assert limits.MAX_COORDINATE_M == rigfile.MAX_COORDINATE_M == 100_000.0
    assert limits.Range(0.0, 10.0).problem(float("inf")) == "must be a finite number"


def test_every_sample_is_well_inside_the_limits_and_saves(tmp_path):
    for path in SAMPLES.glob("*.rig.json"):
        rig = rigfile.load_rig(path)
        save_rig(rig, tmp_path / path.name)
        assert len(dumps_rig(rig)) < rigfile.MAX_FILE_BYTES


def test_a_spec_the_library_editor_accepts_is_one_the_file_holds():
    """materials.material_problem (the spec editor's check) keeps the schema's stretch-table limits."""
    from solver import materials
    from solver.model import Material

    top = limits.schema()["$defs"]["stretch_point"]["prefixItems"][0]["maximum"]
    assert materials.MAX_TENSION_N == top
    too_strong = Material("m", "rope", 1e9, ((top * 2, 0.5),))
    field, message = materials.material_problem(too_strong)
    assert field == "stretch[0]" and "rig file holds" in message
