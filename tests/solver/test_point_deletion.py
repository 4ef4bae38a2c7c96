"""Deleting points never leaves a rig the file format refuses (the rig must stay saveable)."""

from __future__ import annotations

import pathlib

from solver.rigfile import dumps_rig, load_rig, loads_rig

SAMPLES = pathlib.Path(__file__).resolve().parents[2] / "samples"


def test_a_capture_left_at_a_rope_end_after_deletions_becomes_a_plain_tied_end_and_saves():
    # Found by the random-edit property (tests/sketchpad/test_canvas_undo_property.py): deleting the points
    # before a progress capture made it the rope's first pass, tied but still holding its rope grab, which
    # the file format refuses (only a capture holds the rope with a grab).
    rig = load_rig(SAMPLES / "raft-three-strokes.rig.json")
    edited = rig.without_point("L1").without_point("G1")
    (rope,) = edited.ropes
    assert [(ps.at, ps.how, ps.grab) for ps in rope.path] == [("A1", "tied", None), ("H1", "hauled", None)]
    assert loads_rig(dumps_rig(edited)).ropes == edited.ropes


def test_a_capture_in_the_middle_keeps_its_grab_when_a_rope_end_is_deleted():
    rig = load_rig(SAMPLES / "raft-three-strokes.rig.json")
    edited = rig.without_point("H1")
    (rope,) = edited.ropes
    capture = next(ps for ps in rope.path if ps.at == "A1")
    assert (capture.how, capture.grab) == ("capture", "prusik-3-wrap")
    assert rope.path[-1].how == "tied" and rope.path[-1].grab is None
    loads_rig(dumps_rig(edited))
