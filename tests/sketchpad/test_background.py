"""The site picture: import, calibrate by two clicks and a typed distance, then measure; rotate, move, fade;
drawn under everything; saved with the rig.

Driven through the main window's viewport (tests/sketchpad/conftest.py ``main_window``/``mouse``).
The picture is a test image with marks a known number of pixels apart, so the
expected scale is plain arithmetic: real distance / pixel distance.
"""

from __future__ import annotations

import math
import random

import pytest
from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QColor, QImage, QPainter

from sketchpad import theme
from sketchpad.background import calibrated, image_to_site, scene_transform, site_to_image
from sketchpad.geometry import to_scene
from solver import rigfile
from solver.model import SiteImage

FT = 0.3048  # m, NIST SP 811
W_PX, H_PX = 400, 200
MARK_A = (50, 100)  # picture pixels; 300 px apart along the row
MARK_B = (350, 100)
MARK_C = (50, 20)  # 80 px above A


@pytest.fixture(autouse=True)
def _data_dir(tmp_path, monkeypatch):
    monkeypatch.setenv("ROPEWRIGHT_DATA_DIR", str(tmp_path / "data"))


@pytest.fixture
def picture(tmp_path):
    img = QImage(W_PX, H_PX, QImage.Format.Format_RGB32)
    img.fill(QColor("#dfe9d0"))
    p = QPainter(img)
    p.setPen(QColor("black"))
    for u, v in (MARK_A, MARK_B, MARK_C):
        p.drawLine(u - 6, v, u + 6, v)
        p.drawLine(u, v - 6, u, v + 6)
    p.end()
    path = tmp_path / "site-photo.png"
    assert img.save(str(path))
    return path


def _screen_px_m(view) -> float:
    """Metres per screen pixel at the view's current zoom."""
    return 1.0 / view.transform().m11()


def _calibrate(window, mouse, a_px, b_px, answers):
    """Start calibration, click two picture pixels where they are drawn now, answer the distance prompt(s)."""
    asked = []
    replies = list(answers)

    def ask(_parent, prompt, unit):
        asked.append(prompt)
        return replies.pop(0)

    tool = window.background.calibrate_tool
    tool.ask_distance = ask
    window.background.actions["calibrate"].trigger()
    img = window.document.rig.site.image
    mouse.click(*image_to_site(img, *a_px))
    mouse.click(*image_to_site(img, *b_px))
    return asked


def _measure(window, mouse, a_site, b_site) -> float:
    """Measure with the canvas's own measure tool (a drag), as a user would."""
    window.set_tool("measure")
    mouse.drag(*a_site, *b_site)
    return window.tool.last_m


def test_placement_maths_round_trips_and_matches_the_scene_transform():
    rng = random.Random(4)
    for _ in range(40):
        img = SiteImage(
            origin=(rng.uniform(-50, 50), rng.uniform(-50, 50)),
            metres_per_pixel=rng.uniform(0.001, 0.5),
            rotation_deg=rng.uniform(-360, 360),
        )
        u, v = rng.uniform(0, 3000), rng.uniform(0, 2000)
        x, y = image_to_site(img, u, v)
        assert site_to_image(img, x, y) == pytest.approx((u, v), abs=1e-6)
        mapped = scene_transform(img).map(QPointF(u, v))
        expect = to_scene(x, y)
        assert (mapped.x(), mapped.y()) == pytest.approx((expect.x(), expect.y()), abs=1e-6)
        # pixel distances scale by metres_per_pixel whatever the rotation
        x2, y2 = image_to_site(img, u + 100.0, v)
        assert math.hypot(x2 - x, y2 - y) == pytest.approx(100.0 * img.metres_per_pixel, rel=1e-12)


def test_calibration_keeps_the_first_click_and_sets_the_scale():
    img = SiteImage(origin=(3.0, 4.0), metres_per_pixel=0.1, rotation_deg=30.0)
    p1, p2 = image_to_site(img, *MARK_A), image_to_site(img, *MARK_B)
    new = calibrated(img, p1, p2, 15.0)
    assert new.metres_per_pixel == pytest.approx(15.0 / 300.0, rel=1e-12)
    assert image_to_site(new, *MARK_A) == pytest.approx(p1, abs=1e-9)
    with pytest.raises(ValueError, match="more than zero"):
        calibrated(img, p1, p2, 0.0)
    with pytest.raises(ValueError, match="less than one picture pixel"):
        calibrated(img, p1, p1, 5.0)


def test_calibrate_by_two_clicks_then_measure_that_distance(main_window, mouse, picture, qtbot):
    w = main_window
    assert w.background.import_image(picture)
    img0 = w.document.rig.site.image
    assert img0 is not None and img0.data_base64 and img0.file is None  # unsaved sketch: picture kept inside
    w.view.zoom_to_fit()
    asked = _calibrate(w, mouse, MARK_A, MARK_B, ["abc", "15 m"])
    assert len(asked) == 2 and "not a number" in asked[1]  # the bad answer is named, then asked again
    img = w.document.rig.site.image
    px = _screen_px_m(w.view)
    # the clicks land on whole screen pixels: allow one screen pixel at each end, in picture pixels
    picture_px_per_screen_px = px / img0.metres_per_pixel
    assert img.metres_per_pixel == pytest.approx(15.0 / 300.0, rel=2 * picture_px_per_screen_px / 300.0)
    # measure between the marks where they are drawn now: 15 m within a screen pixel's worth at each end
    measured = _measure(w, mouse, image_to_site(img, *MARK_A), image_to_site(img, *MARK_B))
    assert measured == pytest.approx(15.0, abs=2 * _screen_px_m(w.view))
    # and a distance never clicked: A to C is 80 px = 4 m at 0.05 m/px
    measured_ac = _measure(w, mouse, image_to_site(img, *MARK_A), image_to_site(img, *MARK_C))
    assert measured_ac == pytest.approx(4.0, abs=2 * _screen_px_m(w.view) + 80 * abs(img.metres_per_pixel - 0.05))
    assert "Distance" in w.statusBar().currentMessage()
    # one undo returns to the uncalibrated picture
    w.undo()
    assert w.document.rig.site.image == img0


def test_calibrate_in_feet(main_window, mouse, picture):
    w = main_window
    w.set_units("imperial")
    w.background.import_image(picture)
    w.view.zoom_to_fit()
    img0 = w.document.rig.site.image
    _calibrate(w, mouse, MARK_A, MARK_B, ["50"])  # bare number: feet
    px_tol = 2 * _screen_px_m(w.view) / img0.metres_per_pixel / 300.0
    assert w.document.rig.site.image.metres_per_pixel == pytest.approx(50 * FT / 300.0, rel=px_tol)


def test_esc_cancels_calibration_and_clicks_go_back_to_the_canvas(main_window, mouse, picture, qtbot):
    w = main_window
    w.background.import_image(picture)
    before = w.document.rig
    w.background.actions["calibrate"].trigger()
    mouse.click(0.0, 0.0)
    qtbot.keyClick(w.view, Qt.Key.Key_Escape)
    assert not w.background.calibrate_tool.active
    assert w.document.rig == before
    # the picture does not catch clicks: an anchor placed on top of it lands on the sketch
    w.set_tool("place-anchor")
    mouse.click(1.0, 1.0)
    assert [p.kind for p in w.document.rig.points] == ["anchor"]


def test_the_picture_is_drawn_under_everything_and_cannot_be_selected(main_window, picture):
    w = main_window
    w.background.import_image(picture)
    item = w.background.layer.item
    assert item.isVisible() and not item.pixmap().isNull()
    assert item.zValue() < min(theme.Z_FEATURE, theme.Z_ROPE, theme.Z_POINT)
    assert item.acceptedMouseButtons() == Qt.MouseButton.NoButton
    assert not (item.flags() & item.GraphicsItemFlag.ItemIsSelectable)
    w.undo()
    assert not item.isVisible() or w.background.layer.item is not item


def test_rotate_offset_and_fade_through_the_panel_are_undoable(main_window, picture, qtbot):
    w = main_window
    w.background.import_image(picture)
    panel = w.properties_dock.panel.rig_page.findChild(type(w.background.make_panel()))
    assert panel is not None
    img0 = w.document.rig.site.image
    centre = image_to_site(img0, W_PX / 2, H_PX / 2)
    panel.rotation.edit.setFocus()
    panel.rotation.edit.selectAll()
    qtbot.keyClicks(panel.rotation.edit, "90")
    qtbot.keyClick(panel.rotation.edit, Qt.Key.Key_Return)
    img = w.document.rig.site.image
    assert img.rotation_deg == 90.0
    assert image_to_site(img, W_PX / 2, H_PX / 2) == pytest.approx(centre, abs=1e-9)  # turned about its middle
    panel.fade.setValue(30)
    panel.fade.setValue(25)
    assert w.document.rig.site.image.opacity == 0.25
    assert w.background.layer.item.opacity() == pytest.approx(0.25)
    steps = w.document.undo_stack.count()
    panel.origin_x.edit.setFocus()
    panel.origin_x.edit.selectAll()
    qtbot.keyClicks(panel.origin_x.edit, "12 m")
    qtbot.keyClick(panel.origin_x.edit, Qt.Key.Key_Return)
    assert w.document.rig.site.image.origin[0] == 12.0
    assert w.document.undo_stack.count() == steps + 1
    w.undo()
    w.undo()  # the two fade steps merged into one
    assert w.document.rig.site.image.opacity == img0.opacity


def test_picture_saved_with_the_rig_and_beside_it_as_a_file(main_window, picture, tmp_path):
    w = main_window
    w.background.import_image(picture)
    target = tmp_path / "plan.rig.json"
    assert w.files.save_as(target)
    back = rigfile.load_rig(target)
    assert back.site.image == w.document.rig.site.image  # embedded bytes survive the round trip
    # with the rig saved in the picture's folder, a new import refers to the file instead
    w.background.import_image(picture)
    img = w.document.rig.site.image
    assert img.file == "site-photo.png" and img.data_base64 is None
    assert w.files.save()
    assert rigfile.load_rig(target).site.image.file == "site-photo.png"
    assert not w.background.layer.item.pixmap().isNull()


def test_a_file_that_is_not_a_picture_is_refused(main_window, tmp_path):
    w = main_window
    said = []
    w.background.report_error = lambda _parent, text: said.append(text)
    bad = tmp_path / "notes.png"
    bad.write_text("not a picture")
    assert not w.background.import_image(bad)
    assert said and "notes.png" in said[0] and "PNG or JPEG" in said[0]
    assert w.document.rig.site.image is None
