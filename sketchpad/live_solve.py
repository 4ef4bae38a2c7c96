"""Live solving: re-solve the rig after every Document change (and during drags) without ever blocking the UI.

:class:`SolveScheduler` listens to ``Document.changed``.  Changes are coalesced by
one single-shot QTimer (0-30 ms), so a drag that previews the rig on every mouse
event is solved at most once per timer period, never once per event.  Each solve
is warm-started from the last good solution (free points whose drawn position is
unchanged), and its Result carries the document revision it was solved for;
a result whose revision is no longer the document's is dropped as stale.

Solves run in the GUI thread while they are quick (a drag step on a 50-rope rig
takes milliseconds, so the overlay follows the mouse).  A solve that takes longer
than ``background_after_ms`` moves later solves to a worker thread, where the
window stays responsive and stale answers are dropped.  A solve that raises, or
that returns a failed status, becomes a failed Result with a named reason; the
last good Result (and the rig it was solved for) is kept for a greyed overlay.
"""

from __future__ import annotations

import concurrent.futures
import logging
import sys
import time
from dataclasses import replace
from typing import Callable, Mapping

from PySide6.QtCore import QEvent, QObject, Qt, QTimer, Signal

from sketchpad.rope_bows import scene_bows
from sketchpad.solved_places import live_places
from solver.model import Rig
from solver.result import Result

log = logging.getLogger(__name__)

#: Coalescing delay (ms) between a change and its solve; the brief allows 0-30 ms.
DEFAULT_DELAY_MS = 12
MAX_DELAY_MS = 30
#: A solve slower than this (ms) sends later solves to the worker thread.
BACKGROUND_AFTER_MS = 120.0
#: Back to the GUI thread after this many quick background solves in a row.
QUICK_SOLVES_TO_RETURN = 3
#: Changes closer together than this (ms) are a drag: they get the equilibrium alone, and the full
#: analysis (safety checks, zones, tables) follows once the rig has been still this long.
SETTLE_MS = 150

Analyse = Callable[..., Result]


def _default_analyse(rig: Rig, start: Mapping[str, tuple[float, float]] | None = None) -> Result:
    from solver.analysis import analyse
    from solver.memo import LIVE_TRAIL

    return analyse(rig, start=start, trail=LIVE_TRAIL)  # the drawn rig's steps follow each other (solver.memo)


def _default_quick(rig: Rig, start: Mapping[str, tuple[float, float]] | None = None) -> Result:
    """A drag step: the equilibrium alone (no ideal-MA re-solve; the full analysis at the pause gives it)."""
    from solver.memo import LIVE_TRAIL

    return _equilibrium().solve(rig, start=start, ideal=False, trail=LIVE_TRAIL)


def _equilibrium():
    """``solver.equilibrium``, imported on the first solve rather than with the window (it brings numpy and
    scipy), and then read from ``sys.modules``: an import statement on every drag step goes through the Qt
    binding's import hook each time."""
    module = sys.modules.get("solver.equilibrium")
    if module is None:
        import solver.equilibrium as module
    return module


def warm_start(rig: Rig, good_rig: Rig | None, good: Result | None) -> dict[str, tuple[float, float]] | None:
    """Solved positions (m) of the last good result for free points of ``rig`` whose drawn position is unchanged.

    A point the planner just dragged starts from where it was drawn, so the solver
    follows the drag instead of the old answer.
    """
    if good is None or good_rig is None or not good.ok:
        return None
    solved = good.points
    start = {}
    for p in _unmoved(good_rig, rig):
        if not p.is_fixed:
            xy = solved.get(p.id)
            if xy is not None:
                start[p.id] = xy if type(xy) is tuple else tuple(xy)
    return start or None


#: The last two comparisons of a pair of rigs: (before, after, unmoved points, moved ids or None).  A drag
#: step compares the new rig with the last solved one for the warm start and for the predictor, and
#: the predictor compares the last solved rig with the one before, which the previous step compared.
_PAIRS: list = [None, None]


def _pair(before: Rig, after: Rig) -> list:
    """The memo entry of ``(before, after)`` (a list: [before, after, unmoved, moved or None]), made if new."""
    for entry in _PAIRS:
        if entry is not None and entry[0] is before and entry[1] is after:
            return entry
    entry = [before, after, _compare(before, after), None]
    _PAIRS[1], _PAIRS[0] = _PAIRS[0], entry
    return entry


def _unmoved(before: Rig, after: Rig) -> list:
    """The points of ``after`` drawn where a point of the same id is drawn in ``before`` (a list shared with
    later calls for the same two rigs: never change it)."""
    return _pair(before, after)[2]


def _compare(before: Rig, after: Rig) -> list:
    """:func:`_unmoved`, computed.

    A drag step's rig shares every Point object but the moved one with the last rig, in the same
    order: those are taken as they are, without building a table of every point.
    """
    a, b = before.points, after.points
    if len(a) == len(b):
        out = []
        for p, q in zip(a, b):
            if p is q or (p.id == q.id and p.x == q.x and p.y == q.y):
                out.append(q)
            elif p.id != q.id:
                break  # another order: look each point up
        else:
            return out
    old = {p.id: (p.x, p.y) for p in a}
    return [q for q in b if old.get(q.id) == (q.x, q.y)]


def moved_points(before: Rig, after: Rig) -> frozenset[str]:
    """Ids of the points whose drawn position differs between two rigs (added or removed ones too)."""
    entry = _pair(before, after)
    if entry[3] is None:
        ids = {p.id for p in before.points}
        ids.update(q.id for q in after.points)
        entry[3] = frozenset(ids.difference(q.id for q in entry[2]))
    return entry[3]


def predicted_start(rig: Rig, plain: Mapping[str, tuple[float, float]] | None, good_rig: Rig | None,
                    before_rig: Rig | None, before: Result | None) -> dict[str, tuple[float, float]] | None:
    """A drag step's start extrapolated from the last two solutions, or None when it does not apply.

    When the planner keeps dragging the same points, the equilibrium moves along a smooth
    path: a free point starts at 2 x its last solved position - the one before (a secant
    predictor), which the solver's first Newton step would otherwise have to find.  Applies
    only when the same points moved from ``before_rig`` to ``good_rig`` as from ``good_rig``
    to ``rig``.  ``plain``: the :func:`warm_start` from the last good result (solved for
    ``good_rig``); points without a secant keep it.
    """
    if plain is None or good_rig is None or before is None or before_rig is None or not before.ok:
        return None
    step = moved_points(good_rig, rig)
    if not step or step != moved_points(before_rig, good_rig):
        return None
    out = dict(plain)
    for pid, (x, y) in plain.items():
        if pid in before.points and pid not in step:
            bx, by = before.points[pid]
            out[pid] = (2.0 * x - bx, 2.0 * y - by)
    return out


def failure_result(exc: BaseException) -> Result:
    """A failed Result naming an exception the solver should never have raised."""
    return Result(status="diverged",
                  message=f"the solver stopped with an internal error ({type(exc).__name__}: {exc}); "
                          "the last good result is shown greyed and nothing you drew is lost")


class _Bridge(QObject):
    """Carries a worker thread's answer back to the GUI thread (queued signal)."""

    done = Signal(int, object, object)  # revision, rig, Result


class SolveScheduler(QObject):
    """Solves the document's rig after each change through one coalescing timer; keeps the last good Result."""

    result_ready = Signal(object)  # Result (ok or failed) for the document's current revision
    status_changed = Signal(str)  # "solving", "ok", or the failed status ("diverged", "invalid", ...)

    def __init__(self, document, parent: QObject | None = None, *, delay_ms: int = DEFAULT_DELAY_MS,
                 analyse: Analyse | None = None, quick: Analyse | None = None,
                 background_after_ms: float = BACKGROUND_AFTER_MS, settle_ms: int = SETTLE_MS,
                 clock: Callable[[], float] = time.perf_counter) -> None:
        super().__init__(parent)
        self.document = document
        self.clock = clock  # seconds, monotonic: times solves and the gaps between changes (tests pass their own)
        self._held: QObject | None = None  # a widget whose first paint the first solve waits for
        self.analyse: Analyse = analyse or _default_analyse
        self.quick: Analyse = quick or analyse or _default_quick
        self.settle_timer = QTimer(self)
        self.settle_timer.setSingleShot(True)
        self.settle_timer.setInterval(int(settle_ms))
        self.settle_timer.timeout.connect(self._settle)
        self.settled = True  # False while the delivered result is a drag-time equilibrium without checks
        self._last_change = -1e9
        self._change_gap_ms = 1e12  # time between the last two document changes
        self.background_after_ms = float(background_after_ms)
        self.timer = QTimer(self)
        self.timer.setSingleShot(True)
        self.timer.setInterval(max(0, min(int(delay_ms), MAX_DELAY_MS)))
        self.timer.timeout.connect(self.fire)
        self.result: Result | None = None  # latest delivered (ok or failed)
        self.rig: Rig | None = None  # the rig ``result`` was solved for
        self.last_good: Result | None = None
        self.last_good_rig: Rig | None = None
        # the good drag-step result before ``last_good`` (for the secant start of the next step)
        self.before_good: Result | None = None
        self.before_good_rig: Rig | None = None
        self.solve_count = 0
        self.stale_dropped = 0
        self.last_solve_ms = 0.0
        self.background = False
        self._quick_in_row = 0
        self._last_settled_good = True  # the last good result came from a full analysis, not a drag step
        self._in_flight: int | None = None  # revision being solved in the worker
        self._executor: concurrent.futures.ThreadPoolExecutor | None = None
        self._closed = False
        self._bridge = _Bridge(self)
        self._bridge.done.connect(self._deliver, Qt.QueuedConnection)
        document.changed.connect(self.schedule)

    # --- scheduling ---------------------------------------------------------------------------
    def schedule(self, *_args) -> None:
        """Note a change; the solve runs when the timer fires (a running timer is not restarted,
        so a continuous drag is still solved every ``delay`` ms).

        Only document changes (``Document.changed`` passes the new rig) count towards telling a drag
        from a single edit; the scheduler's own re-arming calls (no argument) do not, so opening a
        file right after the window is built gets the full analysis at once.
        """
        if _args:
            now = self.clock()
            self._change_gap_ms = (now - self._last_change) * 1e3
            self._last_change = now
        if not self._closed and not self.timer.isActive():
            self.timer.start()

    @property
    def pending(self) -> bool:
        """True while a change waits for its solve (timer running or a worker busy)."""
        return self.timer.isActive() or self._in_flight is not None

    def solve_now(self) -> Result | None:
        """Solve the current rig at once in this thread (tests, benchmarks, export) and deliver the answer."""
        self.timer.stop()
        rev, rig = self.document.revision, self.document.rig
        result = self._run(rig, rev)
        self._deliver(rev, rig, result)
        return self.result

    def fire(self) -> None:
        """What the coalescing timer does: solve the current revision (quickly if changes are streaming)."""
        if self._closed or self._held is not None:  # held: the first paint re-arms the timer
            return
        if self._in_flight is not None:  # the worker is busy; its return re-arms the timer
            return
        rev, rig = self.document.revision, self.document.rig
        if self.result is not None and self.result.revision == rev:
            return  # already solved this revision
        if getattr(self.document, "sketching", False):
            return  # a half-drawn rope: solve the finished edit, not every click on the way
        quick = self._change_gap_ms < self.settle_timer.interval()  # changes are streaming: a drag
        self.status_changed.emit("solving")
        if self.background:
            self._submit(rig, rev)
            return
        result = self._run(rig, rev, quick=quick)
        if self.last_solve_ms > self.background_after_ms:
            log.info("solve took %.0f ms: later solves run in the background", self.last_solve_ms)
            self.background = True
            self._quick_in_row = 0
        self._deliver(rev, rig, result, quick)

    def _run(self, rig: Rig, rev: int, quick: bool = False) -> Result:
        """One solve, never raising: exceptions become a failed Result; the revision is stamped on.

        ``quick`` (during a drag): the equilibrium alone; the settle timer runs the full analysis later.
        """
        start = warm_start(rig, self.last_good_rig, self.last_good)
        predicted = predicted_start(rig, start, self.last_good_rig, self.before_good_rig,
                                    self.before_good) if quick else None
        t0 = self.clock()
        try:
            result = (self.quick if quick else self.analyse)(rig, start=predicted or start)
            if predicted and isinstance(result, Result) and not result.ok:
                result = self.quick(rig, start=start)  # the extrapolated start misled: from the last answer
            if not isinstance(result, Result):
                raise TypeError(f"analyse returned {type(result).__name__}, not a Result")
        except Exception as exc:  # noqa: BLE001 - a solver bug must not take the window down
            log.exception("live solve failed")
            result = failure_result(exc)
        self.last_solve_ms = (self.clock() - t0) * 1e3
        self.solve_count += 1
        return replace(result, revision=rev)

    def worker(self) -> concurrent.futures.ThreadPoolExecutor | None:
        """The one worker thread background solves run on (made on first use; None once closed). Other slow
        solver work queues on it too (an export's failure scan, sketchpad.export_scan): one solve at a time."""
        if self._executor is None and not self._closed:
            self._executor = concurrent.futures.ThreadPoolExecutor(max_workers=1, thread_name_prefix="rw-solve")
        return self._executor

    def _submit(self, rig: Rig, rev: int) -> None:
        self.worker()
        self._in_flight = rev
        bridge = self._bridge

        def work() -> None:
            result = self._run(rig, rev)
            if not self._closed:
                try:
                    bridge.done.emit(rev, rig, result)
                except RuntimeError:  # the window closed while solving
                    pass

        self._executor.submit(work)

    def first_solve_after_paint(self, widget) -> None:
        """Start-up: no solve until ``widget`` has painted once, and that first solve in the worker thread.

        The first solve of a session imports the numerical libraries and warms them up (a few
        hundred ms); the window shows the drawing first and the forces follow.  Later solves
        return to the GUI thread as soon as they are quick (``QUICK_SOLVES_TO_RETURN``).
        """
        self._held = widget
        self.background = True
        widget.installEventFilter(self)

    def eventFilter(self, watched, event) -> bool:  # noqa: N802 - Qt's name
        if watched is self._held and event.type() == QEvent.Paint:
            watched.removeEventFilter(self)
            QTimer.singleShot(0, self._release)  # after this paint has finished
        return False

    def _release(self) -> None:
        self._held = None
        self.schedule()

    # --- delivery -------------------------------------------------------------------------------
    def _deliver(self, rev: int, rig: Rig, result: Result, quick: bool = False) -> None:
        if self._closed:
            return
        if self._in_flight == rev:
            self._in_flight = None
            if self.background:
                self._quick_in_row = self._quick_in_row + 1 if self.last_solve_ms < self.background_after_ms / 2 else 0
                if self._quick_in_row >= QUICK_SOLVES_TO_RETURN:
                    self.background = False
        if rev != self.document.revision:
            self.stale_dropped += 1
            log.debug("dropped a stale result for revision %d (document at %d)", rev, self.document.revision)
            self.schedule()
            return
        self.result, self.rig = result, rig
        self.settled = not quick
        if result.ok:
            # two drag steps in a row give the next step a secant start; anything else starts afresh
            drag = quick and self.last_good is not None and not self._last_settled_good
            self.before_good, self.before_good_rig = (self.last_good, self.last_good_rig) if drag else (None, None)
            self.last_good, self.last_good_rig = result, rig
            self._last_settled_good = not quick
        if not self.settled:
            self.settle_timer.start()  # restarted by every drag step: runs once the rig is still
        self.status_changed.emit(result.status)
        self.result_ready.emit(result)

    def _settle(self) -> None:
        """The rig has been still for ``settle_ms``: run the full analysis of the current revision."""
        if self._closed or self.settled or self._in_flight is not None:
            return
        if self.result is None or self.result.revision != self.document.revision:
            self.schedule()
            return
        rev, rig = self.document.revision, self.document.rig
        self._deliver(rev, rig, self._run(rig, rev, quick=False))

    def close(self) -> None:
        """Stop solving (window closing): no more timers, the worker's late answers are ignored."""
        self._closed = True
        self.timer.stop()
        self.settle_timer.stop()
        try:
            self.document.changed.disconnect(self.schedule)
        except (RuntimeError, TypeError):
            pass
        if self._executor is not None:
            self._executor.shutdown(wait=False, cancel_futures=True)
            self._executor = None


class LiveForces(QObject):
    """Everything issue 5 adds to a main window: scheduler, overlay, results dock, View-menu layer toggles."""

    def __init__(self, window) -> None:
        super().__init__(window)
        from sketchpad.overlay import ResultOverlay
        from sketchpad.results_panel import ResultsPanel

        self.window = window
        self._settled_rig: Rig | None = None  # the rig of the last settled result: a drag moves points away from it
        self.scheduler = SolveScheduler(window.document, self)
        self.overlay = ResultOverlay(window.view, self)
        self.panel = ResultsPanel()
        self.panel.subject_activated.connect(self.select_subject)
        self.dock = window.add_panel(self.panel, "Forces", "dock_forces")
        self.scheduler.result_ready.connect(self._show)
        self.layer_actions = self.overlay.make_layer_actions(window)
        window.menu_view.addSeparator()
        self.menu_layers = window.menu_view.addMenu("Force &overlay")
        for act in self.layer_actions.values():
            self.menu_layers.addAction(act)
        self.scheduler.schedule()

    def _show(self, result: Result) -> None:
        s = self.scheduler
        if not s.rig.ropes:  # points and no rope yet: no forces to show (zero-force labels would be noise)
            self._show_nothing(s.rig)
            return
        gap = None
        if not result.ok:  # a half-drawn rig gets a calm hint instead of the failure alarm
            from solver.completeness import sketch_gap

            gap = sketch_gap(s.rig)
        self.overlay.grey_reason = ("sketch incomplete: last complete result, greyed" if gap
                                    else "solve failed: last good result, greyed")
        if s.rig is self.window.document.rig:  # points drawn where the solver put them (first: the labels are
            # placed clear of their names there), during a drag too

            if s.settled:
                self._settled_rig = s.rig
            # a drag before any settled result: no point counts as settled, so none jumps off the cursor
            places = live_places(s.rig, result, None if s.settled else (self._settled_rig or Rig()))
            if places != "keep":
                self.window.canvas.set_solved(places)
            self.window.canvas.points_follow_solve = not s.settled and bool(places) and places != "keep"
            self.window.canvas.set_bows(scene_bows(s.rig, result) if result.ok else {})
        self.overlay.show_result(s.rig, result, s.last_good_rig, s.last_good, settled=s.settled)
        if gap is not None:
            self.overlay.banner.hide()
        hints = getattr(self.window, "hints", None)
        if hints is not None:
            if gap is not None:
                hints.set_state(gap.message)
            elif result.ok and hints.state and not self.window.document.sketching:
                from solver.completeness import sketch_gap  # only while a state is shown: a drag step costs nothing

                found = sketch_gap(s.rig)
                hints.set_state(found.message if found else "")
            if not hints.isHidden():  # a hidden strip is placed when it is shown again (HintBar._refresh)
                hints.place()  # under the banner, or at the top when there is none
        if s.settled or not result.ok:  # tables and warnings follow once a drag pauses
            self.panel.show_result(s.rig, result, s.last_good_rig, s.last_good, gap=gap)


    def _show_nothing(self, rig: Rig) -> None:
        """A sketch without ropes: the overlay and the tables empty, the hint strip saying what to draw."""
        ov = self.overlay
        ov.rig = ov.result = ov.failed = None
        ov.banner.hide()
        ov.rebuild()
        from solver.completeness import sketch_gap

        gap = sketch_gap(rig)
        self.panel.show_result(rig, Result(status="invalid", message=gap.message if gap else "no rope"),
                               gap=gap or _NO_ROPE)
        self.window.canvas.set_solved(None)
        self.window.canvas.set_bows({})
        hints = getattr(self.window, "hints", None)
        if hints is not None:
            hints.place()

    def select_subject(self, subject: str) -> None:
        """Select and centre the canvas item a warning is about (point, rope, ``rope@point``, ``a,b,c``)."""
        keys = subject_keys(self.window.document.rig, subject)
        if not keys:
            return
        canvas, view = self.window.canvas, self.window.view
        canvas.select_keys(keys)
        items = [canvas.item_for(k) for k in keys]
        rect = None
        for it in items:
            if it is None:
                continue
            r = it.sceneBoundingRect()
            rect = r if rect is None else rect.united(r)
        if rect is not None:
            view.centerOn(rect.center())
            view.viewport().update()


def _no_rope_gap():
    from solver.completeness import SketchGap

    return SketchGap(None, "No rope yet: draw one from the load (R).")


_NO_ROPE = _no_rope_gap()


def subject_keys(rig: Rig, subject: str) -> list[tuple]:
    """Canvas keys for a warning subject: a point id, a rope id, ``rope@point`` (the point) or ``id,id,...``."""
    keys: list[tuple] = []
    for part in (subject or "").split(","):
        part = part.strip()
        if not part:
            continue
        if "@" in part:
            part = part.split("@", 1)[1].split("#", 1)[0]
        if rig.has_point(part):
            keys.append(("point", part))
        elif any(r.id == part for r in rig.ropes):
            keys.append(("rope", part))
        elif any(f.id == part for f in rig.site.features):
            keys.append(("feature", part))
    return keys


def install_live_forces(window) -> LiveForces:
    """Add live solving, the force overlay and the results dock to ``window`` (a MainWindow)."""
    live = LiveForces(window)
    window.destroyed.connect(live.scheduler.close)
    return live
