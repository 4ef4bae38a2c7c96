"""An anchor's capacity is a breaking strength (÷ the safety factor) or a rated working load (no factor):
the file, the model, the solver's utilisation and the checks agree, worked by hand.

Source of the rule: the rig format's additions (``capacity_kind``, rig-format.md); the 10:1 static
system safety factor is common practice (check-values.md, "Safety factors and hauling").
"""

from __future__ import annotations

import json
from dataclasses import replace

import pytest

from solver import rigfile
from solver.analysis import analyse
from solver.capacity import allowed_N, utilization
from solver.errors import RigFileError
from tests import rigs


def _pulled_anchor(kind: str | None, capacity: float = 2000.0):
    """A 1 kN sideways pull at a free point hung from one anchor: the anchor takes exactly 1 kN."""
    kw = {"capacity_N": capacity}
    if kind is not None:
        kw["capacity_kind"] = kind
    pts = [rigs.anchor("A", 0.0, 10.0, label="rated eye bolt", **kw), rigs.free("P", 0.0, 0.0)]
    return rigs.make_rig(pts, [rigs.rope("r", ["A", "P"])], [rigs.force("P", 1000.0, 270.0)], motion="hold",
                         ea=rigs.STIFF_EA)


def test_hand_worked_margins_of_the_two_kinds():
    # 1 kN on a 2 kN capacity at 10:1: as a breaking strength the allowed force is 2 kN / 10 = 0.2 kN,
    # so the anchor is at 1 / 0.2 = 500 % of allowed; as a working load it is at 1 / 2 = 50 %.
    assert allowed_N(2000.0, "strength", 10.0) == pytest.approx(200.0)
    assert allowed_N(2000.0, "working", 10.0) == pytest.approx(2000.0)
    assert utilization(1000.0, 2000.0, "strength", 10.0) == pytest.approx(5.0)
    assert utilization(1000.0, 2000.0, "working", 10.0) == pytest.approx(0.5)
    assert utilization(1000.0, None, "working", 10.0) is None


@pytest.mark.parametrize("kind, util, codes", [(None, 5.0, {"anchor-margin"}), ("strength", 5.0, {"anchor-margin"}),
                                               ("working", 0.5, set())])
def test_the_solver_and_checks_use_the_kind(kind, util, codes):
    res = analyse(_pulled_anchor(kind))
    assert res.ok, res.message
    a = res.anchors["A"]
    assert a.force_N == pytest.approx(1000.0, rel=1e-6)  # statics: the anchor holds the whole pull
    assert a.capacity_kind == (kind or "strength")
    assert a.utilization == pytest.approx(util, rel=1e-6)
    assert {w.code for w in res.warnings if w.code.startswith("anchor")} == codes


def test_changing_only_the_kind_renews_the_anchor_record():
    # the solver hands on unchanged anchor records between solves of the same structure; a new kind
    # with the same force must not keep the old utilisation (tested against a fresh computation)
    first = analyse(_pulled_anchor("strength"))
    second = analyse(_pulled_anchor("working"))
    assert second.anchors["A"].utilization == pytest.approx(0.5, rel=1e-6)
    assert first.anchors["A"].utilization == pytest.approx(5.0, rel=1e-6)


def test_the_file_keeps_the_kind_and_rejects_an_unknown_one(tmp_path):
    rig = _pulled_anchor("working")
    path = tmp_path / "eye.rig.json"
    rigfile.save_rig(rig, path)
    data = json.loads(path.read_text())
    assert data["points"][0]["capacity_kind"] == "working"
    assert rigfile.load_rig(path).point("A").capacity_kind == "working"
    # the default is not written (old files stay as they were) and reads back as strength
    rigfile.save_rig(_pulled_anchor(None), path)
    assert "capacity_kind" not in json.loads(path.read_text())["points"][0]
    assert rigfile.load_rig(path).point("A").capacity_kind == "strength"
    data["points"][0]["capacity_kind"] = "wll"
    path.write_text(json.dumps(data))
    with pytest.raises(RigFileError) as err:
        rigfile.load_rig(path)
    assert "capacity_kind" in str(err.value)


def test_the_json_and_the_cli_table_say_which_kind_each_margin_used(tmp_path):
    from solver.cli_solve import format_result, result_document

    rig = _pulled_anchor("working")
    res = analyse(rig)
    doc = result_document(rig, res)
    assert doc["anchors"]["A"]["capacity_kind"] == "working"
    text = format_result(rig, res, "m", "kN")
    assert "2.00 kN working load" in text and "50 % of working load" in text
    strength = replace(rig, points=tuple(replace(p, capacity_kind="strength") for p in rig.points))
    text_s = format_result(strength, analyse(strength), "m", "kN")
    assert "2.00 kN strength" in text_s and "500 % of strength ÷ 10" in text_s
