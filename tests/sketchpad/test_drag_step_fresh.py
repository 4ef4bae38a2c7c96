"""What a drag step leaves on the canvas and in the overlay equals what a fresh computation gives.

A drag step does only what its frame shows: the canvas leaves the points it shows at their solved
places alone while the solved places are the same (``SketchScene.sync``), and the overlay hands the
placer the same name-box objects for points that did not change (``ResultOverlay._name_boxes``).
Each test drags on the 50-rope rig (30 free points drawn where the settled solve put them) and
compares, after every step, with a scene built from scratch and with boxes and key lines made afresh.
"""

from __future__ import annotations

import math

from sketchpad.canvas import SketchScene
from sketchpad.geometry import to_scene
from sketchpad.overlay.labels import scene_xy
from sketchpad.overlay.labels import scene_positions
from sketchpad.overlay.legend import summary_lines
from sketchpad.rope_names import rope_name_labels
from sketchpad.solved_places import drawn_place_pairs
from tests.sketchpad.test_drag_layer import fifty_rope_window


def fresh_name_boxes(ov) -> list:
    """The overlay's name boxes made afresh: each point's name rect beside its marker, at its solved place when
    the canvas shows it there."""
    at = ov.scene.shown_at
    return [(scene_xy(at.get(p.id, p.xy)), ov._name_box(p)[1]) for p in ov.rig.points]


def assert_scene_fresh(canvas) -> None:
    """Every item of ``canvas`` is where, and shaped as, a scene synced from scratch to the same rig and the same
    solved places puts it."""
    fresh = SketchScene()
    fresh.scale_m_per_px = canvas.scale_m_per_px
    fresh.sync(canvas.rig)
    fresh.set_solved(canvas.shown_at)
    assert fresh.items_by_key.keys() == canvas.items_by_key.keys()
    for key, item in canvas.items_by_key.items():
        other = fresh.items_by_key[key]
        assert item.pos() == other.pos(), key
        assert item.boundingRect() == other.boundingRect(), key
        if key[0] == "rope":
            assert item._path == other._path, key
    assert canvas.drawn_places.pairs == fresh.drawn_places.pairs == drawn_place_pairs(canvas.rig, canvas.shown_at)
    fresh.clear()


def circle_steps(doc, sched, view, pid: str, n: int, after) -> None:
    """``n`` drag steps of ``pid`` round a 1.5 m circle from where it is drawn, each solved as a drag and painted;
    ``after()`` after each."""
    base = doc.rig
    p = base.point(pid)
    for i in range(1, n + 1):
        doc.preview(base.moved(pid, p.x + 1.5 * math.sin(0.3 * i), p.y + 1.5 * math.cos(0.3 * i)))
        sched._change_gap_ms = 1.0  # a drag step however long the last one took
        sched.fire()
        view.viewport().repaint()
        after()


def test_drag_steps_leave_the_scene_as_a_full_sync_from_scratch_draws_it(main_window):
    doc, sched, view = fifty_rope_window(main_window)
    canvas = main_window.canvas
    settled = dict(canvas.shown_at)
    assert len(settled) == 30  # the free points the settled solve moved: drawn at their solved places
    assert_scene_fresh(canvas)
    # a haul point (never in the solved places), then a free point shown at its solved place: its first step
    # takes it out of them (drawn under the cursor again) and its ring goes
    circle_steps(doc, sched, view, "H4", 4, lambda: assert_scene_fresh(canvas))
    assert canvas.shown_at == settled
    circle_steps(doc, sched, view, "M4", 4, lambda: assert_scene_fresh(canvas))
    assert not sched.settled
    assert canvas.shown_at == {k: v for k, v in settled.items() if k != "M4"}
    assert canvas.item_for(("point", "M4")).pos() == to_scene(*doc.rig.point("M4").xy)


def test_drag_steps_give_name_boxes_rope_names_and_key_lines_made_afresh(main_window):
    doc, sched, view = fifty_rope_window(main_window)
    ov = main_window.live.overlay

    def check() -> None:
        assert ov._name_boxes(ov.rig) == fresh_name_boxes(ov)
        assert ov._summary == summary_lines(ov.rig, ov.result)
        names = [lab for lab in ov.labels if lab.kind == "rope"]
        fresh = rope_name_labels(ov.rig, dict(scene_positions(ov.rig, ov.result)), {})
        assert len(names) == len(fresh) == 50
        assert [(a.key, a.lines, a.base, a.end, a.colour.rgba(), a.priority) for a in names] == \
            [(b.key, b.lines, b.base, b.end, b.colour.rgba(), b.priority) for b in fresh]
        assert ov.legend.lines[:len(ov._summary)] == ov._summary

    circle_steps(doc, sched, view, "H4", 3, check)
    circle_steps(doc, sched, view, "G4", 3, check)  # a free point leaving the solved places: its box moves back
    assert not sched.settled
