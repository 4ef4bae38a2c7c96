"""Wheel zoom without re-placing every label on every notch.

Placing the force overlay's labels is the largest part of a zoom frame on a crowded rig (the
placer searches candidate spots for each of ~200 labels).  A label hangs from a scene point
with a box offset in pixels, so at the next notch it still sits beside what it names; only
overlaps may change.  So every zoom that is not a wheel notch (a fit, a zoom from the menu or
keys) and the first notch of a gesture place labels at once, exact as before; the wheel notches
that follow within ``STREAM_MS`` keep the placement, only refreshing the overlay's extent for the new scale; once the wheel has been
still for ``SETTLE_MS`` the labels are placed again for the zoom reached.  The danger zones are filled
without anti-aliasing while the notches stream and smoothed again when the wheel stops.  Nothing is cached
here: the placer's own memo and obstacle cache are the overlay's.
"""

from __future__ import annotations

import time

from PySide6.QtCore import QObject, QTimer

#: zoom steps closer together than this (ms) are one wheel gesture
STREAM_MS = 250.0
#: labels are placed again once the zoom has been still this long (ms)
SETTLE_MS = 140


class ZoomPacer(QObject):
    """Re-places an overlay's labels on a zoom, at once for a lone step and once at the end of a wheel gesture."""

    def __init__(self, overlay, settle_ms: int = SETTLE_MS) -> None:
        super().__init__(overlay)
        self.overlay = overlay
        self.timer = QTimer(self)
        self.timer.setSingleShot(True)
        self.timer.setInterval(int(settle_ms))
        self.timer.timeout.connect(self.settle)
        self._last = -1e9
        self.deferred = 0  # zoom steps that kept the last placement (tests, benchmarks)
        overlay.view.scale_changed.connect(self.on_zoom)

    @property
    def pending(self) -> bool:
        """True while labels wait to be placed for the current zoom."""
        return self.timer.isActive()

    def on_zoom(self, _px_per_m: float = 0.0) -> None:
        now = time.perf_counter()
        wheel = bool(getattr(self.overlay.view, "wheel_zooming", False))
        streaming = wheel and (now - self._last) * 1e3 < STREAM_MS
        self._last = now if wheel else -1e9
        ov = self.overlay
        ov.zones_item.set_streaming(streaming)  # unsmoothed zones while the wheel turns
        if not streaming:
            ov.relayout()
            return
        self.deferred += 1
        ov.force_item.refresh_rect(ov._m_per_px())  # the labels' pixel boxes keep their offsets; bounds follow
        self.timer.start()

    def settle(self) -> None:
        """The wheel stopped: place the labels for the zoom reached."""
        self.timer.stop()
        self.overlay.zones_item.set_streaming(False)
        self.overlay.relayout()
