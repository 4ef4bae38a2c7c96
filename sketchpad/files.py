"""Keeping the user's work safe: new/open/save, recent files, unsaved-changes prompts, autosave and recovery.

:class:`FileController` sits between the main window's File menu and the
:class:`~sketchpad.document.Document`.  Saving goes through the atomic
:func:`solver.rigfile.save_rig`; a file that cannot be read is refused with the
:class:`~solver.errors.RigFileError` message in words and the current sketch is
left exactly as it was.  While the sketch has unsaved changes a copy is written
every few seconds to the user's data folder (``ROPEWRIGHT_DATA_DIR`` overrides
it, for tests); the copy is removed on a clean save or close, so finding one at
start means the last session ended without saving and recovery is offered.  Each
running session holds a lock beside its copy that the kernel drops when the process
ends (:mod:`sketchpad.run_lock`), so a copy whose lock is free was left by a run that
is gone, whatever process now has its id.  A copy is deleted only when the user
answered the recovery question.  When an autosave fails (a full disk, a rig that
cannot be written) :attr:`FileController.protection` says so at once, in words.

Every question to the user goes through a :class:`Dialogs` object so tests can
answer them without a real modal dialog.
"""

from __future__ import annotations

import base64
import datetime as _dt
import json
import logging
import os
import pathlib
import stat
import weakref
from dataclasses import replace
from typing import Callable

import shiboken6
from PySide6.QtCore import QEvent, QObject, QSettings, QStandardPaths, QTimer, Signal
from PySide6.QtGui import QAction, QGuiApplication, QKeySequence
from PySide6.QtWidgets import QFileDialog, QMenu, QMessageBox, QWidget

from sketchpad.picture_file import PictureFileError, read_picture_bytes
from sketchpad.plain_text import message_box, tip
from sketchpad.run_lock import RunLock, available as locks_available, is_held
from solver.errors import RopewrightError
from solver.model import Rig

log = logging.getLogger(__name__)

APP_NAME = "Ropewright"
RIG_SUFFIX = ".rig.json"
FILE_FILTER = "Ropewright rigs (*.rig.json);;JSON files (*.json);;All files (*)"
MAX_RECENT = 8
RECENT_KEY = "files/recent"
DEFAULT_AUTOSAVE_SECONDS = 30
DATA_DIR_ENV = "ROPEWRIGHT_DATA_DIR"
AUTOSAVE_PREFIX = "autosave-"


# --- where things live ---------------------------------------------------------------
def data_dir() -> pathlib.Path:
    """The user's Ropewright data folder (autosaves), ``$ROPEWRIGHT_DATA_DIR`` if set."""
    env = os.environ.get(DATA_DIR_ENV)
    if env:
        path = pathlib.Path(env)
    else:
        loc = QStandardPaths.writableLocation(QStandardPaths.StandardLocation.AppDataLocation)
        path = pathlib.Path(loc) if loc else pathlib.Path.home() / ".ropewright"
    return path


def make_settings() -> QSettings:
    """The preferences store: an ini file in ``$ROPEWRIGHT_DATA_DIR`` when set (tests), else the platform's."""
    env = os.environ.get(DATA_DIR_ENV)
    if env:
        pathlib.Path(env).mkdir(parents=True, exist_ok=True)
        return QSettings(str(pathlib.Path(env) / "settings.ini"), QSettings.Format.IniFormat)
    return QSettings(APP_NAME, APP_NAME)


def samples_dir() -> pathlib.Path | None:
    """The folder of demo rigs: ``samples/`` beside the package (repo checkout) or inside its resources."""
    here = pathlib.Path(__file__).resolve().parent
    for candidate in (here.parent / "samples", here / "resources" / "samples"):
        if candidate.is_dir():
            return candidate
    return None


def sample_files() -> list[pathlib.Path]:
    """Every ``*.rig.json`` demo rig, sorted by name."""
    folder = samples_dir()
    return sorted(folder.glob("*" + RIG_SUFFIX)) if folder else []


def display_name(path: pathlib.Path | None) -> str:
    """What the title bar calls a sketch: its file name without ``.rig.json``, or "Untitled"."""
    if path is None:
        return "Untitled"
    name = pathlib.Path(path).name
    return name[: -len(RIG_SUFFIX)] if name.endswith(RIG_SUFFIX) else name


# --- background image references across folders ----------------------------------------
def embed_image_file(rig: Rig, base_dir: pathlib.Path | None) -> Rig:
    """The rig with a file-referenced background image replaced by its bytes (data_base64).

    Used when the rig moves away from the folder its image lives in (save-as
    elsewhere, opening a sample as a new sketch), so the picture is not lost.
    A missing image file is left as a reference (logged), never an error.
    """
    image = rig.site.image
    if image is None or not image.file or base_dir is None:
        return rig
    src = pathlib.Path(base_dir) / image.file
    try:
        data = read_picture_bytes(src)
    except PictureFileError as exc:
        log.warning("background image %s could not be read: %s", src, exc)
        return rig
    new_image = replace(image, file=None, data_base64=base64.b64encode(data).decode("ascii"))
    return replace(rig, site=replace(rig.site, image=new_image))


# --- questions to the user ------------------------------------------------------------
def _headless() -> bool:
    """True without a screen (offscreen tests, CI): a modal box would wait forever, so none is shown."""
    return QGuiApplication.platformName() in ("offscreen", "minimal")


class Dialogs:
    """Every question the file controller asks; tests replace it with canned answers.

    Without a screen (offscreen) nothing is shown: questions get the answer that
    keeps the program moving (discard on close, no recovery) and errors are logged.
    """

    def ask_save_changes(self, parent: QWidget | None, name: str) -> str:
        """"save", "discard" or "cancel" for a sketch with unsaved changes."""
        if _headless():
            log.info("no screen: unsaved changes to %s discarded without asking", name)
            return "discard"
        box = message_box(
            parent, QMessageBox.Icon.Warning, "Unsaved changes", f"“{name}” has changes that are not saved.",
            "Save them before going on?",
            QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Discard | QMessageBox.StandardButton.Cancel,
            QMessageBox.StandardButton.Save,
        )
        answer = box.exec()
        return {
            QMessageBox.StandardButton.Save: "save",
            QMessageBox.StandardButton.Discard: "discard",
        }.get(QMessageBox.StandardButton(answer), "cancel")

    def open_path(self, parent: QWidget | None, start: str) -> pathlib.Path | None:
        if _headless():
            return None
        path, _ = QFileDialog.getOpenFileName(parent, "Open rig", start, FILE_FILTER)
        return pathlib.Path(path) if path else None

    def save_path(self, parent: QWidget | None, start: str) -> pathlib.Path | None:
        if _headless():
            return None
        path, _ = QFileDialog.getSaveFileName(parent, "Save rig as", start, FILE_FILTER)
        if not path:
            return None
        p = pathlib.Path(path)
        if not p.name.endswith(".json"):
            p = p.with_name(p.name + RIG_SUFFIX)
        return p

    def error(self, parent: QWidget | None, title: str, text: str, detail: str = "") -> None:
        if _headless():
            log.info("%s: %s %s", title, text, detail)
            return
        message_box(parent, QMessageBox.Icon.Warning, title, text, detail).exec()

    def ask_recover(self, parent: QWidget | None, description: str) -> bool | None:
        """True to recover, False when the user declined, None when nobody could be asked (no screen)."""
        if _headless():
            log.info("no screen: recovery not offered; the kept copy stays for the next start")
            return None
        box = message_box(parent, QMessageBox.Icon.Question, "Recover unsaved work?", description, "",
                          QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No,
                          QMessageBox.StandardButton.Yes)
        return box.exec() == QMessageBox.StandardButton.Yes


def describe_error(exc: BaseException) -> str:
    """A rigger-readable sentence for a load/save failure (never a traceback)."""
    if isinstance(exc, RopewrightError):
        where = f" (at {exc.where})" if getattr(exc, "where", "") else ""
        return f"{exc.message}{where}"
    if isinstance(exc, FileNotFoundError):
        return "the file does not exist (it may have been moved or deleted)"
    if isinstance(exc, PermissionError):
        return "permission denied: Ropewright may not read or write that place"
    if isinstance(exc, IsADirectoryError):
        return "that is a folder, not a rig file"
    if isinstance(exc, OSError):
        return exc.strerror or str(exc)
    if isinstance(exc, UnicodeError):
        return "the file is not UTF-8 text, so it is not a rig file"
    return str(exc) or exc.__class__.__name__


# --- the controller --------------------------------------------------------------------
class FileController(QObject):
    """File menu behaviour for one main window and its document (see module docstring).

    ``protection`` is emitted with a sentence when crash protection (autosave) has stopped
    and why, and with "" once an autosave works again.
    """

    protection = Signal(str)

    def __init__(
        self,
        window: QWidget,
        document,
        *,
        settings: QSettings | None = None,
        dialogs: Dialogs | None = None,
        autosave_dir: pathlib.Path | None = None,
        autosave_seconds: float = DEFAULT_AUTOSAVE_SECONDS,
        on_loaded: Callable[[Rig], None] | None = None,
    ) -> None:
        super().__init__(window)
        self.window = window
        self.document = document
        self.settings = settings if settings is not None else make_settings()
        self.dialogs = dialogs if dialogs is not None else Dialogs()
        self.autosave_dir = pathlib.Path(autosave_dir) if autosave_dir is not None else data_dir() / "autosave"
        self.on_loaded = on_loaded
        self._autosaved_revision: int | None = None
        self.autosave_path = self.autosave_dir / f"{AUTOSAVE_PREFIX}{os.getpid()}-{id(self):x}{RIG_SUFFIX}"
        self._lock: RunLock | None = None
        self.protection_problem = ""  # why autosave last failed, "" while it works
        self.recent_menu: QMenu | None = None
        self.samples_menu: QMenu | None = None
        self.actions: dict[str, QAction] = {}
        self._closing_ok = False

        self.timer = QTimer(self)
        self.timer.setInterval(max(1, int(autosave_seconds * 1000)))
        # through a weak reference: a timer or document that outlives this controller's Python side (a window
        # closed but not yet deleted) must find nothing to call rather than a slot that is gone
        self.timer.timeout.connect(_weakly(self, "autosave_now"))
        self.timer.start()

        document.undo_stack.cleanChanged.connect(_weakly(self, "update_title"))
        document.path_changed.connect(_weakly(self, "update_title"))
        document.changed.connect(_weakly(self, "update_title"))
        window.installEventFilter(self)
        self.update_title()

    # --- title ------------------------------------------------------------------------
    def title(self) -> str:
        """``name[*] — Ropewright``: Qt shows the ``[*]`` as a star while there are unsaved changes.

        The name is the file's (without ``.rig.json``), else the rig's title, else "Untitled".
        """
        if self.document.path is not None:
            name = display_name(self.document.path)
        else:
            name = (self.document.rig.title or "").strip()[:60] or "Untitled"
        return f"{name}[*] — {APP_NAME}"

    def shown_title(self) -> str:
        """The title as the window shows it, star included."""
        return self.window.windowTitle().replace("[*]", "*" if self.window.isWindowModified() else "")

    def update_title(self, *_args) -> None:
        if not self._alive():
            return
        title, modified = self.title(), self.document.is_modified
        # set only what changed: every drag step asks, and each Qt title call costs a window update
        if self.window.windowTitle() != title:
            self.window.setWindowTitle(title)
        if self.window.isWindowModified() != modified:
            self.window.setWindowModified(modified)

    def _alive(self) -> bool:
        """False once Qt has deleted the window or document (signals can still arrive while tearing down)."""
        window, document = getattr(self, "window", None), getattr(self, "document", None)
        return (window is not None and document is not None and shiboken6.isValid(window)
                and shiboken6.isValid(document.undo_stack))

    # --- menu -------------------------------------------------------------------------
    def install_menu(self, menu: QMenu, before: QAction | None = None) -> None:
        """Fill ``menu`` (the File menu) with New, Open, Open recent, Samples, Save, Save as (above ``before``)."""
        if before is None and menu.actions():
            before = menu.actions()[0]  # e.g. Quit stays last

        def add(key: str, text: str, slot, shortcut=None) -> QAction:
            act = QAction(text, self.window)
            if shortcut is not None:
                act.setShortcut(shortcut)
            act.triggered.connect(lambda _checked=False: slot())
            menu.insertAction(before, act)
            self.actions[key] = act
            return act

        def submenu(text: str) -> QMenu:
            sub = QMenu(text, menu)
            menu.insertMenu(before, sub)
            return sub

        add("new", "&New", self.new, QKeySequence.StandardKey.New)
        add("open", "&Open…", self.open, QKeySequence.StandardKey.Open)
        self.recent_menu = submenu("Open &recent")
        self.samples_menu = submenu("&Samples")
        menu.insertSeparator(before)
        add("save", "&Save", self.save, QKeySequence.StandardKey.Save)
        add("save_as", "Save &as…", self.save_as, QKeySequence.StandardKey.SaveAs)
        menu.insertSeparator(before)
        self.rebuild_recent_menu()
        self.rebuild_samples_menu()

    def rebuild_recent_menu(self) -> None:
        if self.recent_menu is None:
            return
        self.recent_menu.clear()
        recent = self.recent_files()
        for path in recent:
            act = self.recent_menu.addAction(display_name(path))
            act.setToolTip(tip(str(path)))
            act.setStatusTip(str(path))
            act.triggered.connect(lambda _c=False, p=path: self.open(p))
        if not recent:
            none = self.recent_menu.addAction("(no recent rigs)")
            none.setEnabled(False)
        else:
            self.recent_menu.addSeparator()
            self.recent_menu.addAction("Clear list").triggered.connect(self.clear_recent)

    def rebuild_samples_menu(self) -> None:
        if self.samples_menu is None:
            return
        self.samples_menu.clear()
        files = sample_files()
        for path in files:
            act = self.samples_menu.addAction(self._sample_title(path))
            act.setStatusTip(str(path))
            act.triggered.connect(lambda _c=False, p=path: self.open_sample(p))
        if not files:
            self.samples_menu.addAction("(no samples found)").setEnabled(False)

    @staticmethod
    def _sample_title(path: pathlib.Path) -> str:
        try:
            title = json.loads(path.read_text(encoding="utf-8")).get("title") or ""
        except (OSError, ValueError, AttributeError):
            title = ""
        return title or display_name(path)

    # --- recent files -------------------------------------------------------------------
    def recent_files(self) -> list[pathlib.Path]:
        raw = self.settings.value(RECENT_KEY, [])
        if isinstance(raw, str):
            raw = [raw] if raw else []
        return [pathlib.Path(p) for p in (raw or [])][:MAX_RECENT]

    def add_recent(self, path: pathlib.Path) -> None:
        path = pathlib.Path(path).resolve()
        items = [path] + [p for p in self.recent_files() if p != path]
        self.settings.setValue(RECENT_KEY, [str(p) for p in items[:MAX_RECENT]])
        self.settings.sync()
        self.rebuild_recent_menu()

    def clear_recent(self) -> None:
        self.settings.setValue(RECENT_KEY, [])
        self.settings.sync()
        self.rebuild_recent_menu()

    # --- unsaved changes ----------------------------------------------------------------
    def maybe_save(self) -> bool:
        """Ask about unsaved changes; True when it is fine to throw the current sketch away."""
        if not self.document.is_modified:
            return True
        answer = self.dialogs.ask_save_changes(self.window, display_name(self.document.path))
        if answer == "save":
            return self.save()
        return answer == "discard"

    # --- commands -----------------------------------------------------------------------
    def new(self) -> bool:
        if not self.maybe_save():
            return False
        self._load_into_document(Rig(), None)
        return True

    def open(self, path: pathlib.Path | str | None = None) -> bool:
        """Open a rig file (asking for one if ``path`` is None); False if refused or cancelled."""
        if not self.maybe_save():
            return False
        if path is None:
            path = self.dialogs.open_path(self.window, self._start_dir())
            if path is None:
                return False
        path = pathlib.Path(path)
        rig = self._read(path)
        if rig is None:
            return False
        self._load_into_document(rig, path)
        self.add_recent(path)
        return True

    def open_sample(self, path: pathlib.Path) -> bool:
        """Open a demo rig as a new untitled sketch, so saving never overwrites the sample."""
        if not self.maybe_save():
            return False
        rig = self._read(pathlib.Path(path))
        if rig is None:
            return False
        self._load_into_document(embed_image_file(rig, pathlib.Path(path).parent), None)
        return True

    def save(self) -> bool:
        if self.document.path is None:
            return self.save_as()
        return self._write(self.document.rig, self.document.path)

    def save_as(self, path: pathlib.Path | str | None = None) -> bool:
        if path is None:
            path = self.dialogs.save_path(self.window, self._start_dir(suggest=True))
            if path is None:
                return False
        path = pathlib.Path(path)
        rig = self.document.rig
        old_dir = self.document.path.parent if self.document.path is not None else None
        if old_dir is not None and old_dir.resolve() != path.parent.resolve():
            embedded = embed_image_file(rig, old_dir)
            if embedded is not rig:
                # keep the picture with the rig: one undoable edit, then save
                self.document.apply(embedded, "Embed background image")
                rig = embedded
        return self._write(rig, path)

    # --- reading and writing ------------------------------------------------------------
    def _read(self, path: pathlib.Path) -> Rig | None:
        from solver import rigfile

        try:
            _must_be_regular(path)  # reading a pipe or a device would hang the window
            rig = rigfile.load_rig(path)
            _must_be_drawable(rig, path)
            rigfile.clean_stale_temps(rigfile.write_target(path).parent)
            return rig
        except (RopewrightError, OSError, UnicodeError, ValueError) as exc:
            log.info("refused to open %s: %s", path, exc)
            self.dialogs.error(
                self.window,
                "Cannot open rig",
                f"“{path.name}” could not be opened, so the current sketch was left as it was.",
                _sentence(describe_error(exc)),
            )
            return None

    def _write(self, rig: Rig, path: pathlib.Path) -> bool:
        from solver import rigfile

        try:
            rigfile.save_rig(rig, path)
        except (RopewrightError, OSError, UnicodeError, ValueError, TypeError) as exc:
            log.warning("could not save %s: %s", path, exc)
            self.dialogs.error(
                self.window,
                "Cannot save rig",
                f"“{path.name}” could not be saved; your sketch is still open and unchanged.",
                _sentence(describe_error(exc)),
            )
            return False
        if self.document.path != path:
            self.document.set_path(path)
        self.document.undo_stack.setClean()
        self.remove_autosave()
        self.add_recent(path)
        self.update_title()
        return True

    def _load_into_document(self, rig: Rig, path: pathlib.Path | None) -> None:
        self.document.replace_all(rig, path)
        self.remove_autosave()
        self.update_title()
        if self.on_loaded is not None:
            self.on_loaded(rig)

    def _start_dir(self, suggest: bool = False) -> str:
        if self.document.path is not None:
            return str(self.document.path if suggest else self.document.path.parent)
        recent = self.recent_files()
        base = recent[0].parent if recent else pathlib.Path.home()
        if suggest:
            stem = (self.document.rig.title or "rig").strip().replace("/", "-").replace("\\", "-")[:60] or "rig"
            return str(base / (stem + RIG_SUFFIX))
        return str(base)

    # --- autosave and recovery ----------------------------------------------------------
    def autosave_now(self) -> pathlib.Path | None:
        """Write the sketch to the autosave file if it changed since the last autosave; its path or None."""
        if not self._alive() or not self.document.is_modified:
            return None
        if self._autosaved_revision == self.document.revision and self.autosave_path.exists():
            return None
        from solver import rigfile

        rig = self.document.rig
        if self.document.path is not None:
            rig = embed_image_file(rig, self.document.path.parent)
        try:
            self.autosave_dir.mkdir(parents=True, exist_ok=True)
            if self._lock is None:
                self._lock = RunLock(self._lock_path(self.autosave_path))
            rigfile.save_rig(rig, self.autosave_path)
            meta = {
                "original_path": str(self.document.path) if self.document.path else None,
                "saved_at": _dt.datetime.now().isoformat(timespec="seconds"),
                "pid": os.getpid(),
            }
            self._meta_path(self.autosave_path).write_text(json.dumps(meta), encoding="utf-8")
        except (RopewrightError, OSError, ValueError, TypeError) as exc:
            log.warning("autosave to %s failed: %s", self.autosave_path, exc)
            self._set_protection(
                "Crash protection has stopped: the automatic copy of this sketch could not be written ("
                + describe_error(exc) + "). Save your work now (File ▸ Save as…) or undo the last edit.")
            return None
        self._autosaved_revision = self.document.revision
        self._set_protection("")
        return self.autosave_path

    def _set_protection(self, problem: str) -> None:
        if problem != self.protection_problem:
            self.protection_problem = problem
            self.protection.emit(problem)

    def remove_autosave(self) -> None:
        for p in (self.autosave_path, self._meta_path(self.autosave_path)):
            try:
                p.unlink()
            except FileNotFoundError:
                pass
            except OSError as exc:
                log.warning("could not remove autosave %s: %s", p, exc)
        self._autosaved_revision = None

    @staticmethod
    def _meta_path(rig_path: pathlib.Path) -> pathlib.Path:
        return rig_path.with_name(rig_path.name[: -len(RIG_SUFFIX)] + ".meta.json")

    @staticmethod
    def _lock_path(rig_path: pathlib.Path) -> pathlib.Path:
        return rig_path.with_name(rig_path.name[: -len(RIG_SUFFIX)] + ".lock")

    def _owner_is_running(self, copy: pathlib.Path) -> bool:
        """True while the session that wrote ``copy`` still runs (it holds the copy's lock)."""
        lock = self._lock_path(copy)
        if locks_available() and lock.exists():
            return is_held(lock)
        pid = _pid_of(copy)  # a copy from before locks: its process id is all there is
        return pid is not None and pid != os.getpid() and _pid_alive(pid)

    def release_lock(self) -> None:
        """End of session: the lock beside our copy goes too."""
        if self._lock is not None:
            self._lock.release()
            self._lock = None

    def leftover_autosaves(self) -> list[pathlib.Path]:
        """Autosaves left by sessions that did not close cleanly (newest first), not our own."""
        if not self.autosave_dir.is_dir():
            return []
        found = []
        for p in self.autosave_dir.glob(AUTOSAVE_PREFIX + "*" + RIG_SUFFIX):
            if p == self.autosave_path or self._owner_is_running(p):
                continue  # ours, or another Ropewright still running owns it
            found.append(p)
        return sorted(found, key=lambda q: q.stat().st_mtime, reverse=True)

    def offer_recovery(self) -> bool:
        """At start: if an earlier session left unsaved work, offer it; True when it was restored.

        The recovered sketch comes in as one undoable edit on top of its last
        saved version (or an empty sketch), so it shows as modified and a single
        undo returns to what was on disk.  Leftover copies are removed once the user
        answered (recovered or declined); unasked (no screen) they stay for the next start.
        """
        leftovers = self.leftover_autosaves()
        if not leftovers:
            return False
        newest = leftovers[0]
        meta = {}
        try:
            meta = json.loads(self._meta_path(newest).read_text(encoding="utf-8"))
        except (OSError, ValueError):
            pass
        original = pathlib.Path(meta["original_path"]) if meta.get("original_path") else None
        when = meta.get("saved_at", "")
        where = f"“{display_name(original)}”" if original else "an untitled sketch"
        description = (
            f"Ropewright did not close properly last time. Unsaved work on {where}"
            + (f" was kept at {when.replace('T', ' ')}" if when else " was kept")
            + ". Recover it?"
        )
        restored = False
        answer = self.dialogs.ask_recover(self.window, description)
        if answer is None:
            return False  # nobody was asked: keep every copy
        if answer:
            from solver import rigfile

            try:
                _must_be_regular(newest)
                rig = rigfile.load_rig(newest)
            except (RopewrightError, OSError, UnicodeError, ValueError) as exc:
                self.dialogs.error(self.window, "Cannot recover", "The kept copy could not be read.", describe_error(exc))
            else:
                base = Rig()
                if original is not None and original.exists():
                    try:
                        base = rigfile.load_rig(original)
                    except (RopewrightError, OSError, UnicodeError, ValueError):
                        base = Rig()
                self._load_into_document(base, original)
                self.document.apply(rig, "Recover unsaved changes")
                self.update_title()
                restored = True
        if answer and not restored:
            return False  # the copy could not be read: it stays, for the user to look at
        for p in leftovers:
            for q in (p, self._meta_path(p), self._lock_path(p)):
                try:
                    q.unlink()
                except OSError:
                    pass
        if restored:
            self.autosave_now()  # our own copy of the recovered work, until it is saved
        return restored

    # --- closing ------------------------------------------------------------------------
    def eventFilter(self, obj, event) -> bool:  # noqa: N802 - Qt's name
        # a wrapper Qt made afresh for a controller whose Python side is gone has no attributes
        if obj is getattr(self, "window", None) and event.type() == QEvent.Type.Close:
            if not self.maybe_save():
                event.ignore()
                return True
            self.timer.stop()
            self.remove_autosave()
            self.release_lock()
        return False


def _weakly(obj: QObject, method: str) -> Callable[..., None]:
    """A callable for a signal that calls ``obj.method`` while ``obj``'s Python side lives, else does nothing."""
    ref = weakref.ref(obj)

    def call(*args) -> None:
        target = ref()
        if target is not None and hasattr(target, "document"):
            getattr(target, method)(*args)

    return call


def _must_be_regular(path: pathlib.Path) -> None:
    """RigFileError in words unless ``path`` is a regular file (checked without opening it, so never blocking)."""
    from solver.errors import RigFileError

    try:
        mode = os.stat(path).st_mode
    except FileNotFoundError:
        raise RigFileError("there is no such file", where=str(path)) from None
    except OSError as exc:
        raise RigFileError(f"the file cannot be read ({exc.strerror or exc})", where=str(path)) from None
    if stat.S_ISDIR(mode):
        raise RigFileError("this is a folder, not a rig file", where=str(path))
    if not stat.S_ISREG(mode):
        raise RigFileError("this is a pipe, device or socket, not a rig file", where=str(path))


def _must_be_drawable(rig: Rig, path: pathlib.Path) -> None:
    """RigFileError in words for a rig too big for the window to draw in reasonable time (solver.limits)."""
    from solver import limits
    from solver.errors import RigFileError

    problem = limits.drawing_problem(len(rig.points), len(rig.ropes))
    if problem:
        raise RigFileError(problem, where=str(path))


def _sentence(text: str) -> str:
    """Capitalise the first letter of a message for a dialog."""
    return text[:1].upper() + text[1:]


def _pid_of(path: pathlib.Path) -> int | None:
    stem = path.name[len(AUTOSAVE_PREFIX):]
    head = stem.split("-", 1)[0]
    return int(head) if head.isdigit() else None


def _pid_alive(pid: int) -> bool:
    if os.name != "posix":
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    except OSError:
        return False
    return True
