"""Work saved between frames (memoised labels, retained overlay layers, the cached grid and HUD) changes nothing shown."""

from __future__ import annotations

import copy
import random

import numpy as np
import pytest
from PySide6.QtCore import QPointF, QRect, QRectF, Qt
from PySide6.QtGui import QColor, QImage, QPainter, QPixmap, QTransform
from PySide6.QtWidgets import QApplication

from sketchpad.retained import RetainedLayer
from tests.sketchpad.test_overlay import open_sample

# Compositing the same drawables into a layer first and then onto the canvas, or straight onto the
# canvas, differs only by 8-bit rounding of premultiplied colours: a channel may be off by a few units.
ROUNDING = 3


def pixels(image: QImage) -> np.ndarray:
    im = image.convertToFormat(QImage.Format_RGBA8888)
    rows = np.frombuffer(im.constBits(), np.uint8).reshape(im.height(), im.bytesPerLine() // 4, 4)
    return rows[:, : im.width()].astype(int)


def fresh(size: tuple[int, int], entries) -> QImage:
    """Every drawable painted afresh, in order, onto a transparent image."""
    image = QImage(size[0], size[1], QImage.Format_ARGB32_Premultiplied)
    image.fill(Qt.transparent)
    p = QPainter(image)
    p.setRenderHint(QPainter.Antialiasing, True)
    for _key, _box, (pix, at) in entries:
        p.drawPixmap(at, pix)
    p.end()
    return image


def _chip_entry(swatches: list, k: int, x: float, y: float):
    """A retained-layer entry (key, device box, blit op) of swatch ``k`` at (x, y) px."""
    pix = swatches[k]
    return ((k, x, y), QRect(int(x) - 1, int(y) - 1, pix.width() + 3, pix.height() + 3), (pix, QPointF(x, y)))


def _five_swatches() -> list:
    """Five translucent chips of growing size and turning hue (test data for the retained layers)."""
    swatches = []
    for i in range(5):
        pix = QPixmap(12 + 4 * i, 8 + 3 * i)
        pix.fill(QColor.fromHsv(70 * i, 180, 230, 80 + 30 * i))
        swatches.append(pix)
    return swatches


def fresh_used(entries, area: QRect) -> QRect:
    """The part of a layer over ``area`` that ``entries`` can touch (layer px), from all their boxes afresh."""
    if not entries:
        return QRect()
    r = entries[0][1]
    for e in entries[1:]:
        r = r.united(e[1])
    return r.translated(-area.x(), -area.y()).intersected(QRect(0, 0, area.width(), area.height()))


def test_a_retained_layer_redrawn_only_where_drawables_changed_equals_one_drawn_afresh():
    rng = random.Random(5)
    swatches = []
    for i in range(6):  # translucent chips that overlap each other
        pix = QPixmap(14 + 5 * i, 9 + 3 * i)
        pix.fill(QColor.fromHsv(60 * i, 200, 220, 90 + 25 * i))
        swatches.append(pix)

    def entry(k, x, y):
        return _chip_entry(swatches, k, x, y)

    things = [(rng.randrange(6), rng.uniform(0, 180), rng.uniform(0, 120)) for _ in range(40)]
    layer = RetainedLayer()
    area = QRect(0, 0, 220, 150)
    for step in range(25):
        for _ in range(rng.randrange(1, 4)):  # a few drawables move, appear or go away, as in a drag
            i = rng.randrange(len(things))
            k, x, y = things[i]
            if rng.random() < 0.7:
                things[i] = (k, x + rng.uniform(-6, 6), y + rng.uniform(-6, 6))
            else:
                things[i] = (rng.randrange(6), rng.uniform(0, 180), rng.uniform(0, 120))
        entries = [entry(*t) for t in things]
        got = pixels(layer.update(("frame",), area, entries))
        want = pixels(fresh((220, 150), entries))
        assert np.abs(got - want).max() <= ROUNDING, f"step {step}"
        used = layer.used()  # what the overlay composites: everything drawn lies inside it
        assert used == fresh_used(entries, area), f"step {step}"  # kept from the last frame's union
        outside = np.ones(got.shape[:2], bool)
        outside[used.top():used.bottom() + 1, used.left():used.right() + 1] = False
        assert not got[outside][:, 3].any() and got[~outside][:, 3].any(), f"step {step}"
    assert layer.partial_redraws >= 20  # the layer was mostly patched, not redrawn


def test_a_retained_layer_fed_kept_entry_objects_equals_one_drawn_afresh():
    """Entries kept from the last frame (the same objects, as the overlay hands them in), entries rebuilt
    with equal keys, the same entry object twice, and a few moved, added or removed ones: the layer
    patched frame by frame equals the drawables painted afresh, and only the changed ones cost a redraw."""
    rng = random.Random(11)
    swatches = _five_swatches()

    def entry(k, x, y):
        return _chip_entry(swatches, k, x, y)

    entries = [entry(rng.randrange(5), rng.uniform(0, 180), rng.uniform(0, 120)) for _ in range(40)]
    layer = RetainedLayer()
    area = QRect(0, 0, 220, 150)
    layer.update(("frame",), area, entries)
    for step in range(30):
        entries = list(entries)  # a new list each frame, most entry objects kept
        for _ in range(rng.randrange(1, 4)):
            i = rng.randrange(len(entries))
            roll = rng.random()
            if roll < 0.4:  # moved
                (k, x, y) = entries[i][0]
                entries[i] = entry(k, x + rng.uniform(-6, 6), y + rng.uniform(-6, 6))
            elif roll < 0.6:  # rebuilt as it was: an equal key, another object
                entries[i] = entry(*entries[i][0])
            elif roll < 0.75:  # shown twice (the same object) or once again
                j = rng.randrange(len(entries))
                entries[j] = entries[i]
            elif roll < 0.9 and len(entries) > 20:
                del entries[i]
            else:
                entries.insert(i, entry(rng.randrange(5), rng.uniform(0, 180), rng.uniform(0, 120)))
        got = pixels(layer.update(("frame",), area, entries))
        want = pixels(fresh((220, 150), entries))
        assert np.abs(got - want).max() <= ROUNDING, f"step {step}"
        used = layer.used()
        assert used == fresh_used(entries, area), f"step {step}"
        outside = np.ones(got.shape[:2], bool)
        outside[used.top():used.bottom() + 1, used.left():used.right() + 1] = False
        assert not got[outside][:, 3].any(), f"step {step}"
    assert layer.full_redraws == 1 and layer.partial_redraws >= 15
    before = layer.partial_redraws
    layer.update(("frame",), area, [entry(*e[0]) if n % 2 else e for n, e in enumerate(entries)])
    assert layer.partial_redraws == before  # every entry rebuilt or kept as it was: nothing redrawn


def test_a_retained_layer_compares_kept_entries_place_by_place_as_a_full_comparison_of_keys():
    """A list as long as the last one is compared place by place (an object kept in its place is unchanged).
    Fed kept objects that move, are rebuilt with equal keys, are shown twice or change places, the layer
    redraws exactly where a layer fed every entry as a new object (so comparing every key) does, with the
    same pixels; until an entry changes places both equal the drawables painted afresh."""
    rng = random.Random(23)
    swatches = _five_swatches()

    def entry(k, x, y):
        return _chip_entry(swatches, k, x, y)

    entries = [entry(rng.randrange(5), rng.uniform(0, 180), rng.uniform(0, 120)) for _ in range(40)]
    kept, afresh = RetainedLayer(), RetainedLayer()
    area = QRect(0, 0, 220, 150)
    kept.update(("frame",), area, entries)
    afresh.update(("frame",), area, [entry(*e[0]) for e in entries])
    kept.take_damage(), afresh.take_damage()
    swapped = False  # after a change of places the order of overlapping chips differs from the last redraw (both layers alike)
    for step in range(40):
        entries = list(entries)
        for _ in range(rng.randrange(1, 4)):
            i, j = rng.randrange(len(entries)), rng.randrange(len(entries))
            roll = rng.random()
            if roll < 0.4:
                (k, x, y) = entries[i][0]
                entries[i] = entry(k, x + rng.uniform(-6, 6), y + rng.uniform(-6, 6))
            elif roll < 0.6:
                entries[i] = entry(*entries[i][0])
            elif roll < 0.8:
                entries[j] = entries[i]
            elif i != j:
                entries[i], entries[j] = entries[j], entries[i]
                swapped = True
        got = pixels(kept.update(("frame",), area, entries))
        want = pixels(afresh.update(("frame",), area, [entry(*e[0]) for e in entries]))
        assert kept.take_damage() == afresh.take_damage(), f"step {step}"
        assert (got == want).all(), f"step {step}"
        if not swapped:
            assert np.abs(got - pixels(fresh((220, 150), entries))).max() <= ROUNDING, f"step {step}"
    assert kept.full_redraws == afresh.full_redraws == 1 and kept.partial_redraws >= 15


def test_a_retained_layers_used_part_kept_from_the_last_frame_equals_the_one_of_its_entries_afresh():
    """The used part follows entries moving inside it (kept: no walk over every entry), the entry that made
    an edge going (the part shrinks) and entries coming past an edge (it grows)."""
    pix = QPixmap(10, 8)
    pix.fill(QColor(0, 120, 200, 150))
    entries = [_chip_entry([pix], 0, 20 + 30 * i, 15 + 25 * j) for i in range(5) for j in range(4)]
    layer = RetainedLayer()
    area = QRect(0, 0, 240, 160)
    layer.update(("f",), area, entries)
    assert layer.used() == fresh_used(entries, area)
    inner = 1 * 4 + 1
    entries = list(entries)
    entries[inner] = _chip_entry([pix], 0, 52, 43)  # an inner chip moves: the union is kept, not walked again
    layer.update(("f",), area, entries)
    assert layer._union is not None and layer.used() == fresh_used(entries, area)
    right = layer.used().right()
    entries = [e for e in entries if e[0][1] < 140]  # the right column goes
    layer.update(("f",), area, entries)
    assert layer.used() == fresh_used(entries, area) and layer.used().right() < right
    entries = entries + [_chip_entry([pix], 0, 3, 140)]  # one comes past the left and bottom edges
    layer.update(("f",), area, entries)
    assert layer.used() == fresh_used(entries, area) and layer.used().left() == 2
    entries = entries[1:]  # the top-left chip goes: its corner made two edges
    layer.update(("f",), area, entries)
    assert layer.used() == fresh_used(entries, area)


def test_duplicate_drawables_are_each_kept_once_one_of_them_goes():
    pix = QPixmap(10, 10)
    pix.fill(QColor(200, 0, 0, 100))
    e = ((1,), QRect(4, 4, 13, 13), (pix, QPointF(5, 5)))
    layer = RetainedLayer()
    area = QRect(0, 0, 30, 30)
    two = pixels(layer.update(("f",), area, [e, e])).copy()
    one = pixels(layer.update(("f",), area, [e]))
    assert np.abs(one - pixels(fresh((30, 30), [e]))).max() <= ROUNDING
    assert (two[8, 8, 3] > one[8, 8, 3])  # two translucent layers were more opaque than one


def test_the_overlay_after_a_drag_through_the_viewport_matches_the_overlay_drawn_afresh(main_window, mouse, qtbot):
    open_sample(main_window, "two-point-anchor.rig.json")
    sched, vp = main_window.live.scheduler, main_window.view.viewport()
    item = main_window.live.overlay.force_item
    h = main_window.document.rig.point("H1")
    mouse.press(h.x, h.y)
    for i in range(1, 7):
        mouse.move(h.x + 0.3 * i, h.y - 0.5 * i)
        qtbot.waitUntil(lambda: sched.result is not None and sched.result.revision == main_window.document.revision,
                        timeout=3000)
        vp.repaint()  # a frame per step, as the screen shows them
    assert item.marks_redraws["partial"] > 0  # drag frames were patched, not drawn afresh
    patched = pixels(vp.grab().toImage())
    item.forget_kept()
    drawn_afresh = pixels(vp.grab().toImage())
    d = np.abs(patched - drawn_afresh).max(axis=2)
    ys, xs = np.nonzero(d > ROUNDING)
    assert not len(ys), f"{len(ys)} pixels differ, x {xs.min()}-{xs.max()}, y {ys.min()}-{ys.max()}, by up to {d.max()}"
    mouse.release(h.x + 1.8, h.y - 3.0)


def test_the_cached_grid_follows_zoom_and_the_grid_toggle(main_window):
    view, vp = main_window.view, main_window.view.viewport()

    def direct() -> np.ndarray:
        """The background drawn straight into an image through the view's transform (no cache)."""
        image = QImage(vp.width(), vp.height(), QImage.Format_ARGB32_Premultiplied)
        p = QPainter(image)
        p.setTransform(view.viewportTransform())
        view._paint_background(p, view.viewportTransform().inverted()[0].mapRect(QRectF(vp.rect())))
        p.end()
        return pixels(image)

    # clear of the scale bar, the north arrow, the banner and the legend (which an empty rig's solve may show)
    middle = (slice(100, vp.height() - 300), slice(120, vp.width() - 300))
    for step in ("start", "zoom", "grid off", "grid on", "zoom out"):
        if step == "zoom":
            view.zoom_at(1.7, vp.rect().center())
        elif step == "zoom out":
            view.zoom_at(0.2, vp.rect().center())
        elif step.startswith("grid"):
            main_window.action_grid.setChecked(step == "grid on")
        shown = pixels(vp.grab().toImage())
        d = np.abs(shown[middle] - direct()[middle]).max(axis=2)
        ys, xs = np.nonzero(d)
        assert not len(ys), (step, len(ys), xs.min(), xs.max(), ys.min(), ys.max(), d.max())


@pytest.mark.parametrize("unit", ["metric", "imperial"])
def test_the_scale_bar_and_north_arrow_fit_the_rects_their_cached_pixmaps_cover(main_window, unit):
    view, vp = main_window.view, main_window.view.viewport()
    main_window.set_units(unit)
    lengths = set()
    for factor in (1.0, 3.0, 0.25, 11.0):
        view.zoom_at(factor, vp.rect().center())
        image = QImage(vp.width(), vp.height(), QImage.Format_ARGB32_Premultiplied)
        image.fill(Qt.transparent)
        p = QPainter(image)
        p.setRenderHint(QPainter.Antialiasing, True)
        view._draw_scale_bar(p)
        view._draw_orientation(p)
        p.end()
        inked = pixels(image)[:, :, 3] > 0
        covered = np.zeros_like(inked)
        for r in (view._scale_bar_rect(view.scale_bar_length_m()), view._orientation_rect()):
            covered[r.top():r.bottom() + 1, r.left():r.right() + 1] = True
        assert inked.any() and not (inked & ~covered).any(), f"zoom x{factor}: HUD ink outside its cached rect"
        lengths.add(view.scale_bar_length_m())
        bar = view._scale_bar_rect(view.scale_bar_length_m())
        shown = pixels(vp.grab().toImage())[bar.top():bar.bottom(), bar.left():bar.right()]
        assert np.abs(shown[:, :, 3] - 255).max() == 0  # drawn over the paper, not left transparent
    assert len(lengths) >= 3  # the bar's length followed the zoom


def _label_fields(lab) -> tuple:
    return (lab.kind, lab.key, lab.lines, dict(lab.values), lab.colour.rgba(), lab.priority, lab.base, lab.end, lab.prefer)


def test_labels_reused_between_drag_solves_equal_labels_built_afresh():
    from sketchpad.live_solve import warm_start
    from sketchpad.overlay import LAYERS, build_labels
    from solver.equilibrium import solve
    from tests.bench.fifty_ropes import fifty_rope_rig

    rig = fifty_rope_rig()
    h = rig.point("H4")
    memo: dict = {}
    prev_rig, prev = rig, solve(rig)
    reused = 0
    got: list = []
    for i in range(1, 6):
        moved = rig.moved("H4", h.x + 1.5 * i, h.y - 0.5 * i)
        res = solve(moved, start=warm_start(moved, prev_rig, prev))
        assert res.ok, res.message
        before = got  # the last call's labels (kept alive, so their ids stay theirs)
        got, got_arrows = build_labels(moved, res, LAYERS, memo)
        want, want_arrows = build_labels(moved, res, LAYERS)
        assert [_label_fields(a) for a in got] == [_label_fields(b) for b in want]
        assert [(a.point_id, a.base, a.direction, a.colour.rgba()) for a in got_arrows] == \
            [(a.point_id, a.base, a.direction, a.colour.rgba()) for a in want_arrows]
        reused += sum(any(lab is old for old in before) for lab in got)
        prev_rig, prev = moved, res
    assert reused > 100  # the parts of the rig the drag did not touch kept their labels
    # a change of display unit builds every label again, in the new unit
    from sketchpad.tools import set_display

    in_lbf = set_display(prev_rig, "ft", "lbf")
    got, _ = build_labels(in_lbf, prev, LAYERS, memo)
    tension_lines = [lab.lines[0] for lab in got if lab.kind == "tension" and lab.lines[0] != "slack"]
    assert tension_lines and all(line.endswith("lbf") for line in tension_lines)


def test_rope_items_follow_every_moved_point_when_only_the_ropes_through_it_are_laid_out_again(main_window):
    from sketchpad.canvas import SketchScene
    from tests.bench.fifty_ropes import fifty_rope_rig

    doc, scene = main_window.document, main_window.view.sketch_scene
    doc.replace_all(fifty_rope_rig())
    rig = doc.rig
    for pid, dx, dy in (("H4", 1.0, -2.0), ("M2", -0.5, 0.7), ("H4", 3.0, 1.0), ("R7", 0.0, -1.5)):
        p = rig.point(pid)
        rig = rig.moved(pid, p.x + dx, p.y + dy)
        doc.preview(rig)  # a drag step: same ropes, one point moved
    fresh = SketchScene()  # the same rig laid out from nothing
    fresh.set_scale(scene.scale_m_per_px)
    fresh.sync(rig)

    def outline(item) -> list[tuple[float, float]]:
        path = item._path
        return [(round(path.elementAt(i).x, 9), round(path.elementAt(i).y, 9)) for i in range(path.elementCount())]

    for r in rig.ropes:
        got, want = scene.item_for(("rope", r.id)), fresh.item_for(("rope", r.id))
        assert outline(got) == outline(want), r.id


def test_placement_with_obstacles_kept_between_drag_steps_equals_placement_from_scratch(main_window):
    from tests.bench.fifty_ropes import fifty_rope_rig
    from tests.sketchpad.test_kept_placement import placed_from_scratch, placement, shown_memo, view_px

    doc, sched, view = main_window.document, main_window.live.scheduler, main_window.view
    doc.replace_all(fifty_rope_rig())
    view.zoom_to_fit()
    view.zoom_at(2.0, view.viewport().rect().center())  # room for more labels, so some of them move
    # solve in this thread: a slow first solve (cold imports) would send ``fire`` to the worker thread,
    # and the overlay compared below would then still be the last step's
    sched.background, sched.background_after_ms = False, float("inf")
    sched.settle_timer.setInterval(600_000)  # every step below is part of one drag
    sched.solve_now()
    ov = main_window.live.overlay
    rig = doc.rig
    h = rig.point("H4")
    counts = dict(ov.placement_counts)
    for i in range(1, 8):
        previous = shown_memo(ov, view_px(view))  # what was shown before the step, its memo made afresh
        doc.preview(rig.moved("H4", h.x + 0.8 * i, h.y - 0.4 * i))
        # a drag step however long the last one took (a slow step on a busy machine would otherwise be
        # solved as a pause, whose full analysis first drops the hidden labels from the memo)
        sched._change_gap_ms = 1.0
        sched.fire()  # relayout with the kept obstacles and the memo of the last step
        assert (ov.skipped, placement(ov.labels)) == placed_from_scratch(ov, view_px(view), previous, True), i
    assert ov.placement_counts["continued"] - counts["continued"] >= 6  # by the fast path: all but the first
    assert sum(lab.placed for lab in ov.labels) > 50


def test_the_legend_counts_the_hidden_labels_again_after_a_zoom(main_window):
    from tests.bench.fifty_ropes import fifty_rope_rig

    main_window.document.replace_all(fifty_rope_rig())
    main_window.view.zoom_to_fit()
    main_window.live.scheduler.solve_now()
    ov, view = main_window.live.overlay, main_window.view

    def hidden_line() -> str:
        return next((line for line in ov.legend.lines if "hidden" in line), "")

    fitted = ov.skipped
    assert fitted > 0 and hidden_line().startswith(f"{fitted} labels hidden")
    view.zoom_at(2.5, view.viewport().rect().center())
    assert ov.skipped != fitted  # zoomed in, there is room for more of them
    assert hidden_line() == ("" if not ov.skipped else
                             f"{ov.skipped} label{'s' if ov.skipped != 1 else ''} hidden to avoid overlap: zoom in")


def test_a_full_pixmap_cache_forgets_its_oldest_entries_not_all():
    from sketchpad.items import drop_oldest

    cache = {i: str(i) for i in range(100)}
    drop_oldest(cache)
    assert list(cache) == list(range(25, 100))  # the newest three quarters (what is on screen now) stay
    one = {"a": 1}
    drop_oldest(one)
    assert one == {}


def test_a_label_pixmap_from_a_shared_box_equals_the_label_drawn_afresh_as_vectors():
    from sketchpad import theme
    from sketchpad.overlay import ForceItem, OverlayLabel

    item = ForceItem()
    red, green = QColor(theme.UTIL_RAMP[-1][1]), QColor(theme.UTIL_RAMP[0][1])
    labels = [
        OverlayLabel("tension", ("r", 0), ("1.23 kN", "0.4 % stretch"), {}, red, 50.0, (0.0, 0.0), (1.0, 0.0)),
        OverlayLabel("tension", ("r", 1), ("1.24 kN", "0.4 % stretch"), {}, red, 50.0, (0.0, 0.0), (1.0, 0.0)),  # same box
        OverlayLabel("angle", "r@P", ("turn 37°",), {}, theme.ANGLE_TEXT, 30.0, (0.0, 0.0)),
        OverlayLabel("anchor", "A", ("A 3.10 kN", "41 % of allowed at 10:1"), {}, green, 90.0, (0.0, 0.0)),
    ]
    for grey in (False, True):
        item.grey = grey
        for lab in labels:
            colour = theme.OVERLAY_GREY if grey else lab.colour
            got = item.label_pixmap(lab, colour).toImage()
            w, h = item.label_size(lab)
            want = QImage(got.width(), got.height(), QImage.Format_ARGB32_Premultiplied)
            want.fill(Qt.transparent)
            p = QPainter(want)
            p.setRenderHint(QPainter.Antialiasing, True)
            p.setRenderHint(QPainter.TextAntialiasing, True)
            item.paint_label_vector(p, lab, QRectF(0.0, 0.0, w, h), colour)
            p.end()
            assert (pixels(got) == pixels(want)).all(), (lab.lines, grey)
    assert item.cache_sizes()["boxes"] == 6  # 8 labels, 3 sizes, 2 colours each: the two tension labels shared a box


def test_bands_of_pieces_past_the_top_of_the_ramp_are_one_band_and_draw_as_laid_down_afresh():
    from solver.model import Rig
    from solver.result import Result, SegmentResult

    from sketchpad.overlay import ForceItem

    # utilizations 1.55 and 1.7 fall in the two top buckets, which have the same (last) ramp colour;
    # the other two pieces cross them in other colours
    pos = {"a": (0.0, 0.0), "b": (6.0, 4.0), "c": (0.0, 4.0), "d": (6.0, 0.0), "e": (3.0, -1.0), "f": (3.0, 5.0)}
    segs = tuple(SegmentResult(rope=f"r{i}", index=0, from_point=a, to_point=b, tension_N=1000.0, length_m=5.0,
                               strain=0.01, utilization=u)
                 for i, (a, b, u) in enumerate([("a", "b", 1.55), ("c", "d", 1.7), ("e", "f", 0.3), ("a", "f", 0.9)]))
    item = ForceItem()
    item.set_bands(Rig(), Result(status="ok", segments=segs), pos)
    colours = [pen.color().rgba() for pen, _path in item.bands]
    assert len(item.bands) == 3 and len(set(colours)) == 3

    def draw(how) -> np.ndarray:
        image = QImage(200, 160, QImage.Format_ARGB32_Premultiplied)
        image.fill(Qt.transparent)
        p = QPainter(image)
        p.setRenderHint(QPainter.Antialiasing, True)
        p.setTransform(QTransform.fromScale(25.0, 25.0) * QTransform.fromTranslate(15.0, 40.0))
        how(p)
        p.end()
        return pixels(image)

    def retained(p):
        area = QRect(0, 0, 200, 160)
        t = p.worldTransform()
        p.resetTransform()
        for image, at, alpha in item._retained_bands(t.m11(), t.m22(), t.dx(), t.dy(), area):
            p.setOpacity(alpha)
            p.drawImage(at, image)

    got, want = draw(retained), draw(item._paint_bands_layered)
    assert (want[:, :, 3] > 0).sum() > 2000  # the bands were drawn
    assert np.abs(got - want).max() <= ROUNDING


def test_labels_hidden_during_a_drag_stay_hidden_and_get_a_full_search_once_it_pauses(main_window):
    from tests.bench.fifty_ropes import fifty_rope_rig
    from tests.sketchpad.test_kept_placement import placed_from_scratch, placement, shown_memo, view_px

    doc, sched, view = main_window.document, main_window.live.scheduler, main_window.view
    doc.replace_all(fifty_rope_rig())
    view.zoom_to_fit()  # crowded: most labels are hidden
    sched.background, sched.background_after_ms = False, float("inf")
    sched.solve_now()
    sched.settle_timer.setInterval(600_000)  # every step below is part of one drag, however slow the machine
    ov = main_window.live.overlay
    rig = doc.rig
    h = rig.point("H4")
    hidden_before = None
    for i in range(1, 6):
        doc.preview(rig.moved("H4", h.x + 0.6 * i, h.y - 0.3 * i))
        sched.fire()
        assert not sched.settled
        hidden = {(lab.kind, lab.key) for lab in ov.labels if not lab.placed}
        assert len(hidden) == ov.skipped and any(f"{ov.skipped} labels hidden" in line for line in ov.legend.lines)
        if hidden_before is not None:
            assert hidden_before <= hidden  # nothing hidden at the last step popped up mid-drag
        hidden_before = hidden
    memo = shown_memo(ov, view_px(view), placed_only=True)  # what a pause keeps of the drag's placement
    sched.solve_now()  # the drag paused: the settled result
    assert sched.settled
    # every hidden label searched afresh
    assert (ov.skipped, placement(ov.labels)) == placed_from_scratch(ov, view_px(view), memo, False)


def test_the_legend_painted_by_the_view_shows_in_the_frame_where_its_key_says_and_goes_when_hidden(main_window):
    from tests.bench.fifty_ropes import fifty_rope_rig

    main_window.document.replace_all(fifty_rope_rig())
    main_window.view.zoom_to_fit()
    main_window.live.scheduler.solve_now()
    ov, vp = main_window.live.overlay, main_window.view.viewport()
    legend = ov.legend
    assert legend.shown and legend.isHidden()  # the widget only holds the key's size and place
    g = legend.geometry()
    assert vp.rect().contains(g)
    shown = pixels(vp.grab().toImage())[g.top():g.bottom() + 1, g.left():g.right() + 1]
    key = QImage(g.width(), g.height(), QImage.Format_ARGB32_Premultiplied)
    key.fill(Qt.transparent)
    p = QPainter(key)
    p.translate(-legend.x(), -legend.y())
    legend.paint_on(p, None)  # the key as vectors, at its place
    p.end()
    ink = pixels(key)
    text = (ink[:, :, 3] == 255) & (ink[:, :, :3].sum(axis=2) < 150)  # the key's dark text, drawn opaque
    assert text.sum() > 200 and np.abs(shown[text] - ink[text]).max() <= ROUNDING  # drawn where the key says
    legend.set_shown(False)  # what the overlay does when there is no result to explain
    gone = pixels(vp.grab().toImage())[g.top():g.bottom() + 1, g.left():g.right() + 1]
    assert np.abs(gone[text] - ink[text]).max() > 50


def test_placement_continued_through_drag_steps_and_zooms_equals_placement_from_scratch(main_window):
    """At every drag step, also after zooms (labels placed afresh), the overlay's placement equals place_labels
    from scratch handed the memo of what was shown before (made afresh); when the drag pauses, labels hidden
    during it are searched again and some are placed; a memo lent a changed label makes that label's entry afresh."""
    from tests.sketchpad.test_drag_layer import fifty_rope_window
    from tests.sketchpad.test_kept_placement import placed_from_scratch, placement, shown_memo, view_px

    from sketchpad.main_window import DEFAULT_SIZE
    from sketchpad.overlay.placement import placement_memo

    main_window.resize(*DEFAULT_SIZE)  # the canvas the app opens with (room for the labels hidden mid-drag)
    QApplication.processEvents()
    doc, sched, view = fifty_rope_window(main_window)  # every step below is part of one drag
    ov = main_window.live.overlay
    rig = doc.rig
    h = rig.point("H4")
    counts = dict(ov.placement_counts)
    for i in range(1, 12):
        if i == 5:
            view.zoom_at(1.5, view.viewport().rect().center())
        if i == 8:
            view.zoom_at(1.5, view.viewport().rect().topLeft())
            if ov.zoom_pacer.pending:  # a second zoom this soon is one wheel gesture: let it end (labels placed afresh)
                ov.zoom_pacer.settle()
        previous = shown_memo(ov, view_px(view))
        doc.preview(rig.moved("H4", h.x + 0.5 * i, h.y - 0.3 * i))
        # a drag step however long the last one took (a slow step on a busy machine would otherwise be
        # solved as a pause, which first drops the hidden labels the end of this test looks for)
        sched._change_gap_ms = 1.0
        sched.fire()
        assert (ov.skipped, placement(ov.labels)) == placed_from_scratch(ov, view_px(view), previous, True), i
    assert ov.placement_counts["continued"] - counts["continued"] >= 8  # the fast path was taken
    hidden = {(lab.kind, lab.key) for lab in ov.labels if not lab.placed}
    memo = shown_memo(ov, view_px(view), placed_only=True)
    sched.solve_now()  # the drag pauses: labels hidden during it are searched afresh, some now placed
    assert (ov.skipped, placement(ov.labels)) == placed_from_scratch(ov, view_px(view), memo, False)
    assert any(lab.placed for lab in ov.labels if (lab.kind, lab.key) in hidden)
    # a label object that stays but is placed elsewhere, hidden or shown again gets a fresh entry
    to_px = view_px(view)
    labels = copy.deepcopy(ov.labels)
    lent = placement_memo(labels, to_px)
    labs = [lab for lab in labels if lab.placed][:3]
    labs[0].at = (labs[0].at[0] + 1.0, labs[0].at[1])
    labs[1].placed = False
    labs[2].rect = (labs[2].rect[0] + 3.0, *labs[2].rect[1:])
    assert placement_memo(labels, to_px, lent) == placement_memo(labels, to_px)


