"""Reading the plan: rope colours apart from the load colours, utilization by band weight too (greyscale),
the key's words, and the summary as sentences."""

from __future__ import annotations

import math
import pathlib

import pytest
from PySide6.QtGui import QColor
from PySide6.QtWidgets import QApplication

from sketchpad import legend_key, theme
from sketchpad.summary_words import sentences
from solver.analysis import analyse
from solver.rigfile import load_rig

SAMPLES = pathlib.Path(__file__).resolve().parents[2] / "samples"


def _hue_gap(a: QColor, b: QColor) -> float:
    d = abs(a.hsvHueF() - b.hsvHueF()) * 360.0
    return min(d, 360.0 - d)


def test_no_rope_colour_shares_a_hue_with_the_use_ramp_or_the_danger_zones():
    alarm = [c for _u, c in theme.UTIL_RAMP] + list(theme.ZONE_COLOURS.values())
    for rope in theme.ROPE_COLOURS:
        # 30 degrees of hue apart at least: red, amber and green never stand for a rope (our own design rule)
        assert min(_hue_gap(rope, c) for c in alarm) >= 30.0, rope.name()


def test_band_weight_grows_with_use_so_greyscale_keeps_the_meaning():
    widths = [theme.band_width_px(u) for u in (0.0, 0.3, 0.8, 1.0, 1.5, 3.0)]
    assert widths == sorted(widths) and len(set(widths[:5])) == 5
    assert widths[0] == theme.BAND_MIN_PX and widths[-1] == theme.BAND_MAX_PX
    assert theme.band_width_px(1.0) - theme.band_width_px(0.3) >= 4.0  # visibly heavier past the limit


def test_drawn_bands_on_the_raft_are_heavier_where_the_rope_is_used_more(main_window):
    from tests.sketchpad.test_overlay import open_sample

    open_sample(main_window, "raft-3to1-redirect.rig.json")
    bands = main_window.live.overlay.force_item.bands
    colours_and_widths = {QColor(pen.color()).rgb(): pen.widthF() for pen, _path in bands}
    assert len(set(colours_and_widths.values())) >= 2  # several uses: several weights
    # a band of a higher bucket (later on the ramp, by its rgba order) is never thinner
    from sketchpad.overlay.bands import _BUCKET_ORDER

    order = sorted((_BUCKET_ORDER[QColor(pen.color()).rgba() | 0xFF000000], pen.widthF()) for pen, _ in bands)
    assert [w for _k, w in order] == sorted(w for _k, w in order)


def test_the_key_names_its_meaning_and_every_zone_shape():
    assert legend_key.TITLE == "Rope use: share of allowed load"
    words = " ".join(text for _k, _s, text in legend_key.ZONE_ROWS)
    assert "inside of bight" in words and "recoil band" in words
    assert "arm from a bight" in words and "anchor fails" in words  # the flight-path strip explained


@pytest.mark.parametrize("name", ["raft-3to1-redirect.rig.json", "vector-pull.rig.json"])
def test_summary_sentences_say_what_the_load_gets_against_what_it_needs(name):
    rig = load_rig(SAMPLES / name)
    result = analyse(rig)
    lines = sentences(rig, result)
    load = next(p for p in rig.points if p.kind == "load")
    first = lines[0]
    assert first.startswith(f"Reaches {load.name}: ") and f"(needs " in first and first.endswith(".")
    short = load.required_N - result.loads[load.id].force_N
    assert ("short by" in first) == (short > 0)
    assert all(line.endswith(".") for line in lines) and not any("→" in line for line in lines)


def test_the_overloaded_pulley_of_the_raft_is_marked_on_the_plan(main_window):
    from solver.checks import pass_loads
    from solver.materials import hardware_for
    from tests.sketchpad.test_overlay import open_sample

    result = open_sample(main_window, "raft-3to1-redirect.rig.json")
    rig = main_window.document.rig
    sf = rig.settings.min_safety_factor
    # independent of the label code: load x SF / MBS per pass, from the checks' pass loads (vector sum of the legs)
    over = [(r, at, f) for r, k, at, f in pass_loads(rig, result)
            if f * sf / hardware_for(rig, rig.rope(r).path[k].hardware).mbs_N >= 1.0]
    assert over, "the raft sample's redirect pulley is past its allowed load"
    marks = [lab for lab in main_window.live.overlay.labels if lab.kind == "hardware"]
    assert sorted(lab.key for lab in marks) == sorted(f"{r}@{at}#hw" for r, at, _f in over)
    for lab in marks:
        assert lab.placed  # on the plan, not hidden by the placer
        # worded as the anchors' labels are: share of the MBS divided by the safety factor
        assert lab.values["utilization"] >= 1.0 and lab.lines[1].endswith(f"of strength ÷ {sf:g}")
        assert lab.colour.rgb() == theme.utilization_colour(lab.values["utilization"]).rgb()


@pytest.mark.parametrize("name", ["raft-3to1-redirect.rig.json", "vector-pull.rig.json", "compound-2on3.rig.json",
                                  "two-point-anchor.rig.json"])
def test_rope_names_are_placed_clear_of_the_tension_labels(main_window, name):
    from tests.sketchpad.test_overlay import open_sample

    open_sample(main_window, name)
    ov = main_window.live.overlay
    rig = main_window.document.rig
    assert main_window.canvas.rope_names_in_overlay  # the rope items leave their own names out
    names = [lab for lab in ov.labels if lab.kind == "rope"]
    assert sorted(lab.lines[0] for lab in names) == sorted(r.name for r in rig.ropes)
    m = 1.0 / main_window.view.px_per_m

    def box(lab):
        x, y, w, h = lab.rect
        return (lab.at[0] + x * m, lab.at[1] + y * m, lab.at[0] + (x + w) * m, lab.at[1] + (y + h) * m)

    placed = [lab for lab in ov.labels if lab.placed]
    assert any(lab.kind == "rope" for lab in placed)
    for lab in placed:
        if lab.kind != "rope":
            continue
        a = box(lab)
        for other in placed:
            if other is lab:
                continue
            b = box(other)
            assert a[2] <= b[0] or b[2] <= a[0] or a[3] <= b[1] or b[3] <= a[1], (lab.text, other.text)


def test_with_the_piece_labels_off_the_rope_items_name_themselves(main_window):
    from tests.sketchpad.test_overlay import open_sample

    open_sample(main_window, "raft-3to1-redirect.rig.json")
    ov = main_window.live.overlay
    ov.set_layer("tensions", False)
    ov.set_layer("stretch", False)
    assert not main_window.canvas.rope_names_in_overlay
    assert not any(lab.kind == "rope" for lab in ov.labels)


def test_a_point_the_solver_moved_is_drawn_where_it_ended_with_a_ring_where_it_was_drawn(main_window, mouse, qtbot):
    from sketchpad.geometry import to_scene
    from tests.sketchpad.test_overlay import open_sample

    result = open_sample(main_window, "vector-pull.rig.json")
    canvas, view = main_window.canvas, main_window.view
    rig = main_window.document.rig
    hand = rig.point("V1")
    solved = result.points["V1"]
    assert math.dist(solved, hand.xy) > 0.5  # the sideways pull moves the ring along and off the line
    assert canvas.item_for(("point", "V1")).pos() == to_scene(*solved)
    force = next(i for i, f in enumerate(rig.forces) if f.at == "V1")
    assert canvas.item_for(("force", force)).pos() == to_scene(*solved)  # the pull arrow starts at the ring
    rope = canvas.item_for(("rope", rig.ropes[0].id))
    assert rope.shape().contains(to_scene(*solved)) or rope.boundingRect().contains(to_scene(*solved))
    assert canvas.drawn_places.pairs == [(to_scene(*hand.xy), to_scene(*solved))]
    # the marker at its solved place is what a click picks
    assert view.pick_point(view.mapFromScene(to_scene(*solved))) == "V1"
    # dragged, the point is shown at its drawn place again (under the cursor) until a settled result says otherwise
    from sketchpad.solved_places import moved_free_points

    mouse.drag(*solved, solved[0] + 1.0, solved[1])
    moved = main_window.document.rig.point("V1")
    assert moved.xy != hand.xy
    sched = main_window.live.scheduler
    sched.solve_now()
    QApplication.processEvents()
    assert canvas.shown_at == moved_free_points(main_window.document.rig, sched.result)
    where = canvas.shown_at.get("V1", moved.xy)
    assert canvas.item_for(("point", "V1")).pos() == to_scene(*where)


def test_moved_free_points_are_the_free_points_past_the_threshold():
    from sketchpad.solved_places import MOVED_M, moved_free_points

    rig = load_rig(SAMPLES / "vector-pull.rig.json")
    result = analyse(rig)
    got = moved_free_points(rig, result)
    for p in rig.points:  # independent of the function: every free point the solve moved past the threshold
        far = p.id in result.points and math.dist(result.points[p.id], p.xy) > MOVED_M
        assert (p.id in got) == (far and not p.is_fixed and p.kind != "person")
