"""The widgets over the viewport a drag frame must redraw under are kept between frames (sketchpad.widgets_over).

:class:`WidgetsOver` keeps :func:`widget_rects`' answer until an event to the viewport, an ancestor
or a child of either says it may differ; each test compares it with a fresh :func:`widget_rects`
after every kind of change, and on screen with what Qt alone paints (a translucent widget laid
down twice, or a widget's place not redrawn, differs by far more than rounding).
"""

from __future__ import annotations

import shiboken6
from PySide6.QtCore import QRect, Qt
from PySide6.QtWidgets import QApplication, QLabel, QWidget

from sketchpad.widgets_over import WidgetsOver, widget_rects
from tests.sketchpad.test_drag_damage import screen, step
from tests.sketchpad.test_drag_layer import assert_same, drag_steps, fifty_rope_window
from tests.sketchpad.test_overlay_incremental import pixels


def _chip(parent: QWidget, text: str) -> QLabel:
    """A translucent label: laid down twice over the same pixels it shows darker than once."""
    chip = QLabel(text, parent)
    chip.setStyleSheet("QLabel { background: rgba(40, 90, 200, 110); color: black; padding: 4px; }")
    return chip


def assert_screen_fresh(view) -> None:
    """The backing store's viewport pixels equal Qt's own paint of the same part of the window (the widgets
    over the viewport included, siblings of the view too, which a grab of the viewport alone leaves out)."""
    shown = screen(view)
    vp, win = view.viewport(), view.window()
    view.use_drag_layer = False  # a grab into a pixmap, painted by Qt alone
    try:
        fresh = pixels(win.grab(QRect(vp.mapTo(win, vp.rect().topLeft()), vp.size())).toImage())
    finally:
        view.use_drag_layer = True
    assert_same(shown, fresh)


def test_kept_widgets_over_the_viewport_equal_a_fresh_walk_after_every_kind_of_change(main_window):
    vp = main_window.view.viewport()
    watch = WidgetsOver(vp)
    walks = []

    def check(kept_from_last: bool = False) -> tuple:
        """The kept answer, checked equal to a fresh walk; ``kept_from_last``: no event came since the last
        call, so it must be the last call's answer unwalked (else a walk must have been made)."""
        got = watch.rects()
        assert got == tuple(widget_rects(vp))
        if walks:
            assert (watch.walks == walks[-1]) == kept_from_last
        walks.append(watch.walks)
        return got

    check()
    check(kept_from_last=True)  # nothing changed: nothing walked
    check(kept_from_last=True)
    chip = _chip(vp, "added")  # hidden child: not over the viewport yet
    check()
    chip.show()
    assert chip.geometry() in check()
    chip.move(30, 40)
    assert QRect(30, 40, chip.width(), chip.height()) in check()
    chip.resize(90, 25)
    assert QRect(30, 40, 90, 25) in check()
    chip.hide()
    chip.setGeometry(50, 60, 70, 20)  # moved while hidden: Qt sends Move and Resize when it is shown
    check()
    chip.show()
    assert QRect(50, 60, 70, 20) in check()
    check(kept_from_last=True)
    # a sibling of the view in the window, over the viewport: above it counts, below it does not
    cover = _chip(main_window, "cover")
    at = vp.mapTo(main_window, vp.rect().topLeft())
    cover.setGeometry(at.x() + 100, at.y() + 80, 120, 30)
    cover.show()
    assert QRect(100, 80, 120, 30) in check()
    cover.lower()
    assert QRect(100, 80, 120, 30) not in check()
    cover.raise_()
    assert QRect(100, 80, 120, 30) in check()
    cover.stackUnder(main_window.view)
    assert QRect(100, 80, 120, 30) not in check()
    cover.raise_()
    check()
    main_window.resize(1100, 760)  # the viewport shrinks: sibling rects are clipped to it
    QApplication.processEvents()  # the window's layout resizes the view
    check()
    cover.setParent(main_window.view)  # reparented (hidden by Qt), then shown over the viewport
    check()
    cover.show()
    check()
    chip.setWindowFlags(Qt.Tool)  # a window of its own (hidden by Qt): Qt does not paint it over the viewport
    assert chip.isWindow() and QRect(50, 60, 70, 20) not in check()
    shiboken6.delete(cover)
    check()
    shiboken6.delete(chip)
    check()
    check(kept_from_last=True)
    assert watch.walks < len(walks)  # some calls were answered without a walk


def test_widgets_added_shown_and_moved_over_the_viewport_mid_drag_leave_the_screen_fresh(main_window):
    """Damage-only drag frames go on while translucent widgets come, move and go over the viewport,
    on it and over it from the window; the backing store stays what Qt alone paints."""
    doc, sched, view = fifty_rope_window(main_window)
    vp = view.viewport()
    layer = view.drag_layer
    drag_steps(doc, sched, view, "H4", 4)
    assert step(doc, sched, view, "H4", 4) == (1, 1)
    chip = _chip(vp, "on the viewport")
    chip.move(200, 150)
    assert step(doc, sched, view, "H4", 5) == (1, 1)
    chip.show()
    step(doc, sched, view, "H4", 6)
    assert step(doc, sched, view, "H4", 7) == (1, 1)
    assert_screen_fresh(view)
    chip.move(260, 190)
    step(doc, sched, view, "H4", 8)
    assert step(doc, sched, view, "H4", 9) == (1, 1)
    assert_screen_fresh(view)
    cover = _chip(main_window, "over the view")
    at = vp.mapTo(main_window, vp.rect().topLeft())
    cover.setGeometry(at.x() + 400, at.y() + 120, 160, 40)
    cover.show()
    step(doc, sched, view, "H4", 10)
    assert step(doc, sched, view, "H4", 11) == (1, 1)
    assert_screen_fresh(view)
    cover.move(at.x() + 420, at.y() + 200)
    chip.hide()
    step(doc, sched, view, "H4", 12)
    assert step(doc, sched, view, "H4", 13) == (1, 1)
    assert_screen_fresh(view)
    walks = layer._widgets.walks
    for i in range(14, 18):
        assert step(doc, sched, view, "H4", i) == (1, 1)
    assert layer._widgets.walks == walks  # nothing moved: the widgets were not walked again
    assert_screen_fresh(view)
