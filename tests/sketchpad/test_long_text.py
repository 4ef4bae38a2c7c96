"""Long text is drawn cut to a readable length, and drawn as text on vector pages.

A label as long as the format allows (200 characters) is drawn on the plan as its first 47
characters and "…" (the whole text stays in its tool tip); on PDF and SVG pages a label's halo
is text around text, not a stroked glyph outline (whose cost grew faster than the labels' number).
"""

from __future__ import annotations

from solver.analysis import analyse
from solver.model import Pass, Point, Rig, Rope
from sketchpad.short_text import DRAWN_CHARS, drawn


def _rig() -> Rig:
    return Rig(points=(Point("A1", "anchor", 0.0, 0.0, label="alder " + "x" * 194),
                       Point("B1", "anchor", 8.0, 2.0, label="rope grab"),
                       Point("P1", "person", 4.0, 6.0, label="safety officer")),
               ropes=(Rope("R1", "kern-11", (Pass("A1"), Pass("B1")), label="main " + "y" * 195),))


def test_drawn_cuts_long_text_and_keeps_short_text():
    assert drawn("rope grab") == "rope grab"
    cut = drawn("z" * 200)
    assert len(cut) == DRAWN_CHARS and cut.endswith("…")


def test_the_plan_draws_long_labels_cut_and_keeps_the_whole_text_in_the_tool_tip(main_window):
    window = main_window
    window.document.replace_all(_rig())
    item = window.canvas.item_for(("point", "A1"))
    assert item._label == drawn("alder " + "x" * 194) and len(item._label) == DRAWN_CHARS
    assert ("x" * 194) in item.toolTip()
    rope_item = window.canvas.item_for(("rope", "R1"))
    assert len(rope_item._label) == DRAWN_CHARS
    window.grab()


def test_vector_pages_draw_labels_as_text(tmp_path, qapp):
    from sketchpad.export import export_drawing

    rig = _rig()
    export_drawing(rig, tmp_path / "d.svg", result=analyse(rig))
    svg = (tmp_path / "d.svg").read_text(encoding="utf-8")
    # only the marker's own label names the person: a halo of stroked glyph outlines left no text in the file
    assert "safety officer" in svg
