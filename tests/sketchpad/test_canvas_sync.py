"""A sync that touches only the points a drag step changed (SketchScene._sync_moved) leaves the items a full sync makes.

After every edit (moves of one or several points, a point renamed, its kind changed, points added
and removed, the force unit changed, a zoom, the whole rig put back) the scene that followed the
edits is compared, item by item, with a new scene that synced the same rig from nothing.
"""

from __future__ import annotations

import dataclasses

from sketchpad.canvas import SketchScene
from sketchpad.items import FeatureItem, ForceItem, PointItem, RopeItem
from solver.model import Point
from tests.bench.fifty_ropes import fifty_rope_rig


def shown(scene: SketchScene) -> dict:
    """What every model item shows: its model data, place, text, bounds and (ropes) every path element."""
    out = {}
    for key, item in scene.items_by_key.items():
        common = (type(item).__name__, item.pos().toTuple(), item.boundingRect().getRect(), item.toolTip(),
                  item.isVisible())
        if isinstance(item, PointItem):
            out[key] = common + (item.point, item._label)
        elif isinstance(item, RopeItem):
            path = item._path
            elements = [(path.elementAt(i).type, path.elementAt(i).x, path.elementAt(i).y)
                        for i in range(path.elementCount())]
            glyphs = [(g[0], g[1].toTuple(), g[2], g[3].toTuple()) for g in item._glyphs]
            out[key] = common + (item.rope, item.colour.rgba(), item._k, elements, glyphs,
                                 item._label_pos.toTuple(), [item._arrow.at(i).toTuple() for i in range(item._arrow.size())])
        elif isinstance(item, ForceItem):
            out[key] = common + (item.force, item._text)
        elif isinstance(item, FeatureItem):
            out[key] = common + (item.feature,)
        else:
            raise AssertionError(f"an item kind this test does not know: {type(item).__name__}")
    return out


def test_drag_step_syncs_leave_the_items_a_full_sync_makes(qapp):
    scene = SketchScene()
    scene.set_scale(0.04)
    fast = []
    full_sync_moved = scene._sync_moved

    def counted(*args):
        done = full_sync_moved(*args)
        fast.append(done)
        return done

    scene._sync_moved = counted
    base = fifty_rope_rig()
    scene.sync(base)
    loaded = base.forces[0].at

    def moved(rig, pid, dx, dy):
        p = rig.point(pid)
        return rig.moved(pid, p.x + dx, p.y + dy)

    rig = base
    edits = [
        ("drag", lambda r: moved(r, "H4", 0.7, -0.3)),
        ("drag", lambda r: moved(r, "H4", 0.2, 0.4)),
        ("drag", lambda r: moved(r, loaded, 0.5, 0.5)),  # a force sits there: its arrow follows
        ("drag", lambda r: moved(moved(r, "M2", -0.4, 0.1), "R7", 0.0, -1.0)),  # two points at once
        ("drag", lambda r: r.with_point(dataclasses.replace(r.point("M3"), label="renamed"))),
        ("drag", lambda r: r),  # nothing changed
        ("full", lambda r: r.with_point(dataclasses.replace(r.point("M4"), kind="anchor"))),
        ("keep", lambda r: r),
        ("zoom", lambda r: r),
        ("drag", lambda r: moved(r, "H4", -1.0, 0.0)),
        ("full", lambda r: r.with_point(Point("K1", "point", 3.0, 4.0))),
        ("full", lambda r: r.without_point("K1")),
        ("full", lambda r: dataclasses.replace(r, display=dataclasses.replace(r.display, force="lbf"))),
        ("drag", lambda r: moved(r, loaded, -0.5, 0.2)),
        ("drag", lambda r: dataclasses.replace(r, points=kept[0].points)),  # every moved point put back (an undo)
    ]
    kept = []
    for n, (kind, edit) in enumerate(edits):
        rig = edit(rig)
        before = len(fast)
        if kind == "keep":
            kept.append(rig)
            continue
        if kind == "zoom":
            scene.set_scale(0.025)
        else:
            scene.sync(rig)
            assert fast[before:] == [kind == "drag"], f"edit {n}"
        fresh = SketchScene()
        fresh.set_scale(scene.scale_m_per_px)
        fresh.sync(rig)
        assert shown(scene) == shown(fresh), f"edit {n}"
    assert fast.count(True) >= 8


def test_remembered_text_advances_equal_fresh_font_metrics(qapp):
    """``text_advance`` (what a rope laid out again measures its name with) against a new QFontMetricsF each time,
    for the same text in several fonts and sizes, asked twice (the second answer is the remembered one)."""
    from PySide6.QtGui import QFontMetricsF

    from sketchpad import theme
    from sketchpad.items import text_advance

    for text in ("main4", "tag rope 7", "Ärmel — 12 m", ""):
        for size in (theme.SMALL_POINT_SIZE, theme.LABEL_POINT_SIZE, 15):
            for bold in (False, True):
                for _ in range(2):
                    font = theme.font(size, bold=bold)
                    assert text_advance(text, font) == QFontMetricsF(theme.font(size, bold=bold)).horizontalAdvance(text)
    scene = SketchScene()
    scene.set_scale(0.04)
    scene.sync(fifty_rope_rig())
    for key, item in scene.items_by_key.items():
        if isinstance(item, RopeItem):
            bold = QFontMetricsF(theme.font(theme.SMALL_POINT_SIZE, bold=True))
            assert item._label_w == bold.horizontalAdvance(item._label), key


def test_a_force_arrow_reads_its_bearing_in_plan_and_follows_a_view_change(qapp):
    # the sample's sideways pull points due east: 0 deg from east (rig-format.md) = bearing 090 (E)
    from solver.rigfile import load_rig
    from tests.conftest import SAMPLES

    rig = load_rig(SAMPLES / "vector-pull.rig.json")
    scene = SketchScene()
    scene.sync(rig)
    item = scene.items_by_key[("force", 0)]
    assert "0.40 kN → 090° (E)" in item._text
    scene.sync(dataclasses.replace(rig, view="elevation"))  # a side view has no bearing: the arrow shows it
    assert "→" not in item._text and item._text.startswith("0.40 kN")
