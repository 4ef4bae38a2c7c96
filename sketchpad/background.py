"""The site picture under the sketch: import a PNG/JPEG, calibrate its scale by two clicks, rotate, move, fade.

The picture is ``rig.site.image`` (a :class:`~solver.model.SiteImage`): a file
relative to the rig file (when it lives in the rig's folder) or its bytes in
``data_base64`` (unsaved sketch, or a picture from elsewhere).  Placement, in
site metres: ``origin`` is where the picture's top-left pixel sits,
``metres_per_pixel`` its scale, ``rotation_deg`` an anticlockwise turn about
that corner and ``opacity`` how strongly it shows.  A pixel (u right, v down)
lands on the site at::

    site = origin + R(rotation) · (u·s, −v·s)

Every change is one undoable command through :meth:`Document.apply`.
Calibration: click two points on the picture whose real distance you know,
type it; the scale changes so those clicks are that far apart, keeping the
first click where it is.
"""

from __future__ import annotations

import base64
import logging
import math
import pathlib
from dataclasses import replace
from typing import Callable

from PySide6.QtCore import QEvent, QLineF, QObject, QSignalBlocker, Qt, Signal
from PySide6.QtGui import QAction, QColor, QImage, QPen, QPixmap, QTransform
from PySide6.QtWidgets import (
    QFileDialog,
    QFormLayout,
    QGraphicsLineItem,
    QGraphicsPixmapItem,
    QGraphicsSimpleTextItem,
    QHBoxLayout,
    QInputDialog,
    QMenu,
    QPushButton,
    QSlider,
    QWidget,
)

from sketchpad import theme
from sketchpad.drag_layer import Tracked
from sketchpad.fields import QuantityField, decimal_mark
from sketchpad.geometry import to_scene, to_site
from sketchpad.picture_file import PictureFileError, read_picture_bytes
from sketchpad.plain_text import plain_label
from solver import limits, units
from solver.errors import UnitError
from solver.model import Rig, SiteImage

log = logging.getLogger(__name__)

IMAGE_FILTER = "Pictures (*.png *.jpg *.jpeg);;All files (*)"
DEFAULT_WIDTH_M = 50.0  # an imported picture first spans this many metres (until calibrated)
CALIBRATE_PEN_COLOUR = QColor("#d81b60")


# --- placement maths (pure) ----------------------------------------------------------------
def image_to_site(image: SiteImage, u: float, v: float) -> tuple[float, float]:
    """Site metres of picture pixel (u right, v down)."""
    s = image.metres_per_pixel
    a = math.radians(image.rotation_deg)
    c, sn = math.cos(a), math.sin(a)
    lx, ly = u * s, -v * s
    return (image.origin[0] + c * lx - sn * ly, image.origin[1] + sn * lx + c * ly)


def site_to_image(image: SiteImage, x: float, y: float) -> tuple[float, float]:
    """Picture pixel (u, v) under site point (x, y) metres; the inverse of :func:`image_to_site`."""
    s = image.metres_per_pixel
    a = math.radians(image.rotation_deg)
    c, sn = math.cos(a), math.sin(a)
    dx, dy = x - image.origin[0], y - image.origin[1]
    lx, ly = c * dx + sn * dy, -sn * dx + c * dy
    return (lx / s, -ly / s)


def scene_transform(image: SiteImage) -> QTransform:
    """The QTransform from picture pixels to scene coordinates (scene = metres, y down)."""
    s = image.metres_per_pixel
    a = math.radians(image.rotation_deg)
    c, sn = math.cos(a), math.sin(a)
    # scene X = ox + s(u c + v sn);  scene Y = -oy + s(-u sn + v c)
    return QTransform(s * c, -s * sn, s * sn, s * c, image.origin[0], -image.origin[1])


def _with_image(rig: Rig, image: SiteImage | None) -> Rig:
    return replace(rig, site=replace(rig.site, image=image))


def calibrated(image: SiteImage, p1: tuple[float, float], p2: tuple[float, float], real_m: float) -> SiteImage:
    """The image rescaled so site points ``p1``/``p2`` (as drawn now) are ``real_m`` apart; ``p1`` stays put.

    Raises ValueError (in words) for coincident clicks or a distance that is not positive.
    """
    if not real_m > 0 or not math.isfinite(real_m):
        raise ValueError("the real distance must be more than zero")
    u1, v1 = site_to_image(image, *p1)
    u2, v2 = site_to_image(image, *p2)
    d_px = math.hypot(u2 - u1, v2 - v1)
    if d_px < 1.0:
        raise ValueError("the two clicks are less than one picture pixel apart; click two points further apart")
    scaled = replace(image, metres_per_pixel=real_m / d_px, origin=(0.0, 0.0))
    x1, y1 = image_to_site(scaled, u1, v1)
    return replace(scaled, origin=(p1[0] - x1, p1[1] - y1))


def rotated(image: SiteImage, degrees: float, about: tuple[float, float] | None = None) -> SiteImage:
    """The image turned to ``degrees`` (anticlockwise) about site point ``about`` (default: its top-left corner)."""
    if about is None:
        return replace(image, rotation_deg=float(degrees) % 360.0)
    u, v = site_to_image(image, *about)
    turned = replace(image, rotation_deg=float(degrees) % 360.0, origin=(0.0, 0.0))
    x, y = image_to_site(turned, u, v)
    return replace(turned, origin=(about[0] - x, about[1] - y))


def rig_folder(document) -> pathlib.Path | None:
    return document.path.parent if getattr(document, "path", None) is not None else None


def image_reference(path: pathlib.Path, rig_dir: pathlib.Path | None) -> dict:
    """``{"file": relative}`` when the picture is inside the rig's folder, else ``{"data_base64": ...}``."""
    path = pathlib.Path(path)
    if rig_dir is not None:
        try:
            rel = path.resolve().relative_to(pathlib.Path(rig_dir).resolve())
            return {"file": rel.as_posix(), "data_base64": None}
        except ValueError:
            pass
    return {"file": None, "data_base64": base64.b64encode(read_picture_bytes(path)).decode("ascii")}


def read_qimage(image: SiteImage | None, rig_dir: pathlib.Path | None) -> QImage | None:
    """The picture as a QImage, or None (logged) when it cannot be found or decoded."""
    if image is None:
        return None
    q = QImage()
    if image.data_base64:
        try:
            data = base64.b64decode(image.data_base64, validate=False)
        except (ValueError, TypeError) as exc:
            log.warning("background picture data is not base64: %s", exc)
            return None
        q.loadFromData(data)
    elif image.file:
        base = rig_dir if rig_dir is not None else pathlib.Path.cwd()
        try:
            q.loadFromData(read_picture_bytes(pathlib.Path(base) / image.file))
        except PictureFileError as exc:
            log.warning("background picture %s", exc)
            return None
    return None if q.isNull() else q


def default_placement(rig: Rig, size_px: tuple[int, int], centre: tuple[float, float] | None) -> tuple[tuple[float, float], float]:
    """(origin, metres_per_pixel) for a fresh picture: as wide as the sketch (or 50 m), centred."""
    w_px, h_px = size_px
    xs = [p.x for p in rig.points]
    ys = [p.y for p in rig.points]
    if xs:
        width_m = max(1.5 * max(max(xs) - min(xs), max(ys) - min(ys)), 20.0)
        cx, cy = (max(xs) + min(xs)) / 2, (max(ys) + min(ys)) / 2
    else:
        width_m, cx, cy = DEFAULT_WIDTH_M, 0.0, 0.0
    if centre is not None:
        cx, cy = centre
    s = width_m / max(w_px, 1)
    return (cx - w_px * s / 2, cy + h_px * s / 2), s


# --- the canvas item ---------------------------------------------------------------------
class BackgroundItem(Tracked, QGraphicsPixmapItem):
    """The site picture, drawn under everything, never selectable, transparent to clicks (its z, flags and
    scene tracked by the drag layer, what it shows fingerprinted: ``drag_layer.item_version``)."""

    def __init__(self) -> None:
        super().__init__()
        self.setZValue(theme.Z_BACKGROUND - 1.0)
        self.setAcceptedMouseButtons(Qt.MouseButton.NoButton)
        self.setAcceptHoverEvents(False)
        self.setTransformationMode(Qt.TransformationMode.SmoothTransformation)
        self.setShapeMode(QGraphicsPixmapItem.ShapeMode.BoundingRectShape)
        self.image: SiteImage | None = None
        self._key: tuple | None = None

    def set_image(self, image: SiteImage | None, rig_dir: pathlib.Path | None) -> None:
        if image is None and self.image is None and self._key is None and not self.isVisible():
            return  # no plan, as before (every edit of a rig without one)
        self.image = image
        if image is None:
            self.setPixmap(QPixmap())  # no size left to count in "zoom to fit"
            self._key = None
            self.setVisible(False)
            return
        key = (image.file, image.data_base64, str(rig_dir))
        if key != self._key:
            q = read_qimage(image, rig_dir)
            self.setPixmap(QPixmap.fromImage(q) if q is not None else QPixmap())
            self._key = key
        self.setTransform(scene_transform(image))
        self.setOpacity(max(0.0, min(1.0, image.opacity)))
        self.setVisible(not self.pixmap().isNull())


class BackgroundLayer(QObject):
    """Keeps one :class:`BackgroundItem` in the scene in step with the document."""

    def __init__(self, document, scene, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self.scene = scene
        self.item = BackgroundItem()
        self._put(self.item)
        document.changed.connect(self.sync)
        document.path_changed.connect(lambda _p: self.sync())
        self.sync()

    def sync(self, rig: Rig | None = None) -> None:
        rig = rig if rig is not None else self.document.rig
        if self.item.scene() is None:  # the scene was cleared under us: put the picture back
            self.item = BackgroundItem()
            self._put(self.item)
        self.item.set_image(rig.site.image, rig_folder(self.document))

    def _put(self, item: BackgroundItem) -> None:
        if hasattr(self.scene, "set_background_item"):  # the sketch scene's own bottom layer
            self.scene.set_background_item(item)
        else:
            self.scene.addItem(item)
        item.setZValue(theme.Z_BACKGROUND - 1.0)


# --- two-click tool (calibrate) -------------------------------------------------
class TwoClickTool(QObject):
    """Takes two left clicks on the view's viewport (press+release each) and calls ``finished(p1, p2)`` in site metres.

    While active it swallows mouse presses so the canvas's own tools do not act;
    Esc or a right click cancels.  Draws a rubber line between the clicks.
    """

    done = Signal()

    def __init__(self, view, status: Callable[[str], None] | None = None, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.view = view
        self.status = status or (lambda _t: None)
        self.first: tuple[float, float] | None = None
        self.active = False
        self.line: QGraphicsLineItem | None = None
        self.label: QGraphicsSimpleTextItem | None = None
        self.prompt_first = "Click the first point."
        self.prompt_second = "Click the second point."

    def start(self) -> None:
        if self.active:
            return
        self.active = True
        self.first = None
        self.view.viewport().installEventFilter(self)
        self.view.installEventFilter(self)
        self.view.viewport().setCursor(Qt.CursorShape.CrossCursor)
        self.status(self.prompt_first + " (Esc cancels)")

    def stop(self) -> None:
        if not self.active:
            return
        self.active = False
        self.view.viewport().removeEventFilter(self)
        self.view.removeEventFilter(self)
        self.view.viewport().unsetCursor()
        self._clear_line()
        self.done.emit()

    def cancel(self) -> None:
        self.status("Cancelled.")
        self.stop()

    def _clear_line(self) -> None:
        for it in (self.line, self.label):
            if it is not None and it.scene() is not None:
                it.scene().removeItem(it)
        self.line = None
        self.label = None

    def _site(self, event) -> tuple[float, float]:
        return to_site(self.view.mapToScene(event.position().toPoint()))

    def _draw(self, a: tuple[float, float], b: tuple[float, float]) -> None:
        scene = self.view.scene()
        if self.line is None:
            pen = QPen(CALIBRATE_PEN_COLOUR, 2.0)
            pen.setCosmetic(True)
            pen.setStyle(Qt.PenStyle.DashLine)
            self.line = QGraphicsLineItem()
            self.line.setPen(pen)
            self.line.setZValue(theme.Z_PREVIEW)
            scene.addItem(self.line)
        self.line.setLine(QLineF(to_scene(*a), to_scene(*b)))

    def eventFilter(self, obj, event) -> bool:  # noqa: N802 - Qt's name
        if not self.active:
            return False
        t = event.type()
        if t == QEvent.Type.KeyPress and event.key() == Qt.Key.Key_Escape:
            self.cancel()
            return True
        if obj is not self.view.viewport():
            return False
        if t == QEvent.Type.MouseButtonPress:
            if event.button() == Qt.MouseButton.RightButton:
                self.cancel()
            return True
        if t == QEvent.Type.MouseMove:
            if self.first is not None:
                self._draw(self.first, self._site(event))
            return True
        if t == QEvent.Type.MouseButtonDblClick:
            return True
        if t == QEvent.Type.MouseButtonRelease and event.button() == Qt.MouseButton.LeftButton:
            p = self._site(event)
            if self.first is None:
                self.first = p
                self._draw(p, p)
                self.status(self.prompt_second + " (Esc cancels)")
            else:
                first, self.first = self.first, None
                self._draw(first, p)
                try:
                    self.finished(first, p)
                finally:
                    self.stop()
            return True
        return False

    def finished(self, p1: tuple[float, float], p2: tuple[float, float]) -> None:  # pragma: no cover - overridden
        raise NotImplementedError


class CalibrateTool(TwoClickTool):
    """Click two points of the picture a known distance apart, type that distance: the picture is rescaled.

    ``ask_distance(parent, prompt, unit) -> str | None`` is replaceable (tests);
    a distance that cannot be read is asked again with the problem named.
    """

    def __init__(self, view, document, status=None, parent=None) -> None:
        super().__init__(view, status, parent)
        self.document = document
        self.prompt_first = "Calibrate: click the first of two points whose real distance you know."
        self.prompt_second = "Calibrate: click the second point."
        self.ask_distance: Callable[[QWidget | None, str, str], str | None] = _ask_distance

    def start(self) -> None:
        if self.document.rig.site.image is None:
            self.status("Import a background picture first (Insert ▸ Background picture…).")
            return
        super().start()

    def finished(self, p1, p2) -> None:
        image = self.document.rig.site.image
        if image is None:
            return
        unit = self.document.rig.display.length
        drawn = math.hypot(p2[0] - p1[0], p2[1] - p1[1])
        prompt = f"Real distance between the two points (now {units.format_length(drawn, unit)} on the sketch):"
        while True:
            text = self.ask_distance(self.view.window(), prompt, unit)
            if text is None:
                self.status("Calibration cancelled.")
                return
            try:
                real = units.parse_length(text, unit, decimal=decimal_mark())
                new = calibrated(image, p1, p2, real)
                problem = limits.number_range("image", "metres_per_pixel").problem(new.metres_per_pixel)
                if problem:
                    raise ValueError(f"that makes a scale of {new.metres_per_pixel:g} m per pixel, which {problem}")
            except (UnitError, ValueError) as exc:
                msg = exc.message if isinstance(exc, UnitError) else str(exc)
                prompt = f"{msg[:1].upper()}{msg[1:]}.\nReal distance between the two points:"
                continue
            break
        rig = self.document.rig
        self.document.apply(_with_image(rig, new), "Calibrate background")
        self.status(
            f"Background calibrated: {units.format_length(real, unit)} between the clicks "
            f"({new.metres_per_pixel * 1000:.1f} mm per picture pixel)."
        )


def _ask_distance(parent, prompt: str, unit: str) -> str | None:
    text, ok = QInputDialog.getText(parent, "Calibrate background", prompt, text=f" {unit}")
    return text if ok else None


# --- the controls ----------------------------------------------------------------------------
class BackgroundController(QObject):
    """Menu actions and panel for the background picture of one window's document."""

    def __init__(self, document, view, window: QWidget | None = None, status: Callable[[str], None] | None = None) -> None:
        super().__init__(window)
        self.document = document
        self.view = view
        self.window = window
        self.status = status or (lambda _t: None)
        self.layer = BackgroundLayer(document, view.scene(), self)
        self.calibrate_tool = CalibrateTool(view, document, self._say, self)
        self.ask_image_path: Callable[[QWidget | None], pathlib.Path | None] = _ask_image_path
        self.report_error: Callable[[QWidget | None, str], None] = _report_error
        self.actions: dict[str, QAction] = {}

    def _say(self, text: str) -> None:
        self.status(text)

    # --- commands ----------------------------------------------------------------------
    def import_image(self, path: pathlib.Path | str | None = None) -> bool:
        """Put a PNG/JPEG under the sketch (one undoable edit); False, with a message, if it cannot be read."""
        if path is None:
            path = self.ask_image_path(self.window)
            if path is None:
                return False
        path = pathlib.Path(path)
        try:
            q = QImage.fromData(read_picture_bytes(path))
        except PictureFileError as exc:
            self.report_error(self.window, f"“{path.name}” {exc.message}.")
            return False
        if q.isNull():
            self.report_error(self.window, f"“{path.name}” is not a picture Ropewright can read (use PNG or JPEG).")
            return False
        try:
            ref = image_reference(path, rig_folder(self.document))
        except OSError as exc:
            self.report_error(self.window, f"“{path.name}” could not be read: {exc.strerror or exc}.")
            return False
        rig = self.document.rig
        # centred on the sketch if there is one, else on what the view shows
        centre = None if rig.points else to_site(self.view.mapToScene(self.view.viewport().rect().center()))
        origin, s = default_placement(rig, (q.width(), q.height()), centre)
        old = rig.site.image
        image = SiteImage(
            file=ref["file"],
            data_base64=ref["data_base64"],
            origin=origin,
            metres_per_pixel=s,
            rotation_deg=0.0,
            opacity=old.opacity if old is not None else 0.6,
        )
        self.document.apply(_with_image(rig, image), "Import background picture")
        self._say("Picture imported: now Tools ▸ Calibrate background…")
        return True

    def remove_image(self) -> None:
        rig = self.document.rig
        if rig.site.image is not None:
            self.document.apply(_with_image(rig, None), "Remove background picture")

    def set_rotation(self, degrees: float) -> None:
        img = self.document.rig.site.image
        if img is None:
            return
        centre = image_to_site(img, *self._image_centre_px(img))
        new = rotated(img, degrees, about=centre)
        self.document.apply(_with_image(self.document.rig, new), "Rotate background", merge_key="background-rotate")

    def set_origin(self, x: float | None = None, y: float | None = None) -> None:
        img = self.document.rig.site.image
        if img is None:
            return
        new = replace(img, origin=(img.origin[0] if x is None else float(x), img.origin[1] if y is None else float(y)))
        self.document.apply(_with_image(self.document.rig, new), "Move background")

    def set_opacity(self, opacity: float) -> None:
        img = self.document.rig.site.image
        if img is None:
            return
        new = replace(img, opacity=max(0.0, min(1.0, float(opacity))))
        self.document.apply(_with_image(self.document.rig, new), "Fade background", merge_key="background-opacity")

    def _image_centre_px(self, img: SiteImage) -> tuple[float, float]:
        pm = self.layer.item.pixmap()
        return (pm.width() / 2, pm.height() / 2) if not pm.isNull() else (0.0, 0.0)

    # --- menus and panel ---------------------------------------------------------------
    def install_menus(self, menu_insert: QMenu | None = None, menu_tools: QMenu | None = None) -> None:
        if menu_insert is not None:
            a = menu_insert.addAction("Background picture…")
            a.triggered.connect(lambda _c=False: self.import_image())
            self.actions["import"] = a
            b = menu_insert.addAction("Remove background picture")
            b.triggered.connect(lambda _c=False: self.remove_image())
            self.actions["remove"] = b
        if menu_tools is not None:
            c = menu_tools.addAction("Calibrate background…")
            c.triggered.connect(lambda _c=False: self.calibrate_tool.start())
            self.actions["calibrate"] = c

    def make_panel(self) -> "BackgroundPanel":
        return BackgroundPanel(self)


def _ask_image_path(parent) -> pathlib.Path | None:
    path, _ = QFileDialog.getOpenFileName(parent, "Background picture", "", IMAGE_FILTER)
    return pathlib.Path(path) if path else None


def _report_error(parent, text: str) -> None:
    from PySide6.QtGui import QGuiApplication

    from sketchpad.plain_text import warn

    if QGuiApplication.platformName() in ("offscreen", "minimal"):
        log.info("background: %s", text)
        return
    warn(parent, "Background picture", text)


class BackgroundPanel(QWidget):
    """Import / calibrate / remove buttons, rotation, offset and fade for the background picture."""

    def __init__(self, controller: BackgroundController, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.controller = controller
        doc = controller.document
        self.state = plain_label()
        self.state.setWordWrap(True)
        self.import_button = QPushButton("Import…")
        self.calibrate_button = QPushButton("Calibrate…")
        self.remove_button = QPushButton("Remove")
        buttons = QHBoxLayout()
        for b in (self.import_button, self.calibrate_button, self.remove_button):
            buttons.addWidget(b)
        unit = lambda: doc.rig.display.length  # noqa: E731
        self.rotation = QuantityField("rotation", "number", suffixes=("°", "deg", "degrees"),
                                      limit=("image", "rotation_deg"))
        self.origin_x = QuantityField("east offset", "length", unit=unit, limit=("point", "x"))
        self.origin_y = QuantityField("north offset", "length", unit=unit, limit=("point", "y"))
        self.fade = QSlider(Qt.Orientation.Horizontal)
        self.fade.setRange(0, 100)
        self.fade.setToolTip("How strongly the picture shows under the sketch")
        form = QFormLayout(self)
        form.setContentsMargins(0, 0, 0, 0)
        form.addRow(self.state)
        form.addRow(buttons)
        form.addRow("Rotation (°)", self.rotation)
        form.addRow("Top-left east", self.origin_x)
        form.addRow("Top-left north", self.origin_y)
        form.addRow("Strength", self.fade)
        self.import_button.clicked.connect(lambda: controller.import_image())
        self.calibrate_button.clicked.connect(controller.calibrate_tool.start)
        self.remove_button.clicked.connect(controller.remove_image)
        self.rotation.committed.connect(lambda v: controller.set_rotation(float(v)))
        self.origin_x.committed.connect(lambda v: controller.set_origin(x=v))
        self.origin_y.committed.connect(lambda v: controller.set_origin(y=v))
        self.fade.valueChanged.connect(lambda v: controller.set_opacity(v / 100.0))
        doc.changed.connect(self.refresh)
        self.refresh()

    def refresh(self, _rig=None) -> None:
        rig = self.controller.document.rig
        img = rig.site.image
        has = img is not None
        for w in (self.calibrate_button, self.remove_button, self.rotation, self.origin_x, self.origin_y, self.fade):
            w.setEnabled(has)
        if not has:
            self.state.setText("No background picture. Import a site photo or plan, then calibrate its scale.")
            return
        src = f"file {img.file}" if img.file else "kept inside the rig file"
        self.state.setText(
            f"Picture {src}; {units.format_length(img.metres_per_pixel * 100, rig.display.length)} per 100 pixels."
        )
        self.rotation.set_value(round(img.rotation_deg, 6))
        self.origin_x.set_value(img.origin[0])
        self.origin_y.set_value(img.origin[1])
        with QSignalBlocker(self.fade):
            self.fade.setValue(round(img.opacity * 100))


__all__ = [
    "BackgroundController",
    "BackgroundItem",
    "BackgroundLayer",
    "BackgroundPanel",
    "CalibrateTool",
    "calibrated",
    "image_to_site",
    "rotated",
    "scene_transform",
    "site_to_image",
]
