"""Property test: any sequence of edits (with undos, redos and cancelled drags mixed in), undone to
the start, gives back the opened rig exactly, and the canvas shows exactly the rig's items.
"""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from sketchpad.tools import (
    ToolDefaults,
    add_feature,
    add_force,
    add_point,
    add_rope,
    finish_passes,
    move_points,
)
from solver.model import FEATURE_KINDS, MIDDLE_HOWS, POINT_KINDS
from solver.rigfile import load_rig
from tests.conftest import SAMPLES

coord = st.floats(min_value=-40, max_value=40, allow_nan=False, allow_infinity=False)
small = st.floats(min_value=-5, max_value=5, allow_nan=False, allow_infinity=False)
index = st.integers(min_value=0, max_value=1000)

EDIT = st.one_of(
    st.tuples(st.just("add"), st.sampled_from(POINT_KINDS), coord, coord),
    st.tuples(st.just("drag"), index, st.lists(st.tuples(small, small), min_size=1, max_size=4)),
    st.tuples(st.just("drag-cancel"), index, small, small),
    st.tuples(st.just("delete"), st.lists(index, min_size=1, max_size=3)),
    st.tuples(st.just("rope"), st.lists(st.tuples(index, st.sampled_from(MIDDLE_HOWS)), min_size=2, max_size=6)),
    st.tuples(st.just("force"), index, st.floats(min_value=-180, max_value=180)),
    st.tuples(st.just("feature"), st.sampled_from(FEATURE_KINDS), st.lists(st.tuples(coord, coord), min_size=3, max_size=5)),
    st.tuples(st.just("units"), st.sampled_from(["metric", "imperial"])),
    st.tuples(st.just("undo")),
    st.tuples(st.just("redo")),
)

BASE = load_rig(SAMPLES / "raft-3to1-redirect.rig.json")
DEFAULTS = ToolDefaults()


def _apply(window, edit) -> None:
    doc = window.document
    rig = doc.rig
    pts = [p.id for p in rig.points]
    op = edit[0]
    if op == "add":
        new, pid = add_point(rig, edit[1], edit[2], edit[3])
        doc.apply(new, f"Place {pid}")
    elif op == "drag" and pts:  # as the select tool does: previews, then one command with before=
        pid = pts[edit[1] % len(pts)]
        x = y = 0.0
        for dx, dy in edit[2]:
            x, y = x + dx, y + dy
            doc.preview(move_points(rig, [pid], x, y))
        doc.apply(doc.rig, f"Move {pid}", before=rig)
    elif op == "drag-cancel" and pts:  # Esc: back to the press-time rig, nothing pushed
        pid = pts[edit[1] % len(pts)]
        doc.preview(move_points(rig, [pid], edit[2], edit[3]))
        doc.preview(rig)
    elif op == "delete":
        keys = list(window.canvas.items_by_key)
        if keys:
            window.canvas.select_keys([keys[i % len(keys)] for i in edit[1]])
            window.delete_selection()
    elif op == "rope":
        structural = [p.id for p in rig.points if p.kind != "person"]
        if len(structural) >= 2:
            picks = []
            for i, how in edit[1]:
                pid = structural[i % len(structural)]
                if not picks or picks[-1][0] != pid:
                    picks.append((pid, how))
            if len(picks) >= 2:
                new, rid = add_rope(rig, finish_passes(rig, picks, DEFAULTS), DEFAULTS.material)
                doc.apply(new, f"Draw rope {rid}")
    elif op == "force":
        free = [p.id for p in rig.points if not p.is_fixed]
        if free:
            doc.apply(add_force(rig, free[edit[1] % len(free)], DEFAULTS.force_N, edit[2]), "Add force")
    elif op == "feature":
        new, fid = add_feature(rig, edit[1], edit[2], closed=edit[1] not in ("bank", "note"))
        doc.apply(new, f"Draw {fid}")
    elif op == "units":
        window.set_units(edit[1])
    elif op == "undo":
        window.undo()
    elif op == "redo":
        window.redo()


def _assert_canvas_shows(window, rig) -> None:
    expected = {("point", p.id) for p in rig.points} | {("rope", r.id) for r in rig.ropes}
    expected |= {("feature", f.id) for f in rig.site.features}
    expected |= {("force", i) for i, f in enumerate(rig.forces) if rig.has_point(f.at)}
    assert set(window.canvas.items_by_key) == expected
    for p in rig.points:
        pos = window.canvas.item_for(("point", p.id)).pos()
        assert (pos.x(), pos.y()) == pytest.approx((p.x, -p.y), abs=1e-9)  # Qt flushes denormal-size offsets


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(edits=st.lists(EDIT, min_size=1, max_size=20))
def test_200_random_edit_sequences_undo_to_the_opened_rig_exactly(main_window, edits):
    w = main_window
    w.document.replace_all(BASE)
    for edit in edits:
        _apply(w, edit)
    stack = w.document.undo_stack
    top = stack.command(stack.count() - 1).after if stack.count() else BASE
    while stack.canUndo():
        w.undo()
    assert w.document.rig == BASE
    _assert_canvas_shows(w, BASE)
    while stack.canRedo():
        w.redo()
    assert w.document.rig == top
    _assert_canvas_shows(w, top)


DELETION_HEAVY = st.one_of(
    st.tuples(st.just("delete"), st.lists(index, min_size=1, max_size=3)),
    st.tuples(st.just("rope"), st.lists(st.tuples(index, st.sampled_from(MIDDLE_HOWS)), min_size=2, max_size=6)),
    st.tuples(st.just("add"), st.sampled_from(POINT_KINDS), coord, coord),
    st.tuples(st.just("undo")),
)


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(edits=st.lists(DELETION_HEAVY, min_size=1, max_size=12))
def test_no_edit_leaves_a_rig_that_cannot_be_saved(main_window, edits):
    """Deleting a point between two passes at one point (A, B, A) used to leave a rope passing A twice in a
    row: the rig could no longer be saved or autosaved.  Every edit leaves a rig the file format accepts."""
    from solver.rigfile import dumps_rig, loads_rig

    w = main_window
    w.document.replace_all(BASE)
    for edit in edits:
        _apply(w, edit)
        loads_rig(dumps_rig(w.document.rig))  # raises RigFileError naming the place if it cannot be saved


def test_deleting_the_point_between_two_passes_at_one_point_merges_them(main_window):
    from solver.model import Pass, Rope
    from solver.rigfile import dumps_rig, loads_rig

    w = main_window
    rope = Rope("R9", "kern-11", (Pass("L1"), Pass("A1", "pulley", "pulley-large"), Pass("G1", "sliding"),
                                  Pass("A1", "tied"), Pass("H1", "hauled")))
    w.document.replace_all(BASE.with_rope(rope))
    w.canvas.select_keys([("point", "G1")])
    w.delete_selection()
    new = w.document.rig.rope("R9")
    assert [ps.at for ps in new.path] == ["L1", "A1", "H1"] and new.path[-1].how == "hauled"
    loads_rig(dumps_rig(w.document.rig))
